/**
 * Sub-sample centre of one line in a profile by the symmetric-window centroid: c is the point where
 * sum (s - c) W(s - c) (q(s) - b(s)) = 0, W a Hann window of half-width h and b the straight background
 * fitted to the gaps beside the line. For a line symmetric about c0 this holds at c = c0 whatever the
 * line's shape (narrow or flat-bottomed, blurred or sharp); a sloping background (uneven lamp) is
 * removed by b, and subtracting b keeps the discrete sums free of sampling-phase ripple. The lamp's
 * effect on the line itself is corrected by the caller from `lampShift` (lamp.ts). docs/methods.md,
 * "Micrometer calibration".
 */

/** A line's centre and the moments that correct it for a lamp that changes across the line. */
export interface LineMeasure {
  /** Centre, samples (NaN when it could not be measured). */
  centre: number;
  /** Window-weighted signal sum W (q - b), in profile units x samples (proportional to the lamp at the line). */
  area: number;
  /**
   * Shift per unit lamp gradient, samples^2: a lamp L(s) = L0 (1 + kappa (s - c)) moves the centre by
   * kappa x lampShift, lampShift = sum u^2 W(u) g / sum (W(u) + u W'(u)) g (first order in kappa).
   */
  lampShift: number;
}

const NONE: LineMeasure = { centre: NaN, area: NaN, lampShift: NaN };

/**
 * Centre (in samples) of the line near `start` in profile `q` (the line is a peak: flip dark lines
 * first), window half-width `halfWidth` samples (at least 2), background fitted out to `zoneOuter`
 * samples. Iterates c <- sum s W (q - b) / sum W (q - b) to 1e-6 samples (at most 60 times). NaN when
 * the window leaves the data, meets a NaN, the weighted signal is not positive or the centre wanders
 * more than half a window from `start`.
 */
export function lineCentre(q: ArrayLike<number>, start: number, halfWidth: number, zoneOuter = halfWidth): number {
  return measureLine(q, start, halfWidth, zoneOuter).centre;
}

/**
 * Straight background b(u) = level + slope u (u = i - c) under a line centred at c, by least squares
 * over the zones |u| in [inner, outer] on both sides (samples outside the data or NaN left out),
 * weighted by sin^2 bumps that vanish at the zone ends (so the fit moves smoothly with c); null when
 * the zones hold too little to fit a line. Wide zones (the gaps between this line and its neighbours)
 * give a slope with little noise.
 */
function background(q: ArrayLike<number>, c: number, inner: number, outer: number): { level: number; slope: number } | null {
  const e = outer - inner;
  let sw = 0, su = 0, suu = 0, sv = 0, suv = 0;
  for (let i = Math.ceil(c - outer); i <= Math.floor(c + outer); i++) {
    const u = i - c;
    const a = Math.abs(u) - inner;
    if (a <= 0 || i < 0 || i > q.length - 1) continue;
    const v = q[i];
    if (!Number.isFinite(v)) continue;
    const w = Math.sin((Math.PI * a) / e) ** 2;
    sw += w; su += w * u; suu += w * u * u; sv += w * v; suv += w * u * v;
  }
  const det = sw * suu - su * su;
  if (!(sw > 0) || !(det > 0)) return null;
  const slope = (sw * suv - su * sv) / det;
  return { level: (sv - slope * su) / sw, slope };
}

/**
 * lineCentre with the line's weighted area and its lamp-gradient shift (see LineMeasure). The
 * background is fitted over |u| in [h, min(zoneOuter, 3 h)] when the gap to the neighbouring lines
 * (zoneOuter, default h) reaches 1.25 h or more, else over [0.75 h, h].
 */
export function measureLine(q: ArrayLike<number>, start: number, halfWidth: number, zoneOuter = halfWidth): LineMeasure {
  const h = Math.max(2, halfWidth);
  const wide = Math.min(zoneOuter, 3 * h) >= 1.25 * h;
  const outer = wide ? Math.min(zoneOuter, 3 * h) : h;
  const inner = wide ? h : 0.75 * h;
  let c = start;
  let b: { level: number; slope: number } | null = null;
  for (let iter = 0; iter < 60; iter++) {
    const lo = Math.ceil(c - h);
    const hi = Math.floor(c + h);
    if (lo < 0 || hi > q.length - 1) return NONE;
    b = background(q, c, inner, outer);
    if (b === null) return NONE;
    let sw = 0;
    let sws = 0;
    for (let i = lo; i <= hi; i++) {
      const v = q[i];
      if (!Number.isFinite(v)) return NONE;
      const w = 0.5 * (1 + Math.cos((Math.PI * (i - c)) / h)) * (v - b.level - b.slope * (i - c));
      sw += w;
      sws += w * i;
    }
    if (!(sw > 0)) return NONE;
    const next = sws / sw;
    if (Math.abs(next - start) > 0.5 * h) return NONE;
    const done = Math.abs(next - c) < 1e-6;
    c = next;
    if (done) break;
  }
  if (b === null) return NONE;
  let area = 0;
  let num = 0;
  let den = 0;
  for (let i = Math.ceil(c - h); i <= Math.floor(c + h); i++) {
    const u = i - c;
    const g = q[i] - b.level - b.slope * u;
    const w = 0.5 * (1 + Math.cos((Math.PI * u) / h));
    const dw = -0.5 * (Math.PI / h) * Math.sin((Math.PI * u) / h);
    area += w * g;
    num += u * u * w * g;
    den += (w + u * dw) * g;
  }
  return { centre: c, area, lampShift: den > 0 ? num / den : 0 };
}
