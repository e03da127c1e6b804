/**
 * Seeded random numbers for the validation renderer: xoshiro128** (Blackman & Vigna 2018, "Scrambled
 * linear pseudorandom number generators", arXiv:1805.01407) seeded through SplitMix32 so that nearby
 * seeds give unrelated streams; normal deviates by the Box-Muller transform (Box & Muller 1958,
 * Ann. Math. Statist. 29:610). Independent of the project's own generators on purpose.
 */

/** SplitMix32 step (Steele, Lea & Flood 2014, 32-bit variant): a well-mixed 32-bit word from a state. */
function splitMix32(state: number): [number, number] {
  const s = (state + 0x9e3779b9) | 0;
  let z = s;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  return [s, (z ^ (z >>> 16)) >>> 0];
}

/** Hash of a seed and a stream label: one independent stream per purpose (noise, field, texture...). */
export function streamSeed(seed: number, label: string): number {
  let h = (seed >>> 0) ^ 0x5bd1e995;
  for (let i = 0; i < label.length; i++) {
    h = Math.imul(h ^ label.charCodeAt(i), 0x01000193);
    h ^= h >>> 15;
  }
  return h >>> 0;
}

export class Rng {
  private a: number; private b: number; private c: number; private d: number;
  private spare = NaN;

  constructor(seed: number) {
    let s = seed | 0, w: number;
    [s, w] = splitMix32(s); this.a = w;
    [s, w] = splitMix32(s); this.b = w;
    [s, w] = splitMix32(s); this.c = w;
    [, w] = splitMix32(s); this.d = w;
    if ((this.a | this.b | this.c | this.d) === 0) this.d = 1;
  }

  /** Next 32-bit unsigned word (xoshiro128**). */
  nextU32(): number {
    const r = Math.imul(rotl(Math.imul(this.b, 5), 7), 9);
    const t = this.b << 9;
    this.c ^= this.a; this.d ^= this.b; this.b ^= this.c; this.a ^= this.d;
    this.c ^= t; this.d = rotl(this.d, 11);
    return r >>> 0;
  }

  /** Uniform on [0, 1) with 32 random bits. */
  uniform(): number {
    return this.nextU32() / 4294967296;
  }

  /** Standard normal deviate (Box-Muller, both values used). */
  normal(): number {
    if (!Number.isNaN(this.spare)) { const v = this.spare; this.spare = NaN; return v; }
    let u = 0;
    while (u <= 1e-300) u = this.uniform();
    const r = Math.sqrt(-2 * Math.log(u)), phi = 2 * Math.PI * this.uniform();
    this.spare = r * Math.sin(phi);
    return r * Math.cos(phi);
  }

  /**
   * Poisson deviate of mean `mean`: Knuth's product method below 30, otherwise the normal
   * approximation with continuity correction (relative error of the variance < 1/(12 mean)).
   */
  poisson(mean: number): number {
    if (!(mean > 0)) return 0;
    if (mean < 30) {
      const l = Math.exp(-mean);
      let k = 0, p = this.uniform();
      while (p > l) { k++; p *= this.uniform(); }
      return k;
    }
    return Math.max(0, Math.round(mean + Math.sqrt(mean) * this.normal()));
  }

  /** An array of independent standard normal deviates. */
  normals(n: number): Float32Array {
    const out = new Float32Array(n);
    for (let i = 0; i < n; i++) out[i] = this.normal();
    return out;
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
