import { checkNumber, InputError } from '../common/index.ts';
import { DEG, wrapAxialRad } from '../common/index.ts';
import type { OrientationField } from '../orientation/index.ts';

/** How much the mirror choice matters for an order parameter against `referenceAxisDeg`. */
export interface MirrorChoiceStats {
  /** Fraction of usable pixels where cos 2(theta - axis) differs between the two candidates by more than `tolerance`. */
  mattersFraction: number;
  /** True when the reference is the mirror axis or across it: S_axis is then free of the mirror choice (a rod and its mirror image give the same S). */
  mirrorFree: boolean;
  n: number;
}

/** Fraction of pixels for which theta vs 2*mirror - theta changes cos 2(theta - reference) by more than tolerance (default 0.05). */
export function mirrorChoiceStats(field: OrientationField, referenceAxisDeg: number, tolerance = 0.05): MirrorChoiceStats {
  checkNumber('reference axis', referenceAxisDeg, -360, 360, 'deg');
  if (field.ambiguity !== 'mirror-about-compensator' || field.ambiguityAxisDeg === undefined) return { mattersFraction: 0, mirrorFree: true, n: 0 };
  const m = field.ambiguityAxisDeg * DEG, r = referenceAxisDeg * DEG;
  let n = 0, matters = 0;
  for (let i = 0; i < field.angleRad.length; i++) {
    if (!field.mask[i]) continue;
    n++;
    const a = field.angleRad[i];
    if (Math.abs(Math.cos(2 * (a - r)) - Math.cos(2 * (2 * m - a - r))) > tolerance) matters++;
  }
  const mirrorFree = Math.abs(Math.sin(2 * (m - r))) < 1e-9;
  return { mattersFraction: n ? matters / n : 0, mirrorFree, n };
}

export interface MirrorResolution {
  field: OrientationField;
  /** 1 where the texture direction decided the mirror choice. */
  resolved: Uint8Array;
  resolvedFraction: number;
}

/**
 * Resolves the plate's mirror choice with a texture (structure-tensor) field of the same image: where the
 * texture is coherent (confidence >= coherencyMin, default 0.3) and one candidate is nearer the texture
 * direction by more than marginDeg (default 10), that candidate is taken. Pixels left unresolved keep the
 * plate's choice; the field stays flagged ambiguous unless every usable pixel was resolved.
 */
export function resolveMirrorWithTexture(plate: OrientationField, texture: OrientationField, options: { coherencyMin?: number; marginDeg?: number } = {}): MirrorResolution {
  if (plate.width !== texture.width || plate.height !== texture.height) {
    throw new InputError(`the texture field is ${texture.width}x${texture.height} but the plate field is ${plate.width}x${plate.height}`, 'Compute both from the same image');
  }
  if (plate.ambiguity !== 'mirror-about-compensator' || plate.ambiguityAxisDeg === undefined) {
    return { field: plate, resolved: new Uint8Array(plate.angleRad.length), resolvedFraction: 0 };
  }
  const cMin = checkNumber('minimum coherency', options.coherencyMin ?? 0.3, 0, 1);
  const margin = checkNumber('mirror margin', options.marginDeg ?? 10, 0, 45, 'deg') * DEG;
  const m = plate.ambiguityAxisDeg * DEG;
  const angle = new Float32Array(plate.angleRad);
  const resolved = new Uint8Array(angle.length);
  let usable = 0, count = 0;
  for (let i = 0; i < angle.length; i++) {
    if (!plate.mask[i]) continue;
    usable++;
    if (!texture.mask[i] || texture.confidence[i] < cMin) continue;
    const a = plate.angleRad[i], b = wrapAxialRad(2 * m - a), t = texture.angleRad[i];
    const da = Math.abs(wrapAxialRad(a - t)), db = Math.abs(wrapAxialRad(b - t));
    if (Math.abs(da - db) < margin) continue;
    angle[i] = da <= db ? a : b;
    resolved[i] = 1;
    count++;
  }
  const fraction = usable ? count / usable : 0;
  const all = usable > 0 && count === usable;
  const field: OrientationField = {
    ...plate, angleRad: angle, cos2: undefined, sin2: undefined,
    ambiguity: all ? 'none' : plate.ambiguity,
    ambiguityAxisDeg: all ? undefined : plate.ambiguityAxisDeg,
    options: { ...plate.options, mirrorResolvedBy: 'structure-tensor direction', mirrorCoherencyMin: cMin, mirrorMarginDeg: margin / DEG },
    warnings: [...plate.warnings, `mirror choice resolved by the texture direction in ${(100 * fraction).toFixed(1)} % of pixels; the rest keep the stated assumption`],
  };
  return { field, resolved, resolvedFraction: fraction };
}

/** Advice on the set-up: S against the compensator axis (or across it) is free of the mirror choice in one plate image. */
export interface AxisAdvice {
  offsetDeg: number;
  /** True when the axis lies along the compensator axis or across it: S_axis is then free of the mirror choice. */
  mirrorFree: boolean;
  text: string;
}

/** Advice text; warns when the analysis axis lies more than toleranceDeg (default 10) from the compensator axis or its normal. */
export function compensatorAxisAdvice(axisDeg: number, compensatorDeg: number, toleranceDeg = 10): AxisAdvice {
  checkNumber('axis', axisDeg, -360, 360, 'deg');
  checkNumber('compensator angle', compensatorDeg, -360, 360, 'deg');
  const d = Math.abs(wrapAxialRad((axisDeg - compensatorDeg) * DEG)) / DEG;
  const offset = Math.min(d, 90 - d);
  const mirrorFree = offset < 1e-6;
  const base = 'For one plate image, lay the channel or fibre axis along the compensator slow axis (or across it): cos 2(theta - axis) is then the same for a rod and its mirror image. One image still does not give S reliably; a plate pair (two images, retarda plate-pair) does.';
  if (offset <= toleranceDeg) return { offsetDeg: offset, mirrorFree, text: base };
  return {
    offsetDeg: offset, mirrorFree: false,
    text: `${base} The axis here is ${offset.toFixed(0)} deg from the compensator axis, so S_axis rests on the mirror assumption: turn the sample, take a second image turned by 45 deg (plate pair), or use the texture direction to resolve it.`,
  };
}

/**
 * Re-makes the mirror choice of a one-image field pixel by pixel against a local reference axis: of theta
 * and 2 m - theta (m the compensator axis) the one nearer `axisRadAt(x, y)` is kept. For a channel the
 * reference is its local axis (in a taper it turns from one wall's direction to the other's across the
 * width), so rods are read within 45 deg of the flow direction where they are, not of one global angle.
 * Other fields are returned unchanged.
 */
export function chooseMirrorByAxis(field: OrientationField, axisRadAt: (x: number, y: number) => number, describe: string): OrientationField {
  if (field.ambiguity !== 'mirror-about-compensator' || field.ambiguityAxisDeg === undefined) return field;
  const m = field.ambiguityAxisDeg * DEG;
  const angle = new Float32Array(field.angleRad);
  const { width, height, mask } = field;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x;
      if (!mask[i]) continue;
      const a = field.angleRad[i], b = wrapAxialRad(2 * m - a), r = axisRadAt(x, y);
      if (Math.abs(wrapAxialRad(b - r)) < Math.abs(wrapAxialRad(a - r))) angle[i] = b;
    }
  }
  return {
    ...field, angleRad: angle, cos2: undefined, sin2: undefined,
    options: { ...field.options, mirrorAssumption: `orientation taken within 45 deg of ${describe} (of theta and ${2 * field.ambiguityAxisDeg} - theta, the nearer)` },
  };
}
