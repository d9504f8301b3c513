package annotate

import (
	"errors"
	"fmt"
	"math"

	"termgrove/model"
	"termgrove/terms"
)

// The discriminative word layer (model.WordLayer).
//
// A topic model explains a text's words; it does not learn which words
// tell one concept from another. On debtags (bench/quality.md) the
// structural concepts (implemented-in/c, interface/commandline,
// role/program) are what most records carry and few words express, and a
// TF-IDF + linear SVM finds them far better (micro F1@5 0.52 against 0.46)
// while the topic model, with its label prior, does better on rare
// concepts (macro F1@5 0.30 against 0.22). A calibrated model with a word
// layer ranks by
//
//	v_k = d_k + b·K_k + c·g_k + a·z_k − τ·ln(1 + n_k)
//
// d_k the SVM's decision value, K_k the vote of the record's most similar
// training records (model.Neighbours; b = 0 without one), g_k the
// log-probability of k under the layer's network (model.WordNet; c = 0
// without one), z_k the
// calibrated topic log-odds (calibrate.go), n_k the records people
// indexed with k, and reports σ(g·v_k + h). b, a, τ (TuneWordLayer) and
// (g, h) are learned on records people indexed; τ > 0 lowers the concepts
// people assign most and so spreads the suggestions over more concepts,
// which the macro average rewards. It is the layered stacking of Wolpert
// (1992), "Stacked generalization", with a grid over three weights
// instead of a learner.

// wordScores returns the ranking candidates (every concept) and the
// combined score, for a calibrated model with a word layer. score gives
// the raw score (share plus related boost); toks are text's tokens.
func (a *Annotator) wordScores(st *state, text string, toks []terms.Token, score func(int32) float64) ([]int32, func(int32) float64) {
	l, cal := a.m.WordLayer, a.m.Calibration
	var lead int
	st.wSeq, lead = knownWords(text, toks, len(a.m.Words), st.wSeq[:0])
	st.wIdx, st.wVal = l.Vector(st.wSeq, lead, len(a.m.Words), &st.wSc, st.wIdx, st.wVal)
	if len(st.wd) < a.C {
		st.wd = make([]float64, a.C)
	}
	d := st.wd[:a.C]
	l.Decision(st.wIdx, st.wVal, d)
	if nb := l.KNN; nb != nil && nb.Weight != 0 {
		if len(st.wK) < a.C {
			st.wK = make([]float64, a.C)
		}
		kv := st.wK[:a.C]
		nb.Vote(st.wIdx, st.wVal, len(a.m.Words)+l.Bigrams, &st.wNb, kv)
		for k, v := range kv {
			d[k] += nb.Weight * v
		}
	}
	if net := l.Net; net != nil && net.Weight != 0 {
		if len(st.wG) < a.C {
			st.wG = make([]float64, a.C)
		}
		g := st.wG[:a.C]
		net.LogProb(st.wIdx, st.wVal, &st.wNet, g)
		for k, v := range g {
			d[k] += net.Weight * v
		}
	}
	cand := st.cand[:0]
	for k := 0; k < a.C; k++ {
		cand = append(cand, int32(k))
	}
	st.cand = cand
	// Every concept is ranked, so each is mapped once, up front, into
	// calibrated's scratch (its stamps are not needed here).
	if len(st.pv) != a.C {
		st.pv, st.pvMark = make([]float64, a.C), make([]uint32, a.C)
	}
	pv := st.pv
	for k := range pv {
		s := max(score(int32(k)), l.ShareFloor)
		if !(s > 0) {
			s = math.SmallestNonzeroFloat64
		}
		z := cal.A[k]*math.Log(s) + cal.B[k]
		v := d[k] + l.TopicWeight*z - l.FreqWeight*float64(l.LnFreq[k])
		pv[k] = 1 / (1 + math.Exp(-(l.ScaleA*v + l.ScaleB)))
	}
	return cand, func(k int32) float64 { return pv[k] }
}

// TuneOptions tune TuneWordLayer; zero values mean the defaults.
type TuneOptions struct {
	CalibrateOptions
	// At is the cut-off whose micro plus macro F1 the weights maximise
	// (default 5, the cut-off of issue 7's targets).
	At int
	// MacroFloor, when above 0, changes what the weights maximise: micro
	// F1@At among the weights whose macro F1@At reaches MacroFloor, for a
	// library that states how well rare concepts must at least do and
	// wants the most right suggestions beyond that. When no weights reach
	// it, micro plus macro as without it.
	MacroFloor float64
}

// tunePoint is one setting's micro and macro F1@At on the tuning texts.
type tunePoint struct{ micro, macro float64 }

// better reports whether p beats q under floor (see
// TuneOptions.MacroFloor); equal within 1e-12 is not better, so the
// first of equal settings in grid order is kept.
func (p tunePoint) better(q tunePoint, floor float64) bool {
	if floor > 0 {
		pin, qin := p.macro >= floor, q.macro >= floor
		switch {
		case pin && !qin:
			return true
		case qin && !pin:
			return false
		case pin && qin:
			return p.micro > q.micro+1e-12
		}
	}
	return p.micro+p.macro > q.micro+q.macro+1e-12
}

