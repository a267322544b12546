#!/usr/bin/env bash
# Load and throughput measurements for ringsieve (run from the repository root):
#   bash testdata/load/load.sh
# Needs wrk (apt-get install -y wrk). Builds the binary, starts it on a free port with a
# temporary database, then
#   1. /v1/screen under wrk (2 threads, 32 connections, 20 s): requests/s and latency percentiles;
#   2. asynchronous jobs of 10,000 and 100,000 SMILES: wall time and the service's peak RSS.
#   bash testdata/load/load.sh jobs   runs only part 2.
set -euo pipefail
part=${1:-all}
root=$(pwd)
work=$(mktemp -d)
trap 'kill "$pid" 2>/dev/null || true; rm -rf "$work"' EXIT
go build -o "$work/ringsieve" .
port=$(python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1",0)); print(s.getsockname()[1]); s.close()')
base="http://127.0.0.1:$port"
"$work/ringsieve" serve --addr "127.0.0.1:$port" --db "$work/load.db" --log-level warn 2> "$work/serve.log" &
pid=$!
for _ in $(seq 50); do curl -sf "$base/healthz" >/dev/null && break; sleep 0.1; done

if [ "$part" = all ]; then
echo "== wrk: POST /v1/screen (norbornene imide, default conditions)"
cat > "$work/screen.lua" <<'LUA'
wrk.method = "POST"
wrk.headers["Content-Type"] = "application/json"
-- SMILES are written as they must appear inside a JSON string (a backslash doubled)
local smiles = {"CN1C(=O)C2C3C=CC(C3)C2C1=O", "C1=CC2CCC1C2", "COC(=O)C1CC2C=CC1C2", "C1=CCCC1", "C1=C\\\\CCCCCC/1", "OCC1CC2C=CC1C2"}
local i = 0
request = function()
  i = i + 1
  return wrk.format(nil, "/v1/screen", nil, '{"smiles":"' .. smiles[(i % #smiles) + 1] .. '"}')
end
LUA
for c in 8 32; do
  echo "-- $c connections"
  wrk -t2 -c$c -d20s --latency -s "$work/screen.lua" "$base" | sed -n '3,20p'
done

echo "== vegeta: POST /v1/screen at a constant 5,000 requests/s for 20 s"
i=0
: > "$work/targets.txt"
for smi in 'CN1C(=O)C2C3C=CC(C3)C2C1=O' 'C1=CC2CCC1C2' 'COC(=O)C1CC2C=CC1C2' 'C1=CCCC1' 'C1=C\\CCCCCC/1' 'OCC1CC2C=CC1C2'; do
  i=$((i+1))
  printf '{"smiles":"%s"}' "$smi" > "$work/body$i.json"
  printf 'POST %s/v1/screen\nContent-Type: application/json\n@%s\n\n' "$base" "$work/body$i.json" >> "$work/targets.txt"
done
go run github.com/tsenart/vegeta/v12@v12.13.0 attack -targets "$work/targets.txt" -rate 5000/s -duration 20s -workers 16 > "$work/vegeta.bin"
go run github.com/tsenart/vegeta/v12@v12.13.0 report -type text "$work/vegeta.bin"
go run github.com/tsenart/vegeta/v12@v12.13.0 report -type 'hist[0,1ms,2ms,5ms,10ms,20ms]' "$work/vegeta.bin"
fi

job() {
  local n=$1
  # a fresh service per size, so that its peak RSS is the job's alone
  kill "$pid" 2>/dev/null || true
  wait "$pid" 2>/dev/null || true
  "$work/ringsieve" serve --addr "127.0.0.1:$port" --db "$work/job-$n.db" --log-level warn 2>> "$work/serve.log" &
  pid=$!
  for _ in $(seq 50); do curl -sf "$base/healthz" >/dev/null && break; sleep 0.1; done
  awk -v n="$n" 'BEGIN{c=0} !/^#/ && NF>=2 {line[c++]=$1} END{for(i=0;i<n;i++) printf "%s id-%06d\n", line[i%c], i}' "$root/testdata/corpus/candidates.smi" > "$work/job-$n.smi"
  local start end id status
  start=$(date +%s.%N)
  id=$(curl -s -F "file=@$work/job-$n.smi" "$base/v1/jobs" | python3 -c 'import json,sys; print(json.load(sys.stdin)["id"])')
  while :; do
    status=$(curl -s "$base/v1/jobs/$id" | python3 -c 'import json,sys; print(json.load(sys.stdin)["status"])')
    [ "$status" = done ] && break
    sleep 0.2
  done
  end=$(date +%s.%N)
  echo "job of $n SMILES: $(python3 -c "print(round($end-$start,2))") s wall (upload, screening, storing); peak RSS of the service $(awk '/VmHWM/{print $2, $3}' /proc/$pid/status)"
  curl -s "$base/v1/jobs/$id/results?format=csv" -o "$work/out-$n.csv"
  echo "   ranked CSV: $(($(wc -l < "$work/out-$n.csv") - 1)) rows"
}
echo "== asynchronous jobs"
job 10000
job 100000
job 200000
