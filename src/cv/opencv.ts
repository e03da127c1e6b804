/**
 * The one place that loads opencv.js. The 4.x module object carries its own `then`, so it must never
 * be awaited or returned from an async function (that loops forever): we resolve our own promise once
 * the runtime reports ready, after deleting `then`.
 */
import cvModule from '@techstark/opencv-js';

// The typings describe the namespace; at run time it is an Emscripten module object.
export type CV = typeof cvModule;

let ready: Promise<CV> | null = null;

export function loadCv(): Promise<CV> {
  if (ready) return ready;
  ready = new Promise<CV>((resolve, reject) => {
    const m = cvModule as unknown as Record<string, unknown>;
    const done = () => {
      delete m.then;
      resolve(cvModule);
    };
    if (m.calledRun === true || typeof m.Mat === 'function') {
      done();
      return;
    }
    const timer = setTimeout(() => reject(new Error('opencv.js did not start within 60 s')), 60_000);
    m.onRuntimeInitialized = () => {
      clearTimeout(timer);
      done();
    };
  });
  return ready;
}

/** Turns opencv.js's numeric exception pointers into readable errors. */
export function cvError(cv: CV, e: unknown): Error {
  if (typeof e === 'number') {
    try {
      const ex = (cv as unknown as { exceptionFromPtr(p: number): { msg: string } }).exceptionFromPtr(e);
      return new Error(`opencv.js: ${ex.msg}`);
    } catch {
      return new Error(`opencv.js fault ${e}`);
    }
  }
  return e instanceof Error ? e : new Error(String(e));
}
