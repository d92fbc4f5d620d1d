#!/usr/bin/env bash
# Detection benchmark: how often sumpbook cries wolf on healthy units and how early it finds
# planted faults, beside the fixed-limit rule a shop keeps in a spreadsheet, on two simulated
# shops (the main one and a held-out one with other data).
#
# For each shop: `sumpbook sim-shop` writes the shop as CSV files with its truth; the real
# program imports them into a new shop file (`init`, `import` of each file) and writes
# `status --json --at DATE` for every walk-round day of the two years; `sumpbook sim-score`
# scores those status files and the fixed rule (computed from the same CSV files, read by the
# importer) against the truth and prints the figures with PASS/MISS per target.
#
# Usage: bash benches/detection.sh
# Environment: DETECTION_DIR (default target/detection), SETS (default "main held-out"; an
#              entry SET:SEED runs that set's ranges with another seed, into SET-SEED, as a
#              check that the engine holds on shops it was not developed on),
#              SUMPBOOK_BIN (default: a release build without the app, made or brought up to
#              date here in target/detection/build so that it leaves benches/run.sh's binary
#              alone), JOBS (parallel status runs, default 2).
set -euo pipefail

cd "$(dirname "$0")/.."
ROOT=$(pwd)
OUT=${DETECTION_DIR:-$ROOT/target/detection}
SETS=${SETS:-"main held-out"}
JOBS=${JOBS:-2}
mkdir -p "$OUT"

if [ -n "${SUMPBOOK_BIN:-}" ]; then
    BIN=$SUMPBOOK_BIN
else
    echo "building the release binary (cargo build --release --no-default-features) ..." >&2
    cargo build --release --no-default-features --bin sumpbook --target-dir "$OUT/build" >&2
    BIN=$OUT/build/release/sumpbook
fi

for spec in $SETS; do
    set=${spec%%:*}
    seed=()
    dir=$OUT/$set
    if [ "$spec" != "$set" ]; then
        seed=(--seed "${spec#*:}")
        dir=$OUT/$set-${spec#*:}
    fi
    rm -rf "$dir"
    mkdir -p "$dir/status"
    "$BIN" sim-shop --set "$set" "${seed[@]}" --out "$dir" >&2
    db=$dir/shop.sqlite
    "$BIN" --db "$db" init >/dev/null
    for kind in units events checks samples; do
        "$BIN" --db "$db" import "$kind" "$dir/$kind.csv" >/dev/null
    done
    echo "$set: status --json --at every week ..." >&2
    export BIN db dir
    xargs -P "$JOBS" -I{} sh -c '"$BIN" --db "$db" status --json --at {} > "$dir/status/{}.json"' \
        <"$dir/weeks.txt"
    "$BIN" sim-score --dir "$dir" | tee "$dir/report.txt"
    "$BIN" sim-score --dir "$dir" --json >"$dir/report.json"
    echo
done
