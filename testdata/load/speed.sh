#!/usr/bin/env bash
# Speed figures of the README's performance table (run from the repository root):
#   bash testdata/load/speed.sh
# Needs RDKit from Debian (python3-rdkit) for the reference, wrk for the HTTP part, hyperfine
# for the cold start, GNU time;
# it installs vegeta v12.13.0 from the Go module proxy into a temporary folder.
#   1. offline screening of 100,000 SMILES (the corpus ten times, distinct ids), whole process,
#      on all cores and on one (structures per second per core):
#      ringsieve's fast tier against RDKit parsing, ring perception, aromaticity, formula and
#      substructure counts (testdata/load/rdkit_reference_screen.py);
#      the same for its first 10,000 lines (where cold caches weigh more), a cold start
#      (one structure, whole process), the memory of 10,000 and 100,000 in CSV and JSON Lines,
#      and (when valgrind is installed) instructions per structure for one, 10,000 and 30,000
#      (the last also with the collector off, the count to compare builds by);
#   2. the 100,000 as a job: upload, screen and store, CSV and JSON Lines downloads; then the job
#      and the offline screen alternately, three rounds, in wall and CPU time;
#   3. POST /v1/screen against GET /healthz on one server (wrk, 2 threads, 16 connections, three
#      alternating rounds of 5 s each),
#      then /v1/screen at a constant rate of a quarter and of an eighth of that saturation rate
#      for 10 s each (vegeta, an open-loop load tool installed here with go install) for latency
#      percentiles;
#   4. the force-field tier on one core: 40 substituted norbornenes, oxanorbornenes, imides and
#      cyclooctenes.
set -euo pipefail
work=$(mktemp -d)
pid=""
trap '[ -n "$pid" ] && kill "$pid" 2>/dev/null; rm -rf "$work"' EXIT
go build -o "$work/ringsieve" .
for i in 0 1 2 3 4 5 6 7 8 9; do awk -v p=$i '!/^#/ && NF>=2 {print $1, $2"-r"p}' testdata/corpus/candidates.smi; done > "$work/100k.smi"

echo "== 1. offline, 100,000 SMILES, whole process"
/usr/bin/time -f "ringsieve screen (fast tier, all cores): %e s wall, %U s user, %S s sys, peak %M kB" \
  "$work/ringsieve" screen --thermo-method table --format csv "$work/100k.smi" > "$work/out.csv" 2>"$work/err" || true
tail -1 "$work/err"
GOMAXPROCS=1 /usr/bin/time -f "ringsieve screen (fast tier, one core): %e s wall, %U s user, %S s sys, peak %M kB" \
  "$work/ringsieve" screen --thermo-method table --format csv "$work/100k.smi" > /dev/null 2>"$work/err" || true
tail -1 "$work/err"
# the goal's per-core form: structures per second of one core's wall time, whole process
tail -1 "$work/err" | awk '$7 > 0 {printf "one core: %.0f structures/s (whole process, 100,000 lines)\n", 100000 / $7}'
/usr/bin/time -f "RDKit reference (one core): %e s wall, %U s user, %S s sys, peak %M kB" \
  /usr/bin/python3 testdata/load/rdkit_reference_screen.py "$work/100k.smi"

echo "== 1b. the first 10,000 of them (cold caches weigh more)"
head -n 10000 "$work/100k.smi" > "$work/10k.smi"
/usr/bin/time -f "ringsieve screen (fast tier, all cores): %e s wall, %U s user" \
  "$work/ringsieve" screen --thermo-method table --format csv "$work/10k.smi" > /dev/null 2>"$work/err" || true
tail -1 "$work/err"
/usr/bin/time -f "RDKit reference (one core): %e s wall, %U s user" \
  /usr/bin/python3 testdata/load/rdkit_reference_screen.py "$work/10k.smi"

echo "== 1c. a cold start: one structure, whole process (hyperfine, 50 runs)"
head -n 1 "$work/100k.smi" > "$work/one.smi"
hyperfine -N -w 5 -r 50 --export-json "$work/cold.json" "$work/ringsieve screen --thermo-method table --format csv $work/one.smi" > /dev/null
python3 -c "import json,sys; r=json.load(open(sys.argv[1]))['results'][0]; print(f\"one SMILES, whole process: {1000*r['mean']:.1f} ms mean (sd {1000*r['stddev']:.1f}), user {1000*r['user']:.1f} ms, system {1000*r['system']:.1f} ms\")" "$work/cold.json"

