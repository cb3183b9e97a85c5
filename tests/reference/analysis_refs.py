"""Analysis against numpy and scipy on the same series: the spectrum's peak (numpy.fft), the damped-sine
fit (scipy.optimize.curve_fit) and the Monte Carlo uncertainty of G (an independent numpy Monte Carlo of
the same measurement model, JCGM 101:2008 section 7).

spotlever's side comes from the probe example (library functions on files) for the spectrum and the fit;
g_run.py runs `spotlever analyze` for G.
"""

import json
import math
import os
import subprocess

import numpy as np
from scipy.optimize import curve_fit

# A single stretch of free oscillation, sampled every 2 s (angle, rad).
T_D, TAU, AMP, EQ, PHI, NOISE = 523.0, 2400.0, 2.0e-3, 3.1e-4, 0.7, 4.0e-6
DT, N = 2.0, 2400


def series(seed=11):
    rng = np.random.default_rng(seed)
    t = np.arange(N) * DT
    y = EQ + AMP * np.exp(-t / TAU) * np.cos(2 * math.pi * t / T_D + PHI) + rng.normal(0, NOISE, N)
    return t, y


def numpy_peak(t, y, pad=8):
    """Peak of the amplitude spectrum with numpy.fft: remove a straight line, Hann window (numpy.hanning),
    zero-pad to the next power of two at or above `pad` x n, |rfft|, skip bins below 1.5 cycles per
    record, and interpolate the highest bin with a parabola through the logarithms of its neighbours
    (exact for a Gaussian-shaped peak; common practice for Hann-windowed spectra, no source)."""
    n = len(y)
    dt = float(np.median(np.diff(t)))
    k = np.arange(n)
    v = y - np.polyval(np.polyfit(k, y, 1), k)
    v = v * np.hanning(n)
    nfft = 1 << int(math.ceil(math.log2(pad * n)))
    mag = np.abs(np.fft.rfft(v, nfft))
    df = 1.0 / (nfft * dt)
    kmin = max(int(math.ceil((1.5 / (n * dt)) / df)), 1)
    kb = kmin + int(np.argmax(mag[kmin:-1]))
    a, b, c = np.log(mag[kb - 1 : kb + 2])
    den = a - 2 * b + c
    delta = float(np.clip(0.5 * (a - c) / den, -0.5, 0.5)) if den < 0 else 0.0
    return (kb + delta) * df


def damped(t, c, a, gamma, omega, phi):
    return c + a * np.exp(-gamma * t) * np.cos(omega * t + phi)


def scipy_fit(t, y, f0):
    p0 = [np.mean(y), (y.max() - y.min()) / 2, 1.0 / (t[-1] - t[0]), 2 * math.pi * f0, 0.0]
    # phase start from a linear least-squares fit of cos and sin at the starting frequency
    m = np.c_[np.ones_like(t), np.cos(p0[3] * t), np.sin(p0[3] * t)]
    coef = np.linalg.lstsq(m, y, rcond=None)[0]
    p0[1] = math.hypot(coef[1], coef[2])
    p0[4] = math.atan2(-coef[2], coef[1])
    popt, pcov = curve_fit(damped, t, y, p0=p0, maxfev=20000)
    return popt, np.sqrt(np.diag(pcov))


def call_probe(probe, request, work, name):
    """Ask the probe example for library results: writes NAME.in.json, reads NAME.out.json."""
    if not probe or not os.path.exists(probe):
        return None, "probe example not built"
    inp, out = os.path.join(work, f"{name}.in.json"), os.path.join(work, f"{name}.out.json")
    with open(inp, "w") as f:
        json.dump(request, f)
    p = subprocess.run([probe, inp, out], capture_output=True, text=True)
    if p.returncode != 0:
        return None, f"probe exited {p.returncode}: {p.stderr.strip()[-300:]}"
    with open(out) as f:
        return json.load(f), "ok"


def pull_per_g(q, psi=0.0, n_rod=400):
    """Torque about the fibre per unit G, N m / (m^3 kg^-1 s^-2), of both large spheres on the whole
    beam turned by psi from its rest position: Newton's law summed over point masses (written here
    independently of spotlever). The small spheres are points at +-R on the beam; the rod, of the
    given mass and length at the spheres' height, is cut into n_rod equal pieces at their midpoints;
    the large spheres sit d from the small ones, square to the arm, on opposite sides (each also pulls
    the far small sphere and the whole rod). Works elementwise on numpy arrays of draws."""
    r, d, big_m = q["arm"], q["separation"], q["large_mass"]
    c, s = np.cos(psi), np.sin(psi)
    sources = [(r, d), (-r, -d)]
    points = [(r, q["small_mass"]), (-r, q["small_mass"])]
    points += [(q["rod_length"] * (-0.5 + (i + 0.5) / n_rod), q["rod_mass"] / n_rod) for i in range(n_rod)]
    tau = 0.0
    for x, mass in points:
        px, py = x * c, x * s
        for qx, qy in sources:
            dx, dy = qx - px, qy - py
            f = big_m * mass / (dx * dx + dy * dy) ** 1.5
            tau = tau + (px * dy - py * dx) * f
    return tau


