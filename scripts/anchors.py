#!/usr/bin/python3
"""Reference anchors for `make eval`, measured with Debian's python3-sklearn.

Three general-purpose ways of suggesting subjects, scored on the same test
split with the same definitions as `termgrove score` (DESIGN.md, "Scoring
definitions"):

  most-frequent   the k concepts most used in the training split, for every record
  label-overlap   concepts ranked by how many of their label words the record uses
  tfidf-svm       TF-IDF + one-vs-rest linear SVM (scikit-learn LinearSVC),
                  C chosen on a validation slice of the training split
                  (grouped by source package, as the benchmark's own split is)

usage: anchors.py DATA_DIR > anchors.json   (DATA_DIR from datasets/debtags/build.sh)
"""
import hashlib
import json
import math
import re
import sys
import time
from collections import Counter, defaultdict

import numpy as np
from sklearn.feature_extraction.text import ENGLISH_STOP_WORDS, TfidfVectorizer
from sklearn.svm import LinearSVC

KS = (1, 3, 5, 10)
WORD = re.compile(r"\w+", re.UNICODE)


def read_jsonl(path):
    with open(path, encoding="utf-8") as f:
        return [json.loads(line) for line in f if line.strip()]


def text_of(r):
    return (r.get("title") or "") + "\n\n" + (r.get("text") or "")


def read_labels(path):
    """prefLabel and notation of each concept, read off the benchmark's Turtle
    (one subject block per concept, as build.py writes it)."""
    labels = {}
    cur = None
    for line in open(path, encoding="utf-8"):
        m = re.match(r"^<([^>]+)> a skos:Concept", line)
        if m:
            cur = m.group(1)
            labels[cur] = []
            continue
        if cur is None:
            continue
        m = re.search(r'skos:(prefLabel|altLabel|notation) "((?:[^"\\]|\\.)*)"', line)
        if m:
            labels[cur].append(m.group(2))
    return labels


def score(preds, golds, k):
    """DESIGN.md definitions: preds are ranked lists, golds sets."""
    tp = 0
    ngold = 0
    tpl, ppl, gpl = Counter(), Counter(), Counter()
    for p, g in zip(preds, golds):
        top = p[:k]
        for c in top:
            ppl[c] += 1
            if c in g:
                tp += 1
                tpl[c] += 1
        for c in g:
            gpl[c] += 1
        ngold += len(g)
    n = len(golds)
    P = tp / (k * n) if n else 0
    R = tp / ngold if ngold else 0
    F = 2 * P * R / (P + R) if P + R else 0
    ls = list(gpl)
    mP = sum(tpl[l] / ppl[l] if ppl[l] else 0 for l in ls) / len(ls)
    mR = sum(tpl[l] / gpl[l] for l in ls) / len(ls)
    mF = sum(2 * tpl[l] / (ppl[l] + gpl[l]) for l in ls) / len(ls)
    return {"precision": [P, mP], "recall": [R, mR], "f1": [F, mF]}


def all_scores(preds, golds):
    out = {}
    for k in KS:
        for name, (mi, ma) in score(preds, golds, k).items():
            out["%s@%d" % (name, k)] = {"micro": mi, "macro": ma}
    return out


def grouped_val(rec):
    h = int.from_bytes(hashlib.sha256(("validation:" + rec.get("source_package", rec["id"])).encode()).digest()[:8], "big")
    return h % 100 < 12


def main():
    d = sys.argv[1]
    train = read_jsonl(d + "/train.jsonl")
    test = read_jsonl(d + "/test.jsonl")
    labels = read_labels(d + "/vocabulary.ttl")
    concepts = sorted(labels)
    golds = [set(r.get("subjects", [])) for r in test]
    res = {"train": len(train), "test": len(test), "anchors": {}}

    # most-frequent
    t0 = time.time()
    freq = Counter(c for r in train for c in r.get("subjects", []))
    ranked = [c for c, _ in freq.most_common(max(KS))]
    res["anchors"]["most-frequent"] = {"metrics": all_scores([ranked] * len(test), golds), "seconds": time.time() - t0}

    # label-word overlap
    t0 = time.time()
    stop = set(ENGLISH_STOP_WORDS)
    lw = {}
    for c in concepts:
        words = set()
        for s in labels[c]:
            words |= {w for w in WORD.findall(s.lower()) if w not in stop and len(w) > 1}
        lw[c] = words
    index = defaultdict(list)
    for c, ws in lw.items():
        for w in ws:
            index[w].append(c)
    preds = []
    for r in test:
        toks = set(WORD.findall(text_of(r).lower()))
        sc = Counter()
        for w in toks:
            for c in index.get(w, ()):
                sc[c] += 1 / math.sqrt(len(lw[c]))
        # ties broken by training frequency, then IRI
        order = sorted(sc, key=lambda c: (-sc[c], -freq.get(c, 0), c))
        preds.append(order[: max(KS)])
    res["anchors"]["label-overlap"] = {"metrics": all_scores(preds, golds), "seconds": time.time() - t0}

    # TF-IDF + one-vs-rest linear SVM, C chosen on a grouped validation slice
    t0 = time.time()
    cols = [c for c in concepts if freq.get(c, 0) > 0]
    col = {c: i for i, c in enumerate(cols)}

    def Y(recs):
        y = np.zeros((len(recs), len(cols)), dtype=np.int8)
        for i, r in enumerate(recs):
            for c in r.get("subjects", []):
                if c in col:
                    y[i, col[c]] = 1
        return y

    def fit_predict(tr, te, C):
        vec = TfidfVectorizer(sublinear_tf=True, min_df=2, stop_words="english")
        Xtr = vec.fit_transform([text_of(r) for r in tr])
        Xte = vec.transform([text_of(r) for r in te])
        ytr = Y(tr)
        S = np.full((len(te), len(cols)), -1e9)
        for j in range(len(cols)):
            if ytr[:, j].sum() == 0:
                continue
            m = LinearSVC(C=C, dual=True, max_iter=5000)
            m.fit(Xtr, ytr[:, j])
            S[:, j] = m.decision_function(Xte)
        top = np.argsort(-S, axis=1)[:, : max(KS)]
        return [[cols[j] for j in row] for row in top]

    fit_part = [r for r in train if not grouped_val(r)]
    val = [r for r in train if grouped_val(r)]
    vgold = [set(r.get("subjects", [])) for r in val]
    best_c, best_f = None, -1
    tried = {}
    for C in (0.1, 0.3, 1.0):
        f = score(fit_predict(fit_part, val, C), vgold, 5)["f1"][0]
        tried[str(C)] = f
        if f > best_f:
            best_c, best_f = C, f
    preds = fit_predict(train, test, best_c)
    res["anchors"]["tfidf-svm"] = {"metrics": all_scores(preds, golds), "seconds": time.time() - t0,
                                   "C": best_c, "validation_micro_f1@5": tried}
    json.dump(res, sys.stdout, indent=1)
    print()


if __name__ == "__main__":
    main()
