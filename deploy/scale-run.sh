#!/usr/bin/env bash
# The scale run (not part of CI): the embedded job on 1M and 500k generated documents,
# then the 1M job frozen as a reference and a second 1M-document crawl deduplicated
# against it. The second crawl is half new pages (generator seed 2, ids renamed
# new-*) and half re-crawled pages of the first (its odd lines, unchanged), one of
# each in turn — so the reference run really matches: exact copies, near copies of
# the first crawl's families, and new pages that match nothing.
#   usage: bash deploy/scale-run.sh
# Prints, per run: seconds, docs/s, MB/s of input, peak RSS (/usr/bin/time -v), CPU
# seconds per document, index bytes per document; then time(1M)/time(500k) and each
# goal (this project's goals on a 2-core machine: 1M end to end <= 90 s, peak RSS
# <= 1 GiB, time ratio <= 2.1, 1M against a frozen 1M reference <= 60 s).
# The 500k and 1M jobs run REPEAT times each, in turn (500k, 1M, 500k, 1M, ...): on a
# shared machine single runs drift by 5-25% (a first run after other work, the
# neighbours' load), so the time ratio is the median of the pairs' ratios (each 1M
# run over the 500k run just before it), printed with their range and the ratio of
# the median times.
# Environment (defaults):
#   SCALE_DIR  /tmp/shingleton-scale   corpora and outputs (needs ~12 GB free; kept, so a
#                                      second run reuses the corpora)
#   DOCS       1000000                 the large run; the small run has DOCS/2
#   THREADS    0                       dedup --threads (0: every core)
#   REPEAT     5                       runs of each of the 500k and 1M jobs
#   BUILD_DIR  build
# The machine is shared: the load average is printed before and after each run.
set -euo pipefail
case "${1:-}" in -h | --help) sed -n '2,/^[^#]/s/^# \{0,1\}//p' "$0"; exit 0 ;; esac  # --help: the header comment
cd "$(dirname "$0")/.."
BUILD_DIR=${BUILD_DIR:-build}
SCALE_DIR=${SCALE_DIR:-/tmp/shingleton-scale}
DOCS=${DOCS:-1000000}
THREADS=${THREADS:-0}
REPEAT=${REPEAT:-5}
[[ "$REPEAT" =~ ^[1-9][0-9]*$ ]] || { echo "scale-run: REPEAT must be 1 or more (got '$REPEAT')" >&2; exit 2; }
BIN=$BUILD_DIR/bin/shingleton
GEN=$BUILD_DIR/bin/shingleton-demo-gen
[ -x "$BIN" ] && [ -x "$GEN" ] || bash deploy/bootstrap.sh shingleton shingleton-demo-gen
[ -x /usr/bin/time ] || { echo "scale-run: needs /usr/bin/time (Debian package 'time')" >&2; exit 1; }
mkdir -p "$SCALE_DIR"
HALF=$((DOCS / 2))

generate() {  # docs seed file
  if [ ! -s "$3" ]; then
    echo "generating $1 documents (seed $2) into $3 ..." >&2
    "$GEN" --docs "$1" --seed "$2" --mean-bytes 2000 --out "$3" --truth "$3.truth.tsv"
  fi
}

# run NAME INPUT [extra dedup args...]: times one embedded job, appends a result line.
RESULTS=$SCALE_DIR/results.tsv
: > "$RESULTS"
run() {
  local name=$1 input=$2
  shift 2
  local out=$SCALE_DIR/out-${name%-[0-9]*}  # out-half, out-full, out-against-ref
  rm -rf "$out"  # no run's time includes removing an earlier output
  echo "[$name] load before: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
  /usr/bin/time -v -o "$SCALE_DIR/time-$name.txt" \
    "$BIN" dedup --input "$input" --out "$out" --replace --threads "$THREADS" -q "$@"
  echo "[$name] load after:  $(cut -d' ' -f1-3 /proc/loadavg)" >&2
  local wall rss user sys docs input_bytes index_bytes
  wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,p,":"); s=0; for(i=1;i<=n;i++) s=s*60+p[i]; print s}' "$SCALE_DIR/time-$name.txt")
  rss=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$SCALE_DIR/time-$name.txt")
  user=$(awk -F': ' '/User time/ {print $2}' "$SCALE_DIR/time-$name.txt")
  sys=$(awk -F': ' '/System time/ {print $2}' "$SCALE_DIR/time-$name.txt")
  docs=$(sed -n 's/.*"documents":\([0-9]*\).*/\1/p' "$out/summary.json")
  input_bytes=$(stat -c %s "$input")
  index_bytes=$(du -sb "$out/index" | cut -f1)
  printf '%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n' "$name" "$docs" "$wall" "$rss" "$user" "$sys" "$input_bytes" \
    "$index_bytes" >> "$RESULTS"
}

generate "$DOCS" 1 "$SCALE_DIR/crawl-a.jsonl"
generate "$HALF" 1 "$SCALE_DIR/crawl-half.jsonl"
generate "$DOCS" 2 "$SCALE_DIR/crawl-b.jsonl"
if [ ! -s "$SCALE_DIR/crawl-mixed.jsonl" ]; then
  echo "mixing $HALF new and $HALF re-crawled documents into $SCALE_DIR/crawl-mixed.jsonl ..." >&2
  paste -d'\n' <(head -n "$HALF" "$SCALE_DIR/crawl-b.jsonl" | sed 's/^{"id":"doc-/{"id":"new-/') \
    <(awk 'NR % 2 == 1' "$SCALE_DIR/crawl-a.jsonl" | head -n "$HALF") > "$SCALE_DIR/crawl-mixed.jsonl.tmp"
  mv "$SCALE_DIR/crawl-mixed.jsonl.tmp" "$SCALE_DIR/crawl-mixed.jsonl"
fi

for i in $(seq "$REPEAT"); do
  run "half-$i" "$SCALE_DIR/crawl-half.jsonl"
  run "full-$i" "$SCALE_DIR/crawl-a.jsonl"
done
rm -rf "$SCALE_DIR/ref-a"
echo "[freeze] load before: $(cut -d' ' -f1-3 /proc/loadavg)" >&2
/usr/bin/time -v -o "$SCALE_DIR/time-freeze.txt" "$BIN" freeze --from "$SCALE_DIR/out-full" --to "$SCALE_DIR/ref-a"
freeze_s=$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,p,":"); s=0; for(i=1;i<=n;i++) s=s*60+p[i]; print s}' "$SCALE_DIR/time-freeze.txt")
run against-ref "$SCALE_DIR/crawl-mixed.jsonl" --reference "$SCALE_DIR/ref-a"

echo
awk -F'\t' -v freeze_s="$freeze_s" '
  function median(a, n,   i, j, t) {  # sorts a[1..n] in place
    for (i = 2; i <= n; i++) for (j = i; j > 1 && a[j-1] > a[j]; j--) { t = a[j]; a[j] = a[j-1]; a[j-1] = t }
    return n % 2 ? a[(n+1)/2] : (a[n/2] + a[n/2+1]) / 2
  }
  { name[NR]=$1; docs[NR]=$2; wall[NR]=$3; rss[NR]=$4; cpu[NR]=$5+$6; inb[NR]=$7; idx[NR]=$8
    if (rss[NR] > max_rss) max_rss = rss[NR]
    if ($1 ~ /^half-/) { nh++; hw[nh] = $3; hc[nh] = $5+$6 }
    if ($1 ~ /^full-/) { nf++; fw[nf] = $3; fc[nf] = $5+$6; pair[nf] = $3 / hw[nf] }
    if ($1 == "against-ref") r = NR }
  END {
    printf "%-12s %9s %8s %9s %8s %10s %12s %12s\n", "run", "docs", "seconds", "docs/s", "MB/s", "peak MiB", "CPU us/doc", "index B/doc"
    for (i = 1; i <= NR; i++)
      printf "%-12s %9d %8.1f %9.0f %8.1f %10.0f %12.1f %12.0f\n", name[i], docs[i], wall[i], docs[i]/wall[i],
             inb[i]/wall[i]/1e6, rss[i]/1024, 1e6*cpu[i]/docs[i], idx[i]/docs[i]
    full = median(fw, nf); half = median(hw, nh); ratio = median(pair, nf)  # sorts pair[]
    printf "\nfreeze of the full job: %.1f s\n", freeze_s
    printf "median of %d runs: half %.2f s, full %.2f s (ratio of the medians %.2f)\n", nf, half, full, full / half
    printf "time(full)/time(half) = %.2f (median of %d pairs, range %.2f..%.2f; CPU of the medians: %.2f)\n", ratio, nf, pair[1], pair[nf], median(fc, nf) / median(hc, nh)
    printf "goal: full end to end <= 90 s          %s (%.1f s)\n", full <= 90 ? "met" : "MISSED", full
    printf "goal: peak RSS <= 1 GiB (every run)    %s (%.0f MiB max)\n", max_rss <= 1048576 ? "met" : "MISSED", max_rss / 1024
    printf "goal: time ratio <= 2.1                %s (%.2f)\n", ratio <= 2.1 ? "met" : "MISSED", ratio
    printf "goal: against frozen reference <= 60 s %s (%.1f s)\n", wall[r] <= 60 ? "met" : "MISSED", wall[r]
  }' "$RESULTS" | tee "$SCALE_DIR/report.txt"
echo "dropped for the reference: $(grep -o '"reference-exact":[0-9]*,"reference-near":[0-9]*' "$SCALE_DIR/out-against-ref/summary.json")"
echo "(raw figures: $RESULTS; /usr/bin/time output: $SCALE_DIR/time-*.txt; load: $(cut -d' ' -f1-3 /proc/loadavg))"
