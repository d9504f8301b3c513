#!/usr/bin/env bash
# Load and overload figures of `termgrove serve` (bench/serve.md), on this
# machine only (loopback), each step bounded in time.
#
#   bash cmd/loadtest/bench.sh [MODEL.grove] [RECORDS.jsonl]   # ~3 minutes
#   SOAK=10m bash cmd/loadtest/bench.sh ...                      # adds the soak
#
# Without MODEL a synthetic 640-concept model is made under .cache/load/.
# Steps: the in-process annotator (reference), closed loops at concurrency
# 1, 8 and 64, an open loop at 3x the measured capacity for 60 s, and with
# SOAK an open loop at 70% of capacity for that long.
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

bin/termgrove serve --model "bench=$model" --listen 127.0.0.1:7400 --metrics-listen 127.0.0.1:7401 \
  --log-level warn 2>.cache/load/serve.log &
pid=$!
trap 'kill -TERM $pid 2>/dev/null; wait $pid 2>/dev/null || true' EXIT

echo "## $(date -u +%FT%TZ) $(nproc) cores, load average: $(cut -d' ' -f1-3 /proc/loadavg)"
bin/loadtest -mode local -concurrency 1,2 -duration 10s -words-from "$model"
bin/loadtest -mode sweep -concurrency 1,8,64 -duration 10s "${src[@]}" > .cache/load/sweep.txt
cat .cache/load/sweep.txt
out=$(cat .cache/load/sweep.txt)
# Capacity: the best accepted rate of the sweep.
cap=$(echo "$out" | sed -n 's/.*ok=[0-9]* (\([0-9]*\)\/s).*/\1/p' | sort -n | tail -1)
echo "## capacity ${cap}/s; overload at 3x = $((cap * 3))/s for $OVERLOAD"
bin/loadtest -mode rate -rate $((cap * 3)) -duration "$OVERLOAD" -timeout 5s "${src[@]}"
if [ -n "${SOAK:-}" ]; then
  echo "## soak at 70% = $((cap * 7 / 10))/s for $SOAK"
  bin/loadtest -mode rate -rate $((cap * 7 / 10)) -duration "$SOAK" "${src[@]}"
fi
kill -0 $pid && echo "## server still up after the run"
