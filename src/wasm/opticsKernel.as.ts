// AssemblyScript source of the optical readings' kernel (compiled by `npm run wasm` into opticsKernel.wasm.ts).
// The optical readings' per-pixel loops, a block of pixels at a time: the caller copies a block's image values into
// the module's memory, calls the kernel and copies the block's results out. The angle series (src/optics/fourAngle.ts)
// runs four pixels per WebAssembly SIMD instruction in float32 arithmetic: its readings differ from a float64
// evaluation of the same formulas by a few units in the last place (tests/wasm/optics-kernel.test.ts). The plate
// reading's and the plate pair's colour cells (src/optics/plateReader.ts, platePair.ts) are the same float64 operations
// as the TypeScript's before, and so are the rank selection's counts (src/optics/ranks.ts).
// All arrays are at byte offsets the caller chooses (src/wasm/opticsKernel.ts lays them out); counts of pixels
// need not be multiples of four (the lanes past the end are computed and neither stored as read nor counted).

/** Lane index offsets 0, 1, 2, 3. */
// @ts-ignore: decorator
@inline
function laneIndex(): v128 {
  return i32x4(0, 1, 2, 3);
}

/** Lanes t..t+3 that are below n (all bits set), as a mask. */
// @ts-ignore: decorator
@inline
function validLanes(t: i32, n: i32): v128 {
  return i32x4.lt_s(i32x4.add(i32x4.splat(t), laneIndex()), i32x4.splat(n));
}

/** 48 bytes of static memory where decode4 puts the table offsets of four values (16 bytes per slot 0, 1, 2). */
const DECODE_SCRATCH: usize = memory.data(48, 16);

/**
 * The 65536-entry decode table's values (sRGB to linear, fourAngle.ts's decodeTable) of four stored values: entry
 * round(65535 clamp(v, 0, 1)); NaN where v is NaN. The clamp by pseudo-minimum and pseudo-maximum (a NaN goes to 0;
 * its entry is replaced by the NaN), and the entry floor(65535 c + 0.5) (c + 0.5 >= 0.5: the same as truncation) as
 * the low bits of that float32 plus 2^23 (exact below 2^23); the four offsets go through DECODE_SCRATCH at `slot`
 * and are read one lane at a time.
 */
// @ts-ignore: decorator
@inline
function decode4(table: usize, v: v128, slot: usize): v128 {
  const c = f32x4.pmin(f32x4.splat(1), f32x4.pmax(f32x4.splat(0), v));
  const s = f32x4.floor(f32x4.add(f32x4.mul(c, f32x4.splat(65535)), f32x4.splat(0.5)));
  const at = DECODE_SCRATCH + (slot << 4);
  v128.store(at, i32x4.shl(i32x4.sub(f32x4.add(s, f32x4.splat(8388608)), f32x4.splat(8388608)), 2));
  let out = v128.load32_zero(table + <usize>load<i32>(at));
  out = v128.load32_lane(table + <usize>load<i32>(at, 4), out, 1);
  out = v128.load32_lane(table + <usize>load<i32>(at, 8), out, 2);
  out = v128.load32_lane(table + <usize>load<i32>(at, 12), out, 3);
  return v128.bitselect(out, v, f32x4.eq(v, v));
}

/** Sets clip[t + lane] = 1 for the lanes of `over` that are set; 1 when any is, else 0. */
// @ts-ignore: decorator
@inline
function markClipped(clip: usize, t: i32, over: v128): i32 {
  if (!clip || !v128.any_true(over)) return 0;
  const at = clip + <usize>t;
  if (i32x4.extract_lane(over, 0)) store<u8>(at, 1);
  if (i32x4.extract_lane(over, 1)) store<u8>(at, 1, 1);
  if (i32x4.extract_lane(over, 2)) store<u8>(at, 1, 2);
  if (i32x4.extract_lane(over, 3)) store<u8>(at, 1, 3);
  return 1;
}

/**
 * Linear intensity of n pixels of an RGB image (planes r, g, b) into out: Rec. 709 luminance
 * 0.2126 R + 0.7152 G + 0.0722 B of the linear values (ITU-R BT.709), with table != 0 decoded from sRGB through the
 * 65536-entry table. Pixels with a plane at or above `full` (FULL_SCALE_LEVEL of src/optics/pixels.ts) get
 * clip[t] = 1 (clip != 0). Returns how many groups of four pixels held a clipped one (0: none did).
 */
export function intensityRgb(r: usize, g: usize, b: usize, n: i32, full: f32, table: usize, out: usize, clip: usize): i32 {
  let marked = 0;
  const wr = f32x4.splat(0.2126), wg = f32x4.splat(0.7152), wb = f32x4.splat(0.0722), F = f32x4.splat(full);
  for (let t = 0; t < n; t += 4) {
    const o = <usize>t << 2;
    let vr = v128.load(r + o), vg = v128.load(g + o), vb = v128.load(b + o);
    marked += markClipped(clip, t, v128.and(v128.or(v128.or(f32x4.ge(vr, F), f32x4.ge(vg, F)), f32x4.ge(vb, F)), validLanes(t, n)));
    if (table) { vr = decode4(table, vr, 0); vg = decode4(table, vg, 1); vb = decode4(table, vb, 2); }
    v128.store(out + o, f32x4.add(f32x4.add(f32x4.mul(wr, vr), f32x4.mul(wg, vg)), f32x4.mul(wb, vb)));
  }
  return marked;
}

/** intensityRgb for a grey image: the plane's value, decoded through the table when sRGB (table != 0); p may be out. */
export function intensityGrey(p: usize, n: i32, full: f32, table: usize, out: usize, clip: usize): i32 {
  const F = f32x4.splat(full);
  let marked = 0;
  for (let t = 0; t < n; t += 4) {
    const o = <usize>t << 2, v = v128.load(p + o);
    marked += markClipped(clip, t, v128.and(f32x4.ge(v, F), validLanes(t, n)));
    v128.store(out + o, table ? decode4(table, v, 0) : v);
  }
  return marked;
}

/**
 * atan2(y, x) of four lanes in float32: the octant reduction to t = min / max of |x|, |y|
 * in [0, 1], t > tan(pi/8) mapped to (t - 1) / (t + 1) (plus pi/4), and Cephes' atanf polynomial there (S. L.
 * Moshier, Cephes Math Library, atanf.c: relative error about 2e-7), then the octant undone. x and y must be finite
 * (|x| and |y| then order as numbers: their pseudo-minimum and pseudo-maximum are the minimum and maximum).
 */
// @ts-ignore: decorator
@inline
function atan2x4(y: v128, x: v128): v128 {
  const ax = f32x4.abs(x), ay = f32x4.abs(y);
  const swap = f32x4.gt(ay, ax);
  const most = f32x4.pmax(ax, ay);
  // Both zero: t = 0, so that the result is +-0 or +-pi by the signs of the zeros, as atan2's.
  const t = v128.andnot(f32x4.div(f32x4.pmin(ax, ay), most), f32x4.eq(most, f32x4.splat(0)));
  const big = f32x4.gt(t, f32x4.splat(0.4142135623730950));
  const u = v128.bitselect(f32x4.div(f32x4.sub(t, f32x4.splat(1)), f32x4.add(t, f32x4.splat(1))), t, big);
  const z = f32x4.mul(u, u);
  let p = f32x4.sub(f32x4.mul(f32x4.splat(8.05374449538e-2), z), f32x4.splat(1.38776856032e-1));
  p = f32x4.add(f32x4.mul(p, z), f32x4.splat(1.99777106478e-1));
  p = f32x4.sub(f32x4.mul(p, z), f32x4.splat(3.33329491539e-1));
  let a = f32x4.add(f32x4.mul(f32x4.mul(p, z), u), u);
  a = f32x4.add(a, v128.and(big, f32x4.splat(<f32>(Math.PI / 4))));
  a = v128.bitselect(f32x4.sub(f32x4.splat(<f32>(Math.PI / 2)), a), a, swap);
  a = v128.bitselect(f32x4.sub(f32x4.splat(<f32>Math.PI), a), a, i32x4.lt_s(x, i32x4.splat(0)));
  // The sign of y (negative zero included), as atan2's.
  return v128.or(a, v128.and(y, f32x4.splat(-0.0)));
}

