#!/usr/bin/python3
"""Spinward's streaming Welch against scipy.signal.welch and a bare FFTW loop, side by side.

One run, one signal (bench/welch_bench.cc's 60 s P-101 pump signal at 25.6 kHz, 1,536,000 samples),
one set of parameters (segment 4096, 50 % overlap, periodic Hann, mean detrend, one-sided density,
mean averaging, float64). Each round runs, in an order that rotates from round to round:
  - the C++ benchmarks (Spinward in 2560-sample frames and in one block, the FFT-only floors, the
    indicator accumulator), each best of --cpp-repetitions, randomly interleaved by Google Benchmark;
  - scipy.signal.welch in a /usr/bin/python3 worker, best of --scipy-repeats, timed with
    time.perf_counter (wall) and time.process_time (CPU); one worker with OPENBLAS_CORETYPE as the
    environment has it and, when it is set, one without it.
So machine noise falls on every contender alike. The summary gives medians over rounds and the
ratios computed within each round, then their median. Run on a shared machine, trust the ratios
more than the absolute times.

Usage (from anywhere; builds bench/welch_bench itself unless --no-build):
  /usr/bin/python3 bench/run_welch_benchmark.py [--build-dir DIR] [--rounds N] [--json OUT]
"""

import argparse
import datetime
import json
import os
import pathlib
import statistics
import subprocess
import sys
import tempfile

REPO = pathlib.Path(__file__).resolve().parent.parent
SAMPLES = 1536000
FS = 25600.0
WELCH_KW = dict(fs=FS, window="hann", nperseg=4096, noverlap=2048, nfft=None,
                detrend="constant", return_onesided=True, scaling="density", average="mean")
CPP_NAMES = ["spinward/frames_2560", "spinward/one_block", "floor/window_r2c", "floor/copy_r2c",
             "floor/r2c", "indicators/frames_2560"]

# Runs in a separate /usr/bin/python3 so its environment (OPENBLAS_CORETYPE) can differ. Reads a
# repeat count per line on stdin, answers one JSON line of wall and CPU seconds per repeat.
WORKER = r"""
import json, sys, time
import numpy as np
import scipy.signal
x = np.fromfile(sys.argv[1], dtype="<f8")
kw = json.loads(sys.argv[2])
scipy.signal.welch(x, **kw)  # warm-up: imports, window cache, page faults
print(json.dumps({"ready": True}), flush=True)
for line in sys.stdin:
    wall, cpu = [], []
    for _ in range(int(line)):
        c0 = time.process_time(); t0 = time.perf_counter()
        scipy.signal.welch(x, **kw)
        t1 = time.perf_counter(); c1 = time.process_time()
        wall.append(t1 - t0); cpu.append(c1 - c0)
    print(json.dumps({"wall": wall, "cpu": cpu}), flush=True)
"""


def machine_description():
    model = "unknown"
    with open("/proc/cpuinfo") as f:
        for line in f:
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
    return {
        "date_utc": datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M:%S"),
        "nproc": len(os.sched_getaffinity(0)),
        "cpu_model": model,
        "load_average_start": os.getloadavg(),
    }


def build(build_dir):
    subprocess.run(["cmake", "-S", str(REPO), "-B", str(build_dir), "-G", "Ninja",
                    "-DCMAKE_BUILD_TYPE=Release", "-DSPINWARD_TESTS=OFF",
                    "-DSPINWARD_BENCHMARKS=ON", "-DSPINWARD_WERROR=ON"],
                   check=True, stdout=subprocess.DEVNULL)
    subprocess.run(["cmake", "--build", str(build_dir), "--target", "welch_bench", "-j2"],
                   check=True)


class ScipyWorker:
    def __init__(self, label, env, signal_path):
        self.label = label
        self.proc = subprocess.Popen(
            ["/usr/bin/python3", "-c", WORKER, str(signal_path), json.dumps(WELCH_KW)],
            stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True, env=env)
        if not json.loads(self.proc.stdout.readline()).get("ready"):
            raise RuntimeError(f"SciPy worker {label} did not start")

    def time(self, repeats):
        self.proc.stdin.write(f"{repeats}\n")
        self.proc.stdin.flush()
        answer = json.loads(self.proc.stdout.readline())
        return {"wall": min(answer["wall"]), "cpu": min(answer["cpu"])}

    def close(self):
        self.proc.stdin.close()
        self.proc.wait()


