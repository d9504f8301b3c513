package annotate

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"

	"termgrove/model"
)

// Calibration of the ranking scores (model.Calibration).
//
// The fold-in share θ_k says how much of a text's wording a concept takes,
// not how likely a person indexing the text is to assign it: structural
// concepts that few words express (debtags' implemented-in/c,
// interface/commandline) take little of any text although people assign
// them often, and broad concepts that share their words with every record
// (role/program) take much of many texts they do not belong to. Calibrate
// annotates texts people indexed and fits, per concept k, a Platt (1999)
// mapping of the raw score s_k (the fold-in share plus the related-concept
// boost) to the probability that k is among the text's subjects,
//
//	p_k = σ(A_k·ln s_k + B_k),
//
// by L2-penalised logistic regression whose penalty pulls (A_k, B_k)
// towards one mapping fitted on all concepts together: a concept seen in
// few calibration texts keeps close to the shared mapping, a frequent one
// gets its own. Annotation then ranks by p_k (see calibrated), unless
// Options.Uncalibrated asks for the shares (the gap report measures use
// with them).

// LabeledText is a text with the concepts people assigned to it.
type LabeledText struct {
	ID, Text string
	Language string   // BCP 47 tag; "" = the model's main language
	Subjects []string // concept IRIs; those not in the model are ignored
}

// CalibrateOptions tune Calibrate; zero values mean the defaults.
type CalibrateOptions struct {
	// Shrink is the L2 weight pulling each concept's mapping towards the
	// shared one (default DefaultShrink).
	Shrink float64
	// BurnIn and Samples are the fold-in sweeps per text (defaults
	// DefaultBurnIn and 200; fit passes score's own, so calibration sees the
	// scores that score ranks).
	BurnIn, Samples int
	// Workers annotate in parallel (default GOMAXPROCS).
	Workers int
	// HeldOut records in the model that the texts were kept out of the fit.
	HeldOut bool
}

// DefaultShrink is the default CalibrateOptions.Shrink. On the debtags
// benchmark (bench/quality.md) 1, 3 and 10 differ by less than 0.005 in
// micro F1@5; 3 is in the middle.
const DefaultShrink = 3.0

// ErrNoCalibrationData: none of the texts had a known subject and a token.
var ErrNoCalibrationData = errors.New("no text with known subjects and known words to calibrate on")

// Calibrate learns m's score calibration from texts people indexed. m is
// not changed; set m.Calibration to the result to use it. Any calibration
// m already holds is ignored: the mapping is learned from raw scores.
func Calibrate(m *model.Model, texts []LabeledText, opt CalibrateOptions) (*model.Calibration, error) {
	if opt.Shrink == 0 {
		opt.Shrink = DefaultShrink
	}
	if !(opt.Shrink > 0) || math.IsInf(opt.Shrink, 0) {
		return nil, fmt.Errorf("annotate: calibration shrink %v: want a positive number", opt.Shrink)
	}
	opt.setDefaults()
	raw := *m
	raw.Calibration = nil
	a, err := New(&raw)
	if err != nil {
		return nil, err
	}
	C := m.C
	// x[i*C+k] = ln s_k of text i (NaN: concept not ranked, e.g.
	// deprecated); y[i*C+k] = k among its subjects.
	x := make([]float64, len(texts)*C)
	y := make([]bool, len(texts)*C)
	use := make([]bool, len(texts))
	errs := make([]error, len(texts))
	each(len(texts), opt.Workers, func() func(int) {
		return func(i int) {
			errs[i] = a.rawScores(&texts[i], opt, x[i*C:(i+1)*C], y[i*C:(i+1)*C], &use[i])
		}
	})
	n := 0
	for i, err := range errs {
		if err != nil {
			return nil, fmt.Errorf("annotate: calibration text %s: %w", texts[i].ID, err)
		}
		if use[i] {
			n++
		}
	}
	if n == 0 {
		return nil, ErrNoCalibrationData
	}
	// The shared mapping, over every (text, concept) pair.
	var all pairs
	for i := range texts {
		if !use[i] {
			continue
		}
		for k := 0; k < C; k++ {
			if v := x[i*C+k]; !math.IsNaN(v) {
				all.add(v, y[i*C+k])
			}
		}
	}
	ga, gb := all.fit(0, 1, 0)
	cal := &model.Calibration{A: make([]float64, C), B: make([]float64, C), GlobalA: ga, GlobalB: gb,
		Shrink: opt.Shrink, Records: n, HeldOut: opt.HeldOut}
	var p pairs
	for k := 0; k < C; k++ {
		p.reset()
		for i := range texts {
			if v := x[i*C+k]; use[i] && !math.IsNaN(v) {
				p.add(v, y[i*C+k])
			}
		}
		cal.A[k], cal.B[k] = p.fit(opt.Shrink, ga, gb)
	}
	return cal, nil
}