/**
 * The angle series' per-pixel fit for four images (docs/methods.md §6.1): n pixels whose intensities are in
 * i0..i3, dark values in dark and flat-field values in flat (0: none; flatMean their mean), clipped pixels marked
 * in clip. c holds 20 float32s: the fit's pseudo-inverse rows P0, P1, P2 (4 each), then cos 4 alpha and sin 4 alpha
 * of the four angles. With x_k = (I_k - dark) flatMean / (flat - dark): a = P x gives
 * I(alpha) = a0 + a4c cos 4 alpha + a4s sin 4 alpha; theta = 1/4 atan2(-a4s, -a4c) in [0, 90) deg, amplitude
 * 2 sqrt(a4c^2 + a4s^2), residual the root of the summed squared residuals over 4 - 3 degrees of freedom, background
 * a0 - amplitude / 2 (bg != 0), confidence amplitude / (amplitude + 3 residual + 1e-12); cos 2 theta and sin 2 theta
 * from (cos 4 theta, sin 4 theta) = -(a4c, a4s) / (amplitude / 2) by the half-angle formulas. Pixels not read keep 0
 * everywhere but cos2 (1). sums (2 float64s) gain confidence x cos 4 theta and x sin 4 theta over the pixels read;
 * counts (4 int32s) gain the clipped pixels, those with a dark flat field (flat - dark <= 1e-6), those with a value
 * that is not finite, and those with zero amplitude (read, with cos2 NaN: the caller makes cos 2 theta and
 * sin 2 theta of the angle).
 */
export function fitFour(i0: usize, i1: usize, i2: usize, i3: usize, dark: usize, flat: usize, flatMean: f32, clip: usize, n: i32, c: usize,
  angle: usize, amplitude: usize, residual: usize, bg: usize, confidence: usize, cos2: usize, sin2: usize, mask: usize, sums: usize, counts: usize): void {
  const p00 = v128.load32_splat(c), p01 = v128.load32_splat(c, 4), p02 = v128.load32_splat(c, 8), p03 = v128.load32_splat(c, 12);
  const p10 = v128.load32_splat(c, 16), p11 = v128.load32_splat(c, 20), p12 = v128.load32_splat(c, 24), p13 = v128.load32_splat(c, 28);
  const p20 = v128.load32_splat(c, 32), p21 = v128.load32_splat(c, 36), p22 = v128.load32_splat(c, 40), p23 = v128.load32_splat(c, 44);
  const c0 = v128.load32_splat(c, 48), c1 = v128.load32_splat(c, 52), c2 = v128.load32_splat(c, 56), c3 = v128.load32_splat(c, 60);
  const s0 = v128.load32_splat(c, 64), s1 = v128.load32_splat(c, 68), s2 = v128.load32_splat(c, 72), s3 = v128.load32_splat(c, 76);
  const zero = f32x4.splat(0), one = f32x4.splat(1), half = f32x4.splat(0.5), halfPi = f32x4.splat(<f32>(Math.PI / 2)), fm = f32x4.splat(flatMean);
  let sumC0 = f64x2.splat(0), sumC1 = sumC0, sumS0 = sumC0, sumS1 = sumC0;
  let nClipped = i32x4.splat(0), nFlatBad = nClipped, nNonFinite = nClipped, nZero = nClipped;
  for (let t = 0; t < n; t += 4) {
    const o = <usize>t << 2;
    const valid = validLanes(t, n);
    // Clipped: any of the four bytes at clip + t set (as four lanes).
    const cb = i32x4.extend_low_i16x8_u(i16x8.extend_low_i8x16_u(v128.load32_zero(clip + <usize>t)));
    const clipped = v128.and(i32x4.ne(cb, i32x4.splat(0)), valid);
    let open = v128.andnot(valid, clipped);
    const d = dark ? v128.load(dark + o) : zero;
    let f = one;
    if (flat) {
      const fv = f32x4.sub(v128.load(flat + o), d);
      const bad = v128.andnot(open, f32x4.gt(fv, f32x4.splat(1e-6)));
      nFlatBad = i32x4.sub(nFlatBad, bad);
      open = v128.andnot(open, bad);
      f = f32x4.div(fm, fv);
    }
    const x0 = f32x4.mul(f32x4.sub(v128.load(i0 + o), d), f), x1 = f32x4.mul(f32x4.sub(v128.load(i1 + o), d), f);
    const x2 = f32x4.mul(f32x4.sub(v128.load(i2 + o), d), f), x3 = f32x4.mul(f32x4.sub(v128.load(i3 + o), d), f);
    const a0 = f32x4.add(f32x4.add(f32x4.add(f32x4.mul(p00, x0), f32x4.mul(p01, x1)), f32x4.mul(p02, x2)), f32x4.mul(p03, x3));
    const a4c = f32x4.add(f32x4.add(f32x4.add(f32x4.mul(p10, x0), f32x4.mul(p11, x1)), f32x4.mul(p12, x2)), f32x4.mul(p13, x3));
    const a4s = f32x4.add(f32x4.add(f32x4.add(f32x4.mul(p20, x0), f32x4.mul(p21, x1)), f32x4.mul(p22, x2)), f32x4.mul(p23, x3));
    const all = f32x4.add(f32x4.add(a0, a4c), a4s);
    const nonFinite = v128.andnot(open, f32x4.eq(f32x4.sub(all, all), zero));
    nNonFinite = i32x4.sub(nNonFinite, nonFinite);
    const read = v128.andnot(open, nonFinite);
    const r0 = f32x4.sub(x0, f32x4.add(f32x4.add(a0, f32x4.mul(a4c, c0)), f32x4.mul(a4s, s0)));
    const r1 = f32x4.sub(x1, f32x4.add(f32x4.add(a0, f32x4.mul(a4c, c1)), f32x4.mul(a4s, s1)));
    const r2 = f32x4.sub(x2, f32x4.add(f32x4.add(a0, f32x4.mul(a4c, c2)), f32x4.mul(a4s, s2)));
    const r3 = f32x4.sub(x3, f32x4.add(f32x4.add(a0, f32x4.mul(a4c, c3)), f32x4.mul(a4s, s3)));
    const ss = f32x4.add(f32x4.add(f32x4.add(f32x4.mul(r0, r0), f32x4.mul(r1, r1)), f32x4.mul(r2, r2)), f32x4.mul(r3, r3));
    const h = f32x4.sqrt(f32x4.add(f32x4.mul(a4c, a4c), f32x4.mul(a4s, a4s)));
    const amp = f32x4.add(h, h), res = f32x4.sqrt(ss);
    const zeroAmp = v128.and(read, f32x4.eq(h, zero));
    nZero = i32x4.sub(nZero, zeroAmp);
    const na4c = f32x4.neg(a4c), na4s = f32x4.neg(a4s);
    // (Lanes not read, whose a4c or a4s may not be finite, are discarded below.)
    let th = f32x4.mul(f32x4.splat(0.25), atan2x4(na4s, na4c));
    th = f32x4.add(th, v128.and(f32x4.lt(th, zero), halfPi));
    // Rounded up to 90 deg, theta is taken as 0: 2 theta turns by 180 deg (below).
    const turned = f32x4.ge(th, halfPi);
    th = f32x4.sub(th, v128.and(turned, halfPi));
    const w = f32x4.div(amp, f32x4.add(f32x4.add(amp, f32x4.mul(f32x4.splat(3), res)), f32x4.splat(1e-12)));
    // (cos 4 theta, sin 4 theta) = -(a4c, a4s) / h; cos 2 theta and sin 2 theta by the half-angle formulas, each from
    // the square root whose argument is the larger (2 theta in [0, 180) deg: sin 2 theta >= 0, cos 2 theta the sign
    // of sin 4 theta = 2 sin 2 theta cos 2 theta), turned by 180 deg where theta was.
    const c4 = f32x4.div(na4c, h), s4 = f32x4.div(na4s, h);
    const pos = f32x4.ge(c4, zero);
    const q = f32x4.sqrt(f32x4.add(half, f32x4.mul(half, v128.bitselect(c4, f32x4.neg(c4), pos))));
    const other = f32x4.div(v128.bitselect(f32x4.abs(s4), s4, pos), f32x4.add(q, q));
    let cosT = v128.bitselect(v128.bitselect(f32x4.neg(q), q, f32x4.lt(s4, zero)), other, pos);
    let sinT = v128.bitselect(other, q, pos);
    const flip = v128.and(turned, f32x4.splat(-0.0));
    cosT = v128.xor(cosT, flip); sinT = v128.xor(sinT, flip);
    cosT = v128.bitselect(f32x4.splat(NaN), cosT, zeroAmp);
    v128.store(angle + o, v128.and(th, read));
    v128.store(amplitude + o, v128.and(amp, read));
    v128.store(residual + o, v128.and(res, read));
    if (bg) v128.store(bg + o, v128.and(f32x4.sub(a0, f32x4.mul(amp, half)), read));
    v128.store(confidence + o, v128.and(w, read));
    v128.store(cos2 + o, v128.bitselect(cosT, one, read));
    v128.store(sin2 + o, v128.and(sinT, read));
    // The mask's four bytes: 1 where read.
    const m8 = i8x16.narrow_i16x8_u(i16x8.narrow_i32x4_u(v128.and(read, i32x4.splat(1)), zero), zero);
    store<i32>(mask + <usize>t, i32x4.extract_lane(m8, 0));
    nClipped = i32x4.sub(nClipped, clipped);
    // Sums over the pixels read with a non-zero amplitude, in float64.
    const use = v128.andnot(read, zeroAmp);
    const wc = v128.and(f32x4.mul(w, c4), use), ws = v128.and(f32x4.mul(w, s4), use);
    sumC0 = f64x2.add(sumC0, f64x2.promote_low_f32x4(wc)); sumC1 = f64x2.add(sumC1, f64x2.promote_low_f32x4(i32x4.shuffle(wc, wc, 2, 3, 0, 1)));
    sumS0 = f64x2.add(sumS0, f64x2.promote_low_f32x4(ws)); sumS1 = f64x2.add(sumS1, f64x2.promote_low_f32x4(i32x4.shuffle(ws, ws, 2, 3, 0, 1)));
  }
  const sc = f64x2.add(sumC0, sumC1), sn = f64x2.add(sumS0, sumS1);
  store<f64>(sums, load<f64>(sums) + f64x2.extract_lane(sc, 0) + f64x2.extract_lane(sc, 1));
  store<f64>(sums, load<f64>(sums, 8) + f64x2.extract_lane(sn, 0) + f64x2.extract_lane(sn, 1), 8);
  const lanes = (v: v128): i32 => i32x4.extract_lane(v, 0) + i32x4.extract_lane(v, 1) + i32x4.extract_lane(v, 2) + i32x4.extract_lane(v, 3);
  store<i32>(counts, load<i32>(counts) + lanes(nClipped)); store<i32>(counts, load<i32>(counts, 4) + lanes(nFlatBad), 4);
  store<i32>(counts, load<i32>(counts, 8) + lanes(nNonFinite), 8); store<i32>(counts, load<i32>(counts, 12) + lanes(nZero), 12);
}

