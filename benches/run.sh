#!/usr/bin/env bash
# Benchmarks against the floor (docs/engineering.md, "Performance targets"), as ratios measured in
# one run on this machine:
#   import      `sumpbook import checks` (full validation) vs the sqlite3 shell's `.import` of the
#               same CSV into a plain table of the same columns; rows/s, ratio, peak memory at
#               100 k and 1 M rows; also vs the shell putting the same CSV into the shop's
#               own checks table (import_schema*.sql), which is what the schema costs
#   status      `sumpbook status` on 1,000 units x 520 checks + 52 samples vs one full-scan
#               aggregate query over the same tables in the sqlite3 shell: a full evaluation
#               (nothing kept: the kept evaluations emptied by the shell first), a status with
#               nothing changed (every unit's evaluation kept), and one after a check added by
#               the shell, against `status --unit` of that unit alone; peak memory of a full
#               evaluation there and on 1,000 units x 2,000 checks + 200 samples (flat = 1.0)
#   start-up    app start to first frame on that shop vs on an empty shop (Xvfb)
#   report      `sumpbook report` for 10 and 100 units (linear: 10x); the demo report's size
#   server      the large shop copied onto a PostgreSQL server (a throwaway cluster of this run):
#               `sumpbook status` there vs on the file, and vs the same full-scan aggregate in
#               psql; `sumpbook import checks` of the 1 M-row CSV into the server vs psql's
#               `\copy` of the same CSV into a plain table
# No absolute time is judged, only ratios. Each timing is the median of several runs, the two
# sides of a ratio taken in turn so that they share the machine's noise.
#
# Usage: bash benches/run.sh            (builds the release binary first if it is missing)
# Environment: REPS (default 5), IMPORT_REPS (default 3; 0 leaves out the server's 1 M-row
#              import), BENCH_DIR (default target/bench), SUMPBOOK_BIN (default target/release/sumpbook), ONLY="import status startup report server",
#              REGEN=1 to make the generated shops again.
# Needs: sqlite3 (Debian package sqlite3), /usr/bin/time (package time), Xvfb (package xvfb),
#        PostgreSQL for `server` (package postgresql; skipped, saying so, without it).
set -euo pipefail

cd "$(dirname "$0")/.."
ROOT=$(pwd)
REPS=${REPS:-5}
IMPORT_REPS=${IMPORT_REPS:-3}
OUT=${BENCH_DIR:-$ROOT/target/bench}
BIN=${SUMPBOOK_BIN:-$ROOT/target/release/sumpbook}
ONLY=${ONLY:-"import status startup report server"}
mkdir -p "$OUT"
RESULTS="$OUT/results.txt"
: >"$RESULTS"

for tool in sqlite3 /usr/bin/time; do
    command -v "$tool" >/dev/null || { echo "benches/run.sh: needs $tool" >&2; exit 1; }
done
if [ ! -x "$BIN" ]; then
    echo "building the release binary (cargo build --release) ..." >&2
    cargo build --release >&2
fi

