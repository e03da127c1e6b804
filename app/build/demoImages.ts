/**
 * Vite plugin: the demo images in sample-images/ appear at ./demo/ (with an index.json the empty app
 * reads), served from the folder in dev and emitted into the build, so they are never copied by hand
 * and the service worker precaches them. Which images are offered comes from the table in
 * sample-images/README.md (file, what it shows, analysis).
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Plugin } from 'vite';

export interface DemoEntry { file: string; title: string; about: string; analyses: string[] }

/** The README table's rows whose analysis column names one the app offers. */
export function demoEntries(sampleDir: string, offered: string[]): DemoEntry[] {
  const readme = readFileSync(join(sampleDir, 'README.md'), 'utf8');
  const rows = readme.split('\n').filter((l) => /^\|\s*`[^`]+\.(png|tif|tiff|jpg)`/.test(l));
  const out: DemoEntry[] = [];
  for (const row of rows) {
    const [fileCell, what, analysis] = row.split('|').slice(1).map((c) => c.trim());
    const files = [...fileCell.matchAll(/`([^`]+)`/g)].map((m) => m[1]).filter((f) => existsSync(join(sampleDir, f)));
    const analyses = offered.filter((a) => analysis.includes(a));
    if (analyses.length === 0) continue;
    for (const file of files) {
      out.push({ file, title: what.charAt(0).toUpperCase() + what.slice(1), about: `invented demo scene; try: ${analyses.join(', ')}`, analyses });
    }
  }
  return out;
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
