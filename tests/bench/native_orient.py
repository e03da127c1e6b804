#!/usr/bin/python3
"""Native OpenCV (one thread) doing what `retarda orient` does to each PNG file, for the bench's whole-process ratio.

Usage:
  native_orient.py [--derivative gaussian|sobel] FILE...   the job, once per file, printing one line per file
  native_orient.py --write WIDTH HEIGHT OUT.png [--rgb]    writes the bench's test image with OpenCV's PNG writer

The job per file, as src/orientation and src/order do it: decode (cv2.imread, grey), Gaussian-derivative
gradients (sigma 1, or the 3x3 Sobel pair), the three products, their Gaussian smoothing (sigma 2), coherency
and the doubled-angle vector (cv2.cartToPolar), and the coherency-weighted mean of cos 2 theta, sin 2 theta
(S_2D and the director). Borders BORDER_REFLECT as in retarda. Run by tests/bench/bench.ts as a whole process
with 1 and with N files, so start-up cancels out of the per-image time.
"""
import sys

import cv2
import numpy as np

cv2.setNumThreads(1)


def scene(w, h):
    """The bench's texture: stripes (period 7 px) whose angle swings across the height, plus hash noise."""
    y = np.arange(h, dtype=np.float64)[:, None]
    x = np.arange(w, dtype=np.float64)[None, :]
    a = 0.5 * np.sin(np.pi * y / h)
    hsh = ((x.astype(np.uint64) * 374761393 + y.astype(np.uint64) * 668265263) * 1274126177) & 0xFFFFFFFF
    d = 0.5 + 0.3 * np.sin(2 * np.pi * (-x * np.sin(a) + y * np.cos(a)) / 7) + 0.05 * (hsh / 4294967296.0 - 0.5)
    return np.clip(np.round(255 * d), 0, 255).astype(np.uint8)


def gauss(s):
    r = max(1, int(4 * s + 0.5))
    i = np.arange(-r, r + 1, dtype=np.float64)
    g = np.exp(-0.5 * i * i / (s * s))
    g /= g.sum()
    return g.astype(np.float32), (i / (s * s) * g).astype(np.float32)


def orient(path, sobel):
    img = cv2.imread(path, cv2.IMREAD_GRAYSCALE)
    if img is None:
        raise SystemExit(f'{path}: not readable')
    f = img.astype(np.float32) * np.float32(1 / 255)
    B = cv2.BORDER_REFLECT
    if sobel:
        ix = cv2.Sobel(f, cv2.CV_32F, 1, 0, ksize=3, borderType=B)
        iy = cv2.Sobel(f, cv2.CV_32F, 0, 1, ksize=3, borderType=B)
    else:
        g, dg = gauss(1.0)
        ix = cv2.sepFilter2D(f, cv2.CV_32F, dg, g, borderType=B)
        iy = cv2.sepFilter2D(f, cv2.CV_32F, g, dg, borderType=B)
    k, _ = gauss(2.0)
    jxx = cv2.sepFilter2D(ix * ix, cv2.CV_32F, k, k, borderType=B)
    jxy = cv2.sepFilter2D(ix * iy, cv2.CV_32F, k, k, borderType=B)
    jyy = cv2.sepFilter2D(iy * iy, cv2.CV_32F, k, k, borderType=B)
    d = jyy - jxx
    mag, _ = cv2.cartToPolar(d, 2 * jxy)
    e = jxx + jyy
    coh = mag / np.maximum(e, 1e-30)
    # Coherency-weighted doubled-angle means: coh cos 2 theta = d / e, coh sin 2 theta = 2 jxy / e.
    w = float(coh.sum())
    c = float((d / np.maximum(e, 1e-30)).sum()) / w
    s = float((2 * jxy / np.maximum(e, 1e-30)).sum()) / w
    print(f'{path} S_2D {np.hypot(c, s):.4f} director {np.degrees(0.5 * np.arctan2(s, c)):.3f}', flush=True)


if __name__ == '__main__':
    args = sys.argv[1:]
    if args and args[0] == '--write':
        w, h, out = int(args[1]), int(args[2]), args[3]
        g = scene(w, h)
        cv2.imwrite(out, cv2.merge([g, g, g]) if '--rgb' in args else g)
    else:
        sobel = False
        if args[:1] == ['--derivative']:
            sobel = args[1] == 'sobel'
            args = args[2:]
        for p in args:
            orient(p, sobel)