/**
 * The plate reading's first pass over n pixels (src/optics/plateReader.ts): each pixel's colour-cube sub-cell of
 * `bits` per channel on the sRGB-encoded scale (src/optics/pixels.ts, quantiseInto: round(v (2^bits - 1)) per
 * channel, or for linear data, levels != 0, the encoded level from the 4097-entry table at round(4096 v)) into subs,
 * -1 for a pixel not usable: a plane at or above `full` (clipped: clip[t] = 1, counts[0] + 1; clip starts at 0) or a
 * value not finite or below 0 (counts[1] + 1); without a level table four pixels at a time (cells4). Sub-cells met for the first time (index[sub] == -1) are set to -2 and listed in fresh;
 * returns how many were. float64 arithmetic, as quantiseInto's.
 */
export function plateCells(r: usize, g: usize, b: usize, n: i32, bits: i32, full: f64, levels: usize, subs: usize, clip: usize, index: usize, fresh: usize, counts: usize): i32 {
  const top = <f64>((1 << bits) - 1), s2 = 2 * bits;
  let saturated = 0, invalid = 0, nFresh = 0;
  if (!levels) {
    // Without a level table: the sub-cells four pixels at a time (cells4, into subs; clip marked), then the new ones listed.
    for (let t = 0; t < n; t += 4) {
      const o = <usize>t << 2;
      v128.store(subs + o, cells4(r, g, b, o, top, bits, full));
      markClipped(clip, t, v128.and(over4(r, g, b, o, full), validLanes(t, n)));
    }
    for (let t = 0; t < n; t++) {
      const sub = load<i32>(subs + (<usize>t << 2));
      if (sub < 0) {
        if (load<u8>(clip + <usize>t)) saturated++;
        else invalid++;
        continue;
      }
      const at = index + (<usize>sub << 2);
      if (load<i32>(at) == -1) {
        store<i32>(at, -2);
        store<i32>(fresh + (<usize>nFresh << 2), sub);
        nFresh++;
      }
    }
    store<i32>(counts, load<i32>(counts) + saturated); store<i32>(counts, load<i32>(counts, 4) + invalid, 4);
    return nFresh;
  }
  for (let t = 0; t < n; t++) {
    const o = <usize>t << 2;
    const vr = <f64>load<f32>(r + o), vg = <f64>load<f32>(g + o), vb = <f64>load<f32>(b + o);
    let sub = -1;
    if (vr >= 0 && vg >= 0 && vb >= 0 && vr < full && vg < full && vb < full) {
      if (levels) {
        sub = (load<i32>(levels + (<usize>(<i32>(vr * 4096 + 0.5)) << 2)) << s2) | (load<i32>(levels + (<usize>(<i32>(vg * 4096 + 0.5)) << 2)) << bits)
          | load<i32>(levels + (<usize>(<i32>(vb * 4096 + 0.5)) << 2));
      } else sub = (<i32>(vr * top + 0.5) << s2) | (<i32>(vg * top + 0.5) << bits) | <i32>(vb * top + 0.5);
      const at = index + (<usize>sub << 2);
      if (load<i32>(at) == -1) {
        store<i32>(at, -2);
        store<i32>(fresh + (<usize>nFresh << 2), sub);
        nFresh++;
      }
    } else if (vr >= full || vg >= full || vb >= full) {
      saturated++;
      store<u8>(clip + <usize>t, 1);
    } else invalid++;
    store<i32>(subs + o, sub);
  }
  store<i32>(counts, load<i32>(counts) + saturated); store<i32>(counts, load<i32>(counts, 4) + invalid, 4);
  return nFresh;
}

/**
 * The plate reading's second pass: each usable pixel's reading from its sub-cell's entry k = index[sub] in readings
 * (7 float32s: angle, retardance, confidence, 1 when masked, cos 2 theta, sin 2 theta, then an int32 count) into angle,
 * retardance, confidence, cos2, sin2, and mask 1 unless the entry is masked; pixels not usable get 0 everywhere but cos2
 * (1: the doubled angle of angle 0). Returns how many usable pixels were masked. With sum != 0 the pixels left with
 * mask 1 are counted in their entry's count (a run of pixels of one entry added at once) and their confidence summed
 * in pixel order in float64 at `sum` (added to).
 */
export function plateWrite(subs: usize, n: i32, index: usize, readings: usize, angle: usize, retardance: usize, confidence: usize, cos2: usize, sin2: usize, mask: usize, sum: usize): i32 {
  let masked = 0, total = sum ? load<f64>(sum) : 0, runAt: usize = 0, run = 0;
  for (let t = 0; t < n; t++) {
    const o = <usize>t << 2, sub = load<i32>(subs + o);
    if (sub < 0) {
      store<f32>(angle + o, 0); store<f32>(retardance + o, 0); store<f32>(confidence + o, 0); store<f32>(cos2 + o, 1); store<f32>(sin2 + o, 0);
      store<u8>(mask + <usize>t, 0);
      continue;
    }
    const e = readings + <usize>load<i32>(index + (<usize>sub << 2)) * 28;
    store<f32>(angle + o, load<f32>(e)); store<f32>(retardance + o, load<f32>(e, 4)); store<f32>(confidence + o, load<f32>(e, 8));
    store<f32>(cos2 + o, load<f32>(e, 16)); store<f32>(sin2 + o, load<f32>(e, 20));
    const off = load<f32>(e, 12) == 1;
    masked += <i32>off;
    store<u8>(mask + <usize>t, off ? 0 : 1);
    if (sum && !off) {
      if (e != runAt) {
        if (run) store<i32>(runAt, load<i32>(runAt, 24) + run, 24);
        runAt = e; run = 0;
      }
      run++;
      total += <f64>load<f32>(e, 8);
    }
  }
  if (run) store<i32>(runAt, load<i32>(runAt, 24) + run, 24);
  if (sum) store<f64>(sum, total);
  return masked;
}

/** quantiseInto's colour-cube cell of one pixel (see plateCells), or -1 (with the pixel's clip flag set at full scale). */
// @ts-ignore: decorator
@inline
function cellOf(r: usize, g: usize, b: usize, o: usize, top: f64, bits: i32, full: f64, levels: usize, clipAt: usize): i32 {
  const vr = <f64>load<f32>(r + o), vg = <f64>load<f32>(g + o), vb = <f64>load<f32>(b + o), s2 = 2 * bits;
  if (vr >= 0 && vg >= 0 && vb >= 0 && vr < full && vg < full && vb < full) {
    if (levels) {
      return (load<i32>(levels + (<usize>(<i32>(vr * 4096 + 0.5)) << 2)) << s2) | (load<i32>(levels + (<usize>(<i32>(vg * 4096 + 0.5)) << 2)) << bits)
        | load<i32>(levels + (<usize>(<i32>(vb * 4096 + 0.5)) << 2));
    }
    return (<i32>(vr * top + 0.5) << s2) | (<i32>(vg * top + 0.5) << bits) | <i32>(vb * top + 0.5);
  }
  if (vr >= full || vg >= full || vb >= full) store<u8>(clipAt, 1);
  return -1;
}

