/**
 * Changes to the open session, as a pure reducer: every change the user makes goes through here, and
 * the result is what gets saved. Pictures and progress are not part of it (they are remade).
 */
import type { OrientResult, ProfileResult } from '../../src/analyses/index.ts';
import type { Channel, WallFit } from '../../src/channel/index.ts';
import {
  EMPTY_WORK, type AnalysisSettings, type ImageMeta, type StoredDiameterRun, type ImageWork, type SessionPixelSize, type SessionRecord, type StoredMicrometer, type StoredOptics,
  type StoredSeries,
} from '../storage/records.ts';
import type { TrendForm } from '../trend/trendForm.ts';
import type { AppliedSetup } from '../setups/setup.ts';
import { setupCalibration } from '../setups/calibration.ts';
import type { DiameterDocument } from '../../src/analyses/index.ts';

export type SessionAction =
  | { type: 'replace'; session: SessionRecord }
  | { type: 'rename'; name: string }
  | { type: 'addImages'; images: ImageMeta[] }
  | { type: 'removeImage'; id: string }
  | { type: 'select'; id: string }
  | { type: 'settings'; change: Partial<AnalysisSettings> }
  | { type: 'walls'; id: string; channel: Channel | null; found: boolean; fit?: [WallFit, WallFit] | null }
  | { type: 'orient'; id: string; result: OrientResult }
  | { type: 'profile'; id: string; result: ProfileResult }
  /**
   * Applies a set-up (optical train, pixel size, sign) to every image of the session; null removes it. A set-up
   * that gives a pixel size replaces a pixel size chosen from a micrometer image (the latest choice is used).
   */
  | { type: 'applySetup'; setup: AppliedSetup | null }
  /** Keeps an image's fibre diameters with the session (shown in the compare view), with the form and command line that made them. */
  | { type: 'diameter'; id: string; result: DiameterDocument | null; run?: StoredDiameterRun | null }
  /** Keeps the optical reading made with this image first (its numbers are shown again after a reload). */
  | { type: 'optics'; id: string; reading: StoredOptics | null }
  /** Keeps the micrometer calibration made on this image. */
  | { type: 'micrometer'; id: string; calibration: StoredMicrometer | null }
  /** The pixel size the session's lengths use (chosen from a micrometer calibration); null = none. */
  | { type: 'pixelSize'; pixelSize: SessionPixelSize | null }
  /** A screen's state kept with the session: the Over time screen (form and last fit) or the Against a variable screen (form). */
  | { type: 'screenState'; series?: StoredSeries | null; trend?: TrendForm | null };

function withWork(s: SessionRecord, id: string, change: Partial<ImageWork>): SessionRecord {
  if (!s.images.some((i) => i.id === id)) return s;
  return { ...s, work: { ...s.work, [id]: { ...(s.work[id] ?? EMPTY_WORK), ...change } } };
}

function apply(s: SessionRecord, a: SessionAction): SessionRecord {
  switch (a.type) {
    case 'replace': return a.session;
    case 'rename': return a.name.trim() ? { ...s, name: a.name.trim() } : s;
    case 'addImages': {
      if (a.images.length === 0) return s;
      const work = { ...s.work };
      for (const m of a.images) work[m.id] = { ...EMPTY_WORK };
      return { ...s, images: [...s.images, ...a.images], work, activeImageId: a.images[0].id };
    }
    case 'removeImage': {
      const images = s.images.filter((i) => i.id !== a.id);
      const { [a.id]: _gone, ...work } = s.work;
      void _gone;
      const active = s.activeImageId === a.id ? images[0]?.id ?? null : s.activeImageId;
      return { ...s, images, work, activeImageId: active };
    }
    case 'select': return s.images.some((i) => i.id === a.id) ? { ...s, activeImageId: a.id } : s;
    case 'settings': return { ...s, settings: { ...s.settings, ...a.change } };
    // New walls make the old profile describe other walls: it is dropped, the orientation result stays.
    case 'walls': return withWork(s, a.id, { walls: a.channel, wallsFound: a.found, wallFit: a.found ? a.fit ?? null : null, profile: null });
    case 'orient': return withWork(s, a.id, { orient: a.result });
    case 'profile': return withWork(s, a.id, { profile: a.result, walls: { walls: a.result.walls }, wallsFound: a.result.wallsFound });
    case 'applySetup': return { ...s, setup: a.setup, ...(a.setup && setupCalibration(a.setup) ? { pixelSize: null } : {}) };
    case 'diameter': return withWork(s, a.id, { diameter: a.result, diameterRun: a.result ? a.run ?? null : null });
    case 'optics': return withWork(s, a.id, { optics: a.reading });
    case 'micrometer': return withWork(s, a.id, { micrometer: a.calibration });
    case 'pixelSize': return { ...s, pixelSize: a.pixelSize };
    case 'screenState': return { ...s, ...(a.series !== undefined ? { series: a.series } : {}), ...(a.trend !== undefined ? { trend: a.trend } : {}) };
  }
}

/** Applies the change and stamps updatedAt when anything changed. */
export function sessionReducer(s: SessionRecord, a: SessionAction, now: () => Date = () => new Date()): SessionRecord {
  const next = apply(s, a);
  return next === s || a.type === 'replace' ? next : { ...next, updatedAt: now().toISOString() };
}

/** Whether a stored orientation result was made with other settings than the current ones. */
export function orientIsStale(r: OrientResult, s: AnalysisSettings): boolean {
  const o = r.options as { sigmaPx?: number; weighting?: string };
  return o.sigmaPx !== s.sigmaPx || o.weighting !== s.weighting || (r.axisDeg ?? null) !== s.axisDeg;
}

/**
 * Whether a stored profile was made with other settings than the current ones. The texture scale and pixel
 * weights belong to the texture field; a profile of an optical reading is made with the reading's own.
 */
export function profileIsStale(r: ProfileResult, s: AnalysisSettings): boolean {
  const o = r.options as { sigmaPx?: number; weighting?: string; bins?: number; stations?: number; coreMax?: number; skinMin?: number };
  const field = r.fieldMethod === 'texture' && (o.sigmaPx !== s.sigmaPx || o.weighting !== s.weighting);
  return field || o.bins !== s.bins || o.stations !== s.stations || o.coreMax !== s.coreMax || o.skinMin !== s.skinMin;
}
