#!/usr/bin/env bash
# Two layouts of the checks table compared with the sqlite3 shell alone (no sumpbook code runs):
#   rowid      the shop's table: rows by row id, the (unit, time) key and the (time, unit) index
#              as two more B-trees
#   clustered  the same columns and rules with rows kept in (unit, time) order in a table without
#              row ids (its primary key), the id a second unique key that the inserter supplies
#              (such a table numbers nothing by itself)
# each with and without the (time, unit) index; and, to say where an import's time goes, the
# shop's table without its CHECKs, without the date rule alone, without its triggers, without
# the guard against unseen replacement (schema 4) or the evaluation counter (schema 8) alone,
# and each layout bare (the key alone: no time index, trigger or CHECK). Measured, medians of
# REPS runs taken in turn:
#   import     INSERT ... SELECT of the 1 M parsed rows of reg1m's CSV (a plain table, as
#              `.import` leaves them) into an empty shop's checks table, as
#              benches/import_schema_insert.sql does (unit tags to ids, stored keys skipped);
#              the `.import` into the plain table beside it (run.sh's baseline)
#   reads      on the large shop (1,000 units x 520 checks + 52 samples) put into each layout:
#              fleet_scan.sql (storage order), fleet_scan_units.sql (per unit, as the streaming
#              fleet read), fleet_scan_indexed.sql (time order); the file's size and each
#              B-tree's (dbstat) after VACUUM; the rebuild's own time (what a migration costs)
#   status     with a sumpbook binary (SUMPBOOK_BIN, default target/release/sumpbook; skipped
#              without one): `sumpbook status` with nothing kept on the large shop in each layout
#              (the program only reads checks, so the same binary reads both), wall and CPU
#              seconds, and wall on one core (taskset -c 0), against the full scan of the shop's table
#
# Usage: bash benches/readings_layout.sh   (after `ONLY="import status" bash benches/run.sh`, or
#        any run that made target/bench/large.sqlite and target/bench/reg1m.csv.d)
# Environment: REPS (default 3), BENCH_DIR (default target/bench), LAYOUTS (default all),
#              PARTS (default "import reads status").
set -euo pipefail

cd "$(dirname "$0")/.."
ROOT=$(pwd)
REPS=${REPS:-3}
OUT=${BENCH_DIR:-$ROOT/target/bench}
LAB=$OUT/layout
LAYOUTS=${LAYOUTS:-"rowid rowid-no-time clustered clustered-no-time rowid-no-checks rowid-no-date-check rowid-no-triggers rowid-no-replace-trigger rowid-no-eval-trigger rowid-bare clustered-bare"}
PARTS=${PARTS:-"import reads status"}
part() { case " $PARTS " in *" $1 "*) return 0 ;; *) return 1 ;; esac; }
BIN=${SUMPBOOK_BIN:-$ROOT/target/release/sumpbook}
large=$OUT/large.sqlite
csv=$OUT/reg1m.csv.d/checks.csv
for f in "$large" "$csv"; do
    [ -f "$f" ] || { echo "benches/readings_layout.sh: needs $f (made by benches/run.sh)" >&2; exit 1; }
