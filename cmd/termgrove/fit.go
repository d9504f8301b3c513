package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"flag"
	"fmt"
	"io"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"syscall"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"

	"termgrove/annotate"
	"termgrove/concepts"
	"termgrove/fit"
	"termgrove/internal/records"
	"termgrove/model"
	"termgrove/prior"
	"termgrove/terms"
)

const fitExample = `
Example:
  termgrove fit --vocab thesaurus.ttl --records catalogue.jsonl --out lib.grove \
      --free-topics 50 --sweeps 300 --holdout 0.05 --checkpoint 5m

  A killed or interrupted fit continues from its checkpoint (MODEL.checkpoint):
  termgrove fit --vocab thesaurus.ttl --records catalogue.jsonl --out lib.grove --resume
`

// fitFlags are the options of "termgrove fit".
type fitFlags struct {
	vocab, recs, out  string
	scheme            string
	free, sweeps      int
	burnIn, workers   int
	seed              int64
	lambda, holdout   float64
	checkpoint        time.Duration
	resume, skipBad   bool
	langs, fields     string
	quiet, noProgress bool
	anchor            bool
	sampler           string
	calibrate         int
	wordLayer         bool
	wordNeighbours    int
	wordNet           int
	wordMacroFloor    float64
	wordLead          float64
	wordLabels        float64
	wordCRecords      int
	groupField        string
}

