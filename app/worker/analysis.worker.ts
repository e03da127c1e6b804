/**
 * The analysis worker: the only place the app runs analyses. It routes typed commands to src/ and
 * sends results back, transferring pixel buffers. Decoded images and the last texture field of each
 * image are kept here, so a profile after an orientation run does not redo the field.
 */
/// <reference lib="webworker" />
import {
  analyseOrientation, analyseProfile, analysePlate, analysePlateProfile, analysePlatePair, analyseAngleSeries, analyseDiameter, analyseMicrometer,
  fibreNumbersResult, readPlateField, analyseSeries, type OrientOptions, type OpticsAnalysis, type SeriesFrame,
} from '../../src/analyses/index.ts';
import { findWalls } from '../../src/channel/index.ts';
import { fieldTiffBytes } from '../../src/report/index.ts';
import { giveBack, isInputError, takeUint8 } from '../../src/common/index.ts';
import { loadTensorKernel } from '../../src/wasm/index.ts';
import { decodeImageAsync, checkAnalysisPixels, ANALYSIS_MAX_PIXELS, type Image } from '../../src/image/index.ts';
import { recycleTextureField, type OrientationField, type TileHelper } from '../../src/orientation/index.ts';
import { recycleAngleSeries } from '../../src/optics/index.ts';
import { helperOverPort, serveTilesOn } from './tilePort.ts';
import { coherencyPicture, directionLines, imagePicture, orientationPicture, retardancePicture } from './pictures.ts';
import { retardanceRange } from '../../src/report/index.ts';
import { frameImage, type ReadoutPlan } from '../camera/frames.ts';
import type { CommandName, CommandTable, ErrorInfo, OpticsReply, ProfileSource, Reply, Request, StepTimes } from './protocol.ts';

const scope = self as unknown as DedicatedWorkerGlobalScope;
const images = new Map<string, Image>();
const fields = new Map<string, { optionsKey: string; field: OrientationField }>();
/** The last compensator field read for a channel profile, per image (`profile --source plate`). */
const plateFields = new Map<string, { optionsKey: string; field: OrientationField }>();
/** The last optical reading's field, under the key of its first image (for the views made on demand). */
const opticalFields = new Map<string, OrientationField>();
/** Other workers that compute tiles of this worker's texture fields (set by the page with `linkHelper`). */
let tileHelpers: TileHelper[] = [];

/**
 * The helpers a still image's field is shared with: none when there is only one (two cores). There the helper's
 * strips cost more than they save, as it competes with this worker for the second core that the page and the
 * browser need too: bench:app at 12 MP on a shared 2-core machine, click to numbers 0.33-1.14 s shared against
 * 0.26-0.40 s on this worker alone, and the colour map after them 0.2-1.2 s against 0.25-0.31 s. The one helper
 * still reads every other camera frame.
 */
const stripHelpers = (): TileHelper[] => (tileHelpers.length >= 2 ? tileHelpers : []);

function post(reply: Reply, transfer: Transferable[] = []): void {
  scope.postMessage(reply, transfer);
}

type Progress = (stage: string, fraction: number) => void;
/** Sends the early part of a command's answer (see PartialCommand); 'done' follows with the whole. */
type Partial = (value: unknown, transfer?: Transferable[]) => void;
type Handler<K extends CommandName> = (args: CommandTable[K]['args'], progress: Progress, partial: Partial) => Promise<{ value: CommandTable[K]['reply']; transfer: Transferable[] }>;

/** Step timer: `lap(name)` records the milliseconds since the previous lap under that name. */
function stepTimer(): { lap(name: string): void; times: StepTimes } {
  const times: StepTimes = {};
  let last = performance.now();
  return { times, lap(name) { const t = performance.now(); times[name] = Math.round(t - last); last = t; } };
}

let frameCanvas: OffscreenCanvas | null = null;

/**
 * The planned part of a camera frame at the planned size, as RGBA; the frame is closed (the camera needs it back).
 * At full size a VideoFrame converts itself (copyTo, about three times quicker than drawing it on a canvas and
 * reading that back, and the same bytes in Chromium) when the part lies on even pixels (YUV frames keep colour
 * for 2 x 2 pixels: an odd edge is shifted); otherwise, or where copyTo cannot convert, through the canvas.
 */
