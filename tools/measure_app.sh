#!/usr/bin/env bash
# Measures the app figures of the field-app issue on this machine, with the release build:
#   - cold start to first frame (examples/first_frame.rs: software renderer, no display needed),
#   - peak resident memory with the demo site and a 10 000-entry dose log,
#   - the stripped release binary's size.
# Usage: tools/measure_app.sh   (after `cargo build --release`)
set -euo pipefail
cd "$(dirname "$0")/.."
bin=target/release/molefeed
[ -x "$bin" ] || cargo build --release
data=$(mktemp -d)
trap 'rm -rf "$data"' EXIT
mkdir -p "$data/Molefeed/logs"
echo "building a 10 000-entry log ..."
"$bin" log soak --file "$data/Molefeed/logs/Demo_site.doselog" --count 10000 > /dev/null
echo "cold start to first frame (software renderer, tablet size, real engine, 10 000-entry log):"
cargo build --release --example first_frame 2>/dev/null
for run in 1 2 3; do
  target/release/examples/first_frame "$data/Molefeed"
done
echo "binary: $(stat -c %s "$bin") bytes ($(( $(stat -c %s "$bin") / 1048576 )) MiB), stripped by the release profile"
