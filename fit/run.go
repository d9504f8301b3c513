package fit

import (
	"context"
	"fmt"
	"slices"
	"strconv"
	"time"

	"termgrove/model"
)

// run sweeps from st.sweep to opt.Sweeps, then builds the model.
func (st *state) run(ctx context.Context) (*Result, error) {
	opt := &st.opt
	tokens := int64(len(st.words))
	start := time.Now()
	lastCk := start
	done := 0
	var lastLL float64
	if n := len(st.llHist); n > 0 {
		lastLL = st.llHist[n-1].PerToken
	}
	for st.sweep < opt.Sweeps {
		if err := ctx.Err(); err != nil {
			if opt.Checkpoint > 0 && opt.CheckpointPath != "" {
				if cerr := st.writeCheckpoint(opt.CheckpointPath, time.Since(start).Seconds()); cerr != nil {
					return nil, cerr
				}
			}
			return nil, err
		}
		st.sweepOnce()
		st.sweep++
		done++
		if st.sweep == st.anchorRelease() {
			st.releaseAnchors()
		}
		if !opt.FixedAlpha && st.sweep > opt.BurnIn && st.sweep%opt.OptimizeEvery == 0 {
			st.optimizeAlpha()
		}
		if st.sweep%opt.LogLikEvery == 0 || st.sweep == opt.Sweeps {
			ll := st.logLik()
			lastLL = ll / float64(tokens)
			st.llHist = append(st.llHist, LogLikPoint{Sweep: st.sweep, LogLik: ll, PerToken: lastLL})
		}
		ck := false
		if opt.Checkpoint > 0 && opt.CheckpointPath != "" && time.Since(lastCk) >= opt.Checkpoint && st.sweep < opt.Sweeps {
			if err := st.writeCheckpoint(opt.CheckpointPath, time.Since(start).Seconds()); err != nil {
				return nil, err
			}
			lastCk = time.Now()
			ck = true
		}
		if opt.Progress != nil {
			el := time.Since(start)
			opt.Progress(Progress{
				Sweep: st.sweep, Sweeps: opt.Sweeps, Tokens: tokens,
				TokensPerSec: float64(tokens) * float64(done) / el.Seconds(),
				LogLik:       lastLL, Elapsed: el, Checkpointed: ck,
			})
		}
	}
	secs := time.Since(start).Seconds()
	res := &Result{
		Sweeps:      st.sweep,
		TrainTokens: tokens,
		LogLik:      st.llHist,
		Seconds:     secs,
	}
	if secs > 0 {
		res.TokensPerSec = float64(tokens) * float64(done) / secs
	}
	m := st.buildModel()
	res.Model = m
	var free int64
	for k := st.C; k < st.K; k++ {
		free += int64(st.nk[k])
	}
	res.FreeShare = float64(free) / float64(tokens)
	for k := 0; k < st.C; k++ {
		if st.nk[k] > 0 {
			res.ConceptsUsed++
		}
	}
	if len(st.heldout) > 0 {
		docs := make([][]int32, 0, min(len(st.heldout), opt.HoldoutMaxDocs))
		for _, i := range st.heldout[:min(len(st.heldout), opt.HoldoutMaxDocs)] {
			docs = append(docs, st.corpus.Docs[i].Words)
		}
		ll, n := LeftToRight(ModelPhi(m), m.Alpha, docs, LROptions{
			Particles: opt.HoldoutParticles, Seed: uint64(opt.Seed), Workers: opt.Workers,
		})
		res.HeldOutDocs = len(docs)
		res.HeldOutTokens = n
		if n > 0 {
			res.HeldOutLLPerWord = ll / float64(n)
		}
		m.Provenance.HeldOutLLPerWord = res.HeldOutLLPerWord
	}
	return res, nil
}

// buildModel turns the counts into a model.Model (topic-major, sorted by word).
func (st *state) buildModel() *model.Model {
	m := &model.Model{
		C: st.C, F: st.F,
		Alpha:     st.marginalAlpha(),
		Beta0:     st.beta0,
		Lambda:    st.lambda,
		Counts:    make([][]model.WordCount, st.K),
		Totals:    make([]int64, st.K),
		DocCounts: make([]int32, st.K),
	}
	if p := st.prior; p != nil {
		m.Scheme = p.Scheme
		if p.Analyzer != nil {
			m.Analyzer = p.Analyzer.Options()
			m.Words = slices.Clone(p.Analyzer.Dict().Terms())
		}
		m.Prior = make([][]model.WordWeight, len(p.Rows))
		for k, row := range p.Rows {
			r := make([]model.WordWeight, len(row))
			for i, e := range row {
				r[i] = model.WordWeight{Word: e.Word, Weight: e.Weight}
			}
			m.Prior[k] = r
		}
	}
	// Topic row sizes first, so every row is allocated once.
	size := make([]int32, st.K)
	for w := range st.wt {
		for _, e := range st.wt[w] {
			size[e.k]++
		}
	}
	for k := range m.Counts {
		m.Counts[k] = make([]model.WordCount, 0, size[k])
		m.Totals[k] = int64(st.nk[k])
	}
	for w := range st.wt { // w ascending: rows come out sorted by word
		for _, e := range st.wt[w] {
			m.Counts[e.k] = append(m.Counts[e.k], model.WordCount{Word: int32(w), Count: e.n})
		}
	}
	seen := make([]bool, st.K)
	var ks []int32
	for di := range st.docs {
		d := &st.docs[di]
		for i := d.start; i < d.end; i++ {
			k := st.z[i]
			if !seen[k] {
				seen[k] = true
				ks = append(ks, k)
			}
		}
		for _, k := range ks {
			m.DocCounts[k]++
			seen[k] = false
		}
		ks = ks[:0]
	}
	m.Related = st.related()
	o := st.opt
	m.Provenance = model.Provenance{
		Records: len(st.docs),
		Tokens:  int64(len(st.words)),
		Sweeps:  st.sweep,
		Seed:    o.Seed,
		Options: map[string]string{
			"sweeps":         strconv.Itoa(o.Sweeps),
			"burn_in":        strconv.Itoa(o.BurnIn),
			"free_topics":    strconv.Itoa(o.FreeTopics),
			"lambda":         strconv.FormatFloat(st.lambda, 'g', -1, 64),
			"beta0":          strconv.FormatFloat(st.beta0, 'g', -1, 64),
			"alpha_start":    strconv.FormatFloat(o.Alpha, 'g', -1, 64),
			"fixed_alpha":    strconv.FormatBool(o.FixedAlpha),
			"optimize_every": strconv.Itoa(o.OptimizeEvery),
			"workers":        strconv.Itoa(o.Workers),
			"holdout":        strconv.FormatFloat(o.HoldoutFraction, 'g', -1, 64),
			"anchor":         anchorSetting(o),
			"heldout_docs":   strconv.Itoa(len(st.heldout)),
		},
	}
	return m
}

