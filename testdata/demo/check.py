#!/usr/bin/env python3
"""Check the Harrowmere Valley demo data (standard library only).

    python3 testdata/demo/check.py [DIR]

Checks that records.jsonl and holdout.jsonl are valid JSON Lines with the
fields termgrove reads, that ids are unique, dates lie in 1890-2020, texts
have 40-200 words, every subject is a non-deprecated concept of
vocabulary.ttl, and that the facts README.md promises (unused concepts, the
poly-hierarchy concept, the theme the vocabulary lacks) hold. When `rapper`
(Debian raptor2-utils) is on PATH it also parses the Turtle with it and
compares the concept sets. Prints counts; exits 1 on any problem.
"""

import collections
import datetime
import json
import os
import re
import shutil
import subprocess
import sys

BASE = "https://harrowmere.example/vocab/"
SKOS = "http://www.w3.org/2004/02/skos/core#"

# Facts README.md documents; tests and docs rely on them.
UNUSED = ["mining", "coal-mining", "canals", "religious-houses",
          "higher-education", "fortifications"]
DEPRECATED = "labourers"
POLY = ("mill-races", {"milling", "water-management"})
XL = ("village-halls", BASE + "label/salles-des-fetes", "Salles des fêtes")
GAP_WORDS = ["bee", "bees", "beekeeper", "beekeepers", "beekeeping", "hive",
             "hives", "honey", "swarm", "apiary", "ruche", "ruches", "miel",
             "abeilles", "apiculteur", "apiculteurs"]
GAP_MIN_RECORDS = 15
# The records written on the gap theme (README.md); others mention it in passing.
GAP_IDS = ["hv-0005", "hv-0016", "hv-0028", "hv-0034", "hv-0040", "hv-0053",
           "hv-0064", "hv-0073", "hv-0084", "hv-0095", "hv-0120", "hv-0123",
           "hv-0145", "hv-0149", "hv-0163", "hv-0170", "hv-0185", "hv-0196",
           "hv-0199"]
GAP_PASSING = ["hv-0213", "hv-0229", "hv-0243"]

FIELDS = {"id", "title", "text", "date", "subjects", "lang"}
ID_RE = re.compile(r"^hv-\d{4}$")
DATE_RE = re.compile(r"^(\d{4})(?:-(\d{2})-(\d{2}))?$")
WORD_RE = re.compile(r"\w+", re.UNICODE)

problems = []


def problem(where, msg):
    problems.append("%s: %s" % (where, msg))


def read_vocab(path):
    """Concepts, deprecated concepts, labels and broader links (narrower
    statements merged in), read from the Turtle with patterns that match this
    file's layout: each concept is one statement opening with
    `hv:NAME a skos:Concept ;` and ending with ` .`."""
    text = open(path, encoding="utf-8").read()
    concepts, deprecated = set(), set()
    broader = collections.defaultdict(set)
    labels = []  # (concept or label resource, literal)
    stmt = re.compile(r"^hv:([\w-]+) a skos:Concept ;(.*?) \.\s*$", re.S | re.M)
    for m in stmt.finditer(text):
        subj, body = m.group(1), m.group(2)
        if subj in concepts:
            problem(path, "concept %s stated twice" % subj)
        concepts.add(subj)
        if re.search(r"owl:deprecated\s+true", body):
            deprecated.add(subj)
        for part in re.findall(r"skos:(?:pref|alt|hidden)Label\s+([^;]*)", body):
            labels += [(subj, lit) for lit in re.findall(r'"([^"]*)"@\w+', part)]
        for part in re.findall(r"skos:narrower\s+([^;]*)", body):
            for n in re.findall(r"hv:([\w-]+)", part):
                broader[n].add(subj)
        for part in re.findall(r"skos:broader\s+([^;]*)", body):
            for b in re.findall(r"hv:([\w-]+)", part):
                broader[subj].add(b)
    labels += [("skosxl", lit) for lit in re.findall(r'skosxl:literalForm\s+"([^"]*)"', text)]
    declared = len(re.findall(r"\ba skos:Concept\b", text))
    if declared != len(concepts):
        problem(path, "%d concepts declared but %d read" % (declared, len(concepts)))
    return concepts, deprecated, broader, labels


