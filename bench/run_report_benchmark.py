#!/usr/bin/python3
"""How long `spinward report` takes on a large site: 500 points x 30 days of 1-minute intervals.

Builds the database once (schema from storage/src/schema.cc's own migration steps, rows generated
inside SQLite), then in each round, in rotating order, times:
  - `spinward report` (HTML, the last 24 h, everything ranked and forecast),
  - the same with --format text,
  - one full scan of the raw table (SELECT count(*), avg(value) FROM trend_values): the cost the
    report avoids by reading hourly roll-ups through their index.
Prints medians over rounds and the ratios taken within each round (docs/performance.md).

usage: bench/run_report_benchmark.py BUILD_DIR [--points 500] [--days 30] [--rounds 3] [--keep DB]
"""
import argparse
import os
import pathlib
import re
import resource
import sqlite3
import statistics
import subprocess
import sys
import tempfile
import time

HOUR_NS = 3600 * 10**9
MIN_NS = 60 * 10**9


def schema_steps(source_dir):
    text = (source_dir / "storage" / "src" / "schema.cc").read_text()
    return re.findall(r'R"sql\((.*?)\)sql"', text, re.S)


def build_db(path, source_dir, points, days, end_ns):
    steps = schema_steps(source_dir)
    db = sqlite3.connect(path)
    db.execute("PRAGMA journal_mode = WAL")
    db.execute("PRAGMA synchronous = OFF")
    for step in steps:
        db.executescript(step)
    db.execute(f"PRAGMA user_version = {len(steps)}")
    start_ns = end_ns - days * 24 * HOUR_NS
    minutes = days * 24 * 60
    db.execute("BEGIN")
    for p in range(points):
        db.execute("INSERT INTO points (point_pk, point_id, created_ns) VALUES (?, ?, ?)",
                   (p + 1, f"LF-{p + 1:03d}", start_ns))
        db.execute("INSERT INTO measures (measure_pk, point_pk, name, kind, unit, lo_hz, hi_hz) "
                   "VALUES (?, ?, 'velocity', 'band', 'mm/s', 10, 1000)", (2 * p + 1, p + 1))
        db.execute("INSERT INTO measures (measure_pk, point_pk, name, kind, unit, lo_hz, hi_hz) "
                   "VALUES (?, ?, 'bearing', 'band', 'g', 1000, 10000)", (2 * p + 2, p + 1))
    # Every point steady with scatter; every 50th point's velocity rises over the last 10 days.
    # One measure at a time, in time order: the unique index grows at its end.
    for measure_pk in range(1, 2 * points + 1):
        velocity = measure_pk % 2 == 1
        point_pk = (measure_pk + 1) // 2
        rising = velocity and point_pk % 50 == 0
        db.execute(f"""
            WITH RECURSIVE minute(i) AS (SELECT 0 UNION ALL SELECT i + 1 FROM minute
                                         WHERE i < {minutes - 1})
            INSERT INTO trend_values (measure_pk, start_ns, end_ns, value, flags)
            SELECT {measure_pk}, {start_ns} + i * {MIN_NS}, {start_ns} + (i + 1) * {MIN_NS},
                   {1.6 if velocity else 0.12} + (abs(random()) % 1000) / 10000.0
                   + CASE WHEN {int(rising)} AND i > {minutes - 14400}
                          THEN (i - {minutes - 14400}) * 0.0001 ELSE 0 END,
                   0
            FROM minute""")
    add_limits(db, points, end_ns)
    for table, bucket in (("rollup_hourly", HOUR_NS), ("rollup_daily", 24 * HOUR_NS)):
        db.execute(f"""INSERT INTO {table} (measure_pk, bucket_ns, min, max, sum, count, fault_count)
            SELECT measure_pk, start_ns - (start_ns % {bucket}), min(value), max(value), total(value),
                   count(*), 0 FROM trend_values GROUP BY 1, 2""")
    db.execute("COMMIT")
    db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    db.close()


