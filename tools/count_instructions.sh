#!/bin/sh
# Instructions per call of issue 15's timed operations (examples/hot_paths.rs), counted by
# valgrind's callgrind: deterministic, so a before/after comparison holds on a loaded machine
# where wall-clock times vary by a factor of three. Each operation runs COUNT+1 times and once;
# the difference divided by COUNT is one call without start-up and one-time parsing.
#
#     tools/count_instructions.sh [COUNT]            (default 20)
#
# Uses $CARGO_TARGET_DIR (else ./target) and builds the example first.
set -eu
count=${1:-20}
target=${CARGO_TARGET_DIR:-target}
cargo build --quiet --release --no-default-features --example hot_paths
bin="$target/release/examples/hot_paths"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
irs() {
    valgrind --tool=callgrind --callgrind-out-file="$tmp/out" "$bin" "$1" "$2" 2>"$tmp/err" >/dev/null
    sed -n 's/.*Collected : //p' "$tmp/err"
}
for op in ph-after dose-for-ph water-from-readings batch-line two-targets-alkalinity two-targets-lsi path-with-ranges; do
    one=$(irs "$op" 1)
    many=$(irs "$op" $((count + 1)))
    echo "$op" "$one" "$many" "$count" | awk '{ printf "%-24s %12.1f k instructions per call\n", $1, ($3 - $2) / $4 / 1000 }'
done
