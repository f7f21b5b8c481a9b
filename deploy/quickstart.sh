#!/usr/bin/env bash
# The README's two commands:
#   bash deploy/quickstart.sh demo   install what is missing, build, run the built-in demo
#   bash deploy/quickstart.sh test   install what is missing, build with warnings as errors, run the
#                                    whole suite, then build and run it again under ASan+UBSan,
#                                    the threaded units under TSan, and each fuzzer for 20 s
# Both are idempotent: a second run only rebuilds what changed.
set -euo pipefail

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
cd "$root"
mode=${1:-}
jobs=$(nproc 2>/dev/null || echo 2)

bash deploy/setup.sh

build() {  # build DIR [cmake options...]
  local dir=$1; shift
  if [[ ! -f "$dir/CMakeCache.txt" ]]; then
    cmake -S . -B "$dir" -G Ninja -DSPINWARD_WERROR=ON "$@" >/dev/null
  fi
  cmake --build "$dir" -j "$jobs"
}

case "$mode" in
  demo)
    build build -DSPINWARD_TESTS=OFF -DSPINWARD_BENCHMARKS=OFF
    ./build/daemon/spinward demo "${@:2}"
    ;;
  test)
    build build-test
    (cd build-test && ctest --output-on-failure -j "$jobs")
    # Again under AddressSanitizer and UndefinedBehaviorSanitizer.
    build build-asan -DSPINWARD_SANITIZE="address;undefined" -DSPINWARD_BENCHMARKS=OFF \
                     -DCMAKE_BUILD_TYPE=Debug
    (cd build-asan && ASAN_OPTIONS=detect_leaks=1 UBSAN_OPTIONS=print_stacktrace=1 \
        ctest --output-on-failure -j "$jobs")
    # The threaded units under ThreadSanitizer: only their target, to bound the CI time.
    if [[ ! -f build-tsan/CMakeCache.txt ]]; then
      cmake -S . -B build-tsan -G Ninja -DSPINWARD_WERROR=ON -DSPINWARD_SANITIZE=thread \
            -DSPINWARD_BENCHMARKS=OFF -DCMAKE_BUILD_TYPE=RelWithDebInfo >/dev/null
    fi
    cmake --build build-tsan -j "$jobs" --target spinward_threaded_tests
    (cd build-tsan && TSAN_OPTIONS="halt_on_error=1 second_deadlock_stack=1" \
        ctest --output-on-failure -j "$jobs" -R '^tsan\.')
    # Each libFuzzer target (frames, site YAML, WAV/CSV) for 20 s from its seed corpus.
    bash tests/fuzz/run_fuzzers.sh 20
    ;;
  *)
    echo "usage: bash deploy/quickstart.sh demo|test" >&2
    exit 2
    ;;
esac