/** log2 of the entries of the plate pair's cache of recent pairs (12 bytes each). */
const PAIR_CACHE_BITS = 12;

/** Bytes per entry of the plate pair's table: cells A and B, angle, retardance, confidence, cos 2 theta, sin 2 theta, masked. */
const PAIR_ENTRY_BYTES = 32;

/** The plate pair's first slot for cells a and b: the high bits of a multiplicative (Fibonacci) hash of both. */
// @ts-ignore: decorator
@inline
function pairHome(a: i32, b: i32, shift: i32): i32 {
  return <i32>(<u32>((a ^ (b * <i32>0x85ebca77)) * <i32>0x9e3779b1) >>> shift);
}

/** The levels <i32>(v top + 0.5) of four values given as two float64 pairs (T: top, H: 0.5), as four int32 lanes. */
// @ts-ignore: decorator
@inline
function level4(v0: v128, v1: v128, T: v128, H: v128): v128 {
  return i32x4.shuffle(i32x4.trunc_sat_f64x2_s_zero(f64x2.add(f64x2.mul(v0, T), H)), i32x4.trunc_sat_f64x2_s_zero(f64x2.add(f64x2.mul(v1, T), H)), 0, 1, 4, 5);
}

/** The two low lanes of three float32 planes' values, as float64: any at or above F (64-bit lane masks). */
// @ts-ignore: decorator
@inline
function overHalf(v: v128, w: v128, x: v128, F: v128): v128 {
  return v128.or(v128.or(f64x2.ge(f64x2.promote_low_f32x4(v), F), f64x2.ge(f64x2.promote_low_f32x4(w), F)), f64x2.ge(f64x2.promote_low_f32x4(x), F));
}

/**
 * quantiseInto's colour-cube cells (see plateCells) of four pixels of an sRGB-scale image (planes r, g, b; byte offset o),
 * in float64 two lanes at a time as cellOf: -1 where not usable; `over` gains the lanes with a plane at or above full.
 */
// @ts-ignore: decorator
@inline
function cells4(r: usize, g: usize, b: usize, o: usize, top: f64, bits: i32, full: f64): v128 {
  const vr = v128.load(r + o), vg = v128.load(g + o), vb = v128.load(b + o);
  const Z = f64x2.splat(0), F = f64x2.splat(full), T = f64x2.splat(top), H = f64x2.splat(0.5);
  const r0 = f64x2.promote_low_f32x4(vr), r1 = f64x2.promote_low_f32x4(i32x4.shuffle(vr, vr, 2, 3, 0, 1));
  const g0 = f64x2.promote_low_f32x4(vg), g1 = f64x2.promote_low_f32x4(i32x4.shuffle(vg, vg, 2, 3, 0, 1));
  const b0 = f64x2.promote_low_f32x4(vb), b1 = f64x2.promote_low_f32x4(i32x4.shuffle(vb, vb, 2, 3, 0, 1));
  const ok0 = v128.and(v128.and(v128.and(f64x2.ge(r0, Z), f64x2.ge(g0, Z)), v128.and(f64x2.ge(b0, Z), f64x2.lt(r0, F))), v128.and(f64x2.lt(g0, F), f64x2.lt(b0, F)));
  const ok1 = v128.and(v128.and(v128.and(f64x2.ge(r1, Z), f64x2.ge(g1, Z)), v128.and(f64x2.ge(b1, Z), f64x2.lt(r1, F))), v128.and(f64x2.lt(g1, F), f64x2.lt(b1, F)));
  const cell = v128.or(v128.or(i32x4.shl(level4(r0, r1, T, H), 2 * bits), i32x4.shl(level4(g0, g1, T, H), bits)), level4(b0, b1, T, H));
  // The four lanes' "usable" from the two halves' 64-bit masks.
  const ok = i32x4.shuffle(ok0, ok1, 0, 2, 4, 6);
  return v128.bitselect(cell, i32x4.splat(-1), ok);
}

/** The lanes (all bits set) of four pixels with a plane at or above full (float64 comparisons, as cellOf's). */
// @ts-ignore: decorator
@inline
function over4(r: usize, g: usize, b: usize, o: usize, full: f64): v128 {
  const vr = v128.load(r + o), vg = v128.load(g + o), vb = v128.load(b + o), F = f64x2.splat(full);
  const lo = overHalf(vr, vg, vb, F), hi = overHalf(i32x4.shuffle(vr, vr, 2, 3, 0, 1), i32x4.shuffle(vg, vg, 2, 3, 0, 1), i32x4.shuffle(vb, vb, 2, 3, 0, 1), F);
  return i32x4.shuffle(lo, hi, 0, 2, 4, 6);
}

/**
 * The plate pair's first pass over n pixels (src/optics/platePair.ts): both images' colour cells (as plateCells; planes
 * at a* and b*, each image's linear level table or 0; without tables four pixels at a time by cells4, with cellsB: n
 * int32s of scratch), then for pixels usable in both, the entry of their pair of cells
 * in the open-addressing table (2^(32 - shift) entries of PAIR_ENTRY_BYTES, cell A -1 when free): its byte offset in
 * hits, -1 for pixels not usable (counted in counts[0]). Pairs met for the first time get an entry (cells set, the
 * reading for the caller to write) listed in fresh by offset; returns how many. The caller keeps the table at most half full.
 * cache: 2^PAIR_CACHE_BITS entries of 3 int32s (cell A, cell B, entry offset) of pairs met lately, -1 when empty (the
 * caller empties it when the table moves).
 */
export function pairCells(ra: usize, ga: usize, ba: usize, rb: usize, gb: usize, bb: usize, n: i32, bits: i32, full: f64, levelsA: usize, levelsB: usize,
  clip: usize, table: usize, shift: i32, cache: usize, hits: usize, cellsB: usize, fresh: usize, counts: usize): i32 {
  const top = <f64>((1 << bits) - 1), m = (1 << (32 - shift)) - 1;
  // Without level tables, both images' cells four pixels at a time first (A's into hits, B's into cellsB; clipped marked).
  const lanes = !levelsA && !levelsB;
  if (lanes) {
    for (let t = 0; t < n; t += 4) {
      const o = <usize>t << 2;
      v128.store(hits + o, cells4(ra, ga, ba, o, top, bits, full));
      v128.store(cellsB + o, cells4(rb, gb, bb, o, top, bits, full));
      markClipped(clip, t, v128.and(v128.or(over4(ra, ga, ba, o, full), over4(rb, gb, bb, o, full)), validLanes(t, n)));
    }
  }
  let masked = 0, nFresh = 0, lastA = -1, lastB = -1, lastHit = -1;
  for (let t = 0; t < n; t++) {
    const o = <usize>t << 2, c = clip + <usize>t;
    let ca: i32, cb: i32;
    if (lanes) { ca = load<i32>(hits + o); cb = load<i32>(cellsB + o); }
    else { ca = cellOf(ra, ga, ba, o, top, bits, full, levelsA, c); cb = cellOf(rb, gb, bb, o, top, bits, full, levelsB, c); }
    if (ca < 0 || cb < 0) { masked++; store<i32>(hits + o, -1); continue; }
    if (ca != lastA || cb != lastB) {
      lastA = ca; lastB = cb;
      // The recent pairs first: a direct-mapped cache of PAIR_CACHE entries (cell A, cell B, entry offset) by the hash's top bits.
      const c = cache + (<usize>pairHome(ca, cb, 32 - PAIR_CACHE_BITS)) * 12;
      if (load<i32>(c) == ca && load<i32>(c, 4) == cb) {
        lastHit = load<i32>(c, 8);
        store<i32>(hits + o, lastHit);
        continue;
      }
      let h = pairHome(ca, cb, shift);
      while (true) {
        const e = table + (<usize>h) * PAIR_ENTRY_BYTES, k = load<i32>(e);
        if (k == -1) {
          store<i32>(e, ca); store<i32>(e, cb, 4);
          store<i32>(fresh + (<usize>nFresh << 2), <i32>(e - table));
          nFresh++;
          lastHit = <i32>(e - table);
          break;
        }
        if (k == ca && load<i32>(e, 4) == cb) { lastHit = <i32>(e - table); break; }
        h = (h + 1) & m;
      }
      store<i32>(c, ca); store<i32>(c, cb, 4); store<i32>(c, lastHit, 8);
    }
    store<i32>(hits + o, lastHit);
  }
  store<i32>(counts, load<i32>(counts) + masked);
  return nFresh;
}

/** Moves the plate pair's entries from a table of 2^(32 - fromShift) entries into an empty one of 2^(32 - toShift). */
export function pairRehash(from: usize, fromShift: i32, to: usize, toShift: i32): void {
  const size = 1 << (32 - fromShift), m = (1 << (32 - toShift)) - 1;
  for (let s = 0; s < size; s++) {
    const e = from + (<usize>s) * PAIR_ENTRY_BYTES, a = load<i32>(e);
    if (a == -1) continue;
    let h = pairHome(a, load<i32>(e, 4), toShift);
    while (load<i32>(to + (<usize>h) * PAIR_ENTRY_BYTES) != -1) h = (h + 1) & m;
    memory.copy(to + (<usize>h) * PAIR_ENTRY_BYTES, e, PAIR_ENTRY_BYTES);
  }
}

