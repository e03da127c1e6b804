import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { screenWords } from '../../app/screenWords.ts';

/**
 * The app shows the core's messages without the command line's options (app/screenWords.ts): the remedy stays
 * in words. Expected texts are written out by hand from the rule.
 */
describe('screen words', () => {
  it('cuts an option after the words inside parentheses, and parentheses naming only options', () => {
    expect(screenWords('the first channel wall could not be told apart from its surroundings. Give the walls by hand (draw them on the image, or --walls), or crop the image to the channel'))
      .toBe('the first channel wall could not be told apart from its surroundings. Give the walls by hand (draw them on the image), or crop the image to the channel');
    expect(screenWords('no sample-free area: exposure and white balance were taken as they are; give one (--sample-free x,y,w,h) for a calibrated reading'))
      .toBe('no sample-free area: exposure and white balance were taken as they are; give one for a calibrated reading');
    expect(screenWords('a channel profile needs walls. Give the walls (--walls "x1,y1,x2,y2;x3,y3,x4,y4") or have them found (--auto-walls)'))
      .toBe('a channel profile needs walls. Give the walls or have them found');
    expect(screenWords('the diameter and the density are both needed. Give both (for example --diameter-um 7 --density 1.8)'))
      .toBe('the diameter and the density are both needed. Give both');
  });

  it('leaves other parentheses, negative numbers and dashes alone', () => {
    for (const t of ['S 0.31 (interval -0.7 to 0.9)', 'standard uncertainty (k = 1)', 'a range of -- none', 'x (-0.5 to 0.2) y'])
      expect(screenWords(t)).toBe(t);
  });

  it('leaves no option in any message the core writes', () => {
    // Every one-line string literal in src/ that names an option, outside the command line's own code (src/cli,
    // src/options) and the reader of former option names (src/analyses/schema.ts), read through the rule.
    const skip = (p: string) => p.startsWith(join('src', 'cli')) || p.startsWith(join('src', 'options')) || p === join('src', 'analyses', 'schema.ts');
    const files: string[] = [];
    const walk = (d: string) => { for (const e of readdirSync(d)) { const p = join(d, e); if (statSync(p).isDirectory()) walk(p); else if (p.endsWith('.ts')) files.push(p); } };
    walk('src');
    const left: string[] = [];
    let seen = 0;
    for (const f of files.filter((p) => !skip(p))) {
      for (const line of readFileSync(f, 'utf8').split('\n')) {
        if (/^\s*(\*|\/\/|\/\*\*)/.test(line)) continue;
        for (const m of line.matchAll(/(['`])((?:(?!\1).)*?--[a-z][a-z-]+(?:(?!\1).)*?)\1/g)) {
          seen++;
          if (/--[a-z]/.test(screenWords(m[2]))) left.push(`${f}: ${m[2]}`);
        }
      }
    }
    expect(seen).toBeGreaterThan(5);
    expect(left).toEqual([]);
  });
});
