#!/usr/bin/env bash
# Installs the Debian 12 packages Shingleton needs (only those missing), then
# configures and builds it into build/ (executables in build/bin/).
#   usage: bash deploy/bootstrap.sh [TARGET ...]     (default: every target, tests included)
# Environment: BUILD_DIR (default build), BUILD_TYPE (default Release), JOBS (default nproc).
set -euo pipefail
case "${1:-}" in -h | --help) sed -n '2,/^[^#]/s/^# \{0,1\}//p' "$0"; exit 0 ;; esac  # --help: the header comment
cd "$(dirname "$0")/.."

PACKAGES=(
  cmake g++ pkg-config ninja-build
  librocksdb-dev libxxhash-dev libsimdjson-dev libutf8proc-dev libcli11-dev libspdlog-dev
  libtbb-dev zlib1g-dev libzstd-dev libgumbo-dev libhwy-dev
  libgrpc++-dev protobuf-compiler-grpc libprotobuf-dev protobuf-compiler
  libgtest-dev libgmock-dev
  # data the tests check against: Unicode's NormalizationTest.txt, Debian's licenses
  unicode-data bzip2 base-files gzip zstd
  # the service tests: a Python gRPC client and test certificates
  python3 python3-grpcio python3-protobuf openssl
)

missing=()
for p in "${PACKAGES[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -gt 0 ]; then
  echo "shingleton: installing ${missing[*]}" >&2
  SUDO=""
  [ "$(id -u)" -eq 0 ] || SUDO="sudo"
  $SUDO apt-get update -q >&2
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -q --no-install-recommends "${missing[@]}" >&2
fi

BUILD_DIR=${BUILD_DIR:-build}
BUILD_TYPE=${BUILD_TYPE:-Release}
JOBS=${JOBS:-$(nproc)}
if [ -f "$BUILD_DIR/CMakeCache.txt" ] && [ -f "$BUILD_DIR/build.ninja" ]; then
  cmake -S . -B "$BUILD_DIR" >&2   # keeps the build type chosen when it was made
else
  rm -rf "$BUILD_DIR/CMakeCache.txt" "$BUILD_DIR/CMakeFiles"
  cmake -S . -B "$BUILD_DIR" -G Ninja -DCMAKE_BUILD_TYPE="$BUILD_TYPE" >&2
fi
targets=()
for t in "$@"; do targets+=(--target "$t"); done
cmake --build "$BUILD_DIR" -j "$JOBS" "${targets[@]}" >&2
