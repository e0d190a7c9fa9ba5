#!/usr/bin/env bash
# Measures the app figures of the field-app issue on this machine, with the release build:
#   - cold start to first frame (the app quits itself after its first frame),
#   - peak resident memory with the demo site and a 10 000-entry dose log,
#   - the stripped release binary's size.
# Needs Xvfb (apt-get install xvfb) because the desktop window is a real X11 window.
# Usage: tools/measure_app.sh   (after `cargo build --release`)
set -euo pipefail
cd "$(dirname "$0")/.."
bin=target/release/molefeed
[ -x "$bin" ] || cargo build --release
data=$(mktemp -d)
trap 'rm -rf "$data"; [ -n "${xvfb:-}" ] && kill "$xvfb" 2>/dev/null || true' EXIT
mkdir -p "$data/Molefeed/logs"
echo "building a 10 000-entry log ..."
"$bin" log soak --file "$data/Molefeed/logs/Demo_site.doselog" --count 10000 > /dev/null
display=:$((50 + RANDOM % 40))
Xvfb "$display" -screen 0 1280x800x24 -nolisten tcp > /dev/null 2>&1 &
xvfb=$!
sleep 1
for run in 1 2 3; do
  XDG_DATA_HOME="$data" XDG_CONFIG_HOME="$data" DISPLAY="$display" MOLEFEED_QUIT_AFTER_FIRST_FRAME=1 \
    /usr/bin/time -f "run $run: wall %e s, peak RSS %M KiB" "$bin" 2>&1 | grep -E "first frame|run $run"
done
echo "binary: $(stat -c %s "$bin") bytes ($(( $(stat -c %s "$bin") / 1048576 )) MiB), stripped by the release profile"
