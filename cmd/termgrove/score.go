package main

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/csv"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"termgrove/annotate"
	"termgrove/model"
	"termgrove/report"
)

func cmdScore(args []string) int {
	fs := flag.NewFlagSet("score", flag.ContinueOnError)
	modelPath := fs.String("model", "", "fitted model file (.grove)")
	recPath := fs.String("records", "", "gold records carrying human-assigned subjects (JSON Lines)")
	format := fs.String("format", "text", "output: text or json")
	perConcept := fs.String("per-concept", "", "also write per-concept figures to this file (.csv or .json)")
	k := fs.Int("k", 5, "k of the per-concept figures")
	fields := fs.String("fields", "title,text", "record fields to read")
	lang := fs.String("lang", "en", "language of labels in per-concept figures")
	skipBad := fs.Bool("skip-bad", false, "skip records that are not valid JSON (counted) instead of stopping")
	split := fs.Float64("split", 0, "fit-and-score: keep this share of --records out as the test split (deterministic by id), fit --vocab on the rest, score the test split")
	vocab := fs.String("vocab", "", "vocabulary to fit with --split")
	burnIn := fs.Int("burn-in", scoreBurnIn, "fold-in sweeps discarded per record")
	samples := fs.Int("samples", scoreSamples, "fold-in sweeps averaged per record (more than annotate's default: the lower ranks are decided by the average)")
	fs.Usage = func() {
		fmt.Fprint(os.Stderr, `usage: termgrove score --model M.grove --records GOLD.jsonl [--format text|json] [--per-concept FILE.csv]
       termgrove score --split 0.2 --vocab V.ttl --records GOLD.jsonl [options] [-- fit options]

Annotates records that people already indexed and compares termgrove's
ranked suggestions with their subjects: precision, recall and F1 at
k = 1, 3, 5, 10 (micro and macro), NDCG, hierarchical precision/recall/F1
(both sets extended with ancestors), and the min score that gives the best
F1 on these records. Score a split the model was not fitted on.

With --split, a record is in the test split when the first 8 bytes of the
SHA-256 of its id, as a big-endian number, modulo 10000 fall below
split·10000; fit options after "--" are passed to termgrove fit.

Examples:
  termgrove score --model demo.grove --records test.jsonl --per-concept concepts.csv
  termgrove score --split 0.2 --vocab thesaurus.ttl --records indexed.jsonl -- --free-topics 10

Options:
`)
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return 0
		}
		return 2
	}
	fitArgs := fs.Args()
	if *split == 0 && len(fitArgs) > 0 {
		fmt.Fprintf(os.Stderr, "termgrove score: unexpected argument %q (fit options need --split)\n", fitArgs[0])
		return 2
	}
	if *k < 1 || *burnIn < 0 || *samples < 0 {
		fmt.Fprintln(os.Stderr, "termgrove score: --k ≥ 1, --burn-in ≥ 0 and --samples ≥ 0")
		return 2
	}
	if err := checkOutPath(*perConcept); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: --per-concept: %v\n", err)
		return 2
	}
	if in := overwritesInput(*perConcept, *modelPath, *recPath, *vocab); in != "" {
		fmt.Fprintf(os.Stderr, "termgrove score: --per-concept %s would overwrite the input %s\n", *perConcept, in)
		return 2
	}
	if *split != 0 {
		if *split <= 0 || *split >= 1 || *vocab == "" || *recPath == "" || *modelPath != "" {
			fmt.Fprintln(os.Stderr, "termgrove score: --split needs 0 < SHARE < 1, --vocab and --records, and no --model")
			return 2
		}
		path, testPath, cleanup, code := fitSplitModel(*vocab, *recPath, *split, *skipBad, fitArgs)
		defer cleanup()
		if code != 0 {
			return code
		}
		*modelPath, *recPath = path, testPath
	}
	if *modelPath == "" || *recPath == "" {
		var missing []string
		if *modelPath == "" {
			missing = append(missing, "--model")
		}
		if *recPath == "" {
			missing = append(missing, "--records")
		}
		fmt.Fprintf(os.Stderr, "termgrove score: %s required (or --split with --vocab)\n", strings.Join(missing, " and "))
		fs.Usage()
		return 2
	}
	if *format != "text" && *format != "json" {
		fmt.Fprintf(os.Stderr, "termgrove score: unknown --format %q (want text or json)\n", *format)
		return 2
	}
	m, err := model.Load(*modelPath)
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return 2
	}
	a, err := annotate.New(m)
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return 2
	}
	recs, st, err := readAll(*recPath, splitList(*fields), *skipBad, "score")
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return 2
	}
	res, err := report.Score(m, a, recs, report.ScoreOptions{Fields: splitList(*fields), Lang: *lang, PerConceptK: *k,
		Annotate: annotate.Options{BurnIn: *burnIn, Samples: *samples}})
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return 1
	}
	if res.UnknownSubjects > 0 {
		fmt.Fprintf(os.Stderr, "termgrove score: warning: %d subjects are not concepts of the model's vocabulary (dropped), e.g. %v\n", res.UnknownSubjects, res.UnknownExamples)
	}
	if st.Skipped > 0 {
		fmt.Fprintf(os.Stderr, "termgrove score: %d bad lines skipped\n", st.Skipped)
	}
	if res.Records == 0 {
		fmt.Fprintf(os.Stderr, "termgrove score: no record of %s carries a known subject: nothing to score\n", *recPath)
		return 1
	}
	if *perConcept != "" {
		if err := writeOutput(*perConcept, func(w io.Writer) error { return writePerConcept(w, *perConcept, res) }); err != nil {
			fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
			return 1
		}
	}
	err = writeOutput("", func(w io.Writer) error {
		if *format == "json" {
			enc := json.NewEncoder(w)
			enc.SetIndent("", "  ")
			return enc.Encode(res)
		}
		return writeScoreText(w, res)
	})
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return 1
	}
	return 0
}

