/**
 * The app's one calibration state (app/setups/calibration.ts), the compare table's units, the reasons and remedies
 * shown beside withheld one-image numbers (app/components/NotDetermined.tsx), rectangles drawn on the image
 * (app/components/imageRectangles.ts) and the optical form's later fields in storage.
 */
import { describe, expect, it } from 'vitest';
import { calibrationChange, calibrationOf, calibrationShort, calibrationWords, umPerPxText } from '../../app/setups/calibration.ts';
import { applied, newSetup, type PixelSizeSource } from '../../app/setups/setup.ts';
import { DEFAULT_OPTICAL_FORM, newSession, restoreSession, type SessionRecord } from '../../app/storage/records.ts';
import { profileIsStale, sessionReducer } from '../../app/state/session.ts';
import { compareRows, pixelSizeNote, sortRows } from '../../app/compare/compareRows.ts';
import { headline, reasonParts, remediesFor } from '../../app/components/NotDetermined.tsx';
import { rectBetween } from '../../app/components/imageRectangles.ts';
import { rectText } from '../../src/common/index.ts';
import { oneImageGaps, readPlateField, withholdProfile, ONE_IMAGE_MIN_RETARDANCE_NM, type ProfileResult } from '../../src/analyses/index.ts';
import type { DiameterDocument } from '../../src/analyses/diameter.ts';
import { renderSampleImage } from '../../src/optics/index.ts';

const at = new Date('2026-03-01T10:00:00Z');
const DEG = Math.PI / 180;

function withSetup(s: SessionRecord, pixelSize: PixelSizeSource, name = 'Bench'): SessionRecord {
  return sessionReducer(s, { type: 'applySetup', setup: applied({ ...newSetup('b', name, at), pixelSize }, at) }, () => at);
}

describe('one calibration state', () => {
  const s0 = newSession('s', 'Lengths', at);
  // docs/methods.md §11.1 (derived): 6.5 um camera pixels at 20x objective and 1x adapter, binning 2 -> 6.5 x 2 / 20 = 0.65 um/px
  const optics: PixelSizeSource = { source: 'optics', cameraPixelUm: 6.5, objectiveMagnification: 20, intermediateMagnification: 1, binning: 2 };

  it('nothing given: lengths in px; the file\'s tags when the file has them', () => {
    expect(calibrationOf(s0, null)).toEqual({ umPerPx: null, origin: 'none', from: '' });
    expect(calibrationWords(calibrationOf(s0, null))).toBe('not calibrated (lengths in px)');
    expect(calibrationShort(calibrationOf(s0, null))).toBe('not calibrated');
    expect(calibrationWords(calibrationOf(s0, 0.5))).toBe("0.5 µm/px from the file's resolution tags");
    expect(calibrationShort(calibrationOf(s0, 0.5))).toBe('0.5 µm/px (file metadata)');
  });

  it('a set-up\'s pixel size replaces the file\'s, named by how it was given', () => {
    const c = calibrationOf(withSetup(s0, optics), 0.5);
    expect(c.umPerPx).toBeCloseTo(0.65, 12);
    expect(c.origin).toBe('optics');
    expect(calibrationWords(c)).toBe('0.65 µm/px from the set-up "Bench": objective 20× and camera pixel 6.5 µm, binning 2');
    expect(calibrationShort(c)).toBe('0.65 µm/px (objective and camera)');
    expect(calibrationShort(calibrationOf(withSetup(s0, { source: 'typed', pixelSizeUmPerPx: 0.325 }), null))).toBe('0.325 µm/px (typed)');
    expect(calibrationShort(calibrationOf(withSetup(s0, { source: 'measured', pixelSizeUmPerPx: 0.3249, from: 'ruler 1 March' }), null))).toBe('0.32490 µm/px (micrometer)');
    // a set-up without a pixel size leaves the file's in use
    expect(calibrationOf(withSetup(s0, { source: 'none' }), 0.5).origin).toBe('file');
  });

  it('the latest choice is used: a micrometer pixel size over the set-up\'s, and a set-up with a pixel size applied after it replaces it', () => {
    const s1 = withSetup(s0, optics);
    const s2 = sessionReducer(s1, { type: 'pixelSize', pixelSize: { umPerPx: 0.65123456, from: 'micrometer ruler.png' } }, () => at);
    const c2 = calibrationOf(s2, 0.5);
    expect(c2).toEqual({ umPerPx: 0.65123456, origin: 'micrometer', from: 'micrometer image ruler.png' });
    // 5 significant digits everywhere: 0.65123456 -> 0.65123; a measured 0.65 keeps its five (0.65000), a typed one is as given
    expect(calibrationWords(c2)).toBe('0.65123 µm/px from the micrometer image ruler.png');
    expect(umPerPxText(0.65123456)).toBe('0.65123');
    expect(umPerPxText(0.6499999, true)).toBe('0.65000');
    expect(umPerPxText(0.6499999)).toBe('0.65');
    const s3 = withSetup(s2, { source: 'typed', pixelSizeUmPerPx: 0.4 }, 'Other');
    expect(s3.pixelSize).toBeNull();
    expect(calibrationOf(s3, 0.5).umPerPx).toBe(0.4);
    // a set-up without a pixel size keeps the micrometer's
    const s4 = withSetup(s2, { source: 'none' }, 'Train only');
    expect(calibrationOf(s4, 0.5).origin).toBe('micrometer');
  });

  it('says what changed when a pixel size is applied, replaced or removed', () => {
    const none = calibrationOf(s0, null), file = calibrationOf(s0, 0.5), set = calibrationOf(withSetup(s0, optics), 0.5);
    expect(calibrationChange(none, set)).toBe(`Lengths in this session now use ${calibrationWords(set)}: diameters, the report, exported pictures and Compare use it.`);
    expect(calibrationChange(file, set)).toContain(`(instead of ${calibrationWords(file)})`);
    expect(calibrationChange(set, none)).toBe(`Lengths are in px again: ${calibrationWords(set)} is no longer used.`);
  });
});

