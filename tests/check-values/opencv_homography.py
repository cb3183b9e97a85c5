#!/usr/bin/env python3
"""Check values for the point-pair homography fit, computed with OpenCV's findHomography (method 0:
least squares over all pairs, refined by Levenberg-Marquardt on the destination-space error).

Install the dependencies and regenerate (output is committed beside this script):

    python3 -m venv /tmp/refvenv
    /tmp/refvenv/bin/pip install numpy opencv-python-headless
    /tmp/refvenv/bin/python tests/check-values/opencv_homography.py > tests/check-values/opencv_homography.json

The pairs are invented: a screen plane seen by a pinhole camera with a known tilt, plus seeded Gaussian
pixel noise. The fit maps screen mm (source) to image px (destination), so the error minimised is in
pixels, as in spotlever's fit.
"""
import json
import sys

import cv2
import numpy as np


def camera_homography(f_px, cx, cy, tilt_x_deg, tilt_y_deg, roll_deg, dist_mm, shift_mm):
    """Screen mm (z = 0 plane) to image px for a pinhole camera."""
    ax, ay, az = np.radians([tilt_x_deg, tilt_y_deg, roll_deg])
    rx = np.array([[1, 0, 0], [0, np.cos(ax), -np.sin(ax)], [0, np.sin(ax), np.cos(ax)]])
    ry = np.array([[np.cos(ay), 0, np.sin(ay)], [0, 1, 0], [-np.sin(ay), 0, np.cos(ay)]])
    rz = np.array([[np.cos(az), -np.sin(az), 0], [np.sin(az), np.cos(az), 0], [0, 0, 1]])
    r = rz @ ry @ rx
    k = np.array([[f_px, 0, cx], [0, f_px, cy], [0, 0, 1.0]])
    t = np.array([shift_mm[0], shift_mm[1], dist_mm])
    # Screen y up, image y down: flip y of the screen.
    flip = np.diag([1.0, -1.0, 1.0])
    h = k @ np.column_stack([r[:, 0], r[:, 1], t]) @ flip
    return h / h[2, 2]


def project(h, pts):
    p = np.column_stack([pts, np.ones(len(pts))]) @ h.T
    return p[:, :2] / p[:, 2:3]


def case(name, rng, h_true, screen_mm, sigma_px):
    px = project(h_true, screen_mm) + rng.normal(0.0, sigma_px, size=(len(screen_mm), 2))
    g, _ = cv2.findHomography(screen_mm.astype(np.float64), px.astype(np.float64), 0)
    probe_mm = np.array([[x, y] for x in np.linspace(screen_mm[:, 0].min(), screen_mm[:, 0].max(), 5)
                         for y in np.linspace(screen_mm[:, 1].min(), screen_mm[:, 1].max(), 5)])
    return {
        "name": name,
        "sigma_px": sigma_px,
        "pairs": [[float(a), float(b), float(c), float(d)]
                  for (a, b), (c, d) in zip(px, screen_mm)],
        "mm_to_px": g.tolist(),
        "probe_mm": probe_mm.tolist(),
        "probe_px": project(g, probe_mm).tolist(),
    }


def main():
    rng = np.random.default_rng(20261201)
    cases = []
    h1 = camera_homography(2000.0, 640.0, 360.0, 20.0, -10.0, 3.0, 500.0, (5.0, -8.0))
    sq = np.array([[-60.0, -40.0], [60.0, -40.0], [60.0, 40.0], [-60.0, 40.0]])
    cases.append(case("four corners, no noise", rng, h1, sq, 0.0))
    cases.append(case("four corners, noise 0.3 px", rng, h1, sq, 0.3))
    pts = np.array([[x, y] for x in (-60, -20, 20, 60) for y in (-40, 0, 40)], dtype=float)
    cases.append(case("twelve points, tilt 25 deg, noise 0.3 px", rng,
                      camera_homography(2000.0, 640.0, 360.0, 25.0, 8.0, -2.0, 520.0, (0.0, 4.0)),
                      pts, 0.3))
    many = rng.uniform([-80, -50], [80, 50], size=(50, 2))
    cases.append(case("fifty scattered points, tilt 30 deg, noise 1 px", rng,
                      camera_homography(1800.0, 640.0, 360.0, -30.0, 15.0, 10.0, 480.0, (-3.0, 2.0)),
                      many, 1.0))
    json.dump({
        "source": "OpenCV findHomography(src=screen_mm, dst=image_px, method=0), opencv-python-headless "
                  + cv2.__version__ + ", numpy " + np.__version__,
        "cases": cases,
    }, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
