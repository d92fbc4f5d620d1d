#!/usr/bin/env python3
"""What giving a new reading its id costs a shop file (store::Store::reading_insert).

Inserts N checks one statement at a time, prepared once, in one transaction (as an import
writes them), into copies of a shop file, with SQLite choosing the id (the highest held plus
one) and with the store's statement (one above every id the table holds and every id the edit
history names for it), in turn, REPS times; prints each run and the medians. Uses the sqlite3
module of the Python standard library (its own SQLite; the shell's version is printed).

Usage: python3 benches/reading_ids.py SHOP.sqlite [N] [REPS]
       (SHOP.sqlite: a shop made by `sumpbook --db SHOP.sqlite demo`; default N 100000, REPS 3)
"""
import datetime
import os
import shutil
import sqlite3
import statistics
import sys
import tempfile
import time

shop = sys.argv[1]
n = int(sys.argv[2]) if len(sys.argv) > 2 else 100_000
reps = int(sys.argv[3]) if len(sys.argv) > 3 else 3
start = datetime.datetime(2030, 1, 1)
rows = [
    (1 + i % 11, (start + datetime.timedelta(minutes=i)).strftime("%Y-%m-%dT%H:%M:%SZ"))
    for i in range(n)
]
statements = {
    "sqlite's id": "INSERT INTO checks (unit_id, taken_at, pressure_bar, taken_by) "
    "VALUES (?, ?, 100, 'B')",
    "store's id": "INSERT INTO checks (id, unit_id, taken_at, pressure_bar, taken_by) VALUES ("
    "(SELECT max(ifnull((SELECT max(id) FROM checks), 0), "
    "ifnull((SELECT max(row_id) FROM edit_log WHERE table_name = 'checks'), 0)) + 1), "
    "?, ?, 100, 'B')",
}
times = {k: [] for k in statements}
with tempfile.TemporaryDirectory() as tmp:
    for _ in range(reps):
        for name, sql in statements.items():
            db = os.path.join(tmp, "copy.sqlite")
            for ext in ("", "-wal", "-shm"):
                if os.path.exists(db + ext):
                    os.remove(db + ext)
            shutil.copy(shop, db)
            c = sqlite3.connect(db, isolation_level=None)
            c.execute("PRAGMA foreign_keys = ON")
            c.execute("BEGIN")
            t = time.perf_counter()
            for row in rows:
                c.execute(sql, row)
            c.execute("COMMIT")
            times[name].append(time.perf_counter() - t)
            c.close()
            print(f"{name}: {times[name][-1]:.2f} s")
print(f"SQLite {sqlite3.sqlite_version}, {n} checks")
for name, ts in times.items():
    print(f"median {name}: {statistics.median(ts):.2f} s")
