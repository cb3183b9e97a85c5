"""Scenes with known truth for the reference comparisons: a ruled screen seen through a homography, a
pixel-integrated Gaussian laser spot, read noise and 8-bit quantisation.

Everything here is plain numpy so the truth does not depend on the code under test. Pixel centres sit at
integer coordinates (x to the right, y down), the same convention as spotlever, scipy.ndimage and trackpy.
"""

import math

import numpy as np
from scipy.special import erf


def apply_h(h, pts):
    """Map Nx2 points through a 3x3 homography."""
    pts = np.asarray(pts, dtype=float)
    v = np.c_[pts, np.ones(len(pts))] @ np.asarray(h).T
    return v[:, :2] / v[:, 2:3]


def screen_to_image_h(width, height, mm_per_px, shear=0.0, persp=(0.0, 0.0)):
    """A homography taking screen millimetres to pixels: the screen's origin at the image centre,
    `1/mm_per_px` px per mm there, with an optional `shear` (fraction) and perspective row `persp`
    (per mm) for a screen seen at an angle."""
    k = 1.0 / mm_per_px
    cx, cy = (width - 1) / 2.0, (height - 1) / 2.0
    h = np.array([[k, shear * k, cx], [0.5 * shear * k, k, cy], [persp[0], persp[1], 1.0]])
    # keep the centre's scale at k: the projective row only bends the field away from the origin
    return h


def ruled_background(width, height, h_mm_to_px, level=170.0, line_depth=70.0, minor_mm=1.0, major_mm=10.0):
    """A white screen with dark rulings every `minor_mm` (thin) and `major_mm` (thick), in perspective.
    Returns float32 DN values. Lines are drawn with a smooth profile so the image is band-limited."""
    hinv = np.linalg.inv(h_mm_to_px)
    ys, xs = np.mgrid[0:height, 0:width].astype(np.float64)
    v0 = hinv[0, 0] * xs + hinv[0, 1] * ys + hinv[0, 2]
    v1 = hinv[1, 0] * xs + hinv[1, 1] * ys + hinv[1, 2]
    v2 = hinv[2, 0] * xs + hinv[2, 1] * ys + hinv[2, 2]
    xm, ym = v0 / v2, v1 / v2
    # local scale, mm per px, for line widths in pixels
    mmpx = 1.0 / abs(h_mm_to_px[0, 0])
    img = np.full((height, width), level, dtype=np.float64)

    def lines(coord, period, half_width_mm, depth):
        d = np.abs(((coord + period / 2.0) % period) - period / 2.0)
        return depth * np.exp(-0.5 * (d / max(half_width_mm, 0.6 * mmpx)) ** 2)

    dark = np.maximum.reduce(
        [
            lines(xm, minor_mm, 0.08, 0.45 * line_depth),
            lines(ym, major_mm, 0.12, 0.45 * line_depth),
            lines(xm, major_mm, 0.15, line_depth),
        ]
    )
    img -= dark
    # gentle illumination fall-off toward the corners (common practice, no source: vignetting)
    r2 = ((xs - width / 2) / width) ** 2 + ((ys - height / 2) / height) ** 2
    img *= 1.0 - 0.25 * r2
    return img.astype(np.float32)


def spot_patch(x0, y0, sigma, amplitude, half):
    """A pixel-integrated circular Gaussian of peak `amplitude` centred at (x0, y0), over the square of
    pixels within `half` of the nearest pixel. Returns (patch, col0, row0)."""
    cx, cy = int(round(x0)), int(round(y0))
    c0, r0 = cx - half, cy - half
    xs = np.arange(c0, cx + half + 1, dtype=np.float64)
    ys = np.arange(r0, cy + half + 1, dtype=np.float64)
    s = sigma * math.sqrt(2.0)
    gx = 0.5 * (erf((xs + 0.5 - x0) / s) - erf((xs - 0.5 - x0) / s))
    gy = 0.5 * (erf((ys + 0.5 - y0) / s) - erf((ys - 0.5 - y0) / s))
    # peak of the continuous Gaussian is amplitude; the integral over a pixel is amplitude*2*pi*sigma^2*g
    patch = amplitude * 2.0 * math.pi * sigma * sigma * np.outer(gy, gx)
    return patch.astype(np.float32), c0, r0


def add_spot(img, x0, y0, sigma, amplitude):
    half = int(math.ceil(5 * sigma)) + 1
    patch, c0, r0 = spot_patch(x0, y0, sigma, amplitude, half)
    h, w = img.shape
    a0, b0 = max(r0, 0), max(c0, 0)
    a1, b1 = min(r0 + patch.shape[0], h), min(c0 + patch.shape[1], w)
    img[a0:a1, b0:b1] += patch[a0 - r0 : a1 - r0, b0 - c0 : b1 - c0]


def quantise(img):
    """Round to 8 bits with clipping, as a camera's output stage does."""
    return np.clip(np.rint(img), 0, 255).astype(np.uint8)


def crb_rms_2d(amplitude, noise_sigma):
    """Cramér–Rao bound on the 2-D RMS position error of a Gaussian spot of peak `amplitude` in white
    Gaussian noise `noise_sigma`, for a spot much wider than a pixel. Fisher information per axis is
    sum (dI/dx0)^2 / sigma_n^2 = pi A^2 / (2 sigma_n^2) (independent of the spot width), so the per-axis
    variance bound is 2 sigma_n^2 / (pi A^2) and the 2-D RMS bound 2 sigma_n / (A sqrt(pi)).
    (Standard Fisher-information result for a Gaussian point-spread function; derivation worked here.)"""
    return 2.0 * noise_sigma / (amplitude * math.sqrt(math.pi))
