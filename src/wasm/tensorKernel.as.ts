// AssemblyScript source of the structure tensor kernel (compiled by `npm run wasm` into tensorKernel.wasm.ts).
// Plain WebAssembly SIMD, four float32 pixels per instruction: the opencv.js build has no SIMD, and this
// pipeline is most of the time of a texture analysis. All arrays live in the module's memory at byte
// offsets the caller chooses; rows are `stride` floats apart, stride a multiple of 16, so every loop runs
// whole vectors and a pixel's arithmetic never depends on where its row or tile starts (tiles stay bit-exact).
// Borders follow OpenCV's BORDER_REFLECT at every stage (fedcba|abcdef|fedcba), as sepFilter2D does.
//
// The image streams through row by row (src/orientation/tensorStream.ts drives it): each input row is
// filtered along x into two rings of rows (derivative and smoothing kernels), each gradient row is made from
// those rings down the columns, its three products filtered along x into three more rings, and each output
// row is their Gaussian down the columns, turned at once into the field's pixels. The rings hold a kernel's
// height of rows, so everything stays in the processor's caches whatever the image's height.
//
// Kernels are symmetric (Gaussians) or antisymmetric (their derivatives, and Sobel's [-1 0 1]) about their
// centre: taps j and klen-1-j share one multiplication, k[j] (a + b) or k[j] (a - b), summed from the outside
// in after the centre tap.

/** OpenCV's borderInterpolate for BORDER_REFLECT, for any n >= 1. */
function reflect(p: i32, n: i32): i32 {
  if (n == 1) return 0;
  while (p < 0 || p >= n) p = p < 0 ? -p - 1 : 2 * n - p - 1;
  return p;
}

/**
 * Fills the r floats before and after a row of `width` floats held at line + 4 r with its reflection, and
 * zeros after that up to `padded` floats (so the last vectors read defined values).
 */
export function padLine(line: usize, width: i32, r: i32, padded: i32): void {
  const row = line + <usize>r * 4;
  for (let j = 0; j < r; j++) store<f32>(line + <usize>j * 4, load<f32>(row + <usize>reflect(j - r, width) * 4));
  for (let j = r + width; j < padded; j++) {
    const x = j - r;
    store<f32>(line + <usize>j * 4, x < width + r ? load<f32>(row + <usize>reflect(x, width) * 4) : 0);
  }
}

/**
 * Correlation of a padded line with kernel k (klen taps, centre r = klen/2): dst[x] = sum_j k[j] line[x + j]
 * for x < stride, with k symmetric (sym = 1) or antisymmetric (sym = -1, centre tap 0). Sixteen pixels at a
 * time in four independent sums. Inlined with `sym` a constant, so each use is a loop without a branch.
 */
// @ts-ignore: decorator
@inline
function rowPassOf(line: usize, dst: usize, stride: i32, k: usize, klen: i32, sym: i32): void {
  const r = klen >> 1;
  const kc = v128.load32_splat(k + <usize>r * 4);
  for (let x = 0; x < stride; x += 16) {
    const base = line + <usize>x * 4, mid = base + <usize>r * 4;
    let a0 = f32x4.splat(0), a1 = a0, a2 = a0, a3 = a0;
    if (sym > 0) {
      a0 = f32x4.mul(kc, v128.load(mid)); a1 = f32x4.mul(kc, v128.load(mid, 16));
      a2 = f32x4.mul(kc, v128.load(mid, 32)); a3 = f32x4.mul(kc, v128.load(mid, 48));
    }
    for (let j = 0; j < r; j++) {
      const kj = v128.load32_splat(k + <usize>j * 4), lo = base + <usize>j * 4, hi = base + <usize>(2 * r - j) * 4;
      if (sym > 0) {
        a0 = f32x4.add(a0, f32x4.mul(kj, f32x4.add(v128.load(lo), v128.load(hi))));
        a1 = f32x4.add(a1, f32x4.mul(kj, f32x4.add(v128.load(lo, 16), v128.load(hi, 16))));
        a2 = f32x4.add(a2, f32x4.mul(kj, f32x4.add(v128.load(lo, 32), v128.load(hi, 32))));
        a3 = f32x4.add(a3, f32x4.mul(kj, f32x4.add(v128.load(lo, 48), v128.load(hi, 48))));
      } else {
        a0 = f32x4.add(a0, f32x4.mul(kj, f32x4.sub(v128.load(lo), v128.load(hi))));
        a1 = f32x4.add(a1, f32x4.mul(kj, f32x4.sub(v128.load(lo, 16), v128.load(hi, 16))));
        a2 = f32x4.add(a2, f32x4.mul(kj, f32x4.sub(v128.load(lo, 32), v128.load(hi, 32))));
        a3 = f32x4.add(a3, f32x4.mul(kj, f32x4.sub(v128.load(lo, 48), v128.load(hi, 48))));
      }
    }
    const to = dst + <usize>x * 4;
    v128.store(to, a0); v128.store(to, a1, 16); v128.store(to, a2, 32); v128.store(to, a3, 48);
  }
}

