"""The side-by-side on one 1920x1080 H.264 clip: spotlever (`track` + `analyze`) against the OpenCV
baseline (baseline.py), in one run: position RMS error against the rendered truth, period and equilibrium
errors, and wall times, with the decoder's time alone as the floor.

The clip shows a dim ruled screen facing the camera (pure scale, 0.25 mm per px) with the spot of a
swinging, damped torsion balance: x(t) = x_eq + A exp(-t / tau) cos(2 pi t / T_d + phi), with the large
masses moved once half way (the equilibrium steps, the swing carries on from where it was), 10 frames per
second, one key frame per second (so `--every 1` can decode key frames only). Both sides are told when
the masses moved (events.csv for spotlever, the same times for the baseline) and fit each segment.
"""

import json
import math
import os
import resource
import subprocess
import sys
import time

import numpy as np

import scene
from util import read_result, read_track, run_spotlever

W, H = 1920, 1080
FPS = 10
FRAMES = int(os.environ.get("SPOTLEVER_REF_FRAMES", "3000"))
MM_PER_PX = 0.25
SIGMA, AMP, NOISE, LEVEL = 4.0, 130.0, 3.0, 90.0
T_D, TAU, A_MM, PHI = 61.3, 260.0, 38.0, 0.4
EQ_MM = (12.3, -7.9)  # equilibrium of each segment, screen mm
T_MOVE = FRAMES / FPS / 2
Y_MM = -5.0
L_M = 2.0  # mirror to screen
BAND_PX = 160  # height of the --roi band along the scale

SETUP = """# An invented apparatus for the reference clip.
[beam]
small_mass = "14.6 ± 0.05 g"
small_radius = "7.5 ± 0.05 mm"
arm = "50.0 ± 0.1 mm"
rod_mass = "10 ± 0.5 g"
[sources]
large_mass = "1.50 ± 0.01 kg"
large_radius = "32 ± 0.5 mm"
separation = "46.5 ± 0.2 mm"
[lever]
screen_distance = "2.000 ± 0.005 m"
zero = "0 ± 0.5 mm"
scale = "flat"
"""


def truth_mm(t):
    """Exact piecewise motion of a damped oscillator whose equilibrium steps at T_MOVE."""
    g, w = 1.0 / TAU, 2 * math.pi / T_D
    x = EQ_MM[0] + A_MM * np.exp(-g * t) * np.cos(w * t + PHI)
    # state at the move, relative to the new equilibrium
    u0 = EQ_MM[0] - EQ_MM[1] + A_MM * math.exp(-g * T_MOVE) * math.cos(w * T_MOVE + PHI)
    v0 = -A_MM * math.exp(-g * T_MOVE) * (g * math.cos(w * T_MOVE + PHI) + w * math.sin(w * T_MOVE + PHI))
    s = t - T_MOVE
    after = EQ_MM[1] + np.exp(-g * s) * (u0 * np.cos(w * s) + (v0 + g * u0) / w * np.sin(w * s))
    x = np.where(t >= T_MOVE, after, x)
    return x, np.full_like(t, Y_MM)


def h_mm_to_px():
    return scene.screen_to_image_h(W, H, MM_PER_PX)


def render(work):
    """Render the frames with numpy and pipe them to ffmpeg; returns (clip path, truth px Nx2, seconds)."""
    t0 = time.perf_counter()
    h = h_mm_to_px()
    bg = scene.ruled_background(W, H, h, level=LEVEL, line_depth=35.0).ravel()
    rng = np.random.default_rng(2024)
    # One long pool of read noise, sliced at a random offset per frame (fresh-looking noise at the cost
    # of one add instead of a new draw of two million normals each frame).
    pool = rng.normal(0.0, NOISE, W * H + 65536).astype(np.float32)
    t = np.arange(FRAMES) / FPS
    xm, ym = truth_mm(t)
    truth = scene.apply_h(h, np.c_[xm, ym])
    path = os.path.join(work, "clip.mp4")
    enc = subprocess.Popen(
        ["ffmpeg", "-v", "error", "-y", "-f", "rawvideo", "-pix_fmt", "gray", "-s", f"{W}x{H}",
         "-r", str(FPS), "-i", "-", "-c:v", "libx264", "-preset", "ultrafast", "-profile:v", "baseline",
         "-crf", "26", "-g", str(FPS), "-keyint_min", str(FPS), "-sc_threshold", "0",
         "-pix_fmt", "yuv420p", path],
        stdin=subprocess.PIPE,
    )
    buf = np.empty(W * H, dtype=np.float32)
    for i in range(FRAMES):
        off = int(rng.integers(0, 65536))
        np.add(bg, pool[off : off + W * H], out=buf)
        img = buf.reshape(H, W)
        scene.add_spot(img, truth[i, 0], truth[i, 1], SIGMA, AMP)
        enc.stdin.write(scene.quantise(img).tobytes())
    enc.stdin.close()
    if enc.wait() != 0:
        raise RuntimeError("ffmpeg could not encode the clip (is libx264 available?)")
    return path, truth, time.perf_counter() - t0