echo "== 1d. memory of the offline screen: 10,000 and 100,000, CSV and JSON Lines"
# peak resident size and page faults (GNU time), and the Go heap left after the last collection
# (the runtime's gctrace line: live MB after the cycle), which stays flat in the input's size
for f in 10k 100k; do
  [ "$f" = 10k ] && in="$work/10k.smi" || in="$work/100k.smi"
  for fmt in csv jsonl; do
    GODEBUG=gctrace=1 /usr/bin/time -f "%M %R" -o "$work/mem" "$work/ringsieve" screen --thermo-method table --format "$fmt" "$in" 2>"$work/gc" >/dev/null || true
    read -r peak faults < "$work/mem"
    live=$(grep '^gc ' "$work/gc" | tail -1 | sed -E 's/.*->([0-9]+) MB,.*/\1/')
    echo "$f $fmt: peak resident $((peak / 1024)) MB, $faults page faults, Go heap after the last collection ${live:-?} MB"
  done
done

echo "== 1e. instructions per structure (callgrind, one core; skipped without valgrind)"
# counts repeat to 1–4 % (the collector on) where wall time swings by a fifth (DEVELOPERS.md:
# "Small changes on a noisy machine"); a run that dies of SIGILL in runtime.cputicks under
# valgrind is retried
if command -v valgrind >/dev/null; then
  head -30000 "$work/100k.smi" > "$work/30k.smi"
  echo "C1=CC2CC1C(C(=O)OC)C2 one" > "$work/one.smi"
  # the last line counts with the collector off (GOGC=off), which repeats to a few parts in a
  # million: the figure to compare builds by
  for run in "one" "10k" "30k" "30k off"; do
    f=${run%% *}
    gogc=""
    [ "$run" = "30k off" ] && gogc=off
    n=$(wc -l < "$work/$f.smi")
    for _ in 1 2 3; do
      GOGC=$gogc GODEBUG=asyncpreemptoff=1 GOMAXPROCS=1 valgrind --tool=callgrind --callgrind-out-file="$work/cg.out" \
        "$work/ringsieve" screen --thermo-method table --format csv "$work/$f.smi" >/dev/null 2>"$work/cg.err" && break
    done
    ir=$(grep -o 'I *refs: *[0-9,]*' "$work/cg.err" | tr -dc '0-9')
    python3 -c "import sys; ir, n, f = int(sys.argv[1] or 0), int(sys.argv[2]), sys.argv[3]; print(f'{f}: {n} lines, {ir/1e6:,.1f} million instructions, {ir/n:,.0f} per line (whole process)')" "$ir" "$n" "$f${gogc:+ (GOGC=off)}"
  done
  rm -f "$work/cg.out"
else
  echo "valgrind not installed: skipped"
fi

