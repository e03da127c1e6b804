import { toGrey, type Image } from '../image/index.ts';
import { orientationField, type OrientationField, type OrientationFieldOptions, type PlaneRows, type TileHelper } from '../orientation/index.ts';
import { orderParameters, streamedOrderParameters, type OrderOptions, type OrderSummary, type StripSharing } from '../order/index.ts';
import { rectMask, type Rect } from '../common/index.ts';
import { SCHEMA_VERSION, type ResultHead } from './schema.ts';

export interface OrientOptions extends OrientationFieldOptions, Pick<OrderOptions, 'weighting' | 'axisDeg' | 'blockPx'> {
  /** Only pixels inside this rectangle count towards the averages. */
  region?: Rect;
}

export interface OrientResult extends ResultHead {
  analysis: 'orient';
  directorDeg: number;
  order2D: number;
  /** 95 % interval of order2D. */
  order2DCiLow: number;
  order2DCiHigh: number;
  /** Standard error of order2D (linearised, on the S scale; the interval is drawn on the atanh scale). */
  order2DSe: number;
  /** S_axis against axisDeg, when given. */
  axisOrder: number | null;
  axisOrderCiLow: number | null;
  axisOrderCiHigh: number | null;
  axisOrderSe: number | null;
  axisDeg: number | null;
  coherencyMean: number;
  isotropicBias: number;
  n: number;
  blocks: number;
  options: Record<string, unknown>;
}

/**
 * Texture orientation of one image: structure-tensor field, then whole-image (or region) order.
 * `helpers` (other workers) may share the field's tiles; the result is the same with or without them.
 */
export async function analyseOrientation(img: Image, o: OrientOptions = {}, helpers: readonly TileHelper[] = []): Promise<{ result: OrientResult; field: OrientationField }> {
  const field = await orientationField(toGrey(img), o, helpers);
  field.pixelSizeUmPerPx = img.pixelSizeUmPerPx;
  const region = o.region ? rectMask(o.region, img.width, img.height) : undefined;
  const s = orderParameters(field, { weighting: o.weighting, axisDeg: o.axisDeg, blockPx: o.blockPx, region });
  return { result: orientResult(img, field, s, o), field };
}

/**
 * Images of more pixels than this get their orient numbers by analyseOrientationStreamed, which holds no field:
 * a held texture field takes 17 bytes per pixel (strength, coherency, cos 2 theta, sin 2 theta, mask), 0.4 GB at
 * 24 MP, on top of the image. Below it the held field is quicker (one pass through the kernel, not two).
 */
export const HELD_FIELD_MAX_PIXELS = 24_000_000;

/**
 * The result of analyseOrientation without its field, to the bit, holding only the image and a few rows of the
 * field (streamedOrderParameters: the image passes through the tensor kernel twice). For numbers alone, on
 * images larger than HELD_FIELD_MAX_PIXELS.
 */
export async function analyseOrientationStreamed(img: Image, o: OrientOptions = {}): Promise<OrientResult> {
  return analyseOrientationRows(img, toGrey(img), o);
}

/**
 * analyseOrientationStreamed of an image given by its facts and its grey plane or rows read on demand
 * (src/image greyTiffRows: no plane held at all); `sharing`: strips computed by helpers too (the same numbers).
 */
export async function analyseOrientationRows(head: ResultImage, grey: PlaneRows, o: OrientOptions = {}, sharing?: StripSharing): Promise<OrientResult> {
  const region = o.region ? rectMask(o.region, head.width, head.height) : undefined;
  const { summary, field } = await streamedOrderParameters(grey, { ...o, region }, sharing);
  return orientResult(head, field, summary, o);
}

/** The facts of an image a result reports. */
type ResultImage = Pick<Image, 'width' | 'height' | 'source' | 'pixelSizeUmPerPx'>;

export function orientResult(img: ResultImage, field: Pick<OrientationField, 'options' | 'warnings' | 'method'>, s: OrderSummary, o: OrientOptions): OrientResult {
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'orient', source: img.source.name, width: img.width, height: img.height,
    pixelSizeUmPerPx: img.pixelSizeUmPerPx ?? null,
    directorDeg: s.directorDetermined ? s.directorDeg : NaN, order2D: s.order2D.order, order2DCiLow: s.order2D.ciLow, order2DCiHigh: s.order2D.ciHigh, order2DSe: s.order2D.se,
    axisOrder: s.axisOrder?.order ?? null, axisOrderCiLow: s.axisOrder ? s.axisOrder.ciLow : null, axisOrderCiHigh: s.axisOrder ? s.axisOrder.ciHigh : null,
    axisOrderSe: s.axisOrder ? s.axisOrder.se : null,
    axisDeg: s.axisDeg, coherencyMean: s.coherencyMean, isotropicBias: s.isotropicBias, n: s.n, blocks: s.blocks,
    options: { ...field.options, weighting: s.weighting, blockPx: s.blockPx, region: o.region ?? null, method: field.method },
    warnings: [...field.warnings, ...(s.n === 0 ? ['no usable pixels: every pixel was masked'] : [])],
    ...(s.n === 0 ? { notDetermined: {
      order2D: 'no usable pixels: every pixel was masked as having no texture above the strength floor; choose a region with texture, or lower the strength floor (--strength-floor)',
      directorDeg: 'no usable pixels (see order2D)',
    } } : !s.directorDetermined ? { notDetermined: {
      directorDeg: 'the orientations do not differ clearly from no preferred direction (S_2D\'s interval reaches 0); a larger region, or one with more aligned texture, would determine it',
    } } : {}),
  };
}