async function framePixels(frame: VideoFrame | ImageBitmap, plan: ReadoutPlan): Promise<Uint8Array | Uint8ClampedArray> {
  const { width, height, source: s } = plan;
  try {
    const even = s.x % 2 === 0 && s.y % 2 === 0 && s.width % 2 === 0 && s.height % 2 === 0;
    if (typeof VideoFrame === 'function' && frame instanceof VideoFrame && plan.step === 1 && even) {
      // Every byte is written by copyTo; handed back by the caller once read (no fresh pages per frame).
      const rgba = takeUint8(width * height * 4, false);
      const copied = await frame.copyTo(rgba, { format: 'RGBA', colorSpace: 'srgb', rect: { x: s.x, y: s.y, width: s.width, height: s.height } }).then(() => true, () => false);
      if (copied) return rgba;
      giveBack(rgba);
    }
    const c = (frameCanvas ??= new OffscreenCanvas(width, height));
    if (c.width !== width || c.height !== height) { c.width = width; c.height = height; }
    const g = c.getContext('2d', { willReadFrequently: true })!;
    g.imageSmoothingQuality = 'medium';
    g.drawImage(frame, s.x, s.y, s.width, s.height, 0, 0, width, height);
    return g.getImageData(0, 0, width, height).data;
  } finally {
    frame.close();
  }
}

function imageOf(key: string): Image {
  const img = images.get(key);
  if (!img) throw Object.assign(new Error('the worker no longer holds this image; it will be sent again'), { name: 'ImageMissing' });
  return img;
}

/** What the texture field depends on: the order options (region, axis, weights, blocks) do not change it. */
const textureKey = (options: OrientOptions) => JSON.stringify({ ...options, region: undefined, axisDeg: undefined, weighting: undefined, blockPx: undefined });

/** The texture field for these options, reused when the same image was analysed with the same options. */
async function textureField(key: string, options: OrientOptions, progress: Progress): Promise<OrientationField> {
  const optionsKey = textureKey(options);
  const cached = fields.get(key);
  if (cached && cached.optionsKey === optionsKey) return cached.field;
  progress('structure tensor', 0.2);
  const { field } = await analyseOrientation(imageOf(key), { ...options, region: undefined }, stripHelpers());
  fields.set(key, { optionsKey, field });
  return field;
}

/** The plate field `retarda profile --source plate` reads: the plate options plus the profile's axis for the mirror choice. */
function plateFieldFor(key: string, source: Extract<ProfileSource, { kind: 'plate' }>, axisDeg: number | undefined, progress: Progress): OrientationField {
  const optionsKey = JSON.stringify({ ...source.options, axisDeg });
  const cached = plateFields.get(key);
  if (cached && cached.optionsKey === optionsKey) return cached.field;
  progress('reading the compensator colours', 0.2);
  const { field } = readPlateField(imageOf(key), { ...source.options, axisDeg });
  plateFields.set(key, { optionsKey, field });
  return field;
}

/**
 * An optical reading's result with its orientation picture (bitmaps transferred). The field is kept under
 * the key of the reading's first image, so its other views are made only when asked for (`opticalView`).
 */
async function opticsReply(key: string, a: OpticsAnalysis, progress: Progress): Promise<{ value: OpticsReply; transfer: Transferable[] }> {
  opticalFields.set(key, a.field);
  progress('drawing the map', 0.85);
  const colour = await orientationPicture(a.field, 'full');
  return { value: { result: a.result, colour, retardanceRangeNm: retardanceRangeOf(a.field) }, transfer: colour.levels };
}

const retardanceRangeOf = (f: OrientationField) => (f.retardanceNm ? retardanceRange(f.retardanceNm, f.mask) : null);

