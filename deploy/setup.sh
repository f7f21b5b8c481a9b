#!/usr/bin/env bash
# Installs the Debian packages Spinward builds, tests and runs with. Idempotent: when everything is
# already there it only checks, and touches no package list.
set -euo pipefail

packages=(
  cmake g++ make pkg-config ninja-build
  libfftw3-dev libboost-dev libsqlite3-dev libspdlog-dev libyaml-cpp-dev zlib1g-dev
  libgtest-dev libgmock-dev libbenchmark-dev
  python3 python3-scipy python3-numpy python3-prometheus-client
  sqlite3 clang-format
  # plant messaging: the client library, a broker and Python's client for the tests, openssl for
  # the test certificates
  libmosquitto-dev mosquitto python3-paho-mqtt openssl
  # readiness and watchdog notifications to systemd
  libsystemd-dev
  # the report's browser test
  chromium
  # fuzzing with libFuzzer (tests/fuzz/run_fuzzers.sh): clang and its runtime libraries
  clang libclang-rt-14-dev
)

missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done

if ((${#missing[@]})); then
  echo "spinward setup: installing ${missing[*]}"
  if [[ $(id -u) -ne 0 ]]; then
    echo "spinward setup: missing packages and not root; run as root or install: ${missing[*]}" >&2
    exit 1
  fi
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi
