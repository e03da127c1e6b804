/**
 * Tiles of a texture field shared between two analysis workers over a MessagePort the page set up:
 * the worker running the analysis sends tile jobs, a helper worker computes them (src/orientation's
 * tilePixels, the same code) and sends the pixels back. Buffers are transferred, not copied.
 */
import { tilePixels, type TileHelper, type TileJob, type TilePixels } from '../../src/orientation/index.ts';

type TileRequest = { id: number; job: TileJob };
type TileAnswer = { id: number; pixels: TilePixels } | { id: number; error: string };

/**
 * A tile takes well under a second; an answer this late means the helper is stuck or gone, and its tile is
 * done here. Once the helper has answered, the wait is eight times its slowest time per pixel so far
 * (at least 2 s): Chromium gives no sign when a helper's worker dies, and a dead helper then costs seconds,
 * not the full 20 s. A slow but live helper that misses it only loses that tile, which is redone here.
 */
const FIRST_ANSWER_WITHIN_MS = 20_000;
const ANSWER_AT_LEAST_MS = 2_000;
const SLOWEST_MARGIN = 8;

const buffersOf = (px: TilePixels): ArrayBuffer[] => [px.strength, px.confidence, px.cos2, px.sin2].map((a) => a.buffer as ArrayBuffer);

/** The analysing worker's side: a TileHelper that sends each job over the port. */
export function helperOverPort(port: MessagePort): TileHelper {
  let nextId = 1;
  let ended = false;
  /** The helper's slowest answer so far, in ms per pixel of the crop sent (0 before its first answer). */
  let slowestMsPerPixel = 0;
  const pending = new Map<number, { resolve(px: TilePixels): void; reject(e: Error): void; timer: ReturnType<typeof setTimeout>; sent: number; pixels: number }>();
  // A port whose other end is closed fires 'close' (Node; the HTML standard's close event): its tiles are then
  // done here at once instead of after the timeout, and it is sent no more. Chromium 156 does not fire it when
  // the other end's worker is ended, so there the timeout remains the last resort.
  port.addEventListener('close', () => {
    ended = true;
    for (const p of pending.values()) { clearTimeout(p.timer); p.reject(new Error('the helper worker ended')); }
    pending.clear();
  });
  port.onmessage = (ev: MessageEvent<TileAnswer>) => {
    const p = pending.get(ev.data.id);
    if (!p) return;
    pending.delete(ev.data.id);
    clearTimeout(p.timer);
    if ('pixels' in ev.data) {
      slowestMsPerPixel = Math.max(slowestMsPerPixel, (performance.now() - p.sent) / p.pixels);
      p.resolve(ev.data.pixels);
    } else p.reject(new Error(ev.data.error));
  };
  return (job) => new Promise<TilePixels>((resolve, reject) => {
    if (ended) { reject(new Error('the helper worker ended')); return; }
    const id = nextId++;
    const pixels = Math.max(1, job.crop.width * job.crop.height);
    const within = slowestMsPerPixel > 0 ? Math.min(FIRST_ANSWER_WITHIN_MS, Math.max(ANSWER_AT_LEAST_MS, SLOWEST_MARGIN * slowestMsPerPixel * pixels)) : FIRST_ANSWER_WITHIN_MS;
    const timer = setTimeout(() => { pending.delete(id); reject(new Error('the helper worker did not answer')); }, within);
    pending.set(id, { resolve, reject, timer, sent: performance.now(), pixels });
    const request: TileRequest = { id, job };
    port.postMessage(request, [job.crop.data.buffer as ArrayBuffer]);
  });
}

/** The helper worker's side: computes every job that comes over the port, one at a time, in order. */
export function serveTilesOn(port: MessagePort): void {
  port.onmessage = async (ev: MessageEvent<TileRequest>) => {
    const { id, job } = ev.data;
    try {
      const pixels = await tilePixels(job);
      port.postMessage({ id, pixels } satisfies TileAnswer, buffersOf(pixels));
    } catch (e) {
      port.postMessage({ id, error: e instanceof Error ? e.message : String(e) } satisfies TileAnswer);
    }
  };
}