func cmdFit(args []string) int {
	var f fitFlags
	fl := flag.NewFlagSet("termgrove fit", flag.ContinueOnError)
	fl.SetOutput(os.Stderr)
	fl.StringVar(&f.vocab, "vocab", "", "SKOS vocabulary `FILE` (Turtle, N-Triples, RDF/XML, JSON-LD)")
	fl.StringVar(&f.recs, "records", "", "records: JSON Lines `FILE` or a DIR of .txt files")
	fl.StringVar(&f.out, "out", "", "model file to write (`MODEL.grove`)")
	fl.StringVar(&f.scheme, "scheme", "", "concept scheme `IRI` when the file holds several")
	fl.IntVar(&f.free, "free-topics", 20, "free topics beside the concepts, for themes the vocabulary lacks")
	fl.BoolVar(&f.anchor, "anchor", true, "records without subjects may use only the concepts whose label terms they contain, plus the free topics (off without free topics)")
	fl.IntVar(&f.sweeps, "sweeps", 200, "Gibbs sweeps over all records")
	fl.StringVar(&f.sampler, "sampler", "sparse", "`sparse` (exact Gibbs), mh (alias/Metropolis–Hastings for unrestricted records; slower here, see bench/fit-mh.md) or auto (sparse at every K measured)")
	fl.IntVar(&f.burnIn, "burn-in", 0, "sweeps before α is learned (0 = a quarter of --sweeps)")
	fl.Int64Var(&f.seed, "seed", 1, "random seed (the same seed and number of workers = the same model)")
	fl.IntVar(&f.workers, "workers", runtime.NumCPU(), "sampling threads")
	fl.Float64Var(&f.lambda, "lambda", 0, "prior strength λ in pseudo-counts per concept (0 = half the mean tokens per concept, at least 50)")
	fl.Float64Var(&f.holdout, "holdout", 0, "share of records kept out and scored (left-to-right estimator)")
	fl.DurationVar(&f.checkpoint, "checkpoint", 5*time.Minute, "write the sampler state this often (0 = never)")
	fl.BoolVar(&f.resume, "resume", false, "continue from MODEL.checkpoint when it exists")
	fl.StringVar(&f.langs, "lang", "en", "languages, comma-separated; the first is the records' main language")
	fl.StringVar(&f.fields, "fields", "title,text", "record fields to read, comma-separated")
	fl.IntVar(&f.calibrate, "calibrate", defaultCalibrate, "learn the score calibration from up to `N` records people indexed: the held-out ones with --holdout, else a sample of the training records (0 = none)")
	fl.BoolVar(&f.wordLayer, "word-layer", true, "with --calibrate, also train the discriminative word layer (a linear SVM per concept over the records' words) on the records people indexed, and learn how it combines with the topic scores")
	fl.Float64Var(&f.wordLead, "word-lead", fit.DefaultWordLead, "weight of the word layer's second part over the words of a record's first field (the title; 0 = none)")
	fl.IntVar(&f.wordCRecords, "word-c-records", fit.DefaultWordCRecords, "the word layer's SVM of a concept people indexed N > this many records with learns with C·√(this/N), more regularised (0 = the same C for all)")
	fl.IntVar(&f.wordNet, "word-net", fit.DefaultWordNetHidden, "with the word layer, the hidden units of a network over the same words whose log-probabilities join the SVMs' decision values with a weight fit tunes (0 = no network)")
	fl.Float64Var(&f.wordMacroFloor, "word-macro-floor", 0, "with the word layer, tune its combination for the most micro F1@5 among the settings whose macro F1@5 on the tuning records reaches this (0 = tune for micro plus macro F1@5)")
	fl.IntVar(&f.wordNeighbours, "word-neighbours", 0, "with the word layer, how many of a record's most similar training records vote for their concepts, a vote whose weight fit tunes; the model then keeps the records' vectors (0 = no vote; 30 measured on debtags: no gain, annotation about 3.5 times slower)")
	fl.Float64Var(&f.wordLabels, "word-labels", fit.DefaultWordLabelWeight, "how many records' worth the word layer learns each concept's labels as, one record of the concept (0 = none)")
	fl.StringVar(&f.groupField, "group-field", "", "records `FIELD` whose equal values form a group: --holdout keeps groups out whole, and the word layer is tuned against a layer trained without the tuning records' groups (e.g. debtags' source_package, as its own train/test split)")
	fl.BoolVar(&f.skipBad, "skip-bad", false, "skip records that are not JSON (counted) instead of stopping")
	fl.BoolVar(&f.quiet, "quiet", false, "only the summary")
	fl.BoolVar(&f.noProgress, "no-progress", false, "plain log lines even on a terminal")
	fl.Usage = func() {
		fmt.Fprintln(os.Stderr, "usage: termgrove fit --vocab FILE --records FILE|DIR --out MODEL.grove [options]")
		fmt.Fprintln(os.Stderr, "\nFits the vocabulary's concepts (plus free topics) to the records and writes a model file.\n\nOptions:")
		fl.PrintDefaults()
		fmt.Fprint(os.Stderr, fitExample)
	}
	if err := fl.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		return 2
	}
	if fl.NArg() > 0 {
		fmt.Fprintf(os.Stderr, "termgrove fit: unexpected argument %q\n", fl.Arg(0))
		return 2
	}
	var missing []string
	for _, m := range []struct{ name, v string }{{"--vocab", f.vocab}, {"--records", f.recs}, {"--out", f.out}} {
		if m.v == "" {
			missing = append(missing, m.name)
		}
	}
	if len(missing) > 0 {
		fmt.Fprintf(os.Stderr, "termgrove fit: missing %s (see termgrove fit --help)\n", strings.Join(missing, ", "))
		return 2
	}
	// Each check is written so that NaN fails too.
	for _, c := range []struct {
		ok         bool
		flag, want string
		got        any
	}{
		{f.free >= 0, "--free-topics", "0 or more", f.free},
		{f.sweeps >= 1, "--sweeps", "1 or more", f.sweeps},
		{f.burnIn >= 0, "--burn-in", "0 or more", f.burnIn},
		{f.workers >= 1, "--workers", "1 or more", f.workers},
		{f.lambda >= 0, "--lambda", "0 or more", f.lambda},
		{f.calibrate >= 0, "--calibrate", "0 or more", f.calibrate},
		{f.holdout >= 0 && f.holdout < 1, "--holdout", "a share from 0 up to (not including) 1", f.holdout},
		{f.wordLead >= 0 && f.wordLead <= 10, "--word-lead", "between 0 and 10", f.wordLead},
		{f.wordLabels >= 0 && f.wordLabels <= 1000, "--word-labels", "between 0 and 1000", f.wordLabels},
		{f.wordCRecords >= 0, "--word-c-records", "0 or more", f.wordCRecords},
		{f.wordNeighbours >= 0 && f.wordNeighbours <= 10000, "--word-neighbours", "between 0 and 10000", f.wordNeighbours},
		{f.wordNet >= 0 && f.wordNet <= 4096, "--word-net", "between 0 and 4096", f.wordNet},
		{f.wordMacroFloor >= 0 && f.wordMacroFloor <= 1, "--word-macro-floor", "a share from 0 to 1", f.wordMacroFloor},
	} {
		if !c.ok {
			fmt.Fprintf(os.Stderr, "termgrove fit: %s %v: expected %s\n", c.flag, c.got, c.want)
			return 2
		}
	}
	if f.wordMacroFloor > 0 && (!f.wordLayer || f.calibrate == 0) {
		fmt.Fprintf(os.Stderr, "termgrove fit: warning: --word-macro-floor tunes the word layer, which needs --calibrate and --word-layer: it has no effect here\n")
	}
	if f.vocab == "-" && f.recs == "-" {
		fmt.Fprintln(os.Stderr, "termgrove fit: --vocab and --records cannot both read standard input")
		return 2
	}
	if err := checkLangs(f.langs); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove fit: %v\n", err)
		return 2
	}
	// Refuse an output that cannot be written now, not after the sweeps.
	if err := checkOutPath(f.out); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove fit: --out: %v\n", err)
		return 2
	}
	if in := overwritesInput(f.out, f.vocab, f.recs); in != "" {
		fmt.Fprintf(os.Stderr, "termgrove fit: --out %s would overwrite the input %s with the model\n", f.out, in)
		return 2
	}
	if n := runtime.NumCPU(); f.workers > n {
		// AD-LDA workers beyond the cores only add merge work.
		fmt.Fprintf(os.Stderr, "termgrove fit: warning: --workers %d on %d cores is slower than --workers %d\n", f.workers, n, n)
	}
	return runFit(&f)
}