/** rowPassOf for any kernel (sym 1 symmetric, -1 antisymmetric). */
export function rowPass(line: usize, dst: usize, stride: i32, k: usize, klen: i32, sym: i32): void {
  if (sym > 0) rowPassOf(line, dst, stride, k, klen, 1);
  else rowPassOf(line, dst, stride, k, klen, -1);
}

/**
 * Correlation down the columns: dst[x] = sum_j k[j] row_j[x] for x < stride, the rows given as a table of klen
 * row addresses (reflected at the image's top and bottom by the caller), folded as rowPassOf and sixteen pixels
 * at a time.
 */
// @ts-ignore: decorator
@inline
function columnPassOf(rows: usize, dst: usize, stride: i32, k: usize, klen: i32, sym: i32): void {
  const r = klen >> 1;
  const kc = v128.load32_splat(k + <usize>r * 4), centre = load<usize>(rows + <usize>r * 4);
  for (let x = 0; x < stride; x += 16) {
    const off = <usize>x * 4;
    let a0 = f32x4.splat(0), a1 = a0, a2 = a0, a3 = a0;
    if (sym > 0) {
      const mid = centre + off;
      a0 = f32x4.mul(kc, v128.load(mid)); a1 = f32x4.mul(kc, v128.load(mid, 16));
      a2 = f32x4.mul(kc, v128.load(mid, 32)); a3 = f32x4.mul(kc, v128.load(mid, 48));
    }
    for (let j = 0; j < r; j++) {
      const kj = v128.load32_splat(k + <usize>j * 4);
      const lo = load<usize>(rows + <usize>j * 4) + off, hi = load<usize>(rows + <usize>(klen - 1 - j) * 4) + off;
      if (sym > 0) {
        a0 = f32x4.add(a0, f32x4.mul(kj, f32x4.add(v128.load(lo), v128.load(hi))));
        a1 = f32x4.add(a1, f32x4.mul(kj, f32x4.add(v128.load(lo, 16), v128.load(hi, 16))));
        a2 = f32x4.add(a2, f32x4.mul(kj, f32x4.add(v128.load(lo, 32), v128.load(hi, 32))));
        a3 = f32x4.add(a3, f32x4.mul(kj, f32x4.add(v128.load(lo, 48), v128.load(hi, 48))));
      } else {
        a0 = f32x4.add(a0, f32x4.mul(kj, f32x4.sub(v128.load(lo), v128.load(hi))));
        a1 = f32x4.add(a1, f32x4.mul(kj, f32x4.sub(v128.load(lo, 16), v128.load(hi, 16))));
        a2 = f32x4.add(a2, f32x4.mul(kj, f32x4.sub(v128.load(lo, 32), v128.load(hi, 32))));
        a3 = f32x4.add(a3, f32x4.mul(kj, f32x4.sub(v128.load(lo, 48), v128.load(hi, 48))));
      }
    }
    const to = dst + off;
    v128.store(to, a0); v128.store(to, a1, 16); v128.store(to, a2, 32); v128.store(to, a3, 48);
  }
}

/**
 * One input row: pads the row the caller wrote at line + 4 r (r = klen/2) and filters it along x with the
 * derivative kernel kd (antisymmetric) into rowD and with the smoothing kernel ks (symmetric) into rowS.
 * kd and ks have the same length (both 2 r + 1: Gaussian pairs of one sigma, or Sobel's). Returns the row's
 * largest |value|: NaN or infinity when the row holds a value that is not finite (the caller then starts
 * again with those pixels filled).
 */
export function inputRow(line: usize, width: i32, stride: i32, kd: usize, ks: usize, klen: i32, rowD: usize, rowS: usize): f32 {
  const r = klen >> 1;
  const row = line + <usize>r * 4;
  let m = f32x4.splat(0);
  let x = 0;
  for (; x + 4 <= width; x += 4) m = f32x4.max(m, f32x4.abs(v128.load(row + <usize>x * 4)));
  let most = f32x4.extract_lane(m, 0);
  most = max(most, f32x4.extract_lane(m, 1)); most = max(most, f32x4.extract_lane(m, 2)); most = max(most, f32x4.extract_lane(m, 3));
  for (; x < width; x++) most = max(most, abs(load<f32>(row + <usize>x * 4)));
  padLine(line, width, r, stride + 2 * r + 16);
  rowPassOf(line, rowD, stride, kd, klen, -1);
  rowPassOf(line, rowS, stride, ks, klen, 1);
  return most;
}

/**
 * One gradient row and its products: Ix = ks down the columns of the rows filtered by kd (table rowsD) into
 * the scratch row ix, Iy = kd down the columns of the rows filtered by ks (table rowsS) into iy; xx = Ix Ix,
 * xy = Ix Iy, yy = Iy Iy written into three lines at float rg (rg = kglen/2), padded, and filtered along x by
 * the integration Gaussian kg into the rows dxx, dxy, dyy.
 */
