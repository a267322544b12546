#!/usr/bin/env bash
# Scale-out throughput on one PostgreSQL database (run from the repository root):
#   bash testdata/load/scaleout.sh [PG_SERVER_URL]
# For 1, 2 and 4 workers (`ringsieve worker --workers 1` each) behind one serving replica
# (`serve --workers 0`), it submits
#   1. 20,000 SMILES in the fast tier (thermo_method table), and
#   2. 160 distinct substituted cyclooctenes, norbornenes, oxanorbornenes and norbornene imides
#      in the force-field tier,
# and prints the wall time from submission to done and the items per second. Each run gets a
# fresh database, created and dropped here. Default server: postgres://127.0.0.1:5432/postgres.
set -euo pipefail
server=${1:-postgres://127.0.0.1:5432/postgres?sslmode=disable}
work=$(mktemp -d)
pids=()
cleanup() { for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done; wait 2>/dev/null || true; rm -rf "$work"; }
trap cleanup EXIT
go build -o "$work/ringsieve" .

# inputs: the committed corpus twice (20,000 lines) and a force-field list
awk '!/^#/ && NF>=2 {print $1, $2"-a"} ' testdata/corpus/candidates.smi > "$work/fast.smi"
awk '!/^#/ && NF>=2 {print $1, $2"-b"} ' testdata/corpus/candidates.smi >> "$work/fast.smi"
python3 - "$work/ff.smi" <<'PY'
import sys
subs = ["C", "O", "OC", "CC", "C(=O)OC", "CO", "N(C)C", "C#N", "F", "Cl"]
rings = ("C1=CCC({})CCCC1", "C1=CC2CC1C({})C2", "C1=CC2OC1C({})C2", "O=C1N({})C(=O)C2C3C=CC(C3)C12")
with open(sys.argv[1], "w") as f:
    i = 0
    for k in range(4):  # 0-3 extra CH2 before the group: 160 distinct structures
        for ring in rings:
            for s in subs:
                f.write(ring.format("C" * k + s) + f" ff-{i}\n")
                i += 1
PY
run() { # workers file method
  local n=$1 file=$2 method=$3
  local db="ringsieve_scale_$$_$n"
  local url="${server%%/postgres*}/$db?sslmode=disable"
  psql "$server" -qc "DROP DATABASE IF EXISTS $db" -qc "CREATE DATABASE $db" >/dev/null 2>&1
  local port
  port=$(python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1",0)); print(s.getsockname()[1]); s.close()')
  "$work/ringsieve" serve --addr "127.0.0.1:$port" --db "$url" --workers 0 --log-level warn 2>>"$work/serve.log" &
  pids+=($!)
  for _ in $(seq 100); do curl -sf "http://127.0.0.1:$port/healthz" >/dev/null && break; sleep 0.1; done
  local wp=()
  for i in $(seq "$n"); do
    "$work/ringsieve" worker --db "$url" --workers 1 --log-level warn 2>>"$work/worker.log" &
    wp+=($!); pids+=($!)
  done
  sleep 1
  local t0 id status total
  t0=$(date +%s.%N)
  id=$(curl -sf -F "file=@$file" -F "thermo_method=$method" "http://127.0.0.1:$port/v1/jobs" | python3 -c 'import json,sys; print(json.load(sys.stdin)["id"])')
  while :; do
    status=$(curl -sf "http://127.0.0.1:$port/v1/jobs/$id" | python3 -c 'import json,sys; j=json.load(sys.stdin); print(j["status"], j["total"])')
    case "$status" in done*|failed*|canceled*) break ;; esac
    sleep 0.2
  done
  local t1; t1=$(date +%s.%N)
  total=${status#* }
  python3 -c "import sys; w=float(sys.argv[2])-float(sys.argv[1]); print(f'  {sys.argv[3]} worker(s): {int(sys.argv[4])} items in {w:.1f} s = {int(sys.argv[4])/w:.0f} items/s ({sys.argv[5]})')" "$t0" "$t1" "$n" "$total" "${status%% *}"
  kill "${wp[@]}" 2>/dev/null || true
  kill "${pids[0]}" 2>/dev/null || true
  wait 2>/dev/null || true
  pids=()
  psql "$server" -qc "DROP DATABASE IF EXISTS $db WITH (FORCE)" >/dev/null
}

echo "== fast tier (table): 20,000 SMILES"
for n in 1 2 4; do run "$n" "$work/fast.smi" table; done
echo "== force-field tier: 160 substituted cyclooctenes, norbornenes, oxanorbornenes, imides"
for n in 1 2 4; do run "$n" "$work/ff.smi" forcefield; done
