#!/usr/bin/env bash
# A Shingleton cluster on this machine, on loopback only: N index shards and one
# coordinator, each with its own data directory and log under $CLUSTER_DIR
# (default out/cluster).
#   bash deploy/local-cluster.sh start N   start N shards and a coordinator, wait until
#                                          healthy, print the addresses
#   bash deploy/local-cluster.sh status    health of every process
#   bash deploy/local-cluster.sh stop      SIGTERM everything (servers drain, exit 0)
# Shards listen on 127.0.0.1:$((BASE_PORT+1+i)), the coordinator on 127.0.0.1:$BASE_PORT
# (BASE_PORT default 7400). Restarting with the same N keeps the data: a job's shard
# map must not change, so restart a cluster with the N it was started with.
# REFERENCES="refs/2026-10 refs/2026-11" (frozen generations, default none): every job
# is deduplicated against them; each is cut into N parts (shingleton reference-split,
# under $CLUSTER_DIR/reference-parts) and shard i serves part i.
set -euo pipefail
cd "$(dirname "$0")/.."
CLUSTER_DIR=${CLUSTER_DIR:-out/cluster}
BASE_PORT=${BASE_PORT:-7400}
BIN=${BUILD_DIR:-build}/bin/shingleton

usage() { sed -n '2,16p' "$0" | sed 's/^# \{0,1\}//'; exit 2; }

wait_healthy() {  # address, name
  for _ in $(seq 1 100); do
    "$BIN" health --coordinator "$1" -q && return 0
    sleep 0.1
  done
  echo "$2 at $1 did not become healthy; see its log in $CLUSTER_DIR" >&2
  return 1
}

start() {
  local n=${1:-}
  [[ "$n" =~ ^[1-9][0-9]*$ ]] || usage
  [ -x "$BIN" ] || bash deploy/bootstrap.sh shingleton
  if [ -f "$CLUSTER_DIR/shards" ] && [ "$(cat "$CLUSTER_DIR/shards")" != "$n" ]; then
    echo "$CLUSTER_DIR was started with $(cat "$CLUSTER_DIR/shards") shards; its jobs need the same" \
         "shard map (or remove $CLUSTER_DIR)" >&2
    exit 1
  fi
  mkdir -p "$CLUSTER_DIR"
  echo "$n" > "$CLUSTER_DIR/shards"
  local ref_args=() ref
  for ref in ${REFERENCES:-}; do
    local parts="$CLUSTER_DIR/reference-parts/$(basename "$ref")-of-$n"
    [ -d "$parts" ] || "$BIN" reference-split --reference "$ref" --shards "$n" --to "$parts" >/dev/null
    ref_args+=(--reference "$ref")
  done
  local list=""
  for i in $(seq 0 $((n - 1))); do
    local addr="127.0.0.1:$((BASE_PORT + 1 + i))"
    list="${list:+$list,}$addr"
    if [ -f "$CLUSTER_DIR/shard-$i.pid" ] && kill -0 "$(cat "$CLUSTER_DIR/shard-$i.pid")" 2>/dev/null; then
      continue
    fi
    local part_args=()
    for ref in ${REFERENCES:-}; do
      part_args+=(--reference-part "$CLUSTER_DIR/reference-parts/$(basename "$ref")-of-$n/part-$i-of-$n")
    done
    nohup "$BIN" shard --listen "$addr" --db "$CLUSTER_DIR/shard-$i" "${part_args[@]}" \
      >>"$CLUSTER_DIR/shard-$i.log" 2>&1 &
    echo $! > "$CLUSTER_DIR/shard-$i.pid"
  done
  for i in $(seq 0 $((n - 1))); do wait_healthy "127.0.0.1:$((BASE_PORT + 1 + i))" "shard $i"; done
  local caddr="127.0.0.1:$BASE_PORT"
  if ! { [ -f "$CLUSTER_DIR/coordinator.pid" ] && kill -0 "$(cat "$CLUSTER_DIR/coordinator.pid")" 2>/dev/null; }; then
    nohup "$BIN" coordinator --listen "$caddr" --shards "$list" --state "$CLUSTER_DIR/coordinator" \
      "${ref_args[@]}" \
      >>"$CLUSTER_DIR/coordinator.log" 2>&1 &
    echo $! > "$CLUSTER_DIR/coordinator.pid"
  fi
  wait_healthy "$caddr" coordinator
  echo "coordinator $caddr"
  echo "shards      $list"
  echo "logs        $CLUSTER_DIR/*.log"
  echo "next: $BIN ingest --coordinator $caddr --job NAME --input FILE.jsonl"
}

status() {
  local rc=0
  for pidfile in "$CLUSTER_DIR"/*.pid; do
    [ -e "$pidfile" ] || { echo "no cluster in $CLUSTER_DIR"; return 1; }
    local name pid
    name=$(basename "$pidfile" .pid)
    pid=$(cat "$pidfile")
    if kill -0 "$pid" 2>/dev/null; then
      echo "$name: running (pid $pid)"
    else
      echo "$name: not running"
      rc=1
    fi
  done
  local n
  n=$(cat "$CLUSTER_DIR/shards" 2>/dev/null || echo 0)
  "$BIN" health --coordinator "127.0.0.1:$BASE_PORT" || rc=1
  for i in $(seq 0 $((n - 1))); do "$BIN" health --coordinator "127.0.0.1:$((BASE_PORT + 1 + i))" || rc=1; done
  return $rc
}

stop() {
  # The coordinator first, so that no batch is sent to a shard that is gone.
  for name in coordinator $(cd "$CLUSTER_DIR" 2>/dev/null && ls shard-*.pid 2>/dev/null | sed 's/\.pid$//'); do
    local pidfile="$CLUSTER_DIR/$name.pid"
    [ -f "$pidfile" ] || continue
    local pid
    pid=$(cat "$pidfile")
    if kill -TERM "$pid" 2>/dev/null; then
      for _ in $(seq 1 300); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
      kill -0 "$pid" 2>/dev/null && { echo "$name did not stop; killing" >&2; kill -KILL "$pid"; }
      echo "$name stopped"
    fi
    rm -f "$pidfile"
  done
}

case "${1:-}" in
  start) start "${2:-}" ;;
  status) status ;;
  stop) stop ;;
  -h | --help) sed -n '2,16p' "$0" | sed 's/^# \{0,1\}//' ;;
  *) usage ;;
esac