export function gradientRow(
  rowsD: usize, rowsS: usize, kd: usize, ks: usize, klen: i32, width: i32, stride: i32, ix: usize, iy: usize,
  lxx: usize, lxy: usize, lyy: usize, kg: usize, kglen: i32, dxx: usize, dxy: usize, dyy: usize,
): void {
  columnPassOf(rowsD, ix, stride, ks, klen, 1);
  columnPassOf(rowsS, iy, stride, kd, klen, -1);
  const rg = kglen >> 1;
  const at = <usize>rg * 4;
  for (let x = 0; x < stride; x += 4) {
    const off = <usize>x * 4;
    const a = v128.load(ix + off), b = v128.load(iy + off);
    v128.store(lxx + at + off, f32x4.mul(a, a));
    v128.store(lxy + at + off, f32x4.mul(a, b));
    v128.store(lyy + at + off, f32x4.mul(b, b));
  }
  const padded = stride + 2 * rg + 16;
  padLine(lxx, width, rg, padded);
  padLine(lxy, width, rg, padded);
  padLine(lyy, width, rg, padded);
  rowPassOf(lxx, dxx, stride, kg, kglen, 1);
  rowPassOf(lxy, dxy, stride, kg, kglen, 1);
  rowPassOf(lyy, dyy, stride, kg, kglen, 1);
}

// Largest float32 not above pi/2, and the float32 nearest pi and pi/2 (the angle fold of fieldFromTensor.ts).
const HALF_PI_F32: f32 = 1.5707962513;
const PI_F32: f32 = 3.1415927410;
const HALF_PI_ROUND: f32 = 1.5707963705;

/**
 * One output row: the integration Gaussian kg down the columns of the three product rings (tables rowsXX,
 * rowsXY, rowsYY) gives Jxx, Jxy, Jyy in out0, out1, out2. With lean = 1 they are then turned, in place, into
 * the field's pixels (fieldFromTensor.ts gives the formulas): out0 texture strength Jxx + Jyy, out1 coherency
 * sqrt((Jyy - Jxx)^2 + 4 Jxy^2) / (Jxx + Jyy) clipped to 1 (0 where the strength is 0), and (out2, out3) =
 * (cos 2 theta, sin 2 theta) = (Jyy - Jxx, 2 Jxy) / root, (1, 0) where the root is 0. The root is
 * big sqrt(1 + z^2) (big the larger of |Jyy - Jxx| and |2 Jxy|, z the smaller over the larger), so squares of
 * tiny or huge tensors neither underflow nor overflow.
 */
export function outputRow(rowsXX: usize, rowsXY: usize, rowsYY: usize, kg: usize, kglen: i32, stride: i32, lean: i32, out0: usize, out1: usize, out2: usize, out3: usize): void {
  columnPassOf(rowsXX, out0, stride, kg, kglen, 1);
  columnPassOf(rowsXY, out1, stride, kg, kglen, 1);
  columnPassOf(rowsYY, out2, stride, kg, kglen, 1);
  if (!lean) return;
  const zero = f32x4.splat(0), one = f32x4.splat(1), two = f32x4.splat(2);
  for (let x = 0; x < stride; x += 4) {
    const o = <usize>x * 4;
    const a = v128.load(out0 + o), b2 = f32x4.mul(two, v128.load(out1 + o)), c = v128.load(out2 + o);
    const e = f32x4.add(a, c), d = f32x4.sub(c, a);
    const ax = f32x4.abs(d), ay = f32x4.abs(b2);
    const big = f32x4.max(ax, ay);
    const z = v128.bitselect(f32x4.div(f32x4.min(ax, ay), big), zero, f32x4.gt(big, zero));
    const root = f32x4.mul(big, f32x4.sqrt(f32x4.add(one, f32x4.mul(z, z))));
    const live = f32x4.gt(root, zero);
    const inv = f32x4.div(one, root);
    v128.store(out0 + o, e);
    v128.store(out1 + o, v128.bitselect(f32x4.min(one, f32x4.div(root, e)), zero, f32x4.gt(e, zero)));
    v128.store(out2 + o, v128.bitselect(f32x4.mul(d, inv), one, live));
    v128.store(out3 + o, v128.bitselect(f32x4.mul(b2, inv), zero, live));
  }
}

/**
 * outputRow on `count` windows of 16 pixels only, starting at the pixels listed (i32) at `xs`: for pixels the
 * caller reads from a row and no more. Each pixel goes through the same instructions as in outputRow (its lane's
 * arithmetic does not depend on where its vector starts), so a window's pixels equal the whole row's to the bit.
 * `tables` has room for 3 kglen addresses, the rows' tables shifted to each window in turn. A window must end
 * within the rows' stride.
 */
export function outputWindows(rowsXX: usize, rowsXY: usize, rowsYY: usize, kg: usize, kglen: i32, lean: i32, xs: usize, count: i32, tables: usize,
  out0: usize, out1: usize, out2: usize, out3: usize): void {
  const tXX = tables, tXY = tables + <usize>kglen * 4, tYY = tables + <usize>kglen * 8;
  for (let i = 0; i < count; i++) {
    const shift = <usize>load<i32>(xs + <usize>i * 4) * 4;
    for (let t = 0; t < kglen; t++) {
      const at = <usize>t * 4;
      store<u32>(tXX + at, load<u32>(rowsXX + at) + <u32>shift);
      store<u32>(tXY + at, load<u32>(rowsXY + at) + <u32>shift);
      store<u32>(tYY + at, load<u32>(rowsYY + at) + <u32>shift);
    }
    outputRow(tXX, tXY, tYY, kg, kglen, 16, lean, out0 + shift, out1 + shift, out2 + shift, out3 + shift);
  }
}