def rapper_concepts(path):
    """Concept local names as parsed by rapper, or None without rapper."""
    if shutil.which("rapper") is None:
        print("note: rapper not found (apt-get install raptor2-utils); Turtle not cross-checked")
        return None
    p = subprocess.run(["rapper", "-q", "-i", "turtle", "-o", "ntriples", path],
                       capture_output=True, text=True)
    if p.returncode != 0 or p.stderr.strip():
        problem(path, "rapper: " + (p.stderr.strip() or "exit %d" % p.returncode))
        return None
    out = set()
    for line in p.stdout.splitlines():
        parts = line.split(" ", 2)
        if len(parts) == 3 and parts[2].startswith("<%sConcept>" % SKOS):
            out.add(parts[0].strip("<>")[len(BASE):])
    return out


def read_records(path, concepts, deprecated, seen, allow_subjects=True):
    recs = []
    with open(path, encoding="utf-8") as f:
        for lineno, line in enumerate(f, 1):
            where = "%s:%d" % (path, lineno)
            if not line.strip():
                problem(where, "blank line")
                continue
            try:
                r = json.loads(line)
            except json.JSONDecodeError as e:
                problem(where, "not JSON: %s" % e)
                continue
            if not isinstance(r, dict):
                problem(where, "not a JSON object")
                continue
            extra = set(r) - FIELDS
            if extra:
                problem(where, "unknown fields %s" % sorted(extra))
            rid = r.get("id", "")
            where = "%s:%d (%s)" % (path, lineno, rid)
            if not isinstance(rid, str) or not ID_RE.match(rid):
                problem(where, "bad id")
            elif rid in seen:
                problem(where, "duplicate id (also %s)" % seen[rid])
            else:
                seen[rid] = where
            for k in ("title", "text", "date"):
                if not isinstance(r.get(k), str) or not r[k].strip():
                    problem(where, "missing %s" % k)
            if r.get("text") != (r.get("text") or "").strip():
                problem(where, "text has leading or trailing space")
            n = len(r.get("text", "").split())
            if not 40 <= n <= 200:
                problem(where, "text has %d words, want 40-200" % n)
            m = DATE_RE.match(r.get("date", ""))
            if not m:
                problem(where, "date %r is not YYYY or YYYY-MM-DD" % r.get("date"))
            else:
                y = int(m.group(1))
                if not 1890 <= y <= 2020:
                    problem(where, "date %s outside 1890-2020" % r["date"])
                if m.group(2):
                    try:
                        datetime.date(y, int(m.group(2)), int(m.group(3)))
                    except ValueError:
                        problem(where, "no such day %s" % r["date"])
            if "lang" in r and r["lang"] != "fr":
                problem(where, "lang must be \"fr\" when present")
            if "subjects" in r:
                s = r["subjects"]
                if not allow_subjects:
                    problem(where, "held-out records carry no subjects")
                elif not isinstance(s, list) or not 1 <= len(s) <= 4:
                    problem(where, "subjects must be a list of 1-4 IRIs (omit it when none)")
                else:
                    if len(set(s)) != len(s):
                        problem(where, "repeated subject")
                    for iri in s:
                        local = iri[len(BASE):] if isinstance(iri, str) and iri.startswith(BASE) else None
                        if local not in concepts:
                            problem(where, "subject %r is not a concept of the vocabulary" % iri)
                        elif local in deprecated:
                            problem(where, "subject %r is deprecated" % iri)
            recs.append(r)
    return recs


def words(r):
    return [w.lower() for w in WORD_RE.findall(r["title"] + " " + r["text"])]


