#!/usr/bin/env bash
# Starts the real Spallcast window under Xvfb with Mesa software OpenGL, saves a screenshot of each main
# view (the app saves it itself: SPALLCAST_START_VIEW + SPALLCAST_SCREENSHOT), and fails on a crashed
# window, a missing PNG, or a blank (single-colour) image.
#
# Usage: tests/window_screenshots.sh OUT_DIR -- COMMAND [ARGS...]
#   COMMAND opens the window, e.g. `spallcast --db demo.sqlite` or `open_window demo.sqlite`.
# Exit codes: 0 all views saved; 77 Xvfb not installed (skip); 1 a view failed.
# Debian packages: xvfb libgl1-mesa-dri libgl1 libegl1 libxkbcommon-x11-0 libxcursor1 libxrandr2 libxi6
set -u

out_dir=${1:?usage: window_screenshots.sh OUT_DIR -- COMMAND [ARGS...]}
shift
if [ "${1:-}" = "--" ]; then shift; fi
if [ "$#" -eq 0 ]; then
    echo "window_screenshots.sh: no command given to open the window" >&2
    exit 2
fi
if ! command -v Xvfb >/dev/null 2>&1; then
    echo "window_screenshots.sh: Xvfb is not installed (Debian: apt-get install xvfb); skipping" >&2
    exit 77
fi
mkdir -p "$out_dir"

# A free display number.
display_num=""
for n in $(seq 90 140); do
    if [ ! -e "/tmp/.X11-unix/X$n" ] && [ ! -e "/tmp/.X$n-lock" ]; then
        display_num=$n
        break
    fi
done
if [ -z "$display_num" ]; then
    echo "window_screenshots.sh: no free X display number in 90..140" >&2
    exit 1
fi

Xvfb ":$display_num" -screen 0 1920x1200x24 -nolisten tcp >"$out_dir/xvfb.log" 2>&1 &
xvfb_pid=$!
cleanup() { kill "$xvfb_pid" 2>/dev/null; wait "$xvfb_pid" 2>/dev/null; }
trap cleanup EXIT

for _ in $(seq 1 100); do
    [ -e "/tmp/.X11-unix/X$display_num" ] && break
    if ! kill -0 "$xvfb_pid" 2>/dev/null; then
        echo "window_screenshots.sh: Xvfb exited; see $out_dir/xvfb.log" >&2
        exit 1
    fi
    sleep 0.1
done

export DISPLAY=":$display_num"
export LIBGL_ALWAYS_SOFTWARE=1
unset WAYLAND_DISPLAY

failed=0
for view in changes spectra trend waveform plan; do
    png="$out_dir/$view.png"
    log="$out_dir/$view.log"
    rm -f "$png"
    SPALLCAST_START_VIEW=$view SPALLCAST_SCREENSHOT=$png timeout 300 "$@" >"$log" 2>&1
    status=$?
    if [ "$status" -ne 0 ]; then
        echo "FAIL $view: the window exited with status $status; log:" >&2
        tail -n 20 "$log" >&2
        failed=1
        continue
    fi
    if [ ! -s "$png" ] || [ "$(head -c 4 "$png" | tail -c 3)" != "PNG" ]; then
        echo "FAIL $view: no PNG written to $png" >&2
        failed=1
        continue
    fi
    # The app reports the size and the number of distinct colours of what it saved.
    colours=$(sed -n 's/.*screenshot saved to .* (\([0-9]*\)x\([0-9]*\), \([0-9]*\) distinct colours).*/\3/p' "$log" | tail -n 1)
    if [ -z "$colours" ] || [ "$colours" -lt 2 ]; then
        echo "FAIL $view: blank screenshot ($colours distinct colours) in $png" >&2
        failed=1
        continue
    fi
    echo "ok $view: $png ($colours distinct colours)"
done
exit "$failed"
