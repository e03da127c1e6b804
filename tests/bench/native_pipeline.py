#!/usr/bin/python3
"""Native OpenCV (one thread) doing the bench's pipeline on the same pixels, for the speed ratio.

Usage: native_pipeline.py RAW_FLOAT32 WIDTH HEIGHT SIGMA SIGMA_DERIV REPEATS
Prints one JSON line: {"tensorS": best seconds for tensor + orientation + coherency, "profileS": ...}.
The pipeline mirrors src/orientation (Gaussian-derivative sepFilter2D, products, Gaussian smoothing,
orientation by atan2 and coherency) and src/channel's binning of cos 2 theta across a horizontal channel.
"""
import json
import sys
import time

import cv2
import numpy as np

cv2.setNumThreads(1)
path, W, H, sigma, sigma_d, repeats = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), float(sys.argv[4]), float(sys.argv[5]), int(sys.argv[6])
img = np.fromfile(path, dtype=np.float32).reshape(H, W)


def gauss(s):
    r = max(1, int(4 * s + 0.5))
    i = np.arange(-r, r + 1, dtype=np.float64)
    g = np.exp(-0.5 * i * i / (s * s))
    g /= g.sum()
    return g.astype(np.float32), (i / (s * s) * g).astype(np.float32)


g, dg = gauss(sigma_d)
k, _ = gauss(sigma)
B = cv2.BORDER_REFLECT


def tensor_field():
    ix = cv2.sepFilter2D(img, cv2.CV_32F, dg, g, borderType=B)
    iy = cv2.sepFilter2D(img, cv2.CV_32F, g, dg, borderType=B)
    jxx = cv2.sepFilter2D(ix * ix, cv2.CV_32F, k, k, borderType=B)
    jxy = cv2.sepFilter2D(ix * iy, cv2.CV_32F, k, k, borderType=B)
    jyy = cv2.sepFilter2D(iy * iy, cv2.CV_32F, k, k, borderType=B)
    d = jyy - jxx
    two = 2 * jxy
    mag, ang = cv2.cartToPolar(d, two)
    theta = 0.5 * ang
    e = jxx + jyy
    coh = mag / np.maximum(e, 1e-30)
    return theta, coh


def profile(theta, coh, bins=20):
    y = np.arange(H, dtype=np.float32)[:, None]
    s = -1 + 2 * (y - 0.1 * H) / (0.8 * H)
    b = np.clip(((s + 1) / 2 * bins).astype(np.int32), 0, bins - 1)
    inside = (np.abs(s) <= 1) & np.ones((1, W), bool)
    c2 = np.cos(2 * theta)
    idx = np.broadcast_to(b, (H, W))[inside]
    w = coh[inside]
    return np.bincount(idx, weights=w * c2[inside], minlength=bins) / np.maximum(np.bincount(idx, weights=w, minlength=bins), 1e-30)


best_t, best_p = 1e9, 1e9
for _ in range(repeats):
    t0 = time.perf_counter()
    theta, coh = tensor_field()
    t1 = time.perf_counter()
    profile(theta, coh)
    t2 = time.perf_counter()
    best_t, best_p = min(best_t, t1 - t0), min(best_p, t2 - t1)
print(json.dumps({'tensorS': best_t, 'profileS': best_p, 'opencv': cv2.__version__}))
