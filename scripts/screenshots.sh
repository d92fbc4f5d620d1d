#!/usr/bin/env bash
# Writes a PNG of every screen of the desktop app, running it under Xvfb with the software
# renderer on a fresh demo shop. Usage: scripts/screenshots.sh [OUT_DIR] (default: screenshots/)
#
# The app steps through its screens itself when SUMPBOOK_SCREENSHOTS names a folder (see
# src/gui/screenshots.rs) and saves each window snapshot as PPM; ImageMagick turns them into PNG.
set -euo pipefail

here="$(cd "$(dirname "$0")/.." && pwd)"
out="${1:-$here/screenshots}"
mkdir -p "$out"

need() { command -v "$1" >/dev/null 2>&1; }
if ! need xvfb-run || ! need convert; then
    echo "installing xvfb and imagemagick (apt-get)…" >&2
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq xvfb xauth imagemagick >/dev/null
fi

work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT

# SUMPBOOK_PROFILE=debug uses the (faster to build) debug binary. The binary is copied out
# of target/ at once: a build without the app (--no-default-features) writes the same path.
profile="${SUMPBOOK_PROFILE:-release}"
bin="$work/sumpbook"
for attempt in 1 2 3; do
    if [ "$profile" = release ]; then
        cargo build --release --quiet --manifest-path "$here/Cargo.toml"
    else
        cargo build --quiet --manifest-path "$here/Cargo.toml"
    fi
    cp "$here/target/$profile/sumpbook" "$bin"
    if grep -q SUMPBOOK_SCREENSHOTS "$bin"; then break; fi
    [ "$attempt" = 3 ] && { echo "the built sumpbook has no desktop app (built without the gui feature?)" >&2; exit 1; }
done
db="$work/demo-shop.sqlite"
"$bin" --db "$db" demo >/dev/null

# A lab file with two bad rows, so the import screen shows a preview with its problems.
unit="$("$bin" --db "$db" status --json | sed -n 's/.*"unit": *"\([^"]*\)".*/\1/p' | head -n1)"
cat >"$work/lab-results.csv" <<CSV
unit_tag,sampled_at,kv40_cst,count_4um_per_ml,count_6um_per_ml,count_14um_per_ml,water_ppm,lab_ref
$unit,2020-02-03,45.9,2100,560,38,140,LAB-0201
$unit,2020-02-10,46.3,900,2400,40,150,LAB-0202
$unit,2020-02-17,46.1,1800,420,31,-5,LAB-0203
CSV

# A walk-round file with the oil temperature of the worst unit typed with its decimal point
# slipped, a day after its last check: imported, kept and questioned, so the unit page shows
# the mark and the Confirm action.
last="$("$bin" --db "$db" export checks | grep "^$unit," | tail -n1)"
slipped="$(echo "$last" | awk -F, '{ cmd = "date -u -d \"" $2 " + 1 day\" +%Y-%m-%dT%H:%M:%SZ"; cmd | getline t; close(cmd);
    printf "%s,%s,%s,%s,%s,%s,screenshots\n", $1, t, $3 / 10, $4, $5, $6 }')"
printf 'unit_tag,taken_at,reservoir_temp_c,ambient_temp_c,pressure_bar,stroke_time_s,by\n%s\n' "$slipped" >"$work/slipped.csv"
"$bin" --db "$db" import checks "$work/slipped.csv" >&2

rm -f "$out"/*.ppm "$out"/*.png
SLINT_BACKEND=winit-software SUMPBOOK_SCREENSHOTS="$out" SUMPBOOK_SCREENSHOT_IMPORT="$work/lab-results.csv" \
    xvfb-run -a -s "-screen 0 1280x800x24" "$bin" --db "$db" 2> >(grep -v "xdg\|/run/user" >&2 || true)

for f in "$out"/*.ppm; do
    convert "$f" "${f%.ppm}.png"
    rm "$f"
done
ls "$out"/*.png
