import { describe, expect, it } from 'vitest';
import { orientCsv, profileCsvRow } from '../../app/export/rows.ts';
import { profileCsvRow as cliProfileCsvRow } from '../../src/cli/channelOptions.ts';
import { parseWalls } from '../../src/channel/index.ts';
import { analyseOrientation, analyseProfile, type OrientResult } from '../../src/analyses/index.ts';
import { makeImage } from '../../src/image/index.ts';
import { grating } from '../support/synthetic.ts';

describe('app exports match the command line', () => {
  it('profileCsvRow gives the same columns and values as the CLI\'s profile CSV row', async () => {
    // a 30 deg grating between two horizontal walls (hand-checkable: S_axis = cos 60 deg = 0.5 against the x axis)
    const g = grating(96, 64, 30, 6);
    const img = makeImage({ width: 96, height: 64, channels: 1, planes: [g.data], bitDepth: 32, encoding: 'linear', source: { name: 'g.tif' } });
    const { field } = await analyseOrientation(img, { sigmaPx: 2 });
    const r = await analyseProfile(img, field, { channel: parseWalls('4,8,92,8;4,56,92,56'), bins: 8 });
    expect(profileCsvRow(r)).toEqual(cliProfileCsvRow(r));
    // Closed form: S_axis = <cos 2(theta - axis)>; a uniform 30 deg field against a 0 deg axis gives cos 60 deg = 0.5
    expect(r.core.order).toBeCloseTo(0.5, 1);
  });

  it('orientCsv writes one RFC 4180 header row and one data row with the CLI\'s column names', () => {
    const r = {
      source: 'a, b.png', directorDeg: 12.5, order2D: 0.8, order2DCiLow: 0.7, order2DCiHigh: 0.9, axisDeg: null, axisOrder: null,
      coherencyMean: 0.6, n: 100, options: { sigmaPx: 2, weighting: 'coherency' },
    } as unknown as OrientResult;
    const lines = orientCsv(r).split('\r\n');
    expect(lines[0]).toBe('image,directorDeg,order2D,order2DCiLow,order2DCiHigh,axisDeg,axisOrder,coherencyMean,n,sigmaPx,weighting');
    // RFC 4180 §2.6: a field with a comma is quoted
    expect(lines[1]).toBe('"a, b.png",12.5,0.8,0.7,0.9,,,0.6,100,2,coherency');
    expect(lines[2]).toBe('');
  });
  // The command lines the app shows are proven to parse back to the options it ran in tests/cli/round-trip.test.ts.
});
