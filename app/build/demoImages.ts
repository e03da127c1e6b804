/**
 * Vite plugin: the demo images in sample-images/ appear at ./demo/ (with an index.json the empty app
 * reads), served from the folder in dev and emitted into the build, so they are never copied by hand
 * and the service worker precaches them. Which images are offered comes from the table in
 * sample-images/README.md (file, what it shows, analysis).
 */
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Plugin } from 'vite';

/**
 * One offered demo image. `set` lists the images that go together for its analysis (the four angles of an angle
 * series, then its compensator image; a turned compensator image with the unturned one before it, a plate pair), in
 * order. `plate` is the compensator image of an angle series' set, with its sample-free area `plateSampleFree`
 * ("x,y,w,h"): the angle-series form takes them until another is chosen.
 */
export interface DemoEntry { file: string; title: string; about: string; analyses: string[]; set?: string[]; plate?: string; plateSampleFree?: string }

/** Where each analysis is in the app, in the words of its screens. */
const WHERE: Record<string, string> = {
  orient: 'Analyse orientation', profile: 'Across the channel', plate: 'More analyses › Polarised colours (plate reading)',
  'plate-pair': 'Polarised colours (plate pair)', 'angle-series': 'Polarised colours (angle series)',
  diameter: 'More analyses › Fibre diameter', calibrate: 'More analyses › Micrometer',
};

/** The README table's rows whose analysis column names one the app offers. */
export function demoEntries(sampleDir: string, offered: string[]): DemoEntry[] {
  const readme = readFileSync(join(sampleDir, 'README.md'), 'utf8');
  const rows = readme.split('\n').filter((l) => /^\|\s*`[^`]+\.(png|tif|tiff|jpg)`/.test(l));
  const out: DemoEntry[] = [];
  for (const row of rows) {
    const [fileCell, what, analysis] = row.split('|').slice(1).map((c) => c.trim());
    const files = rowFiles(sampleDir, fileCell);
    // Whole words only: "plate" must not match "plate-pair".
    const analyses = offered.filter((a) => new RegExp(`(^|[^\\w-])${a}($|[^\\w-])`).test(analysis));
    if (analyses.length === 0) continue;
    const title = what.charAt(0).toUpperCase() + what.slice(1);
    const about = `invented demo scene; try ${analyses.map((a) => WHERE[a] ?? a).join('; ')} (retarda ${analyses.join(', ')})`;
    // The compensator image of an angle series (its analysis cell names `--plate`) joins the set of the row before,
    // with the sample-free area the cell gives.
    const before = out[out.length - 1];
    if (analyses.includes('angle-series') && /`--plate`/.test(analysis) && files.length === 1 && before?.set && before.analyses.includes('angle-series')) {
      const plate = files[0], plateSampleFree = /`--plate-sample-free ([^`]+)`/.exec(analysis)?.[1];
      const set = [...before.set, plate];
      for (const e of out) if (e.set === before.set) Object.assign(e, { set, plate, ...(plateSampleFree ? { plateSampleFree } : {}) });
      const plateAbout = `invented demo scene; the compensator image of the angle series above: open the ${set.length} together and try ${WHERE['angle-series']} (retarda angle-series --plate)`;
      out.push({ file: plate, title, about: plateAbout, analyses, set, plate, ...(plateSampleFree ? { plateSampleFree } : {}) });
      continue;
    }
    // A plate pair needs the unturned image of the row before; an angle series needs all its files.
    const set = analyses.includes('plate-pair') && out.length ? [before.file, ...files] : files.length > 1 ? files : undefined;
    for (const file of files) {
      out.push({ file, title: files.length > 1 ? `${title}: ${file}` : title, about, analyses, ...(set ? { set } : {}) });
    }
  }
  return out;
}

/**
 * The files a README row names: each `name` that exists; a row written as `first.png` ... `-last.png`
 * stands for every file of the folder that shares the first one's name up to its last "-" and its extension.
 */
function rowFiles(sampleDir: string, cell: string): string[] {
  const named = [...cell.matchAll(/`([^`]+)`/g)].map((m) => m[1]);
  if (cell.includes('...') && named.length > 0) {
    const first = named[0], stem = first.slice(0, first.lastIndexOf('-') + 1), ext = first.slice(first.lastIndexOf('.'));
    if (stem) return readdirSync(sampleDir).filter((f) => f.startsWith(stem) && f.endsWith(ext)).sort();
  }
  return named.filter((f) => existsSync(join(sampleDir, f)));
}

export function demoImages(sampleDir: string, offered: string[]): Plugin {
  return {
    name: 'retarda-demo-images',
    configureServer(server) {
      server.middlewares.use((req, res, next) => {
        const m = /\/demo\/([^/?#]+)/.exec(req.url ?? '');
        if (!m) return next();
        const entries = demoEntries(sampleDir, offered);
        if (m[1] === 'index.json') {
          res.setHeader('Content-Type', 'application/json');
          res.end(JSON.stringify(entries));
          return;
        }
        const e = entries.find((d) => d.file === decodeURIComponent(m[1]));
        if (!e) return next();
        res.setHeader('Content-Type', e.file.endsWith('.png') ? 'image/png' : 'application/octet-stream');
        res.end(readFileSync(join(sampleDir, e.file)));
      });
    },
    generateBundle() {
      const entries = demoEntries(sampleDir, offered);
      for (const e of entries) this.emitFile({ type: 'asset', fileName: `demo/${e.file}`, source: readFileSync(join(sampleDir, e.file)) });
      this.emitFile({ type: 'asset', fileName: 'demo/index.json', source: JSON.stringify(entries) });
    },
  };
}