def run_cpp(binary, min_time, repetitions):
    out = subprocess.run(
        [str(binary), "--benchmark_format=json", f"--benchmark_min_time={min_time}",
         f"--benchmark_repetitions={repetitions}", "--benchmark_enable_random_interleaving=true"],
        check=True, capture_output=True, text=True).stdout
    data = json.loads(out)
    scale = {"ns": 1e-9, "us": 1e-6, "ms": 1e-3, "s": 1.0}
    best = {}
    for b in data["benchmarks"]:
        if b.get("run_type") != "iteration" or b.get("error_occurred"):
            if b.get("error_occurred"):
                raise RuntimeError(f"{b['name']}: {b.get('error_message')}")
            continue
        name = b.get("run_name", b["name"]).split("/repeats:")[0]
        unit = scale[b["time_unit"]]
        wall, cpu = b["real_time"] * unit, b["cpu_time"] * unit
        if name not in best:
            best[name] = {"wall": wall, "cpu": cpu}
        else:
            best[name] = {"wall": min(best[name]["wall"], wall),
                          "cpu": min(best[name]["cpu"], cpu)}
    return best, data.get("context", {})


def main():
    parser = argparse.ArgumentParser(description=__doc__,
                                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--build-dir", default=str(REPO / "build-bench"))
    parser.add_argument("--no-build", action="store_true", help="use the built binary as it is")
    parser.add_argument("--rounds", type=int, default=7)
    parser.add_argument("--min-time", type=float, default=0.2,
                        help="Google Benchmark seconds per benchmark and repetition")
    parser.add_argument("--cpp-repetitions", type=int, default=3)
    parser.add_argument("--scipy-repeats", type=int, default=3)
    parser.add_argument("--baseline-binary", help="an older welch_bench to time in the same rounds")
    parser.add_argument("--json", help="write every round's raw figures here")
    args = parser.parse_args()

    build_dir = pathlib.Path(args.build_dir)
    binary = build_dir / "bench" / "welch_bench"
    if not args.no_build:
        build(build_dir)
    machine = machine_description()

    import numpy as np
    import scipy
    import scipy.signal

    with tempfile.TemporaryDirectory(prefix="spinward-bench-") as tmp:
        signal_path = pathlib.Path(tmp) / "signal.f64"
        psd_path = pathlib.Path(tmp) / "psd.f64"
        subprocess.run([str(binary), f"--write_signal={signal_path}"], check=True)
        subprocess.run([str(binary), f"--write_psd={psd_path}"], check=True)
        x = np.fromfile(signal_path, dtype="<f8")
        if x.size != SAMPLES:
            sys.exit(f"signal has {x.size} samples, expected {SAMPLES}")
        # Same work, not just the same speed: Spinward's PSD against SciPy's on these samples.
        _, p_scipy = scipy.signal.welch(x, **WELCH_KW)
        p_ours = np.fromfile(psd_path, dtype="<f8")
        deviation = float(np.max(np.abs(p_ours - p_scipy) / np.max(p_scipy)))
        if p_ours.shape != p_scipy.shape or not deviation < 1e-9:
            sys.exit(f"Spinward's PSD differs from SciPy's: {deviation:.3g} of the peak")

        env_as_is = dict(os.environ)
        workers = {"scipy": ScipyWorker("scipy", env_as_is, signal_path)}
        coretype = os.environ.get("OPENBLAS_CORETYPE")
        if coretype is not None:
            env_without = {k: v for k, v in os.environ.items() if k != "OPENBLAS_CORETYPE"}
            workers["scipy_no_coretype"] = ScipyWorker("scipy_no_coretype", env_without,
                                                       signal_path)

        contenders = ["cpp"] + (["baseline"] if args.baseline_binary else []) + list(workers)
        rounds = []
        context = {}
        for r in range(args.rounds):
            shift = r % len(contenders)
            order = contenders[shift:] + contenders[:shift]
            row = {}
            for who in order:
                if who == "cpp":
                    best, context = run_cpp(binary, args.min_time, args.cpp_repetitions)
                    row.update(best)
                elif who == "baseline":
                    best, _ = run_cpp(args.baseline_binary, args.min_time, args.cpp_repetitions)
                    row.update({"baseline:" + k: v for k, v in best.items()})
                else:
                    row[who] = workers[who].time(args.scipy_repeats)
            rounds.append(row)
            print(f"round {r + 1}/{args.rounds}: order {' '.join(order)}", file=sys.stderr,
                  flush=True)
        for w in workers.values():
            w.close()

    machine["load_average_end"] = os.getloadavg()
    report = {"machine": machine, "fftw": context.get("fftw", "?"),
              "numpy": np.__version__, "scipy": scipy.__version__,
              "openblas_coretype": coretype, "psd_max_deviation_of_peak": deviation,
              "settings": vars(args), "rounds": rounds}
    if args.json:
        with open(args.json, "w") as f:
            json.dump(report, f, indent=1)
    print_summary(report)


def print_summary(report):
    rounds = report["rounds"]
    m = report["machine"]
    print(f"date {m['date_utc']} UTC, nproc {m['nproc']}, CPU {m['cpu_model']}, load average "
          f"{m['load_average_start'][0]:.1f} at start, {m['load_average_end'][0]:.1f} at end")
    print(f"{report['fftw']}, numpy {report['numpy']}, scipy {report['scipy']}, "
          f"OPENBLAS_CORETYPE={report['openblas_coretype']}; {len(rounds)} rounds")
    print(f"Spinward PSD vs SciPy PSD on the same samples: max |difference| "
          f"{report['psd_max_deviation_of_peak']:.2g} of the peak")
    names = [k for k in CPP_NAMES if k in rounds[0]]
    names += [k for k in rounds[0] if k not in names]
    print(f"\n{'median over rounds':<32}{'wall ms':>9}{'Msamples/s':>12}{'CPU ms':>9}"
          f"{'Msamples/s':>12}{'ns/sample':>10}")
    for name in names:
        wall = statistics.median(r[name]["wall"] for r in rounds)
        cpu = statistics.median(r[name]["cpu"] for r in rounds)
        print(f"{name:<32}{wall * 1e3:>9.2f}{SAMPLES / wall / 1e6:>12.1f}{cpu * 1e3:>9.2f}"
              f"{SAMPLES / cpu / 1e6:>12.1f}{cpu / SAMPLES * 1e9:>10.2f}")

    def ratio(num, den):  # how many times faster num is than den, median of per-round ratios
        out = {}
        for clock in ("wall", "cpu"):
            values = [r[den][clock] / r[num][clock] for r in rounds if num in r and den in r]
            out[clock] = (statistics.median(values), min(values), max(values)) if values else None
        return out

    print(f"\n{'ratio (median of rounds; min..max)':<52}{'wall':>18}{'CPU':>18}")
    pairs = [("spinward/frames_2560", "scipy", "Spinward frames / SciPy"),
             ("spinward/one_block", "scipy", "Spinward one block / SciPy"),
             ("spinward/frames_2560", "floor/window_r2c", "Spinward frames / window+r2c floor"),
             ("spinward/frames_2560", "floor/copy_r2c", "Spinward frames / copy+r2c floor"),
             ("spinward/frames_2560", "floor/r2c", "Spinward frames / in-place r2c floor"),
             ("spinward/one_block", "floor/window_r2c", "Spinward one block / window+r2c floor"),
             ("scipy_no_coretype", "scipy", "SciPy without / with OPENBLAS_CORETYPE"),
             ("spinward/frames_2560", "baseline:spinward/frames_2560",
              "Spinward frames / baseline build"),
             ("spinward/one_block", "baseline:spinward/one_block",
              "Spinward one block / baseline build")]
    for num, den, label in pairs:
        rr = ratio(num, den)
        if rr["wall"] is None:
            continue
        cells = "".join(f"{v[0]:>8.2f} ({v[1]:.2f}..{v[2]:.2f})" for v in (rr["wall"], rr["cpu"]))
        print(f"{label:<52}{cells}")
    ind = statistics.median(r["indicators/frames_2560"]["cpu"] for r in rounds) / SAMPLES
    welch = statistics.median(r["spinward/frames_2560"]["cpu"] for r in rounds) / SAMPLES
    print(f"\nper sample (CPU): Welch {welch * 1e9:.2f} ns, indicators {ind * 1e9:.2f} ns "
          f"({ind / welch:.2f} of Welch)")


if __name__ == "__main__":
    main()
