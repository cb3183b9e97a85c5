"""Screen calibration: `spotlever calibrate` against cv2.findHomography (method 0: least squares over all
points, then Levenberg-Marquardt refinement of the reprojection error) on the same noisy point pairs,
both measured against the homography the scene was rendered with."""

import math
import os
import tomllib

import cv2
import numpy as np

import scene
from util import run_spotlever

CLICK_NOISE_PX = 0.3  # a careful user's click scatter on a ruled screen (common practice, no source)


def make_pairs(h_mm_to_px, width, height, rng, step_mm=10.0):
    """Ruling crossings every `step_mm` that fall inside the image with a margin, truth and noisy pixels."""
    hinv = np.linalg.inv(h_mm_to_px)
    corners = scene.apply_h(hinv, [[0, 0], [width - 1, 0], [0, height - 1], [width - 1, height - 1]])
    lo, hi = corners.min(axis=0), corners.max(axis=0)
    gx = np.arange(math.ceil(lo[0] / step_mm), math.floor(hi[0] / step_mm) + 1) * step_mm
    gy = np.arange(math.ceil(lo[1] / step_mm), math.floor(hi[1] / step_mm) + 1) * step_mm
    mm = np.array([(x, y) for x in gx for y in gy])
    px = scene.apply_h(h_mm_to_px, mm)
    keep = (px[:, 0] > 10) & (px[:, 0] < width - 11) & (px[:, 1] > 10) & (px[:, 1] < height - 11)
    mm, px = mm[keep], px[keep]
    noisy = px + rng.normal(0, CLICK_NOISE_PX, px.shape)
    return noisy, mm


def find_matrix(doc, px, mm):
    """The pixel-to-mm 3x3 matrix stored in a calibration file, whatever its key: every 3x3 (or 9-long)
    numeric array in the file is tried in both directions and the one that maps the pairs best is kept."""
    cands = []

    def walk(v):
        if isinstance(v, dict):
            for x in v.values():
                walk(x)
        elif isinstance(v, list):
            try:
                a = np.array(v, dtype=float)
            except (TypeError, ValueError):
                return
            if a.size == 9:
                cands.append(a.reshape(3, 3))

    walk(doc)
    best, best_err = None, math.inf
    for a in cands:
        for m in (a, np.linalg.inv(a) if abs(np.linalg.det(a)) > 1e-300 else None):
            if m is None:
                continue
            err = np.sqrt(np.mean(np.sum((scene.apply_h(m, px) - mm) ** 2, axis=1)))
            if err < best_err:
                best, best_err = m, err
    return best


def run(bin_path, work, h_mm_to_px, width, height, background, table):
    rng = np.random.default_rng(7)
    px, mm = make_pairs(h_mm_to_px, width, height, rng)
    image = os.path.join(work, "calibration.png")
    cv2.imwrite(image, scene.quantise(background))
    pairs = os.path.join(work, "pairs.csv")
    with open(pairs, "w") as f:
        f.write("x_px,y_px,x_mm,y_mm\n")
        for (x, y), (a, b) in zip(px, mm):
            f.write(f"{x:.4f},{y:.4f},{a:.4f},{b:.4f}\n")
    out = os.path.join(work, "calibration.toml")

    h_cv, _ = cv2.findHomography(px.astype(np.float64), mm.astype(np.float64), 0)
    h_true = np.linalg.inv(h_mm_to_px)
    ys, xs = np.mgrid[20 : height - 20 : 20, 20 : width - 20 : 20]
    grid = np.c_[xs.ravel(), ys.ravel()].astype(float)
    truth_mm = scene.apply_h(h_true, grid)
    cv_err = float(np.sqrt(np.mean(np.sum((scene.apply_h(h_cv, grid) - truth_mm) ** 2, axis=1))))
    # Expected RMS error of a least-squares fit with p = 8 parameters from n = 2N observations, each of
    # standard deviation s (click noise in mm): s sqrt(p / n) (linear least squares; first order for H).
    mm_per_px = 1.0 / abs(h_mm_to_px[0, 0])
    expected = CLICK_NOISE_PX * mm_per_px * math.sqrt(8.0 / (2 * len(px)))

    ok, msg = run_spotlever(bin_path, ["calibrate", image, "--points", pairs, "--out", out])
    qty_err = f"homography RMS mapping error mm over the image ({len(px)} pairs, {CLICK_NOISE_PX} px clicks)"
    qty_agree = "homography: spotlever vs cv2.findHomography, RMS difference mm"
    if not ok:
        table.add(qty_err, "n/a", f"{cv_err:.5f}", f"0 (first-order {expected:.5f})", "FAIL", f"spotlever: {msg}")
        return None
    try:
        with open(out, "rb") as f:
            doc = tomllib.load(f)
        h_s = find_matrix(doc, px, mm)
    except Exception as e:
        h_s = None
        msg = f"cannot read {out}: {e}"
    if h_s is None:
        table.add(qty_err, "n/a", f"{cv_err:.5f}", "0", "FAIL", f"no 3x3 matrix found in the calibration file; {msg}")
        return out
    s_map = scene.apply_h(h_s, grid)
    s_err = float(np.sqrt(np.mean(np.sum((s_map - truth_mm) ** 2, axis=1))))
    diff = float(np.sqrt(np.mean(np.sum((s_map - scene.apply_h(h_cv, grid)) ** 2, axis=1))))
    # Not less accurate: within half the expected fitting error of the reference's own error.
    table.add(
        qty_err,
        f"{s_err:.5f}",
        f"{cv_err:.5f} (cv2.findHomography)",
        f"0 (first-order {expected:.5f})",
        "PASS" if s_err <= cv_err + 0.5 * expected else "FAIL",
        "tolerance: spotlever <= reference + 0.5 x the first-order least-squares error s sqrt(8 / 2N)",
    )
    # Two least-squares fits of the same pairs should agree to well inside their own error.
    table.add(
        qty_agree,
        f"{diff:.5f}",
        "0",
        "-",
        "PASS" if diff <= 0.5 * expected else "FAIL",
        f"tolerance 0.5 x expected fitting error = {0.5 * expected:.5f} mm",
    )
    return out