done
mkdir -p "$LAB"
RESULTS=$LAB/results.txt
: >"$RESULTS"
say() { echo "$@" | tee -a "$RESULTS"; }
ns() { date +%s%N; }
secs() { awk -v a="$1" -v b="$2" 'BEGIN { printf "%.3f", (b - a) / 1e9 }'; }
median() { printf '%s\n' "$@" | sort -g | awk '{ v[NR] = $1 } END { if (NR % 2) print v[(NR + 1) / 2]; else printf "%.3f\n", (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }
ratio() { awk -v a="$1" -v b="$2" 'BEGIN { if (b > 0) printf "%.2f", a / b; else print "n/a" }'; }
fresh() { rm -f "$1" "$1-wal" "$1-shm"; }
# timed CMD...: the wall-clock seconds of CMD (its output discarded); its CPU seconds (user +
# system) are left in $LAB/cpu for `cpu` to read: on a shared machine they vary less than the wall.
timed() {
    local a b
    a=$(ns)
    /usr/bin/time -f "%U %S" -o "$LAB/cpu.raw" "$@" >/dev/null
    b=$(ns)
    awk '{ printf "%.2f\n", $1 + $2 }' "$LAB/cpu.raw" >"$LAB/cpu"
    secs "$a" "$b"
}
cpu() { cat "$LAB/cpu"; }
# The clustered table's definition, made from the shop's own: the (unit, time) key becomes the
# primary key of a table without row ids, and the id a unique column that must be given.
clustered_table() {
    local sql
    sql=$(sqlite3 "$large" "SELECT replace(replace(sql, 'id               INTEGER PRIMARY KEY,', 'id INTEGER NOT NULL UNIQUE,'),
        'UNIQUE (unit_id, taken_at)', 'PRIMARY KEY (unit_id, taken_at)') || ', WITHOUT ROWID;' FROM sqlite_schema WHERE name = 'checks'")
    case $sql in
    *"id INTEGER NOT NULL UNIQUE,"*"PRIMARY KEY (unit_id, taken_at)"*"STRICT, WITHOUT ROWID;") echo "$sql" ;;
    *) echo "benches/readings_layout.sh: the checks table's definition changed; update clustered_table" >&2; exit 1 ;;
    esac
}
# The checks triggers of the shop, as its schema holds them.
checks_triggers() {
    sqlite3 "$large" "SELECT sql || ';' FROM sqlite_schema WHERE type = 'trigger' AND tbl_name = 'checks' ORDER BY rowid"
}
# layout FILE NAME: turns the (empty or full) checks table of FILE into layout NAME, keeping its
# rows (copied out and back in (unit, time) order: no RENAME, which would rewrite the other
# tables' triggers that name checks), its triggers, and the row ids as the id column.
layout() {
    local db=$1 name=$2
    case $name in
    rowid) ;;
    rowid-no-time) sqlite3 "$db" "DROP INDEX checks_taken_at" ;;
    rowid-no-checks) ;; # the import runs with PRAGMA ignore_check_constraints
    rowid-bare | clustered-bare) # the key alone: no time index, no trigger, no CHECK (ignored)
        layout "$db" "${name%-bare}-no-time"
        sqlite3 "$db" "SELECT 'DROP TRIGGER ' || name || ';' FROM sqlite_schema WHERE type = 'trigger' AND tbl_name = 'checks'" |
            sqlite3 "$db" ;;
    rowid-no-triggers)
        sqlite3 "$db" "SELECT 'DROP TRIGGER ' || name || ';' FROM sqlite_schema WHERE type = 'trigger' AND tbl_name = 'checks'" |
            sqlite3 "$db" ;;
    rowid-no-replace-trigger) sqlite3 "$db" "DROP TRIGGER checks_no_replace" ;;
    rowid-no-eval-trigger) sqlite3 "$db" "DROP TRIGGER checks_eval_insert" ;;
    rowid-no-date-check) # the same table with its taken_at rule reduced to NOT NULL (empty table only)
        {
            echo "PRAGMA foreign_keys = OFF; BEGIN; DROP TABLE checks;"
            sqlite3 "$large" "SELECT replace(sql, 'CHECK (strftime(''%Y-%m-%dT%H:%M:%SZ'', unixepoch(taken_at), ''unixepoch'') IS taken_at)', '') || ';'
                FROM sqlite_schema WHERE name = 'checks'"
            echo "CREATE INDEX checks_taken_at ON checks (taken_at, unit_id);"
            checks_triggers
            echo "COMMIT;"
        } | sqlite3 "$db" ;;
    clustered | clustered-no-time)
        {
            echo "PRAGMA foreign_keys = OFF; BEGIN;"
            echo "CREATE TEMP TABLE checks_copy AS SELECT * FROM checks;"
            echo "DROP TABLE checks;"
            clustered_table
            echo "INSERT INTO checks SELECT * FROM temp.checks_copy ORDER BY unit_id, taken_at;"
            echo "DROP TABLE temp.checks_copy;"
            [ "$name" = clustered ] && echo "CREATE INDEX checks_taken_at ON checks (taken_at, unit_id);"
            checks_triggers
            echo "COMMIT;"
        } | sqlite3 "$db" ;;
    *) echo "unknown layout $name" >&2; exit 1 ;;
    esac
}

say "checks table layouts, $(date -u '+%Y-%m-%d %H:%M UTC'), sqlite3 shell $(sqlite3 --version | cut -d' ' -f1)"
say "machine: $(nproc) cores, load $(cut -d' ' -f1-3 /proc/loadavg); medians of $REPS runs"

