"""A baseline tracker written the way a user with OpenCV and scipy would write it, for the side-by-side:
read the clip with cv2.VideoCapture, convert to gray, Gaussian blur, take the brightest pixel
(cv2.minMaxLoc), an intensity-weighted centroid in a window around it, then fit an undamped sine
x(t) = c + a sin(2 pi t / T + phi) with scipy.optimize.curve_fit (starting period from the FFT peak).

Usage: python baseline.py CLIP.mp4 OUT.json [--window 21] [--blur 5]
Writes per-frame positions and the fitted period and equilibrium (pixels) to OUT.json.
"""

import json
import sys
import time

import cv2
import numpy as np
from scipy.optimize import curve_fit


def main():
    clip, out = sys.argv[1], sys.argv[2]
    window = int(sys.argv[sys.argv.index("--window") + 1]) if "--window" in sys.argv else 21
    blur = int(sys.argv[sys.argv.index("--blur") + 1]) if "--blur" in sys.argv else 5
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

    spec = np.abs(np.fft.rfft(x - x.mean()))
    freqs = np.fft.rfftfreq(len(x), t[1] - t[0])
    k = int(np.argmax(spec[1:]) + 1)
    p0 = [x.mean(), (x.max() - x.min()) / 2, 1.0 / freqs[k], 0.0]
    popt, _ = curve_fit(sine, t, x, p0=p0, maxfev=20000)
    c, a, period, phi = popt
    result = {
        "frames": i,
        "fps": fps,
        "period_s": float(abs(period)),
        "equilibrium_px": float(c),
        "track_seconds": t_track,
        "total_seconds": time.perf_counter() - t0,
        "x_px": [float(v) for v in xs],
        "y_px": [float(v) for v in ys],
    }
    with open(out, "w") as f:
        json.dump(result, f)


if __name__ == "__main__":
    main()
