#!/usr/bin/env bash
# The README's two commands:
#   bash deploy/quickstart.sh demo   install what is missing, build, run the built-in demo
#   bash deploy/quickstart.sh test   install what is missing, build with warnings as errors, run the
#                                    whole suite, then build and run it again under ASan+UBSan
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
    ;;
  *)
    echo "usage: bash deploy/quickstart.sh demo|test" >&2
    exit 2
    ;;
esac