/**
 * Orientation from the doubled-angle components (x, y) = (cos 2 theta, sin 2 theta) (or any positive multiple):
 * theta = 1/2 atan2(y, x) folded into (-pi/2, pi/2], 0 where both are 0. atan2 is the Abramowitz & Stegun 4.4.47 polynomial,
 * branch-free, with the signs of zeros kept as Math.atan2 keeps them. n a multiple of 4.
 */
export function angles(vx: usize, vy: usize, angle: usize, n: i32): void {
  for (let i = 0; i < n; i += 4) {
    const o = <usize>i * 4;
    v128.store(angle + o, angle4(v128.load(vx + o), v128.load(vy + o)));
  }
}

/** The angles of four pixels from their doubled-angle components (d, b2): the body of `angles`. */
// @ts-ignore: decorator
@inline
function angle4(d: v128, b2: v128): v128 {
  const zero = f32x4.splat(0), half = f32x4.splat(0.5);
  const signBit = i32x4.splat(0x80000000);
  const halfPi = f32x4.splat(HALF_PI_ROUND), pi = f32x4.splat(PI_F32), halfPiF = f32x4.splat(HALF_PI_F32);
  const c1 = f32x4.splat(0.999866), c3 = f32x4.splat(-0.3302995), c5 = f32x4.splat(0.180141), c7 = f32x4.splat(-0.085133), c9 = f32x4.splat(0.0208351);
  const ax = f32x4.abs(d), ay = f32x4.abs(b2);
  const big = f32x4.max(ax, ay);
  const z = v128.bitselect(f32x4.div(f32x4.min(ax, ay), big), zero, f32x4.gt(big, zero));
  const z2 = f32x4.mul(z, z);
  let r = f32x4.mul(z, f32x4.add(c1, f32x4.mul(z2, f32x4.add(c3, f32x4.mul(z2, f32x4.add(c5, f32x4.mul(z2, f32x4.add(c7, f32x4.mul(z2, c9)))))))));
  r = v128.bitselect(f32x4.sub(halfPi, r), r, f32x4.gt(ay, ax));
  r = v128.bitselect(f32x4.sub(pi, r), r, i32x4.ne(v128.and(d, signBit), i32x4.splat(0)));
  r = v128.xor(r, v128.and(b2, signBit));
  const t = f32x4.mul(half, r);
  const folded = v128.bitselect(f32x4.add(t, pi), t, f32x4.le(t, f32x4.neg(halfPi)));
  return f32x4.min(halfPiF, folded);
}

/**
 * The orientation colour picture's pixels (src/report/colourMap.ts, orientationRgba, little-endian words) of
 * `n` pixels (a multiple of 4) straight from cos 2 theta and sin 2 theta: each angle as `angles` makes it, then
 * the colour table's word (`table`, `entries` u32 words of R | G << 8 | B << 16) at k = floor(angle * scale)
 * (reduced modulo entries when outside the table), and the opacity round-half-up of alphaMax x the coherency
 * clamped to [0, 1] (NaN as 0) in the top byte; masked pixels (mask byte 0) are 0, and an angle that is not a
 * number gets no colour, only its opacity. The same words as
 * orientationRgba of the angle layer, without making it.
 */