describe('compare never mixes um and px in one column', () => {
  const doc = (d: Partial<DiameterDocument>) => ({ schemaVersion: 1, analysis: 'diameter', ...d } as DiameterDocument);
  function session(): SessionRecord {
    let s = newSession('s', 'Fibres', at);
    s = sessionReducer(s, { type: 'addImages', images: ['a.png', 'b.png', 'c.png'].map((name) => ({ id: name, name, type: 'image/png', size: 1, page: 0, addedAt: at.toISOString() })) }, () => at);
    s = sessionReducer(s, { type: 'diameter', id: 'a.png', result: doc({ meanUm: 9, ciLowUm: 8.8, ciHighUm: 9.2, meanPx: 13.8, n: 20, pixelSizeUmPerPx: 0.65, pixelSizeFrom: 'option' }),
      run: { form: { umPerPx: '', stepPx: '10', averagePx: '5', polarity: 'auto', backgroundDegree: '2' }, commandLine: 'retarda diameter a.png --um-per-px 0.65', pixelSizeFrom: 'micrometer image ruler.png' } }, () => at);
    s = sessionReducer(s, { type: 'diameter', id: 'b.png', result: doc({ meanUm: null, meanPx: 40, ciLowPx: 39, ciHighPx: 41, n: 12, pixelSizeUmPerPx: null, pixelSizeFrom: null }) }, () => at);
    s = sessionReducer(s, { type: 'diameter', id: 'c.png', result: doc({ meanUm: 12, ciLowUm: 11, ciHighUm: 13, meanPx: 24, n: 8, pixelSizeUmPerPx: 0.5, pixelSizeFrom: 'file' }) }, () => at);
    return s;
  }

  it('sorts lengths among lengths and pixel counts among pixel counts, the other unit\'s rows last', () => {
    const rows = compareRows([session()]);
    expect(sortRows(rows, { column: 'diameterUm', descending: true }).map((r) => r.image)).toEqual(['c.png', 'a.png', 'b.png']);
    expect(sortRows(rows, { column: 'diameterPx', descending: false }).map((r) => r.image)).toEqual(['b.png', 'a.png', 'c.png']);
  });

  it('names the pixel size each length was measured with and where it came from', () => {
    const rows = compareRows([session()]);
    expect(rows.map(pixelSizeNote)).toEqual(['at 0.65000 µm/px (micrometer image ruler.png)', '', "at 0.5 µm/px (file's resolution tags)"]);
  });

  it('a withheld profile shows as not determined, with why, not as numbers', () => {
    const p = {
      schemaVersion: 1, analysis: 'profile', fieldMethod: 'plate', walls: [{ x1: 0, y1: 0, x2: 9, y2: 0 }, { x1: 0, y1: 9, x2: 9, y2: 9 }], wallsFound: false,
      core: { order: 0.6, ciLow: 0.5, ciHigh: 0.7, n: 10 }, skin: { order: 0.8, ciLow: 0.7, ciHigh: 0.9, n: 10 }, coreSkinRatio: 0.75, coreSkinRatioCiLow: 0.6, coreSkinRatioCiHigh: 0.9,
      bins: [], stations: [], options: { coreMax: 0.5, skinMin: 0.8 }, warnings: [],
    } as unknown as ProfileResult;
    let s = newSession('s', 'P', at);
    s = sessionReducer(s, { type: 'addImages', images: [{ id: 'p', name: 'p.png', type: 'image/png', size: 1, page: 0, addedAt: at.toISOString() }] }, () => at);
    s = sessionReducer(s, { type: 'profile', id: 'p', result: withholdProfile(p, 'the sample retardance is not known') }, () => at);
    const [row] = compareRows([s]);
    expect([row.coreOrder, row.skinOrder, row.ratio]).toEqual([null, null, null]);
    expect(row.orderNotDetermined).toBe('the sample retardance is not known');
  });
});

