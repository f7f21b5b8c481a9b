#!/usr/bin/python3
"""Soak: hours of full load compressed into a bounded run; resident memory and open file
descriptors of `spinward run` must stay flat.

One daemon (the N-point site of bench/run_end_to_end.py: 25.6 kHz, 1 s intervals, two bands and a
limit set per point, trend database and alarms on) is fed back to back by `spinward feed` as fast as
it takes the frames, for --minutes. Each feed is a new TCP connection (a reconnecting acquisition
box), and the fed signal time runs on, so every minute of wall time is many minutes of plant time.
Every --every seconds the script reads the daemon's VmRSS (/proc/PID/status) and its open
descriptors (/proc/PID/fd). After a warm-up (the first quarter of the run: caches, SQLite's page
cache and the WAL reach their working size) it fits a straight line to each series and prints the
growth over the rest of the run, with the plant time processed.

It also checks that no signal is lost on the way: every sample fed must end up in a stored record.
Records per feed follow docs/records.md: with segment L = 4096, hop H = 2048 and S = round(1 s x
25600 / 2048) = 13 segments per average (an interval is 13 x 2048 samples = 1.04 s, the first of a
run 1.12 s), a 30 s feed of N = 768000 samples gives K = floor((N - L) / H) + 1 = 374 segments:
28 full intervals and one of 10 segments, ended when the next feed's frames count from 0 again
(or flushed by SIGTERM after the last feed). So 29 records per sensor per feed, not 30. A
reconnect is not a lost frame: no record may be flagged as a sensor fault for it.

Fails (exit 1) when resident memory grows by more than --max-rss-growth-mib over the measured part,
or the descriptor count ends above where it was after warm-up (thresholds of this script, no
source), when the records committed differ from the count above, or when a sensor fault was raised.

usage: /usr/bin/python3 tests/reliability/soak.py [--binary PATH] [--sensors 50] [--minutes 10]
                                                 [--every 5] [--max-rss-growth-mib 8]
"""
import argparse
import json
import math
import os
import pathlib
import signal
import subprocess
import sys
import tempfile
import time

REPO = pathlib.Path(__file__).resolve().parents[2]
sys.path.insert(0, str(REPO / "bench"))
from run_end_to_end import site_yaml  # noqa: E402  (the same N-point site as the capacity bench)


def rss_kib(pid):
    for line in pathlib.Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith("VmRSS:"):
            return int(line.split()[1])
    return 0


def open_fds(pid):
    return len(os.listdir(f"/proc/{pid}/fd"))


def cpu_ticks(pid):
    """User + system CPU time of a process so far, in clock ticks (/proc/PID/stat)."""
    fields = pathlib.Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return int(fields[11]) + int(fields[12])


def records_per_feed(seconds, rate=25600, segment=4096, hop=2048, interval_s=1.0):
    """Records one gap-free feed gives (docs/records.md): full intervals, plus the partial one its
    end cuts short."""
    n = int(seconds * rate)
    k = (n - segment) // hop + 1 if n >= segment else 0
    s = math.floor(interval_s * rate / hop + 0.5)  # C++ std::round: 12.5 -> 13 (Python's gives 12)
    return k // s + (1 if k % s else 0)