export function orientationWords(vx: usize, vy: usize, coherency: usize, mask: usize, n: i32, table: usize, entries: i32, scale: f64, alphaMax: f64, out: usize): void {
  const sc = f64x2.splat(scale), am = f64x2.splat(alphaMax), halfV = f64x2.splat(0.5);
  const zero = f32x4.splat(0), one = f32x4.splat(1), nV = i32x4.splat(entries), izero = i32x4.splat(0);
  for (let i = 0; i < n; i += 4) {
    const o = <usize>i * 4;
    const a = angle4(v128.load(vx + o), v128.load(vy + o));
    // k = floor(angle x scale): angles lie in [-pi/2, pi/2], so k lies within one table length of it, and the
    // remainder's only work is adding a length to a negative k.
    const klo = f64x2.floor(f64x2.mul(f64x2.promote_low_f32x4(a), sc));
    const khi = f64x2.floor(f64x2.mul(f64x2.promote_low_f32x4(i32x4.shuffle(a, a, 2, 3, 0, 1)), sc));
    let k = i32x4.shuffle(i32x4.trunc_sat_f64x2_s_zero(klo), i32x4.trunc_sat_f64x2_s_zero(khi), 0, 1, 4, 5);
    k = i32x4.add(k, v128.and(i32x4.lt_s(k, izero), nV));
    // Opacity: the coherency clamped to [0, 1] (NaN as 0), times alphaMax, rounded half up.
    const c = f32x4.min(v128.bitselect(v128.load(coherency + o), zero, f32x4.gt(v128.load(coherency + o), zero)), one);
    const alo = f64x2.add(f64x2.mul(f64x2.promote_low_f32x4(c), am), halfV);
    const ahi = f64x2.add(f64x2.mul(f64x2.promote_low_f32x4(i32x4.shuffle(c, c, 2, 3, 0, 1)), am), halfV);
    const alpha = i32x4.shl(i32x4.shuffle(i32x4.trunc_sat_f64x2_s_zero(alo), i32x4.trunc_sat_f64x2_s_zero(ahi), 0, 1, 4, 5), 24);
    let rgb = i32x4.splat(load<u32>(table + (<usize>i32x4.extract_lane(k, 0)) * 4));
    rgb = i32x4.replace_lane(rgb, 1, load<u32>(table + (<usize>i32x4.extract_lane(k, 1)) * 4));
    rgb = i32x4.replace_lane(rgb, 2, load<u32>(table + (<usize>i32x4.extract_lane(k, 2)) * 4));
    rgb = i32x4.replace_lane(rgb, 3, load<u32>(table + (<usize>i32x4.extract_lane(k, 3)) * 4));
    // An angle that is not a number has no colour, only its opacity; masked pixels are clear.
    rgb = v128.andnot(rgb, f32x4.ne(a, a));
    const shown = i32x4.ne(i32x4.extend_low_i16x8_u(i16x8.extend_low_i8x16_u(v128.load32_zero(mask + <usize>i))), izero);
    v128.store(out + o, v128.and(v128.or(rgb, alpha), shown));
  }
}

/**
 * The field's mask: mask[i] = 1 where strength[i] > floor and coherency[i] >= least, else 0 (NaN gives 0), for
 * i < n; returns how many are 1. Sixteen pixels at a time. The caller rounds its thresholds to float32 so the
 * comparisons are the ones it means (floor down, least up).
 */
export function maskPixels(strength: usize, coherency: usize, n: i32, floor: f32, least: f32, mask: usize): i32 {
  const f = f32x4.splat(floor), l = f32x4.splat(least), one = i8x16.splat(1);
  let kept = 0, i = 0;
  for (; i + 16 <= n; i += 16) {
    const o = <usize>i * 4;
    const m0 = v128.and(f32x4.gt(v128.load(strength + o), f), f32x4.ge(v128.load(coherency + o), l));
    const m1 = v128.and(f32x4.gt(v128.load(strength + o, 16), f), f32x4.ge(v128.load(coherency + o, 16), l));
    const m2 = v128.and(f32x4.gt(v128.load(strength + o, 32), f), f32x4.ge(v128.load(coherency + o, 32), l));
    const m3 = v128.and(f32x4.gt(v128.load(strength + o, 48), f), f32x4.ge(v128.load(coherency + o, 48), l));
    const bytes = i8x16.narrow_i16x8_s(i16x8.narrow_i32x4_s(m0, m1), i16x8.narrow_i32x4_s(m2, m3));
    v128.store(mask + <usize>i, v128.and(bytes, one));
    kept += <i32>popcnt<u32>(i8x16.bitmask(bytes));
  }
  for (; i < n; i++) {
    const ok: i32 = load<f32>(strength + <usize>i * 4) > floor && load<f32>(coherency + <usize>i * 4) >= least ? 1 : 0;
    store<u8>(mask + <usize>i, ok);
    kept += ok;
  }
  return kept;
}

/**
 * Rows of the one-group block sums of the order statistics (src/order/accumulate.ts, accumulateBlocks): for
 * each of `rows` rows of `width` pixels (arrays `width` apart) and each block of B pixels of a row (the last
 * may be shorter), over the pixels with mask 1 (and region 1, when region is not 0), the number of them and
 * the sum of their coherency go to tally[0], tally[1]; over those whose weight w (weights[i], or 1 when
 * weights is 0) is above 0, the sums of w, w c2, w s2 and their number are added to sw, sc, ss (float64) and
 * sn (uint32) at the block's column. Products and sums in float64 (as JavaScript makes them), two pixels per
 * instruction; a block's row is summed on its own, then added.
 */