describe('the reasons beside withheld one-image numbers', () => {
  // A compensator image rendered at 30 deg, 150 nm: the truth is the construction (src/optics renderSampleImage).
  const img = renderSampleImage(24, 16, () => ({ angleRad: 30 * DEG, retardanceNm: 150 }), {}, { noiseSd: 0.001, seed: 3, name: 'p.png' });
  const { field } = readPlateField(img, {});

  it('split back into the gaps the analysis joined, each with its headline, and the remedies they call for', () => {
    const gaps = oneImageGaps({}, 45, field, 10, false);
    // no sample-free area, no sample retardance, and an axis 35 deg from the compensator (45 - 10)
    expect(gaps).toHaveLength(3);
    expect(reasonParts(gaps.join('; '))).toEqual(gaps);
    expect(gaps.map(headline)).toEqual(['no sample-free area', 'the sample retardance is not known', 'the axis (10 deg) is 35 deg from the compensator\'s slow axis']);
    expect(remediesFor(gaps.join('; '))).toEqual(['background', 'retardance', 'axis', 'platePair']);
  });

  it('with everything given, what the analysis still withholds one image\'s S for is one part, headed by its first clause outside parentheses', () => {
    const gaps = oneImageGaps({ sampleFree: { x: 0, y: 0, width: 4, height: 4 }, sampleRetardanceNm: 2 * ONE_IMAGE_MIN_RETARDANCE_NM }, 45, field, 45, true);
    for (const g of gaps) {
      expect(reasonParts(g)).toEqual([g]);
      // the headline is a leading piece of the reason, with its parentheses closed
      expect(g.startsWith(headline(g))).toBe(true);
      expect(headline(g).split('(').length).toBe(headline(g).split(')').length);
    }
    if (gaps.length) expect(remediesFor(gaps.join('; '))).toEqual(['platePair']);
  });

  it('a retardance below the floor and a channel axis call for two images only', () => {
    const gaps = oneImageGaps({ sampleFree: { x: 0, y: 0, width: 4, height: 4 }, sampleRetardanceNm: ONE_IMAGE_MIN_RETARDANCE_NM / 2 }, 45, field, 80, true);
    expect(gaps).toHaveLength(2);
    expect(reasonParts(gaps.join('; '))).toEqual(gaps);
    expect(remediesFor(gaps.join('; '))).toEqual(['retardance', 'platePair']);
  });
});

describe('a rectangle drawn on the image', () => {
  it('covers the pixels the drag covers at least half of, clipped to the image, in either drag direction', () => {
    // pixel i spans i - 0.5 .. i + 0.5: a drag from the left edge of pixel 3 to the right edge of pixel 9 covers pixels 3..9
    expect(rectBetween({ x: 2.5, y: 4.6 }, { x: 9.5, y: 1.4 }, 100, 50)).toEqual({ x: 3, y: 2, width: 7, height: 3 });
    expect(rectBetween({ x: 9.5, y: 1.4 }, { x: 2.5, y: 4.6 }, 100, 50)).toEqual({ x: 3, y: 2, width: 7, height: 3 });
    // past the image's edges: clipped to 0..width and 0..height
    expect(rectBetween({ x: -20, y: -20 }, { x: 120, y: 70 }, 100, 50)).toEqual({ x: 0, y: 0, width: 100, height: 50 });
    // a click (no drag) or a drag wholly outside the image gives nothing
    expect(rectBetween({ x: 5, y: 5 }, { x: 5.2, y: 5.1 }, 100, 50)).toBeNull();
    expect(rectBetween({ x: -30, y: 5 }, { x: -10, y: 20 }, 100, 50)).toBeNull();
    expect(rectText({ x: 3, y: 2, width: 7, height: 3 })).toBe('3,2,7,3');
  });
});

