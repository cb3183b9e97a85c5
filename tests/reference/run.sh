#!/usr/bin/env bash
# spotlever against reference libraries, accuracy and speed, in one run.
#
#   bash tests/reference/run.sh            # everything (three to four minutes on 2 cores)
#   SPOTLEVER_REF_SKIP_CLIP=1 bash ...     # without the 1080p clip side-by-side
#   SPOTLEVER_REF_FRAMES=1200 bash ...     # a shorter clip
#
# Creates a virtual environment at tests/reference/.venv with numpy, scipy and opencv-python-headless
# (and trackpy when it installs), builds spotlever in release, makes the inputs, runs spotlever and the
# references on them, prints one table and exits non-zero when a check fails.
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
root="$(cd "$here/../.." && pwd)"
venv="$here/.venv"
work="${SPOTLEVER_REF_WORK:-$root/target/reference}"

say() { printf '\n== %s\n' "$*"; }

if ! command -v ffmpeg >/dev/null 2>&1; then
    if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
        say "installing ffmpeg (Debian package)"
        apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq ffmpeg >/dev/null
    else
        echo "error: the ffmpeg program is needed (Debian/Ubuntu: sudo apt-get install ffmpeg)" >&2
        exit 2
    fi
fi

if ! command -v python3 >/dev/null 2>&1; then
    echo "error: python3 is needed (Debian/Ubuntu: sudo apt-get install python3 python3-venv)" >&2
    exit 2
fi

if [ ! -x "$venv/bin/python" ]; then
    say "creating the virtual environment $venv"
    if ! python3 -m venv "$venv" 2>/dev/null; then
        if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
            apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq python3-venv >/dev/null
            python3 -m venv "$venv"
        else
            echo "error: python3 -m venv failed (Debian/Ubuntu: sudo apt-get install python3-venv)" >&2
            exit 2
        fi
    fi
fi
py="$venv/bin/python"
say "installing the reference libraries"
"$py" -m pip install -q --disable-pip-version-check numpy scipy opencv-python-headless
if ! "$py" -m pip install -q --disable-pip-version-check trackpy; then
    echo "SKIP trackpy: it did not install; its comparisons are left out of the table" >&2
fi
"$py" - <<'EOF'
import numpy, scipy, cv2
try:
    import trackpy
    tp = trackpy.__version__
except Exception as e:
    tp = f"not available ({e})"
print(f"numpy {numpy.__version__}, scipy {scipy.__version__}, opencv {cv2.__version__}, trackpy {tp}")
EOF

# ffmpeg's libraries linked in (the linked-ffmpeg feature) decode without a pipe; they need their
# development packages, pkg-config and libclang. Installed here when possible, else left out loudly
# (the clip is then decoded by the ffmpeg program through a pipe).
libs="libavcodec libavformat libavutil libswscale"
have_libs() { command -v pkg-config >/dev/null 2>&1 && pkg-config --exists $libs; }
if ! have_libs && [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
    say "installing ffmpeg's development libraries (Debian packages)"
    apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq \
        libavcodec-dev libavformat-dev libavutil-dev libswscale-dev libclang-dev pkg-config >/dev/null || true
fi
features=()
if have_libs; then
    features=(--features linked-ffmpeg)
    export SPOTLEVER_REF_LINKED=1
elif [ "${SPOTLEVER_REQUIRE_FFMPEG:-0}" = 1 ]; then
    echo "error: ffmpeg's development libraries are missing but SPOTLEVER_REQUIRE_FFMPEG=1" >&2
    exit 2
else
    echo "SKIP linked-ffmpeg: pkg-config finds no $libs (Debian/Ubuntu: sudo apt-get install libavcodec-dev libavformat-dev libavutil-dev libswscale-dev libclang-dev pkg-config); the clip is decoded through the ffmpeg program's pipe" >&2
    export SPOTLEVER_REF_LINKED=0
fi

say "building spotlever (release) and the probe example ${features[*]}"
cd "$root"
cargo build --release --quiet "${features[@]}" --bin spotlever --example reference_probe
bin="$root/target/release/spotlever"
probe="$root/target/release/examples/reference_probe"

rm -rf "$work"
mkdir -p "$work"
args=(--bin "$bin" --probe "$probe" --work "$work")
if [ "${SPOTLEVER_REF_SKIP_CLIP:-0}" = 1 ]; then
    args+=(--skip-clip)
fi
say "running the comparisons (work folder $work)"
"$py" "$here/harness.py" "${args[@]}"
