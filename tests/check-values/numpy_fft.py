"""Reference value for the spectrum's peak, from numpy.fft.

Reads damped_trace.csv (written by scipy_damped_fit.py), applies the same preparation spotlever's
spectrum uses (remove a least-squares line, Hann window 0.5 - 0.5 cos(2 pi k / (n - 1)), zero padding
to the next power of two at or above 8 n, magnitude of numpy.fft.rfft, highest bin above 1.5 cycles
per record, parabola through the logarithms of the three bins around it) and writes numpy_fft.json.
tests/analysis_check_values.rs compares.

Install the dependencies:  python3 -m venv venv && venv/bin/pip install numpy
Run from the repository root: venv/bin/python tests/check-values/numpy_fft.py
"""
import json
import os

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
data = np.loadtxt(os.path.join(HERE, "damped_trace.csv"), delimiter=",", skiprows=1)
t, y = data[:, 0], data[:, 1]
dt = float(np.median(np.diff(t)))
n = y.size
k = np.arange(n)
line = np.polyfit(k, y, 1)
v = y - np.polyval(line, k)
w = 0.5 - 0.5 * np.cos(2.0 * np.pi * k / (n - 1))
nfft = 1 << int(np.ceil(np.log2(8 * n)))
mag = np.abs(np.fft.rfft(v * w, nfft))
df = 1.0 / (nfft * dt)
kmin = max(int(np.ceil((1.5 / (n * dt)) / df)), 1)
kb = kmin + int(np.argmax(mag[kmin:-1]))
a, b, c = np.log(mag[kb - 1]), np.log(mag[kb]), np.log(mag[kb + 1])
den = a - 2 * b + c
delta = float(np.clip(0.5 * (a - c) / den, -0.5, 0.5)) if den < 0 else 0.0
out = {
    "library": "numpy.fft.rfft",
    "numpy_version": np.__version__,
    "nfft": nfft,
    "peak_bin": kb,
    "peak_hz": (kb + delta) * df,
    "magnitude_at_peak_bin": float(mag[kb]),
    "magnitude_at_bin_100": float(mag[100]),
}
with open(os.path.join(HERE, "numpy_fft.json"), "w") as f:
    json.dump(out, f, indent=2)
print(json.dumps(out, indent=2))
