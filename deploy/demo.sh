#!/usr/bin/env bash
# Builds Shingleton if needed and runs the embedded job on the demo corpus.
# Results: out/demo/{keep.jsonl,drop.jsonl,summary.json} and the index out/demo/index.
set -euo pipefail
cd "$(dirname "$0")/.."
bash deploy/bootstrap.sh shingleton
BUILD_DIR=${BUILD_DIR:-build}
"$BUILD_DIR/bin/shingleton" dedup --input demo_data/crawl-2026-11.jsonl --out out/demo --replace "$@"