echo "== 2. the same file as a job (SQLite store)"
port=$(python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1",0)); print(s.getsockname()[1]); s.close()')
base="http://127.0.0.1:$port"
"$work/ringsieve" serve --addr "127.0.0.1:$port" --db "$work/jobs.db" --log-level warn 2>"$work/serve.log" &
pid=$!
for _ in $(seq 100); do curl -sf "$base/healthz" >/dev/null && break; sleep 0.1; done
t0=$(date +%s.%N)
id=$(curl -sf -F "file=@$work/100k.smi" -F thermo_method=table "$base/v1/jobs" | python3 -c 'import json,sys; print(json.load(sys.stdin)["id"])')
# the end of the job is awaited by a status request the server holds until the job ends
# (GET /v1/jobs/{id}?wait=60), so the time is not rounded up to a polling interval
python3 - "$port" "$id" <<'PY'
import http.client, json, sys
c = http.client.HTTPConnection("127.0.0.1", int(sys.argv[1]), timeout=120)
while True:
    c.request("GET", "/v1/jobs/" + sys.argv[2] + "?wait=60")
    if json.loads(c.getresponse().read()).get("status") in ("done", "failed", "canceled"):
        break
PY
t1=$(date +%s.%N)
curl -sf "$base/v1/jobs/$id/results?format=csv" > "$work/job.csv"
t2=$(date +%s.%N)
curl -sf "$base/v1/jobs/$id/results?format=jsonl" > /dev/null
t3=$(date +%s.%N)
python3 -c "import sys; a,b,c,d=map(float,sys.argv[1:5]); print(f'job: submitted to done {b-a:.2f} s; CSV download {c-b:.2f} s; JSON Lines download {d-c:.2f} s')" "$t0" "$t1" "$t2" "$t3"
ls -l "$work/jobs.db" | awk '{printf "database file: %.0f MB\n", $5/1e6}'
cmp -s "$work/job.csv" "$work/out.csv" && echo "job CSV identical to the offline screen" || echo "job CSV DIFFERS from the offline screen"

echo "== 2b. job against the offline screen, run alternately (3 rounds; wall and CPU time)"
tick=$(getconf CLK_TCK)
# the server's CPU seconds so far (user + system, from /proc)
server_cpu() { awk -v t="$tick" '{print ($14 + $15) / t}' "/proc/$pid/stat"; }
ratios=""
for round in 1 2 3; do
  /usr/bin/time -f "%e %U %S" -o "$work/offtime" "$work/ringsieve" screen --thermo-method table --format csv "$work/100k.smi" > /dev/null 2>&1 || true
  c0=$(server_cpu)
  jw=$(python3 - "$port" "$work/100k.smi" <<'PY'
import http.client, json, sys, time, uuid
port, path = int(sys.argv[1]), sys.argv[2]
b = uuid.uuid4().hex
body = (f'--{b}\r\nContent-Disposition: form-data; name="thermo_method"\r\n\r\ntable\r\n--{b}\r\n'
        f'Content-Disposition: form-data; name="file"; filename="100k.smi"\r\n\r\n').encode() + open(path, 'rb').read() + f'\r\n--{b}--\r\n'.encode()
c = http.client.HTTPConnection("127.0.0.1", port, timeout=120)
t0 = time.time()
c.request("POST", "/v1/jobs", body, {"Content-Type": f"multipart/form-data; boundary={b}"})
job = json.loads(c.getresponse().read())["id"]
while True:
    c.request("GET", "/v1/jobs/" + job + "?wait=60")
    if json.loads(c.getresponse().read()).get("status") in ("done", "failed", "canceled"):
        break
print(f"{time.time() - t0:.3f}")
PY
)
  c1=$(server_cpu)
  read -r ow ou os < "$work/offtime"
  line=$(python3 -c "import sys; ow,ou,os_,jw,c0,c1=map(float,sys.argv[1:7]); oc=ou+os_; jc=c1-c0; print(f'round {sys.argv[7]}: offline {ow:.2f} s ({oc:.2f} CPU-s), job {jw:.2f} s ({jc:.2f} CPU-s): {jw/ow:.2f}x wall, {jc/oc:.2f}x CPU')" "$ow" "$ou" "$os" "$jw" "$c0" "$c1" "$round")
  echo "$line"
  ratios="$ratios $(echo "$line" | sed -E 's/.*: ([0-9.]+)x wall.*/\1/')"
done
python3 -c "import sys, statistics; print(f'job against the offline screen: median {statistics.median(map(float, sys.argv[1:])):.2f}x wall')" $ratios

echo "== 3. POST /v1/screen against GET /healthz (wrk -t2 -c16, 3 × 5 s each, alternating)"
cat > "$work/screen.lua" <<'LUA'
wrk.method = "POST"
wrk.headers["Content-Type"] = "application/json"
local smiles = {"CN1C(=O)C2C3C=CC(C3)C2C1=O", "C1=CC2CCC1C2", "COC(=O)C1CC2C=CC1C2", "C1=CCCC1", "C1=C\\\\CCCCCC/1", "OCC1CC2C=CC1C2"}
local i = 0
request = function()
  i = i + 1
  return wrk.format(nil, "/v1/screen", nil, '{"smiles":"' .. smiles[(i % #smiles) + 1] .. '","conditions":{"thermo_method":"table"}}')
end
LUA
# three alternating rounds (the machine is shared: a ratio taken side by side is steadier than
# one long run of each); the median ratio is the figure
ratios=""
for round in 1 2 3; do
  h=$(wrk -t2 -c16 -d5s "$base/healthz" | awk '/Requests\/sec/ {print $2}')
  sres=$(wrk -t2 -c16 -d5s --latency -s "$work/screen.lua" "$base")
  sr=$(echo "$sres" | awk '/Requests\/sec/ {print $2}')
  p99=$(echo "$sres" | awk '$1=="99%" {print $2}')
  python3 -c "import sys; h,s=float(sys.argv[1]),float(sys.argv[2]); print(f'round {sys.argv[4]}: /healthz {h:.0f}/s, /v1/screen {s:.0f}/s (ratio {s/h:.2f}), /v1/screen p99 {sys.argv[3]} at saturation')" "$h" "$sr" "$p99" "$round"
  ratios="$ratios $(python3 -c "import sys; print(float(sys.argv[2])/float(sys.argv[1]))" "$h" "$sr")"
  srs="${srs:-} $sr"
done
python3 -c "import sys, statistics; print(f'/v1/screen against /healthz: median ratio {statistics.median(map(float, sys.argv[1:])):.2f}')" $ratios
GOBIN="$work/bin" go install github.com/tsenart/vegeta/v12@v12.13.0
# open-loop load at a quarter and at an eighth of the saturation rate (the median of the rounds
# above): vegeta shares the two cores and needs about a third of a core per 1,000 requests/s
# itself, so at half the rate it starves the server and measures its own queue; on a slow day a
# quarter can do that too (the eighth then still says what the server does). Its connections are
# capped (-max-workers): past that the achieved rate falls short of the asked one, which the line
# shows, instead of vegeta opening ever more connections
python3 - "$base" > "$work/targets.jsonl" <<'PY'
import base64, json, sys
for s in ["CN1C(=O)C2C3C=CC(C3)C2C1=O", "C1=CC2CCC1C2", "COC(=O)C1CC2C=CC1C2", "C1=CCCC1", "C1=C\\CCCCCC/1", "OCC1CC2C=CC1C2"]:
    body = json.dumps({"smiles": s, "conditions": {"thermo_method": "table"}}).encode()
    print(json.dumps({"method": "POST", "url": sys.argv[1] + "/v1/screen", "body": base64.b64encode(body).decode(),
                      "header": {"Content-Type": ["application/json"]}}))
PY
for part in 4 8; do
  rate=$(python3 -c "import sys, statistics; print(int(statistics.median(map(float, sys.argv[2:])) / int(sys.argv[1])))" "$part" $srs)
  "$work/bin/vegeta" attack -format=json -targets="$work/targets.jsonl" -rate="$rate/s" -duration=10s -workers=16 -max-workers=64 > "$work/vegeta.bin"
  "$work/bin/vegeta" report -type=json "$work/vegeta.bin" | python3 -c "
import json, sys
r = json.load(sys.stdin); l = r['latencies']
print(f\"/v1/screen at a constant rate, 1/$part of saturation: asked $rate/s, achieved {r['rate']:.0f}/s for 10 s (vegeta): p50 {l['50th']/1e6:.2f} ms, p99 {l['99th']/1e6:.2f} ms, max {l['max']/1e6:.1f} ms, success {100*r['success']:.1f} %\")"
done
kill "$pid"; pid=""

echo "== 4. force-field tier on one core"
python3 - "$work/ff.smi" <<'PY'
import sys
subs = ["C", "O", "OC", "CC", "C(=O)OC", "CO", "N(C)C", "C#N", "F", "Cl"]
rings = ("C1=CCC({})CCCC1", "C1=CC2CC1C({})C2", "C1=CC2OC1C({})C2", "O=C1N({})C(=O)C2C3C=CC(C3)C12")
with open(sys.argv[1], "w") as f:
    i = 0
    for ring in rings:
        for s in subs:
            f.write(ring.format(s) + f" ff-{i}\n")
            i += 1
PY
GOMAXPROCS=1 /usr/bin/time -f "%e %U" -o "$work/fftime" "$work/ringsieve" screen --thermo-method forcefield --format csv "$work/ff.smi" > /dev/null 2>&1 || true
python3 -c "import sys; w,u=open(sys.argv[1]).read().split()[:2]; print(f'40 candidates in {float(w):.1f} s on one core: {40/float(w):.1f} candidates/s')" "$work/fftime"