# ------------------------------------------------------------------------------------------
# The import's source: the CSV in a plain table, once; the plain `.import` timed beside.
plain=$LAB/plain.sqlite
rows=$(($(wc -l <"$csv") - 1))
# An empty shop at the large shop's schema with its register (units, machines, fluids, limits).
empty=$LAB/empty.sqlite
fresh "$empty"
{
    echo "PRAGMA journal_mode = WAL;"
    sqlite3 "$large" "SELECT sql || ';' FROM sqlite_schema WHERE sql IS NOT NULL AND name NOT LIKE 'sqlite_%'
        ORDER BY CASE type WHEN 'table' THEN 0 WHEN 'index' THEN 1 ELSE 2 END, rowid"
    echo "ATTACH '$large' AS l; BEGIN;"
    for t in sumpbook_meta settings fluids machines units limits; do echo "INSERT INTO $t SELECT * FROM l.$t;"; done
    echo "INSERT INTO eval_revisions (unit_id, rev) VALUES (0, 1);"
    echo "COMMIT; PRAGMA user_version = $(sqlite3 "$large" 'PRAGMA user_version');"
} | sqlite3 "$empty" >/dev/null

if part import; then
    t_plain=() c_plain=()
    declare -A t_imp c_imp
    for _ in $(seq "$REPS"); do
        fresh "$plain"; sqlite3 "$plain" <"$ROOT/benches/import_plain.sql"
        t_plain+=("$(timed sqlite3 "$plain" ".import --csv --skip 1 $csv checks_csv")"); c_plain+=("$(cpu)")
        [ "$(sqlite3 "$plain" 'SELECT count(*) FROM checks_csv')" = "$rows" ] || { echo ".import lost rows" >&2; exit 1; }
        for name in $LAYOUTS; do
            db=$LAB/import-$name.sqlite
            fresh "$db"; cp "$empty" "$db"
            layout "$db" "$name"
            ignore=OFF
            case $name in rowid-no-checks | *-bare) ignore=ON ;; esac
            t=$(timed sqlite3 "$db" "PRAGMA foreign_keys = ON" "PRAGMA cache_size = -16384" \
                "PRAGMA ignore_check_constraints = $ignore" "ATTACH '$plain' AS p" \
                ".read $ROOT/benches/readings_layout_insert.sql")
            [ "$(sqlite3 "$db" 'SELECT count(*) FROM checks')" = "$rows" ] || { echo "import into $name lost rows" >&2; exit 1; }
            t_imp[$name]="${t_imp[$name]:-} $t"; c_imp[$name]="${c_imp[$name]:-} $(cpu)"
        done
    done
    mp=$(median "${t_plain[@]}"); cp_=$(median "${c_plain[@]}")
    say ""
    say "== import of $rows parsed rows (INSERT ... SELECT from the plain table), against .import into the plain table ${mp}s (CPU ${cp_}s)"
    base=""
    for name in $LAYOUTS; do
        # shellcheck disable=SC2086
        m=$(median ${t_imp[$name]}); c=$(median ${c_imp[$name]})
        [ -n "$base" ] || base=$c
        say "  $(printf '%-24s' "$name") ${m}s, CPU ${c}s = $(ratio "$c" "$base")x the shop's table; with the .import first, speed $(ratio "$cp_" "$(awk -v a="$c" -v b="$cp_" 'BEGIN { print a + b }')")x the plain .import (CPU)"
    done
    for name in $LAYOUTS; do
        sz=$(stat -c %s "$LAB/import-$name.sqlite")
        say "  $(printf '%-24s' "$name") file after the import $(awk -v s="$sz" 'BEGIN { printf "%.1f", s / 1048576 }') MiB (WAL checkpointed)"
    done
fi

