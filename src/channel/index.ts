export type { Segment, Channel, ChannelFrame } from './geometry.ts';
export { parseWalls, wallsText, snapWalls, WALL_STEP_PX, channelFrame, transverse, localAxisRadAt } from './geometry.ts';
export type { ProfileOptions, ProfileBin, BandStats, StationProfile, ChannelProfile } from './profile.ts';
export { channelProfile, PROFILE_DEFAULTS, PROFILE_LIMITS, CLIPPED_SHARE_LIMIT, ANGLE_NOISE_MAX_LOSS, ANGLE_NOISE_REMEDY, FOLD_EDGE_REMEDY } from './profile.ts';
export type { AutoWallOptions, FoundWalls, WallFit } from './autoWalls.ts';
export { findWalls, AUTO_WALL_DEFAULTS } from './autoWalls.ts';
export { wallFreeTexturePatch, WALL_CLEARANCE_PX } from './wallFree.ts';
