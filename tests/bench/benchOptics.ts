import { benchPlateRead } from '../optics/benchPlate.ts';

/** Optics part of the benchmark: reading a 12-megapixel compensator image (target: under 2 s on one core). */
export async function benchOptics(): Promise<void> {
  const best = { seconds: Infinity, pixels: 0, cells: 0 };
  for (let r = 0; r < 2; r++) {
    const m = await benchPlateRead();
    if (m.seconds < best.seconds) Object.assign(best, m);
  }
  console.log(`\ncompensator (plate) image reading, ${(best.pixels / 1e6).toFixed(1)} MP`);
  console.log(`  retarda  ${best.seconds.toFixed(2)} s  (${best.cells} colour cells searched; target under 2 s on one core)`);
}