// setDefaults fills the zero fields of o but Shrink, which only Calibrate
// uses.
func (o *CalibrateOptions) setDefaults() {
	if o.Samples <= 0 {
		o.Samples = 200
	}
	if o.BurnIn <= 0 {
		o.BurnIn = DefaultBurnIn
	}
	if o.Workers <= 0 {
		o.Workers = runtime.GOMAXPROCS(0)
	}
}

// each calls do(i) for every i in [0, n) on workers goroutines. newDo runs
// once per goroutine, so each can keep scratch of its own.
func each(n, workers int, newDo func() func(i int)) {
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < workers; w++ {
		do := newDo()
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				do(i)
			}
		}()
	}
	for i := 0; i < n; i++ {
		next <- i
	}
	close(next)
	wg.Wait()
}

// rawScores annotates one text with every concept ranked and writes ln s_k
// and whether k is a subject.
func (a *Annotator) rawScores(t *LabeledText, opt CalibrateOptions, x []float64, y []bool, use *bool) error {
	for _, iri := range t.Subjects {
		if k, ok := a.m.ConceptIndex(iri); ok && k < a.C {
			y[k] = true
			*use = true
		}
	}
	if !*use {
		return nil
	}
	res, err := a.Annotate(t.ID, t.Text, Options{Top: -1, BurnIn: opt.BurnIn, Samples: opt.Samples, Language: t.Language, MaxBytes: -1})
	if err != nil {
		return err
	}
	if res.Tokens == 0 {
		*use = false
		return nil
	}
	for k := range x {
		x[k] = math.NaN()
	}
	for _, c := range res.Concepts {
		if k, ok := a.m.ConceptIndex(c.IRI); ok && k < a.C && c.Score > 0 {
			x[k] = math.Log(c.Score)
		}
	}
	return nil
}

// pairs holds (x, y) cases of one logistic regression.
type pairs struct {
	x []float64
	y []bool
}

func (p *pairs) reset()                { p.x, p.y = p.x[:0], p.y[:0] }
func (p *pairs) add(x float64, y bool) { p.x, p.y = append(p.x, x), append(p.y, y) }

// fit minimises the logistic loss of σ(a·x + b) plus λ·((a−a0)² + (b−b0)²)
// by Newton's method with step halving (the loss is convex, strictly so
// when λ > 0). Without cases it returns (a0, b0).
func (p *pairs) fit(lambda, a0, b0 float64) (float64, float64) {
	a, b := a0, b0
	loss := p.loss(a, b, lambda, a0, b0)
	for it := 0; it < 100; it++ {
		var ga, gb, haa, hab, hbb float64
		for i, x := range p.x {
			s := sigmoid(a*x + b)
			r := s
			if p.y[i] {
				r = s - 1
			}
			w := s * (1 - s)
			ga += r * x
			gb += r
			haa += w * x * x
			hab += w * x
			hbb += w
		}
		ga += 2 * lambda * (a - a0)
		gb += 2 * lambda * (b - b0)
		haa += 2*lambda + 1e-9
		hbb += 2*lambda + 1e-9
		det := haa*hbb - hab*hab
		if !(det > 0) {
			break
		}
		da := (hbb*ga - hab*gb) / det
		db := (haa*gb - hab*ga) / det
		step := 1.0
		improved := false
		for h := 0; h < 30; h++ {
			na, nb := a-step*da, b-step*db
			if nl := p.loss(na, nb, lambda, a0, b0); nl <= loss {
				a, b, improved = na, nb, true
				done := loss-nl < 1e-10*(1+math.Abs(loss))
				loss = nl
				if done {
					return a, b
				}
				break
			}
			step /= 2
		}
		if !improved {
			break
		}
	}
	return a, b
}

// loss is the penalised negative log-likelihood.
func (p *pairs) loss(a, b, lambda, a0, b0 float64) float64 {
	l := lambda * ((a-a0)*(a-a0) + (b-b0)*(b-b0))
	for i, x := range p.x {
		z := a*x + b
		if p.y[i] {
			z = -z
		}
		l += softplus(z) // −ln σ(a·x + b) for a positive, −ln(1 − σ(a·x + b)) for a negative
	}
	return l
}

