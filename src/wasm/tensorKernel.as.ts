// AssemblyScript source of the structure tensor kernel (compiled by `npm run wasm` into tensorKernel.wasm.ts).
// Plain WebAssembly SIMD, four float32 pixels per instruction: the opencv.js build has no SIMD, and this
// pipeline is most of the time of a texture analysis. All arrays live in the module's memory at byte
// offsets the caller chooses; rows are `stride` floats apart, stride a multiple of 16, so every loop runs
// whole vectors and a pixel's arithmetic never depends on where its tile starts (tiles stay bit-exact).
// Borders follow OpenCV's BORDER_REFLECT at every stage (fedcba|abcdef|fedcba), as sepFilter2D does.

/** OpenCV's borderInterpolate for BORDER_REFLECT, for any n >= 1. */
function reflect(p: i32, n: i32): i32 {
  if (n == 1) return 0;
  while (p < 0 || p >= n) p = p < 0 ? -p - 1 : 2 * n - p - 1;
  return p;
}

/**
 * Correlation of each row with kernel k (klen taps, centre klen/2): dst[x] = sum_j k[j] src[x + j - r].
 * `line` is scratch for one reflected row of stride + 2r + 16 floats. Sixteen pixels at a time in four
 * independent sums, so the additions overlap instead of waiting for each other.
 */
export function rowFilter(src: usize, dst: usize, width: i32, height: i32, stride: i32, k: usize, klen: i32, line: usize): void {
  const r = klen >> 1;
  const padded = stride + 2 * r + 16;
  for (let y = 0; y < height; y++) {
    const row = src + <usize>(y * stride) * 4;
    for (let j = 0; j < r; j++) store<f32>(line + <usize>j * 4, load<f32>(row + <usize>reflect(j - r, width) * 4));
    memory.copy(line + <usize>r * 4, row, <usize>width * 4);
    for (let j = r + width; j < padded; j++) {
      const x = j - r;
      store<f32>(line + <usize>j * 4, x < width + r ? load<f32>(row + <usize>reflect(x, width) * 4) : 0);
    }
    const out = dst + <usize>(y * stride) * 4;
    for (let x = 0; x < stride; x += 16) {
      let a0 = f32x4.splat(0), a1 = a0, a2 = a0, a3 = a0;
      const base = line + <usize>x * 4;
      for (let j = 0; j < klen; j++) {
        const kj = v128.load32_splat(k + <usize>j * 4), at = base + <usize>j * 4;
        a0 = f32x4.add(a0, f32x4.mul(kj, v128.load(at)));
        a1 = f32x4.add(a1, f32x4.mul(kj, v128.load(at, 16)));
        a2 = f32x4.add(a2, f32x4.mul(kj, v128.load(at, 32)));
        a3 = f32x4.add(a3, f32x4.mul(kj, v128.load(at, 48)));
      }
      const to = out + <usize>x * 4;
      v128.store(to, a0); v128.store(to, a1, 16); v128.store(to, a2, 32); v128.store(to, a3, 48);
    }
  }
}

/**
 * Correlation of each column with kernel k: dst[y] = sum_j k[j] src[reflect(y + j - r)]. `rows` is
 * scratch for klen row offsets. Sixteen pixels of a row at a time, as rowFilter.
 */
export function columnFilter(src: usize, dst: usize, height: i32, stride: i32, k: usize, klen: i32, rows: usize): void {
  const r = klen >> 1;
  for (let y = 0; y < height; y++) {
    for (let j = 0; j < klen; j++) store<usize>(rows + <usize>j * 4, src + <usize>(reflect(y + j - r, height) * stride) * 4);
    const out = dst + <usize>(y * stride) * 4;
    for (let x = 0; x < stride; x += 16) {
      let a0 = f32x4.splat(0), a1 = a0, a2 = a0, a3 = a0;
      const off = <usize>x * 4;
      for (let j = 0; j < klen; j++) {
        const kj = v128.load32_splat(k + <usize>j * 4), at = load<usize>(rows + <usize>j * 4) + off;
        a0 = f32x4.add(a0, f32x4.mul(kj, v128.load(at)));
        a1 = f32x4.add(a1, f32x4.mul(kj, v128.load(at, 16)));
        a2 = f32x4.add(a2, f32x4.mul(kj, v128.load(at, 32)));
        a3 = f32x4.add(a3, f32x4.mul(kj, v128.load(at, 48)));
      }
      const to = out + off;
      v128.store(to, a0); v128.store(to, a1, 16); v128.store(to, a2, 32); v128.store(to, a3, 48);
    }
  }
}