export function blockRows(
  mask: usize, region: usize, weights: usize, coherency: usize, c2: usize, s2: usize, width: i32, rows: i32, B: i32,
  sw: usize, sc: usize, ss: usize, sn: usize, tally: usize,
): void {
  const zero64 = f64x2.splat(0), one = f32x4.splat(1);
  let usable: i32 = 0;
  let confSum: f64 = 0;
  for (let y = 0; y < rows; y++) {
    const row = <usize>(y * width);
    let bx: usize = 0;
    for (let x0 = 0; x0 < width; x0 += B, bx++) {
      const end = min(width, x0 + B);
      let w = zero64, wc = zero64, ws = zero64, cf = zero64;
      let n = i32x4.splat(0), u = i32x4.splat(0);
      let x = x0;
      for (; x + 4 <= end; x += 4) {
        const i = row + <usize>x;
        let m = i32x4.ne(i32x4.extend_low_i16x8_u(i16x8.extend_low_i8x16_u(v128.load32_zero(mask + i))), i32x4.splat(0));
        if (region) m = v128.and(m, i32x4.ne(i32x4.extend_low_i16x8_u(i16x8.extend_low_i8x16_u(v128.load32_zero(region + i))), i32x4.splat(0)));
        const conf = v128.and(v128.load(coherency + i * 4), m);
        const wt = weights ? v128.load(weights + i * 4) : one;
        const pos = v128.and(m, f32x4.gt(wt, f32x4.splat(0)));
        const wv = v128.and(wt, pos);
        // Pixels left out contribute +0: their weight, and their components (which need not be finite), are cleared.
        const c = v128.and(v128.load(c2 + i * 4), pos), s = v128.and(v128.load(s2 + i * 4), pos);
        u = i32x4.sub(u, m);
        n = i32x4.sub(n, pos);
        cf = f64x2.add(cf, f64x2.add(f64x2.promote_low_f32x4(conf), f64x2.promote_low_f32x4(i32x4.shuffle(conf, conf, 2, 3, 0, 1))));
        const wl = f64x2.promote_low_f32x4(wv), wh = f64x2.promote_low_f32x4(i32x4.shuffle(wv, wv, 2, 3, 0, 1));
        w = f64x2.add(w, f64x2.add(wl, wh));
        wc = f64x2.add(wc, f64x2.add(f64x2.mul(wl, f64x2.promote_low_f32x4(c)), f64x2.mul(wh, f64x2.promote_low_f32x4(i32x4.shuffle(c, c, 2, 3, 0, 1)))));
        ws = f64x2.add(ws, f64x2.add(f64x2.mul(wl, f64x2.promote_low_f32x4(s)), f64x2.mul(wh, f64x2.promote_low_f32x4(i32x4.shuffle(s, s, 2, 3, 0, 1)))));
      }
      let sW = f64x2.extract_lane(w, 0) + f64x2.extract_lane(w, 1);
      let sC = f64x2.extract_lane(wc, 0) + f64x2.extract_lane(wc, 1);
      let sS = f64x2.extract_lane(ws, 0) + f64x2.extract_lane(ws, 1);
      let sN = i32x4.extract_lane(n, 0) + i32x4.extract_lane(n, 1) + i32x4.extract_lane(n, 2) + i32x4.extract_lane(n, 3);
      usable += i32x4.extract_lane(u, 0) + i32x4.extract_lane(u, 1) + i32x4.extract_lane(u, 2) + i32x4.extract_lane(u, 3);
      confSum += f64x2.extract_lane(cf, 0) + f64x2.extract_lane(cf, 1);
      for (; x < end; x++) {
        const i = row + <usize>x;
        if (!load<u8>(mask + i) || (region && !load<u8>(region + i))) continue;
        usable++;
        confSum += <f64>load<f32>(coherency + i * 4);
        const wi: f64 = weights ? <f64>load<f32>(weights + i * 4) : 1;
        if (!(wi > 0)) continue;
        sW += wi; sC += wi * <f64>load<f32>(c2 + i * 4); sS += wi * <f64>load<f32>(s2 + i * 4); sN++;
      }
      if (sN > 0) {
        store<f64>(sw + bx * 8, load<f64>(sw + bx * 8) + sW);
        store<f64>(sc + bx * 8, load<f64>(sc + bx * 8) + sC);
        store<f64>(ss + bx * 8, load<f64>(ss + bx * 8) + sS);
        store<u32>(sn + bx * 4, load<u32>(sn + bx * 4) + <u32>sN);
      }
    }
  }
  store<f64>(tally, load<f64>(tally) + <f64>usable);
  store<f64>(tally + 8, load<f64>(tally + 8) + confSum);
}

/**
 * Lagged products of one sampled line for the correlation length (src/order/correlation.ts): for starts
 * b = 0, step, 2 step ... with b + L inside the line and on[b] set, and each lag k = 0..L with on[b + k] set,
 * num[k] += lc[b] lc[b + k] + ls[b] ls[b + k] and cnt[k] += 1 (float64). Two lags per instruction; each num[k]
 * gains its terms in the order of b, as a plain loop adds them, so the sums are the same to the bit.
 */
