#!/usr/bin/env bash
# Builds Shingleton with its tests and runs the whole suite (CTest). Exits non-zero
# when any test fails.
set -euo pipefail
cd "$(dirname "$0")/.."
bash deploy/bootstrap.sh
BUILD_DIR=${BUILD_DIR:-build}
ctest --test-dir "$BUILD_DIR" --output-on-failure -j "${JOBS:-$(nproc)}" --timeout 600