// Grids TuneWordLayer searches: b (neighbour vote weight), c (network
// weight), a (topic
// weight), τ (frequency weight) and the share floor (0: none). A share of
// 1e-4 is about one token of a 50-token record in one of 200 fold-in
// samples. The vote's best weights on a validation slice of debtags' train
// split were 0.2–0.8 (bench/quality.md, sixth round), the network's
// 0.02–0.05 (seventh round).
var (
	tuneVote  = []float64{0, 0.15, 0.3, 0.5, 0.8}
	tuneNet   = []float64{0, 0.02, 0.05, 0.1, 0.2}
	tuneTopic = []float64{0, 0.02, 0.05, 0.1, 0.15, 0.2, 0.3, 0.4, 0.6, 0.8}
	tuneFreq  = []float64{0, 0.02, 0.04, 0.06, 0.08, 0.1, 0.12, 0.16}
	tuneFloor = []float64{0, 1e-4, 1e-3, 1e-2, 3e-2}
)

// TuneWordLayer learns how annotation combines m.WordLayer with the
// calibrated topic scores: the weights a and τ and the share floor that
// maximise micro plus macro F1@At over texts people indexed (DESIGN.md's
// definitions, macro over the concepts the texts carry; or micro F1@At
// with macro at least opt.MacroFloor), with the
// neighbour vote's weight b when both layers have a vote and the
// network's weight c when both have a network, then the scale (g, h) by
// logistic regression of "k is a subject" on v_k. held is a layer trained
// without the texts, whose decision values, vote and network the texts'
// are (a layer scores its own training texts too well, and finds them
// among its neighbours); m.WordLayer receives the weights, and loses its
// vote when b = 0 is chosen and its network when c = 0 is. m must be
// calibrated (m.Calibration, learned from raw scores).
func TuneWordLayer(m *model.Model, held *model.WordLayer, texts []LabeledText, opt TuneOptions) error {
	if m.Calibration == nil || m.WordLayer == nil || held == nil {
		return errors.New("annotate: tuning the word layer needs a calibrated model and two layers")
	}
	if opt.At <= 0 {
		opt.At = 5
	}
	if !(opt.MacroFloor >= 0 && opt.MacroFloor <= 1) {
		return fmt.Errorf("annotate: macro F1 floor %v: expected a value from 0 to 1", opt.MacroFloor)
	}
	opt.setDefaults()
	raw := *m
	raw.Calibration, raw.WordLayer = nil, nil
	a, err := New(&raw)
	if err != nil {
		return err
	}
	C := m.C
	cal := m.Calibration
	// z[i*C+k] calibrated topic log-odds (NaN: not ranked), d the held-out
	// layer's decision values, kv its neighbour votes, y the subjects.
	vote := m.WordLayer.KNN != nil && held.KNN != nil
	net := m.WordLayer.Net != nil && held.Net != nil
	x := make([]float64, len(texts)*C)
	d := make([]float64, len(texts)*C)
	var kv, gv []float64
	if vote {
		kv = make([]float64, len(texts)*C)
	}
	if net {
		gv = make([]float64, len(texts)*C)
	}
	y := make([]bool, len(texts)*C)
	use := make([]bool, len(texts))
	errs := make([]error, len(texts))
	each(len(texts), opt.Workers, func() func(int) {
		var toks []terms.Token
		var seq, ids []int32
		var val []float32
		var sc model.VectorScratch
		var nsc model.NeighbourScratch
		var gsc model.NetScratch
		return func(i int) {
			t := &texts[i]
			errs[i] = a.rawScores(t, opt.CalibrateOptions, x[i*C:(i+1)*C], y[i*C:(i+1)*C], &use[i])
			if errs[i] != nil || !use[i] {
				return
			}
			toks = a.analyze(t.Text, t.Language, toks[:0])
			var lead int
			seq, lead = knownWords(t.Text, toks, len(m.Words), seq[:0])
			ids, val = held.Vector(seq, lead, len(m.Words), &sc, ids, val)
			held.Decision(ids, val, d[i*C:(i+1)*C])
			if vote {
				held.KNN.Vote(ids, val, len(m.Words)+held.Bigrams, &nsc, kv[i*C:(i+1)*C])
			}
			if net {
				held.Net.LogProb(ids, val, &gsc, gv[i*C:(i+1)*C])
			}
		}
	})
	var rows []int
	for i, err := range errs {
		if err != nil {
			return fmt.Errorf("annotate: tuning text %s: %w", texts[i].ID, err)
		}
		if use[i] {
			rows = append(rows, i)
		}
	}
	if len(rows) == 0 {
		return ErrNoCalibrationData
	}
	// x holds ln s (NaN: s = 0); z the calibrated log-odds at the floor
	// being tried, of the share wordScores takes: max(s, floor), and the
	// smallest float above 0 for 0.
	z := make([]float64, len(x))
	setFloor := func(floor float64) {
		lf := math.Log(max(floor, math.SmallestNonzeroFloat64))
		for i, lx := range x {
			if math.IsNaN(lx) || lx < lf {
				lx = lf
			}
			k := i % C
			z[i] = cal.A[k]*lx + cal.B[k]
		}
	}
	l := m.WordLayer
	value := func(i, k int, tb, tc, ta, tf float64) float64 {
		v := d[i*C+k] - tf*float64(l.LnFreq[k])
		if tb != 0 {
			v += tb * kv[i*C+k]
		}
		if tc != 0 {
			v += tc * gv[i*C+k]
		}
		if ta != 0 {
			v += ta * z[i*C+k]
		}
		return v
	}
	votes, nets := tuneVote, tuneNet
	if !vote {
		votes = []float64{0}
	}
	if !net {
		nets = []float64{0}
	}
	best := tunePoint{math.Inf(-1), math.Inf(-1)}
	bestB, bestC, bestA, bestF, bestFloor := 0.0, 0.0, 0.0, 0.0, 0.0
	for _, floor := range tuneFloor {
		setFloor(floor)
		for _, ta := range tuneTopic {
			if ta == 0 && floor > 0 {
				continue // the floor only acts through a
			}
			for _, tb := range votes {
				for _, tc := range nets {
					for _, tf := range tuneFreq {
						var f tunePoint
						f.micro, f.macro = f1At(rows, C, opt.At, y, func(i, k int) float64 { return value(i, k, tb, tc, ta, tf) })
						if f.better(best, opt.MacroFloor) {
							best, bestB, bestC, bestA, bestF, bestFloor = f, tb, tc, ta, tf, floor
						}
					}
				}
			}
		}
	}
	setFloor(bestFloor)
	var p pairs
	for _, i := range rows {
		for k := 0; k < C; k++ {
			if v := value(i, k, bestB, bestC, bestA, bestF); !math.IsInf(v, 0) {
				p.add(v, y[i*C+k])
			}
		}
	}
	l.TopicWeight, l.FreqWeight, l.ShareFloor = bestA, bestF, bestFloor
	if l.KNN != nil {
		l.KNN.Weight = bestB
		if bestB == 0 {
			l.KNN = nil // no weight: the file need not carry the vote
		}
	}
	if l.Net != nil {
		l.Net.Weight = bestC
		if bestC == 0 {
			l.Net = nil
		}
	}
	l.Version = model.WordLayerVersion
	l.ScaleA, l.ScaleB = p.fit(0, 1, 0)
	l.Tuned, l.TunedF1 = len(rows), best.micro+best.macro
	l.TunedMicro, l.TunedMacro, l.TunedMacroFloor = best.micro, best.macro, opt.MacroFloor
	return nil
}

