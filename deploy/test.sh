#!/usr/bin/env bash
# Builds Shingleton with its tests and runs the whole suite (CTest). Exits non-zero
# when any test fails.
set -euo pipefail
case "${1:-}" in -h | --help) sed -n '2,/^[^#]/s/^# \{0,1\}//p' "$0"; exit 0 ;; esac  # --help: the header comment
cd "$(dirname "$0")/.."
bash deploy/bootstrap.sh
BUILD_DIR=${BUILD_DIR:-build}
ctest --test-dir "$BUILD_DIR" --output-on-failure -j "${JOBS:-$(nproc)}" --timeout 600
