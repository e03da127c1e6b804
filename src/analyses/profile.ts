import { toGrey, type Image } from '../image/index.ts';
import { InputError } from '../common/index.ts';
import { withFieldPatch, type OrientationField } from '../orientation/index.ts';
import { channelProfile, findWalls, localAxisRadAt, wallFreeTexturePatch, type Channel, type ChannelProfile, type ProfileOptions } from '../channel/index.ts';
import { SCHEMA_VERSION, type ResultHead } from './schema.ts';
import { chooseMirrorByAxis } from '../optics/index.ts';

export interface ProfileRequest extends ProfileOptions {
  /** Walls given by the user; omit with autoWalls = true to find them. */
  channel?: Channel;
  autoWalls?: boolean;
}

export interface ProfileResult extends ResultHead, Omit<ChannelProfile, 'warnings' | 'options'> {
  analysis: 'profile';
  /** Which reader made the orientation field: texture, plate, plate-pair, angle-series. */
  fieldMethod: OrientationField['method'];
  walls: Channel['walls'];
  wallsFound: boolean;
  options: Record<string, unknown>;
}

/** Walls from the request, or found in the image; an InputError when neither is possible. */
export async function resolveChannel(img: Image, req: ProfileRequest): Promise<{ channel: Channel; found: boolean }> {
  if (req.channel && req.autoWalls) throw new InputError('give walls or ask for them to be found, not both');
  if (req.channel) return { channel: req.channel, found: false };
  if (req.autoWalls) return { channel: (await findWalls(img)).channel, found: true };
  throw new InputError('a channel profile needs walls', 'Give the walls (--walls "x1,y1,x2,y2;x3,y3,x4,y4") or have them found (--auto-walls)');
}

/** S across a channel from any orientation field (texture, plate reading, plate pair, angle series). */
export async function analyseProfile(img: Image, field: OrientationField, req: ProfileRequest, fieldOptions: Record<string, unknown> = {}): Promise<ProfileResult> {
  const { channel, found } = await resolveChannel(img, req);
  // A texture field next to a wall reads the wall's own edge: recompute those pixels from the interior only.
  const near = field.method === 'texture' ? wallFreeTexturePatch(toGrey(img), field, channel) : null;
  // One compensator image cannot tell a rod from its mirror image about the compensator axis: take, pixel
  // by pixel, the one nearer the channel's local axis (or the axis the user gave).
  const read = near ? field : req.axisDeg !== undefined
    ? chooseMirrorByAxis(field, () => (req.axisDeg! * Math.PI) / 180, `${req.axisDeg} deg`)
    : chooseMirrorByAxis(field, localAxisRadAt(channel), "the channel's local axis");
  const p = near ? withFieldPatch(field, near.patch, (patched) => channelProfile(patched, channel, req)) : channelProfile(read, channel, req);
  const { warnings, options, notDetermined, ...rest } = p;
  const ratioUndetermined = !Number.isFinite(p.coreSkinRatio) && Number.isFinite(p.core.order) && Number.isFinite(p.skin.order) && p.skin.n > 0;
  const reasons = {
    ...notDetermined,
    ...(ratioUndetermined ? { coreSkinRatio: 'the skin order is not clearly away from 0 (its interval reaches 0), so no ratio is determined; compare the core and skin orders themselves, or widen the skin band' } : {}),
  };
  return {
    schemaVersion: SCHEMA_VERSION, analysis: 'profile', source: img.source.name, width: img.width, height: img.height,
    pixelSizeUmPerPx: img.pixelSizeUmPerPx ?? null,
    ...rest, fieldMethod: field.method, walls: channel.walls, wallsFound: found,
    options: { ...fieldOptions, ...read.options, ...options, ...(near ? { nearWalls: `normalised convolution: intensities within ${near.clearancePx} px of a wall left out, gradients fitted up to them` } : {}) },
    warnings: [...warnings, ...ambiguityWarning(read, p.axisDeg)],
    ...(Object.keys(reasons).length ? { notDetermined: reasons } : {}),
  };
}

/** Plate fields cannot tell theta from its mirror about the compensator axis; say what that means here. */
function ambiguityWarning(f: OrientationField, axisDeg: number): string[] {
  if (f.ambiguity === 'mod-90') return ['the angle series cannot tell an axis from the one at 90 deg to it; S_axis signs assume the stated resolution'];
  if (f.ambiguity === 'mirror-about-compensator' && f.ambiguityAxisDeg !== undefined) {
    const d = Math.abs(((axisDeg - f.ambiguityAxisDeg + 90) % 180 + 180) % 180 - 90);
    if (d > 1 && d < 89) return [`one plate image fixes orientation only up to a mirror about the compensator axis (${f.ambiguityAxisDeg} deg); the reference axis is ${d.toFixed(0)} deg from it, so S_axis rests on the assumption stated in the field options`];
  }
  return [];
}