/** Gradient products: xx = ix ix, xy = ix iy, yy = iy iy (n a multiple of 16). */
export function products(ix: usize, iy: usize, xx: usize, xy: usize, yy: usize, n: i32): void {
  for (let i = 0; i < n; i += 4) {
    const o = <usize>i * 4;
    const a = v128.load(ix + o), b = v128.load(iy + o);
    v128.store(xx + o, f32x4.mul(a, a));
    v128.store(xy + o, f32x4.mul(a, b));
    v128.store(yy + o, f32x4.mul(b, b));
  }
}

// Largest float32 not above pi/2, and the float32 nearest pi and pi/2 (the angle fold of fieldFromTensor.ts).
const HALF_PI_F32: f32 = 1.5707962513;
const PI_F32: f32 = 3.1415927410;
const HALF_PI_ROUND: f32 = 1.5707963705;

/**
 * Field pixels from the tensor: theta = 1/2 atan2(2 Jxy, Jyy - Jxx) folded into (-pi/2, pi/2], coherency
 * sqrt((Jyy - Jxx)^2 + 4 Jxy^2) / (Jxx + Jyy) clipped to 1, texture strength Jxx + Jyy and (cos 2 theta, sin 2 theta).
 * atan2 is the Abramowitz & Stegun 4.4.47 polynomial, branch-free, with the signs of zeros kept as
 * Math.atan2 keeps them.
 */
export function fieldPixels(jxx: usize, jxy: usize, jyy: usize, angle: usize, confidence: usize, strength: usize, cos2: usize, sin2: usize, n: i32): void {
  const zero = f32x4.splat(0), one = f32x4.splat(1), two = f32x4.splat(2), half = f32x4.splat(0.5);
  const signBit = i32x4.splat(0x80000000);
  const halfPi = f32x4.splat(HALF_PI_ROUND), pi = f32x4.splat(PI_F32), halfPiF = f32x4.splat(HALF_PI_F32);
  const c1 = f32x4.splat(0.999866), c3 = f32x4.splat(-0.3302995), c5 = f32x4.splat(0.180141), c7 = f32x4.splat(-0.085133), c9 = f32x4.splat(0.0208351);
  for (let i = 0; i < n; i += 4) {
    const o = <usize>i * 4;
    const a = v128.load(jxx + o), b2 = f32x4.mul(two, v128.load(jxy + o)), c = v128.load(jyy + o);
    const e = f32x4.add(a, c), d = f32x4.sub(c, a);
    const ax = f32x4.abs(d), ay = f32x4.abs(b2);
    const big = f32x4.max(ax, ay);
    const z = v128.bitselect(f32x4.div(f32x4.min(ax, ay), big), zero, f32x4.gt(big, zero));
    const z2 = f32x4.mul(z, z);
    // hypot(d, 2 Jxy) as big sqrt(1 + z^2): squares of tiny or huge tensors neither underflow nor overflow.
    const root = f32x4.mul(big, f32x4.sqrt(f32x4.add(one, z2)));
    v128.store(strength + o, e);
    const live = f32x4.gt(root, zero);
    const inv = f32x4.div(one, root);
    v128.store(cos2 + o, v128.bitselect(f32x4.mul(d, inv), one, live));
    v128.store(sin2 + o, v128.bitselect(f32x4.mul(b2, inv), zero, live));
    let r = f32x4.mul(z, f32x4.add(c1, f32x4.mul(z2, f32x4.add(c3, f32x4.mul(z2, f32x4.add(c5, f32x4.mul(z2, f32x4.add(c7, f32x4.mul(z2, c9)))))))));
    r = v128.bitselect(f32x4.sub(halfPi, r), r, f32x4.gt(ay, ax));
    r = v128.bitselect(f32x4.sub(pi, r), r, i32x4.ne(v128.and(d, signBit), i32x4.splat(0)));
    r = v128.xor(r, v128.and(b2, signBit));
    const t = f32x4.mul(half, r);
    const folded = v128.bitselect(f32x4.add(t, pi), t, f32x4.le(t, f32x4.neg(halfPi)));
    v128.store(angle + o, f32x4.min(halfPiF, folded));
    v128.store(confidence + o, v128.bitselect(f32x4.min(one, f32x4.div(root, e)), zero, f32x4.gt(e, zero)));
  }
}
