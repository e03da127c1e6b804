/** Writes a plane (values in [0, 1]) as a 16-bit grey PNG in a fresh temp folder, for the CLI tests. */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { encode } from 'fast-png';
import type { Plane } from '../../src/common/plane.ts';

export function tempDir(): string {
  return mkdtempSync(join(tmpdir(), 'retarda-fibre-'));
}

export function writePng16(dir: string, name: string, p: Plane): string {
  const data = Uint16Array.from(p.data, (v) => Math.round(Math.min(1, Math.max(0, v)) * 65535));
  const path = join(dir, name);
  writeFileSync(path, encode({ width: p.width, height: p.height, data, depth: 16, channels: 1 }));
  return path;
}
