"""The reference harness: runs every comparison on inputs it makes, prints the one table and exits
non-zero when spotlever is less accurate than a reference beyond the stated tolerance, when the two
disagree where they should agree, or when a speed target is missed.

Usage: python harness.py --bin target/release/spotlever [--probe target/release/examples/reference_probe]
                         --work DIR [--skip-clip]
"""

import argparse
import os
import sys
import time


sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import analysis_refs  # noqa: E402
import clip  # noqa: E402
import g_run  # noqa: E402
import homography  # noqa: E402
import scene  # noqa: E402
import spots  # noqa: E402
from util import Table  # noqa: E402


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--bin", required=True)
    ap.add_argument("--probe", default="")
    ap.add_argument("--work", required=True)
    ap.add_argument("--skip-clip", action="store_true")
    a = ap.parse_args()
    os.makedirs(a.work, exist_ok=True)
    t0 = time.perf_counter()
    table = Table()

    # A ruled screen seen at an angle, shared by the spot sets and the calibration check.
    h = scene.screen_to_image_h(spots.WIDTH, spots.HEIGHT, 0.4, shear=0.03, persp=(2.0e-4, -1.5e-4))
    bg = scene.ruled_background(spots.WIDTH, spots.HEIGHT, h, level=spots.SCREEN_LEVEL, line_depth=spots.LINE_DEPTH)

    print("== spot positions on synthesized frames", flush=True)
    spots.run(a.bin, a.work, h, None, table)
    print("== homography", flush=True)
    homography.run(a.bin, a.work, h, spots.WIDTH, spots.HEIGHT, bg, table)
    print("== spectrum, damped fit, Monte Carlo of G", flush=True)
    analysis_refs.run(a.bin, a.probe, a.work, table)
    g_run.run(a.bin, a.work, table)
    speed = None
    if not a.skip_clip:
        print("== side by side on the H.264 clip", flush=True)
        linked = os.environ.get("SPOTLEVER_REF_LINKED") == "1"
        speed = clip.run(a.bin, sys.executable, os.path.join(a.work, "clip"), table, a.probe, linked)

    print()
    print("spotlever against reference libraries (numpy, scipy, opencv-python-headless, trackpy)")
    print(table.render())
    if speed:
        r1, r2, r3 = speed["ratios"]
        print()
        print(
            f"speed on the clip: decode alone {speed['decode_s']:.1f} s, delivered through a pipe "
            f"{speed['deliver_s']:.1f} s; track {speed['track_s']:.1f} s (overhead {r1:+.3f} over decode alone, "
            f"{speed['overhead_deliver']:+.3f} over delivered), track with the --roi band {speed['band_s']:.1f} s "
            f"(overhead {speed['overhead_band']:+.3f}); analyze {speed['analyze_s']:.2f} s, baseline {speed['baseline_s']:.1f} s "
            f"(end-to-end ratio {r2:.3f}), --every 1 {speed['every1_s']:.1f} s (speed-up {r3:.2f}x), "
            f"key-frame decode alone {speed['decode_key_s']:.1f} s; rendering {speed['render_s']:.1f} s"
        )
        if speed["linked"]:
            print(
                f"decoded in-process (linked-ffmpeg build): the same decoder reading every frame without tracking "
                f"{speed['own_decode_s']:.1f} s; track through the ffmpeg program's pipe instead {speed['pipe_s']:.1f} s"
            )
        else:
            print("decoded by the ffmpeg program through a pipe (this build has no linked-ffmpeg feature)")
    bad = table.failed()
    print(f"\nreference harness took {time.perf_counter() - t0:.0f} s")
    targets = [r for r in table.rows if r[4] in ("MET", "MISSED")]
    if targets:
        print(f"speed targets: {len(targets) - len(table.missed())} met, {len(table.missed())} missed (reported, not failing)")
    checks = [r for r in table.rows if r[4] not in ("MET", "MISSED", "INFO")]
    print(f"{len(checks) - len(bad)} passed, {len(bad)} failed")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
