package report

import (
	"math"
	"sort"
)

// Ks are the cut-offs every score is reported at.
var Ks = []int{1, 3, 5, 10}

// Case is one scored record: the concepts termgrove ranked (best first) and
// the concepts people assigned. Concepts are dense indices (for example into
// a Scheme); Ancestors of a concept are looked up through Metrics.Ancestors.
type Case struct {
	ID        string
	Predicted []int
	Scores    []float64 // Predicted's scores, same order (used for thresholds)
	Gold      []int
}

// Figure is one metric at one k, micro- and macro-averaged.
// NDCG and the hierarchical measures are averaged over records and have the
// same value in both fields.
type Figure struct {
	Micro float64 `json:"micro"`
	Macro float64 `json:"macro"`
}

// ConceptFigure is the per-concept precision, recall and F1 at one k.
type ConceptFigure struct {
	Concept   int     `json:"-"`
	IRI       string  `json:"iri"`
	Label     string  `json:"label"`
	Gold      int     `json:"gold"`      // GP_l: records people indexed with it
	Predicted int     `json:"predicted"` // PP_l
	Correct   int     `json:"correct"`   // TP_l
	Precision float64 `json:"precision"`
	Recall    float64 `json:"recall"`
	F1        float64 `json:"f1"`
}

// Evaluate computes, for every k in ks, the measures of DESIGN.md "Scoring
// definitions": precision, recall, f1 (micro and macro), ndcg (binary
// gains) and hprecision, hrecall, hf1 (both sets extended with ancestors,
// Kiritchenko, Matwin, Nock & Famili 2006). ancestors may be nil, which
// leaves the hierarchical measures equal to the flat micro ones.
// Keys are "<name>@<k>".
func Evaluate(cases []Case, ks []int, ancestors func(int) []int) map[string]Figure {
	out := make(map[string]Figure, 7*len(ks))
	for _, k := range ks {
		p, r, f := flat(cases, k)
		out[key("precision", k)] = p
		out[key("recall", k)] = r
		out[key("f1", k)] = f
		n := ndcg(cases, k)
		out[key("ndcg", k)] = Figure{n, n}
		hp, hr, hf := hierarchical(cases, k, ancestors)
		out[key("hprecision", k)] = Figure{hp, hp}
		out[key("hrecall", k)] = Figure{hr, hr}
		out[key("hf1", k)] = Figure{hf, hf}
	}
	return out
}

func key(name string, k int) string { return name + "@" + itoa(k) }

func itoa(k int) string {
	if k < 10 {
		return string(rune('0' + k))
	}
	return itoa(k/10) + string(rune('0'+k%10))
}

func top(pred []int, k int) []int {
	if k < 0 {
		return nil
	}
	if len(pred) > k {
		return pred[:k]
	}
	return pred
}

func contains(s []int, x int) bool {
	for _, y := range s {
		if y == x {
			return true
		}
	}
	return false
}

// flat returns micro and macro P, R, F1 at k. Missing slots (fewer than k
// predictions) count as wrong in micro precision.
func flat(cases []Case, k int) (p, r, f Figure) {
	var tp, gold int
	tpL := map[int]int{}
	ppL := map[int]int{}
	gpL := map[int]int{}
	for _, c := range cases {
		t := top(c.Predicted, k)
		for _, l := range t {
			ppL[l]++
			if contains(c.Gold, l) {
				tp++
				tpL[l]++
			}
		}
		for _, l := range c.Gold {
			gpL[l]++
		}
		gold += len(c.Gold)
	}
	if len(cases) > 0 {
		p.Micro = float64(tp) / float64(k*len(cases))
	}
	if gold > 0 {
		r.Micro = float64(tp) / float64(gold)
	}
	f.Micro = harmonic(p.Micro, r.Micro)
	if len(gpL) == 0 {
		return
	}
	for l, gp := range gpL {
		if pp := ppL[l]; pp > 0 {
			p.Macro += float64(tpL[l]) / float64(pp)
		}
		r.Macro += float64(tpL[l]) / float64(gp)
		f.Macro += 2 * float64(tpL[l]) / float64(ppL[l]+gp)
	}
	n := float64(len(gpL))
	p.Macro /= n
	r.Macro /= n
	f.Macro /= n
	return
}