export function lagProducts(lc: usize, ls: usize, on: usize, len: i32, L: i32, step: i32, num: usize, cnt: usize): void {
  const one = f64x2.splat(1), zero = f64x2.splat(0);
  for (let b = 0; b + L < len; b += step) {
    if (!load<u8>(on + <usize>b)) continue;
    const c0 = f64x2.splat(load<f64>(lc + <usize>b * 8)), s0 = f64x2.splat(load<f64>(ls + <usize>b * 8));
    let k = 0;
    for (; k + 2 <= L + 1; k += 2) {
      const at = <usize>(b + k);
      // Both lags' usable flags as a lane mask.
      const m = i64x2.ne(i64x2.extend_low_i32x4_u(i32x4.extend_low_i16x8_u(i16x8.extend_low_i8x16_u(v128.load16_splat(on + at)))), i64x2.splat(0));
      const t = f64x2.add(f64x2.mul(c0, v128.load(lc + at * 8)), f64x2.mul(s0, v128.load(ls + at * 8)));
      const o = <usize>k * 8;
      v128.store(num + o, f64x2.add(v128.load(num + o), v128.bitselect(t, zero, m)));
      v128.store(cnt + o, f64x2.add(v128.load(cnt + o), v128.bitselect(one, zero, m)));
    }
    for (; k <= L; k++) {
      const at = <usize>(b + k);
      if (!load<u8>(on + at)) continue;
      const o = <usize>k * 8;
      store<f64>(num + o, load<f64>(num + o) + (f64x2.extract_lane(c0, 0) * load<f64>(lc + at * 8) + f64x2.extract_lane(s0, 0) * load<f64>(ls + at * 8)));
      store<f64>(cnt + o, load<f64>(cnt + o) + 1);
    }
  }
}

/** The Paeth predictor (ISO 15948 section 9.4) of left a, above b and upper-left c. */
// @ts-ignore: decorator
@inline
function paeth(a: i32, b: i32, c: i32): i32 {
  const pa = abs(b - c), pb = abs(a - c), pc = abs(a + b - 2 * c);
  return pa <= pb && pa <= pc ? a : pb <= pc ? b : c;
}

/**
 * Reverses one PNG row's filter in place (ISO 15948 section 9.2), as src/image/pngDecode.ts's unfilter: `n`
 * bytes at `row`, the unfiltered row above at `prev`, `bpp` the filter's byte step. False for a filter type the
 * standard does not define. Bytes past the row are never written (the next row's filter byte follows it).
 */
function unfilterRow(type: i32, row: usize, prev: usize, n: i32, bpp: i32): bool {
  if (type === 0) return true;
  if (type === 1) {
    if (bpp === 1) {
      // A running sum of bytes, sixteen at a time: prefix sums within the vector by shifts of 1, 2, 4 and 8
      // lanes, plus the previous vector's last byte in every lane.
      const zero = i8x16.splat(0);
      let carry = zero, i = 0;
      for (; i + 16 <= n; i += 16) {
        let v = v128.load(row + <usize>i);
        v = i8x16.add(v, i8x16.shuffle(zero, v, 0, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26, 27, 28, 29, 30));
        v = i8x16.add(v, i8x16.shuffle(zero, v, 0, 1, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26, 27, 28, 29));
        v = i8x16.add(v, i8x16.shuffle(zero, v, 0, 1, 2, 3, 16, 17, 18, 19, 20, 21, 22, 23, 24, 25, 26, 27));
        v = i8x16.add(v, i8x16.shuffle(zero, v, 0, 1, 2, 3, 4, 5, 6, 7, 16, 17, 18, 19, 20, 21, 22, 23));
        v = i8x16.add(v, carry);
        v128.store(row + <usize>i, v);
        carry = i8x16.shuffle(v, v, 15, 15, 15, 15, 15, 15, 15, 15, 15, 15, 15, 15, 15, 15, 15, 15);
      }
      let a = <i32>i8x16.extract_lane_u(carry, 0);
      for (; i < n; i++) {
        a = (a + <i32>load<u8>(row + <usize>i)) & 0xff;
        store<u8>(row + <usize>i, a);
      }
      return true;
    }
    for (let i = bpp; i < n; i++) store<u8>(row + <usize>i, load<u8>(row + <usize>i) + load<u8>(row + <usize>(i - bpp)));
    return true;
  }
  if (type === 2) {
    let i = 0;
    for (; i + 16 <= n; i += 16) v128.store(row + <usize>i, i8x16.add(v128.load(row + <usize>i), v128.load(prev + <usize>i)));
    for (; i < n; i++) store<u8>(row + <usize>i, load<u8>(row + <usize>i) + load<u8>(prev + <usize>i));
    return true;
  }
  if (type === 3) {
    for (let i = 0; i < n; i++) {
      const left: i32 = i >= bpp ? <i32>load<u8>(row + <usize>(i - bpp)) : 0;
      store<u8>(row + <usize>i, <i32>load<u8>(row + <usize>i) + ((left + <i32>load<u8>(prev + <usize>i)) >> 1));
    }
    return true;
  }
  if (type === 4) {
    const m = min(bpp, n);
    for (let i = 0; i < m; i++) store<u8>(row + <usize>i, load<u8>(row + <usize>i) + load<u8>(prev + <usize>i));
    for (let i = bpp; i < n; i++) {
      const p = paeth(<i32>load<u8>(row + <usize>(i - bpp)), <i32>load<u8>(prev + <usize>i), <i32>load<u8>(prev + <usize>(i - bpp)));
      store<u8>(row + <usize>i, <i32>load<u8>(row + <usize>i) + p);
    }
    return true;
  }
  return false;
}