const handlers: { [K in CommandName]: Handler<K> } = {
  async decode({ key, name, bytes, page }, progress) {
    progress('reading the file', 0.1);
    const img = await decodeImageAsync(new Uint8Array(bytes), name, page ?? 0);
    images.set(key, img);
    fields.delete(key);
    plateFields.delete(key);
    opticalFields.delete(key);
    progress('making the picture', 0.8);
    const { picture, note } = await imagePicture(img);
    return {
      value: {
        name, width: img.width, height: img.height, channels: img.channels, bitDepth: img.bitDepth, encoding: img.encoding,
        pixelSizeUmPerPx: img.pixelSizeUmPerPx ?? null, page: page ?? 0, displayNote: note, picture,
      },
      transfer: picture.levels,
    };
  },

  async orient({ key, options }, progress, partial) {
    const img = imageOf(key);
    const timer = stepTimer();
    // The field this replaces is handed back for the new one when no other command is running (none can hold
    // it then, and the next that asks finds it gone): no fresh memory for a second run on the same image.
    const old = fields.get(key);
    if (old && running === 1) {
      fields.delete(key);
      recycleTextureField(old.field);
    }
    progress('structure tensor and order', 0.1);
    // Exactly what `retarda orient` runs, so the numbers shown equal the command line's (helpers change no bit).
    let helperTiles = 0;
    const counted = stripHelpers().map((h): TileHelper => (job) => h(job).then((px) => { helperTiles++; return px; }));
    const { result, field } = await analyseOrientation(img, options, counted);
    timer.lap('structure tensor and order');
    fields.set(key, { optionsKey: textureKey(options), field });
    // The numbers go to the page now; the picture follows.
    partial({ result, timesMs: { ...timer.times }, helperTiles });
    progress('drawing the orientation map', 0.85);
    const colour = await orientationPicture(field);
    timer.lap('orientation picture');
    return { value: { result, colour, timesMs: timer.times, helperTiles }, transfer: colour.levels };
  },

  async orientFrame({ frame, plan, options, picture }) {
    const timer = stepTimer();
    const rgba = await framePixels(frame, plan);
    timer.lap('frame pixels');
    const img = frameImage(rgba, plan.width, plan.height);
    giveBack(rgba);
    timer.lap('frame luma');
    const { result, field } = await analyseOrientation(img, options);
    timer.lap('structure tensor and order');
    const colour = picture ? await orientationPicture(field) : null;
    if (colour) timer.lap('orientation picture');
    // Nothing keeps a frame's field or pixels: their arrays serve the next frame (no fresh memory per frame).
    recycleTextureField(field);
    giveBack(...img.planes);
    return { value: { result, colour, timesMs: timer.times, helperTiles: 0 }, transfer: colour?.levels ?? [] };
  },

  // Made only when the user asks to see them, from the field the orientation run left here.
  async coherencyPicture({ key, options }, progress) {
    const field = await textureField(key, options, progress);
    const timer = stepTimer();
    progress('drawing the coherency', 0.8);
    const picture = await coherencyPicture(field);
    timer.lap('coherency picture');
    return { value: { picture, timesMs: timer.times }, transfer: picture.levels };
  },

  async glyphs({ key, options }, progress) {
    const field = await textureField(key, options, progress);
    const timer = stepTimer();
    progress('drawing the direction lines', 0.8);
    const glyphs = directionLines(field);
    timer.lap('line glyphs');
    return { value: { glyphs, timesMs: timer.times }, transfer: [] };
  },

  async profile({ key, texture, request, source }, progress) {
    const img = imageOf(key);
    // Same fields as `retarda profile --source texture|plate`.
    progress(request.autoWalls ? 'finding walls and the profile' : 'profile across the channel', 0.6);
    // Same calls as `retarda profile`: the texture field, then analyseProfile; one compensator image through
    // analysePlateProfile, which withholds what one image does not determine.
    if (source?.kind === 'plate') {
      const field = plateFieldFor(key, source, request.axisDeg, progress);
      return { value: await analysePlateProfile(img, field, source.options, request), transfer: [] };
    }
    return { value: await analyseProfile(img, await textureField(key, texture, progress), request), transfer: [] };
  },

  // Each optical command runs exactly the analysis its `retarda` subcommand runs.
  async plate({ key, options }, progress) {
    progress(options.resolveMirror ? 'reading the colours and the texture' : 'reading the compensator colours', 0.1);
    return opticsReply(key, await analysePlate(imageOf(key), options), progress);
  },

  async platePair({ key, keyB, options }, progress) {
    progress('reading both compensator images', 0.1);
    return opticsReply(key, await analysePlatePair(imageOf(key), imageOf(keyB), options), progress);
  },

  async angleSeries({ keys, plateKey, options }, progress) {
    // The angle series this replaces hands its arrays back for the new one when no other command is running (none
    // can hold it then, and the next that asks finds it gone): no fresh memory for a second run on the same images.
    const old = opticalFields.get(keys[0]);
    if (old?.method === 'angle-series' && running === 1) {
      opticalFields.delete(keys[0]);
      recycleAngleSeries({ field: old });
    }
    progress('fitting the angle series', 0.1);
    const a = await analyseAngleSeries(keys.map(imageOf), { ...options, plate: plateKey ? imageOf(plateKey) : undefined });
    const reply = await opticsReply(keys[0], a, progress);
    // Nothing here keeps the amplitude and residual planes: they serve the next reading.
    giveBack(a.amplitude, a.residual);
    return reply;
  },

  async opticalView({ key, view }, progress) {
    const field = opticalFields.get(key);
    if (!field) throw Object.assign(new Error('the reading\'s field is no longer held (the analysis engine was restarted): run the reading again'), { name: 'FieldMissing' });
    const timer = stepTimer();
    progress(`drawing the ${view === 'glyphs' ? 'direction lines' : view}`, 0.5);
    if (view === 'glyphs') {
      const glyphs = directionLines(field);
      timer.lap('line glyphs');
      return { value: { picture: null, glyphs, timesMs: timer.times }, transfer: [] };
    }
    const range = retardanceRangeOf(field);
    const picture = view === 'confidence' ? await coherencyPicture(field) : range ? await retardancePicture(field, range) : null;
    if (!picture) throw new Error('this reading gives no retardance');
    timer.lap(`${view} picture`);
    return { value: { picture, glyphs: null, timesMs: timer.times }, transfer: picture.levels };
  },

  async diameter({ key, options }, progress) {
    progress('finding the fibres and their edges', 0.1);
    return { value: analyseDiameter(imageOf(key), options), transfer: [] };
  },

  async micrometer({ key, options }, progress) {
    progress('measuring the ruler period', 0.1);
    return { value: analyseMicrometer(imageOf(key), options), transfer: [] };
  },

  async fibreNumbers({ request }) {
    return { value: fibreNumbersResult(request), transfer: [] };
  },

  // What `retarda series` runs: one frame at a time, each checked against the same pixel limit.
  async series({ keys, tSeconds, options }, progress) {
    if (keys.length !== tSeconds.length) throw new Error(`${tSeconds.length} times for ${keys.length} frames`);
    function* frames(): Generator<SeriesFrame> {
      for (let k = 0; k < keys.length; k++) {
        progress(`frame ${k + 1} of ${keys.length}`, 0.05 + (0.85 * k) / keys.length);
        const image = imageOf(keys[k]);
        checkAnalysisPixels(image, ANALYSIS_MAX_PIXELS.series);
        yield { image, tSeconds: tSeconds[k] };
      }
      progress('fitting the relaxation', 0.92);
    }
    return { value: await analyseSeries(frames(), options), transfer: [] };
  },

  async fieldTiff({ key, options, description }, progress) {
    const bytes = fieldTiffBytes(await textureField(key, options, progress), description);
    return { value: { bytes: bytes.buffer as ArrayBuffer }, transfer: [bytes.buffer as ArrayBuffer] };
  },
  async findWalls({ key }, progress) {
    progress('looking for the two walls', 0.2);
    const found = await findWalls(imageOf(key));
    return { value: found, transfer: [] };
  },

  async linkHelper({ port }) {
    tileHelpers = [...tileHelpers, helperOverPort(port)];
    return { value: { helpers: tileHelpers.length }, transfer: [] };
  },

  async serveTiles({ port }) {
    serveTilesOn(port);
    return { value: { serving: true }, transfer: [] };
  },

  async forget({ key }) {
    const had = images.delete(key);
    fields.delete(key);
    plateFields.delete(key);
    opticalFields.delete(key);
    return { value: { forgotten: had }, transfer: [] };
  },
};