func sigmoid(z float64) float64 { return 1 / (1 + math.Exp(-z)) }

// softplus is ln(1 + e^z), without overflow.
func softplus(z float64) float64 {
	if z > 30 {
		return z
	}
	return math.Log1p(math.Exp(z))
}

// calTables hold what calibrated needs per concept, so that it can skip
// the concepts a record does not touch without computing their mapping.
type calTables struct {
	lnAlpha []float64 // ln α_k
	phi0Max float64   // max_k φ⁰_k over the concepts
}

func newCalTables(m *model.Model, phi0 []float64) calTables {
	if m.Calibration == nil {
		return calTables{}
	}
	t := calTables{lnAlpha: make([]float64, m.C)}
	for k := 0; k < m.C; k++ {
		t.lnAlpha[k] = math.Log(m.Alpha[k])
		t.phi0Max = max(t.phi0Max, phi0[k])
	}
	return t
}

// calPrune lets the tests compare the pruned ranking with the full one.
var calPrune = true

// calibrated returns, for a model that holds a calibration, the candidates
// together with every other concept that may rank among the want best once
// calibrated, and the calibrated score.
// Concepts outside the record's candidates can matter because a large B_k
// may lift a concept the text does not touch.
//
// Such a concept's raw score is s_k = α_k·(1 + φ⁰_k·r)·norm (no record
// counts, no related boost; r ≥ 0 is the record's smoothing factor, rbF in
// summarise), so its log-odds are at most
//
//	A_k·(ln α_k + ln norm) + B_k + max(A_k, 0)·ln(1 + max_j φ⁰_j·r),
//
// and it is added only when that bound reaches the want-th best log-odds
// of the candidates: the ranking is the same as over all concepts
// (TestCalibratedPruneExact), with few logarithms.
func (a *Annotator) calibrated(st *state, cand []int32, score func(int32) float64, want int, norm, rbF float64) ([]int32, func(int32) float64) {
	cal := a.m.Calibration
	// pv[k] is concept k's calibrated score once mapped (when pvMark[k]
	// is this call's stamp): each is asked for several times (ranking,
	// pool, paths).
	if len(st.pv) != a.C {
		st.pv, st.pvMark = make([]float64, a.C), make([]uint32, a.C)
	}
	st.pvGen++
	if st.pvGen == 0 { // wrapped: old stamps could collide
		clear(st.pvMark)
		st.pvGen = 1
	}
	pv, mark, gen := st.pv, st.pvMark, st.pvGen
	zs := st.zs[:0]
	for _, k := range cand {
		s := score(k)
		if !(s > 0) {
			s = math.SmallestNonzeroFloat64
		}
		z := cal.A[k]*math.Log(s) + cal.B[k]
		pv[k], mark[k] = 1/(1+math.Exp(-z)), gen // = cal.Apply(k, s)
		zs = append(zs, scored{k, z})
	}
	st.zs = zs
	if len(cand) < a.C {
		tau := math.Inf(-1)
		if calPrune && len(zs) > want && want > 0 {
			selectBest(zs, want)
			tau = zs[0].v
			for _, x := range zs[1:want] {
				tau = min(tau, x.v)
			}
		}
		lnNorm := math.Log(norm)
		u := math.Log1p(a.cal.phi0Max * max(rbF, 0))
		for k := 0; k < a.C; k++ {
			if mark[k] == gen {
				continue
			}
			ak := cal.A[k]
			ub := ak*(a.cal.lnAlpha[k]+lnNorm) + cal.B[k] + max(ak, 0)*u
			if ub >= tau-1e-9*(1+math.Abs(tau)) {
				cand = append(cand, int32(k))
			}
		}
	}
	return cand, func(k int32) float64 {
		if mark[k] != gen {
			pv[k], mark[k] = cal.Apply(int(k), score(k)), gen
		}
		return pv[k]
	}
}

// aggTerm is a descendant's contribution to an ancestor's aggregated path
// score: its score, or with a calibration ln(1 − p), so that aggOf gives the
// probability that the node or any of those descendants is assigned as if
// they were independent (a noisy-or), which stays a probability where a
// sum of probabilities would not. on says whether this call's scores are
// calibrated.
func (a *Annotator) aggTerm(s float64, on bool) float64 {
	if !on {
		return s
	}
	return math.Log1p(-min(s, 1-1e-12))
}

// aggOf combines a node's own score with its descendants' aggTerm sum.
func (a *Annotator) aggOf(own, agg float64, on bool) float64 {
	if !on {
		return own + agg
	}
	return 1 - (1-own)*math.Exp(agg)
}
