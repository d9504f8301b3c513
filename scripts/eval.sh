#!/usr/bin/env bash
# make eval: the real-data evaluation of issue 7.
#
# Builds the debtags benchmark (643 concepts, ~30k records indexed by people)
# from Debian's archive, fits termgrove on its train split, scores the test
# split, measures three reference anchors with Debian's python3-sklearn in
# the same run, and writes the table into BENCHMARKS.md between the
# "eval:begin" and "eval:end" markers.
#
# Settings can be changed from the environment: EVAL_FREE, EVAL_SWEEPS,
# EVAL_WORKERS, EVAL_LAMBDA, EVAL_CALIBRATE (records for the score
# calibration, default 5000; 0 = none), EVAL_HOLDOUT (share of the train
# split kept out of the topic fit, on which the calibration and the word
# layer's combination are learned honestly; default 0.2), EVAL_GROUP (the
# records field whose equal values are held out together, default
# source_package, as the benchmark's own train/test split groups them;
# empty = by record), EVAL_MACRO_FLOOR (the word layer's combination is
# tuned for the most micro F1@5 on the tuning records among settings whose
# macro F1@5 there reaches this; default 0.35, issue 7's macro target;
# 0 = tuned for micro + macro F1@5, fit's default), EVAL_SEED (fit's
# --seed, default 1), EVAL_ANCHORS=0 (skip the anchors).
set -euo pipefail
cd "$(dirname "$0")/.."
tg=bin/termgrove
data=.cache/debtags
out=build/eval
mkdir -p "$out"

[ -f "$data/train.jsonl" ] || bash ../shared/datasets/debtags/build.sh "$data"

free=${EVAL_FREE:-20}
sweeps=${EVAL_SWEEPS:-200}
workers=${EVAL_WORKERS:-$(nproc)}
lambda=${EVAL_LAMBDA:-0}
calibrate=${EVAL_CALIBRATE:-5000}
holdout=${EVAL_HOLDOUT:-0.2}
group=${EVAL_GROUP-source_package}
macro_floor=${EVAL_MACRO_FLOOR:-0.35}
seed=${EVAL_SEED:-1}
start=$(date +%s)

echo "== fit on the train split (free topics $free, sweeps $sweeps, workers $workers)"
$tg fit --vocab "$data/vocabulary.ttl" --records "$data/train.jsonl" --out "$out/debtags.grove" \
  --free-topics "$free" --sweeps "$sweeps" --workers "$workers" --lambda "$lambda" --calibrate "$calibrate" --holdout "$holdout" --group-field "$group" --word-macro-floor "$macro_floor" --seed "$seed" --checkpoint 0 --quiet \
  | tee "$out/fit.txt"
fit_end=$(date +%s)

echo "== score the test split"
$tg score --model "$out/debtags.grove" --records "$data/test.jsonl" --format json \
  --per-concept "$out/per-concept.csv" > "$out/score.json"
$tg score --model "$out/debtags.grove" --records "$data/test.jsonl" | tee "$out/score.txt"
score_end=$(date +%s)

if [ "${EVAL_ANCHORS:-1}" = 1 ]; then
  echo "== anchors (Debian python3-sklearn)"
  /usr/bin/python3 scripts/anchors.py "$data" > "$out/anchors.json"
fi

/usr/bin/python3 - "$out" "$((fit_end - start))" "$((score_end - fit_end))" "$free" "$sweeps" "$workers" "$lambda" "$calibrate" "$holdout" "$group" "$macro_floor" "$seed" <<'EOF'
import json, os, sys, datetime, platform, re
out, fit_s, score_s, free, sweeps, workers, lam, cal, hold, group, mfloor, seed = sys.argv[1:]
tg = json.load(open(os.path.join(out, "score.json")))
rows = [("termgrove", tg["metrics"])]
anchors = {}
if os.path.exists(os.path.join(out, "anchors.json")):
    anchors = json.load(open(os.path.join(out, "anchors.json")))
    for name in ("most-frequent", "label-overlap", "tfidf-svm"):
        if name in anchors["anchors"]:
            rows.append((name, anchors["anchors"][name]["metrics"]))
cpu = "unknown CPU"
for line in open("/proc/cpuinfo"):
    if line.startswith("model name"):
        cpu = line.split(":", 1)[1].strip(); break
lines = []
lines.append("Measured %s on %s (%d cores), `make eval` (EVAL_FREE=%s EVAL_SWEEPS=%s EVAL_WORKERS=%s EVAL_LAMBDA=%s EVAL_CALIBRATE=%s EVAL_HOLDOUT=%s EVAL_GROUP=%s EVAL_MACRO_FLOOR=%s EVAL_SEED=%s)." % (
    datetime.date.today().isoformat(), cpu, os.cpu_count(), free, sweeps, workers, lam, cal, hold, group, mfloor, seed))
lines.append("Test split: %d records scored. termgrove fit %s s, scoring %s s." % (tg["records"], fit_s, score_s))
if anchors:
    svm = anchors["anchors"].get("tfidf-svm", {})
    lines.append("TF-IDF + SVM: C = %s chosen on a grouped validation slice of train (%s); %.0f s." % (
        svm.get("C"), svm.get("validation_micro_f1@5"), svm.get("seconds", 0)))
lines.append("")
lines.append("| method | micro F1@5 | macro F1@5 | micro P@5 | micro R@5 | micro F1@1 | macro F1@10 |")
lines.append("|---|---|---|---|---|---|---|")
for name, m in rows:
    lines.append("| %s | %.3f | %.3f | %.3f | %.3f | %.3f | %.3f |" % (name, m["f1@5"]["micro"], m["f1@5"]["macro"],
        m["precision@5"]["micro"], m["recall@5"]["micro"], m["f1@1"]["micro"], m["f1@10"]["macro"]))
lines.append("")
lines.append("Targets (issue 7): micro F1@5 ≥ 0.53, macro F1@5 ≥ 0.35. termgrove: micro %.3f (%s), macro %.3f (%s)." % (
    tg["metrics"]["f1@5"]["micro"], "met" if tg["metrics"]["f1@5"]["micro"] >= 0.53 else "not met",
    tg["metrics"]["f1@5"]["macro"], "met" if tg["metrics"]["f1@5"]["macro"] >= 0.35 else "not met"))
block = "\n".join(lines)
path = "BENCHMARKS.md"
text = open(path).read() if os.path.exists(path) else "# Benchmarks\n"
begin, end = "<!-- eval:begin -->", "<!-- eval:end -->"
if begin in text and end in text:
    text = text[: text.index(begin) + len(begin)] + "\n" + block + "\n" + text[text.index(end):]
else:
    text += "\n## Real-data evaluation (debtags)\n\n" + begin + "\n" + block + "\n" + end + "\n"
open(path, "w").write(text)
print(block)
EOF
