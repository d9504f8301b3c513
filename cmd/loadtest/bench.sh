#!/usr/bin/env bash
# Load and overload figures of `termgrove serve` (bench/serve.md), on this
# machine only (loopback), each step bounded in time.
#
#   bash cmd/loadtest/bench.sh [MODEL.grove] [RECORDS.jsonl]   # ~3 minutes
#   SOAK=10m bash cmd/loadtest/bench.sh ...                      # adds the soak
#
# Without MODEL a synthetic 640-concept model is made under .cache/load/.
# Steps: the in-process annotator (reference), the transport's ceiling
# (records of words the model does not know), closed loops at concurrency
# 1, 8 and 64, AnnotateStream messages of 32 records, an open loop at 3x the
# measured capacity for 60 s, and with SOAK an open loop at 70% of capacity
# for that long. PORT (default 7400) and PORT+1 must be free.
set -euo pipefail
cd "$(dirname "$0")/../.."
mkdir -p .cache/load bin
go build -o bin/termgrove ./cmd/termgrove
go build -o bin/loadtest ./cmd/loadtest
model=${1:-.cache/load/syn640.grove}
[ -f "$model" ] || bin/loadtest -make-model "$model"
src=(-words-from "$model")
[ -n "${2:-}" ] && src=(-records-file "$2")
OVERLOAD=${OVERLOAD:-60s}
STEP=${STEP:-10s} # duration of each closed-loop step
PORT=${PORT:-7400}
addr=(-addr 127.0.0.1:$PORT -metrics 127.0.0.1:$((PORT + 1)))

bin/termgrove serve --model "bench=$model" --listen 127.0.0.1:$PORT --metrics-listen 127.0.0.1:$((PORT + 1)) \
  --log-level warn 2>.cache/load/serve.log &
pid=$!
trap 'kill -TERM $pid 2>/dev/null; wait $pid 2>/dev/null || true' EXIT
# The server must be ours: one that failed to bind exits at once, and the
# load would then go to whatever holds the port.
for _ in $(seq 50); do
  kill -0 $pid 2>/dev/null || { cat .cache/load/serve.log; echo "bench.sh: the server did not start" >&2; exit 1; }
  grep -q "127.0.0.1:$PORT" <(ss -ltnp 2>/dev/null | grep "pid=$pid,") && break
  sleep 0.2
done

echo "## $(date -u +%FT%TZ) $(nproc) cores, load average: $(cut -d' ' -f1-3 /proc/loadavg)"
bin/loadtest -mode local -concurrency 1,2 -duration "$STEP" -words-from "$model"
echo "## transport ceiling: 150 words the model does not know"
bin/loadtest "${addr[@]}" -mode sweep -concurrency 8 -duration "$STEP" -unknown-words
# Refused workers back off (2 ms, doubling up to 64 ms), as the server asks
# and as gRPC clients' retry policies do, instead of spinning on refusals.
bin/loadtest "${addr[@]}" -mode sweep -concurrency 1,8,64 -duration "$STEP" -busy-backoff 2ms "${src[@]}" > .cache/load/sweep.txt
cat .cache/load/sweep.txt
bin/loadtest "${addr[@]}" -mode stream -concurrency 1,2 -batch 32 -duration "$STEP" "${src[@]}"
# Capacity: the best accepted rate of the unary sweep.
cap=$(sed -n 's/.*ok=[0-9]* (\([0-9]*\)\/s).*/\1/p' .cache/load/sweep.txt | sort -n | tail -1)
echo "## capacity ${cap}/s; overload at 3x = $((cap * 3))/s for $OVERLOAD"
bin/loadtest "${addr[@]}" -mode rate -rate $((cap * 3)) -duration "$OVERLOAD" -timeout 5s "${src[@]}"
if [ -n "${SOAK:-}" ]; then
  echo "## soak at 70% = $((cap * 7 / 10))/s for $SOAK"
  bin/loadtest "${addr[@]}" -mode rate -rate $((cap * 7 / 10)) -duration "$SOAK" "${src[@]}"
fi
kill -0 $pid && echo "## server still up after the run; load average: $(cut -d' ' -f1-3 /proc/loadavg)"
