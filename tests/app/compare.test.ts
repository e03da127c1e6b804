import { describe, expect, it } from 'vitest';
import { compareCsv, compareRows, mixedBands, plotRange, profileSeries, rowLabel, sortRows, type CompareRow } from '../../app/compare/compareRows.ts';
import { newSession, type SessionRecord } from '../../app/storage/records.ts';
import { sessionReducer } from '../../app/state/session.ts';
import { analyseOrientation, analyseProfile, type ProfileResult } from '../../src/analyses/index.ts';
import type { DiameterDocument } from '../../src/analyses/diameter.ts';
import { parseWalls } from '../../src/channel/index.ts';
import { makeImage } from '../../src/image/index.ts';
import { grating } from '../support/synthetic.ts';

const at = new Date('2026-03-01T10:00:00Z');

/** Profile of a uniform grating at angleDeg between two walls along +x. */
async function gratingProfile(angleDeg: number, name: string, coreMax = 0.5): Promise<ProfileResult> {
  const g = grating(96, 64, angleDeg, 6);
  const img = makeImage({ width: 96, height: 64, channels: 1, planes: [g.data], bitDepth: 32, encoding: 'linear', source: { name } });
  const { field } = await analyseOrientation(img, { sigmaPx: 2 });
  return analyseProfile(img, field, { channel: parseWalls('4,8,92,8;4,56,92,56'), bins: 8, coreMax });
}

function sessionWith(id: string, name: string, images: { id: string; name: string; profile?: ProfileResult; diameter?: Partial<DiameterDocument> }[]): SessionRecord {
  let s = newSession(id, name, at);
  s = sessionReducer(s, { type: 'addImages', images: images.map((m) => ({ id: m.id, name: m.name, type: 'image/png', size: 1, page: 0, addedAt: at.toISOString() })) }, () => at);
  for (const m of images) {
    if (m.profile) s = sessionReducer(s, { type: 'profile', id: m.id, result: m.profile }, () => at);
    if (m.diameter) s = sessionReducer(s, { type: 'diameter', id: m.id, result: { schemaVersion: 1, analysis: 'diameter', ...m.diameter } as DiameterDocument }, () => at);
  }
  return s;
}

describe('compareRows', () => {
  it('takes core, skin, ratio with intervals from each profile, as the profile result holds them', async () => {
    const p0 = await gratingProfile(0, 'along.png'), p30 = await gratingProfile(30, 'tilted.png');
    const rows = compareRows([sessionWith('s', 'Run A', [{ id: 'a', name: 'along.png', profile: p0 }, { id: 'b', name: 'tilted.png', profile: p30 }, { id: 'c', name: 'not analysed.png' }])]);
    expect(rows.map((r) => r.image)).toEqual(['along.png', 'tilted.png']);
    // Closed form: S_axis = <cos 2(theta - axis)>: a 0 deg grating along walls at 0 deg gives 1, a 30 deg one cos 60 deg = 0.5
    expect(rows[0].coreOrder).toBeCloseTo(1, 1);
    expect(rows[1].coreOrder).toBeCloseTo(0.5, 1);
    expect(rows[1]).toMatchObject({
      coreOrder: p30.core.order, coreCiLow: p30.core.ciLow, coreCiHigh: p30.core.ciHigh, coreN: p30.core.n,
      skinOrder: p30.skin.order, ratio: p30.coreSkinRatio, ratioCiLow: p30.coreSkinRatioCiLow, ratioCiHigh: p30.coreSkinRatioCiHigh,
      coreMax: 0.5, skinMin: 0.8, diameter: null, diameterUnit: null, field: 'texture',
    });
  });

  it('uses um diameters when the pixel size was known and px otherwise; images with only a diameter are listed', () => {
    const rows = compareRows([sessionWith('s', 'Fibres', [
      { id: 'a', name: 'cal.png', diameter: { meanUm: 12.5, ciLowUm: 12.1, ciHighUm: 12.9, meanPx: 25, ciLowPx: 24.2, ciHighPx: 25.8, n: 40 } },
      { id: 'b', name: 'uncal.png', diameter: { meanUm: null, ciLowUm: null, ciHighUm: null, meanPx: 31, ciLowPx: 30, ciHighPx: 32, n: 12 } },
    ])]);
    expect(rows.map((r) => [r.diameter, r.diameterCiLow, r.diameterCiHigh, r.diameterUnit, r.diameterN])).toEqual([[12.5, 12.1, 12.9, 'um', 40], [31, 30, 32, 'px', 12]]);
    expect(rows[0].coreOrder).toBeNull();
  });
});

