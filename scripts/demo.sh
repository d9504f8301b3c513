#!/usr/bin/env bash
# The demo pipeline on the bundled Harrowmere Valley scenario.
set -euo pipefail
cd "$(dirname "$0")/.."
tg=bin/termgrove
out=build/demo
mkdir -p "$out"
vocab=testdata/demo/vocabulary.ttl
[ -f "$vocab" ] || vocab=testdata/small.ttl
echo "== termgrove check $vocab"
$tg check "$vocab" || true
