#!/usr/bin/env bash
# make bench: run the Go benchmarks of the module once each, as a quick
# check that they work and a first idea of the figures.
#
# The figures in BENCHMARKS.md come from longer, repeated runs beside a
# reference measured in the same run (rapper, gensim, strings.Fields, ...);
# each section there names its command. This script is the short version.
#
# Environment:
#   BENCH      benchmark pattern (go test -bench), default "."
#   BENCHSKIP  pattern of benchmarks to leave out (go test -skip), default
#              "Analyze50MB" (one 50 MB record: about 1 GB of memory)
#   BENCHTIME  go test -benchtime, default "1x"
#   PKGS       packages, default "./..."
# Benchmarks over the WordNet vocabulary skip themselves unless
# .cache/wordnet exists (bash ../shared/datasets/wordnet/build.sh .cache/wordnet).
set -euo pipefail
cd "$(dirname "$0")/.."
out=build/bench
mkdir -p "$out"
log="$out/go-bench.txt"
pattern=${BENCH:-.}
skip=${BENCHSKIP:-Analyze50MB}
benchtime=${BENCHTIME:-1x}
pkgs=${PKGS:-./...}

{
  echo "# $(date -u '+%Y-%m-%d %H:%M UTC'), $(git describe --always --dirty 2>/dev/null || echo unknown),"
  echo "# $(nproc) cores, load average $(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo unknown)"
  echo "# go test -run '^\$' -bench '$pattern' -skip '$skip' -benchtime $benchtime -benchmem $pkgs"
} | tee "$log"
set +e
# shellcheck disable=SC2086
go test -run '^$' -bench "$pattern" -skip "$skip" -benchtime "$benchtime" -benchmem $pkgs 2>&1 |
  grep -v '^\(PASS\|?\|testing: warning\)' | tee -a "$log"
rc=${PIPESTATUS[0]}
set -e
echo
echo "bench: raw output in $log"
echo "bench: measured figures with their commands, machine, date and same-run"
echo "       references are in BENCHMARKS.md (per-area notes in bench/*.md)."
exit "$rc"
