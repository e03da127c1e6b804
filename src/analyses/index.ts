export { SCHEMA_VERSION } from './schema.ts';
export type { ResultHead } from './schema.ts';
export type { Rect } from './region.ts';
export { parseRect, rectMask } from './region.ts';
export type { OrientOptions, OrientResult } from './orient.ts';
export { analyseOrientation, orientResult } from './orient.ts';
export type { ProfileRequest, ProfileResult } from './profile.ts';
export { analyseProfile, resolveChannel } from './profile.ts';