/**
 * PNG image rows of 8 or 16 bits per sample (not interlaced, no palette) made into float32 planes, as
 * src/image/pngDecode.ts's rowWriter makes them: `rows` rows at `raw`, each a filter-type byte then `rowBytes`
 * bytes, are unfiltered in place (the row above the first at `above`: zeros for the image's first row), and each
 * row's `width` pixels go through `samplePlanes`, `width` floats per row of each plane. Returns -1, or the index
 * of the first row whose filter type is undefined (its pixels and those after it are not written).
 */
export function pngRows(raw: usize, above: usize, rows: i32, rowBytes: i32, sixteen: i32, samples: i32, kind: i32, table: usize, width: i32,
  out0: usize, out1: usize, out2: usize): i32 {
  const bpp = max(1, samples << sixteen);
  let prev = above;
  for (let r = 0; r < rows; r++) {
    const at = raw + <usize>r * <usize>(rowBytes + 1);
    const row = at + 1;
    if (!unfilterRow(<i32>load<u8>(at), row, prev, rowBytes, bpp)) return r;
    prev = row;
    const o = <usize>r * <usize>width * 4;
    samplePlanes(row, width, sixteen, samples, kind, table, out0 + o, out1 + o, out2 + o);
  }
  return -1;
}

/**
 * `n` pixels of `samples` interleaved samples (8 or 16 bits, big-endian) at `src` into float32 planes through
 * `table` (float32 code / (2^depth - 1), 256 or 65536 entries): `kind` 0 grey (the first sample into `out0`),
 * 1 luma (Rec. 709 luma of the first three, in float64 as the TypeScript's lumaOf, into `out0`), 2 colour (the
 * first three into `out0`, `out1`, `out2`).
 */
export function samplePlanes(src: usize, n: i32, sixteen: i32, samples: i32, kind: i32, table: usize, out0: usize, out1: usize, out2: usize): void {
  const step = <usize>max(1, samples << sixteen);
  let j = src;
  if (!sixteen) {
    if (kind === 0) {
      let x = 0;
      if (samples === 1) {
        // code / 255 in float32 division: the table's value for every code (tests/image/png-kernel.test.ts).
        const m = f32x4.splat(255);
        for (; x + 16 <= n; x += 16, j += 16) {
          const v = v128.load(j), lo = i16x8.extend_low_i8x16_u(v), hi = i16x8.extend_high_i8x16_u(v), q = out0 + <usize>x * 4;
          v128.store(q, f32x4.div(f32x4.convert_i32x4_u(i32x4.extend_low_i16x8_u(lo)), m));
          v128.store(q, f32x4.div(f32x4.convert_i32x4_u(i32x4.extend_high_i16x8_u(lo)), m), 16);
          v128.store(q, f32x4.div(f32x4.convert_i32x4_u(i32x4.extend_low_i16x8_u(hi)), m), 32);
          v128.store(q, f32x4.div(f32x4.convert_i32x4_u(i32x4.extend_high_i16x8_u(hi)), m), 48);
        }
      }
      for (; x < n; x++, j += step) store<f32>(out0 + <usize>x * 4, load<f32>(table + (<usize>load<u8>(j) << 2)));
    } else if (kind === 1) {
      for (let x = 0; x < n; x++, j += step) {
        const l = 0.2126 * <f64>load<f32>(table + (<usize>load<u8>(j) << 2)) + 0.7152 * <f64>load<f32>(table + (<usize>load<u8>(j, 1) << 2))
          + 0.0722 * <f64>load<f32>(table + (<usize>load<u8>(j, 2) << 2));
        store<f32>(out0 + <usize>x * 4, <f32>l);
      }
    } else {
      for (let x = 0; x < n; x++, j += step) {
        store<f32>(out0 + <usize>x * 4, load<f32>(table + (<usize>load<u8>(j) << 2)));
        store<f32>(out1 + <usize>x * 4, load<f32>(table + (<usize>load<u8>(j, 1) << 2)));
        store<f32>(out2 + <usize>x * 4, load<f32>(table + (<usize>load<u8>(j, 2) << 2)));
      }
    }
  } else {
    if (kind === 0) {
      for (let x = 0; x < n; x++, j += step) store<f32>(out0 + <usize>x * 4, load<f32>(table + (code16(j) << 2)));
    } else if (kind === 1) {
      for (let x = 0; x < n; x++, j += step) {
        const l = 0.2126 * <f64>load<f32>(table + (code16(j) << 2)) + 0.7152 * <f64>load<f32>(table + (code16(j + 2) << 2))
          + 0.0722 * <f64>load<f32>(table + (code16(j + 4) << 2));
        store<f32>(out0 + <usize>x * 4, <f32>l);
      }
    } else {
      for (let x = 0; x < n; x++, j += step) {
        store<f32>(out0 + <usize>x * 4, load<f32>(table + (code16(j) << 2)));
        store<f32>(out1 + <usize>x * 4, load<f32>(table + (code16(j + 2) << 2)));
        store<f32>(out2 + <usize>x * 4, load<f32>(table + (code16(j + 4) << 2)));
      }
    }
  }
}

/** A big-endian 16-bit sample at `at`. */
// @ts-ignore: decorator
@inline
function code16(at: usize): usize {
  return (<usize>load<u8>(at) << 8) | <usize>load<u8>(at, 1);
}