describe('the optical form\'s later fields and optical profiles', () => {
  const raw = (form: Record<string, unknown>) => ({
    schemaVersion: 1, kind: 'session', id: 'x', name: 'x', images: [{ id: 'i', name: 'p.png' }],
    work: { i: { walls: null, orient: null, profile: null, optics: { kind: 'plate', result: { schemaVersion: 1, analysis: 'plate' }, commandLine: 'retarda plate p.png', rangeNm: null, form } } },
  });

  it('a form kept before the sample retardance existed is read with it blank, not dropped', () => {
    const { sampleRetardanceNm: _a, sampleRetardanceToleranceNm: _b, ...older } = DEFAULT_OPTICAL_FORM;
    void _a; void _b;
    const r = restoreSession(raw({ ...older, background: '1,2,3,4' }));
    expect(r.ok && r.lossy).toBe(false);
    expect(r.ok && r.value.work.i.optics?.form).toEqual({ ...DEFAULT_OPTICAL_FORM, background: '1,2,3,4' });
    const typed = restoreSession(raw({ ...DEFAULT_OPTICAL_FORM, sampleRetardanceNm: '150', sampleRetardanceToleranceNm: '20' }));
    expect(typed.ok && typed.value.work.i.optics?.form?.sampleRetardanceNm).toBe('150');
    // a wrong type is still refused
    const bad = restoreSession(raw({ ...DEFAULT_OPTICAL_FORM, sampleRetardanceNm: 150 }));
    expect(bad.ok && bad.value.work.i.optics?.form).toBeUndefined();
  });

  it('an optical profile is not called stale for the texture settings it does not use', () => {
    const settings = { sigmaPx: 3, weighting: 'strength' as const, axisDeg: null, bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 };
    const p = (fieldMethod: string, o: Record<string, unknown>) => ({ fieldMethod, options: o } as unknown as ProfileResult);
    expect(profileIsStale(p('plate', { bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 }), settings)).toBe(false);
    expect(profileIsStale(p('plate', { bins: 10, stations: 1, coreMax: 0.5, skinMin: 0.8 }), settings)).toBe(true);
    expect(profileIsStale(p('texture', { sigmaPx: 2, weighting: 'strength', bins: 20, stations: 1, coreMax: 0.5, skinMin: 0.8 }), settings)).toBe(true);
  });
});

describe('the report says "not determined" where a result withholds a number, and states the session\'s lengths', () => {
  it('withheld profile numbers carry the reason instead of a value; the session\'s pixel size is named once at the top', async () => {
    const { reportContent } = await import('../../app/export/reportContent.ts');
    const p = {
      schemaVersion: 1, analysis: 'profile', fieldMethod: 'plate', width: 10, height: 10, pixelSizeUmPerPx: null,
      walls: [{ x1: 0, y1: 0, x2: 9, y2: 0 }, { x1: 0, y1: 9, x2: 9, y2: 9 }], wallsFound: true, axisDeg: 0,
      core: { order: 0.6, ciLow: 0.5, ciHigh: 0.7, n: 10 }, skin: { order: 0.8, ciLow: 0.7, ciHigh: 0.9, n: 10 }, coreSkinRatio: 0.75, coreSkinRatioCiLow: 0.6, coreSkinRatioCiHigh: 0.9,
      bins: [], stations: [], options: { coreMax: 0.5, skinMin: 0.8, bins: 20, stations: 1 }, warnings: [],
    } as unknown as ProfileResult;
    let s = newSession('s', 'R', at);
    s = sessionReducer(s, { type: 'addImages', images: [{ id: 'p', name: 'p.png', type: 'image/png', size: 1, page: 0, addedAt: at.toISOString() }] }, () => at);
    s = sessionReducer(s, { type: 'profile', id: 'p', result: withholdProfile(p, 'no sample-free area: draw it') }, () => at);
    const c = reportContent(s, at);
    expect(c.lengths).toBeNull();
    const [core, skin, ratio, axis] = c.images[0].sections[0].numbers;
    for (const n of [core, skin, ratio]) expect(n).toMatchObject({ value: null, ci: null, notDetermined: 'no sample-free area: draw it' });
    expect(axis.notDetermined).toBeUndefined();
    const calibrated = sessionReducer(s, { type: 'pixelSize', pixelSize: { umPerPx: 0.65, from: 'micrometer ruler.png' } }, () => at);
    expect(reportContent(calibrated, at).lengths).toBe('0.65000 µm/px from the micrometer image ruler.png');
    // an image whose file gives its pixel size: named as the file's when nothing else is set, and beside the one in use otherwise
    const tagged = sessionReducer(s, { type: 'profile', id: 'p', result: { ...withholdProfile(p, 'x'), pixelSizeUmPerPx: 0.5 } }, () => at);
    expect(reportContent(tagged, at).images[0].calibration).toBe("0.5 µm/px from the file's resolution tags");
    const both = sessionReducer(tagged, { type: 'pixelSize', pixelSize: { umPerPx: 0.65, from: 'micrometer ruler.png' } }, () => at);
    expect(reportContent(both, at).images[0].calibration).toBe('0.65000 µm/px from the micrometer image ruler.png (the file says 0.5 µm/px)');
  });
});