// fitSplitModel splits the records deterministically, fits the training
// part with termgrove fit in a temporary folder and returns the model and
// the test split's paths.
func fitSplitModel(vocab, recPath string, share float64, skipBad bool, fitArgs []string) (modelPath, testPath string, cleanup func(), code int) {
	dir, err := os.MkdirTemp("", "termgrove-split-")
	cleanup = func() { os.RemoveAll(dir) }
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return "", "", cleanup, 1
	}
	recs, _, err := readAll(recPath, nil, skipBad, "score")
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return "", "", cleanup, 2
	}
	trainPath, testPath := filepath.Join(dir, "train.jsonl"), filepath.Join(dir, "test.jsonl")
	var nTrain, nTest int
	write := func(path string, test bool) error {
		return writeOutput(path, func(w io.Writer) error {
			enc := json.NewEncoder(w)
			for _, r := range recs {
				if inTestSplit(r.ID, share) != test {
					continue
				}
				if test {
					nTest++
				} else {
					nTrain++
				}
				if err := enc.Encode(r); err != nil {
					return err
				}
			}
			return nil
		})
	}
	if err := write(trainPath, false); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return "", "", cleanup, 1
	}
	if err := write(testPath, true); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove score: %v\n", err)
		return "", "", cleanup, 1
	}
	if nTrain == 0 || nTest == 0 {
		fmt.Fprintf(os.Stderr, "termgrove score: the split leaves %d training and %d test records; both must be non-empty\n", nTrain, nTest)
		return "", "", cleanup, 2
	}
	fmt.Fprintf(os.Stderr, "termgrove score: split %s: %d records to fit, %d to score\n", recPath, nTrain, nTest)
	modelPath = filepath.Join(dir, "split.grove")
	args := append([]string{"--vocab", vocab, "--records", trainPath, "--out", modelPath, "--checkpoint", "0", "--quiet"}, fitArgs...)
	// fit's summary goes to stdout; here stdout carries the score output
	// (JSON with --format json), so the summary goes to stderr instead.
	saved := os.Stdout
	os.Stdout = os.Stderr
	c := cmdFit(args)
	os.Stdout = saved
	if c != 0 {
		return "", "", cleanup, c
	}
	return modelPath, testPath, cleanup, 0
}

// inTestSplit puts a record in the test split when the first 8 bytes of
// SHA-256(id), big-endian, modulo 10000 fall below share·10000.
func inTestSplit(id string, share float64) bool {
	h := sha256.Sum256([]byte(id))
	return binary.BigEndian.Uint64(h[:8])%10000 < uint64(share*10000)
}

func writeScoreText(w io.Writer, r *report.ScoreResult) error {
	fmt.Fprintf(w, "%d records scored (%d without subjects left out; %d unknown subjects dropped)\n\n", r.Records, r.NoSubjects, r.UnknownSubjects)
	fmt.Fprintf(w, "%-11s %8s %8s %8s %8s %8s %8s %8s %8s\n", "", "P micro", "P macro", "R micro", "R macro", "F1 micro", "F1 macro", "NDCG", "hF1")
	for _, k := range report.Ks {
		g := func(n string) report.Figure { return r.Metrics[n+"@"+strconv.Itoa(k)] }
		fmt.Fprintf(w, "@%-10d %8.3f %8.3f %8.3f %8.3f %8.3f %8.3f %8.3f %8.3f\n", k,
			g("precision").Micro, g("precision").Macro, g("recall").Micro, g("recall").Macro,
			g("f1").Micro, g("f1").Macro, g("ndcg").Micro, g("hf1").Micro)
	}
	fmt.Fprintf(w, "\nbest --min-score on these records: %.4f (micro F1 %.3f over all suggestions)\n", r.Threshold, r.ThresholdF1)
	pc := append([]report.ConceptFigure(nil), r.PerConcept...)
	sort.SliceStable(pc, func(i, j int) bool { return pc[i].Gold > pc[j].Gold })
	fmt.Fprintf(w, "\nmost-indexed concepts at k=%d:\n", r.PerConceptK)
	for i, c := range pc {
		if i == 10 {
			break
		}
		fmt.Fprintf(w, "  %-40s gold %4d  P %.2f  R %.2f  F1 %.2f\n", annOneLine(c.Label), c.Gold, c.Precision, c.Recall, c.F1)
	}
	return nil
}

func writePerConcept(w io.Writer, path string, r *report.ScoreResult) error {
	if len(path) > 5 && path[len(path)-5:] == ".json" {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(r.PerConcept)
	}
	cw := csv.NewWriter(w)
	f := func(x float64) string { return strconv.FormatFloat(x, 'f', 4, 64) }
	cw.Write([]string{"iri", "label", "gold", "predicted", "correct", "precision", "recall", "f1"})
	for _, c := range r.PerConcept {
		cw.Write([]string{c.IRI, c.Label, strconv.Itoa(c.Gold), strconv.Itoa(c.Predicted), strconv.Itoa(c.Correct), f(c.Precision), f(c.Recall), f(c.F1)})
	}
	cw.Flush()
	return cw.Error()
}

// scoreSamples is score's default number of averaged fold-in sweeps. On the
// debtags test split (bench/quality.md) micro/macro F1@5 were 0.391/0.270
// with annotate's 20, 0.403/0.276 with 60 and 0.408/0.288 with 200 (about
// 20 s for 5,926 records); more burn-in sweeps changed nothing.
const scoreSamples = 200

// scoreBurnIn is score's default number of discarded fold-in sweeps: 10,
// annotate's default when the figures in bench/quality.md were taken.
const scoreBurnIn = 10