def timed(cmd, keep_output=False):
    t0 = time.perf_counter()
    if keep_output:
        p = subprocess.run(cmd, capture_output=True, text=True)
    else:
        p = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return p, time.perf_counter() - t0


def clocked(fn):
    """(fn(), wall seconds, CPU seconds of the child processes it ran and waited for, their own
    children included)."""
    def cpu():
        r = resource.getrusage(resource.RUSAGE_CHILDREN)
        return r.ru_utime + r.ru_stime
    c0, t0 = cpu(), time.perf_counter()
    out = fn()
    return out, time.perf_counter() - t0, cpu() - c0


def to_px(theta_rad):
    """An equilibrium angle from result.json as the x pixel of its spot on this clip's flat screen
    (foot point at the screen origin): x = L tan(2 theta)."""
    return (W - 1) / 2.0 + 1e3 * L_M * math.tan(2 * theta_rad) / MM_PER_PX


def segment_values(doc):
    """Per segment of result.json: (equilibrium in px, natural period in s or None)."""
    out = []
    for seg in doc.get("segments", []):
        eq = seg.get("equilibrium_rad") or {}
        per = seg.get("period_s") or {}
        out.append((to_px(eq["value"]) if "value" in eq else None, per.get("value")))
    return out


def natural_period():
    """2 pi / omega_0 with omega_0^2 = omega_d^2 + gamma^2 (the period the torsion constant needs)."""
    return 2 * math.pi / math.hypot(2 * math.pi / T_D, 1.0 / TAU)


def max_difference(track_a, track_b):
    """Largest difference of x or y, px, between two track files of the same frames; nan when they
    do not list the same frames or a position is missing."""
    a = {r["frame"]: (r["x_px"], r["y_px"]) for r in read_track(track_a)}
    b = {r["frame"]: (r["x_px"], r["y_px"]) for r in read_track(track_b)}
    if a.keys() != b.keys() or any(v[0] is None for v in list(a.values()) + list(b.values())):
        return math.nan
    return max(max(abs(a[k][0] - b[k][0]), abs(a[k][1] - b[k][1])) for k in a)


def decode_alone(probe, work, decoder):
    """Run the probe's "decode" operation: every frame read by spotlever's own video source with
    `decoder` and thrown away (no tracking). Returns (ok, message)."""
    req = os.path.join(work, "decode.in.json")
    with open(req, "w") as f:
        json.dump({"op": "decode", "path": os.path.join(work, "clip.mp4"), "decoder": decoder}, f)
    p = subprocess.run([probe, req, os.path.join(work, "decode.out.json")], capture_output=True, text=True)
    return p.returncode == 0, p.stderr.strip()[-300:]


