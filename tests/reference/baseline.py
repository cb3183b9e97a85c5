"""A baseline tracker written the way a user with OpenCV and scipy would write it, for the side-by-side:
read the clip with cv2.VideoCapture, convert to gray, Gaussian blur, take the brightest pixel
(cv2.minMaxLoc), an intensity-weighted centroid in a window around it, then fit an undamped sine
x(t) = c + a sin(2 pi t / T + phi) with scipy.optimize.curve_fit (starting period from the FFT peak).

Usage: python baseline.py CLIP.mp4 OUT.json [--window 21] [--blur 5] [--starts T1,T2,...]
`--starts` gives the times the masses were moved (each starts a segment, as the user noted them); one
sine is fitted per segment. Writes per-frame positions and each segment's fitted period and equilibrium
(pixels) to OUT.json.
"""

import json
import math
import sys
import time

import cv2
import numpy as np
from scipy.optimize import curve_fit


def main():
    clip, out = sys.argv[1], sys.argv[2]
    window = int(sys.argv[sys.argv.index("--window") + 1]) if "--window" in sys.argv else 21
    blur = int(sys.argv[sys.argv.index("--blur") + 1]) if "--blur" in sys.argv else 5
    starts = [float(v) for v in sys.argv[sys.argv.index("--starts") + 1].split(",")] if "--starts" in sys.argv else []
    t0 = time.perf_counter()
    cap = cv2.VideoCapture(clip)
    if not cap.isOpened():
        sys.exit(f"cannot open {clip}")
    fps = cap.get(cv2.CAP_PROP_FPS)
    half = window // 2
    xs, ys, ts = [], [], []
    i = 0
    while True:
        ok, frame = cap.read()
        if not ok:
            break
        gray = cv2.cvtColor(frame, cv2.COLOR_BGR2GRAY)
        blurred = cv2.GaussianBlur(gray, (blur, blur), 0)
        _, _, _, (mx, my) = cv2.minMaxLoc(blurred)
        x0, y0 = max(mx - half, 0), max(my - half, 0)
        win = gray[y0 : my + half + 1, x0 : mx + half + 1].astype(np.float64)
        yy, xx = np.mgrid[0 : win.shape[0], 0 : win.shape[1]]
        s = win.sum()
        xs.append(x0 + (xx * win).sum() / s)
        ys.append(y0 + (yy * win).sum() / s)
        ts.append(i / fps)
        i += 1
    cap.release()
    t_track = time.perf_counter() - t0
    t = np.array(ts)
    x = np.array(xs)

    def sine(t, c, a, period, phi):
        return c + a * np.sin(2 * np.pi * t / period + phi)

    bounds = [0.0] + sorted(starts) + [math.inf]
    segments = []
    for lo, hi in zip(bounds[:-1], bounds[1:]):
        sel = (t >= lo) & (t < hi)
        ts, xs_ = t[sel], x[sel]
        spec = np.abs(np.fft.rfft(xs_ - xs_.mean()))
        freqs = np.fft.rfftfreq(len(xs_), ts[1] - ts[0])
        k = int(np.argmax(spec[1:]) + 1)
        p0 = [xs_.mean(), (xs_.max() - xs_.min()) / 2, 1.0 / freqs[k], 0.0]
        popt, _ = curve_fit(sine, ts, xs_, p0=p0, maxfev=20000)
        segments.append({"start_s": lo, "period_s": float(abs(popt[2])), "equilibrium_px": float(popt[0])})
    result = {
        "frames": i,
        "fps": fps,
        "segments": segments,
        "track_seconds": t_track,
        "total_seconds": time.perf_counter() - t0,
        "x_px": [float(v) for v in xs],
        "y_px": [float(v) for v in ys],
    }
    with open(out, "w") as f:
        json.dump(result, f)


if __name__ == "__main__":
    main()
