/**
 * Messages between the page and the analysis worker. The page sends one command at a time per id;
 * the worker answers with progress messages and then exactly one 'done' or 'error'.
 */
import type {
  OrientOptions, OrientResult, ProfileRequest, ProfileResult, PlateOptions, PlatePairAnalysisOptions, AngleSeriesAnalysisOptions,
  OpticsResult, DiameterAnalysisOptions, DiameterDocument, MicrometerAnalysisOptions, MicrometerDocument, FibreNumbersRequest,
  FibreNumbersResult, PlateReadingOptions, SeriesOptions, SeriesResult,
} from '../../src/analyses/index.ts';
import type { MatchSpace } from '../../src/optics/index.ts';
import type { FoundWalls } from '../../src/channel/index.ts';
import type { ReadoutPlan } from '../camera/frames.ts';

/** Which decoded image a command works on: the worker keeps decoded images by key. */
export interface ImageRef { key: string }

/**
 * A picture the page can draw as is, made into bitmaps in the worker so the page's thread only draws:
 * `levels[0]` full size, each further level half the one before; `scale` image pixels per picture pixel.
 */
export interface Picture { width: number; height: number; scale: number; levels: ImageBitmap[] }

/** One direction line of the direction-lines view: centre in image pixels, the cell's director (CCW from +x) and its S_2D. */
export interface Glyph { x: number; y: number; angleDeg: number; order2D: number }

export interface DecodeSummary {
  name: string; width: number; height: number; channels: 1 | 3; bitDepth: 8 | 16 | 32;
  encoding: 'srgb' | 'linear'; pixelSizeUmPerPx: number | null; page: number;
  /** How the picture was made from the stored values (shown to the user). */
  displayNote: string;
  picture: Picture;
}

/** Milliseconds each step of a command took in the worker (performance.now() marks), for the benchmark. */
export type StepTimes = Record<string, number>;

/**
 * The orientation analysis arrives in two parts: first the numbers (as soon as the order parameters are
 * done), then the colour picture. The coherency picture and the direction lines are made only when asked for
 * (`coherencyPicture`, `glyphs`), from the texture field the worker keeps.
 */
export interface OrientNumbers {
  result: OrientResult; timesMs: StepTimes;
  /** Tiles of the field computed by helper workers (0 when the image was done by one worker). */
  helperTiles: number;
}

export interface OrientReply extends OrientNumbers {
  /** Colour from the angle (cyclic map), opacity from the coherency. */
  colour: Picture;
}

/** A camera frame's reading; its picture is made only when asked for. */
export interface FrameReply extends OrientNumbers { colour: Picture | null }

/**
 * An optical reading (plate reading, plate pair, angle series) with the orientation picture of its field; its
 * confidence, retardance and direction lines are made when first shown (`opticalView`).
 */
export interface OpticsReply {
  result: OpticsResult;
  /** Orientation colour (cyclic map), opacity full on every usable pixel. */
  colour: Picture;
  /** Colour-bar range of the retardance picture, nm; null when the reader gives no retardance. */
  retardanceRangeNm: [number, number] | null;
}

/** The views of an optical field made on demand. */
export type OpticalViewName = 'confidence' | 'retardance' | 'glyphs';

/**
 * Which orientation field a channel profile uses: the texture field, or one compensator image (`profile --source
 * plate`), read with the known sample retardance when given (src/analyses KnownRetardanceOptions).
 */
export type ProfileSource =
  | { kind: 'texture' }
  | { kind: 'plate'; options: PlateReadingOptions & Pick<PlateOptions, 'sampleRetardanceNm' | 'sampleRetardanceToleranceNm'> & { match?: MatchSpace } };

/** Settings of an optical reading without the images (those are named by key). */
export type AngleSeriesSettings = Omit<AngleSeriesAnalysisOptions, 'plate' | 'flatField' | 'dark'>;