func fitSplit(s string) []string {
	var out []string
	for _, p := range strings.Split(s, ",") {
		if p = strings.TrimSpace(p); p != "" {
			out = append(out, p)
		}
	}
	return out
}

func runFit(f *fitFlags) int {
	logf := func(format string, a ...any) {
		if !f.quiet {
			fmt.Fprintf(os.Stderr, format+"\n", a...)
		}
	}
	warnf := func(format string, a ...any) { fmt.Fprintf(os.Stderr, "termgrove fit: warning: "+format+"\n", a...) }
	fail := func(code int, format string, a ...any) int {
		fmt.Fprintf(os.Stderr, "termgrove fit: "+format+"\n", a...)
		return code
	}

	// Catch interrupts from the start, so that one arriving while the
	// records load stops the run cleanly too.
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()

	scheme, err := loadVocab(f.vocab, concepts.LoadOptions{Scheme: f.scheme})
	if err != nil {
		return fail(2, "%v", fitFileErr(f.vocab, err))
	}
	if cycles := scheme.Cycles(); len(cycles) > 0 {
		return fail(2, "%s: the broader hierarchy has %d cycle(s), e.g. %s; termgrove needs it acyclic (termgrove check %s lists them all)",
			f.vocab, len(cycles), cycleString(scheme, cycles[0]), f.vocab)
	}
	langs := fitSplit(f.langs)
	an, err := terms.New(terms.Options{Languages: langs}, terms.NewDictionary())
	if err != nil {
		return fail(2, "%v", err)
	}
	pr, err := prior.Build(scheme, an, prior.Options{Lambda: f.lambda})
	if err != nil {
		return fail(2, "%s: building the prior: %v", f.vocab, err)
	}
	logf("vocabulary %s: %d concepts, %d without terms", f.vocab, len(scheme.Concepts), len(pr.Report.NoTerms))
	if len(scheme.Concepts) > 0 && len(pr.Report.NoTerms) == len(scheme.Concepts) {
		// Labels in other languages only: a wrong --lang. No labels at all:
		// the concepts can still learn from records' subjects.
		if ll := labelLangs(scheme); len(ll) > 0 {
			return fail(2, "%s: no concept has a label in --lang %s, so the concepts would learn nothing from their labels; the vocabulary's label languages: %s",
				f.vocab, f.langs, strings.Join(ll, ", "))
		}
		warnf("%s: no concept has a label; concepts learn only from the records' subjects", f.vocab)
	}

	b := &fit.CorpusBuilder{Analyzer: an, Scheme: scheme}
	fields := fitSplit(f.fields)
	unknownShown := 0
	ropt := records.Options{Fields: fields, SkipBad: f.skipBad, Bad: func(err error) { warnf("skipped: %v", err) }}
	var groups []string // per corpus record, with --group-field
	if f.groupField != "" {
		ropt.Keep = []string{f.groupField}
	}
	calib := newCalibSample(f.calibrate, f.holdout, f.seed)
	rstats, err := records.ReadStats(f.recs, ropt, func(r records.Record) error {
		added, unknown := b.AddLang(r.ID, r.Join(fields), r.Lang, r.Subjects, r.Date)
		group := ""
		if f.groupField != "" {
			group = r.Extra[f.groupField]
			if added {
				groups = append(groups, group)
			}
		}
		calib.add(r, fields, group)
		for _, u := range unknown {
			if unknownShown < 10 {
				warnf("%s:%d: record %q: subject %q is not a concept of the vocabulary (ignored)", r.File, r.Line, r.ID, u)
			}
			unknownShown++
		}
		return nil
	})
	if err != nil {
		var bad *records.Error
		if errors.As(err, &bad) {
			return fail(2, "%v (use --skip-bad to skip bad lines)", err)
		}
		return fail(2, "%v", err)
	}
	if unknownShown > 10 {
		warnf("%d more unknown subjects", unknownShown-10)
	}
	corpus := b.Finish()
	grouped := 0
	for i, g := range groups {
		corpus.Docs[i].Group = g
		if g != "" {
			grouped++
		}
	}
	if f.groupField != "" && grouped < len(groups) {
		warnf("--group-field %s: %d of %d records have no such field; each of them is a group of its own", f.groupField, len(groups)-grouped, len(groups))
	}
	if b.Records == 0 {
		hint := ""
		if rstats.Read > 0 {
			hint = fmt.Sprintf("; --fields %s read nothing: are the text fields named differently?", f.fields)
		}
		return fail(2, "%s: no record with text (%d read, %d empty, %d skipped)%s", f.recs, rstats.Read, b.Empty, rstats.Skipped, hint)
	}
	if int64(f.free) > corpus.Tokens() {
		return fail(2, "--free-topics %d: more free topics than the %d tokens of the records", f.free, corpus.Tokens())
	}
	logf("records %s: %d with text, %d empty, %d skipped as bad, %d unknown subjects; %d tokens, %d word types",
		f.recs, b.Records, b.Empty, rstats.Skipped, b.UnknownSubjects, corpus.Tokens(), corpus.W)
	if rstats.Invalid > 0 {
		warnf("%s: %d invalid UTF-8 sequences replaced by U+FFFD", f.recs, rstats.Invalid)
	}

	ckPath := f.out + ".checkpoint"
	lambda := f.lambda
	if lambda == 0 {
		lambda = autoLambda(corpus.Tokens(), len(pr.Rows))
		logf("prior strength λ = %.0f (half the mean tokens per concept, at least %d)", lambda, prior.DefaultLambda)
	}
	opt := fit.Options{
		Sweeps: f.sweeps, BurnIn: f.burnIn, FreeTopics: f.free, Lambda: lambda, Seed: f.seed,
		Anchor:  f.anchor && f.free > 0,
		Workers: f.workers, HoldoutFraction: f.holdout,
		Checkpoint: f.checkpoint, CheckpointPath: ckPath,
		Sampler: f.sampler,
	}
	if f.checkpoint <= 0 {
		opt.CheckpointPath = ""
	}
	tty := !f.noProgress && !f.quiet && term.IsTerminal(int(os.Stderr.Fd()))
	var bar *progressbar.ProgressBar
	if tty {
		bar = progressbar.NewOptions(f.sweeps,
			progressbar.OptionSetWriter(os.Stderr),
			progressbar.OptionSetDescription("sweep"),
			progressbar.OptionShowCount(),
			progressbar.OptionSetPredictTime(true),
			progressbar.OptionFullWidth(),
			progressbar.OptionThrottle(200*time.Millisecond),
		)
	}
	lastLog := time.Now()
	opt.Progress = func(p fit.Progress) {
		ll := "-"
		if p.LogLik != 0 {
			ll = fmt.Sprintf("%.4f", p.LogLik)
		}
		if bar != nil {
			bar.Describe(fmt.Sprintf("sweep %d/%d  %.2fM tokens/s  log-lik/token %s", p.Sweep, p.Sweeps, p.TokensPerSec/1e6, ll))
			bar.Set(p.Sweep)
			return
		}
		if f.quiet {
			return
		}
		if p.Sweep == p.Sweeps || p.Sweep == 1 || p.Checkpointed || time.Since(lastLog) >= 10*time.Second {
			left := time.Duration(0)
			if p.Sweep > 0 {
				left = time.Duration(float64(p.Elapsed) / float64(p.Sweep) * float64(p.Sweeps-p.Sweep))
			}
			ck := ""
			if p.Checkpointed {
				ck = " checkpoint written"
			}
			logf("sweep %d/%d tokens/s=%.0f log-lik/token=%s left=%s%s", p.Sweep, p.Sweeps, p.TokensPerSec, ll, left.Round(time.Second), ck)
			lastLog = time.Now()
		}
	}

	if ctx.Err() != nil {
		return fail(1, "interrupted before fitting")
	}
	var res *fit.Result
	if _, statErr := os.Stat(ckPath); f.resume && statErr == nil {
		logf("resuming from %s", ckPath)
		if ckOpt, ckErr := fit.CheckpointOptions(ckPath); ckErr == nil {
			if diff := resumeDiff(ckOpt, opt); diff != "" {
				return fail(2, "%s was written by a fit with other options: %s; resume with the original options, or delete it (or leave out --resume) to start afresh", ckPath, diff)
			}
		}
		res, err = fit.Resume(ctx, ckPath, pr, corpus, opt)
	} else {
		if f.resume {
			logf("no checkpoint at %s: starting afresh", ckPath)
		}
		res, err = fit.RunContext(ctx, pr, corpus, opt)
	}
	if bar != nil {
		bar.Finish()
		fmt.Fprintln(os.Stderr)
	}
	if err != nil {
		if errors.Is(err, context.Canceled) {
			if opt.CheckpointPath != "" {
				return fail(1, "interrupted; state saved in %s, continue with --resume", ckPath)
			}
			return fail(1, "interrupted")
		}
		if errors.Is(err, fit.ErrCheckpoint) {
			return fail(2, "%v; delete %s or leave out --resume to start afresh", err, ckPath)
		}
		if errors.Is(err, fit.ErrEmptyCorpus) {
			return fail(2, "%s: no tokens to fit (holdout %.2f)", f.recs, f.holdout)
		}
		return fail(1, "%v", err)
	}

	m := res.Model
	m.Provenance.VocabSHA256, _ = fitHashPath(f.vocab)
	m.Provenance.CorpusSHA256, _ = fitHashPath(f.recs)
	m.Provenance.Options["lang"] = strings.Join(langs, ",")
	m.Provenance.Options["fields"] = strings.Join(fields, ",")
	if n := len(calib.texts); n > 0 && n < minCalibrate {
		logf("%d records people indexed: too few to calibrate the scores (at least %d)", n, minCalibrate)
	} else if n > 0 {
		start := time.Now()
		cal, err := annotate.Calibrate(m, calib.texts, annotate.CalibrateOptions{Workers: f.workers, HeldOut: f.holdout > 0, BurnIn: scoreBurnIn, Samples: scoreSamples})
		switch {
		case errors.Is(err, annotate.ErrNoCalibrationData):
			warnf("no record people indexed has words the model knows: scores left uncalibrated")
		case err != nil:
			return fail(1, "calibration: %v", err)
		default:
			m.Calibration = cal
			src := "training records"
			if cal.HeldOut {
				src = "held-out records"
			}
			logf("scores calibrated on %d %s people indexed (%.1f s)", cal.Records, src, time.Since(start).Seconds())
			if f.wordLayer {
				if err := trainWordLayer(m, corpus, calib, f, logf, warnf); err != nil {
					return fail(1, "word layer: %v", err)
				}
			}
		}
	}
	// The build, the paths and the time go in last: the model's checksum
	// seeds the annotations that the calibration and the word layer's
	// tuning learn from, and these would make two fits of the same files
	// with the same seed differ.
	m.Provenance.TermgroveVersion = version
	m.Provenance.VocabFile = f.vocab
	m.Provenance.CorpusFile = f.recs
	m.Provenance.Created = time.Now().UTC().Format(time.RFC3339)
	if err := model.Save(f.out, m); err != nil {
		return fail(1, "%v", err)
	}
	if opt.CheckpointPath != "" {
		os.Remove(ckPath)
	}

	fmt.Fprintf(os.Stderr, "model %s: %d concepts used of %d, %d free topics, %.1f%% of tokens in free topics\n",
		f.out, res.ConceptsUsed, m.C, m.F, 100*res.FreeShare)
	if n := len(res.LogLik); n > 0 {
		fmt.Fprintf(os.Stderr, "training log-likelihood per token: %.4f (sweep %d)\n", res.LogLik[n-1].PerToken, res.LogLik[n-1].Sweep)
	}
	if res.HeldOutDocs > 0 {
		fmt.Fprintf(os.Stderr, "held-out log-likelihood per token: %.4f (perplexity %.1f) over %d records, %d tokens\n",
			res.HeldOutLLPerWord, expNeg(res.HeldOutLLPerWord), res.HeldOutDocs, res.HeldOutTokens)
	}
	if l := m.WordLayer; l != nil && l.Tuned > 0 {
		fmt.Fprintf(os.Stderr, "word layer tuned on %d tuning records: micro F1@5 %.3f, macro F1@5 %.3f%s\n",
			l.Tuned, l.TunedMicro, l.TunedMacro, floorNote(l.TunedMacroFloor, l.TunedMacro))
	}
	fmt.Println(res.String())
	return 0
}