def run(bin_path, py, work, table, probe="", linked=False):
    """`linked`: the spotlever build has ffmpeg's libraries linked in (feature linked-ffmpeg), so its
    default decoder works inside the process; the ffmpeg program's pipe is then timed as well."""
    os.makedirs(work, exist_ok=True)
    print(f"rendering and encoding the {W}x{H} clip ({FRAMES} frames)...", flush=True)
    clip, truth, t_render = render(work)
    print(f"  clip ready in {t_render:.1f} s", flush=True)
    setup = os.path.join(work, "setup.toml")
    with open(setup, "w") as f:
        f.write(SETUP)
    events = os.path.join(work, "events.csv")
    with open(events, "w") as f:
        f.write(f"t_s,label\n0,A\n{T_MOVE},B\n")
    eq_truth = [(W - 1) / 2.0 + e / MM_PER_PX for e in EQ_MM]

    # Decoder alone: the floor, with the options spotlever's ffmpeg source uses for this clip (8-bit
    # 4:2:0, so the Y plane is sent as decoded: showinfo without checksums for exact times, extractplanes
    # for the luma plane, passthrough timing; see src/source/ffmpeg.rs). Two floors: decoding written to
    # nowhere, and decoding delivered through a pipe to a reader that does nothing with the pictures
    # (drain.py), which is what any program reading ffmpeg's output pays before it does any work.
    # The same with key frames only, for the once-a-second case; and decoding without the timing
    # filter, for scale.
    same = ["-copyts", "-map", "0:v:0", "-an", "-sn", "-dn", "-vf", "showinfo=checksum=0,extractplanes=y", "-vsync", "passthrough",
            "-f", "rawvideo", "-pix_fmt", "gray"]
    drain = [py, os.path.join(os.path.dirname(os.path.abspath(__file__)), "drain.py"), str(W * H),
             "-nostdin", "-loglevel", "info", "-i", clip] + same

    own = linked and probe and os.path.exists(probe)

    def floors():
        """(decode wall, decode CPU, delivered wall, delivered CPU, own decoder wall), seconds; the
        last is spotlever's in-process decoder reading every frame without tracking (nan without it)."""
        _, a, ca = clocked(lambda: timed(["ffmpeg", "-nostdin", "-loglevel", "info", "-i", clip] + same + ["-y", "/dev/null"]))
        _, b, cb = clocked(lambda: timed(drain))
        c = math.nan
        if own:
            (ok_own, msg_own), c, _ = clocked(lambda: decode_alone(probe, work, "linked"))
            if not ok_own:
                print(f"  decoding alone with the linked decoder failed: {msg_own}", flush=True)
                c = math.nan
        return a, ca, b, cb, c

    floor_runs = [floors()]
    _, t_decode_key = timed(["ffmpeg", "-nostdin", "-loglevel", "info", "-skip_frame", "nokey", "-i", clip] + same
                            + ["-y", "/dev/null"])
    _, t_decode_plain = timed(["ffmpeg", "-nostdin", "-v", "error", "-i", clip, "-map", "0:v:0", "-f", "rawvideo",
                               "-pix_fmt", "gray", "-y", "/dev/null"])

    # Baseline, end to end (process start to result, as a user would experience it).
    base_json = os.path.join(work, "baseline.json")
    p, t_base = timed(keep_output=True, cmd=[py, os.path.join(os.path.dirname(os.path.abspath(__file__)), "baseline.py"), clip,
                       base_json, "--starts", str(T_MOVE)])
    base = None
    if p.returncode == 0:
        with open(base_json) as f:
            base = json.load(f)
    else:
        print(f"baseline failed: {p.stderr.strip()[-400:]}", flush=True)

    # spotlever: calibrate from exact ruling crossings, track, analyze; then track once a second.
    import cv2

    calib_png = os.path.join(work, "clip_screen.png")
    cv2.imwrite(calib_png, scene.quantise(scene.ruled_background(W, H, h_mm_to_px(), level=LEVEL, line_depth=35.0)))
    pairs = os.path.join(work, "clip_pairs.csv")
    with open(pairs, "w") as f:
        f.write("x_px,y_px,x_mm,y_mm\n")
        for xmm in range(-200, 201, 50):
            for ymm in range(-100, 101, 50):
                x, y = scene.apply_h(h_mm_to_px(), [[xmm, ymm]])[0]
                f.write(f"{x:.4f},{y:.4f},{xmm},{ymm}\n")
    calib = os.path.join(work, "clip_calibration.toml")
    ok_cal, msg_cal = run_spotlever(bin_path, ["calibrate", calib_png, "--points", pairs, "--out", calib])
    if not ok_cal:
        print(f"  calibrate failed ({msg_cal}); tracking in pixels only", flush=True)
    calib_args = ["--calib", calib] if ok_cal else []
    track = os.path.join(work, "clip_track.csv")
    # Also tracked with the ROI a user would draw on this set-up: the spot only swings along the scale,
    # so a band the picture's width and BAND_PX high around the scale's row where the spot runs
    # (taken from the screen's geometry, not from the track). ffmpeg cuts the band out before the
    # pipe, so a sixth of the bytes cross it.
    y_row = float(scene.apply_h(h_mm_to_px(), [[0.0, Y_MM]])[0][1])
    band = (0, int(round(y_row - BAND_PX / 2)), W, BAND_PX)
    track_band = os.path.join(work, "clip_track_band.csv")
    # Whole pictures and the band are tracked three times each, in turn, with the floors measured
    # (three times in all) in between, and the shortest time of each kept: the same rule on both
    # sides of an overhead, so a busy moment on a shared machine does not decide it. CPU seconds
    # (spotlever with its ffmpeg, against ffmpeg alone) are kept as well, the same way.
    # With the linked decoder, whole pictures through the ffmpeg program's pipe are timed too.
    track_pipe = os.path.join(work, "clip_track_pipe.csv")
    # The band always goes through the ffmpeg program's pipe (the way a build without linked-ffmpeg
    # reads video), where cutting it out early is what saves the time.
    via_pipe = ["--decoder", "ffmpeg"] if linked else []
    runs = {"track": [], "band": [], "pipe": []}
    ok_tr = ok_band = True
    ok_pipe = bool(linked)
    msg_tr = msg_band = msg_pipe = ""
    for k in range(3):
        if ok_tr:
            (ok_tr, msg_tr), wall, cpu = clocked(lambda: run_spotlever(
                bin_path, ["track", clip] + calib_args + ["--out", track]))
            runs["track"].append((wall, cpu))
        if ok_pipe:
            (ok_pipe, msg_pipe), wall, cpu = clocked(lambda: run_spotlever(
                bin_path, ["track", clip, "--decoder", "ffmpeg"] + calib_args + ["--out", track_pipe]))
            runs["pipe"].append((wall, cpu))
        if ok_band:
            (ok_band, msg_band), wall, cpu = clocked(lambda: run_spotlever(
                bin_path, ["track", clip] + via_pipe + calib_args + ["--roi", ",".join(map(str, band)), "--out", track_band]))
            runs["band"].append((wall, cpu))
        if k < 2:
            floor_runs.append(floors())
    t_tracks = [w for w, _ in runs["track"]]
    t_bands = [w for w, _ in runs["band"]]
    t_track, cpu_track = min(t_tracks), min(c for _, c in runs["track"])
    t_band, cpu_band = min(t_bands), min(c for _, c in runs["band"])
    t_pipes = [w for w, _ in runs["pipe"]]
    t_pipe = min(t_pipes) if t_pipes else math.nan
    cpu_pipe = min((c for _, c in runs["pipe"]), default=math.nan)
    out_dir = os.path.join(work, "clip_analysis")
    t0 = time.perf_counter()
    ok_an, msg_an = (False, "no track") if not ok_tr else run_spotlever(
        bin_path, ["analyze", track, "--setup", setup, "--events", events, "--out", out_dir])
    t_analyze = time.perf_counter() - t0
    track1 = os.path.join(work, "clip_track_every1.csv")
    t0 = time.perf_counter()
    ok_e1, msg_e1 = run_spotlever(bin_path, ["track", clip] + calib_args + ["--every", "1", "--out", track1])
    t_every = time.perf_counter() - t0
    # The smallest of each floor is used (the conservative choice for the overhead).
    t_decode, cpu_decode, t_deliver, _, t_own = (min(f[i] for f in floor_runs) for i in range(5))
    own_walls = "/".join(f"{f[4]:.1f}" for f in floor_runs)
    decode_walls = "/".join(f"{f[0]:.1f}" for f in floor_runs)
    deliver_walls = "/".join(f"{f[2]:.1f}" for f in floor_runs)

    # ---- accuracy ----
    base_rms = math.nan
    if base is not None:
        bxy = np.c_[base["x_px"], base["y_px"]][:FRAMES]
        base_rms = float(np.sqrt(np.mean(np.sum((bxy - truth[: len(bxy)]) ** 2, axis=1))))
    s_rms, lost = math.nan, FRAMES
    if ok_tr:
        est = np.full((FRAMES, 2), np.nan)
        for r in read_track(track):
            if r["frame"] < FRAMES and r["x_px"] is not None:
                est[r["frame"]] = (r["x_px"], r["y_px"])
        e = np.sum((est - truth) ** 2, axis=1)
        s_rms = float(np.sqrt(np.nanmean(e)))
        lost = int(np.isnan(e).sum())
    table.add(
        "clip: position RMS error px (H.264, every frame)",
        f"{s_rms:.4f}" if ok_tr else "n/a",
        f"{base_rms:.4f} (OpenCV baseline)",
        f"0 (CRB {scene.crb_rms_2d(AMP, NOISE):.4f} before coding)",
        "PASS" if ok_tr and s_rms <= 0.5 * base_rms and lost == 0 else "FAIL",
        f"target spotlever <= 0.5 x baseline: ratio {s_rms / base_rms:.3f}; lost {lost}"
        + ("" if ok_tr else f"; spotlever: {msg_tr}"),
    )
    # With the band the same pixels are looked at, so the positions must be the same ones.
    band_diff = max_difference(track, track_band) if ok_tr and ok_band else math.nan
    table.add(
        f"clip: track --roi band ({band[2]}x{band[3]}) vs whole pictures, max position difference px",
        f"{band_diff:.4f}" if band_diff == band_diff else "n/a",
        "0 (the same pixels, cut out by ffmpeg)",
        "0",
        # The track file keeps 4 decimals; the two runs differ by floating-point rounding at most.
        "PASS" if band_diff <= 1e-4 else "FAIL",
        "agreement: ffmpeg's cut gives the rectangle's pixels exactly"
        + ("" if ok_band else f"; spotlever: {msg_band}"),
    )
    if linked:
        # The in-process decoder and the ffmpeg program's pipe deliver the same pixels, so the
        # positions must be the same ones.
        pipe_diff = max_difference(track, track_pipe) if ok_tr and ok_pipe else math.nan
        table.add(
            "clip: in-process decoding vs the ffmpeg program's pipe, max position difference px",
            f"{pipe_diff:.4f}" if pipe_diff == pipe_diff else "n/a",
            "0 (the same decoder library, the same pixels)",
            "0",
            "PASS" if pipe_diff <= 1e-4 else "FAIL",
            "agreement: track (linked-ffmpeg build) against track --decoder ffmpeg"
            + ("" if ok_pipe else f"; spotlever: {msg_pipe}"),
        )
    doc, ok_an, msg_an = read_result(ok_an, msg_an, out_dir)
    segs = segment_values(doc) if doc else []
    bsegs = base["segments"] if base else []
    t0_truth = natural_period()
    for k in range(2):
        b_eq = bsegs[k]["equilibrium_px"] - eq_truth[k] if k < len(bsegs) else math.nan
        b_p = bsegs[k]["period_s"] - t0_truth if k < len(bsegs) else math.nan
        s_eq = segs[k][0] - eq_truth[k] if k < len(segs) and segs[k][0] is not None else None
        s_p = segs[k][1] - t0_truth if k < len(segs) and segs[k][1] is not None else None
        why = "" if ok_an else f"spotlever: {msg_an}"
        if ok_an and k >= len(segs):
            why = f"result.json has {len(segs)} segments"
        table.add(
            f"clip: segment {k + 1} equilibrium error px",
            f"{s_eq:+.4f}" if s_eq is not None else "n/a",
            f"{b_eq:+.4f} (OpenCV baseline)",
            f"0 ({eq_truth[k]:.2f} px)",
            "PASS" if s_eq is not None and abs(s_eq) <= abs(b_eq) else "FAIL",
            "target: |spotlever| <= |baseline|" + (f"; {why}" if why else ""),
        )
        table.add(
            f"clip: segment {k + 1} period error s (truth: natural period)",
            f"{s_p:+.4f}" if s_p is not None else "n/a",
            f"{b_p:+.4f} (OpenCV baseline, undamped sine)",
            f"0 ({t0_truth:.3f} s)",
            "PASS" if s_p is not None and abs(s_p) <= abs(b_p) else "FAIL",
            "target: |spotlever| <= |baseline|" + (f"; {why}" if why else ""),
        )

    # ---- speed ----
    # Speed targets are measured figures, reported as MET or MISSED; only accuracy and agreement rows
    # decide the harness's exit status (wall times depend on the machine and its load).
    r1 = t_track / t_decode - 1.0 if ok_tr else math.nan
    r1_deliver = t_track / t_deliver - 1.0 if ok_tr else math.nan
    r1_band = t_band / t_decode - 1.0 if ok_band else math.nan
    r2 = (t_track + t_analyze) / t_base if ok_tr and ok_an and base else math.nan
    r3 = t_base / t_every if ok_e1 and base else math.nan
    floors_note = f"decoding written to nowhere {t_decode:.1f} s (runs {decode_walls} s, shortest used)"
    how = "ffmpeg's libraries in the process (linked-ffmpeg build)" if linked else "the ffmpeg program through a pipe"
    if linked:
        r1_own = t_track / t_own - 1.0 if ok_tr else math.nan
        own_note = (f"; over spotlever's own in-process decoder reading every frame without tracking "
                    f"{t_own:.1f} s (runs {own_walls} s): {r1_own:+.3f}")
    else:
        own_note = (f". Most of it is the pipe: ffmpeg delivering the same pictures into a pipe to a reader that only "
                    f"empties it takes {t_deliver:.1f} s ({t_deliver / t_decode - 1:+.3f}; runs {deliver_walls} s), "
                    f"and tracking adds {r1_deliver:+.3f} to that")
    table.add(
        "speed: tracking whole pictures over decoding alone, - 1",
        f"{t_track:.1f} s track" if ok_tr else "n/a",
        f"{t_decode:.1f} s ffmpeg decode, same options",
        "-",
        "MET" if r1 <= 0.10 else "MISSED",
        f"overhead {r1:+.3f} (target <= +0.10); decoded by {how}; track runs {'/'.join(f'{t:.1f}' for t in t_tracks)} s; "
        f"{floors_note}; CPU {cpu_track:.1f} s against {cpu_decode:.1f} s ({cpu_track / cpu_decode - 1:+.3f})"
        f"{own_note}; plain decode without the timing filter {t_decode_plain:.1f} s",
    )
    if linked:
        r1_pipe = t_pipe / t_decode - 1.0 if ok_pipe else math.nan
        table.add(
            "speed: the same through the ffmpeg program's pipe (--decoder ffmpeg), - 1",
            f"{t_pipe:.1f} s track" if ok_pipe else "n/a",
            f"{t_decode:.1f} s ffmpeg decode, same options",
            "-",
            "INFO",
            f"overhead {r1_pipe:+.3f}, for comparison (the build without linked-ffmpeg decodes this way); "
            f"track runs {'/'.join(f'{t:.1f}' for t in t_pipes)} s; CPU {cpu_pipe:.1f} s; "
            f"ffmpeg delivering the pictures into a pipe to a reader that only empties it takes {t_deliver:.1f} s "
            f"({t_deliver / t_decode - 1:+.3f}; runs {deliver_walls} s)"
            + ("" if ok_pipe else f"; spotlever: {msg_pipe}"),
        )
    table.add(
        f"speed: tracking with --roi band ({band[2]}x{band[3]}) through the ffmpeg program's pipe over decoding alone, - 1",
        f"{t_band:.1f} s track" if ok_band else "n/a",
        f"{t_decode:.1f} s ffmpeg decode, same options",
        "-",
        "MET" if r1_band <= 0.10 else "MISSED",
        f"overhead {r1_band:+.3f} (target <= +0.10); track runs {'/'.join(f'{t:.1f}' for t in t_bands)} s; "
        f"CPU {cpu_band:.1f} s against {cpu_decode:.1f} s ({cpu_band / cpu_decode - 1:+.3f}); "
        f"the band is cut out inside ffmpeg, so {band[3] / H:.0%} of each picture crosses the pipe",
    )
    table.add(
        "speed: end-to-end wall time, spotlever / baseline",
        f"{t_track + t_analyze:.1f} s" if ok_tr else "n/a",
        f"{t_base:.1f} s (OpenCV baseline)",
        "-",
        "MET" if r2 <= 1.0 else "MISSED",
        f"ratio {r2:.3f} (target <= 1); track {t_track:.1f} s + analyze {t_analyze:.2f} s"
        + ("" if ok_an else f"; {msg_an}"),
    )
    table.add(
        "speed: baseline / spotlever --every 1 (1 key frame per s)",
        f"{t_every:.1f} s" if ok_e1 else "n/a",
        f"{t_base:.1f} s (OpenCV baseline, every frame)",
        "-",
        "MET" if r3 >= 4.0 else "MISSED",
        f"speed-up {r3:.2f}x (target >= 4x); for scale, one ffmpeg decoding only the key frames itself (-skip_frame nokey) {t_decode_key:.1f} s"
        + ("" if ok_e1 else f"; spotlever: {msg_e1}"),
    )
    return {"decode_s": t_decode, "deliver_s": t_deliver, "decode_key_s": t_decode_key, "decode_plain_s": t_decode_plain, "track_s": t_track, "analyze_s": t_analyze,
            "every1_s": t_every, "baseline_s": t_base, "render_s": t_render, "band_s": t_band, "cpu_decode_s": cpu_decode, "cpu_track_s": cpu_track, "cpu_band_s": cpu_band,
            "ratios": [r1, r2, r3], "overhead_band": r1_band, "own_decode_s": t_own, "pipe_s": t_pipe, "linked": bool(linked),
            "overhead_deliver": r1_deliver}


if __name__ == "__main__":
    from util import Table

    tb = Table()
    run(sys.argv[1], sys.executable, sys.argv[2], tb)
    print(tb.render())
