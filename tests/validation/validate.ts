/**
 * `npm run validate`: renders every validation case with the project's independent test renderers
 * (tests/validation/render/), runs the analyses and prints each error and coverage against its goal.
 * `--quick` runs the subset that `npm test` also runs. Exit status 1 when any goal is missed.
 */
import type { ValidationArea, ValidationRow } from './goals.ts';

const quick = process.argv.includes('--quick');
const only = process.argv.find((a) => a.startsWith('--area='))?.slice(7);

// Each area registers here; the modules are loaded lazily so one area's failure to load is reported, not fatal.
const areas: Record<string, () => Promise<{ default: ValidationArea }>> = {
  'channel': () => import('./channel.ts'),
  'fibre': () => import('./fibre.ts'),
  'micrometer': () => import('./micrometer.ts'),
  'series': () => import('./series.ts'),
  'trend': () => import('./trend.ts'),
  'angles': () => import('./angles.ts'),
};

const rows: ValidationRow[] = [];
for (const [name, load] of Object.entries(areas)) {
  if (only && !name.includes(only)) continue;
  const t0 = performance.now();
  try {
    rows.push(...(await (await load()).default({ quick })));
  } catch (e) {
    rows.push({ area: name, case: '(all)', quantity: 'ran', value: NaN, goal: 'runs', pass: false, note: String(e instanceof Error ? e.stack : e) });
  }
  process.stderr.write(`${name}: ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
}

const fmt = (v: number) => (Number.isFinite(v) ? (Math.abs(v) >= 100 || Number.isInteger(v) ? v.toFixed(0) : Math.abs(v) >= 1 ? v.toFixed(2) : v.toPrecision(3)) : 'n/a');
const head = ['area', 'case', 'quantity', 'value', 'goal', 'met', 'note'];
const table = rows.map((r) => [r.area, r.case, r.quantity, fmt(r.value), r.goal, r.pass ? 'yes' : 'NO', r.note ?? '']);
const widths = head.map((h, c) => Math.min(60, Math.max(h.length, ...table.map((t) => t[c].length))));
const line = (cells: string[]) => cells.map((c, i) => (i === cells.length - 1 ? c : c.padEnd(widths[i]))).join('  ');
console.log(line(head));
for (const t of table) console.log(line(t));
const missed = rows.filter((r) => !r.pass).length;
console.log(`\n${rows.length - missed} of ${rows.length} goals met${missed ? `; ${missed} missed` : ''}.`);
process.exitCode = missed ? 1 : 0;
