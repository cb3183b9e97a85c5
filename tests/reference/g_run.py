"""G and its Monte Carlo uncertainty: `spotlever analyze` on a simulated four-segment run (A-B-A-B mass
positions) against an independent numpy Monte Carlo of the same measurement model (JCGM 101:2008),
fed with the deflection and period spotlever measured and the apparatus's stated uncertainties.

The run is simulated here, independently of spotlever: the exact piecewise solution of a damped
torsion oscillator whose equilibrium steps at each mass move, with G = CODATA 2018 6.67430e-11.
"""

import math
import os

import numpy as np

import analysis_refs as ar
from util import read_result, run_spotlever

G_CODATA_2018 = 6.67430e-11  # CODATA 2018 recommended value, m^3 kg^-1 s^-2
L_M, U_L_M = 2.0, 0.005  # mirror to screen, as in the setup file
T0, TAU = 480.0, 3000.0  # natural period and amplitude 1/e time, s
SEG_S = 1700.0  # time between mass moves, s
NOISE_MM = 0.05  # reading noise on the screen, mm
DT = 1.0

SETUP = """# An invented apparatus for the reference run.
[beam]
small_mass = "14.6 ± 0.05 g"
small_radius = "7.5 ± 0.05 mm"
arm = "50.0 ± 0.1 mm"
rod_mass = "10 ± 0.5 g"
rod_length = "100 ± 1 mm"
[sources]
large_mass = "1.50 ± 0.01 kg"
large_radius = "32 ± 0.5 mm"
separation = "46.5 ± 0.2 mm"
[lever]
screen_distance = "2.000 ± 0.005 m"
zero = "0 mm"
scale = "flat"
"""


def central():
    return {k: v for k, (v, _) in ar.APPARATUS.items()}


def simulate(seed=3):
    """Angle series (rad) of four segments A, B, A, B; returns t, theta, true deflection theta_G."""
    q = central()
    theta_g = float(ar.theta_for(q, G_CODATA_2018, T0))
    g = 1.0 / TAU
    w0 = 2 * math.pi / T0
    wd = math.sqrt(w0 * w0 - g * g)
    t = np.arange(0.0, 4 * SEG_S, DT)
    theta = np.empty_like(t)
    u, v = 1.5e-4, 0.0  # start offset from the first equilibrium, rad, and velocity
    signs = [1, -1, 1, -1]
    for k, sgn in enumerate(signs):
        eq = sgn * theta_g
        if k > 0:
            u += signs[k - 1] * theta_g - eq  # the equilibrium steps; angle and velocity carry on
        sel = (t >= k * SEG_S) & (t < (k + 1) * SEG_S)
        s = t[sel] - k * SEG_S
        c1, c2 = u, (v + g * u) / wd
        e = np.exp(-g * s)
        theta[sel] = eq + e * (c1 * np.cos(wd * s) + c2 * np.sin(wd * s))
        s1 = SEG_S
        e1 = math.exp(-g * s1)
        u_end = e1 * (c1 * math.cos(wd * s1) + c2 * math.sin(wd * s1))
        v_end = e1 * ((-g * c1 + wd * c2) * math.cos(wd * s1) + (-g * c2 - wd * c1) * math.sin(wd * s1))
        u, v = u_end, v_end
    return t, theta, theta_g


def write_inputs(work, t, theta, seed=4):
    rng = np.random.default_rng(seed)
    x_mm = 1e3 * L_M * np.tan(2 * theta) + rng.normal(0, NOISE_MM, len(t))
    track = os.path.join(work, "g_track.csv")
    with open(track, "w") as f:
        f.write("frame,t_s,x_px,y_px,peak,integral,width_px,saturated_px,snr,status,x_mm,y_mm\n")
        for i, (ti, xm) in enumerate(zip(t, x_mm)):
            f.write(f"{i},{ti:.6f},{960 + xm * 4:.4f},540.0000,150.00,4000.0,2.500,0,50.00,ok,{xm:.5f},0.00000\n")
    events = os.path.join(work, "g_events.csv")
    with open(events, "w") as f:
        f.write("t_s,label\n")
        for k, lab in enumerate("ABAB"):
            f.write(f"{k * SEG_S:.1f},{lab}\n")
    setup = os.path.join(work, "g_setup.toml")
    with open(setup, "w") as f:
        f.write(SETUP)
    return track, events, setup


def measured(doc, name):
    v = doc.get(name)
    if isinstance(v, dict) and "value" in v:
        return float(v["value"]), float(v.get("u", math.nan))
    return None