# ------------------------------------------------------------------------------------------
if part reads || part status; then
    say ""
    say "== reads on the large shop ($(sqlite3 "$large" 'SELECT count(*) FROM checks') checks, $(sqlite3 "$large" 'SELECT count(*) FROM samples') samples) in each layout"
    READ_LAYOUTS=""
    for name in rowid clustered clustered-no-time; do
        case " $LAYOUTS " in *" $name "*) READ_LAYOUTS="$READ_LAYOUTS $name" ;; esac
    done
    for name in $READ_LAYOUTS; do
        db=$LAB/large-$name.sqlite
        fresh "$db"
        sqlite3 "$large" "VACUUM INTO '$db'"
        sqlite3 "$db" "PRAGMA journal_mode = WAL" >/dev/null
        a=$(ns); layout "$db" "$name"; b=$(ns)
        [ "$name" = rowid ] || say "  $(printf '%-18s' "$name") rebuilt from the shop's table in $(secs "$a" "$b")s"
        sqlite3 "$db" "PRAGMA wal_checkpoint(TRUNCATE)" >/dev/null
        fresh "$db.vac"; sqlite3 "$db" "VACUUM INTO '$db.vac'"; mv "$db.vac" "$db"
        sqlite3 "$db" "PRAGMA journal_mode = WAL" >/dev/null
    done
    declare -A t_read c_read
    for _ in $(seq "$REPS"); do
        for q in fleet_scan fleet_scan_units fleet_scan_indexed; do
            for name in $READ_LAYOUTS; do
                t=$(timed sqlite3 "$LAB/large-$name.sqlite" ".read $ROOT/benches/$q.sql")
                t_read[$name.$q]="${t_read[$name.$q]:-} $t"; c_read[$name.$q]="${c_read[$name.$q]:-} $(cpu)"
            done
        done
    done
    base=""
    for name in $READ_LAYOUTS; do
        # shellcheck disable=SC2086
        s=$(median ${t_read[$name.fleet_scan]}); u=$(median ${t_read[$name.fleet_scan_units]}); i=$(median ${t_read[$name.fleet_scan_indexed]})
        # shellcheck disable=SC2086
        cs=$(median ${c_read[$name.fleet_scan]}); cu=$(median ${c_read[$name.fleet_scan_units]}); ci=$(median ${c_read[$name.fleet_scan_indexed]})
        [ -n "$base" ] || base=$s
        say "  $(printf '%-18s' "$name") full scan ${s}s ($(ratio "$s" "$base")x the shop's; CPU ${cs}s); per unit ${u}s = $(ratio "$u" "$base")x the shop's full scan (CPU ${cu}s); time order ${i}s = $(ratio "$i" "$base")x (CPU ${ci}s)"
    done
    for name in $READ_LAYOUTS; do
        db=$LAB/large-$name.sqlite
        sz=$(stat -c %s "$db")
        say "  $(printf '%-18s' "$name") file $(awk -v s="$sz" 'BEGIN { printf "%.1f", s / 1048576 }') MiB; checks B-trees (MiB): $(sqlite3 "$db" "SELECT group_concat(name || ' ' || printf('%.1f', mib), ', ') FROM (SELECT name, sum(pgsize) / 1048576.0 AS mib FROM dbstat WHERE name = 'checks' OR name LIKE '%checks%' GROUP BY name ORDER BY name)")"
    done
fi

# ------------------------------------------------------------------------------------------
if part status && [ -x "$BIN" ]; then
    say ""
    say "== sumpbook status, nothing kept, on the large shop in each layout ($BIN)"
    declare -A t_st c_st t_one
    first=""
    for name in $READ_LAYOUTS; do
        "$BIN" --db "$LAB/large-$name.sqlite" status >"$LAB/status-$name.out"
        if [ -z "$first" ]; then first=$name; else
            cmp -s <(tail -n +2 "$LAB/status-$first.out") <(tail -n +2 "$LAB/status-$name.out") ||
                { echo "status differs between $first and $name" >&2; exit 1; }
        fi
    done
    for _ in $(seq "$REPS"); do
        for name in $READ_LAYOUTS; do
            db=$LAB/large-$name.sqlite
            sqlite3 "$db" "DELETE FROM kept_evaluations"
            t_st[$name]="${t_st[$name]:-} $(timed "$BIN" --db "$db" status)"
            c_st[$name]="${c_st[$name]:-} $(cpu)"
            sqlite3 "$db" "DELETE FROM kept_evaluations"
            t_one[$name]="${t_one[$name]:-} $(timed taskset -c 0 "$BIN" --db "$db" status)"
        done
    done
    # shellcheck disable=SC2086
    ws=$(median ${t_read[rowid.fleet_scan]}); cs=$(median ${c_read[rowid.fleet_scan]})
    for name in $READ_LAYOUTS; do
        # shellcheck disable=SC2086
        w=$(median ${t_st[$name]}); c=$(median ${c_st[$name]}); o=$(median ${t_one[$name]})
        say "  $(printf '%-18s' "$name") ${w}s, CPU ${c}s = $(ratio "$c" "$cs")x the CPU of the shop's full scan; on one core ${o}s = $(ratio "$o" "$ws")x its wall"
    done
fi
say "(written to $RESULTS)"