/**
 * The plate pair's second pass: each usable pixel's reading from its table entry (offset in hits) into angle,
 * retardance, confidence, cos2 and sin2, mask 1 unless the entry is masked; pixels not usable get 0 (cos2 0 too, as the
 * reading's arrays start). Returns how many usable pixels were masked (below the retardance floor). The pixels left
 * with mask 1 are counted in their entry (the entry's last int32 is masked + 2 x that count; a run of pixels of one
 * entry added at once) and their confidence summed in pixel order in float64 at `sum` (added to): the statistics of
 * the field's usable pixels come from these.
 */
export function pairWrite(hits: usize, n: i32, table: usize, angle: usize, retardance: usize, confidence: usize, cos2: usize, sin2: usize, mask: usize, sum: usize): i32 {
  let masked = 0, total = load<f64>(sum), runAt: usize = 0, run = 0;
  for (let t = 0; t < n; t++) {
    const o = <usize>t << 2, hit = load<i32>(hits + o);
    if (hit < 0) {
      store<f32>(angle + o, 0); store<f32>(retardance + o, 0); store<f32>(confidence + o, 0); store<f32>(cos2 + o, 0); store<f32>(sin2 + o, 0);
      store<u8>(mask + <usize>t, 0);
      continue;
    }
    const e = table + <usize>hit;
    store<f32>(angle + o, load<f32>(e, 8)); store<f32>(retardance + o, load<f32>(e, 12)); store<f32>(confidence + o, load<f32>(e, 16));
    store<f32>(cos2 + o, load<f32>(e, 20)); store<f32>(sin2 + o, load<f32>(e, 24));
    const flags = load<i32>(e, 28), off = (flags & 1) == 1;
    masked += <i32>off;
    store<u8>(mask + <usize>t, off ? 0 : 1);
    if (!off) {
      // A run of pixels of one entry is counted at once.
      if (e != runAt) {
        if (run) store<i32>(runAt, load<i32>(runAt, 28) + 2 * run, 28);
        runAt = e; run = 0;
      }
      run++;
      total += <f64>load<f32>(e, 16);
    }
  }
  if (run) store<i32>(runAt, load<i32>(runAt, 28) + 2 * run, 28);
  store<f64>(sum, total);
  return masked;
}

/** JavaScript's Math.round: the nearest integer, halves up. */
// @ts-ignore: decorator
@inline
function roundHalfUp(x: f64): f64 {
  const f = Math.floor(x);
  return x - f >= 0.5 ? f + 1 : f;
}

/** Squared Lab distance of lookup entry o (float index of its first coordinate in C) to (l0, l1, l2). */
// @ts-ignore: decorator
@inline
function dist2(C: usize, o: i32, l0: f64, l1: f64, l2: f64): f64 {
  const p = C + (<usize>o << 2);
  const a = <f64>load<f32>(p) - l0, b = <f64>load<f32>(p, 4) - l1, c = <f64>load<f32>(p, 8) - l2;
  return a * a + b * b + c * c;
}

/**
 * For nCells colour cells of the plate pair (src/optics/platePair.ts, CellRows; Lab as 3 float64s each at labs): on every
 * `stride`-th angle row of the lookup C (Lab float32s, es float32s an entry, nR retardances a row), the retardance index nearest in Lab, into
 * rows (nRows uint16s per cell, cell after cell): a coarse scan over every 4th entry that skips runs of `boxEntries`
 * (even) coarse entries whose Lab bounding box lies farther than the best found so far (starting from the cell's
 * previous row's, kept in guesses: nCells int32s), then +-4 entries around it. coarse: per row the coarse entries' L, a
 * and b as float64s, nCp (a multiple of boxEntries) each; boxes: per row the runs' minima of L, a, b, then maxima, as
 * float64s, nBp (even, at most 64) each; bounds (nBp float64s) and dists (boxEntries float64s): scratch. Row by row for
 * all the cells (a row's entries stay in the cache), the bounds and a run's distances two lanes at a time: the same
 * float64 operations in the same order as CellRows.of.
 */
export function cellRows(C: usize, es: i32, nR: i32, nRows: i32, stride: i32, coarse: usize, nCp: i32, boxes: usize, nBoxes: i32, nBp: i32, boxEntries: i32,
  labs: usize, nCells: i32, guesses: usize, bounds: usize, dists: usize, rows: usize): void {
  const zero = f64x2.splat(0);
  const cp = <usize>nCp << 3, bp = <usize>nBp << 3;
  for (let c = 0; c < nCells; c++) store<i32>(guesses + (<usize>c << 2), 0);
  for (let r = 0; r < nRows; r++) {
    const base = es * r * stride * nR;
    const X = coarse + <usize>r * 3 * cp, Y = X + cp, Z = Y + cp;
    const lo = boxes + <usize>r * 6 * bp;
    for (let c = 0; c < nCells; c++) {
      const lab = labs + <usize>c * 24, l0 = load<f64>(lab), l1 = load<f64>(lab, 8), l2 = load<f64>(lab, 16);
      const L0 = f64x2.splat(l0), L1 = f64x2.splat(l1), L2 = f64x2.splat(l2);
      const guess = load<i32>(guesses + (<usize>c << 2));
      let bk = guess, bd = dist2(C, base + es * guess, l0, l1, l2);
      // The boxes not beyond the guess's distance (bit g of `near`; the best only gets nearer, so no other box is read).
      const BD = f64x2.splat(bd);
      let near: u64 = 0;
      for (let g = 0; g < nBp; g += 2) {
        const o = <usize>g << 3;
        const x = f64x2.max(f64x2.max(f64x2.sub(v128.load(lo + o), L0), f64x2.sub(L0, v128.load(lo + 3 * bp + o))), zero);
        const y = f64x2.max(f64x2.max(f64x2.sub(v128.load(lo + bp + o), L1), f64x2.sub(L1, v128.load(lo + 4 * bp + o))), zero);
        const z = f64x2.max(f64x2.max(f64x2.sub(v128.load(lo + 2 * bp + o), L2), f64x2.sub(L2, v128.load(lo + 5 * bp + o))), zero);
        const bound = f64x2.add(f64x2.add(f64x2.mul(x, x), f64x2.mul(y, y)), f64x2.mul(z, z));
        v128.store(bounds + o, bound);
        near |= (<u64>i64x2.bitmask(v128.not(f64x2.gt(bound, BD)))) << <u64>g;
      }
      near &= (<u64>1 << <u64>nBoxes) - 1;
      while (near != 0) {
        const g = <i32>ctz(near);
        near &= near - 1;
        if (load<f64>(bounds + (<usize>g << 3)) > bd) continue;
        const m0 = g * boxEntries;
        for (let m = 0; m < boxEntries; m += 2) {
          const o = <usize>(m0 + m) << 3;
          const a = f64x2.sub(v128.load(X + o), L0), b = f64x2.sub(v128.load(Y + o), L1), cc = f64x2.sub(v128.load(Z + o), L2);
          v128.store(dists + (<usize>m << 3), f64x2.add(f64x2.add(f64x2.mul(a, a), f64x2.mul(b, b)), f64x2.mul(cc, cc)));
        }
        const kEnd = min(nR, 4 * (m0 + boxEntries));
        for (let k = 4 * m0; k < kEnd; k += 4) {
          const v = load<f64>(dists + (<usize>((k >> 2) - m0) << 3));
          if (v < bd || (v == bd && k < bk)) { bd = v; bk = k; }
        }
      }
      store<i32>(guesses + (<usize>c << 2), bk);
      // The window's upper end follows the best found so far.
      for (let k = max(0, bk - 4); k <= min(nR - 1, bk + 4); k++) {
        const v = dist2(C, base + es * k, l0, l1, l2);
        if (v < bd) { bd = v; bk = k; }
      }
      store<u16>(rows + ((<usize>c * nRows + r) << 1), <u16>bk);
    }
  }
}

/** The summed squared Lab distance of both images' colours to lookup entry (j, k) of A (C) and B (D). */
// @ts-ignore: decorator
@inline
function pairCost(C: usize, D: usize, o: i32, a0: f64, a1: f64, a2: f64, b0: f64, b1: f64, b2: f64): f64 {
  const p = C + (<usize>o << 2), q = D + (<usize>o << 2);
  const x = <f64>load<f32>(p) - a0, y = <f64>load<f32>(p, 4) - a1, z = <f64>load<f32>(p, 8) - a2;
  const u = <f64>load<f32>(q) - b0, v = <f64>load<f32>(q, 4) - b1, w = <f64>load<f32>(q, 8) - b2;
  return x * x + y * y + z * z + u * u + v * v + w * w;
}

