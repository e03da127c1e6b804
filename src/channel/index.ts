export type { Segment, Channel, ChannelFrame } from './geometry.ts';
export { parseWalls, channelFrame, transverse } from './geometry.ts';
export type { ProfileOptions, ProfileBin, BandStats, StationProfile, ChannelProfile } from './profile.ts';
export { channelProfile, PROFILE_DEFAULTS } from './profile.ts';
export type { AutoWallOptions, FoundWalls } from './autoWalls.ts';
export { findWalls } from './autoWalls.ts';
