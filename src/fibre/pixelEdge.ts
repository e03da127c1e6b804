/**
 * Edge-spread function of a straight edge seen through a Gaussian PSF and a square pixel, as a function
 * of the signed distance u (px) from the edge to the pixel centre along the edge's normal
 * (docs/methods.md, "Fibre diameter: blurred-bar fit").
 *
 * A pixel's value is the mean of the blurred image over its 1 x 1 px square. Across a straight edge
 * whose normal is (nx, ny), the square projects onto the normal as the sum of two uniform variables of
 * widths a = |nx| and b = |ny| (a trapezoid of variance (a^2 + b^2)/12 = 1/12), so
 *
 *   F(u) = E[Phi((u + xi) / sigma)],  xi = xi_a + xi_b,  xi_a ~ U(-a/2, a/2), xi_b ~ U(-b/2, b/2).
 *
 * Closed form from the repeated antiderivatives of Phi (Phi'' of each is the previous):
 *   Psi1(z) = z Phi(z) + phi(z),   Psi2(z) = (z^2 + 1)/2 Phi(z) + z phi(z) / 2,
 *   F(u) = sigma^2 / (a b) * sum_{i,j = +-1} i j Psi2((u + i a/2 + j b/2) / sigma),
 * and for b -> 0 (edge along a pixel row or column) F(u) = sigma / a [Psi1(z+) - Psi1(z-)],
 * z+- = (u +- a/2) / sigma. The derivatives in u and sigma follow in the same way:
 *   dF/du = E[phi(z)] / sigma,   dF/dsigma = -E[z phi(z)] / sigma,
 * with E[phi] from Psi1 (its second antiderivative) and E[z phi] from -Phi.
 */
import { normalCdfFast as normalCdf } from '../common/index.ts';

const INV_SQRT_2PI = 1 / Math.sqrt(2 * Math.PI);
const pdf = (z: number) => INV_SQRT_2PI * Math.exp(-0.5 * z * z);
const psi1 = (z: number) => z * normalCdf(z) + pdf(z);

/** Below this projected side (px) the trapezoid is taken as a single box (its variance is then < 1e-7 px^2). */
const THIN_SIDE_PX = 1e-3;

/** The pixel's footprint across an edge: widths of the two uniform parts, px (a >= b >= 0). */
export interface PixelFootprint {
  a: number;
  b: number;
}

/** Footprint of a square pixel across an edge whose unit normal is (nx, ny). */
export function pixelFootprint(nx: number, ny: number): PixelFootprint {
  const p = Math.abs(nx);
  const q = Math.abs(ny);
  return { a: Math.max(p, q), b: Math.min(p, q) };
}

/** Value, d/du and d/dsigma of the edge-spread function F(u) (see the file comment). */
export interface EdgeSpread {
  value: number;
  dU: number;
  dSigma: number;
}

/**
 * F(u), dF/du and dF/dsigma for a Gaussian PSF of `sigma` (px) seen through a square pixel of the given
 * footprint; `footprint` null gives the point-sampled edge Phi(u / sigma).
 */
export function pixelEdgeSpread(u: number, sigma: number, footprint: PixelFootprint | null, out: EdgeSpread): EdgeSpread {
  if (footprint === null) {
    const z = u / sigma;
    out.value = normalCdf(z);
    out.dU = pdf(z) / sigma;
    out.dSigma = (-z * pdf(z)) / sigma;
    return out;
  }
  const { a, b } = footprint;
  if (b < THIN_SIDE_PX) {
    const zp = (u + a / 2) / sigma;
    const zm = (u - a / 2) / sigma;
    out.value = (sigma / a) * (psi1(zp) - psi1(zm));
    out.dU = (normalCdf(zp) - normalCdf(zm)) / a;
    out.dSigma = (pdf(zp) - pdf(zm)) / a;
    return out;
  }
  let v = 0;
  let du = 0;
  let ds = 0;
  for (let i = 1; i >= -1; i -= 2) {
    for (let j = 1; j >= -1; j -= 2) {
      const z = (u + (i * a) / 2 + (j * b) / 2) / sigma;
      const cdf = normalCdf(z);
      const density = pdf(z);
      const sign = i * j;
      v += sign * (0.5 * (z * z + 1) * cdf + 0.5 * z * density); // Psi2
      du += sign * (z * cdf + density); // Psi1
      ds += sign * cdf;
    }
  }
  const ab = a * b;
  out.value = ((sigma * sigma) / ab) * v;
  out.dU = (sigma / ab) * du;
  out.dSigma = (sigma / ab) * ds;
  return out;
}