describe('sortRows', () => {
  const row = (image: string, coreOrder: number | null, session = 'S'): CompareRow => ({ ...({} as CompareRow), key: `${session}/${image}`, session, image, coreOrder });
  const rows = [row('b 10', 0.4), row('a', null), row('b 9', 0.9), row('c', 0.4)];

  it('sorts numbers either way with missing values last, ties in their original order', () => {
    expect(sortRows(rows, { column: 'coreOrder', descending: false }).map((r) => r.image)).toEqual(['b 10', 'c', 'b 9', 'a']);
    expect(sortRows(rows, { column: 'coreOrder', descending: true }).map((r) => r.image)).toEqual(['b 9', 'b 10', 'c', 'a']);
  });

  it('sorts names in natural order (9 before 10)', () => {
    expect(sortRows(rows, { column: 'image', descending: false }).map((r) => r.image)).toEqual(['a', 'b 9', 'b 10', 'c']);
  });

  it('does not change the rows it was given', () => {
    sortRows(rows, { column: 'image', descending: true });
    expect(rows.map((r) => r.image)).toEqual(['b 10', 'a', 'b 9', 'c']);
  });
});

describe('compareCsv', () => {
  it('writes one header row with units and empty cells for what was not measured (RFC 4180)', async () => {
    const p = await gratingProfile(0, 'a, b.png');
    const rows = compareRows([sessionWith('s', 'Run "A"', [{ id: 'a', name: 'a, b.png', profile: p }, { id: 'b', name: 'fibre.png', diameter: { meanUm: 12.5, ciLowUm: 12, ciHighUm: 13, meanPx: 25, ciLowPx: 24, ciHighPx: 26, n: 40 } }])]);
    const lines = compareCsv(rows).split('\r\n');
    expect(lines[0]).toBe('session,image,field,coreOrder,coreCiLow,coreCiHigh,coreN,skinOrder,skinCiLow,skinCiHigh,skinN,coreSkinRatio,coreSkinRatioCiLow,coreSkinRatioCiHigh,coreMax,skinMin,diameterUm,diameterCiLowUm,diameterCiHighUm,diameterPx,diameterCiLowPx,diameterCiHighPx,diameterN,pixelSizeUmPerPx,pixelSizeFrom,notDetermined');
    // RFC 4180 §2.6-2.7: fields with commas or quotes are quoted, quotes doubled
    expect(lines[1].startsWith(`"Run ""A""","a, b.png",texture,${p.core.order},`)).toBe(true);
    expect(lines[2]).toBe('"Run ""A""",fibre.png,,,,,,,,,,,,,,,12.5,12,13,,,,40,,,');
    expect(lines[3]).toBe('');
  });
});

describe('profile series for the overlay plot', () => {
  it('one series per profiled row, bins without pixels left out, distinct colours, session names when several', async () => {
    const p = await gratingProfile(0, 'x.png');
    const bins = p.bins.map((b, i) => (i === 0 ? { ...b, n: 0, order: NaN } : b));
    const rows = compareRows([
      sessionWith('s1', 'Day 1', [{ id: 'a', name: 'x.png', profile: { ...p, bins } }]),
      sessionWith('s2', 'Day 2', [{ id: 'b', name: 'x.png', profile: p }, { id: 'c', name: 'd.png', diameter: { meanPx: 3, n: 1 } }]),
    ]);
    const series = profileSeries(rows, true);
    expect(series.map((s) => s.label)).toEqual(['Day 1: x.png', 'Day 2: x.png']);
    expect(series[0].points).toHaveLength(p.bins.length - 1);
    expect(series[1].points).toHaveLength(p.bins.length);
    expect(series[0].colour).not.toBe(series[1].colour);
    expect(rowLabel(rows[0], false)).toBe('x.png');
  });

  it('the y range is [0, 1] unless an interval reaches below 0, then it widens by whole fifths', () => {
    const pts = (lo: number) => [{ key: 'k', label: 'k', colour: '#000', dash: '', points: [{ s: 0, order: 0.1, ciLow: lo, ciHigh: 0.3, n: 5 }] }];
    expect(plotRange(pts(0.05))).toEqual([0, 1]);
    expect(plotRange(pts(-0.25))).toEqual([-0.4, 1]);
    expect(plotRange([])).toEqual([0, 1]);
  });

  it('says when profiles were made with different core / skin bands', async () => {
    const a = await gratingProfile(0, 'a.png'), b = await gratingProfile(0, 'b.png', 0.4);
    expect(mixedBands(compareRows([sessionWith('s', 'S', [{ id: 'a', name: 'a.png', profile: a }, { id: 'b', name: 'b.png', profile: b }])]))).toBe(true);
    expect(mixedBands(compareRows([sessionWith('s', 'S', [{ id: 'a', name: 'a.png', profile: a }, { id: 'b', name: 'b.png', profile: a }])]))).toBe(false);
  });
});

describe('diameters kept with the session', () => {
  it('restoreSession keeps a diameter document and leaves out (and names) one that is not', async () => {
    const { restoreSession } = await import('../../app/storage/records.ts');
    const s = sessionWith('s', 'Fibres', [{ id: 'a', name: 'f.png', diameter: { meanPx: 25, n: 40 } }]);
    const back = restoreSession(JSON.parse(JSON.stringify(s)));
    expect(back.ok && back.value.work.a.diameter?.meanPx).toBe(25);
    const broken = JSON.parse(JSON.stringify(s));
    broken.work.a.diameter = { analysis: 'orient' };
    const r = restoreSession(broken);
    expect(r.ok && r.value.work.a.diameter).toBeUndefined();
    expect(r.ok && r.lossy).toBe(true);
  });
});