// knownWords appends to seq the ids of toks the model knows (below W; as
// infer, unknown words left out) in text order, and returns how many of
// them come from text's lead paragraph (model.LeadEnd).
func knownWords(text string, toks []terms.Token, W int, seq []int32) ([]int32, int) {
	end, lead := model.LeadEnd(text), 0
	for _, tk := range toks {
		if tk.ID >= 0 && int(tk.ID) < W {
			seq = append(seq, tk.ID)
			if tk.Start < end {
				lead++
			}
		}
	}
	return seq, lead
}

// analyze runs the model's analysis of text in language lang as Annotate
// does.
func (a *Annotator) analyze(text, lang string, dst []terms.Token) []terms.Token {
	if la, ok := any(a.an).(langAnalyzer); ok && lang != "" {
		dst, _ = la.AnalyzeLang(text, lang, dst, false)
		return dst
	}
	dst, _ = a.an.Analyze(text, dst, false)
	return dst
}

// f1At is micro and macro F1@at (DESIGN.md "Scoring definitions", macro
// over the concepts some row carries) of ranking each row's concepts by v.
func f1At(rows []int, C, at int, y []bool, v func(i, k int) float64) (micro, macro float64) {
	tp := make([]int, C)
	pp := make([]int, C)
	gp := make([]int, C)
	var tpAll, gold int
	r := make([]scored, C)
	for _, i := range rows {
		for k := 0; k < C; k++ {
			r[k] = scored{int32(k), v(i, k)}
			if y[i*C+k] {
				gp[k]++
				gold++
			}
		}
		n := min(at, C)
		if n < C {
			selectBest(r, n)
		}
		for _, s := range r[:n] {
			if math.IsInf(s.v, -1) {
				continue
			}
			pp[s.k]++
			if y[i*C+int(s.k)] {
				tp[s.k]++
				tpAll++
			}
		}
	}
	P := float64(tpAll) / float64(at*len(rows))
	R := 0.0
	if gold > 0 {
		R = float64(tpAll) / float64(gold)
	}
	if P+R > 0 {
		micro = 2 * P * R / (P + R)
	}
	n := 0
	for k := 0; k < C; k++ {
		if gp[k] > 0 {
			macro += 2 * float64(tp[k]) / float64(pp[k]+gp[k])
			n++
		}
	}
	if n > 0 {
		macro /= float64(n)
	}
	return micro, macro
}