def inertia_of(q):
    """Moment of inertia of the rod and the two small spheres about the fibre, kg m^2."""
    return q["rod_mass"] * q["rod_length"] ** 2 / 12 + 2 * q["small_mass"] * (
        q["arm"] ** 2 + 0.4 * q["small_radius"] ** 2
    )


def pull_and_stiffness(q, step=1e-4):
    """The pull at rest tau_0 and its change as the beam turns, tau' = d tau / d psi (central
    difference), both per unit G."""
    return pull_per_g(q), (pull_per_g(q, step) - pull_per_g(q, -step)) / (2 * step)


def g_model(q, theta, period):
    """G from the deflection theta, the measured period and the apparatus. At each position's
    equilibrium the fibre holds the pull, kappa theta = G tau_0 (the separation d is the one at rest
    there); the period is set by the fibre together with the pull's change as the beam turns,
    I (2 pi / T)^2 = kappa - G tau'. So G = I (2 pi / T)^2 theta / (tau_0 - theta tau')."""
    tau0, stiff = pull_and_stiffness(q)
    return inertia_of(q) * (2 * np.pi / period) ** 2 * theta / (tau0 - theta * stiff)


def theta_for(q, g, period):
    """The deflection that G = g gives with the measured period (g_model solved for theta)."""
    tau0, stiff = pull_and_stiffness(q)
    k = inertia_of(q) * (2 * np.pi / period) ** 2
    return g * tau0 / (k + g * stiff)


APPARATUS = {  # value, standard uncertainty (SI): the invented apparatus of clip.SETUP
    "small_mass": (14.6e-3, 0.05e-3),
    "small_radius": (7.5e-3, 0.05e-3),
    "arm": (50.0e-3, 0.1e-3),
    "rod_mass": (10e-3, 0.5e-3),
    "rod_length": (100e-3, 1e-3),
    "large_mass": (1.50, 0.01),
    "separation": (46.5e-3, 0.2e-3),
}


def numpy_mc_g(theta, u_theta, period, u_period, m=200_000, seed=5):
    """Monte Carlo of G (JCGM 101:2008): every input drawn from a normal distribution of its value and
    standard uncertainty, independent; returns (mean, standard deviation, 95 % shortest interval)."""
    rng = np.random.default_rng(seed)
    q = {k: rng.normal(v, u, m) for k, (v, u) in APPARATUS.items()}
    g = g_model(q, rng.normal(theta, u_theta, m), rng.normal(period, u_period, m))
    g.sort()
    k = int(0.95 * m)
    widths = g[k:] - g[: m - k]
    i = int(np.argmin(widths))
    return float(g.mean()), float(g.std(ddof=1)), (float(g[i]), float(g[i + k]))


def run(bin_path, probe, work, table):
    t, y = series()
    f_np = numpy_peak(t, y)
    res, msg = call_probe(probe, {"op": "spectrum", "t": t.tolist(), "y": y.tolist(), "pad": 8}, work, "spectrum")
    qty = "FFT peak period s (Hann, 8x zero padding, log-parabola)"
    # Same recipe on the same samples: agreement to rounding (1e-9 relative, common practice, no source).
    if res is None:
        table.add(qty, "n/a", f"{1 / f_np:.4f} (numpy.fft)", f"{T_D}", "FAIL", f"spotlever: {msg}")
    else:
        p_s = 1.0 / res["peak_hz"]
        agree = abs(p_s * f_np - 1.0) <= 1e-9
        table.add(qty, f"{p_s:.4f}", f"{1 / f_np:.4f} (numpy.fft)", f"{T_D}", "PASS" if agree else "FAIL",
                  f"relative difference {abs(p_s * f_np - 1):.1e} (tolerance 1e-9)")

    popt, perr = scipy_fit(t, y, f_np)
    truth = {"equilibrium": EQ, "gamma": 1 / TAU, "omega": 2 * math.pi / T_D}
    ref = {"equilibrium": popt[0], "gamma": popt[2], "omega": popt[3]}
    ref_u = {"equilibrium": perr[0], "gamma": perr[2], "omega": perr[3]}
    res, msg = call_probe(probe, {"op": "damped_fit", "t": t.tolist(), "y": y.tolist()}, work, "fit")
    for key in ("omega", "gamma", "equilibrium"):
        qty = f"damped-sine fit {key} (scipy curve_fit +- 1 sigma {ref_u[key]:.3g})"
        if res is None:
            table.add(qty, "n/a", f"{ref[key]:.6g}", f"{truth[key]:.6g}", "FAIL", f"spotlever: {msg}")
            continue
        s = res[key]
        # Both minimise the same sum of squares: they must find the same minimum, to 1 % of the
        # parameter's standard error; each must lie within 3 standard errors of the truth.
        agree = abs(s - ref[key]) <= 0.01 * ref_u[key]
        near = abs(s - truth[key]) <= 3 * ref_u[key]
        table.add(qty, f"{s:.6g}", f"{ref[key]:.6g}", f"{truth[key]:.6g}", "PASS" if agree and near else "FAIL",
                  f"|spotlever - scipy| = {abs(s - ref[key]) / ref_u[key]:.3f} sigma (tolerance 0.01); "
                  f"spotlever - truth = {(s - truth[key]) / ref_u[key]:+.2f} sigma")
