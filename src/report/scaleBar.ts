import { InputError } from '../common/index.ts';

/** A scale bar: its length on the picture and the round length it stands for. */
export interface ScaleBar {
  /** Bar length in image pixels. */
  lengthPx: number;
  /** The round length the bar stands for, in `unit`. */
  value: number;
  unit: 'um' | 'px';
  /** Text to print beside the bar, e.g. "50 µm", "200 px". */
  label: string;
}

/** Round lengths: 1, 2 and 5 times a power of ten (the usual "1-2-5" series). */
function niceAtMost(v: number): number {
  const p = 10 ** Math.floor(Math.log10(v));
  const m = v / p;
  // small tolerance so that exact steps (m = 2, 5, 10) are not lost to rounding
  return (m >= 5 - 1e-9 ? 5 : m >= 2 - 1e-9 ? 2 : 1) * p;
}

/**
 * Chooses a scale bar for a picture `imageWidthPx` wide: the largest 1-2-5 length (um when the pixel
 * size is known, else px) whose bar is at most `maxFraction` of the width (default 0.25), so it
 * reads at a glance and never crowds the picture. 1000 um and above are written in mm.
 *
 * @param pixelSizeUmPerPx um per image pixel, or null for an uncalibrated image (bar in px)
 * @throws InputError for a non-positive width or pixel size, or a fraction outside (0, 1]
 */
export function chooseScaleBar(imageWidthPx: number, pixelSizeUmPerPx: number | null, maxFraction = 0.25): ScaleBar {
  if (!(imageWidthPx >= 1) || !Number.isFinite(imageWidthPx)) throw new InputError(`picture width ${imageWidthPx} px is not a positive number`);
  if (pixelSizeUmPerPx !== null && !(pixelSizeUmPerPx > 0 && Number.isFinite(pixelSizeUmPerPx))) {
    throw new InputError(`pixel size ${pixelSizeUmPerPx} um/px must be above 0`, 'Check the calibration or the set-up');
  }
  if (!(maxFraction > 0 && maxFraction <= 1)) throw new InputError(`scale bar fraction ${maxFraction} must be in (0, 1]`);
  const umPerPx = pixelSizeUmPerPx ?? 1;
  const maxValue = imageWidthPx * maxFraction * umPerPx;
  const value = niceAtMost(maxValue);
  const unit = pixelSizeUmPerPx === null ? 'px' : 'um';
  return { lengthPx: value / umPerPx, value, unit, label: scaleLabel(value, unit) };
}

function scaleLabel(value: number, unit: 'um' | 'px'): string {
  const tidy = (v: number) => String(Number(v.toPrecision(6)));
  if (unit === 'px') return `${tidy(value)} px`;
  if (value >= 1000) return `${tidy(value / 1000)} mm`;
  if (value < 1) return `${tidy(value * 1000)} nm`;
  return `${tidy(value)} µm`;
}
