#!/usr/bin/env bash
# Issue 5's speed comparison in one run: termgrove's concepts-only
# annotation (BenchmarkAnnotateFile/concepts-only, one core, 150 analysed
# tokens a text) against gensim's LdaModel.get_document_topics on a model
# of the same K, on the same 500 texts as word ids. The two alternate
# PAIRS times, so that both see the same machine; each pair's ratio is
# gensim's median latency over termgrove's, and the run ends with the
# median and the lowest ratio and how many pairs reach the target.
#
#   bash scripts/gensim_ratio.sh            (PAIRS=10, TARGET=20)
#
# Needs the debtags benchmark (bash ../shared/datasets/debtags/build.sh
# .cache/debtags) and Debian's python3-gensim. The termgrove model and the
# gensim model are made on first use and kept in .cache/annbench:
#   debtags.grove   termgrove fit, 50 free topics, 200 sweeps, 1 worker
#   gensim/         word ids (docs.txt, train.txt) and lda-K.model
# (models made by another build are kept; delete them to refit).
set -euo pipefail
cd "$(dirname "$0")/.."
pairs=${PAIRS:-10}
target=${TARGET:-20}
data=.cache/debtags
dir=.cache/annbench
for f in vocabulary.ttl train.jsonl test.jsonl; do
  if [ ! -f "$data/$f" ]; then
    echo "gensim_ratio: $data/$f missing: run bash ../shared/datasets/debtags/build.sh $data" >&2
    exit 1
  fi
done
if ! /usr/bin/python3 -c 'import gensim' 2>/dev/null; then
  echo "gensim_ratio: /usr/bin/python3 lacks gensim (Debian python3-gensim)" >&2
  exit 1
fi
mkdir -p "$dir/gensim" build
go build -o build/termgrove ./cmd/termgrove
go test -c -o build/annotate.test ./annotate
if [ ! -f "$dir/debtags.grove" ]; then
  build/termgrove fit --vocab "$data/vocabulary.ttl" --records "$data/train.jsonl" \
    --out "$dir/debtags.grove" --free-topics 50 --sweeps 200 --workers 1
fi
model=$PWD/$dir/debtags.grove
recs=$PWD/$data/test.jsonl
run_tg() { # prints the concepts-only median latency in µs
  (cd annotate && TG_ANN_MODEL="$model" TG_ANN_RECORDS="$recs" "$@" ../build/annotate.test \
    -test.run '^$' -test.bench 'AnnotateFile/concepts-only' -test.benchtime 3000x) |
    awk '/concepts-only/ { for (i = 1; i < NF; i++) if ($(i+1) == "median-µs") print $i }'
}
if [ ! -f "$dir/gensim/docs.txt" ] || [ ! -f "$dir/gensim/train.txt" ]; then
  run_tg env TG_ANN_EXPORT="$PWD/$dir/gensim" TG_ANN_TRAIN="$PWD/$data/train.jsonl" >/dev/null
fi
# W and K of the termgrove model, for gensim's model of the same size.
read -r W K < <(cd annotate && TG_ANN_MODEL="$model" TG_ANN_RECORDS="$recs" ../build/annotate.test \
  -test.run '^$' -test.bench 'AnnotateFile/concepts-only' -test.benchtime 1x -test.v |
  sed -n 's/.*K=\([0-9]*\) W=\([0-9]*\) loaded.*/\2 \1/p' | head -1)
run_gensim() { # prints get_document_topics' median latency in µs
  OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 /usr/bin/python3 bench/annotate_gensim.py "$dir/gensim" "$W" "$K" |
    sed -n 's/.*median \([0-9]*\) us.*/\1/p'
}
echo "# $(date -u '+%Y-%m-%d %H:%M UTC'), $(git describe --always --dirty 2>/dev/null || echo unknown), $(nproc) cores,"
echo "# $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), load average $(cut -d' ' -f1-3 /proc/loadavg)"
echo "# K=$K W=$W; termgrove concepts-only 3,000 calls, gensim 3 x 500 calls; median latency per text"
printf '%-5s %14s %12s %8s\n' pair termgrove-µs gensim-µs ratio
ratios=()
for p in $(seq 1 "$pairs"); do
  t=$(run_tg env)
  g=$(run_gensim)
  r=$(awk -v g="$g" -v t="$t" 'BEGIN { printf "%.1f", g / t }')
  ratios+=("$r")
  printf '%-5s %14s %12s %8s\n' "$p" "$t" "$g" "$r"
done
printf '%s\n' "${ratios[@]}" | sort -g | awk -v target="$target" '
  { r[NR] = $1; if ($1 >= target) n++ }
  END {
    med = (NR % 2) ? r[(NR + 1) / 2] : (r[NR / 2] + r[NR / 2 + 1]) / 2
    printf "gensim/termgrove: median %.1fx, lowest %.1fx, highest %.1fx; %d of %d pairs at %dx or more\n", med, r[1], r[NR], n, NR, target
  }'
echo "# $(date -u '+%H:%M UTC'), load average $(cut -d' ' -f1-3 /proc/loadavg)"
