/** Public surface of image input: decoding PNG/JPEG/TIFF into Image, and tiling large planes. */
export type { Image } from './types.ts';
export { makeImage, toGrey, MAX_DECODE_BYTES, ANALYSIS_MAX_PIXELS, checkAnalysisPixels } from './types.ts';
export { decodeImage, decodeImageAsync, decodeImagePages } from './decode.ts';
export { detectFormat, type ImageFormat } from './format.ts';
export { ACCEPTED_FORMATS } from './checks.ts';
export { planTiles, cropPlane, pasteInner, checkTileInside, type Tile } from './tiles.ts';
export { usePlatformCodecs, ZlibProblem, type PlatformCodecs } from './inflate.ts';
export { greyTiffRows, type GreyRows, type ImageHead } from './tiffRows.ts';
export { luma8 } from './samples.ts';
