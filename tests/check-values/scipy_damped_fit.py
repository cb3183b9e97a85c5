"""Reference values for the damped-sinusoid fit, from scipy.optimize.curve_fit.

Writes damped_trace.csv (a damped sinusoid with drift and seeded Gaussian noise, generated here with
numpy) and scipy_damped_fit.json (curve_fit's parameters and their standard uncertainties from
pcov with absolute_sigma=False, i.e. (J^T J)^-1 s^2). tests/analysis_check_values.rs fits the same
trace with spotlever and compares.

Install the dependencies:  python3 -m venv venv && venv/bin/pip install numpy scipy
Run from the repository root: venv/bin/python tests/check-values/scipy_damped_fit.py
"""
import json
import os

import numpy as np
import scipy
from scipy.optimize import curve_fit

HERE = os.path.dirname(os.path.abspath(__file__))
T0, TMID = 0.0, 1000.0


def model(t, x_eq, a, b, gamma, omega, c):
    s = t - T0
    return x_eq + np.exp(-gamma * s) * (a * np.cos(omega * s) + b * np.sin(omega * s)) + c * (t - TMID)


truth = [1.5e-3, 2.0e-3, -1.0e-3, 1.0 / 1800.0, 2.0 * np.pi / 480.0, 2e-9]
t = np.arange(0.0, 2000.0 + 1e-9, 2.0)
rng = np.random.default_rng(20181)
y = model(t, *truth) + rng.normal(0.0, 4e-5, t.size)
np.savetxt(os.path.join(HERE, "damped_trace.csv"), np.column_stack([t, y]), delimiter=",",
           header="t_s,theta_rad", comments="", fmt="%.17g")

# Start 1 % off in frequency, amplitudes from the truth's neighbourhood.
p0 = [1.4e-3, 1.9e-3, -0.9e-3, 1.0 / 1500.0, truth[4] * 1.01, 0.0]
popt, pcov = curve_fit(model, t, y, p0=p0, absolute_sigma=False, maxfev=20000, xtol=1e-14, ftol=1e-14)
out = {
    "library": "scipy.optimize.curve_fit",
    "scipy_version": scipy.__version__,
    "numpy_version": np.__version__,
    "t0": T0,
    "t_mid": TMID,
    "params": [float(v) for v in popt],
    "u": [float(v) for v in np.sqrt(np.diag(pcov))],
    "order": ["x_eq", "a", "b", "gamma", "omega_d", "c"],
}
with open(os.path.join(HERE, "scipy_damped_fit.json"), "w") as f:
    json.dump(out, f, indent=2)
print(json.dumps(out, indent=2))
