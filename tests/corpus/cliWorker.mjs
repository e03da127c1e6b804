// Runs the retarda CLI's main entry in a worker thread, one job at a time, with stdout and stderr
// captured, so the corpus test can stop it when a run hangs. Loads the TypeScript sources through tsx
// (always the current sources; the built command, dist/retarda.mjs, is the same code bundled).
import { parentPort } from 'node:worker_threads';
import { register } from 'tsx/esm/api';

register();
const { main } = await import('../../src/cli/main.ts');

parentPort.on('message', async (job) => {
  let out = '';
  let err = '';
  let code;
  const started = performance.now();
  try {
    code = await main(job.argv, { write: (s) => { out += s; } }, { write: (s) => { err += s; } });
  } catch (e) {
    code = 'threw';
    err += String(e && e.stack ? e.stack : e);
  }
  parentPort.postMessage({ id: job.id, code, out, err, ms: performance.now() - started });
});
parentPort.postMessage({ ready: true });
