import { benchPlateRead } from '../optics/benchPlate.ts';

/** Optics part of the benchmark: reading a 12-megapixel compensator image (target: under 2 s on one core). */
export async function benchOptics(): Promise<void> {
  await benchPlateRead();
}