/**
 * The plate pair's search for one pair of colours (src/optics/platePair.ts, PairSearch.read): lookups C (image A) and
 * D (image B), es float32s an entry (both interleaved in one array: 6, D = C + 12 bytes), nA angle rows of nR retardances (angles and rets: their values, float64s), steps aStep (deg) and rStep
 * (nm); colours
 * (a0..a2) and (b0..b2); each image's best retardance on every `stride`-th row in ra and rb (nRows uint16s); the
 * first-order estimate (bj, bk). costs: 2 nRows float64s of scratch. Writes to out: the best entry's row and column
 * (two int32s at out, out + 4) and then as float64s at out + 8 the summed squared distance there and that of the best
 * candidate more than 3 deg or 30 nm from it. The same float64 operations in the same order as PairSearch.read.
 */
export function pairRead(C: usize, D: usize, es: i32, nA: i32, nR: i32, stride: i32, nRows: i32, angles: usize, rets: usize, aStep: f64, rStep: f64,
  a0: f64, a1: f64, a2: f64, b0: f64, b1: f64, b2: f64, ra: usize, rb: usize, bj: i32, bk: i32, costs: usize, out: usize): void {
  const costA = costs, costB = costs + (<usize>nRows << 3);
  let best = pairCost(C, D, es * (bj * nR + bk), a0, a1, a2, b0, b1, b2);
  for (let r = 0; r < nRows; r++) {
    const j = r * stride, ka = <i32>load<u16>(ra + (<usize>r << 1)), kb = <i32>load<u16>(rb + (<usize>r << 1));
    const da = pairCost(C, D, es * (j * nR + ka), a0, a1, a2, b0, b1, b2);
    store<f64>(costA + (<usize>r << 3), da);
    if (da < best) { best = da; bj = j; bk = ka; }
    const db = pairCost(C, D, es * (j * nR + kb), a0, a1, a2, b0, b1, b2);
    store<f64>(costB + (<usize>r << 3), db);
    if (db < best) { best = db; bj = j; bk = kb; }
  }
  // Local search (+-3 deg, +-8 nm) minimising the summed squared Lab distance of both images.
  const wa = max(1, <i32>roundHalfUp(3 / aStep)), wr = max(1, <i32>roundHalfUp(8 / rStep));
  let fine = Infinity, fj = bj, fk = bk;
  const kLo = max(0, bk - wr), kHi = min(nR - 1, bk + wr);
  for (let dj = -wa; dj <= wa; dj++) {
    const j = (((bj + dj) % nA) + nA) % nA;
    for (let k = kLo; k <= kHi; k++) {
      const d = pairCost(C, D, es * (j * nR + k), a0, a1, a2, b0, b1, b2);
      if (d < fine) { fine = d; fj = j; fk = k; }
    }
  }
  // Best candidate that differs by more than 3 deg or 30 nm: how far the reading stands out.
  const gj = roundHalfUp((load<f64>(angles + (<usize>fj << 3)) - load<f64>(angles)) / aStep), gk = roundHalfUp(load<f64>(rets + (<usize>fk << 3)) / rStep);
  let alternative = Infinity;
  for (let r = 0; r < nRows; r++) {
    let dj = Math.abs(<f64>(r * stride) - gj) * aStep;
    if (dj > 90) dj = 180 - dj;
    const near = dj <= 3;
    if (!(near && Math.abs(<f64>load<u16>(ra + (<usize>r << 1)) - gk) * rStep <= 30)) alternative = min(alternative, load<f64>(costA + (<usize>r << 3)));
    if (!(near && Math.abs(<f64>load<u16>(rb + (<usize>r << 1)) - gk) * rStep <= 30)) alternative = min(alternative, load<f64>(costB + (<usize>r << 3)));
  }
  store<i32>(out, fj); store<i32>(out, fk, 4); store<f64>(out, fine, 8); store<f64>(out, alternative, 16);
}

/**
 * X, Y, Z of the plate lookup's entries (src/optics/lookupTable.ts, buildPlateLookup) for a polychromatic train, two
 * retardances at a time in float64 lanes: the same float64 operations in the same order as the TypeScript's loop.
 * ch, sh: the sample's half-phase cos and sin, nL rows (wavelengths) of nRp (even) retardances; rows: per angle row
 * c, s (the sample axis) and e1, e2 (the polarised light in its axes), 4 float64s; comp != 0 with a compensator of
 * axis (cC, sC) and half-phase cos, sin cpH, spH (nL each); analyser (ax, ay); weights wx, wy, wz (nL each). Writes
 * X, Y, Z of entry (j, k) at out + 24 (j nRp + k).
 */
export function lookupXyz(ch: usize, sh: usize, nRp: i32, nL: i32, nA: i32, rows: usize, comp: i32, cC: f64, sC: f64, cpH: usize, spH: usize,
  ax: f64, ay: f64, wx: usize, wy: usize, wz: usize, out: usize): void {
  const CC = f64x2.splat(cC), SC = f64x2.splat(sC), NSC = f64x2.splat(-sC), AX = f64x2.splat(ax), AY = f64x2.splat(ay);
  for (let j = 0; j < nA; j++) {
    const rj = rows + (<usize>j << 5);
    const c = f64x2.splat(load<f64>(rj)), s = f64x2.splat(load<f64>(rj, 8)), e1 = f64x2.splat(load<f64>(rj, 16)), e2 = f64x2.splat(load<f64>(rj, 24));
    const ne2 = f64x2.splat(-load<f64>(rj, 24));
    for (let k = 0; k < nRp; k += 2) {
      let X = f64x2.splat(0), Y = X, Z = X;
      for (let i = 0; i < nL; i++) {
        const at = (<usize>(i * nRp + k)) << 3;
        const hc = v128.load(ch + at), hs = v128.load(sh + at);
        const p1r = f64x2.mul(e1, hc), p1i = f64x2.mul(e1, hs), p2r = f64x2.mul(e2, hc), p2i = f64x2.mul(ne2, hs);
        let xr = f64x2.sub(f64x2.mul(c, p1r), f64x2.mul(s, p2r)), xi = f64x2.sub(f64x2.mul(c, p1i), f64x2.mul(s, p2i));
        let yr = f64x2.add(f64x2.mul(s, p1r), f64x2.mul(c, p2r)), yi = f64x2.add(f64x2.mul(s, p1i), f64x2.mul(c, p2i));
        if (comp) {
          const r1 = f64x2.add(f64x2.mul(CC, xr), f64x2.mul(SC, yr)), i1 = f64x2.add(f64x2.mul(CC, xi), f64x2.mul(SC, yi));
          const r2 = f64x2.add(f64x2.mul(NSC, xr), f64x2.mul(CC, yr)), i2 = f64x2.add(f64x2.mul(NSC, xi), f64x2.mul(CC, yi));
          const pc = f64x2.splat(load<f64>(cpH + (<usize>i << 3))), ps = f64x2.splat(load<f64>(spH + (<usize>i << 3)));
          const q1r = f64x2.sub(f64x2.mul(r1, pc), f64x2.mul(i1, ps)), q1i = f64x2.add(f64x2.mul(r1, ps), f64x2.mul(i1, pc));
          const q2r = f64x2.add(f64x2.mul(r2, pc), f64x2.mul(i2, ps)), q2i = f64x2.sub(f64x2.mul(i2, pc), f64x2.mul(r2, ps));
          xr = f64x2.sub(f64x2.mul(CC, q1r), f64x2.mul(SC, q2r)); xi = f64x2.sub(f64x2.mul(CC, q1i), f64x2.mul(SC, q2i));
          yr = f64x2.add(f64x2.mul(SC, q1r), f64x2.mul(CC, q2r)); yi = f64x2.add(f64x2.mul(SC, q1i), f64x2.mul(CC, q2i));
        }
        const re = f64x2.add(f64x2.mul(AX, xr), f64x2.mul(AY, yr)), im = f64x2.add(f64x2.mul(AX, xi), f64x2.mul(AY, yi));
        const tr = f64x2.add(f64x2.mul(re, re), f64x2.mul(im, im));
        const w = <usize>i << 3;
        X = f64x2.add(X, f64x2.mul(f64x2.splat(load<f64>(wx + w)), tr));
        Y = f64x2.add(Y, f64x2.mul(f64x2.splat(load<f64>(wy + w)), tr));
        Z = f64x2.add(Z, f64x2.mul(f64x2.splat(load<f64>(wz + w)), tr));
      }
      const o = out + (<usize>(j * nRp + k)) * 24;
      store<f64>(o, f64x2.extract_lane(X, 0)); store<f64>(o, f64x2.extract_lane(Y, 0), 8); store<f64>(o, f64x2.extract_lane(Z, 0), 16);
      store<f64>(o, f64x2.extract_lane(X, 1), 24); store<f64>(o, f64x2.extract_lane(Y, 1), 32); store<f64>(o, f64x2.extract_lane(Z, 1), 40);
    }
  }
}

