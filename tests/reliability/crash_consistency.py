#!/usr/bin/python3
"""Crash consistency of `spinward run` under load: kill -9 at random moments, N times (default 50).

Each round starts the daemon on the same database, feeds it over loopback TCP with `spinward feed`
(one point, 25.6 kHz, faster than real time), and at a random moment between 0.3 s and 3 s reads
the number of committed trend rows through a second SQLite connection (under WAL a reader sees
exactly the committed transactions: SQLite documentation, "Write-Ahead Logging") and then sends
SIGKILL. After every kill it counts:
  corrupt databases   PRAGMA integrity_check is not the single row "ok", or the next start fails;
  lost rows           rows committed before the kill and missing after it (SQLite WAL with
                      synchronous=FULL makes a commit durable; a process kill cannot undo it);
  wrong alarm states  once the velocity alarm has latched danger (its limits are far below any
                      signal: this script's choice, no source), it must stay danger and latched,
                      with exactly one normal -> danger event (0 would be a lost event, 2 a
                      re-raised alarm after restart).
Prints the figures and exits non-zero if any is not 0. docs/reliability.md has the command.

usage: /usr/bin/python3 tests/reliability/crash_consistency.py [--rounds N] [--binary PATH]
       [--seed S]
"""
import argparse
import json
import os
import random
import signal
import sqlite3
import subprocess
import sys
import tempfile
import time

SITE = """site:
  name: Larkfield booster pump station (crash consistency)
machines:
  - {{id: P-101, name: Booster pump 1, kind: pump, speed_rpm: 1480}}
profiles:
  - {{id: standard, segment: 1280, overlap: 50%, interval_s: 0.425}}
points:
  - id: P101-DE-H
    machine: P-101
    location: drive-end bearing
    sensor: LK-P101-DE-H
    sensitivity: 100 mV/g
    sample_rate_hz: 25600
    profile: standard
    bands:
      - {{name: velocity, lo_hz: 10, hi_hz: 1000, quantity: velocity, units: mm/s}}
    alarms:
      - {{measure: velocity, alert: 0.0001, danger: 0.0002, latching: true}}
listeners:
  - {{type: tcp, address: 127.0.0.1, port: 0}}
storage:
  path: "{db}"
logging:
  level: info
"""


def wait_for(predicate, timeout=30.0):
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        if predicate():
            return True
        time.sleep(0.01)
    return predicate()


def committed_rows(db):
    if not os.path.exists(db):
        return 0
    try:
        with sqlite3.connect(f"file:{db}?mode=ro", uri=True, timeout=5) as c:
            return c.execute("SELECT count(*) FROM trend_values").fetchone()[0]
    except sqlite3.OperationalError:
        return 0  # the schema is not there yet: nothing committed


def facts(db):
    c = sqlite3.connect(db, timeout=5)
    try:
        check = [r[0] for r in c.execute("PRAGMA integrity_check")]
        rows = c.execute("SELECT count(*) FROM trend_values").fetchone()[0]
        raises = c.execute("SELECT count(*) FROM alarm_events WHERE measure='velocity' "
                           "AND from_state='normal' AND to_state='danger'").fetchone()[0]
        state = c.execute("SELECT state, latched FROM alarm_state WHERE measure='velocity'"
                          ).fetchone()
    finally:
        c.close()
    return check == ["ok"], rows, raises, state


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    root = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
    parser.add_argument("--rounds", type=int, default=50)
    parser.add_argument("--binary", default=os.path.join(root, "build-test", "daemon", "spinward"))
    parser.add_argument("--seed", type=int, default=random.SystemRandom().randrange(1 << 31))
    args = parser.parse_args()
    rng = random.Random(args.seed)

    work = tempfile.mkdtemp(prefix="spinward-crash-")
    db = os.path.join(work, "trends.sqlite")
    site = os.path.join(work, "site.yaml")
    with open(site, "w") as f:
        f.write(SITE.format(db=db))

    corrupt = lost = wrong_alarm = 0
    latched_seen = False
    kill_times = []
    for round_ in range(args.rounds):
        ready = os.path.join(work, f"ready-{round_}.json")
        log = open(os.path.join(work, f"daemon-{round_}.log"), "w")
        daemon = subprocess.Popen([args.binary, "run", "--config", site, "--ready-file", ready],
                                  stdout=log, stderr=subprocess.STDOUT)
        wait_for(lambda: os.path.exists(ready) or daemon.poll() is not None)
        if not os.path.exists(ready):
            corrupt += 1  # the daemon refuses a database it cannot open before it is ready
            print(f"round {round_}: did not start, see {log.name}", file=sys.stderr)
            daemon.kill()
            daemon.wait()
            continue
        port = json.load(open(ready))["listeners"][0]["port"]
        feeder = subprocess.Popen([args.binary, "feed", "--to", f"127.0.0.1:{port}",
                                   "--seconds", "30"],
                                  stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        kill_after = rng.uniform(0.3, 3.0)
        kill_times.append(kill_after)
        time.sleep(kill_after)
        before = committed_rows(db)  # committed now; the kill comes after this read
        daemon.send_signal(signal.SIGKILL)
        daemon.wait()
        feeder.kill()
        feeder.wait()
        log.close()

        ok, rows, raises, state = facts(db)
        if not ok:
            corrupt += 1
            print(f"round {round_}: integrity_check failed", file=sys.stderr)
        if rows < before:
            lost += before - rows
            print(f"round {round_}: {before - rows} committed rows lost", file=sys.stderr)
        if state is not None and state[1] == 1:
            latched_seen = True
        if latched_seen and (state is None or state[0] != "danger" or state[1] != 1 or raises != 1):
            wrong_alarm += 1
            print(f"round {round_}: alarm state {state}, {raises} raises", file=sys.stderr)

    ok, rows, raises, state = facts(db)
    print(f"crash consistency: {args.rounds} kill -9 under load (seed {args.seed}), "
          f"kill after {min(kill_times, default=0):.2f}-{max(kill_times, default=0):.2f} s")
    print(f"  corrupt databases or failed restarts: {corrupt}")
    print(f"  committed trend rows lost:            {lost}")
    print(f"  alarm states wrong after restart:     {wrong_alarm}")
    print(f"  trend rows stored at the end:         {rows} "
          f"(alarm {state[0] if state else '-'}, latched {state[1] if state else '-'}, "
          f"{raises} raise)")
    if not latched_seen or rows == 0:
        print("  the rounds stored nothing: the figures above prove nothing", file=sys.stderr)
        return 1
    return 0 if corrupt == lost == wrong_alarm == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