// PerConcept returns the per-concept figures at k for every concept that
// was either assigned by people or predicted, most-used first.
func PerConcept(cases []Case, k int) []ConceptFigure {
	m := map[int]*ConceptFigure{}
	get := func(l int) *ConceptFigure {
		c := m[l]
		if c == nil {
			c = &ConceptFigure{Concept: l}
			m[l] = c
		}
		return c
	}
	for _, c := range cases {
		for _, l := range top(c.Predicted, k) {
			cf := get(l)
			cf.Predicted++
			if contains(c.Gold, l) {
				cf.Correct++
			}
		}
		for _, l := range c.Gold {
			get(l).Gold++
		}
	}
	out := make([]ConceptFigure, 0, len(m))
	for _, c := range m {
		if c.Predicted > 0 {
			c.Precision = float64(c.Correct) / float64(c.Predicted)
		}
		if c.Gold > 0 {
			c.Recall = float64(c.Correct) / float64(c.Gold)
		}
		if c.Predicted+c.Gold > 0 {
			c.F1 = 2 * float64(c.Correct) / float64(c.Predicted+c.Gold)
		}
		out = append(out, *c)
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].Gold != out[j].Gold {
			return out[i].Gold > out[j].Gold
		}
		return out[i].Concept < out[j].Concept
	})
	return out
}

// ndcg averages per-record NDCG@k with binary gains:
// DCG = Σ_{i<k} rel_i / log2(i+2), IDCG the same for a perfect ranking.
func ndcg(cases []Case, k int) float64 {
	if len(cases) == 0 {
		return 0
	}
	var sum float64
	for _, c := range cases {
		var dcg, idcg float64
		for i, l := range top(c.Predicted, k) {
			if contains(c.Gold, l) {
				dcg += 1 / math.Log2(float64(i+2))
			}
		}
		for i := 0; i < len(c.Gold) && i < k; i++ {
			idcg += 1 / math.Log2(float64(i+2))
		}
		if idcg > 0 {
			sum += dcg / idcg
		}
	}
	return sum / float64(len(cases))
}

// hierarchical returns hP, hR, hF (Kiritchenko et al. 2006, §3):
// hP = Σ_d |Ĉ_d ∩ Ĉ'_d| / Σ_d |Ĉ'_d|, hR = Σ_d |Ĉ_d ∩ Ĉ'_d| / Σ_d |Ĉ_d|,
// where Ĉ is the gold set and Ĉ' the predicted set, each extended with all
// ancestors of its members.
func hierarchical(cases []Case, k int, ancestors func(int) []int) (hp, hr, hf float64) {
	var inter, npred, ngold int
	for _, c := range cases {
		pred := extend(top(c.Predicted, k), ancestors)
		gold := extend(c.Gold, ancestors)
		for l := range pred {
			if gold[l] {
				inter++
			}
		}
		npred += len(pred)
		ngold += len(gold)
	}
	if npred > 0 {
		hp = float64(inter) / float64(npred)
	}
	if ngold > 0 {
		hr = float64(inter) / float64(ngold)
	}
	return hp, hr, harmonic(hp, hr)
}

func extend(set []int, ancestors func(int) []int) map[int]bool {
	out := make(map[int]bool, 2*len(set))
	for _, l := range set {
		out[l] = true
		if ancestors != nil {
			for _, a := range ancestors(l) {
				out[a] = true
			}
		}
	}
	return out
}

func harmonic(p, r float64) float64 {
	if p+r == 0 {
		return 0
	}
	return 2 * p * r / (p + r)
}

// BestThreshold returns the min-score cut that maximises micro F1 over all
// predictions (no top-k cut), with that F1: the advice a library needs before
// it lets suggestions near its catalogue.
func BestThreshold(cases []Case) (threshold, f1 float64) {
	type pt struct {
		s    float64
		good bool
	}
	var pts []pt
	gold := 0
	for _, c := range cases {
		gold += len(c.Gold)
		for i, l := range c.Predicted {
			s := 0.0
			if i < len(c.Scores) {
				s = c.Scores[i]
			}
			pts = append(pts, pt{s, contains(c.Gold, l)})
		}
	}
	if gold == 0 || len(pts) == 0 {
		return 0, 0
	}
	sort.Slice(pts, func(i, j int) bool { return pts[i].s > pts[j].s })
	tp := 0
	for i, p := range pts {
		if p.good {
			tp++
		}
		// Only cut between distinct scores: a threshold keeps all ties.
		if i+1 < len(pts) && pts[i+1].s == p.s {
			continue
		}
		f := harmonic(float64(tp)/float64(i+1), float64(tp)/float64(gold))
		if f > f1 {
			f1, threshold = f, p.s
		}
	}
	return threshold, f1
}
