/**
 * Pure helpers of the live readout: which part of a camera frame is analysed and at what size, the
 * frame's pixels as the image the analyses read, and the frame-rate / latency meter. No DOM here, so
 * the logic is unit-tested in Node.
 */
import { luma8, type Image } from '../../src/image/index.ts';
import { resolveTensorOptions, tensorHaloPx } from '../../src/orientation/index.ts';
import { takeFloat32, type Rect } from '../../src/common/index.ts';

/** A rectangle in camera-frame pixels (x right, y down, top-left pixel at 0,0). */
export type FrameRect = Rect;

/**
 * What to grab from a frame: the source rectangle in frame pixels (`source`), the size it is drawn
 * at (`width` x `height`, `step` frame pixels per analysed pixel) and the `region` of that picture
 * whose pixels count (the chosen rectangle without the halo the structure tensor needs around it).
 */
export interface ReadoutPlan {
  source: FrameRect;
  width: number;
  height: number;
  step: number;
  /** In analysed-picture pixels; null = every pixel of the frame counts. */
  region: Rect | null;
}

/** Smallest side, in analysed pixels, for which an order parameter still means something. */
export const MIN_READOUT_SIDE = 16;

/**
 * Plans one readout. Without a rectangle the whole frame is drawn at 1/step size. With one, the
 * rectangle plus a halo of `haloPx` analysed pixels (clipped to the frame) is drawn, and `region`
 * marks the rectangle inside it, so pixels near the rectangle's edges see their true neighbours.
 *
 * @param step frame pixels per analysed pixel (1 = full resolution, 2 = half, ...)
 * @throws Error when the rectangle lies outside the frame or is smaller than MIN_READOUT_SIDE analysed pixels
 */
export function planReadout(frameWidth: number, frameHeight: number, step: number, rect: FrameRect | null, haloPx: number): ReadoutPlan {
  if (!(frameWidth > 0 && frameHeight > 0)) throw new Error('the camera has not delivered a frame yet');
  if (!Number.isInteger(step) || step < 1 || step > 16) throw new Error(`size step ${step} must be a whole number from 1 to 16`);
  if (!rect) {
    return { source: { x: 0, y: 0, width: frameWidth, height: frameHeight }, width: Math.max(1, Math.round(frameWidth / step)), height: Math.max(1, Math.round(frameHeight / step)), step, region: null };
  }
  const x0 = Math.max(0, Math.round(rect.x)), y0 = Math.max(0, Math.round(rect.y));
  const x1 = Math.min(frameWidth, Math.round(rect.x + rect.width)), y1 = Math.min(frameHeight, Math.round(rect.y + rect.height));
  if (x1 <= x0 || y1 <= y0) throw new Error('the chosen rectangle lies outside the camera frame; draw it again');
  if ((x1 - x0) / step < MIN_READOUT_SIDE || (y1 - y0) / step < MIN_READOUT_SIDE) {
    throw new Error(`the chosen rectangle is too small: at least ${MIN_READOUT_SIDE * step} x ${MIN_READOUT_SIDE * step} camera pixels are needed at this size step`);
  }
  const haloFrame = Math.ceil(haloPx) * step;
  const sx0 = Math.max(0, x0 - haloFrame), sy0 = Math.max(0, y0 - haloFrame);
  const sx1 = Math.min(frameWidth, x1 + haloFrame), sy1 = Math.min(frameHeight, y1 + haloFrame);
  // Keep the drawn size an exact multiple so rectangle edges fall on analysed-pixel edges.
  const width = Math.round((sx1 - sx0) / step), height = Math.round((sy1 - sy0) / step);
  return {
    source: { x: sx0, y: sy0, width: width * step, height: height * step }, width, height, step,
    region: { x: (x0 - sx0) / step, y: (y0 - sy0) / step, width: (x1 - x0) / step, height: (y1 - y0) / step },
  };
}

/**
 * Halo (analysed pixels) the structure tensor needs at texture scale sigmaPx with its default derivative: both
 * kernels' radii plus one (tensorHaloPx).
 */
export function readoutHaloPx(sigmaPx: number): number {
  return tensorHaloPx(resolveTensorOptions({ sigmaPx }));
}

/**
 * RGBA pixels of a camera frame (as a canvas or VideoFrame.copyTo gives them) as the image the analyses read:
 * the grey plane is Rec. 709 luma of the stored codes / 255 (0.2126 R + 0.7152 G + 0.0722 B, what toGrey
 * computes for an 8-bit RGB image: luma8), so the numbers equal those of the texture analysis on the frame
 * saved as an RGB file.
 */
export function frameImage(rgba: Uint8Array | Uint8ClampedArray, width: number, height: number): Image {
  if (rgba.length !== width * height * 4) throw new Error(`frame has ${rgba.length} bytes, ${width}x${height} RGBA needs ${width * height * 4}`);
  // Every element is written: an array the last frame handed back serves (src/common/arrayPool.ts).
  const grey = luma8(rgba, width * height, 4, takeFloat32(width * height, false));
  return { width, height, channels: 1, planes: [grey], bitDepth: 32, encoding: 'linear', source: { name: 'camera frame' } };
}

/** Size steps offered for a frame: full size, then halves while the analysed picture stays usable. */
export function sizeSteps(frameWidth: number, frameHeight: number): number[] {
  const out = [1];
  for (let s = 2; s <= 8 && Math.min(frameWidth, frameHeight) / s >= 4 * MIN_READOUT_SIDE; s *= 2) out.push(s);
  return out;
}

/**
 * The default size step: the smallest that keeps the analysed picture within 1.5 x `targetPixels`
 * (640 x 360 by default, which two workers turn around several times a second).
 */
export function defaultStep(frameWidth: number, frameHeight: number, targetPixels = 640 * 360): number {
  const steps = sizeSteps(frameWidth, frameHeight);
  return steps.find((s) => (frameWidth / s) * (frameHeight / s) <= 1.5 * targetPixels) ?? steps[steps.length - 1];
}

/**
 * Frames per second and latency over a sliding window of the last `windowMs` milliseconds: rate =
 * (readings in the window - 1) / (time from the first to the last), latency = mean of
 * (reading time - grab time) of the readings in the window.
 */
export class RateMeter {
  private done: { at: number; latencyMs: number }[] = [];
  constructor(private readonly windowMs = 2000) {}

  /** Records a reading whose frame was grabbed at `grabbedAt` and whose numbers arrived at `at` (ms). */
  add(grabbedAt: number, at: number): void {
    this.done.push({ at, latencyMs: at - grabbedAt });
    const oldest = at - this.windowMs;
    while (this.done.length && this.done[0].at < oldest) this.done.shift();
  }

  /** Readings per second over the window; null until two readings are in it. */
  fps(): number | null {
    const d = this.done;
    if (d.length < 2) return null;
    const span = d[d.length - 1].at - d[0].at;
    return span > 0 ? ((d.length - 1) * 1000) / span : null;
  }

  /** Mean grab-to-reading latency in ms over the window; null before the first reading. */
  latencyMs(): number | null {
    if (!this.done.length) return null;
    return this.done.reduce((s, x) => s + x.latencyMs, 0) / this.done.length;
  }

  reset(): void { this.done = []; }
}