def numpy_mc_lever(theta_mid, theta, u_theta, period, u_period, m=200_000, seed=5):
    """Monte Carlo of G (JCGM 101:2008) over the quantities actually measured: the apparatus, the screen
    distance L, half the scale difference S between the two positions' equilibrium readings and the
    period; all independent normals. theta = (atan((x_mid + S) / L) - atan((x_mid - S) / L)) / 4 on a
    flat screen, x_mid held at the midpoint reading. S and u(S) come from theta and u(theta) at the
    nominal L (x = L tan 2 theta). Returns (mean, sd, 95 % shortest interval)."""
    x_mid = L_M * math.tan(2 * theta_mid)
    hi, lo = L_M * math.tan(2 * (theta_mid + theta)), L_M * math.tan(2 * (theta_mid - theta))
    s = (hi - lo) / 2
    ds = (L_M * math.tan(2 * (theta_mid + theta + 1e-9)) - L_M * math.tan(2 * (theta_mid - theta - 1e-9))) / 2 - s
    u_s = u_theta * ds / 1e-9
    rng = np.random.default_rng(seed)
    q = {k: rng.normal(v, u, m) for k, (v, u) in ar.APPARATUS.items()}
    ell = rng.normal(L_M, U_L_M, m)
    ss = rng.normal(s, u_s, m)
    th = (np.arctan((x_mid + ss) / ell) - np.arctan((x_mid - ss) / ell)) / 4
    g = ar.g_model(q, th, rng.normal(period, u_period, m))
    g.sort()
    k = int(0.95 * m)
    i = int(np.argmin(g[k:] - g[: m - k]))
    return float(g.mean()), float(g.std(ddof=1)), (float(g[i]), float(g[i + k]))


def run(bin_path, work, table):
    t, theta, theta_g = simulate()
    track, events, setup = write_inputs(work, t, theta)
    out = os.path.join(work, "g_analysis")
    ok, msg = run_spotlever(bin_path, ["analyze", track, "--setup", setup, "--events", events, "--out", out])
    doc, ok, msg = read_result(ok, msg, out)
    g_s = measured(doc, "G") if doc else None
    th = measured(doc, "theta_rad") if doc else None
    per = measured(doc, "period_s") if doc else None
    if g_s is None or th is None or per is None:
        why = msg if not ok else "result.json lacks G, theta_rad or period_s as {value, u}"
        table.add("G, m^3 kg^-1 s^-2 (simulated run, 4 segments)", "n/a", "-", f"{G_CODATA_2018:.5e}", "FAIL", why)
        table.add("u(G) by Monte Carlo, relative", "n/a", "-", "-", "FAIL", why)
        return
    # G against the value the run was simulated with: within 2 standard uncertainties (95 % for a
    # normal error, JCGM 100:2008 6.2/6.3).
    table.add(
        "G, m^3 kg^-1 s^-2 (simulated run, 4 segments)",
        f"{g_s[0]:.5e} ± {g_s[1]:.2e}",
        f"{float(ar.g_model(central(), th[0], per[0])):.5e} (numpy model, same theta and T)",
        f"{G_CODATA_2018:.5e} (CODATA 2018)",
        "PASS" if abs(g_s[0] - G_CODATA_2018) <= 2 * g_s[1] else "FAIL",
        f"|G - G_true| = {abs(g_s[0] - G_CODATA_2018) / g_s[1]:.2f} u (tolerance 2 u); "
        f"theta {th[0]:.4e} (truth {theta_g:.4e}), T {per[0]:.3f} s (truth T0 {T0})",
    )
    # The numpy Monte Carlo of the same measurement: apparatus, L, the half scale difference, the period.
    eqs = [seg["equilibrium_rad"]["value"] for seg in doc.get("segments", []) if seg.get("equilibrium_rad")]
    theta_mid = float(np.mean(eqs)) if eqs else 0.0
    m = 200_000
    mean, sd, ci = numpy_mc_lever(theta_mid, th[0], th[1], per[0], per[1], m=m)
    rel_np = sd / mean
    mc = doc.get("G_monte_carlo") or {}
    if "u" not in mc or "mean" not in mc:
        table.add("u(G) by Monte Carlo, relative", "n/a", f"{rel_np:.4e} (numpy MC, {m} draws)", "-", "FAIL",
                  "result.json has no G_monte_carlo {mean, u}")
        return
    draws = float(mc.get("draws") or 1e5)
    rel_s = mc["u"] / abs(mc["mean"])
    # Two Monte Carlo estimates of one standard deviation differ by their sampling errors, each about
    # sd / sqrt(2 M) relative for a near-normal output (JCGM 101:2008 7.9 discusses the adaptive choice of
    # M from this), so allow 3 x sqrt(1/(2 M1) + 1/(2 M2)).
    tol = 3 * math.sqrt(1 / (2 * m) + 1 / (2 * draws))
    table.add(
        "u(G) by Monte Carlo, relative",
        f"{rel_s:.4e}",
        f"{rel_np:.4e} (numpy MC, {m} draws)",
        "-",
        "PASS" if abs(rel_s / rel_np - 1) <= tol else "FAIL",
        f"ratio {rel_s / rel_np:.4f} (tolerance ±{tol:.4f}); spotlever {int(draws)} draws; "
        f"numpy 95 % interval [{ci[0]:.4e}, {ci[1]:.4e}], spotlever {mc.get('interval_95')}",
    )
    # The two means of the same model should agree within the sampling error of a mean, 3 sd / sqrt(M).
    tol_mean = 3 * sd * math.sqrt(1 / m + 1 / draws)
    table.add(
        "G Monte Carlo mean",
        f"{mc['mean']:.5e}",
        f"{mean:.5e} (numpy MC)",
        f"{G_CODATA_2018:.5e}",
        "PASS" if abs(mc["mean"] - mean) <= tol_mean else "FAIL",
        f"|difference| {abs(mc['mean'] - mean):.2e} (tolerance {tol_mean:.2e})",
    )