// String summarises a result in the CLI's closing format.
func (r *Result) String() string {
	return fmt.Sprintf("tokens=%d sweeps=%d seconds=%.1f tokens/s=%.0f", r.TrainTokens, r.Sweeps, r.Seconds, r.TokensPerSec)
}

// marginalAlpha is the α a record of unknown subjects should use. A concept
// topic was only allowed in some records: the unrestricted ones, the
// anchored ones whose text names it, and the indexed ones whose subjects
// include it. Its learned α_k holds for those records only, so the model
// stores the expected weight of k in any record:
//
//	α'_k = α_k·q_k + f_k
//
// where q_k is the share of records that were allowed k without a human
// choosing it (unrestricted or anchored) and f_k is the share of records
// whose people-assigned subjects include k: the label-frequency prior of
// Prior-LDA (Rubin, Chambers, Smyth & Steyvers 2012, "Statistical topic
// models for multi-label document classification", §4.1, with η = 1, so
// that Σ_k f_k is the mean number of subjects per record). A concept people
// often assign but whose records' words go to more specific co-subjects
// keeps a weight as large as its use. Without restricted records this is
// α itself.
func (st *state) marginalAlpha() []float64 {
	a := slices.Clone(st.alpha)
	free := make([]int, st.C)  // records allowed k without a person choosing it
	human := make([]int, st.C) // records whose subjects name k
	unrestricted := 0
	for i := range st.docs {
		d := &st.docs[i]
		switch {
		case d.subjects == nil:
			unrestricted++
		case d.anchored:
			for _, k := range d.subjects {
				free[k]++
			}
		default:
			for _, k := range d.subjects {
				human[k]++
			}
		}
	}
	if unrestricted == len(st.docs) {
		return a
	}
	D := float64(len(st.docs))
	for k := 0; k < st.C; k++ {
		q := float64(unrestricted+free[k]) / D
		a[k] = max(a[k]*q+float64(human[k])/D, minAlpha)
	}
	return a
}

// Bounds of the related-concept rows: at most maxRelated concepts per row,
// each with a lift of at least minLift.
const (
	maxRelated = 20
	minLift    = 0.01
)

// related computes, over the records whose subjects people chose, the lift
// P(k | j) − P(k) of concept k among the records indexed with j, keeping
// the positive ones (j itself has 1 − P(j)). It is the label-dependency
// half of Dependency-LDA (Rubin, Chambers, Smyth & Steyvers 2012), reduced
// to one label topic per concept: annotation adds a concept's related
// concepts to its neighbours' scores, so that subjects people assign
// together are suggested together. nil without indexed records.
func (st *state) related() [][]model.ConceptWeight {
	var pairs []uint64 // j<<32 | k, one per (record, j, k)
	df := make([]float64, st.C)
	D := 0.0
	for i := range st.docs {
		d := &st.docs[i]
		if d.subjects == nil || d.anchored {
			continue
		}
		D++
		for _, j := range d.subjects {
			df[j]++
			for _, k := range d.subjects {
				pairs = append(pairs, uint64(j)<<32|uint64(k))
			}
		}
	}
	if D == 0 {
		return nil
	}
	slices.Sort(pairs)
	rows := make([][]model.ConceptWeight, st.C)
	for i := 0; i < len(pairs); {
		n := i
		for n < len(pairs) && pairs[n] == pairs[i] {
			n++
		}
		j, k := int32(pairs[i]>>32), int32(uint32(pairs[i]))
		if lift := float64(n-i)/df[j] - df[k]/D; lift >= minLift {
			rows[j] = append(rows[j], model.ConceptWeight{Concept: k, Weight: lift})
		}
		i = n
	}
	for j, row := range rows {
		if len(row) > maxRelated {
			slices.SortStableFunc(row, func(a, b model.ConceptWeight) int {
				switch {
				case a.Weight > b.Weight:
					return -1
				case a.Weight < b.Weight:
					return 1
				}
				return 0
			})
			row = row[:maxRelated]
			slices.SortFunc(row, func(a, b model.ConceptWeight) int { return int(a.Concept - b.Concept) })
			rows[j] = row
		}
	}
	return rows
}