def slope_per_minute(points):
    """Least-squares slope of (t seconds, value) pairs, per minute."""
    n = len(points)
    if n < 2:
        return 0.0
    mt = sum(t for t, _ in points) / n
    mv = sum(v for _, v in points) / n
    var = sum((t - mt) ** 2 for t, _ in points)
    return 60.0 * sum((t - mt) * (v - mv) for t, v in points) / var if var else 0.0


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--binary", default=str(REPO / "build-test" / "daemon" / "spinward"))
    parser.add_argument("--sensors", type=int, default=50)
    parser.add_argument("--minutes", type=float, default=10.0)
    parser.add_argument("--every", type=float, default=5.0)
    parser.add_argument("--max-rss-growth-mib", type=float, default=8.0)
    args = parser.parse_args()

    with tempfile.TemporaryDirectory(prefix="spinward-soak-") as tmp:
        work = pathlib.Path(tmp)
        config = work / "site.yaml"
        config.write_text(site_yaml(args.sensors, work / "soak.sqlite"))
        ready = work / "ready.json"
        log = open(work / "daemon.log", "w+")
        daemon = subprocess.Popen([args.binary, "run", "--config", str(config), "--workers", "1",
                                   "--ready-file", str(ready)], stdout=log,
                                  stderr=subprocess.STDOUT)
        deadline = time.time() + 60
        while not ready.exists():
            if daemon.poll() is not None or time.time() > deadline:
                log.seek(0)
                sys.exit("daemon did not start:\n" + log.read())
            time.sleep(0.05)
        port = json.loads(ready.read_text())["listeners"][0]["port"]

        start = time.time()
        end = start + 60 * args.minutes
        samples = []  # (t, rss KiB, fds)
        signal_start_ns = time.time_ns()
        fed_seconds = 0
        next_sample = start
        feed = None
        while time.time() < end:
            if feed is None or feed.poll() is not None:
                if feed is not None and feed.returncode != 0:
                    sys.exit(f"feed failed: {feed.stderr.read()}")
                # Signal time runs on from one feed to the next, as a box that reconnects would.
                feed = subprocess.Popen(
                    [args.binary, "feed", "--to", f"127.0.0.1:{port}", "--sensors",
                     str(args.sensors), "--seconds", "30", "--engineering", "--start-ns",
                     str(signal_start_ns + fed_seconds * 1_000_000_000)],
                    stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
                fed_seconds += 30
            if time.time() >= next_sample:
                if daemon.poll() is not None:
                    log.seek(0)
                    sys.exit("daemon ended during the soak:\n" + log.read()[-4000:])
                samples.append((time.time() - start, rss_kib(daemon.pid), open_fds(daemon.pid)))
                next_sample += args.every
            time.sleep(0.05)
        feed.wait()
        # Frames the last feed sent may still sit in the daemon's socket and queues: stop it once
        # its CPU time stands still (two readings 0.5 s apart), at most 60 s later.
        idle_deadline = time.time() + 60
        ticks = cpu_ticks(daemon.pid)
        while time.time() < idle_deadline:
            time.sleep(0.5)
            now = cpu_ticks(daemon.pid)
            if now == ticks:
                break
            ticks = now
        daemon.send_signal(signal.SIGTERM)
        daemon.wait(timeout=120)
        log.seek(0)
        text = log.read()

    warm = [s for s in samples if s[0] >= 0.25 * 60 * args.minutes]
    if len(warm) < 3:
        sys.exit("too few samples after warm-up; run longer or sample more often")
    rss = [(t, kib / 1024.0) for t, kib, _ in warm]
    fds = [(t, n) for t, _, n in warm]
    rss_growth = rss[-1][1] - rss[0][1]
    plant_hours = args.sensors * fed_seconds / 3600.0
    print(f"soak: {args.minutes:g} min wall, {args.sensors} sensors, {fed_seconds} s of signal each "
          f"({plant_hours:.1f} sensor-hours at 25.6 kHz), daemon exit {daemon.returncode}")
    print(f"resident memory after warm-up: {rss[0][1]:.1f} MiB -> {rss[-1][1]:.1f} MiB "
          f"(max {max(v for _, v in rss):.1f}); trend {slope_per_minute(rss):+.3f} MiB/min")
    print(f"open descriptors after warm-up: {fds[0][1]} -> {fds[-1][1]} "
          f"(max {max(v for _, v in fds)}); trend {slope_per_minute(fds):+.3f} per min")
    stored = [line for line in text.splitlines() if "records committed" in line]
    committed = None
    if stored:
        print("daemon: " + stored[-1].split("storage: ", 1)[-1])
        committed = int(stored[-1].split("storage: ", 1)[-1].split()[0])
    feeds = fed_seconds // 30
    expected = feeds * args.sensors * records_per_feed(30)
    faults = sum(1 for line in text.splitlines() if "-> sensor_fault" in line)
    print(f"records: {committed} committed, {expected} expected ({feeds} feeds x {args.sensors} "
          f"sensors x {records_per_feed(30)}); sensor faults raised: {faults}")
    failed = (rss_growth > args.max_rss_growth_mib or fds[-1][1] > fds[0][1] or
              committed != expected or faults > 0)
    print("FAIL" if failed else "flat: PASS")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