def main():
    d = sys.argv[1] if len(sys.argv) > 1 else os.path.dirname(os.path.abspath(__file__))
    vocab = os.path.join(d, "vocabulary.ttl")
    concepts, deprecated, broader, labels = read_vocab(vocab)
    rc = rapper_concepts(vocab)
    if rc is not None and rc != concepts:
        problem(vocab, "rapper and line reader disagree on concepts: %s" % sorted(rc ^ concepts))

    seen = {}
    recs = read_records(os.path.join(d, "records.jsonl"), concepts, deprecated, seen)
    hold = []
    hp = os.path.join(d, "holdout.jsonl")
    if os.path.exists(hp):
        hold = read_records(hp, concepts, deprecated, seen, allow_subjects=False)

    # README facts.
    used = collections.Counter(s[len(BASE):] for r in recs for s in r.get("subjects", []))
    for c in UNUSED:
        if c not in concepts:
            problem("README", "unused concept %s is not in the vocabulary" % c)
        if used[c]:
            problem("README", "concept %s is documented as unused but %d records use it" % (c, used[c]))
    if DEPRECATED not in deprecated:
        problem("README", "%s should be the deprecated concept" % DEPRECATED)
    if used[DEPRECATED]:
        problem("README", "deprecated concept used")
    vtext = open(vocab, encoding="utf-8").read()
    m = re.search(r"^hv:%s a skos:Concept ;(.*?) \.\s*$" % XL[0], vtext, re.S | re.M)
    if not m or "skosxl:prefLabel <%s>" % XL[1] not in m.group(1) or '"@fr' in m.group(1).split("skosxl:prefLabel")[0].split("skos:prefLabel", 1)[-1].split(";")[0]:
        problem("README", "%s should have its French prefLabel only through SKOS-XL" % XL[0])
    if not re.search(r"<%s> a skosxl:Label ;\s*skosxl:literalForm \"%s\"@fr" % (re.escape(XL[1]), XL[2]), vtext):
        problem("README", "SKOS-XL label %s with literal form %r not found" % (XL[1], XL[2]))
    if len(re.findall(r"skosxl:prefLabel", vtext)) != 1:
        problem("README", "want exactly one skosxl:prefLabel")
    if broader.get(POLY[0]) != POLY[1]:
        problem("README", "%s broader = %s, want %s" % (POLY[0], broader.get(POLY[0]), POLY[1]))
    poly = sorted(c for c in concepts if len(broader.get(c, ())) > 1)
    if poly != [POLY[0]]:
        problem("README", "concepts with two broader: %s, want only %s" % (poly, POLY[0]))
    vocabwords = set(w.lower() for t in re.findall(r'"([^"]*)"@\w+', open(vocab, encoding="utf-8").read())
                     for w in WORD_RE.findall(t))
    leak = sorted(set(GAP_WORDS) & vocabwords)
    if leak:
        problem("README", "gap-theme words appear in vocabulary labels or notes: %s" % leak)
    # No text may speak of an unused concept in its own labels' words.
    texts = [(r["id"], words(r)) for r in recs + hold]
    for c in UNUSED:
        for phrase in set(tuple(WORD_RE.findall(t.lower())) for cc, t in labels if cc == c):
            n = len(phrase)
            for rid, ws in texts:
                if any(tuple(ws[i:i + n]) == phrase for i in range(len(ws) - n + 1)):
                    problem(rid, "text uses label %r of unused concept %s" % (" ".join(phrase), c))
    gap = [r for r in recs if set(words(r)) & set(GAP_WORDS)]
    gapids = sorted(r["id"] for r in gap)
    if gapids != sorted(GAP_IDS + GAP_PASSING):
        problem("README", "records on the gap theme are %s, README lists %s" % (gapids, sorted(GAP_IDS + GAP_PASSING)))
    for r in gap:
        if r["id"] in GAP_IDS and r.get("subjects"):
            problem(r["id"], "gap-theme record carries subjects")
    if len(gap) < GAP_MIN_RECORDS:
        problem("README", "only %d records on the gap theme, want >= %d" % (len(gap), GAP_MIN_RECORDS))

    # Counts.
    n = [len(r["text"].split()) for r in recs]
    with_subj = [r for r in recs if r.get("subjects")]
    fr = [r for r in recs if r.get("lang") == "fr"]
    dec = collections.Counter(int(r["date"][:4]) // 10 * 10 for r in recs)
    print("vocabulary: %d concepts (%d deprecated), %d labels" % (len(concepts), len(deprecated), len(labels)))
    if recs:
        print("records: %d, with subjects %d (%d assignments, %d distinct concepts), French %d, gap theme %d"
              % (len(recs), len(with_subj), sum(used.values()), len(used), len(fr), len(gap)))
        print("words per text: min %d, max %d, mean %.0f, total %d" % (min(n), max(n), sum(n) / len(n), sum(n)))
        print("by decade: " + " ".join("%ds:%d" % (k, dec[k]) for k in sorted(dec)))
        never = sorted(concepts - set(used) - deprecated)
        print("concepts no record is indexed with (%d): %s" % (len(never), " ".join(never)))
    print("holdout: %d" % len(hold))
    for p in problems:
        print("PROBLEM " + p)
    if problems:
        print("%d problems" % len(problems))
        return 1
    print("ok")
    return 0


if __name__ == "__main__":
    sys.exit(main())