/**
 * Unsigned sort key of a float32 bit pattern (src/optics/ranks.ts, keyOf): every bit flipped for a negative value,
 * the sign bit for a positive one, so that keys sort as the values do.
 */
// @ts-ignore: decorator
@inline
function sortKey(u: u32): u32 {
  return u ^ (<u32>(<i32>u >> 31) | 0x80000000);
}

/** Whether pixel t counts: mask[t] set and, with minOf != 0, minOf[t] >= min (src/optics/ranks.ts, RankSelection). */
// @ts-ignore: decorator
@inline
function selected(mask: usize, minOf: usize, min: f64, t: i32): bool {
  return load<u8>(mask + <usize>t) != 0 && (!minOf || <f64>load<f32>(minOf + (<usize>t << 2)) >= min);
}

/**
 * The rank selection's first pass over n pixels (src/optics/ranks.ts, highCounts): counts of the selected pixels'
 * sort keys by their upper 16 bits into high (65536 int32s, added to); returns the number selected. With stats != 0,
 * also the sum of the selected values in pixel order in float64 (stats + 0, added to) and how many are at least
 * `atLeast` (int32 at stats + 8, added to).
 */
export function rankHigh(bits: usize, mask: usize, minOf: usize, min: f64, n: i32, high: usize, stats: usize, atLeast: f64): i32 {
  let count = 0;
  if (stats) {
    let sum = load<f64>(stats), above = load<i32>(stats, 8);
    for (let t = 0; t < n; t++) {
      if (!selected(mask, minOf, min, t)) continue;
      const u = load<u32>(bits + (<usize>t << 2)), at = high + (<usize>(sortKey(u) >>> 16) << 2);
      store<i32>(at, load<i32>(at) + 1);
      count++;
      const v = <f64>reinterpret<f32>(u);
      sum += v;
      if (v >= atLeast) above++;
    }
    store<f64>(stats, sum);
    store<i32>(stats, above, 8);
    return count;
  }
  for (let t = 0; t < n; t++) {
    if (!selected(mask, minOf, min, t)) continue;
    const at = high + (<usize>(sortKey(load<u32>(bits + (<usize>t << 2))) >>> 16) << 2);
    store<i32>(at, load<i32>(at) + 1);
    count++;
  }
  return count;
}

/**
 * The rank selection's second pass (src/optics/ranks.ts, lowCounts): counts of the selected pixels' keys in the wanted
 * buckets by their lower 16 bits, at low[slot[bucket] + lower] (slot: 65536 int32s, -1 for buckets not wanted).
 * With at most four wanted buckets (w0..w3, -1 for none; any: false), the k-th at low[65536 k], four keys at a time
 * are first compared with them and only groups holding one are counted; without minOf, a group's four counts are
 * made without a branch, the lanes not counted adding to the four int32s just past the wanted buckets' counts (one
 * sink per lane). With
 * any (more buckets wanted), every pixel is looked at.
 */
export function rankLow(bits: usize, mask: usize, minOf: usize, min: f64, n: i32, slot: usize, low: usize, any: bool, w0: i32, w1: i32, w2: i32, w3: i32): void {
  const sign = i32x4.splat(0x80000000), b0 = i32x4.splat(w0), b1 = i32x4.splat(w1), b2 = i32x4.splat(w2), b3 = i32x4.splat(w3);
  const lowBits = i32x4.splat(0xffff), sink = i32x4.add(i32x4.splat((w1 < 0 ? 1 : w2 < 0 ? 2 : w3 < 0 ? 3 : 4) << 16), laneIndex());
  for (let t = 0; t < n; t += 4) {
    if (!any) {
      // The four keys' upper halves, and which wanted bucket each is in (the lanes past n are never counted).
      const u = v128.load(bits + (<usize>t << 2));
      const key = v128.xor(u, v128.or(i32x4.shr_s(u, 31), sign)), b = i32x4.shr_u(key, 16);
      const e0 = i32x4.eq(b, b0), e1 = i32x4.eq(b, b1), e2 = i32x4.eq(b, b2), e3 = i32x4.eq(b, b3);
      const hit = v128.or(v128.or(e0, e1), v128.or(e2, e3));
      if (!v128.any_true(hit)) continue;
      if (!minOf) {
        const m = i32x4.extend_low_i16x8_u(i16x8.extend_low_i8x16_u(v128.load32_zero(mask + <usize>t)));
        const counted = v128.and(v128.and(hit, i32x4.ne(m, i32x4.splat(0))), validLanes(t, n));
        // The bucket's offset (65536 k for w_k) plus the key's lower half; the sink where not counted.
        const at = v128.or(v128.or(v128.and(e1, i32x4.splat(1 << 16)), v128.and(e2, i32x4.splat(2 << 16))), v128.and(e3, i32x4.splat(3 << 16)));
        const index = v128.bitselect(i32x4.add(at, v128.and(key, lowBits)), sink, counted);
        const a0 = low + (<usize>i32x4.extract_lane(index, 0) << 2), a1 = low + (<usize>i32x4.extract_lane(index, 1) << 2);
        const a2 = low + (<usize>i32x4.extract_lane(index, 2) << 2), a3 = low + (<usize>i32x4.extract_lane(index, 3) << 2);
        store<i32>(a0, load<i32>(a0) + 1); store<i32>(a1, load<i32>(a1) + 1);
        store<i32>(a2, load<i32>(a2) + 1); store<i32>(a3, load<i32>(a3) + 1);
        continue;
      }
    }
    const end = t + 4 < n ? t + 4 : n;
    for (let p = t; p < end; p++) {
      if (!selected(mask, minOf, min, p)) continue;
      const key = sortKey(load<u32>(bits + (<usize>p << 2))), o = load<i32>(slot + (<usize>(key >>> 16) << 2));
      if (o < 0) continue;
      const at = low + (<usize>(o + <i32>(key & 0xffff)) << 2);
      store<i32>(at, load<i32>(at) + 1);
    }
  }
}

/**
 * foldMod90's fold (src/orientation/fold.ts, foldPixel) of n angles (float32, radians) in place about c, two pixels per
 * float64x2 instruction in the same float64 operations: d = theta - c, k = Math.round(d / (pi/2)) (ceil(y), less 1 where
 * that exceeds y by more than 1/2), d - (pi/2) k, plus pi/2 (and k - 1) where that is at most -pi/4, x = c + d, plus pi
 * where x <= -pi/2, then minus pi where above pi/2, rounded to float32; cos2 and sin2 change sign where k is odd. The
 * quotient y = d / (pi/2) is taken as d x fl(2/pi): the two differ by under 3 x 2^-53 relative (three roundings),
 * under 2^-31 for |y| < 2^20, so where y lies more than 2^-30 from every half-integer both round alike. Pixels with
 * only[t] = 0 (only != 0) are kept; so are those whose y is not within those bounds, or whose x is not within
 * (-pi, pi) (the loop's remainder), or not a number: marked slow[t] = 1 for the caller, which folds them itself;
 * returns how many.
 */
