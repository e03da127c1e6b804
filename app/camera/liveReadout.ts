/**
 * The live readout loop: several analysis workers take camera frames in turn. Each worker grabs the
 * newest frame as soon as it is free; the frame goes to the worker as it is (a VideoFrame or bitmap,
 * transferred), which crops, scales and reads its pixels and runs the orientation analysis on them,
 * so the page's thread does no pixel work. A reading is shown only if its frame is newer than the one
 * shown before, so readings never go back in time when two workers finish out of order.
 */
import type { OrientResult } from '../../src/analyses/index.ts';
import type { Weighting } from '../../src/order/index.ts';
import type { AnalysisClient } from '../worker/client.ts';
import type { FrameReply } from '../worker/protocol.ts';
import { RateMeter, type ReadoutPlan } from './frames.ts';

/** The part of an analysis client the loop uses (a fake in unit tests). */
export type ReadoutEngine = Pick<AnalysisClient, 'ready' | 'call' | 'dispose'>;

/** One grabbed frame, whole as the camera gave it, and the plan of what part of it to analyse at what size. */
export interface GrabbedFrame { source: VideoFrame | ImageBitmap; plan: ReadoutPlan }

export interface LiveReading {
  result: OrientResult;
  /** The orientation colour picture of the analysed frame, when asked for (close its bitmaps when done with it). */
  colour: FrameReply['colour'];
  plan: ReadoutPlan;
  /** When the frame was grabbed and when its numbers arrived (ms, the loop's clock). */
  grabbedAt: number;
  at: number;
  /** Which worker made it (0-based). */
  worker: number;
  /** The worker's own step times for this frame (ms). */
  timesMs: FrameReply['timesMs'];
  fps: number | null;
  latencyMs: number | null;
}

export interface LiveSettings {
  sigmaPx: number; weighting: Weighting;
  /** Make the orientation picture of each frame (only while it is shown: it costs a part of every reading). */
  picture: boolean;
}

export interface LiveReadoutOptions {
  engines: ReadoutEngine[];
  /** Grabs the newest frame; null when the camera has no new one yet (the worker waits a moment). */
  grab: () => Promise<GrabbedFrame | null>;
  settings: () => LiveSettings;
  onReading: (r: LiveReading) => void;
  onError: (message: string) => void;
  now?: () => number;
  /** Waits between tries when no frame was available. */
  sleep?: (ms: number) => Promise<void>;
}


export class LiveReadout {
  private running = false;
  private shownGrab = -Infinity;
  private readonly meter = new RateMeter(2000);
  private loops: Promise<void>[] = [];
  private lastError = '';

  constructor(private readonly o: LiveReadoutOptions) {}

  /** Starts one loop per engine; resolves when every engine's runtime has started. */
  async start(): Promise<void> {
    if (this.running) return;
    this.running = true;
    this.meter.reset();
    this.shownGrab = -Infinity;
    await Promise.all(this.o.engines.map((e) => e.ready()));
    this.loops = this.o.engines.map((e, i) => this.loop(e, i));
  }

  /** Stops after the readings in flight (they are dropped); resolves when every loop has ended. */
  async stop(): Promise<void> {
    this.running = false;
    await Promise.all(this.loops);
    this.loops = [];
  }

  isRunning(): boolean { return this.running; }

  dispose(): void {
    this.running = false;
    for (const e of this.o.engines) e.dispose();
  }

  private async loop(engine: ReadoutEngine, index: number): Promise<void> {
    const now = this.o.now ?? (() => performance.now());
    const sleep = this.o.sleep ?? ((ms: number) => new Promise<void>((r) => setTimeout(r, ms)));
    while (this.running) {
      const grabbedAt = now();
      let frame: GrabbedFrame | null;
      try { frame = await this.o.grab(); } catch (e) { frame = null; this.report((e as Error).message); }
      if (!frame) { await sleep(8); continue; }
      // A camera holds only a few frames: one not sent on must be let go at once.
      if (!this.running) { frame.source.close(); break; }
      try {
        const s = this.o.settings();
        const reply = await engine.call('orientFrame', {
          frame: frame.source, plan: frame.plan,
          options: { sigmaPx: s.sigmaPx, weighting: s.weighting, ...(frame.plan.region ? { region: frame.plan.region } : {}) },
          picture: s.picture,
        }, undefined, [frame.source]);
        const at = now();
        if (!this.running || grabbedAt <= this.shownGrab) { reply.colour?.levels.forEach((b) => b.close?.()); continue; }
        this.shownGrab = grabbedAt;
        this.meter.add(grabbedAt, at);
        this.lastError = '';
        this.o.onReading({ result: reply.result, colour: reply.colour, timesMs: reply.timesMs, plan: frame.plan, grabbedAt, at, worker: index, fps: this.meter.fps(), latencyMs: this.meter.latencyMs() });
      } catch (e) {
        if (!this.running) break;
        this.report((e as Error).message);
        await sleep(200);
      }
    }
  }

  /** Says each distinct problem once; the loop keeps trying (the next frame may be fine). */
  private report(msg: string): void {
    if (msg !== this.lastError) { this.lastError = msg; this.o.onError(msg); }
  }
}
