export { InputError, isInputError, checkNumber } from './errors.ts';
export { DEG, degToRad, radToDeg, wrapAxialDeg, wrapAxialRad, axialDiffDeg } from './angles.ts';
export type { Plane } from './plane.ts';
export { makePlane } from './plane.ts';
export { withDefaults } from './options.ts';
export type { Rect } from './rect.ts';
export { parseRect, rectText, checkRectInside, rectMask } from './rect.ts';
export { bilinear, clampedBilinear, median } from './sampling.ts';
export { combineUncertainties, coverageFactor, type UncertaintyComponent } from './gum.ts';