export function foldMod90(angle: usize, cos2: usize, sin2: usize, only: usize, n: i32, c: f64, slow: usize): i32 {
  const C = f64x2.splat(c), H = f64x2.splat(Math.PI / 2), R = f64x2.splat(1 / (Math.PI / 2)), NQ = f64x2.splat(-Math.PI / 4);
  const NH = f64x2.splat(-Math.PI / 2), P = f64x2.splat(Math.PI), NP = f64x2.splat(-Math.PI), ONE = f64x2.splat(1), HALF = f64x2.splat(0.5);
  const BIG = f64x2.splat(1048576), MARGIN = f64x2.splat(9.313225746154785e-10), SIGN = i32x4.splat(0x80000000);
  let slowCount = 0;
  for (let t = 0; t < n; t += 2) {
    const o = <usize>t << 2;
    const v = v128.load64_zero(angle + o);
    let d = f64x2.sub(f64x2.promote_low_f32x4(v), C);
    const y = f64x2.mul(d, R), r = f64x2.ceil(y);
    const sure = v128.and(f64x2.lt(f64x2.abs(y), BIG), f64x2.gt(f64x2.abs(f64x2.sub(f64x2.sub(y, f64x2.floor(y)), HALF)), MARGIN));
    let k = f64x2.sub(r, v128.and(f64x2.gt(f64x2.sub(r, HALF), y), ONE));
    d = f64x2.sub(d, f64x2.mul(H, k));
    const adj = f64x2.le(d, NQ);
    d = v128.bitselect(f64x2.add(d, H), d, adj);
    k = v128.bitselect(f64x2.sub(k, ONE), k, adj);
    const x = f64x2.add(C, d);
    const fast = v128.and(v128.and(f64x2.lt(x, P), f64x2.gt(x, NP)), sure);
    let a = v128.bitselect(f64x2.add(x, P), x, f64x2.le(x, NH));
    a = v128.bitselect(f64x2.sub(a, P), a, f64x2.gt(a, H));
    // The two pixels' lanes: wanted (only[t] set, below n), and moved (wanted and fast).
    const second = t + 1 < n;
    const want0 = !only || load<u8>(only + <usize>t) != 0, want1 = second && (!only || load<u8>(only + <usize>t, 1) != 0);
    const wanted = i64x2.replace_lane(i64x2.splat(want0 ? -1 : 0), 1, want1 ? -1 : 0);
    const move64 = v128.and(fast, wanted), move = i32x4.shuffle(move64, move64, 0, 2, 4, 6);
    v128.store64_lane(angle + o, v128.bitselect(f32x4.demote_f64x2_zero(a), v, move), 0);
    if (cos2) {
      // k is below 2^20 + 2 in size where moved: its lowest bit as the sign bit.
      const flip = v128.and(v128.and(i32x4.shl(i32x4.trunc_sat_f64x2_s_zero(k), 31), move), SIGN);
      v128.store64_lane(cos2 + o, v128.xor(v128.load64_zero(cos2 + o), flip), 0);
      v128.store64_lane(sin2 + o, v128.xor(v128.load64_zero(sin2 + o), flip), 0);
    }
    const left = v128.andnot(wanted, fast);
    if (v128.any_true(left)) {
      if (i64x2.extract_lane(left, 0)) { store<u8>(slow + <usize>t, 1); slowCount++; }
      if (i64x2.extract_lane(left, 1)) { store<u8>(slow + <usize>t, 1, 1); slowCount++; }
    }
  }
  return slowCount;
}

/**
 * One butterfly stage of length 2 half over `count` complex values (re, im) at stride `step` elements between the values
 * of a transform (1 along a row, n down the columns) and `lanes` transforms side by side (step 1: one; step n: n, two at a
 * time): b = a + half, t = w x[b], x[b] = x[a] - t, x[a] = x[a] + t with w = (twr, twi)[tw + k], t = (xr cr - xi ci,
 * xr ci + xi cr), the float64 operations of src/optics/registration.ts's fft and fft2.
 */
// @ts-ignore: decorator
@inline
function butterflies(re: usize, im: usize, n: i32, len: i32, twr: usize, twi: usize, columns: bool): void {
  const half = len >> 1, tw = half - 1;
  if (columns) {
    // Whole rows at a time: row a = (i + k) with row b = a + half, two elements per instruction.
    for (let i = 0; i < n; i += len) {
      for (let k = 0; k < half; k++) {
        const cr = f64x2.splat(load<f64>(twr + (<usize>(tw + k) << 3))), ci = f64x2.splat(load<f64>(twi + (<usize>(tw + k) << 3)));
        const a0 = <usize>(i + k) * <usize>n << 3, b0 = a0 + (<usize>half * <usize>n << 3);
        for (let x = 0; x < n; x += 2) {
          const pa = a0 + (<usize>x << 3), pb = b0 + (<usize>x << 3);
          const rb = v128.load(re + pb), ib = v128.load(im + pb), ra = v128.load(re + pa), ia = v128.load(im + pa);
          const tr = f64x2.sub(f64x2.mul(rb, cr), f64x2.mul(ib, ci)), ti = f64x2.add(f64x2.mul(rb, ci), f64x2.mul(ib, cr));
          v128.store(re + pb, f64x2.sub(ra, tr)); v128.store(im + pb, f64x2.sub(ia, ti));
          v128.store(re + pa, f64x2.add(ra, tr)); v128.store(im + pa, f64x2.add(ia, ti));
        }
      }
    }
    return;
  }
  if (half == 1) {
    const cr = load<f64>(twr + (<usize>tw << 3)), ci = load<f64>(twi + (<usize>tw << 3));
    for (let i = 0; i < n; i += 2) {
      const pa = <usize>i << 3, pb = pa + 8;
      const rb = load<f64>(re + pb), ib = load<f64>(im + pb);
      const tr = rb * cr - ib * ci, ti = rb * ci + ib * cr;
      const ra = load<f64>(re + pa), ia = load<f64>(im + pa);
      store<f64>(re + pb, ra - tr); store<f64>(im + pb, ia - ti); store<f64>(re + pa, ra + tr); store<f64>(im + pa, ia + ti);
    }
    return;
  }
  // Along a row: two neighbouring k (two twiddles) per instruction.
  for (let i = 0; i < n; i += len) {
    for (let k = 0; k < half; k += 2) {
      const cr = v128.load(twr + (<usize>(tw + k) << 3)), ci = v128.load(twi + (<usize>(tw + k) << 3));
      const pa = <usize>(i + k) << 3, pb = pa + (<usize>half << 3);
      const rb = v128.load(re + pb), ib = v128.load(im + pb), ra = v128.load(re + pa), ia = v128.load(im + pa);
      const tr = f64x2.sub(f64x2.mul(rb, cr), f64x2.mul(ib, ci)), ti = f64x2.add(f64x2.mul(rb, ci), f64x2.mul(ib, cr));
      v128.store(re + pb, f64x2.sub(ra, tr)); v128.store(im + pb, f64x2.sub(ia, ti));
      v128.store(re + pa, f64x2.add(ra, tr)); v128.store(im + pa, f64x2.add(ia, ti));
    }
  }
}

/**
 * The 2-D FFT of src/optics/registration.ts (fft2) of an n x n array (re, im: float64, n a power of two, at least 4)
 * in place, in the same float64 operations in the same order: each row by the radix-2 decimation-in-time FFT (bit-reversal
 * permutation by rev, then per stage its butterflies with twiddles twr, twi at offset len/2 - 1 for the stage of length
 * len), then the rows permuted by rev and the same stages run down the columns, whole rows at a time.
 */
export function fft2(re: usize, im: usize, n: i32, twr: usize, twi: usize, rev: usize): void {
  for (let y = 0; y < n; y++) {
    const r = re + (<usize>y * <usize>n << 3), m = im + (<usize>y * <usize>n << 3);
    for (let i = 1; i < n; i++) {
      const j = load<i32>(rev + (<usize>i << 2));
      if (i < j) {
        const pi = <usize>i << 3, pj = <usize>j << 3;
        const a = load<f64>(r + pi); store<f64>(r + pi, load<f64>(r + pj)); store<f64>(r + pj, a);
        const b = load<f64>(m + pi); store<f64>(m + pi, load<f64>(m + pj)); store<f64>(m + pj, b);
      }
    }
    for (let len = 2; len <= n; len <<= 1) butterflies(r, m, n, len, twr, twi, false);
  }
  const rowBytes = <usize>n << 3;
  for (let i = 1; i < n; i++) {
    const j = load<i32>(rev + (<usize>i << 2));
    if (i < j) {
      const p = <usize>i * rowBytes, q = <usize>j * rowBytes;
      for (let x: usize = 0; x < rowBytes; x += 16) {
        const a = v128.load(re + p + x); v128.store(re + p + x, v128.load(re + q + x)); v128.store(re + q + x, a);
        const b = v128.load(im + p + x); v128.store(im + p + x, v128.load(im + q + x)); v128.store(im + q + x, b);
      }
    }
  }
  for (let len = 2; len <= n; len <<= 1) butterflies(re, im, n, len, twr, twi, true);
}

/**
 * The angle series' low-amplitude pixels (src/optics/fourAngle.ts, maskLowAmplitude) among n: the offsets t, in order,
 * of the pixels with mask[t] != 0 and amplitude[t] (float32, compared as float64) <= limit, into out (int32s); returns
 * how many. Four pixels at a time; a NaN amplitude is never at or below the limit.
 */
export function lowAmplitude(mask: usize, amplitude: usize, n: i32, limit: f64, out: usize): i32 {
  const L = f64x2.splat(limit);
  let count = 0;
  for (let t = 0; t < n; t += 4) {
    const v = v128.load(amplitude + (<usize>t << 2));
    const lo = f64x2.le(f64x2.promote_low_f32x4(v), L), hi = f64x2.le(f64x2.promote_low_f32x4(i32x4.shuffle(v, v, 2, 3, 0, 1)), L);
    const low = i32x4.shuffle(lo, hi, 0, 2, 4, 6);
    if (!v128.any_true(v128.and(low, validLanes(t, n)))) continue;
    for (let j = 0; j < 4 && t + j < n; j++) {
      const at = t + j;
      if (load<u8>(mask + <usize>at) != 0 && <f64>load<f32>(amplitude + (<usize>at << 2)) <= limit) { store<i32>(out + (<usize>count << 2), at); count++; }
    }
  }
  return count;
}
