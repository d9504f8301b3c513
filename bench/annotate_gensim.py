#!/usr/bin/python3
"""Time gensim's LdaModel.get_document_topics per document, single core.

Usage: OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 /usr/bin/python3 bench/annotate_gensim.py DIR W K
DIR holds train.txt and docs.txt (word ids, one record a line) exported by
BenchmarkAnnotateFile with TG_ANN_EXPORT=DIR; W and K are the termgrove
model's word and topic counts. gensim (Debian python3-gensim) is trained
on train.txt with K topics (one pass: inference cost hardly depends on the
fit), then get_document_topics runs on each document of docs.txt.
The trained model is kept in DIR/lda-K.model and reused when present
(training takes minutes; inference is what is timed).
"""
import os
import statistics
import sys
import time

from gensim.models import LdaModel


def read(path):
    with open(path) as f:
        for line in f:
            ids = [int(x) for x in line.split()]
            counts = {}
            for i in ids:
                counts[i] = counts.get(i, 0) + 1
            yield sorted(counts.items())


def main():
    d, W, K = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    train = [b for b in read(d + "/train.txt") if b]
    docs = [b for b in read(d + "/docs.txt") if b]
    t0 = time.perf_counter()
    saved = f"{d}/lda-{K}.model"
    if os.path.exists(saved):
        lda = LdaModel.load(saved)
        print(f"gensim LdaModel K={K} W={W}: loaded {saved} (trained on {len(train)} records)")
    else:
        id2word = {i: str(i) for i in range(W)}
        lda = LdaModel(corpus=train, num_topics=K, id2word=id2word, passes=1, chunksize=2000,
                       alpha="symmetric", random_state=1)
        print(f"gensim LdaModel K={K} W={W}: trained on {len(train)} records in {time.perf_counter() - t0:.1f}s")
        lda.save(saved)
    lat = []
    for rep in range(3):
        for b in docs:
            t = time.perf_counter()
            lda.get_document_topics(b)
            lat.append(time.perf_counter() - t)
    lat.sort()
    med = statistics.median(lat) * 1e6
    p99 = lat[len(lat) * 99 // 100] * 1e6
    print(f"get_document_topics over {len(docs)} docs x3: median {med:.0f} us, p99 {p99:.0f} us")


if __name__ == "__main__":
    main()
