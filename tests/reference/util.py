"""Shared helpers of the reference harness: running spotlever, reading its track file, the results table
and the statistical test that decides "not less accurate"."""

import csv
import json
import math
import os
import subprocess
import time

import numpy as np


def run_spotlever(bin_path, args, timeout=900):
    """Run spotlever; returns (ok, message); the wall time is left in `run_spotlever.last_seconds`."""
    t0 = time.perf_counter()
    try:
        p = subprocess.run([bin_path] + list(args), capture_output=True, text=True, timeout=timeout)
    except Exception as e:
        return False, f"could not run {bin_path}: {e}"
    dt = time.perf_counter() - t0
    run_spotlever.last_seconds = dt
    if p.returncode != 0:
        err = (p.stderr.strip() or p.stdout.strip()).splitlines()
        return False, f"'spotlever {args[0]}' exited {p.returncode}: {err[-1] if err else ''}"
    return True, "ok"


run_spotlever.last_seconds = math.nan


def read_track(path):
    """Rows of a spotlever track file as dicts (position cells None when empty)."""
    rows = []
    with open(path, newline="") as f:
        lines = [ln for ln in f if ln.strip() and not ln.startswith("#")]
    for rec in csv.DictReader(lines):
        def num(k):
            v = rec.get(k)
            return float(v) if v not in (None, "") else None

        rows.append(
            {
                "frame": int(rec["frame"]),
                "t_s": float(rec["t_s"]),
                "x_px": num("x_px"),
                "y_px": num("y_px"),
                "x_mm": num("x_mm"),
                "y_mm": num("y_mm"),
                "status": rec.get("status", ""),
            }
        )
    return rows


def read_result(ok, msg, out_dir):
    """`result.json` of an analyze run that exited `ok`: (doc or None, ok, message)."""
    if not ok:
        return None, ok, msg
    try:
        with open(os.path.join(out_dir, "result.json")) as f:
            return json.load(f), True, msg
    except Exception as e:
        return None, False, f"cannot read result.json: {e}"


def paired_not_worse(sq_err_a, sq_err_b, k=2.0):
    """One-sided paired test on the same frames: A is not less accurate than B unless the mean of
    (A's squared error - B's squared error) exceeds k standard errors of that mean (k = 2: about 2.3 %
    chance of a false alarm for a normal mean; common practice, no source). Returns (passed, margin)."""
    d = np.asarray(sq_err_a) - np.asarray(sq_err_b)
    n = len(d)
    if n < 2:
        return False, math.nan
    se = float(np.std(d, ddof=1) / math.sqrt(n))
    return float(np.mean(d)) <= k * se, k * se


class Table:
    """The one results table: quantity, spotlever, reference, truth, verdict (+ a note line)."""

    def __init__(self):
        self.rows = []

    def add(self, quantity, ours, ref, truth, verdict, note=""):
        self.rows.append((quantity, str(ours), str(ref), str(truth), verdict, note))
        print(f"  [{verdict}] {quantity}: spotlever {ours} | reference {ref} | truth {truth}  {note}", flush=True)

    def failed(self):
        return [r for r in self.rows if r[4] not in ("PASS", "INFO", "MET", "MISSED")]

    def missed(self):
        return [r for r in self.rows if r[4] == "MISSED"]

    def render(self):
        head = ("quantity", "spotlever", "reference", "truth", "verdict")
        widths = [max(len(head[i]), *(len(r[i]) for r in self.rows)) for i in range(5)] if self.rows else [10] * 5
        widths[0] = min(widths[0], 70)
        out = []
        line = "  ".join(h.ljust(w) for h, w in zip(head, widths))
        out.append(line)
        out.append("-" * len(line))
        for r in self.rows:
            out.append("  ".join(c.ljust(w) for c, w in zip(r[:5], widths)))
            if r[5]:
                out.append("      " + r[5])
        return "\n".join(out)