def add_limits(db, points, end_ns):
    """Every velocity measure gets alert and danger limits (2.8 and 4.5 mm/s, ISO 10816-3 group 2
    rigid B/C and C/D) through events ten days before the end, so the report forecasts all 500:
    alert then back to normal, danger then back to normal."""
    t = end_ns - 10 * 24 * HOUR_NS
    rows = []
    for p in range(1, points + 1):
        for k, (frm, to, value, limit) in enumerate((("normal", "alert", 2.9, 2.8),
                                                     ("alert", "normal", 2.5, None),
                                                     ("normal", "danger", 4.6, 4.5),
                                                     ("danger", "normal", 2.5, None))):
            rows.append((f"bench-{p}-{k}", t + k * 60 * 10**9, p, "velocity", frm, to, value, limit,
                         f"bench event {k}"))
    db.executemany("INSERT INTO alarm_events (event_id, time_ns, point_pk, measure, from_state, "
                   "to_state, value, limit_value, message) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)", rows)


def cpu_now():
    """CPU seconds of this process and its finished children (the spinward runs)."""
    own = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + kids.ru_utime + kids.ru_stime


def timed(fn):
    """(wall, cpu) seconds: on a shared, loaded machine the CPU time is the steadier figure."""
    wall, cpu = time.perf_counter(), cpu_now()
    fn()
    return time.perf_counter() - wall, cpu_now() - cpu


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("build_dir")
    ap.add_argument("--points", type=int, default=500)
    ap.add_argument("--days", type=int, default=30)
    ap.add_argument("--rounds", type=int, default=3)
    ap.add_argument("--keep", help="reuse or keep the database at this path")
    args = ap.parse_args()
    build = pathlib.Path(args.build_dir).resolve()
    binary = build / "daemon" / "spinward"
    source = pathlib.Path(__file__).resolve().parent.parent
    work = pathlib.Path(tempfile.mkdtemp(prefix="report_bench_"))
    db_path = pathlib.Path(args.keep) if args.keep else work / "large.sqlite"
    end_ns = (time.time_ns() // HOUR_NS) * HOUR_NS
    if not db_path.exists():
        t, _ = timed(lambda: build_db(str(db_path), source, args.points, args.days, end_ns))
        print(f"built {db_path} ({db_path.stat().st_size / 1e9:.2f} GB) in {t:.0f} s")
    db = sqlite3.connect(f"file:{db_path}?mode=ro", uri=True)
    rows = db.execute("SELECT count(*) FROM trend_values").fetchone()[0]
    end_ns = db.execute("SELECT max(end_ns) FROM trend_values").fetchone()[0]
    points = db.execute("SELECT count(*) FROM points").fetchone()[0]
    print(f"{points} points, {rows} raw intervals")
    to = time.strftime("%Y-%m-%dT%H:%MZ", time.gmtime(end_ns / 1e9))
    frm = time.strftime("%Y-%m-%dT%H:%MZ", time.gmtime(end_ns / 1e9 - 86400))

    def report(fmt):
        out = work / ("r.html" if fmt == "html" else "r.txt")
        cmd = [str(binary), "report", "--db", str(db_path), "--from", frm, "--to", to,
               "--format", fmt, "--out", str(out)]
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL)

    def scan():
        db.execute("SELECT count(*), avg(value) FROM trend_values").fetchone()

    contenders = {"report html": lambda: report("html"), "report text": lambda: report("text"),
                  "raw full scan": scan}
    results = {name: [] for name in contenders}
    names = list(contenders)
    for r in range(args.rounds):
        order = names[r % len(names):] + names[:r % len(names)]
        for name in order:
            results[name].append(timed(contenders[name]))
    for kind, k in (("wall", 0), ("CPU", 1)):
        print(f"\n{kind} seconds, median of {args.rounds} rounds (min..max):")
        for name, times in results.items():
            t = [x[k] for x in times]
            print(f"  {name:14s} {statistics.median(t):7.2f}  ({min(t):.2f}..{max(t):.2f})")
        ratios = [h[k] / s[k] for h, s in zip(results["report html"], results["raw full scan"])]
        print(f"  report html / one full scan of trend_values: {statistics.median(ratios):.3f} "
              f"({min(ratios):.3f}..{max(ratios):.3f})")
    with open("/proc/loadavg") as f:
        print(f"load average at the end: {f.read().split()[0]}")
    size = (work / "r.html").stat().st_size
    print(f"report size {size / 1e6:.1f} MB")
    if not args.keep:
        for p in work.iterdir():
            p.unlink()
        work.rmdir()


if __name__ == "__main__":
    sys.exit(main())