// expNeg is the perplexity of a per-token log-likelihood.
func expNeg(x float64) float64 { return math.Exp(-x) }

// fitFileErr keeps errors that already name the file and prefixes the others.
func fitFileErr(path string, err error) error {
	if strings.Contains(err.Error(), path) {
		return err
	}
	return fmt.Errorf("%s: %w", path, err)
}

// fitHashPath is the SHA-256 of a file, or of a folder's .txt files in name
// order (each name and content).
func fitHashPath(path string) (string, error) {
	h := sha256.New()
	fi, err := os.Stat(path)
	if err != nil {
		return "", err
	}
	if !fi.IsDir() {
		fh, err := os.Open(path)
		if err != nil {
			return "", err
		}
		defer fh.Close()
		if _, err := io.Copy(h, fh); err != nil {
			return "", err
		}
		return hex.EncodeToString(h.Sum(nil)), nil
	}
	var names []string
	filepath.WalkDir(path, func(p string, d fs.DirEntry, err error) error {
		if err == nil && !d.IsDir() && strings.HasSuffix(p, ".txt") {
			names = append(names, p)
		}
		return nil
	})
	sort.Strings(names)
	for _, n := range names {
		h.Write([]byte(n))
		h.Write([]byte{0})
		fh, err := os.Open(n)
		if err != nil {
			return "", err
		}
		io.Copy(h, fh)
		fh.Close()
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// autoLambda is the default prior strength: half the mean number of tokens
// per concept, and at least prior.DefaultLambda. The labels then weigh like
// half a typical concept's share of the corpus whatever its size: measured
// on debtags (1.1M tokens, 643 concepts, λ ≈ 840) macro F1@5 rises from
// 0.227 at λ = 50 to 0.253 at λ = 1000, while on the 14k-token demo λ = 300
// already pushes 87% of the tokens to free topics and leaves 16 concepts
// unused (bench/quality.md).
func autoLambda(tokens int64, concepts int) float64 {
	if concepts == 0 {
		return prior.DefaultLambda
	}
	return max(prior.DefaultLambda, 0.5*float64(tokens)/float64(concepts))
}

// resumeDiff names the options that shape the model in which a resumed fit
// differs from its checkpoint, as the flags a user would type.
func resumeDiff(ck, now fit.Options) string {
	var d []string
	add := func(flag string, was, is any) {
		d = append(d, fmt.Sprintf("%s %v (checkpoint %v)", flag, is, was))
	}
	if ck.FreeTopics != now.FreeTopics {
		add("--free-topics", ck.FreeTopics, now.FreeTopics)
	}
	if ck.Lambda != now.Lambda {
		add("--lambda", ck.Lambda, now.Lambda)
	}
	if ck.Seed != now.Seed {
		add("--seed", ck.Seed, now.Seed)
	}
	if ck.HoldoutFraction != now.HoldoutFraction {
		add("--holdout", ck.HoldoutFraction, now.HoldoutFraction)
	}
	if ck.Anchor != now.Anchor {
		add("--anchor", ck.Anchor, now.Anchor)
	}
	return strings.Join(d, ", ")
}

// defaultCalibrate is fit's default --calibrate: none. DESIGN.md defines a
// concept's score as its share of the record, and a calibrated model ranks
// by another quantity (the probability that a person assigns the concept),
// so calibration is asked for, not assumed. On debtags (bench/quality.md)
// the same model scored micro/macro F1@5 0.456/0.293 uncalibrated and
// 0.463/0.300 calibrated on 5,000 of its training records (F1@1 0.261 →
// 0.276, NDCG@5 0.657 → 0.696); 1,000 and 2,000 records gave 0.005 and 0.003
// less micro F1, all 21,776 0.003 more. Calibrating takes about as long as
// scoring as many records.
const defaultCalibrate = 0

// minCalibrate is the fewest records people indexed that fit calibrates
// on: with fewer, most concepts appear in a handful of them, their own
// mappings are noise about the shared one, and the shared one alone does
// not change the ranking. (The demo's 90 indexed records are below it.)
const minCalibrate = 200

// calibSample keeps a deterministic sample of up to n records people
// indexed for the score calibration (reservoir sampling, Vitter's
// algorithm R, seeded by the fit's seed): with a holdout share only the
// held-out ones, which the fit never sees.
type calibSample struct {
	n       int
	holdout float64
	seen    int
	rng     *rand.Rand
	texts   []annotate.LabeledText
	groups  map[string]string // text id → group (--group-field)
}

func newCalibSample(n int, holdout float64, seed int64) *calibSample {
	return &calibSample{n: n, holdout: holdout, rng: rand.New(rand.NewPCG(uint64(seed), 0x63616c6962))}
}

func (c *calibSample) add(r records.Record, fields []string, group string) {
	key := (&fit.Doc{ID: r.ID, Group: group}).HoldKey()
	if c.n == 0 || len(r.Subjects) == 0 || (c.holdout > 0 && !fit.HeldOut(key, c.holdout)) {
		return
	}
	if group != "" {
		if c.groups == nil {
			c.groups = map[string]string{}
		}
		c.groups[r.ID] = group
	}
	t := annotate.LabeledText{ID: r.ID, Text: r.Join(fields), Language: r.Lang, Subjects: r.Subjects}
	c.seen++
	if len(c.texts) < c.n {
		c.texts = append(c.texts, t)
		return
	}
	if j := c.rng.IntN(c.seen); j < c.n {
		c.texts[j] = t
	}
}

// trainWordLayer trains m's discriminative word layer on the records
// people indexed and tunes its combination with the topic scores on the
// calibration texts, scored by a second layer trained without them (a layer
// scores its own training records too well). With --holdout the texts are
// held-out records, which the topic model never saw; the layer itself
// learns from every indexed record. With --group-field the second layer
// leaves out the tuning texts' whole groups, as a new record's group is
// unseen.
func trainWordLayer(m *model.Model, corpus *fit.Corpus, calib *calibSample, f *fitFlags, logf, warnf func(string, ...any)) error {
	texts := calib.texts
	start := time.Now()
	opt := fit.WordLayerOptions{Workers: f.workers, Words: len(m.Words), Seed: uint64(f.seed), Lead: f.wordLead}
	if f.wordLead == 0 {
		opt.Lead = -1 // none
	}
	opt.Labels, opt.LabelWeight = fit.LabelTerms(m.Prior), f.wordLabels
	if f.wordLabels == 0 {
		opt.LabelWeight = -1 // none
	}
	opt.CRecords = f.wordCRecords
	if f.wordCRecords == 0 {
		opt.CRecords = -1 // one C
	}
	opt.Neighbours = f.wordNeighbours
	opt.Net.Hidden = f.wordNet
	if f.wordNet == 0 {
		opt.Net.Hidden = -1 // none
	}
	full, err := fit.TrainWordLayer(corpus, m.C, opt)
	if errors.Is(err, fit.ErrNoIndexed) {
		warnf("%v: no word layer", err)
		return nil
	}
	if err != nil {
		return err
	}
	tuning := make(map[string]bool, len(texts))
	for _, t := range texts {
		tuning[(&fit.Doc{ID: t.ID, Group: calib.groups[t.ID]}).HoldKey()] = true
	}
	opt.Skip = func(i int) bool { return tuning[corpus.Docs[i].HoldKey()] }
	held, err := fit.TrainWordLayer(corpus, m.C, opt)
	if errors.Is(err, fit.ErrNoIndexed) {
		// Every record people indexed is a tuning record: there is nothing
		// to train the layer that scores them on. Keep the fit.
		warnf("all %d records people indexed are calibration records, so none is left to learn how the word layer combines with the topics: no word layer (use --holdout, or --calibrate below %d)", full.Records, full.Records)
		return nil
	}
	if err != nil {
		return err
	}
	m.WordLayer = full
	if err := annotate.TuneWordLayer(m, held, texts, annotate.TuneOptions{CalibrateOptions: annotate.CalibrateOptions{
		Workers: f.workers, BurnIn: scoreBurnIn, Samples: scoreSamples}, MacroFloor: f.wordMacroFloor}); err != nil {
		m.WordLayer = nil
		return err
	}
	vote, netW := 0.0, 0.0
	if full.KNN != nil {
		vote = full.KNN.Weight
	}
	if full.Net != nil {
		netW = full.Net.Weight
	}
	logf("word layer: %d records and %d concepts' labels (weight %g), %d weights, lead weight %g; neighbour vote weight %g, network weight %g, topic weight %g, frequency weight %g, share floor %g, tuned on %d records (micro + macro F1@5 %.3f = %.3f + %.3f%s; %.1f s)",
		full.Records, full.Labels, full.LabelWeight, len(full.Weight), full.Lead, vote, netW, full.TopicWeight, full.FreqWeight, full.ShareFloor, full.Tuned, full.TunedF1, full.TunedMicro, full.TunedMacro, floorNote(f.wordMacroFloor, full.TunedMacro), time.Since(start).Seconds())
	return nil
}

// floorNote says, for the fit log, what the word layer's tuning maximised
// when a macro F1 floor was asked for, and whether any setting reached it.
func floorNote(floor, macro float64) string {
	switch {
	case floor <= 0:
		return ""
	case macro >= floor:
		return fmt.Sprintf(", the most micro F1@5 with macro at least %g", floor)
	default:
		return fmt.Sprintf(", no setting reached macro %g: micro + macro maximised", floor)
	}
}