export interface CommandTable {
  decode: { args: { key: string; name: string; bytes: ArrayBuffer; page?: number }; reply: DecodeSummary };
  orient: { args: ImageRef & { options: OrientOptions }; reply: OrientReply; partial: OrientNumbers };
  /**
   * The live readout: the orientation analysis of one camera frame (closed here once read), cropped and
   * scaled as `plan` says, its pixels read as `frameImage` reads them. The frame is not kept.
   */
  /** `picture`: also make the orientation picture (only while the live picture shows the colours). */
  orientFrame: { args: { frame: VideoFrame | ImageBitmap; plan: ReadoutPlan; options: OrientOptions; picture: boolean }; reply: FrameReply };
  /** Coherency as grey (black 0, white 1) of the texture field for these options (remade if the worker lost it). */
  coherencyPicture: { args: ImageRef & { options: OrientOptions }; reply: { picture: Picture; timesMs: StepTimes } };
  /** Direction lines of the texture field for these options. */
  glyphs: { args: ImageRef & { options: OrientOptions }; reply: { glyphs: Glyph[]; timesMs: StepTimes } };
  profile: { args: ImageRef & { texture: OrientOptions; request: ProfileRequest; source?: ProfileSource }; reply: ProfileResult };
  plate: { args: ImageRef & { options: PlateOptions }; reply: OpticsReply };
  platePair: { args: ImageRef & { keyB: string; options: PlatePairAnalysisOptions }; reply: OpticsReply };
  angleSeries: { args: { keys: string[]; plateKey?: string; options: AngleSeriesSettings }; reply: OpticsReply };
  /**
   * A view of the last optical reading made with this image first: confidence as grey (black 0, white 1),
   * retardance colours (retardanceColourTable over its range), or direction lines.
   */
  opticalView: { args: ImageRef & { view: OpticalViewName }; reply: { picture: Picture | null; glyphs: Glyph[] | null; timesMs: StepTimes } };
  diameter: { args: ImageRef & { options: DiameterAnalysisOptions }; reply: DiameterDocument };
  micrometer: { args: ImageRef & { options: MicrometerAnalysisOptions }; reply: MicrometerDocument };
  fibreNumbers: { args: { request: FibreNumbersRequest }; reply: FibreNumbersResult };
  /** Order over time (`retarda series`): the frames by key in time order, each frame's time in seconds. */
  series: { args: { keys: string[]; tSeconds: number[]; options: SeriesOptions }; reply: SeriesResult };
  findWalls: { args: ImageRef; reply: FoundWalls };
  /** The texture field of the image (the cached one when the options match) as the bytes --field-out writes. */
  fieldTiff: { args: ImageRef & { options: OrientOptions; description: string }; reply: { bytes: ArrayBuffer } };
  forget: { args: ImageRef; reply: { forgotten: boolean } };
  /** Hands this worker one end of a channel to a helper worker that computes tiles of its texture fields. */
  linkHelper: { args: { port: MessagePort }; reply: { helpers: number } };
  /** Makes this worker a helper: it computes the tiles sent over the port (the other end went to `linkHelper`). */
  serveTiles: { args: { port: MessagePort }; reply: { serving: boolean } };
}

export type CommandName = keyof CommandTable;

/** Commands that send an early part of their answer before the whole. */
export type PartialCommand = { [K in CommandName]: CommandTable[K] extends { partial: unknown } ? K : never }[CommandName];
export type PartialOf<K extends PartialCommand> = CommandTable[K] extends { partial: infer P } ? P : never;

export interface Request<K extends CommandName = CommandName> { id: number; command: K; args: CommandTable[K]['args'] }

export interface ErrorInfo { name: string; message: string; hint: string }

export type Reply =
  | { id: number; type: 'progress'; stage: string; fraction: number }
  /** An early part of the answer (e.g. the numbers before the pictures); 'done' follows. */
  | { id: number; type: 'partial'; value: unknown }
  | { id: number; type: 'done'; value: unknown }
  | { id: number; type: 'error'; error: ErrorInfo }
  | { id: -1; type: 'ready' }
  | { id: -1; type: 'startFailed'; error: ErrorInfo };
