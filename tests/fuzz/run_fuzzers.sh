#!/usr/bin/env bash
# Builds the libFuzzer targets with Debian's clang (build-fuzz, only those targets) and runs each
# for a bounded time from its seed corpus (tests/fuzz/corpus/<name>; the frame decoder's is
# tests/data/frames). Any crash, sanitizer report, timeout or out-of-memory fails the run; the
# input that did it is kept in build-fuzz/artifacts/.
# usage: bash tests/fuzz/run_fuzzers.sh [SECONDS_PER_TARGET]   (default 20)
set -euo pipefail
root=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
seconds=${1:-20}
build="$root/build-fuzz"
targets=(frame_decoder site_loader recording_reader)

if [[ ! -f "$build/CMakeCache.txt" ]]; then
  CXX=clang++ cmake -S "$root" -B "$build" -G Ninja -DSPINWARD_FUZZ=ON -DSPINWARD_WERROR=ON \
    -DSPINWARD_BENCHMARKS=OFF -DCMAKE_BUILD_TYPE=RelWithDebInfo >/dev/null
fi
fuzzers=()
for name in "${targets[@]}"; do fuzzers+=("spinward_${name}_fuzz"); done
cmake --build "$build" -j "$(nproc 2>/dev/null || echo 2)" --target "${fuzzers[@]}"

mkdir -p "$build/artifacts"
failed=()
for name in "${targets[@]}"; do
  work=$(mktemp -d)
  # New inputs go to a scratch copy; the seeds in the repo stay as they are.
  if [[ $name == frame_decoder ]]; then
    cp "$root/tests/data/frames/"*.bin "$work/"  # the frame fixtures (docs/protocol.md)
  else
    cp "$root/tests/fuzz/corpus/$name/"* "$work/"
  fi
  log="$build/artifacts/$name.log"
  if "$build/tests/fuzz/spinward_${name}_fuzz" -max_total_time="$seconds" -timeout=10 \
       -rss_limit_mb=2048 -print_final_stats=1 -artifact_prefix="$build/artifacts/$name-" \
       "$work" >"$log" 2>&1; then
    runs=$(grep -oE 'stat::number_of_executed_units: *[0-9]+' "$log" | grep -oE '[0-9]+$' || echo ?)
    echo "fuzz $name: ${seconds} s, $runs inputs, $(ls "$work" | wc -l) in corpus, no crash"
  else
    echo "fuzz $name: FAILED (see $log)" >&2
    grep -E 'ERROR|SUMMARY|Test unit written' "$log" >&2 || tail -20 "$log" >&2
    failed+=("$name")
  fi
  rm -rf "$work"
done
((${#failed[@]} == 0)) || { echo "fuzzing failed: ${failed[*]}" >&2; exit 1; }
