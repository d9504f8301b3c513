#!/usr/bin/python3
"""Fit gensim's LdaMulticore on a bag of words written by `fitbench -export`
and export its topic-word matrix and alpha, so that termgrove's left-to-right
estimator can score it (see bench/fit.md).

usage: /usr/bin/python3 scripts/fitbench_gensim.py PREFIX W K [passes] [workers]

Reads PREFIX.train.txt (one record per line, space-separated word ids) and
writes PREFIX.gensim.phi (K*W little-endian float64, row-major),
PREFIX.gensim.alpha (one float per line) and PREFIX.gensim.json (timings).
Needs Debian's python3-gensim.
"""
import json
import sys
import time
from collections import Counter

import numpy as np
from gensim.models import LdaMulticore


def main():
    prefix, W, K = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    passes = int(sys.argv[4]) if len(sys.argv) > 4 else 5
    workers = int(sys.argv[5]) if len(sys.argv) > 5 else 2
    corpus = []
    with open(prefix + ".train.txt") as f:
        for line in f:
            ids = [int(x) for x in line.split()]
            corpus.append(sorted(Counter(ids).items()))
    id2word = {i: str(i) for i in range(W)}
    t0 = time.time()
    lda = LdaMulticore(corpus, num_topics=K, id2word=id2word, workers=workers,
                       passes=passes, random_state=1, chunksize=2000)
    secs = time.time() - t0
    phi = lda.get_topics().astype("<f8")  # K x W, rows sum to 1
    assert phi.shape == (K, W), phi.shape
    phi.tofile(prefix + ".gensim.phi")
    np.savetxt(prefix + ".gensim.alpha", np.asarray(lda.alpha, dtype="f8"))
    with open(prefix + ".gensim.json", "w") as f:
        json.dump({"seconds": secs, "passes": passes, "workers": workers, "K": K, "W": W,
                   "records": len(corpus)}, f)
    print(f"gensim LdaMulticore K={K} passes={passes} workers={workers}: {secs:.1f}s")


if __name__ == "__main__":
    main()
