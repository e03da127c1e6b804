import { checkNumber } from '../common/index.ts';
import { DEG } from '../common/index.ts';
import type { Image } from '../image/index.ts';
import { colourModel, interferenceColour, matchLabOfLinearRgb } from './colourModel.ts';
import { deltaE2000 } from './deltaE.ts';
import { cameraToModel, type CameraCalibration } from './camera.ts';
import { medianLinearRgb, type Rect } from './pixels.ts';
import { resolveTrain, type OpticalTrain } from './train.ts';
import type { Vec3 } from './colorimetry.ts';

/** What the background calibration found (and what was given instead of fitted). */
export interface PlateCalibration {
  compensatorNm: number;
  camera: CameraCalibration;
  /** Colour temperature-like tilt t of the white balance: gains (e^t, 1, e^-t). 0 when not fitted. */
  whiteBalanceTilt: number;
  /** CIEDE2000 between the corrected background and the model's background colour. */
  residualDeltaE00: number;
  backgroundLinearRgb: Vec3;
  fitted: { compensator: boolean; whiteBalance: boolean; exposure: boolean };
}

export interface CalibrationOptions {
  /** Fit the compensator's effective retardance (default true) over this range (default 400-700 nm). */
  fitCompensator?: boolean;
  compensatorRangeNm?: [number, number];
  /** Fit a red/blue white-balance tilt (default true unless `camera` gains are given). */
  fitWhiteBalance?: boolean;
  /** Known camera gains (e.g. from `whiteReference`); its exposure is refitted on the background. */
  camera?: CameraCalibration;
}

/**
 * Calibrates a compensator image from a sample-free rectangle, whose colour is the plate's own
 * ("sensitive tint"): a grid search over the compensator retardance (1 nm, then 0.1 nm) and a white-balance
 * tilt (0.02 steps in [-0.5, 0.5]); the exposure follows in closed form from the luminance. Among fits within
 * 0.3 Delta E00 of the best, the smallest tilt wins (no white-balance correction unless the colour needs one).
 */
export function calibrateFromBackground(img: Image, rect: Rect, train: Partial<OpticalTrain> = {}, options: CalibrationOptions = {}): PlateCalibration {
  const t = resolveTrain(train);
  const bg = medianLinearRgb(img, rect);
  return calibrateFromColour(bg, t, options);
}

/** Same as `calibrateFromBackground` from a measured background linear RGB. */
export function calibrateFromColour(bg: Vec3, train: OpticalTrain, options: CalibrationOptions = {}): PlateCalibration {
  const comp = train.compensator;
  const fitComp = comp !== null && (options.fitCompensator ?? true);
  const fitWb = options.fitWhiteBalance ?? !options.camera;
  const [lo, hi] = options.compensatorRangeNm ?? [400, 700];
  checkNumber('compensator range start', lo, 1, 5000, 'nm');
  checkNumber('compensator range end', hi, lo, 5000, 'nm');
  const baseGains = options.camera?.gains ?? [1, 1, 1];
  const colourAt = (nm: number): Vec3 => {
    const m = colourModel({ ...train, compensator: comp ? { ...comp, retardanceNm: nm } : null });
    return interferenceColour(m, { angleRad: (train.polariserDeg) * DEG, retardanceNm: 0 }).linearRgb;
  };
  const tilts: number[] = [];
  if (fitWb) for (let v = -0.5; v <= 0.5 + 1e-9; v += 0.02) tilts.push(Math.round(v * 100) / 100);
  else tilts.push(0);
  const evaluate = (nm: number, tilt: number, model: Vec3) => {
    const gains: Vec3 = [baseGains[0] * Math.exp(tilt), baseGains[1], baseGains[2] * Math.exp(-tilt)];
    const unscaled = cameraToModel({ gains, exposure: 1 }, bg);
    const yOf = (c: Vec3) => 0.2126 * c[0] + 0.7152 * c[1] + 0.0722 * c[2];
    const exposure = Math.max(1e-6, yOf(unscaled) / Math.max(1e-9, yOf(model)));
    const corrected = cameraToModel({ gains, exposure }, bg);
    const d = deltaE2000(matchLabOfLinearRgb(corrected), matchLabOfLinearRgb(model));
    return { nm, tilt, d, camera: { gains, exposure } };
  };
  const candidates: ReturnType<typeof evaluate>[] = [];
  const nms: number[] = [];
  if (fitComp) for (let nm = lo; nm <= hi + 1e-9; nm += 1) nms.push(nm);
  else nms.push(comp ? comp.retardanceNm : 0);
  for (const nm of nms) {
    const model = colourAt(nm);
    for (const tilt of tilts) candidates.push(evaluate(nm, tilt, model));
  }
  const pick = (list: typeof candidates) => {
    const best = Math.min(...list.map((c) => c.d));
    return list.filter((c) => c.d <= best + 0.3).sort((a, b) => Math.abs(a.tilt) - Math.abs(b.tilt) || a.d - b.d)[0];
  };
  let chosen = pick(candidates);
  if (fitComp) {
    const fine: typeof candidates = [];
    for (let nm = Math.max(lo, chosen.nm - 1); nm <= Math.min(hi, chosen.nm + 1) + 1e-9; nm += 0.1) {
      fine.push(evaluate(Math.round(nm * 10) / 10, chosen.tilt, colourAt(nm)));
    }
    chosen = fine.reduce((a, b) => (b.d < a.d ? b : a));
  }
  return {
    compensatorNm: chosen.nm, camera: chosen.camera, whiteBalanceTilt: chosen.tilt, residualDeltaE00: chosen.d,
    backgroundLinearRgb: bg, fitted: { compensator: fitComp, whiteBalance: fitWb, exposure: true },
  };
}