function errorInfo(e: unknown): ErrorInfo {
  if (isInputError(e)) return { name: 'InputError', message: e.message, hint: (e as { hint?: string }).hint ?? '' };
  if (e instanceof Error) return { name: e.name, message: e.message, hint: '' };
  if (typeof e === 'number') return { name: 'Error', message: `opencv.js fault ${e} (often: out of memory; try a smaller image or region)`, hint: '' };
  return { name: 'Error', message: String(e), hint: '' };
}

/** Commands started and not finished (they interleave where they wait). */
let running = 0;

scope.onmessage = async (ev: MessageEvent<Request>) => {
  const { id, command, args } = ev.data;
  const handler = handlers[command] as Handler<CommandName> | undefined;
  if (!handler) {
    post({ id, type: 'error', error: { name: 'Error', message: `unknown command "${String(command)}"`, hint: '' } });
    return;
  }
  running++;
  try {
    const { value, transfer } = await handler(args, (stage, fraction) => post({ id, type: 'progress', stage, fraction }), (v, t = []) => post({ id, type: 'partial', value: v }, t));
    post({ id, type: 'done', value }, transfer);
  } catch (e) {
    post({ id, type: 'error', error: errorInfo(e) });
  } finally {
    running--;
  }
};

/**
 * Runs the texture analysis and its picture once on a small made-up image, so the JavaScript engine has
 * compiled the per-pixel loops before the user's first image: a cold first run is about twice as slow.
 */
async function warmUp(): Promise<void> {
  const w = 384, h = 384, data = new Float32Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) data[y * w + x] = 0.5 + 0.4 * Math.sin((0.8 * x + 0.6 * y) / 2 + 0.002 * x * y);
  const img: Image = { width: w, height: h, channels: 1, planes: [data], bitDepth: 32, encoding: 'linear', source: { name: 'warm-up' } };
  // A few rounds: the engine's optimising compiler takes the hot loops only after they have run a few times.
  for (let round = 0; round < 4; round++) {
    const { field } = await analyseOrientation(img, { axisDeg: 0 });
    const picture = await orientationPicture(field);
    for (const b of picture.levels) b.close();
  }
}

// Compile the tensor kernel now (a few kB: milliseconds; it also checks WebAssembly SIMD), say whether it
// started, then warm up. No analysis the app runs uses opencv.js, so the engine does not wait for it.
loadTensorKernel().then(
  () => { post({ id: -1, type: 'ready' }); return warmUp().catch(() => undefined); },
  (e) => post({ id: -1, type: 'startFailed', error: errorInfo(e) }),
);
