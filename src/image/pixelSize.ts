/**
 * Pixel size from the resolution a file stores (pixels per unit length) to micrometres per pixel.
 *
 * Writers that know nothing about the optics still fill in a resolution: 72 dpi (the old Macintosh
 * screen) and 96 dpi (the Windows screen) are the usual placeholders (common practice, no source).
 * A microscope image at 72 dpi would have 353 um pixels, which no objective gives, so those two values
 * with an inch unit are treated as "no pixel size" instead of a silent wrong calibration.
 */

const UM_PER_INCH = 25_400;
const UM_PER_CM = 10_000;
const UM_PER_M = 1_000_000;

/** Placeholder screen resolutions in dots per inch that carry no calibration (see above). */
const PLACEHOLDER_DPI = [72, 96];

/** Same pixel size on both axes within this relative difference (rational rounding in the tags). */
const SQUARE_TOLERANCE = 1e-6;

/**
 * Micrometres per unit of ImageJ's `unit=` description line, keys lower case. ImageJ writes "micron"
 * and others write "um", the micro sign (U+00B5), the Greek mu (U+03BC) or the escaped "\\u00B5m".
 */
const IMAGEJ_UNITS_UM: Record<string, number> = {
  micron: 1, microns: 1, um: 1, '\u00b5m': 1, '\u03bcm': 1, '\\u00b5m': 1,
  nm: 1e-3, nanometer: 1e-3, mm: 1e3, cm: UM_PER_CM, m: UM_PER_M, meter: UM_PER_M, inch: UM_PER_INCH,
};

/**
 * One pixel size for square pixels, or undefined when either axis is missing, not positive,
 * or the axes differ (non-square pixels have no single um/px value).
 */
function squarePixelSize(umPerPxX: number | undefined, umPerPxY: number | undefined): number | undefined {
  const x = umPerPxX ?? umPerPxY;
  const y = umPerPxY ?? umPerPxX;
  if (x === undefined || y === undefined || !Number.isFinite(x) || !Number.isFinite(y) || x <= 0 || y <= 0) {
    return undefined;
  }
  return Math.abs(x - y) <= SQUARE_TOLERANCE * Math.max(x, y) ? x : undefined;
}

const isPlaceholderDpi = (ppi: number) => PLACEHOLDER_DPI.some((d) => Math.abs(ppi - d) < 0.01);

/**
 * Pixel size in um/px from TIFF XResolution/YResolution (pixels per unit) and ResolutionUnit
 * (TIFF 6.0 tag 296: 1 = no unit, 2 = inch, 3 = centimetre; absent means inch).
 * um/px = 1e4 / (px per cm) or 25400 / (px per inch). 72 and 96 dpi are placeholders (undefined).
 * When an ImageJ description names a unit (`unit=um`), the resolution is in pixels per that unit,
 * whatever ResolutionUnit says (ImageJ writes unit 1 = none for micrometres).
 */
export function tiffPixelSizeUm(
  xResolution: number | undefined,
  yResolution: number | undefined,
  resolutionUnit: number | undefined,
  imageDescription: string | undefined,
): number | undefined {
  const imagejUnit = imageDescription ? imagejUnitUm(imageDescription) : undefined;
  const toUm = (res: number | undefined, umPerUnit: number) => (res && res > 0 ? umPerUnit / res : undefined);
  if (imagejUnit !== undefined) return squarePixelSize(toUm(xResolution, imagejUnit), toUm(yResolution, imagejUnit));
  const unit = resolutionUnit ?? 2;
  if (unit === 3) return squarePixelSize(toUm(xResolution, UM_PER_CM), toUm(yResolution, UM_PER_CM));
  if (unit === 2) {
    if ([xResolution, yResolution].some((r) => r !== undefined && isPlaceholderDpi(r))) return undefined;
    return squarePixelSize(toUm(xResolution, UM_PER_INCH), toUm(yResolution, UM_PER_INCH));
  }
  return undefined;
}

/**
 * Micrometres per unit named by an ImageJ-style description (first line `ImageJ=...`, then
 * `key=value` lines; `unit=micron`), or undefined when it is not such a description or has no
 * known length unit.
 */
function imagejUnitUm(description: string): number | undefined {
  if (!description.startsWith('ImageJ=')) return undefined;
  const match = /^unit=(.+)$/m.exec(description);
  if (!match) return undefined;
  return IMAGEJ_UNITS_UM[match[1].trim().toLowerCase()];
}

/**
 * Pixel size in um/px from a PNG pHYs chunk (PNG spec 11.3.5.3: pixels per unit, unit 1 = metre,
 * 0 = aspect ratio only): um/px = 1e6 / (px per metre). 72 and 96 dpi (2835 and 3780 px/m) are
 * placeholders and give undefined, like in TIFF.
 */
export function pngPixelSizeUm(pxPerUnitX: number, pxPerUnitY: number, unit: number): number | undefined {
  if (unit !== 1) return undefined;
  const dpi = (ppm: number) => (ppm * UM_PER_INCH) / UM_PER_M;
  // pHYs stores whole pixels per metre, so 72 dpi arrives as 2835 px/m = 72.009 dpi.
  if ([pxPerUnitX, pxPerUnitY].some((p) => PLACEHOLDER_DPI.some((d) => Math.abs(dpi(p) - d) < 0.05))) return undefined;
  const toUm = (ppm: number) => (ppm > 0 ? UM_PER_M / ppm : undefined);
  return squarePixelSize(toUm(pxPerUnitX), toUm(pxPerUnitY));
}