say() { echo "$@" | tee -a "$RESULTS"; }
want() { case " $ONLY " in *" $1 "*) return 0 ;; *) return 1 ;; esac; }
ns() { date +%s%N; }
# secs START END: elapsed seconds between two `ns` stamps.
secs() { awk -v a="$1" -v b="$2" 'BEGIN { printf "%.3f", (b - a) / 1e9 }'; }
# median of the numbers given as arguments
median() { printf '%s\n' "$@" | sort -g | awk '{ v[NR] = $1 } END { if (NR % 2) print v[(NR + 1) / 2]; else printf "%.3f\n", (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }
ratio() { awk -v a="$1" -v b="$2" 'BEGIN { if (b > 0) printf "%.2f", a / b; else print "n/a" }'; }
verdict() { # verdict VALUE OP LIMIT  -> PASS or MISS
    awk -v v="$1" -v l="$3" -v op="$2" 'BEGIN { ok = (op == "<=") ? (v <= l) : (v >= l); print ok ? "PASS" : "MISS" }'
}
# timed OUTFILE RSSFILE CMD...: runs CMD, stdout to OUTFILE, "peak-RSS-KiB cpu-seconds" to RSSFILE;
# prints the wall-clock seconds.
timed() {
    local out=$1 rss=$2; shift 2
    local a b
    a=$(ns)
    /usr/bin/time -f "%M %U %S" -o "$rss.raw" "$@" >"$out" 2>"$out.err" || { echo "failed: $*" >&2; cat "$out.err" >&2; exit 1; }
    b=$(ns)
    awk '{ printf "%d %.2f\n", $1, $2 + $3 }' "$rss.raw" >"$rss"
    secs "$a" "$b"
}
rss_of() { cut -d' ' -f1 "$1"; }
cpu_of() { cut -d' ' -f2 "$1"; }
fresh() { rm -f "$1" "$1-wal" "$1-shm"; }

say "sumpbook benchmarks, $(date -u '+%Y-%m-%d %H:%M UTC')"
say "machine: $(nproc) cores, $(awk '/MemTotal/ { printf "%.1f GiB", $2 / 1048576 }' /proc/meminfo), load $(cut -d' ' -f1-3 /proc/loadavg)"
say "sqlite3 shell $(sqlite3 --version | cut -d' ' -f1); binary $BIN ($(git rev-parse --short HEAD 2>/dev/null || echo '?')$(git diff --quiet 2>/dev/null || echo '+changes'))"
say "medians of $REPS runs ($IMPORT_REPS for the 1 M-row import)"
say ""

# ------------------------------------------------------------------------------------------
# Generated shops (deterministic: made once, kept in $OUT).
gen() { # gen NAME ARGS...: a shop file NAME.sqlite from `bench-shop ARGS`
    local name=$1; shift
    if [ -n "${REGEN:-}" ] || [ ! -f "$OUT/$name.sqlite" ]; then
        fresh "$OUT/$name.sqlite"
        rm -rf "$OUT/$name.csv.d"
        echo "generating $name: bench-shop $*" >&2
        "$BIN" --db "$OUT/$name.sqlite" bench-shop "$@" >&2
    fi
}

SUMMARY=()

# ------------------------------------------------------------------------------------------
if want import; then
    gen reg1m --units 1000 --checks 1000 --samples 0 --csv-dir "$OUT/reg1m.csv.d"
    gen reg100k --units 1000 --checks 100 --samples 0 --csv-dir "$OUT/reg100k.csv.d"
    say "== import: sumpbook import checks (validated) vs sqlite3 .import"
    for size in 100k 1m; do
        csv="$OUT/reg$size.csv.d/checks.csv"
        rows=$(($(wc -l <"$csv") - 1))
        reps=$REPS
        [ "$size" = 1m ] && reps=$IMPORT_REPS
        t_ours=() t_plain=() t_schema=() rss_ours=() rss_plain=() c_ours=() c_plain=() c_schema=()
        for _ in $(seq "$reps"); do
            db="$OUT/import-run.sqlite"
            fresh "$db"; cp "$OUT/reg$size.sqlite" "$db"
            t=$(timed "$OUT/import.out" "$OUT/rss" "$BIN" --db "$db" import checks "$csv")
            grep -q "$rows added" "$OUT/import.out" || { echo "import did not add $rows rows:" >&2; cat "$OUT/import.out" >&2; exit 1; }
            t_ours+=("$t"); rss_ours+=("$(rss_of "$OUT/rss")"); c_ours+=("$(cpu_of "$OUT/rss")")

            base="$OUT/import-plain.sqlite"
            fresh "$base"; sqlite3 "$base" <"$ROOT/benches/import_plain.sql"
            t=$(timed "$OUT/plain.out" "$OUT/rss" sqlite3 "$base" ".import --csv --skip 1 $csv checks_csv")
            t_plain+=("$t"); rss_plain+=("$(rss_of "$OUT/rss")"); c_plain+=("$(cpu_of "$OUT/rss")")
            [ "$(sqlite3 "$base" 'SELECT count(*) FROM checks_csv')" = "$rows" ] || { echo ".import lost rows" >&2; exit 1; }

            sch="$OUT/import-schema.sqlite"
            fresh "$sch"; cp "$OUT/reg$size.sqlite" "$sch"
            t=$(timed "$OUT/schema.out" "$OUT/rss" sqlite3 "$sch" ".read $ROOT/benches/import_schema.sql" \
                ".import --csv --skip 1 $csv checks_csv" ".read $ROOT/benches/import_schema_insert.sql")
            t_schema+=("$t"); c_schema+=("$(cpu_of "$OUT/rss")")
            [ "$(sqlite3 "$sch" 'SELECT count(*) FROM checks')" = "$rows" ] || { echo ".import into checks lost rows" >&2; exit 1; }
        done
        mo=$(median "${t_ours[@]}"); mp=$(median "${t_plain[@]}"); ms=$(median "${t_schema[@]}")
        ro=$(awk -v n="$rows" -v t="$mo" 'BEGIN { printf "%.0f", n / t }')
        rp=$(awk -v n="$rows" -v t="$mp" 'BEGIN { printf "%.0f", n / t }')
        rs=$(awk -v n="$rows" -v t="$ms" 'BEGIN { printf "%.0f", n / t }')
        mem=$(median "${rss_ours[@]}"); memp=$(median "${rss_plain[@]}")
        memmib=$(awk -v k="$mem" 'BEGIN { printf "%.1f", k / 1024 }')
        say "  $size rows ($rows): sumpbook ${mo}s = $ro rows/s, peak ${memmib} MiB"
        say "      .import into a plain table of the same columns: ${mp}s = $rp rows/s (peak $(awk -v k="$memp" 'BEGIN { printf "%.1f", k / 1024 }') MiB)"
        say "      .import + INSERT ... SELECT into the shop's checks table (its constraints and indexes): ${ms}s = $rs rows/s"
        r1=$(ratio "$ro" "$rp"); r2=$(ratio "$ro" "$rs")
        say "      CPU seconds: sumpbook $(median "${c_ours[@]}"), plain .import $(median "${c_plain[@]}"), into checks $(median "${c_schema[@]}"); CPU ratio vs plain $(ratio "$(median "${c_plain[@]}")" "$(median "${c_ours[@]}")")x"
        say "      ratio vs plain .import: ${r1}x (target >= 1.0: $(verdict "$r1" ">=" 1.0)); vs the shell into the checks table: ${r2}x"
        floor=$(awk -v s="$ms" -v p="$mp" 'BEGIN { printf "%.3f", s - p }')
        say "      the schema's own cost: SQLite moving the parsed rows from the plain table into checks (INSERT ... SELECT) takes ${floor}s = $(ratio "$floor" "$mo")x sumpbook's whole validated import"
        eval "MEM_$size=$memmib"
        if [ "$size" = 1m ]; then
            SUMMARY+=("import 1M rows      ${r1}x plain .import (target >= 1.0x) $(verdict "$r1" ">=" 1.0); ${r2}x the shell into the same table")
        fi
    done
    flat=$(awk -v a="$MEM_100k" -v b="$MEM_1m" 'BEGIN { printf "%.2f", b / a }')
    say "  peak memory 1M / 100k: ${flat}x (flat = 1.0); ${MEM_1m} MiB at 1 M rows (target <= 64): $(verdict "$MEM_1m" "<=" 64)"
    SUMMARY+=("import memory       ${MEM_100k} MiB at 100k, ${MEM_1m} MiB at 1M (target flat, <= 64 MiB) $(verdict "$MEM_1m" "<=" 64)")
    say ""
fi

# ------------------------------------------------------------------------------------------
if want status || want startup; then
    gen large --units 1000 --checks 520 --samples 52
fi
if want status; then
    say "== fleet status: sumpbook status vs one full-scan aggregate in the sqlite3 shell (1000 units x 520 checks + 52 samples)"
    db="$OUT/large.sqlite"
    forget() { sqlite3 "$1" "DELETE FROM kept_evaluations"; }
    # The unit a check is added to, and its next check time (one week after its last).
    tag=$(sqlite3 "$db" "SELECT tag FROM units ORDER BY id LIMIT 1 OFFSET 500")
    # Warm the page cache for both.
    "$BIN" --db "$db" status >/dev/null
    sqlite3 "$db" <"$ROOT/benches/fleet_scan.sql" >/dev/null
    t_ours=() t_scan=() t_group=() t_index=() rss=() c_ours=() c_scan=() t_kept=() t_one=() t_unit=() rss_kept=()
    c_kept=() c_one=() c_unit=()
    for _ in $(seq "$REPS"); do
        forget "$db"
        t_ours+=("$(timed "$OUT/status.out" "$OUT/rss" "$BIN" --db "$db" status)")
        rss+=("$(rss_of "$OUT/rss")"); c_ours+=("$(cpu_of "$OUT/rss")")
        t_scan+=("$(timed "$OUT/scan.out" "$OUT/rss2" sqlite3 "$db" ".read $ROOT/benches/fleet_scan.sql")")
        c_scan+=("$(cpu_of "$OUT/rss2")")
        t_kept+=("$(timed "$OUT/status-kept.out" "$OUT/rss2" "$BIN" --db "$db" status)")
        rss_kept+=("$(rss_of "$OUT/rss2")"); c_kept+=("$(cpu_of "$OUT/rss2")")
        cmp -s <(tail -n +2 "$OUT/status.out") <(tail -n +2 "$OUT/status-kept.out") || { echo "the kept status differs from the evaluated one" >&2; exit 1; }
        # One check more on one unit, written by another program (the shell), a week after its last.
        sqlite3 "$db" "INSERT INTO checks (unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, stroke_time_s, oil_level, filter, hours)
            SELECT unit_id, strftime('%Y-%m-%dT%H:%M:%SZ', max(taken_at), '+7 days'), reservoir_temp_c, ambient_temp_c, pressure_bar,
                   stroke_time_s, oil_level, filter, hours + 40
            FROM checks WHERE unit_id = (SELECT id FROM units WHERE tag = '$tag')
            AND taken_at = (SELECT max(taken_at) FROM checks WHERE unit_id = (SELECT id FROM units WHERE tag = '$tag'))"
        t_one+=("$(timed "$OUT/status-one.out" "$OUT/rss2" "$BIN" --db "$db" status)")
        c_one+=("$(cpu_of "$OUT/rss2")")
        t_unit+=("$(timed "$OUT/status-unit.out" "$OUT/rss2" "$BIN" --db "$db" status --unit "$tag")")
        c_unit+=("$(cpu_of "$OUT/rss2")")
        t_group+=("$(timed "$OUT/group.out" "$OUT/rss2" sqlite3 "$db" ".read $ROOT/benches/fleet_scan_grouped.sql")")
        t_index+=("$(timed "$OUT/index.out" "$OUT/rss2" sqlite3 "$db" ".read $ROOT/benches/fleet_scan_indexed.sql")")
    done
    head -2 "$OUT/status.out" | tail -1 | sed 's/^/  sumpbook: /' | tee -a "$RESULTS"
    mo=$(median "${t_ours[@]}"); ms=$(median "${t_scan[@]}"); mg=$(median "${t_group[@]}"); mi=$(median "${t_index[@]}")
    mk=$(median "${t_kept[@]}"); m1=$(median "${t_one[@]}"); mu=$(median "${t_unit[@]}")
    r=$(ratio "$mo" "$ms"); rg=$(ratio "$mo" "$mg")
    peak=$(awk -v k="$(median "${rss[@]}")" 'BEGIN { printf "%.1f", k / 1024 }')
    say "  full evaluation (nothing kept): sumpbook status ${mo}s (peak ${peak} MiB); full-scan aggregate ${ms}s; per-unit grouped scan ${mg}s"
    say "  ratio: ${r}x the full scan (target <= 2.0: $(verdict "$r" "<=" 2.0)); ${rg}x the grouped scan"
    say "  CPU seconds: sumpbook $(median "${c_ours[@]}"), full scan $(median "${c_scan[@]}"): CPU ratio $(ratio "$(median "${c_ours[@]}")" "$(median "${c_scan[@]}")")x"
    say "  the same aggregate over the rows in the time-index order: ${mi}s = $(ratio "$mi" "$ms")x the full scan"
    rk=$(ratio "$mk" "$ms")
    say "  nothing changed (every evaluation kept): ${mk}s (peak $(awk -v k="$(median "${rss_kept[@]}")" 'BEGIN { printf "%.1f", k / 1024 }') MiB) = ${rk}x the full scan (target <= 0.2: $(verdict "$rk" "<=" 0.2))"
    extra=$(awk -v a="$m1" -v b="$mu" 'BEGIN { printf "%.3f", a - b }')
    r1=$(ratio "$extra" "$ms")
    say "  after one check added by the shell to $tag: ${m1}s; that unit alone (status --unit) ${mu}s;"
    say "      the rest of the fleet ${extra}s = ${r1}x the full scan (target <= 0.05: $(verdict "$r1" "<=" 0.05))"
    # CPU seconds too: on a shared machine the wall times of runs this short follow the load.
    mcs=$(median "${c_scan[@]}")
    say "  CPU seconds (the clock's resolution is 0.01 s): nothing changed $(median "${c_kept[@]}") = $(ratio "$(median "${c_kept[@]}")" "$mcs")x the scan's $mcs; after one check $(median "${c_one[@]}"), that unit alone $(median "${c_unit[@]}")"
    SUMMARY+=("fleet status        ${r}x one full-scan aggregate (target <= 2.0x) $(verdict "$r" "<=" 2.0)")
    SUMMARY+=("status, kept        ${rk}x the full scan with nothing changed (target <= 0.2x) $(verdict "$rk" "<=" 0.2)")
    SUMMARY+=("status, one check   that unit + ${r1}x the full scan (target <= 0.05x) $(verdict "$r1" "<=" 0.05)")

    # Memory of a full evaluation as histories grow: the same fleet with 2,000 checks a unit.
    gen large2k --units 1000 --checks 2000 --samples 200
    forget "$OUT/large2k.sqlite"
    "$BIN" --db "$OUT/large2k.sqlite" status >/dev/null
    m520=() m2k=()
    for _ in 1 2; do
        forget "$db"; timed "$OUT/status.out" "$OUT/rss" "$BIN" --db "$db" status >/dev/null
        m520+=("$(rss_of "$OUT/rss")")
        forget "$OUT/large2k.sqlite"; timed "$OUT/status2k.out" "$OUT/rss" "$BIN" --db "$OUT/large2k.sqlite" status >/dev/null
        m2k+=("$(rss_of "$OUT/rss")")
    done
    a=$(awk -v k="$(median "${m520[@]}")" 'BEGIN { printf "%.1f", k / 1024 }')
    b=$(awk -v k="$(median "${m2k[@]}")" 'BEGIN { printf "%.1f", k / 1024 }')
    worst=$(awk -v a="$a" -v b="$b" 'BEGIN { print (a > b) ? a : b }')
    flat=$(ratio "$b" "$a")
    say "  peak memory of a full evaluation: ${a} MiB at 520 checks a unit, ${b} MiB at 2,000: ${flat}x (flat = 1.0; target <= 64 MiB: $(verdict "$worst" "<=" 64))"
    SUMMARY+=("status memory       ${a} MiB at 520 checks a unit, ${b} MiB at 2,000 (target flat, <= 64 MiB) $(verdict "$worst" "<=" 64)")
    say ""
fi

# ------------------------------------------------------------------------------------------
# Start-up: from exec to the first frame, through the app's own switch
# (SUMPBOOK_EXIT_AFTER_FIRST_FRAME=1: render one frame as soon as the event loop runs, then quit;
# =filled: once the start-up evaluation is in and every screen is filled). One Xvfb server
# serves every run, so its own start (about half a second, and noisy) is not in the figures.
FIRST_FRAME_VAR=SUMPBOOK_EXIT_AFTER_FIRST_FRAME
if want startup; then
    say "== start-up: app start to first frame, large shop vs empty shop (Xvfb, SLINT_BACKEND=winit-software)"
    empty="$OUT/empty.sqlite"
    [ -f "$empty" ] || "$BIN" --db "$empty" init >/dev/null
    if ! command -v Xvfb >/dev/null; then
        say "  not measured: Xvfb is missing (Debian package xvfb)"
        SUMMARY+=("start-up            not measured (no Xvfb)")
    elif ! grep -q "$FIRST_FRAME_VAR" "$BIN"; then
        say "  not measured: $BIN does not know $FIRST_FRAME_VAR (built without the gui feature?)"
        SUMMARY+=("start-up            not measured (no gui)")
    else
        disp=90
        while [ -e "/tmp/.X$disp-lock" ] || [ -e "/tmp/.X11-unix/X$disp" ]; do disp=$((disp + 1)); done
        Xvfb ":$disp" -screen 0 1280x800x24 -nolisten tcp >/dev/null 2>&1 &
        xvfb_pid=$!
        trap 'kill "$xvfb_pid" 2>/dev/null || true' EXIT
        for _ in $(seq 50); do [ -e "/tmp/.X11-unix/X$disp" ] && break; sleep 0.1; done
        startup() { # startup DB WHEN: seconds from exec to the app's exit
            local a b
            a=$(ns)
            env DISPLAY=":$disp" SLINT_BACKEND=winit-software "$FIRST_FRAME_VAR=$2" \
                "$BIN" --db "$1" >"$OUT/startup.out" 2>&1 || { cat "$OUT/startup.out" >&2; exit 1; }
            b=$(ns)
            secs "$a" "$b"
        }
        # The large shop's evaluations are kept by its first start (as by any status before).
        startup "$empty" filled >/dev/null; startup "$OUT/large.sqlite" filled >/dev/null
        t_large=() t_empty=() f_large=() f_empty=()
        for _ in $(seq $((REPS * 3))); do
            t_empty+=("$(startup "$empty" 1)")
            t_large+=("$(startup "$OUT/large.sqlite" 1)")
        done
        for _ in $(seq "$REPS"); do
            f_empty+=("$(startup "$empty" filled)")
            f_large+=("$(startup "$OUT/large.sqlite" filled)")
        done
        kill "$xvfb_pid" 2>/dev/null || true
        me=$(median "${t_empty[@]}"); ml=$(median "${t_large[@]}")
        fe=$(median "${f_empty[@]}"); fl=$(median "${f_large[@]}")
        r=$(ratio "$ml" "$me")
        say "  first frame (medians of $((REPS * 3))): empty shop ${me}s, large shop ${ml}s"
        say "  ratio: ${r}x (target <= 1.3: $(verdict "$r" "<=" 1.3))"
        rf=$(ratio "$fl" "$fe")
        say "  every screen filled (the fleet read on a worker after the first frame, its evaluations kept): empty ${fe}s, large ${fl}s = ${rf}x (target <= 1.5: $(verdict "$rf" "<=" 1.5))"
        SUMMARY+=("start-up            ${r}x the empty shop (target <= 1.3x) $(verdict "$r" "<=" 1.3)")
        SUMMARY+=("screens filled      ${rf}x the empty shop (target <= 1.5x) $(verdict "$rf" "<=" 1.5)")
    fi
    say ""
fi

# ------------------------------------------------------------------------------------------
if want report; then
    gen units10 --units 10 --checks 520 --samples 52
    gen units100 --units 100 --checks 520 --samples 52
    say "== report: sumpbook report, every unit with charts, 10 vs 100 units (520 checks + 52 samples each)"
    t10=() t100=()
    "$BIN" --db "$OUT/units10.sqlite" report --out "$OUT/r10.pdf" >/dev/null
    for _ in $(seq "$REPS"); do
        rm -f "$OUT/r10.pdf" "$OUT/r100.pdf"
        t10+=("$(timed "$OUT/r10.out" "$OUT/rss" "$BIN" --db "$OUT/units10.sqlite" report --out "$OUT/r10.pdf")")
        t100+=("$(timed "$OUT/r100.out" "$OUT/rss" "$BIN" --db "$OUT/units100.sqlite" report --out "$OUT/r100.pdf")")
    done
    m10=$(median "${t10[@]}"); m100=$(median "${t100[@]}")
    r=$(ratio "$m100" "$m10")
    per=$(awk -v a="$m10" -v b="$m100" 'BEGIN { printf "%.1f", (b - a) / 90 * 1000 }')
    fixed=$(awk -v a="$m10" -v b="$m100" 'BEGIN { printf "%.3f", a - 10 * (b - a) / 90 }')
    say "  $(cat "$OUT/r10.out")"
    say "  $(cat "$OUT/r100.out")"
    say "  10 units ${m10}s, 100 units ${m100}s: ${per} ms per unit plus ${fixed}s fixed"
    say "  ratio: ${r}x (linear = 10; target <= 10: $(verdict "$r" "<=" 10.0))"
    SUMMARY+=("report 100/10 units ${r}x (linear = 10x) $(verdict "$r" "<=" 10.0)")
    # The demo shop's report, the size a supervisor mails (fonts cut to the glyphs drawn).
    fresh "$OUT/demo.sqlite"
    "$BIN" --db "$OUT/demo.sqlite" demo >/dev/null
    rm -f "$OUT/demo.pdf"
    "$BIN" --db "$OUT/demo.sqlite" report --out "$OUT/demo.pdf" >/dev/null
    kb=$(( $(stat -c %s "$OUT/demo.pdf") / 1000 ))
    say "  the demo shop's report: ${kb} kB (target <= 200 kB: $(verdict "$kb" "<=" 200))"
    SUMMARY+=("demo report         ${kb} kB $(verdict "$kb" "<=" 200)")
    say ""
fi

# ------------------------------------------------------------------------------------------
# The shop on a PostgreSQL server, started for this run in a temporary folder on a free port
# (trust on loopback only; as root the server runs as the postgres user) and stopped at the end.
if want server; then
    PG_BIN=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1 || true)
    if [ -z "$PG_BIN" ] || ! command -v psql >/dev/null; then
        say "== server: not measured (no PostgreSQL; Debian package postgresql)"
        SUMMARY+=("server              not measured (no PostgreSQL)")
    else
        gen large --units 1000 --checks 520 --samples 52
        gen reg1m --units 1000 --checks 1000 --samples 0 --csv-dir "$OUT/reg1m.csv.d"
        PG_DIR=$(mktemp -d)
        as_pg=()
        if [ "$(id -u)" = 0 ]; then chown postgres "$PG_DIR"; as_pg=(runuser -u postgres --); fi
        PG_PORT=$(python3 -c 'import socket; s = socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1])' 2>/dev/null || echo 55433)
        "${as_pg[@]}" "$PG_BIN/initdb" -D "$PG_DIR/data" -U sumpbook --auth=trust --no-sync >/dev/null
        "${as_pg[@]}" "$PG_BIN/pg_ctl" -D "$PG_DIR/data" -l "$PG_DIR/log" -w \
            -o "-p $PG_PORT -k $PG_DIR -c listen_addresses=127.0.0.1" start >/dev/null
        stop_pg() { "${as_pg[@]}" "$PG_BIN/pg_ctl" -D "$PG_DIR/data" -m fast stop >/dev/null 2>&1 || true; rm -rf "$PG_DIR"; }
        trap 'stop_pg; [ -n "${xvfb_pid:-}" ] && kill "$xvfb_pid" 2>/dev/null; true' EXIT
        PG="postgres://sumpbook@127.0.0.1:$PG_PORT"
        pq() { PGOPTIONS="-c client_min_messages=warning" psql -q -X -v ON_ERROR_STOP=1 -h 127.0.0.1 -p "$PG_PORT" -U sumpbook "$@"; }
        fresh_db() { pq -d postgres -c "DROP DATABASE IF EXISTS $1" -c "CREATE DATABASE $1" >/dev/null; }

        say "== server: PostgreSQL $("$PG_BIN/postgres" --version | awk '{ print $3 }'), the large shop (1000 units x 520 checks + 52 samples) copied onto it"
        fresh_db large
        t=$(timed "$OUT/copy.out" "$OUT/rss" "$BIN" copy --from "$OUT/large.sqlite" --to "$PG/large")
        say "  sumpbook copy file -> server: ${t}s, every table verified"
        "$BIN" --db "$PG/large" status >/dev/null
        pq -d large -f "$ROOT/benches/fleet_scan.sql" >/dev/null
        t_srv=() t_file=() t_scan=() t_srv_kept=() t_srv_one=() t_srv_unit=() c_scan=() c_kept=() c_one=() c_unit=()
        stag=$(pq -d large -tA -c "SELECT tag FROM units ORDER BY id LIMIT 1 OFFSET 500")
        for _ in $(seq "$REPS"); do
            pq -d large -c "DELETE FROM kept_evaluations" >/dev/null
            t_srv+=("$(timed "$OUT/status-srv.out" "$OUT/rss" "$BIN" --db "$PG/large" status)")
            sqlite3 "$OUT/large.sqlite" "DELETE FROM kept_evaluations"
            t_file+=("$(timed "$OUT/status-file.out" "$OUT/rss" "$BIN" --db "$OUT/large.sqlite" status)")
            t_scan+=("$(timed "$OUT/scan-srv.out" "$OUT/rss" psql -q -X -h 127.0.0.1 -p "$PG_PORT" -U sumpbook -d large -f "$ROOT/benches/fleet_scan.sql")")
            c_scan+=("$(cpu_of "$OUT/rss")")
            t_srv_kept+=("$(timed "$OUT/status-srv-kept.out" "$OUT/rss" "$BIN" --db "$PG/large" status)")
            c_kept+=("$(cpu_of "$OUT/rss")")
            pq -d large -c "INSERT INTO checks (unit_id, taken_at, reservoir_temp_c, ambient_temp_c, pressure_bar, stroke_time_s, oil_level, filter, hours)
                SELECT unit_id, to_char(to_timestamp(max(taken_at), 'YYYY-MM-DD\"T\"HH24:MI:SS\"Z\"') + interval '7 days', 'YYYY-MM-DD\"T\"HH24:MI:SS\"Z\"'),
                       70, 20, 150, 3.0, 'ok', 'ok', NULL
                FROM checks WHERE unit_id = (SELECT id FROM units WHERE tag = '$stag') GROUP BY unit_id" >/dev/null
            t_srv_one+=("$(timed "$OUT/status-srv-one.out" "$OUT/rss" "$BIN" --db "$PG/large" status)")
            c_one+=("$(cpu_of "$OUT/rss")")
            t_srv_unit+=("$(timed "$OUT/status-srv-unit.out" "$OUT/rss" "$BIN" --db "$PG/large" status --unit "$stag")")
            c_unit+=("$(cpu_of "$OUT/rss")")
        done
        ms=$(median "${t_srv[@]}"); mf=$(median "${t_file[@]}"); mq=$(median "${t_scan[@]}")
        rf=$(ratio "$ms" "$mf"); rq=$(ratio "$ms" "$mq")
        mk=$(median "${t_srv_kept[@]}"); m1=$(median "${t_srv_one[@]}"); mu=$(median "${t_srv_unit[@]}")
        rk=$(ratio "$mk" "$mq")
        extra=$(awk -v a="$m1" -v b="$mu" 'BEGIN { printf "%.3f", a - b }')
        r1=$(ratio "$extra" "$mq")
        say "  sumpbook status on the server (nothing kept) ${ms}s, on the file ${mf}s, full-scan aggregate in psql ${mq}s"
        say "  ratio: ${rf}x the file; ${rq}x the server's own full scan"
        say "  nothing changed (every evaluation kept): ${mk}s = ${rk}x the server's full scan (target <= 0.2: $(verdict "$rk" "<=" 0.2))"
        say "  after one check added in psql to $stag: ${m1}s; that unit alone ${mu}s; the rest ${extra}s = ${r1}x (target <= 0.05: $(verdict "$r1" "<=" 0.05))"
        say "  CPU seconds of the client (the clock's resolution is 0.01 s; the server's own work is not in them): nothing changed $(median "${c_kept[@]}"), after one check $(median "${c_one[@]}"), that unit alone $(median "${c_unit[@]}"); psql's full scan $(median "${c_scan[@]}")"
        SUMMARY+=("server status       ${rf}x the file, ${rq}x one full-scan aggregate in psql")
        SUMMARY+=("server, kept        ${rk}x psql's full scan with nothing changed (target <= 0.2x) $(verdict "$rk" "<=" 0.2); one check: that unit + ${r1}x $(verdict "$r1" "<=" 0.05)")

        csv="$OUT/reg1m.csv.d/checks.csv"
        rows=$(($(wc -l <"$csv") - 1))
        if [ "$IMPORT_REPS" -gt 0 ]; then
            say "== server import: sumpbook import checks (validated) into the server vs psql \\copy into a plain table ($rows rows)"
            t_ours=() t_plain=()
            for _ in $(seq "$IMPORT_REPS"); do
                fresh_db imp
                "$BIN" copy --from "$OUT/reg1m.sqlite" --to "$PG/imp" >/dev/null
                t=$(timed "$OUT/import-srv.out" "$OUT/rss" "$BIN" --db "$PG/imp" import checks "$csv")
                grep -q "$rows added" "$OUT/import-srv.out" || { echo "server import did not add $rows rows:" >&2; cat "$OUT/import-srv.out" >&2; exit 1; }
                t_ours+=("$t")
                fresh_db plain
                pq -d plain -f "$ROOT/benches/import_plain.sql" >/dev/null
                t_plain+=("$(timed "$OUT/copy-plain.out" "$OUT/rss" psql -q -X -h 127.0.0.1 -p "$PG_PORT" -U sumpbook -d plain \
                    -c "\\copy checks_csv FROM '$csv' WITH (FORMAT csv, HEADER true)")")
                [ "$(pq -d plain -tA -c 'SELECT count(*) FROM checks_csv')" = "$rows" ] || { echo "\\copy lost rows" >&2; exit 1; }
            done
            mo=$(median "${t_ours[@]}"); mp=$(median "${t_plain[@]}")
            r=$(ratio "$mp" "$mo")
            say "  sumpbook ${mo}s = $(awk -v n="$rows" -v t="$mo" 'BEGIN { printf "%.0f", n / t }') rows/s; psql \\copy ${mp}s = $(awk -v n="$rows" -v t="$mp" 'BEGIN { printf "%.0f", n / t }') rows/s"
            say "  ratio (speed vs \\copy): ${r}x"
            SUMMARY+=("server import 1M    ${r}x psql \\copy into a plain table")
        else
            say "  the 1 M-row server import: not measured (IMPORT_REPS=0)"
        fi
        stop_pg
        trap '[ -n "${xvfb_pid:-}" ] && kill "$xvfb_pid" 2>/dev/null; true' EXIT
        say ""
    fi
fi

say "== summary"
for line in "${SUMMARY[@]}"; do say "  $line"; done
say "(written to $RESULTS)"
