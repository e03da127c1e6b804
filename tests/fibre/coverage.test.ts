/**
 * Coverage of the diameter intervals over seeded renderings of the independent renderer
 * (tests/validation/render/fibre.ts; truth by construction), through the PNG file and the analysis the CLI
 * runs: the mean width in px, in um with the pixel size's uncertainty (each rendering's pixel size is drawn
 * about the true one with the stated relative uncertainty), and the solid linear density (tex ~ D^2, with
 * the density drawn likewise). The same judgement as `npm run validate` (tests/validation/fibre.ts):
 * coverage 90-99 % (docs/methods.md, "Interval coverage") and the spread of the standardised errors within
 * its 99 % sampling band, which intervals made 20 % narrower or 20 % wider do not pass (shown below).
 */
import { describe, expect, it } from 'vitest';
import { coverageSamples, judgeCoverage, type CoverageSamples } from '../validation/fibre.ts';

/** 150 narrow fibres (5-12 px, whole-profile bar fits) and 100 wide ones (16-36 px, edge fits). */
function samples(): CoverageSamples {
  const narrow = coverageSamples('narrow', 150, 20001);
  const wide = coverageSamples('wide', 100, 30001);
  return {
    px: [...narrow.px, ...wide.px], um: [...narrow.um, ...wide.um], tex: [...narrow.tex, ...wide.tex],
    skipped: narrow.skipped + wide.skipped, trials: narrow.trials + wide.trials,
  };
}

describe('diameter intervals cover the rendered truth at their stated 95 %', () => {
  const s = samples();

  it('measures a width in (nearly) every rendering', () => {
    // Every rendering is drawn at 2.5 sigma or wider, where the width is determined.
    expect(s.px.length).toBeGreaterThanOrEqual(0.97 * s.trials);
    expect(s.tex.length).toBe(s.px.length);
  });

  for (const kind of ['px', 'um', 'tex'] as const) {
    it(`${kind}: coverage 90-99 %, spread of standardised errors within its band; 20 % narrower or wider fails`, () => {
      const j = judgeCoverage(s[kind]);
      expect(j.n).toBeGreaterThanOrEqual(240);
      expect(j.outside).toBe(0);
      expect(j.coveragePct).toBeGreaterThanOrEqual(90);
      expect(j.coveragePct).toBeLessThanOrEqual(99);
      expect(j.spread).toBeGreaterThanOrEqual(j.band[0]);
      expect(j.spread).toBeLessThanOrEqual(j.band[1]);
      expect(j.pass).toBe(true);
      // The same intervals scaled: the judgement must reject both.
      const narrower = judgeCoverage(s[kind], 0.8);
      const wider = judgeCoverage(s[kind], 1.2);
      expect(narrower.pass).toBe(false);
      expect(wider.pass).toBe(false);
      expect(narrower.spread).toBeGreaterThan(j.band[1]);
      expect(wider.spread).toBeLessThan(j.band[0]);
    });
  }
});
