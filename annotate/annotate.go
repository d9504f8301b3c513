// Package annotate infers the concepts of a new text from a fitted model by
// fold-in Gibbs sampling with the topic-word tables fixed.
//
// CONTRACT (api, report, cmd code against these names; keep them):
//
//	a, err := annotate.New(m)
//	res, err := a.Annotate("rec-1", text, annotate.Options{Top: 10})
//
// # Sampler
//
// With φ fixed, token i of word w takes topic k with probability
//
//	p(z_i = k | z_¬i) ∝ (n_dk + α_k) · φ_kw,   φ_kw = φ⁰_k + s_kw,
//
// where φ⁰_k = β0/(n_k + B_k) is topic k's smoothing floor and
// s_kw = (n_kw + λ·π_kw)/(n_k + B_k) is non-zero only for the few topics
// that used w or name it in a label. The product splits into
//
//	α_k·φ_kw   the same for every occurrence of w: its total A_w is cached;
//	           α_k·φ⁰_k is one alias table per model (Walker 1977, Vose 1991),
//	           α_k·s_kw one small alias table per word;
//	n_dk·s_kw  the record's topics that hold w (a short list per word type);
//	n_dk·φ⁰_k  the record's smoothing bucket, whose total is kept up to date
//	           (after SparseLDA, Yao, Mimno & McCallum 2009),
//
// so a draw costs about O(record topics holding w), whatever K is
// (TestConditionalEqualsDense and TestDrawFrequencies check it against the
// dense formula). Burn-in sweeps, if any, are followed by sampling sweeps
// (defaults 0 and 2 after the start from expected counts, 3 and 6 after the
// start from each word's own posterior; see Start). Scores are the
// record's topic proportions averaged over the sampling sweeps,
//
//	θ_k = (mean_s Σ_i p(z_i = k | z_¬i) + α_k) / (N + Σ_k α_k),
//
// the usual estimate (n_dk + α_k)/(N + Σα) (Griffiths & Steyvers 2004) with
// each token's count replaced by its conditional probability
// (Rao–Blackwellised, as for the words below; see theta; after the start
// from expected counts, the start's distributions p(z_i = k) = v²_wk/Z²_w
// count as one more sample in the mean), so concept scores plus
// the uncovered share (free topics) sum to 1 — unless the model holds
// related-concept rows (model.Model.Related, from records people indexed):
// then each concept also gets γ·θ_j·L_jk from the concepts j it is often
// assigned beside (see relatedWeight), and scores rank rather than sum to
// 1. A calibrated model (model.Model.Calibration, calibrate.go) then maps
// each concept's score to the probability that a person indexing the text
// assigns it, and ranks by that. For the words, each token's
// conditional (not just its draw) is accumulated (Rao–Blackwellised) per
// word type: occurrences of one word in one text are exchangeable, so they
// share a posterior. Only the smoothing bucket's split over topics is taken
// per sweep rather than per token; the posterior still sums to 1.
//
// # Start
//
// Where a record's topic lists are regrouped (modest K, see maxList) and no
// known subjects change α, each token's first topic is drawn given the
// others' expected counts after two fold-in steps of the collapsed
// variational update CVB0 (Asuncion, Welling, Smyth & Teh 2009, "On
// smoothing and inference for topic models", UAI), from each word's own
// posterior, on the words' topic lists:
//
//	E⁰_k = Σ_w n_w·α_k·s_kw/A_w
//	v¹_wk = (E⁰_k − α_k·s_kw/A_w + α_k)·φ_kw,  Z¹_w = q + Σ_k v¹_wk,  E¹_k = Σ_w n_w·v¹_wk/Z¹_w
//	v²_wk = (E¹_k − v¹_wk/Z¹_w + α_k)·φ_kw,    Z²_w = q + Σ_k v²_wk
//
// (the token's own share taken out; the rest of Z², q, is drawn as α_k·φ⁰_k
// over all topics). The tokens start where the record's words agree, not
// spread over each word's own topics, so that sampling sweeps can follow
// at once: on three sets of debtags test records 0 + 3 sweeps rank at
// least as well as 3 + 6 from the own posterior (bench/annotate.md).
// The start's own distributions are a fold-in estimate of the same
// conditionals the sweeps average, already computed, so they are counted
// as one sample beside the sweeps' (theta): with them 0 + 2 sweeps rank
// better than 0 + 3 without on each of four sets of debtags test records,
// by 0.003 to 0.006 of P@5 (20 chains a record; bench/annotate.md,
// "annot7"), at two thirds of the sweeps. Word attributions average the
// sweeps only.
// Otherwise (the long lists of a 117k-concept model, known subjects) each
// token starts from its word's own posterior p(k | w) ∝ (α_k + extra α)·φ_kw,
// all drawn before any is added. Neither start changes what the sweeps
// sample from; TestStartExpected checks the draws against the formula.
//
// Memory per call grows with the record's distinct words times the topics
// that hold them (or, for large vocabularies, that the sampler visits), so
// texts are limited by Options.MaxBytes (default 1 MiB).
//
// The random seed is a hash of the model's content checksum (its tables,
// not its provenance), the text and the options (recordSeed), so the same
// model and text always give the same result, whatever runs beside them,
// and so does a refit that learned the same tables at another date or by
// another build.
package annotate

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
	"sync"

	"termgrove/model"
	"termgrove/terms"
)

// SubjectMode says how known subjects in a request are used.
type SubjectMode int

const (
	// Restrict samples only from the known subjects plus the free topics.
	Restrict SubjectMode = iota
	// Boost multiplies the known subjects' α by a factor.
	Boost
)

// Defaults for zero Options fields.
const (
	DefaultTop      = 10
	DefaultMaxBytes = 1 << 20 // 1 MiB
	// DefaultBurnIn and DefaultSamples: after the start from each word's
	// own posterior, 3 burn-in and 6 sampling sweeps. On three sets of
	// 1,500 debtags test records (bench/annotate.md, TestSweepsQuality,
	// 20–40 chains per record) every cheaper setting tried ranks worse on
	// at least one set by more than the chains' noise: 2 + 6 by 0.0008 of
	// P@5 on the third set (about 2 standard errors), 1 + 6 and 0 + 7 by
	// 0.002; 0 + 8 ranks better but pulls word attributions towards each
	// word's own posterior (TestWordsAndSupport: p 0.89 for a word two
	// bars share).
	DefaultBurnIn  = 3
	DefaultSamples = 6
	// ExpectedBurnIn and ExpectedSamples: after the start from the others'
	// expected counts (startExpected; records whose words' lists are
	// regrouped, without known subjects), no burn-in and 2 sampling
	// sweeps, the start's distributions counted as a third sample for the
	// scores. On four sets of debtags test records, 20 chains per record,
	// 0 + 2 ranks 0.003–0.006 of P@5 better than 0 + 3 without the start's
	// sample (the default before), and within 0.002 of 0 + 1, 0 + 3 and
	// 0 + 4 with it; on the whole debtags test split (termgrove score
	// --samples S, one chain a record) micro/macro F1@5 is 0.443–0.447 /
	// 0.294–0.295 over two seedings against 0.438/0.285 before. Two sweeps
	// rather than one because word attributions average the sweeps alone:
	// on TestWordsAndSupport's record, mean p of a word's concept over 300
	// chains 0.927 after one sweep, 0.950 after two, 0.960 after three
	// (bench/annotate.md, "annot7").
	ExpectedBurnIn  = 0
	ExpectedSamples = 2
	DefaultBoost    = 20.0
	// pathPool: aggregated path scores count the descendants among this many
	// best-ranked concepts (or Top, when larger).
	pathPool = 100
	// maxSupport is the most supporting terms listed per concept; terms
	// carrying less than minSupport of a concept's mass are left out.
	maxSupport = 10
	minSupport = 0.01
	// minSupportPost is the least posterior p(z = k) a term's occurrences
	// must give concept k to be listed as its support: a word the sampler
	// spreads thinly over many concepts supports none of them.
	minSupportPost = 0.1
)

// relatedWeight is γ in s'_k = s_k + γ·Σ_j s_j·L_jk, where L_jk is the
// lift of concept k among the records people indexed with j
// (model.Model.Related). Whole debtags test split (5,926 records, 200
// fold-in samples), micro/macro F1@5 for γ = 0, 0.1, 0.2, 0.3, 0.5
// (bench/quality.md):
//
//	20 free topics: 0.374/0.282 0.435/0.293 0.449/0.295 0.456/0.296 0.457/0.287
//	no free topics: 0.408/0.287 0.443/0.291 0.453/0.256 0.460/0.251
//
// With the default 20 free topics 0.3 is best on both.
const relatedWeight = 0.3

// seedSalt is hashed into every record's seed: tests set it
// to run other chains on the same texts (TestSweepsQuality's spread).
var seedSalt uint64

// ownStart, set by tests, starts every record from its words' own
// posteriors (TestSweepsQuality's reference).
var ownStart bool

// noStartSample, set by tests, leaves the start's distributions out of
// the scores (the estimator before annot7), for TestSweepsQuality.
var noStartSample bool

// ErrTooLarge is returned for a text longer than Options.MaxBytes.
var ErrTooLarge = errors.New("text too large")

// Options for one annotation; zero values mean defaults.
type Options struct {
	Top          int     // concepts returned (default 10; negative: all)
	MinScore     float64 // drop concepts scoring below
	Subjects     []string
	SubjectMode  SubjectMode
	IncludeWords bool
	// ConceptsOnly returns the ranked concepts with their scores and the
	// uncovered share only: no paths, no supporting terms (and no words,
	// whatever IncludeWords says). The concepts and scores are those of
	// the full result; this is the job of a topic-proportions call such
	// as gensim's get_document_topics.
	ConceptsOnly bool
	Language     string // BCP 47 tag of the text; "" = the model's main language

	// MaxBytes refuses longer texts with ErrTooLarge (default 1 MiB;
	// negative: no limit). Memory grows with distinct words times topics met.
	MaxBytes int
	// BurnIn and Samples are the sweeps discarded and averaged: defaults
	// 0 and 3 after the start from expected counts, 3 and 6 after the
	// start from each word's own posterior (DefaultBurnIn, ExpectedBurnIn).
	// Negative BurnIn: none.
	BurnIn, Samples int
	// BoostFactor multiplies known subjects' α in Boost mode (default 20;
	// values below 1 count as 1).
	BoostFactor float64
	// Uncalibrated leaves a calibrated model's scores as shares of the
	// text (plus the related boost) instead of probabilities: for measuring
	// how much of a text a concept takes (the gap report).
	Uncalibrated bool
}

// Result is the annotation of one text. JSON names are part of the CLI format.
type Result struct {
	ID        string    `json:"id"`
	Concepts  []Concept `json:"concepts"`
	Uncovered float64   `json:"uncovered"`
	Words     []Word    `json:"words,omitempty"`
	Tokens    int       `json:"tokens"`
	Language  string    `json:"language,omitempty"`
	Fallback  bool      `json:"fallback,omitempty"` // language-neutral analysis used
	Invalid   int       `json:"invalid_utf8,omitempty"`
	// Unknown counts tokens whose term the model has never seen; they are
	// left out of Tokens, Words and the scores.
	Unknown int `json:"unknown,omitempty"`
	// UnknownSubjects are known-subject IRIs that are not concepts of the model.
	UnknownSubjects []string `json:"unknown_subjects,omitempty"`
}

// Concept is one ranked concept with its hierarchy path and supporting terms.
type Concept struct {
	IRI     string     `json:"iri"`
	Label   string     `json:"label"`
	Score   float64    `json:"score"`
	Path    []PathNode `json:"path"`
	Support []Support  `json:"support,omitempty"`
}

// PathNode is one concept on the path from a top concept down.
type PathNode struct {
	IRI   string  `json:"iri"`
	Label string  `json:"label"`
	Score float64 `json:"score"`
}

// Support is a term supporting a concept with its weight: the share of the
// concept's score that the term's occurrences carry.
type Support struct {
	Term   string  `json:"term"`
	Weight float64 `json:"weight"`
}

// Word is one analysed occurrence with the concept it most supports.
// Concept is "" when the free topics together take more of the word than any
// one concept; P is then their summed probability.
type Word struct {
	Start   int     `json:"start"`
	End     int     `json:"end"`
	Text    string  `json:"text"`
	Term    string  `json:"term"`
	Concept string  `json:"concept"` // IRI, or "" when a free topic wins
	P       float64 `json:"p"`
}

// Annotator annotates texts with one model. It is safe for concurrent use.
type Annotator struct {
	m                   *model.Model
	an                  *terms.Analyzer
	langs               map[string]bool // the model's languages, lower-case, with their base tags
	seedKey             [2]uint64       // recordSeed's, from the model's content checksum
	K, C                int
	alpha               []float64
	phi0                []float64 // φ⁰_k
	invDen              []float64 // 1/(n_k + B_k)
	dense               alias     // over α_k·φ⁰_k
	q                   float64   // Σ_k α_k·φ⁰_k
	qFree               float64   // Σ_{k ≥ C} α_k·φ⁰_k
	order               []int32   // topics by α_k·φ⁰_k, largest first
	corder              []int32   // concepts by α_k, largest first
	sumAlpha, freeAlpha float64   // Σ_k α_k, Σ_{k ≥ C} α_k
	labels              []string  // concept prefLabels in the main language
	dep                 []bool    // C: deprecated concepts (read at New: the ranking asks often)

	// Per word w, entries ent[off[w]:off[w+1]] list the topics with
	// s_kw > 0, sorted by topic, e.g. k 3 and 17, s 0.01 and 0.2 for a word
	// that concept 3 names in a label and topic 17 used, and hold the
	// word's alias table over α_k·s_kw (with entP): a record's regrouping
	// reads the word's entries, and its alias draws then find them in the
	// cache.
	off   []int32
	ent   []wEntry
	entP  []float64 // ent's alias keep-probabilities
	best  []int32   // argmax over concepts k of α_k·φ_kw (-1: no concepts)
	bestV []float64
	den   []float64 // n_k + B_k
	// wh[w] holds what a record reads of word w, on one half cache line
	// (off, aw and awF in three arrays were three misses a word).
	wh []wordHead

	// maxList: a record whose words' topic lists average at most this many
	// entries has them regrouped by topic up front (group); longer lists
	// (a large vocabulary whose common words sit in thousands of topics)
	// are not read whole: each topic the record visits has its row merged
	// with the record's words instead (fillRow).
	maxList int

	pool sync.Pool // *state

	cal calTables // calibrate.go

	// The related rows turned round (bestRelated): the concepts j whose
	// rows hold concept k are inJ[inOff[k]:inOff[k+1]], by j, with L_jk
	// in inL, e.g. k 5 reached from j 2 and 9 with lifts 0.4 and 0.1;
	// inSum[k] = Σ_j L_jk bounds what the candidates left out of the
	// exact sums can add to k.
	inOff []int32
	inJ   []int32
	inL   []float64
	inSum []float64
}

// New prepares an annotator for m: the alias tables and per-word topic lists.
// m must not change afterwards.
func New(m *model.Model) (*Annotator, error) {
	if err := m.Validate(); err != nil {
		return nil, fmt.Errorf("annotate: %w", err)
	}
	an, err := m.NewAnalyzer()
	if err != nil {
		return nil, fmt.Errorf("annotate: %w", err)
	}
	sum, err := m.ContentSum()
	if err != nil {
		return nil, fmt.Errorf("annotate: %w", err)
	}
	K, C, W := m.K(), m.C, len(m.Words)
	a := &Annotator{m: m, an: an, seedKey: seedKey(sum), K: K, C: C, alpha: m.Alpha,
		phi0: make([]float64, K), invDen: make([]float64, K), langs: map[string]bool{}, maxList: defaultMaxList}
	for _, l := range m.Analyzer.Languages {
		l = strings.ToLower(l)
		a.langs[l] = true
		a.langs[baseTag(l)] = true
	}
	if len(m.Analyzer.Languages) == 0 {
		a.langs["en"] = true
	}
	den := make([]float64, K)
	a.den = den
	dw := make([]float64, K)
	for k := 0; k < K; k++ {
		den[k] = float64(m.Totals[k]) + m.BetaSum(k)
		a.phi0[k] = m.Beta0 / den[k]
		a.invDen[k] = 1 / den[k]
		dw[k] = a.alpha[k] * a.phi0[k]
		a.q += dw[k]
		if k >= C {
			a.qFree += dw[k]
		}
	}
	a.dense = newAlias(dw, nil, nil)
	a.order = make([]int32, K)
	for k := range a.order {
		a.order[k] = int32(k)
	}
	sort.SliceStable(a.order, func(i, j int) bool { return dw[a.order[i]] > dw[a.order[j]] })
	a.cal = newCalTables(m, a.phi0)
	if len(m.Related) == C {
		a.invertRelated()
	}
	a.corder = make([]int32, C)
	for k := range a.corder {
		a.corder[k] = int32(k)
	}
	sort.SliceStable(a.corder, func(i, j int) bool { return a.alpha[a.corder[i]] > a.alpha[a.corder[j]] })
	for k, al := range a.alpha {
		a.sumAlpha += al
		if k >= C {
			a.freeAlpha += al
		}
	}
	lang := ""
	if len(m.Analyzer.Languages) > 0 {
		lang = strings.ToLower(m.Analyzer.Languages[0])
	}
	a.labels = make([]string, C)
	a.dep = make([]bool, C)
	for k := 0; k < C; k++ {
		a.labels[k] = m.Scheme.Concepts[k].PrefLabel(lang)
		a.dep[k] = m.Scheme.Concepts[k].Deprecated
	}

	// Invert the topic rows into per-word lists: count, then fill.
	a.off = make([]int32, W+1)
	for k := 0; k < K; k++ {
		for _, e := range m.Counts[k] {
			a.off[e.Word+1]++
		}
	}
	// Prior words without counts add entries too.
	for k := range m.Prior {
		for _, e := range m.Prior[k] {
			if e.Weight > 0 && m.Count(k, int(e.Word)) == 0 {
				a.off[e.Word+1]++
			}
		}
	}
	var total int64
	for w := 1; w <= W; w++ {
		total += int64(a.off[w])
		if total > math.MaxInt32 {
			return nil, errors.New("annotate: model too large (over 2^31 non-zero entries)")
		}
		a.off[w] = int32(total)
	}
	a.ent = make([]wEntry, total)
	a.entP = make([]float64, total)
	fill := slices.Clone(a.off[:W])
	for k := 0; k < K; k++ {
		var pr []model.WordWeight
		if k < len(m.Prior) {
			pr = m.Prior[k]
		}
		cr := m.Counts[k]
		put := func(w int32, num float64) {
			i := fill[w]
			fill[w]++
			a.ent[i].k = int32(k)
			a.ent[i].s = num / den[k]
		}
		i, j := 0, 0
		for i < len(cr) || j < len(pr) {
			switch {
			case j >= len(pr) || (i < len(cr) && cr[i].Word < pr[j].Word):
				put(cr[i].Word, float64(cr[i].Count))
				i++
			case i >= len(cr) || pr[j].Word < cr[i].Word:
				if pr[j].Weight > 0 {
					put(pr[j].Word, m.Lambda*pr[j].Weight)
				}
				j++
			default:
				put(cr[i].Word, float64(cr[i].Count)+m.Lambda*pr[j].Weight)
				i++
				j++
			}
		}
	}
	// Topics were visited in increasing order, so each list is sorted.
	a.wh = make([]wordHead, W)
	a.best = make([]int32, W)
	a.bestV = make([]float64, W)
	var buf, prob []float64
	var al []int32
	for w := 0; w < W; w++ {
		lo, hi := a.off[w], a.off[w+1]
		buf = buf[:0]
		sumW, free := 0.0, a.qFree
		bk, bv := int32(-1), -1.0
		for i := lo; i < hi; i++ {
			k := a.ent[i].k
			v := a.alpha[k] * a.ent[i].s
			buf = append(buf, v)
			sumW += v
			if k >= int32(C) {
				free += v
			}
			if f := v + dw[k]; k < int32(C) && (f > bv || (f == bv && k < bk)) {
				bk, bv = k, f
			}
		}
		// Concepts off the list weigh α_k·φ⁰_k: the best of them is the
		// first in order that is not on the list.
		for _, k := range a.order {
			if k >= int32(C) {
				continue
			}
			if !a.inList(w, k) {
				if f := dw[k]; f > bv || (f == bv && k < bk) {
					bk, bv = k, f
				}
				break
			}
		}
		n := int(hi - lo)
		prob, al = slices.Grow(prob[:0], n)[:n], slices.Grow(al[:0], n)[:n]
		t := newAlias(buf, prob, al)
		for i := range t.prob {
			e := &a.ent[lo+int32(i)]
			a.entP[lo+int32(i)], e.alt = t.prob[i], a.ent[lo+t.alias[i]].k
		}
		c := lo // the concepts' entries come first: the lists are sorted by topic
		for c < hi && a.ent[c].k < int32(C) {
			c++
		}
		a.wh[w] = wordHead{lo: lo, hi: hi, hiC: c, aw: a.q + sumW, awF: free}
		a.best[w], a.bestV[w] = bk, bv
	}
	return a, nil
}

// wordHead is word w's list ent[lo:hi], whose entries for concepts are
// ent[lo:hiC], with A_w = q + Σ_k α_k·s_kw and Σ_{k ≥ C} α_k·φ_kw (aw
// and awF).
type wordHead struct {
	lo, hi, hiC, _ int32
	aw, awF        float64
}

// defaultMaxList is Annotator.maxList: the debtags model's record words sit
// in about 30 topics each (grouped), the 117k-concept synthetic model's in
// about 1,800 (rows).
const defaultMaxList = 128

// wEntry is entry i of a word w's list: topic k holds w with
// s_kw = s > 0; as slot i of the word's alias table over α_k·s_kw it
// keeps topic k with probability entP[i], else takes topic alt. The
// probabilities sit apart: a record reads every entry of its words' lists
// (group), in 16 bytes each, but seldom draws from the alias tables.
type wEntry struct {
	k, alt int32
	s      float64
}

// Model returns the annotator's model.
func (a *Annotator) Model() *model.Model { return a.m }

// inList reports whether topic k has s_kw > 0.
func (a *Annotator) inList(w int, k int32) bool {
	_, ok := a.find(w, k)
	return ok
}

// find returns s_kw's index in the word's list.
func (a *Annotator) find(w int, k int32) (int32, bool) {
	lo, hi := a.off[w], a.off[w+1]
	for lo < hi {
		mid := int32(uint32(lo+hi) >> 1)
		if a.ent[mid].k < k {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	return lo, lo < a.off[w+1] && a.ent[lo].k == k
}

// sv returns s_kw = (n_kw + λ·π_kw)/(n_k + B_k), searching whichever is
// shorter: the word's topic list or topic k's rows (a common word's list is
// long; a free topic's row is long).
func (a *Annotator) sv(w int, k int32) float64 {
	row := a.m.Counts[k]
	var pr []model.WordWeight
	if int(k) < len(a.m.Prior) {
		pr = a.m.Prior[k]
	}
	if int(a.off[w+1]-a.off[w]) <= len(row)+len(pr) {
		if i, ok := a.find(w, k); ok {
			return a.ent[i].s
		}
		return 0
	}
	lo, hi := 0, len(row)
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if int(row[mid].Word) < w {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	num := 0.0
	if lo < len(row) && int(row[lo].Word) == w {
		num = float64(row[lo].Count)
	}
	lo, hi = 0, len(pr)
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if int(pr[mid].Word) < w {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	if lo < len(pr) && int(pr[lo].Word) == w {
		num += a.m.Lambda * pr[lo].Weight
	}
	return num * a.invDen[k]
}

// Annotate analyses text and infers its concepts. Empty text gives an empty
// result; a text over Options.MaxBytes gives ErrTooLarge.
func (a *Annotator) Annotate(id, text string, opt Options) (*Result, error) {
	max := opt.MaxBytes
	if max == 0 {
		max = DefaultMaxBytes
	}
	if max > 0 && len(text) > max {
		return nil, fmt.Errorf("%s: %w: %d bytes, limit %d", id, ErrTooLarge, len(text), max)
	}
	res := &Result{ID: id, Concepts: []Concept{}}
	an, fallback := a.an, false
	if opt.Language != "" {
		l := strings.ToLower(opt.Language)
		res.Language = opt.Language
		if !a.langs[l] && !a.langs[baseTag(l)] {
			fallback = true
		}
	}
	st := a.get()
	defer a.put(st)
	var ts terms.Stats
	if la, ok := any(an).(langAnalyzer); ok && opt.Language != "" {
		st.toks, ts = la.AnalyzeLang(text, opt.Language, st.toks[:0], false)
	} else {
		st.toks, ts = an.Analyze(text, st.toks[:0], false)
	}
	res.Invalid = ts.Invalid
	res.Fallback = fallback || ts.Fallback
	return a.infer(res, text, st.toks, opt, st)
}

// langAnalyzer is the per-language entry of terms.Analyzer, used when present.
type langAnalyzer interface {
	AnalyzeLang(text, lang string, dst []terms.Token, grow bool) ([]terms.Token, terms.Stats)
}

// AnnotateTokens is Annotate for a text already analysed with the model's
// analyzer (Model().NewAnalyzer()): toks index into text.
func (a *Annotator) AnnotateTokens(id, text string, toks []terms.Token, opt Options) (*Result, error) {
	res := &Result{ID: id, Concepts: []Concept{}}
	st := a.get()
	defer a.put(st)
	return a.infer(res, text, toks, opt, st)
}

func baseTag(l string) string {
	if i := strings.IndexAny(l, "-_"); i > 0 {
		return l[:i]
	}
	return l
}

// state is the scratch space of one annotation, reused through a pool.
// Dense per-topic arrays are cleared through the lists of touched topics.
type state struct {
	toks []terms.Token
	ndk  []int32   // K: tokens of the record on topic k
	ext  []float64 // K: extra α of topic k routed through the record part
	slot []int32   // K: k's slot, -1 when none
	th   []float64 // K: θ accumulation
	agg  []float64 // C: descendants' scores, cleared through aggT
	mark []uint32  // C: visit stamps of the hierarchy walks
	gen  uint32
	aggT []int32
	// The record's word lists regrouped by topic, built once per record:
	// topic k's entries (word type, s_kw) are linked through bent from
	// bent[bh[k]-1] (bh[k] = 0: none). In row mode (rows) a topic's
	// entries are found when first needed (first), bhas[k] saying so, and
	// bT lists the topics found.
	bh    []int32 // K
	bhas  []bool  // K
	bT    []int32 // topics with bh > 0, or in row mode with bhas
	bent  []bEntry
	rows  bool
	usort []int32   // row mode: word types ordered by word id
	sink  int32     // group's early loads land here
	fu    []float64 // word type → cacc/A_w
	sfree float64   // free topics' mass outside th: the α·s_kw part, and the start's sample, over all samples
	stack []int32

	slotTopic []int32     // slot → topic
	out       []bool      // slot → taken out of nz by prune
	pos       []int32     // slot → position in act, -1 when inactive
	act       []int32     // active slots: ndk > 0 or ext > 0
	cs        []float64   // slot → c_k = n_dk + extra α
	phi0s     []float64   // slot → φ⁰_k
	dsm       []float64   // slot → Σ over sampling sweeps of c_k·φ⁰_k / D
	nz        [][]nzEntry // word type → slots with s_kw > 0, and s_kw
	wacc      [][]float64 // word type → per nz entry, Σ p(z = k)
	nzf       []nzEntry   // grouped: the array nz's lists are carved from
	waccf     []float64   // grouped: the array wacc's lists are carved from
	dacc      []float64   // word type → Σ D/Z
	d         float64     // D = Σ_k c_k·φ⁰_k over the active slots
	touched   []int32
	// startOn: startExpected's running sums and Z² (startW, startZ) hold
	// the start's distributions, for theta to count as one more sample.
	startOn bool
	ranked  []scored
	cand    []int32
	sup     []Support // support's scratch
	// The related boosts (related.go): relS[k] is concept k's
	// γ·Σ_j s_j·L_jk after addRelated (bestRelated: over the strong
	// candidates only), −0 where no row reached k, relT listing the
	// reached k (reset by put); relC[j] is candidate j's γ·s_j, 0 for
	// other concepts between calls; sc, own, low and maybe bestRelated's.
	relC  []float64
	relS  []float64
	relT  []int32
	sc    []float64 // C: bestRelated's own scores
	own   []scored
	low   []float64
	maybe []int32
	// calibrated's scratch: pv[k] is concept k's calibrated score when
	// pvMark[k] == pvGen; zs the candidates' log-odds.
	pv     []float64
	pvMark []uint32
	pvGen  uint32
	zs     []scored

	uw    []int32   // word type u → word id
	ucnt  []int32   // occurrences of u
	cacc  []float64 // u → Σ A_w/Z
	awu   []float64 // u → A_w
	tu    []int32   // token → u
	z     []int32   // token → topic
	uOf   []int32   // W: word id → word type, -1 when not in the record
	buf   []float64
	cum   []float64 // draw's running sums of buf
	allow bool      // restricted: no α·φ part

	// Word layer scratch (wordlayer.go): the record's vector and the
	// concepts' decision values.
	wSeq []int32 // the record's known words in text order
	wIdx []int32
	wVal []float32
	wSc  model.VectorScratch
	wd   []float64
	wK   []float64 // the neighbour vote K_k
	wNb  model.NeighbourScratch
	wG   []float64 // the network's log-probabilities g_k
	wNet model.NetScratch

	startW, startZ []float64
	// tl[k]: startExpected's data of topic k (K entries, made for the
	// first grouped record without known subjects), set by group for the
	// record's topics; e0k[k]: group's sum for E⁰_k, 0 between records.
	tl      []topicLocal
	e0k     []float64
	un, uo  []int32 // word type → list length, offset in bent
	samples int     // the sampling sweeps infer ran
}

func (a *Annotator) get() *state {
	if st, ok := a.pool.Get().(*state); ok {
		return st
	}
	st := &state{ndk: make([]int32, a.K), ext: make([]float64, a.K), slot: make([]int32, a.K),
		th: make([]float64, a.K), agg: make([]float64, a.C), mark: make([]uint32, a.C),
		bh: make([]int32, a.K), bhas: make([]bool, a.K), uOf: make([]int32, len(a.m.Words))}
	for k := range st.slot {
		st.slot[k] = -1
	}
	for w := range st.uOf {
		st.uOf[w] = -1
	}
	return st
}

func (a *Annotator) put(st *state) {
	for _, k := range st.slotTopic {
		st.ndk[k], st.ext[k], st.slot[k] = 0, 0, -1
	}
	for _, k := range st.touched {
		st.th[k] = 0
	}
	st.touched = st.touched[:0]
	st.startOn = false
	for _, k := range st.aggT {
		st.agg[k] = 0
	}
	st.aggT = st.aggT[:0]
	for _, k := range st.relT {
		st.relS[k] = negZero
	}
	st.relT = st.relT[:0]
	st.slotTopic, st.pos, st.act, st.out = st.slotTopic[:0], st.pos[:0], st.act[:0], st.out[:0]
	st.cs, st.phi0s, st.dsm, st.dacc = st.cs[:0], st.phi0s[:0], st.dsm[:0], st.dacc[:0]
	for u := range st.nz {
		if st.rows { // lists of their own: keep them for the next record
			st.nz[u], st.wacc[u] = st.nz[u][:0], st.wacc[u][:0]
		} else { // carved out of nzf: a record in row mode must not append to them
			st.nz[u], st.wacc[u] = nil, nil
		}
	}
	st.nz, st.wacc = st.nz[:0], st.wacc[:0]
	for _, k := range st.bT {
		st.bh[k], st.bhas[k] = 0, false
	}
	st.bT, st.bent, st.usort, st.rows = st.bT[:0], st.bent[:0], st.usort[:0], false
	st.d = 0
	for _, w := range st.uw {
		st.uOf[w] = -1
	}
	st.uw, st.ucnt, st.cacc, st.tu, st.z = st.uw[:0], st.ucnt[:0], st.cacc[:0], st.tu[:0], st.z[:0]
	st.awu = st.awu[:0]
	if cap(st.toks) > 1<<16 || cap(st.bent) > 1<<20 || len(st.nz) > 1<<14 || cap(st.nzf) > 1<<20 || cap(st.startW) > 1<<20 {
		// do not keep a huge record's buffers
		st.toks, st.bent, st.nz, st.wacc, st.tu, st.z = nil, nil, nil, nil, nil, nil
		st.bT = nil
		st.nzf, st.waccf = nil, nil
		st.startW, st.startZ, st.un, st.uo = nil, nil, nil, nil
	}
	a.pool.Put(st)
}

// slotOf returns k's slot, creating it: the slot joins the lists nz of the
// record's word types that topic k holds.
func (a *Annotator) slotOf(st *state, k int32) int32 {
	if s := st.slot[k]; s >= 0 {
		return s
	}
	s := int32(len(st.slotTopic))
	st.slot[k] = s
	st.slotTopic = append(st.slotTopic, k)
	st.pos = append(st.pos, -1)
	st.out = append(st.out, false)
	a.link(st, s, k)
	st.cs = append(st.cs, float64(st.ndk[k])+st.ext[k])
	st.phi0s = append(st.phi0s, a.phi0[k])
	st.dsm = append(st.dsm, 0)
	return s
}

// link adds slot s (topic k) to the lists nz of the record's word types
// that topic k holds.
func (a *Annotator) link(st *state, s, k int32) {
	linkList(st.bent, a.first(st, k), s, st.nz, st.wacc)
}

// linkList appends slot s to nz[u] (and a 0 to wacc[u]) for the entries
// of one topic's list in bent, from index i on. A leaf, so that the loop
// keeps its variables in registers.
//
//go:noinline
func linkList(bent []bEntry, i, s int32, nz [][]nzEntry, wacc [][]float64) {
	for i >= 0 {
		e := &bent[i]
		nz[e.u] = append(nz[e.u], nzEntry{s, e.s})
		wacc[e.u] = append(wacc[e.u], 0)
		i = e.next
	}
}

// prune takes the entries of slots without tokens out of the word types'
// lists nz: a slot's topic seldom keeps tokens once the sampler has left
// it (in debtags records about 4 of a word type's 11 entries hold tokens
// during the sampling sweeps), and a draw reads every entry of its word's
// list. add links a slot again when it gets a token back. It runs only
// before the sampling sweeps, while the entries carry no accumulated
// probability.
func (st *state) prune() {
	empty := false
	for s, c := range st.cs {
		if c <= 0 {
			st.out[s] = true
			empty = true
		}
	}
	if !empty { // right after the start every slot holds a token
		return
	}
	out := st.out
	for u, nz := range st.nz {
		n := 0
		for _, e := range nz {
			if !out[e.s] {
				nz[n] = e
				n++
			}
		}
		// The accumulators are all 0 still: keep the first n.
		st.nz[u], st.wacc[u] = nz[:n], st.wacc[u][:n]
	}
}

// nzEntry is a slot whose topic holds a word type, with s_kw.
type nzEntry struct {
	s int32
	v float64
}

// bEntry is a word type u of the record that topic k holds, with s_kw.
// next is the topic's next entry (-1: none).
type bEntry struct {
	u, k, next int32
	s          float64
}

// topicLocal is startExpected's data of one topic, together on one cache
// line's half: α_k, φ⁰_k and the expected counts of its two steps plus
// α_k.
type topicLocal struct {
	alpha, phi0, e0, e1 float64
}

// nextGen starts a new hierarchy walk.
func (st *state) nextGen() {
	st.gen++
	if st.gen == 0 { // wrapped: old stamps could collide
		clear(st.mark)
		st.gen = 1
	}
}

func (st *state) activate(s int32) {
	if st.pos[s] < 0 {
		st.pos[s] = int32(len(st.act))
		st.act = append(st.act, s)
	}
}

func (st *state) deactivate(s int32) {
	p := st.pos[s]
	if p < 0 {
		return
	}
	last := st.act[len(st.act)-1]
	st.act[p] = last
	st.pos[last] = p
	st.act = st.act[:len(st.act)-1]
	st.pos[s] = -1
}

// nzAt returns the position of slot s in word type u's list nz[u].
func (st *state) nzAt(u, s int32) (int, bool) {
	for j, e := range st.nz[u] {
		if e.s == s {
			return j, true
		}
	}
	return 0, false
}

// sOf returns s_kw for slot s and word type u.
func (a *Annotator) sOf(st *state, s, u int32) float64 {
	if j, ok := st.nzAt(u, s); ok {
		return st.nz[u][j].v
	}
	return 0
}

// first returns the index in bent of topic k's first entry (-1: none);
// bent[i].next links the others: the record's word types topic k holds.
func (a *Annotator) first(st *state, k int32) int32 {
	if st.rows && !st.bhas[k] {
		a.fillRow(st, k)
	}
	return st.bh[k] - 1
}

// fillRow finds topic k's entries (row mode): a merge of topic k's sorted
// rows with the record's sorted words, or a binary search per word when
// the row is much longer than the record. s_kw is computed as in New.
func (a *Annotator) fillRow(st *state, k int32) {
	st.bhas[k] = true
	st.bT = append(st.bT, k)
	row := a.m.Counts[k]
	var pr []model.WordWeight
	if int(k) < len(a.m.Prior) {
		pr = a.m.Prior[k]
	}
	search := len(row) > 16*len(st.usort)
	i, j := 0, 0
	for _, u := range st.usort {
		w := st.uw[u]
		if search {
			lo, hi := i, len(row)
			for lo < hi {
				mid := int(uint(lo+hi) >> 1)
				if row[mid].Word < w {
					lo = mid + 1
				} else {
					hi = mid
				}
			}
			i = lo
		} else {
			for i < len(row) && row[i].Word < w {
				i++
			}
		}
		for j < len(pr) && pr[j].Word < w {
			j++
		}
		hasC := i < len(row) && row[i].Word == w
		hasP := j < len(pr) && pr[j].Word == w
		num := 0.0
		switch {
		case hasC && hasP:
			num = float64(row[i].Count) + a.m.Lambda*pr[j].Weight
		case hasC:
			num = float64(row[i].Count)
		case hasP && pr[j].Weight > 0:
			num = a.m.Lambda * pr[j].Weight
		default:
			continue
		}
		st.bent = append(st.bent, bEntry{u: u, k: k, next: st.bh[k] - 1, s: num / a.den[k]})
		st.bh[k] = int32(len(st.bent))
	}
}

// group regroups the word lists of the record's word types by topic (one
// linked list per topic, in one pass), so that a new slot finds the
// record's words its topic holds without reading the topic's whole row.
// T is the lists' total length. With exp it also adds up each word's own
// expected counts n_u·α_k·s_kw/A_w per topic for startExpected: tl[k].e0
// becomes α_k + E⁰_k, tl[k].e1 α_k (α_k, the same for all of a topic's
// entries, multiplied in at the end).
func (a *Annotator) group(st *state, T int, exp bool) {
	bent := slices.Grow(st.bent[:0], T)[:T]
	bT := slices.Grow(st.bT[:0], T)[:T] // room for every entry's topic
	// Load each list's first entry up front: these loads do not depend on
	// each other, so the memory system serves them together, where the
	// loop below would wait for each list in turn.
	var sink int32
	for _, w := range st.uw {
		if h := &a.wh[w]; h.lo < h.hi {
			sink += a.ent[h.lo].k
		}
	}
	st.sink = sink
	if exp && len(st.tl) < a.K {
		st.tl = make([]topicLocal, a.K)
		for k := range st.tl {
			st.tl[k].alpha, st.tl[k].phi0 = a.alpha[k], a.phi0[k]
		}
		st.e0k = make([]float64, a.K)
	}
	i, nb := 0, 0
	for u, w := range st.uw {
		h := &a.wh[w]
		lst := a.ent[h.lo:h.hi]
		out := bent[i : i+len(lst)]
		if exp {
			nb = groupOwn(lst, out, st.e0k, st.bh, bT, nb, int32(i), int32(u), float64(st.ucnt[u])/st.awu[u])
		} else {
			nb = groupList(lst, out, st.bh, bT, nb, int32(i), int32(u))
		}
		i += len(lst)
	}
	bT = bT[:nb]
	if exp {
		tl, e0k := st.tl, st.e0k
		for _, k := range bT { // E⁰_k = α_k·Σ_u f_u·s_kw, plus α_k
			t := &tl[k]
			t.e0 = t.alpha * (1 + e0k[k])
			t.e1 = t.alpha
			e0k[k] = 0
		}
	}
	st.bent, st.bT = bent, bT
}

// groupList links word type u's entries es into the topics' lists: out
// (bent from index i on) gets them, each pointing to its topic's previous
// entry, bh[k] to the last; a topic not seen before (bh[k] = 0) is
// appended to bT[:nb], which must have room. Returns the new nb. A leaf,
// so that the loop keeps its variables in registers; no branch on the
// data (about one entry in five is a new topic).
//
//go:noinline
func groupList(es []wEntry, out []bEntry, bh, bT []int32, nb int, i, u int32) int {
	out = out[:len(es)]
	for j := range es {
		k := es[j].k
		h := bh[k]
		bT[nb] = k
		nb += int(uint32(h-1) >> 31) // 1 when h = 0
		out[j] = bEntry{u: u, k: k, next: h - 1, s: es[j].s}
		i++
		bh[k] = i
	}
	return nb
}

// groupOwn is groupList that also adds f·s_kw to e0k[k] (f = n_u/A_w:
// E⁰'s sum without α_k).
//
//go:noinline
func groupOwn(es []wEntry, out []bEntry, e0k []float64, bh, bT []int32, nb int, i, u int32, f float64) int {
	out = out[:len(es)]
	for j := range es {
		k, sk := es[j].k, es[j].s
		e0k[k] += f * sk
		h := bh[k]
		bT[nb] = k
		nb += int(uint32(h-1) >> 31) // 1 when h = 0
		out[j] = bEntry{u: u, k: k, next: h - 1, s: sk}
		i++
		bh[k] = i
	}
	return nb
}

// infer runs the sampler over toks and fills res.
func (a *Annotator) infer(res *Result, text string, toks []terms.Token, opt Options, st *state) (*Result, error) {
	// Word types of the known tokens.
	W := int32(len(a.m.Words))
	for i := range toks {
		w := toks[i].ID
		if w < 0 || w >= W {
			res.Unknown++
			continue
		}
		u := st.uOf[w]
		if u < 0 {
			u = int32(len(st.uw))
			st.uOf[w] = u
			st.uw = append(st.uw, w)
			st.ucnt = append(st.ucnt, 0)
			st.cacc = append(st.cacc, 0)
			st.dacc = append(st.dacc, 0)
			st.awu = append(st.awu, a.wh[w].aw)
			if len(st.nz) < cap(st.nz) {
				st.nz = st.nz[:len(st.nz)+1]
				st.wacc = st.wacc[:len(st.wacc)+1]
			} else {
				st.nz = append(st.nz, nil)
				st.wacc = append(st.wacc, nil)
			}
		}
		st.ucnt[u]++
		st.tu = append(st.tu, u)
	}
	// Known subjects.
	var subj []int32
	for _, iri := range opt.Subjects {
		if k, ok := a.m.ConceptIndex(iri); ok {
			subj = append(subj, int32(k))
		} else {
			res.UnknownSubjects = append(res.UnknownSubjects, iri)
		}
	}
	N := len(st.tu)
	res.Tokens = N
	T := 0
	for _, w := range st.uw {
		h := &a.wh[w]
		T += int(h.hi - h.lo)
	}
	st.rows = T > a.maxList*len(st.uw)
	// Grouped records without known subjects start from the others'
	// expected counts (startExpected), which group begins.
	expStart := !st.rows && len(subj) == 0 && !ownStart
	if st.rows {
		for u := range st.uw {
			st.usort = append(st.usort, int32(u))
		}
		slices.SortFunc(st.usort, func(x, y int32) int { return int(st.uw[x] - st.uw[y]) })
	} else {
		a.group(st, T, expStart)
		// A word type's slots are at most the topics of its list: carve
		// every type's nz and wacc out of one array, so that no append
		// moves them and they sit together.
		st.nzf = slices.Grow(st.nzf[:0], T)[:T]
		st.waccf = slices.Grow(st.waccf[:0], T)[:T]
		st.un = slices.Grow(st.un[:0], len(st.uw))[:len(st.uw)]
		st.uo = slices.Grow(st.uo[:0], len(st.uw))[:len(st.uw)]
		o := 0
		for u, w := range st.uw {
			h := &a.wh[w]
			n := int(h.hi - h.lo)
			st.nz[u], st.wacc[u] = st.nzf[o:o:o+n], st.waccf[o:o:o+n]
			st.un[u], st.uo[u] = int32(n), int32(o)
			o += n
		}
	}

	st.allow = false
	if len(subj) > 0 {
		switch opt.SubjectMode {
		case Boost:
			f := opt.BoostFactor
			if f == 0 {
				f = DefaultBoost
			}
			if !(f >= 1) { // below 1 (or NaN) would weaken, not boost
				f = 1
			}
			for _, k := range subj {
				a.setExt(st, k, (f-1)*a.alpha[k])
			}
		default:
			st.allow = true
			for _, k := range subj {
				a.setExt(st, k, a.alpha[k])
			}
			for k := a.C; k < a.K; k++ {
				a.setExt(st, int32(k), a.alpha[k])
			}
		}
	}
	if N == 0 {
		res.Uncovered = 0
		return res, nil
	}

	rng := &splitMix{a.recordSeed(text, opt, subj)}

	burn, samples := opt.BurnIn, opt.Samples
	switch {
	case burn < 0:
		burn = 0
	case burn == 0 && expStart:
		burn = ExpectedBurnIn
	case burn == 0:
		burn = DefaultBurnIn
	}
	if samples <= 0 {
		samples = DefaultSamples
		if expStart {
			samples = ExpectedSamples
		}
	}
	st.samples = samples
	if cap(st.z) < N {
		st.z = make([]int32, N)
	}
	st.z = st.z[:N]
	// Sweep 0 draws every token from its word's own posterior,
	// p(k | w) ∝ (α_k + extra α)·φ_kw, before adding any (drawn one by one
	// given the earlier ones, the first words would pull the rest towards
	// their topics); the others remove and redraw each token.
	for sweep := 0; sweep <= burn+samples; sweep++ {
		record := sweep > burn
		if sweep == 1 || sweep == burn+1 {
			st.prune()
		}
		// Re-sum the smoothing bucket so that rounding cannot drift.
		st.d = 0
		for _, s := range st.act {
			st.d += st.cs[s] * st.phi0s[s]
		}
		if sweep == 0 {
			if expStart {
				a.startExpected(st, rng)
			} else {
				for i, u := range st.tu {
					st.z[i] = a.draw(st, u, rng, false)
				}
			}
			for i := range st.tu {
				a.add(st, st.z[i], 1)
			}
			continue
		}
		for i, u := range st.tu {
			// Take token i out as add(k0, -1) would, but only commit it
			// when the token moves: it often stays, and then the slot's
			// weight and the bucket total are put back exactly.
			k0 := st.z[i]
			out := st.takeOut(k0)
			k := a.draw(st, u, rng, record)
			if k == k0 {
				st.putBack(out)
				continue
			}
			st.commitOut(k0, out)
			st.z[i] = k
			a.add(st, k, 1)
		}
		if record {
			dn := 0.0
			for _, s := range st.act {
				dn += st.cs[s] * st.phi0s[s]
			}
			for _, s := range st.act {
				st.dsm[s] += st.cs[s] * st.phi0s[s] / dn
			}
		}
	}
	a.summarise(res, text, toks, opt, st, float64(samples))
	return res, nil
}

// add changes n_dk by delta, keeping the slot's weight and the smoothing
// bucket total in step.
func (a *Annotator) add(st *state, k int32, delta int32) {
	s := st.slot[k]
	if s < 0 {
		s = a.slotOf(st, k)
	}
	st.ndk[k] += delta
	st.cs[s] = float64(st.ndk[k]) + st.ext[k] // recomputed: no drift
	st.d += float64(delta) * st.phi0s[s]
	if st.cs[s] > 0 {
		if st.out[s] { // pruned: back into the word lists
			st.out[s] = false
			a.link(st, s, k)
		}
		st.activate(s)
	} else {
		st.deactivate(s)
	}
}

// taken is what putBack needs to undo takeOut.
type taken struct {
	s      int32
	c0, d0 float64
}

// takeOut removes one token of topic k from the weights draw reads (slot
// weight and smoothing bucket), as add(k, -1) would, but leaves n_dk and
// the active list alone until commitOut.
func (st *state) takeOut(k int32) taken {
	s := st.slot[k]
	t := taken{s, st.cs[s], st.d}
	st.cs[s] = float64(st.ndk[k]-1) + st.ext[k]
	st.d -= st.phi0s[s]
	return t
}

// putBack restores the weights exactly.
func (st *state) putBack(t taken) { st.cs[t.s], st.d = t.c0, t.d0 }

// commitOut finishes takeOut: the token has left topic k.
func (st *state) commitOut(k int32, t taken) {
	st.ndk[k]--
	if st.cs[t.s] <= 0 {
		st.deactivate(t.s)
	}
}

// setExt routes extra α for topic k through the record part.
func (a *Annotator) setExt(st *state, k int32, e float64) {
	s := a.slotOf(st, k)
	st.ext[k] = e
	st.cs[s] = float64(st.ndk[k]) + e
	if st.cs[s] > 0 {
		st.activate(s)
	}
}

// draw samples a topic for one occurrence of word type u given the other
// tokens; with record it adds the conditional to the accumulators.
//
// The record part Σ_k c_k·(φ⁰_k + s_kw), c_k = n_dk (+ extra α), splits
// into the word bucket Σ c_k·s_kw over the record's topics that hold w (the
// list nz[u], usually a handful) and the smoothing bucket D = Σ c_k·φ⁰_k,
// whose total is kept up to date (SparseLDA, Yao, Mimno & McCallum 2009).
func (a *Annotator) draw(st *state, u int32, rng *splitMix, record bool) int32 {
	nz := st.nz[u]
	if cap(st.buf) < len(nz) || cap(st.cum) < len(nz) {
		st.grow(len(nz))
	}
	buf, cum := st.buf[:len(nz)], st.cum[:len(nz)]
	bt := wordBucket(nz, st.cs, buf, cum)
	d := st.d
	if d < 0 {
		d = 0
	}
	aw := 0.0
	if !st.allow {
		aw = st.awu[u]
	}
	z := bt + d + aw
	if record {
		inv := 1 / z
		accumulate(st.wacc[u][:len(buf)], buf, inv)
		st.dacc[u] += d * inv
		st.cacc[u] += aw * inv
	}
	x := uniform(rng) * z
	if x < bt { // bt is cum's last entry, so the search stops
		return st.slotTopic[nz[search(cum, x)].s]
	}
	return a.drawOut(st, u, rng, x-bt, d, aw)
}

// drawOut is draw past the word bucket (about one draw in twenty on
// debtags records): x, reduced by the word bucket's total, falls in the
// smoothing bucket d or the α·φ part aw. A function of its own, so that
// draw's common path keeps a small frame.
//
//go:noinline
func (a *Annotator) drawOut(st *state, u int32, rng *splitMix, x, d, aw float64) int32 {
	if x < d || aw == 0 {
		last := int32(-1)
		for _, s := range st.act {
			v := st.cs[s] * st.phi0s[s]
			if v <= 0 {
				continue
			}
			if x < v {
				return st.slotTopic[s]
			}
			x -= v
			last = s
		}
		if last >= 0 { // rounding left x at the top end
			return st.slotTopic[last]
		}
	}
	x -= d
	w := st.uw[u]
	if x < a.q || a.off[w] == a.off[w+1] {
		return a.dense.draw(rng)
	}
	// The word's alias table (Walker 1977, Vose 1991), in its list.
	lo := a.off[w]
	n := float64(a.off[w+1] - lo)
	x = uniform(rng) * n
	i := int(x)
	if i >= int(n) {
		i = int(n) - 1
	}
	e := &a.ent[lo+int32(i)]
	if x-float64(i) < a.entP[lo+int32(i)] {
		return e.k
	}
	return e.alt
}

// wordBucket sets buf[j] to slot j's word-bucket weight c_k·s_kw and
// cum[j] to the running sum, and returns the total. Slots without tokens
// give 0: no branch to mispredict. With the running sums the search
// compares without a chain of subtractions. A function of its own, so
// that the loop keeps its variables in registers.
//
//go:noinline
func wordBucket(nz []nzEntry, cs, buf, cum []float64) float64 {
	buf, cum = buf[:len(nz)], cum[:len(nz)]
	bt := 0.0
	for j, e := range nz {
		v := cs[e.s] * e.v
		buf[j] = v
		bt += v
		cum[j] = bt
	}
	return bt
}

// accumulate adds buf·inv to acc.
func accumulate(acc, buf []float64, inv float64) {
	acc = acc[:len(buf)]
	for j, v := range buf {
		acc[j] += v * inv
	}
}

// search returns the first j with x < cum[j]; x must be below the last.
func search(cum []float64, x float64) int {
	for j, c := range cum {
		if x < c {
			return j
		}
	}
	return len(cum) - 1
}

// grow makes room for n entries in draw's buffers.
func (st *state) grow(n int) {
	st.buf = make([]float64, n, 2*n)
	st.cum = make([]float64, n, 2*n)
}

// splitMix is the SplitMix64 generator (Steele, Lea & Flood 2014,
// "Fast splittable pseudorandom number generators", OOPSLA; it passes
// BigCrush): a few instructions per number, where PCG's 128-bit
// multiply took a twentieth of a record's instructions. A record makes
// about 1,500 draws of its own stream, seeded from the record's hash.
type splitMix struct{ s uint64 }

func (r *splitMix) next() uint64 {
	r.s += 0x9e3779b97f4a7c15
	z := r.s
	z = (z ^ z>>30) * 0xbf58476d1ce4e5b9
	z = (z ^ z>>27) * 0x94d049bb133111eb
	return z ^ z>>31
}

// uniform returns a float64 in [0, 1), 53 random bits.
func uniform(r *splitMix) float64 {
	return float64(r.next()>>11) / (1 << 53)
}

// post returns word type u's posterior of topic k (slot s, or -1).
func (a *Annotator) post(st *state, u int32, k int32, samples float64) float64 {
	if s := st.slot[k]; s >= 0 {
		if j, ok := st.nzAt(u, s); ok {
			return a.postAt(st, u, k, s, st.wacc[u][j], st.nz[u][j].v, samples)
		}
		// Pruned, or its topic does not hold the word.
		return a.postAt(st, u, k, s, 0, a.sv(int(st.uw[u]), k), samples)
	}
	return a.postAt(st, u, k, -1, 0, a.sv(int(st.uw[u]), k), samples)
}

// postAt is post given k's slot s (or -1), the word bucket's accumulated
// share acc and s_kw.
func (a *Annotator) postAt(st *state, u, k, s int32, acc, sk, samples float64) float64 {
	n := float64(st.ucnt[u]) * samples
	p := acc / n
	if s >= 0 {
		p += st.dacc[u] / n * st.dsm[s] / samples
	}
	return p + st.cacc[u]/n*a.alpha[k]*(a.phi0[k]+sk)/a.wh[st.uw[u]].aw
}

// freePost returns word type u's posterior mass on all free topics.
func (a *Annotator) freePost(st *state, u int32, samples float64) float64 {
	n := float64(st.ucnt[u]) * samples
	p := 0.0
	for j, e := range st.nz[u] {
		if int(st.slotTopic[e.s]) >= a.C {
			p += st.wacc[u][j]
		}
	}
	w := st.uw[u]
	return p/n + st.dacc[u]/n*a.freeDSM(st)/samples + st.cacc[u]/n*a.wh[w].awF/a.wh[w].aw
}

// freeDSM is the free topics' total share of the smoothing bucket.
func (a *Annotator) freeDSM(st *state) float64 {
	ds := 0.0
	for s, k := range st.slotTopic {
		if int(k) >= a.C {
			ds += st.dsm[s]
		}
	}
	return ds
}

// summarise turns the accumulators into scores, paths, supports and words.
func (a *Annotator) summarise(res *Result, text string, toks []terms.Token, opt Options, st *state, samples float64) {
	N := float64(len(st.tu))
	// θ_k = (n̄_dk + α'_k) / (N + Σα'), n̄_dk the sampling sweeps' mean of
	// Σ_i p(z_i = k | z_¬i) (theta), where α' is α as the options changed it (restricted: α of the allowed topics
	// only; boosted: plus the subjects' extra).
	alphaP := func(k int32) float64 {
		if st.allow {
			return st.ext[k]
		}
		return a.alpha[k] + st.ext[k]
	}
	sumA, freeA := a.sumAlpha, a.freeAlpha
	if st.allow {
		sumA, freeA = 0, 0
	}
	for _, k := range st.slotTopic {
		sumA += st.ext[k]
		if int(k) >= a.C {
			freeA += st.ext[k]
		}
	}
	norm := 1 / (N + sumA)
	rbF := a.theta(st, samples)
	// Free topics as a whole: their α·s_kw share comes from A_w's free part.
	unc := freeA + st.sfree
	for k := a.C; k < a.K; k++ {
		unc += st.th[k] + a.alpha[k]*a.phi0[k]*rbF
	}
	res.Uncovered = unc * norm
	relOn := false // st.rel holds related-concept boosts, see relatedWeight
	score := func(k int32) float64 {
		v := (st.th[k] + a.alpha[k]*a.phi0[k]*rbF + alphaP(k)) * norm
		if relOn {
			v += st.relS[k] // −0 where no row reached k: v as it was
		}
		return v
	}

	// Rank: the record's concepts, plus the others in the order of α_k
	// (their score is α_k/(N + Σα)).
	top := opt.Top
	if top == 0 {
		top = DefaultTop
	}
	if top < 0 || top > a.C {
		top = a.C
	}
	want := max(top, min(pathPool, a.C))
	cand := st.cand[:0]
	for _, k := range st.slotTopic {
		if int(k) < a.C {
			cand = append(cand, k)
		}
	}
	if !st.allow {
		// Concepts that hold a record word have posterior mass too (in
		// row mode only those already looked up are known here).
		for _, k := range st.bT {
			if int(k) < a.C && st.slot[k] < 0 {
				cand = append(cand, k)
			}
		}
		if st.rows {
			extra := 0
			for _, k := range a.corder {
				if extra >= want {
					break
				}
				if st.slot[k] < 0 && !st.bhas[k] {
					// Its α·s_kw share, unknown until its row is read.
					a.addAliasS(st, k, 1/samples)
					st.touched = append(st.touched, k)
					cand = append(cand, k)
					extra++
				}
			}
		} else {
			cand = priorOnly(a.corder, st.slot, st.bh, cand, want)
		}
	}
	calOn := !st.allow && !opt.Uncalibrated && a.m.Calibration != nil
	quick := opt.ConceptsOnly && !calOn && top <= maxQuickTop
	if len(a.m.Related) == a.C && !st.allow {
		if quick {
			// Only the shown concepts are needed: bestRelated finds
			// them without boosting every candidate's neighbours.
			a.showBest(res, a.bestRelated(st, cand, top, norm, rbF), opt.MinScore)
			st.cand = cand[:0]
			return
		}
		cand = a.addRelated(st, cand, score)
		relOn = true
	}
	switch {
	case calOn && a.m.WordLayer != nil:
		cand, score = a.wordScores(st, text, toks, score) // wordlayer.go
	case calOn:
		cand, score = a.calibrated(st, cand, score, want, norm, rbF) // calibrate.go
	}
	if quick {
		// Only the shown concepts are needed: the best top non-deprecated
		// candidates, kept sorted in a short list while scanning, instead
		// of selecting a pool for the paths. The same concepts in the
		// same order as below (TestConceptsOnly).
		a.showBest(res, a.bestConcepts(st, cand, top, norm, rbF), opt.MinScore)
		st.cand = cand[:0]
		return
	}
	ranked := slices.Grow(st.ranked[:0], len(cand))
	if !relOn && !calOn {
		// score(k), without two closure calls per candidate.
		th, alpha, phi0, ext := st.th, a.alpha, a.phi0, st.ext
		for _, k := range cand {
			ap := alpha[k] + ext[k]
			if st.allow {
				ap = ext[k]
			}
			ranked = append(ranked, scored{k, (th[k] + alpha[k]*phi0[k]*rbF + ap) * norm})
		}
	} else {
		for _, k := range cand {
			ranked = append(ranked, scored{k, score(k)})
		}
	}
	st.ranked = ranked
	if len(ranked) > want {
		selectBest(ranked, want)
		ranked = ranked[:want]
	}
	// The pool needs no order; the shown concepts do, and as many more as
	// deprecated concepts could take their places.
	sel := top + a.deprecated(ranked)
	if len(ranked) > sel {
		selectBest(ranked, sel)
	}
	slices.SortFunc(ranked[:min(sel, len(ranked))], func(x, y scored) int {
		switch {
		case x.v > y.v:
			return -1
		case x.v < y.v:
			return 1
		}
		return int(x.k - y.k)
	})
	cand = cand[:len(ranked)]
	for i := range ranked {
		cand[i] = ranked[i].k
	}
	pool := cand
	st.cand = cand[:0] // reused by the next record; pool is read only below
	// The first top concepts of the ranking that may be suggested: a
	// deprecated concept keeps its topic (its words still need a home) but
	// is never suggested, and the next one takes its place, so that Top
	// concepts are returned whenever the pool holds them.
	var shown []int32
	for _, k := range cand[:min(sel, len(cand))] {
		if len(shown) == top {
			break
		}
		if a.isDeprecated(k) {
			continue
		}
		if score(k) >= opt.MinScore {
			shown = append(shown, k)
		}
	}

	if len(shown) > 0 {
		res.Concepts = make([]Concept, 0, len(shown))
	}
	if opt.ConceptsOnly {
		for _, k := range shown {
			res.Concepts = append(res.Concepts, Concept{IRI: a.m.Scheme.Concepts[k].IRI, Label: a.labels[k], Score: score(k)})
		}
		return
	}

	// Aggregated scores: own plus the descendants among pool. Each pool
	// concept adds its score once to every ancestor (poly-hierarchy: once,
	// however many routes lead up).
	for _, c := range pool {
		st.nextGen()
		st.stack = append(st.stack[:0], c)
		st.mark[c] = st.gen
		sc := score(c)
		for len(st.stack) > 0 {
			x := st.stack[len(st.stack)-1]
			st.stack = st.stack[:len(st.stack)-1]
			if x != c {
				if st.agg[x] == 0 {
					st.aggT = append(st.aggT, x)
				}
				st.agg[x] += a.aggTerm(sc, calOn)
			}
			for _, p := range a.m.Scheme.Concepts[x].Broader {
				if st.mark[p] != st.gen {
					st.mark[p] = st.gen
					st.stack = append(st.stack, int32(p))
				}
			}
		}
	}
	aggOf := func(k int32) float64 { return a.aggOf(score(k), st.agg[k], calOn) }

	for _, k := range shown {
		c := Concept{IRI: a.m.Scheme.Concepts[k].IRI, Label: a.labels[k], Score: score(k)}
		// Walk up through the broader concept with most aggregated mass.
		var path []PathNode
		st.nextGen()
		for x := k; ; {
			st.mark[x] = st.gen
			path = append(path, PathNode{IRI: a.m.Scheme.Concepts[x].IRI, Label: a.labels[x], Score: aggOf(x)})
			bp, bv := int32(-1), -1.0
			for _, p := range a.m.Scheme.Concepts[x].Broader {
				if st.mark[p] == st.gen {
					continue
				}
				if v := aggOf(int32(p)); v > bv || (v == bv && int32(p) < bp) {
					bp, bv = int32(p), v
				}
			}
			if bp < 0 {
				break
			}
			x = bp
		}
		slices.Reverse(path)
		c.Path = path
		c.Support = a.support(st, k, samples)
		res.Concepts = append(res.Concepts, c)
	}

	if opt.IncludeWords {
		a.words(res, text, toks, st, samples)
	}
}

// theta sets st.th[k] to the sampling sweeps' mean of Σ_i p(z_i = k | z_¬i),
// the record's expected tokens on topic k (Rao–Blackwellised: each token's
// conditional rather than its draw), for the topics that have slots or hold a
// record word, and returns f such that every other topic k has α_k·φ⁰_k·f.
// Adding α_k·φ⁰_k·f to every topic's st.th[k] gives the full expectation:
// its sum over k is the record's token count.
//
// Token i's conditional is, as in draw, its word bucket (acc), its share of
// the smoothing bucket (dacc, split as dsm) and α_k·φ_kw/A_w of the alias
// part (cacc): per word type u of word w,
//
//	Σ_i p(z_i = k) = acc_uk + dacc_u·dsm_k/S + cacc_u·α_k·(φ⁰_k + s_kw)/A_w
//
// summed over the S sampling sweeps (post divides the same sum by the
// type's occurrences). After startExpected the sums also hold the start's
// distributions (v²_wk/Z²_w on the lists, n_w·q/Z²_w for the α_k·φ⁰_k part),
// and are divided by S + 1.
func (a *Annotator) theta(st *state, samples float64) float64 {
	// inv averages the sweeps' smoothing-bucket split; out divides the
	// sums, which hold the start's sample too when startOn.
	inv, out, startOn, startF := 1/samples, 1/samples, st.startOn, 0.0
	if startOn {
		out = 1 / (samples + 1)
		st.startOn = false
	}
	dsum, cphi, sfree := 0.0, 0.0, 0.0
	st.fu = slices.Grow(st.fu[:0], len(st.uw))[:len(st.uw)]
	for u, w := range st.uw {
		dsum += st.dacc[u]
		h := &a.wh[w]
		f := st.cacc[u] / h.aw
		st.fu[u] = f
		cphi += f
		sfree += f * (h.awF - a.qFree)
	}
	// Locals: stores into th would otherwise make each pass reload the
	// slice headers.
	th, alpha, fu, slotTopic, C := st.th, a.alpha, st.fu, st.slotTopic, int32(a.C)
	if st.rows { // the entries of every topic in bT
		for i := range st.bent {
			e := &st.bent[i]
			if e.k < C {
				th[e.k] += alpha[e.k] * (e.s * fu[e.u])
			}
		}
	} else if startOn { // the same, and the start's sample (startExpected's running sums)
		g, Z, uo := st.startW, st.startZ, st.uo
		for u, w := range st.uw {
			h := &a.wh[w]
			o := int(uo[u])
			fs := float64(st.ucnt[u]) / Z[u] // the type's share of the start's sample
			sfree += thetaStart(th, alpha, a.ent[h.lo:h.hi], int(h.hiC-h.lo), g[o:o+int(h.hi-h.lo)], fu[u], fs)
			startF += fs // its α_k·φ⁰_k part, n_u·q/Z², as the return value counts it
		}
	} else { // the same entries, from the words' lists: their concepts come first
		for u, w := range st.uw {
			f := fu[u]
			h := &a.wh[w]
			for _, e := range a.ent[h.lo:h.hiC] {
				th[e.k] += alpha[e.k] * (e.s * f)
			}
		}
	}
	st.sfree = sfree * out
	for u, nz := range st.nz {
		acc := st.wacc[u][:len(nz)]
		for j, e := range nz {
			th[slotTopic[e.s]] += acc[j]
		}
	}
	for s, k := range slotTopic {
		th[k] = (th[k] + dsum*st.dsm[s]*inv) * out
	}
	for _, k := range st.bT {
		if st.slot[k] < 0 {
			st.th[k] *= out
		}
	}
	st.touched = append(st.touched, st.slotTopic...)
	st.touched = append(st.touched, st.bT...)
	return (cphi + startF) * out
}

// priorOnly appends to cand the first n concepts of order (by α) that
// neither hold a slot nor a record word (slot[k] < 0, bh[k] = 0: grouped
// mode), and returns it. A leaf that stores every concept at cand's end
// and moves the end by one only for those kept: about half of the
// concepts it passes are kept, and a branch on it would be mispredicted
// half the time.
//
//go:noinline
func priorOnly(order, slot, bh []int32, cand []int32, n int) []int32 {
	m := len(cand)
	cand = slices.Grow(cand, n+1)
	buf := cand[:m+n+1]
	end := m + n
	for _, k := range order {
		if m >= end {
			break
		}
		buf[m] = k
		// 1 when slot[k] < 0 and bh[k] = 0 (bh ≥ 0: its sign bit is
		// clear, and bh−1 < 0 only at 0).
		m += int(uint32(slot[k]&(bh[k]-1)) >> 31)
	}
	return buf[:m]
}

// thetaStart adds a word type's α_k·s_kw·f to th for its list's first nc
// entries (the concepts), as theta does, and the start's sample fs·v²_k,
// v²_k the differences of startExpected's running sums cum (fs = n_u/Z²).
// A leaf: one pass over th for both. The free topics' entries (the rest
// of the list, about half the entries on debtags) count only as a whole,
// in the uncovered share: their start's sample, fs times the sums' rise
// over them, is returned.
//
//go:noinline
func thetaStart(th, alpha []float64, es []wEntry, nc int, cum []float64, f, fs float64) float64 {
	n := len(es)
	if n == 0 {
		return 0
	}
	cum = cum[:n]
	nc = min(nc, n)
	prev := 0.0
	for j := 0; j < nc; j++ {
		k, c := es[j].k, cum[j]
		th[k] += alpha[k]*(es[j].s*f) + fs*(c-prev)
		prev = c
	}
	return fs * (cum[n-1] - prev)
}

// addAliasS adds to st.th[k] scale·Σ_u cacc_u·α_k·s_kw/A_w, the s_kw share
// of the alias part (theta).
func (a *Annotator) addAliasS(st *state, k int32, scale float64) {
	ak, v := a.alpha[k], 0.0
	for i := a.first(st, k); i >= 0; i = st.bent[i].next {
		v += st.bent[i].s * st.fu[st.bent[i].u]
	}
	st.th[k] += ak * v * scale
}

// maxQuickTop: ConceptsOnly requests for at most this many concepts take
// bestConcepts' insertion list.
const maxQuickTop = 64

// bestConcepts returns the n best candidates that are not deprecated, best
// first, scored as summarise scores them without a calibration or related
// rows: (θ part + α'_k)·norm (bestRelated adds the related boosts). An
// insertion list of n: most candidates fall below its last entry at the
// first comparison.
func (a *Annotator) bestConcepts(st *state, cand []int32, n int, norm, rbF float64) []scored {
	best := st.ranked[:0]
	if n <= 0 {
		return best
	}
	th, alpha, phi0, ext, dep := st.th, a.alpha, a.phi0, st.ext, a.dep
	for _, k := range cand {
		if dep[k] {
			continue
		}
		ap := alpha[k] + ext[k]
		if st.allow {
			ap = ext[k]
		}
		best = insertBest(best, scored{k, (th[k] + alpha[k]*phi0[k]*rbF + ap) * norm}, n)
	}
	st.ranked = best
	return best
}

// showBest puts the concepts of best scoring at least min into res.
func (a *Annotator) showBest(res *Result, best []scored, min float64) {
	if len(best) > 0 {
		res.Concepts = make([]Concept, 0, len(best))
	}
	for _, x := range best {
		if x.v >= min {
			res.Concepts = append(res.Concepts, Concept{IRI: a.m.Scheme.Concepts[x.k].IRI, Label: a.labels[x.k], Score: x.v})
		}
	}
}

// scored is a topic with its score.
type scored struct {
	k int32
	v float64
}

// better orders by score, highest first, then by topic.
func (x scored) better(y scored) bool { return x.v > y.v || (x.v == y.v && x.k < y.k) }

// isDeprecated reports whether concept k is deprecated: it keeps its topic
// (its words still need a home) but is never suggested.
func (a *Annotator) isDeprecated(k int32) bool {
	return 0 <= k && int(k) < len(a.dep) && a.dep[k]
}

// deprecated counts the deprecated concepts in r.
func (a *Annotator) deprecated(r []scored) int {
	n := 0
	for _, x := range r {
		if a.isDeprecated(x.k) {
			n++
		}
	}
	return n
}

// selectBest moves the n best of r (0 < n < len(r)) to r[:n], in no
// particular order (Hoare's selection, median-of-three pivots; the order is
// total, so the set is the same whatever the input order).
func selectBest(r []scored, n int) {
	lo, hi := 0, len(r)-1
	for lo < hi {
		mid := lo + (hi-lo)/2
		if r[mid].better(r[lo]) {
			r[mid], r[lo] = r[lo], r[mid]
		}
		if r[hi].better(r[lo]) {
			r[hi], r[lo] = r[lo], r[hi]
		}
		if r[hi].better(r[mid]) {
			r[hi], r[mid] = r[mid], r[hi]
		}
		p := r[mid] // r[lo] ≥ p ≥ r[hi] in the order
		i, j := lo, hi
		for i <= j {
			for r[i].better(p) {
				i++
			}
			for p.better(r[j]) {
				j--
			}
			if i <= j {
				r[i], r[j] = r[j], r[i]
				i++
				j--
			}
		}
		// r[lo..j] ≥ p ≥ r[i..hi]; elements between are equal to p.
		switch {
		case n-1 <= j:
			hi = j
		case n-1 >= i:
			lo = i
		default:
			return
		}
	}
}

// support lists the terms carrying most of concept k's share of the
// record's words: weight = Σ over the term's occurrences of p(z = k),
// divided by that sum over all words.
func (a *Annotator) support(st *state, k int32, samples float64) []Support {
	// buf[u] = n_u·post(u, k)·samples, as postAt sums it: the smoothing and
	// α·φ⁰ parts for every word type, then the word bucket and α·s_kw parts
	// for the record's words that topic k holds.
	U := len(st.uw)
	if cap(st.buf) < U {
		st.buf = make([]float64, U, 2*U)
	}
	buf := st.buf[:U]
	s := st.slot[k]
	ds := 0.0
	if s >= 0 {
		ds = st.dsm[s] / samples
	}
	ak, p0 := a.alpha[k], a.phi0[k]
	fu := st.fu // cacc_u/A_w, from theta
	for u := range buf {
		buf[u] = st.dacc[u]*ds + fu[u]*ak*p0
	}
	for i := a.first(st, k); i >= 0; i = st.bent[i].next {
		e := &st.bent[i]
		v := fu[e.u] * ak * e.s
		if s >= 0 {
			if j, ok := st.nzAt(e.u, s); ok { // else pruned: nothing accumulated
				v += st.wacc[e.u][j]
			}
		}
		buf[e.u] += v
	}
	mass := 0.0
	inv := 1 / samples
	for u := range buf {
		buf[u] *= inv
		mass += buf[u]
	}
	if mass <= 0 {
		return nil
	}
	out := st.sup[:0]
	for u, w := range st.uw {
		if buf[u] < minSupportPost*float64(st.ucnt[u]) {
			continue
		}
		if wt := buf[u] / mass; wt >= minSupport {
			out = append(out, Support{Term: a.m.Words[w], Weight: wt})
		}
	}
	st.sup = out[:0]
	if len(out) == 0 {
		return nil
	}
	slices.SortFunc(out, func(x, y Support) int {
		switch {
		case x.Weight > y.Weight:
			return -1
		case x.Weight < y.Weight:
			return 1
		}
		return strings.Compare(x.Term, y.Term)
	})
	return slices.Clone(out[:min(len(out), maxSupport)])
}

// words fills res.Words: per occurrence the concept its word type most
// supports, or "" when the free topics together weigh more.
func (a *Annotator) words(res *Result, text string, toks []terms.Token, st *state, samples float64) {
	type choice struct {
		iri string
		p   float64
	}
	ch := make([]choice, len(st.uw))
	dsF := a.freeDSM(st)
	dk, dv := int32(-1), 0.0
	for s, k := range st.slotTopic {
		if int(k) < a.C && st.dsm[s] > dv {
			dk, dv = k, st.dsm[s]
		}
	}
	sdk := int32(-1)
	if dk >= 0 {
		sdk = st.slot[dk]
	}
	for u := range st.uw {
		u := int32(u)
		w := int(st.uw[u])
		bk, bp := int32(-1), -1.0
		try := func(k int32, p float64) {
			if p > bp || (p == bp && k < bk) {
				bk, bp = k, p
			}
		}
		// post(u, k), with the word type's factors taken out.
		n := float64(st.ucnt[u]) * samples
		invN := 1 / n
		dn, cn := st.dacc[u]*invN/samples, st.cacc[u]*invN/a.wh[w].aw
		// Candidates: the record's concepts that hold the word; the
		// concept taking most of the smoothing bucket (dk); the best
		// concept by α_k·φ_kw alone (best), which no concept without
		// record mass can beat.
		b, sb := a.best[w], int32(-1)
		if b >= 0 {
			sb = st.slot[b]
		}
		doneDk, doneB := false, false
		free := 0.0 // the free slots' word-bucket share, as freePost sums it
		for j, e := range st.nz[u] {
			k := st.slotTopic[e.s]
			acc := st.wacc[u][j]
			if int(k) >= a.C {
				free += acc
				continue
			}
			try(k, acc*invN+dn*st.dsm[e.s]+cn*a.alpha[k]*(a.phi0[k]+e.v))
			doneDk = doneDk || e.s == sdk
			doneB = doneB || e.s == sb
		}
		if dk >= 0 && !doneDk { // dk does not hold the word: s = 0
			try(dk, dn*st.dsm[sdk]+cn*a.alpha[dk]*a.phi0[dk])
		}
		if b >= 0 && !doneB {
			p := cn * a.bestV[w]
			if sb >= 0 {
				p += dn * st.dsm[sb]
			}
			try(b, p)
		}
		pf := free/n + st.dacc[u]/n*dsF/samples + st.cacc[u]/n*a.wh[w].awF/a.wh[w].aw
		if pf > bp || bk < 0 {
			ch[u] = choice{"", pf}
		} else {
			ch[u] = choice{a.m.Scheme.Concepts[bk].IRI, bp}
		}
	}
	W := int32(len(a.m.Words))
	res.Words = make([]Word, 0, len(st.tu))
	for i := range toks {
		t := &toks[i]
		if t.ID < 0 || t.ID >= W {
			continue
		}
		u := st.uOf[t.ID]
		surface := ""
		if 0 <= t.Start && t.Start <= t.End && t.End <= len(text) {
			surface = text[t.Start:t.End]
		}
		res.Words = append(res.Words, Word{Start: t.Start, End: t.End, Text: surface, Term: t.Term,
			Concept: ch[u].iri, P: ch[u].p})
	}
}

// startExpected draws every token's first topic given the others' expected
// topic counts (grouped mode, no known subjects; see Start in the package
// comment). group has put E⁰_k = Σ_u n_u·α_k·s_kw/A_w, the record's
// expected tokens per topic from each word's own posterior (its list
// part), in st.tl[k].e0. Each step is one pass over the record's entries.
func (a *Annotator) startExpected(st *state, rng *splitMix) {
	T, U := len(st.bent), len(st.uw)
	if cap(st.startW) < T {
		st.startW = make([]float64, T)
	}
	g := st.startW[:T]
	if cap(st.startZ) < U {
		st.startZ = make([]float64, U)
	}
	Z := st.startZ[:U]
	tl, q := st.tl, a.q
	bent := st.bent
	// One step: v_k = (E0_k - own + α_k)·φ_kw on the word's list, own =
	// the token's own share α_k·s_kw/A_w; the rest (q) as α_k·φ⁰_k over
	// all topics. Then E1 from these weights. tl's e0 and e1 start at α_k.
	o := 0
	for u := range st.uw {
		n := int(st.un[u])
		inv := 1 / st.awu[u]
		z := q
		es := bent[o : o+n]
		gs := g[o : o+n]
		for j := range es {
			e := &es[j]
			t := &tl[e.k]
			v := (t.e0 - t.alpha*e.s*inv) * (t.phi0 + e.s)
			if v < 0 {
				v = 0
			}
			gs[j] = v
			z += v
		}
		Z[u] = z
		f := float64(st.ucnt[u]) / z
		for j := range es {
			tl[es[j].k].e1 += f * gs[j]
		}
		o += n
	}
	// Second step, from E1, kept as running sums per word type.
	o = 0
	for u := range st.uw {
		n := int(st.un[u])
		inv := 1 / Z[u]
		c := 0.0
		es := bent[o : o+n]
		gs := g[o : o+n]
		for j := range es {
			e := &es[j]
			t := &tl[e.k]
			v := (t.e1 - gs[j]*inv) * (t.phi0 + e.s)
			if v > 0 {
				c += v
			}
			gs[j] = c
		}
		Z[u] = c + q
		st.uo[u] = int32(o)
		o += n
	}
	// The start's distribution of each token, one sample for theta:
	// n_u·v²_k/Z² on the list (the running sums g and Z), n_u·q/Z² as
	// α_k·φ⁰_k.
	st.startOn = !noStartSample
	for i, u := range st.tu {
		o, n := int(st.uo[u]), int(st.un[u])
		x := uniform(rng) * Z[u]
		if n == 0 || x >= g[o+n-1] {
			st.z[i] = a.dense.draw(rng)
			continue
		}
		cum := g[o : o+n]
		// The first j with x < cum[j]: x < cum[n-1].
		st.z[i] = bent[o+searchSorted(cum[:n-1], x)].k
	}
}

// searchSorted returns how many entries of cum are at most x: the first j
// with x < cum[j], or len(cum). cum must be non-decreasing and x and cum
// non-negative (not NaN): their bit patterns then order as the numbers
// do, and the halving steps add a mask instead of branching on a
// comparison that goes either way half the time.
func searchSorted(cum []float64, x float64) int {
	n := len(cum)
	if n == 0 {
		return 0
	}
	xb := int64(math.Float64bits(x))
	base := 0
	for n > 1 {
		half := n >> 1
		// all ones when cum[base+half] ≤ x
		m := ^((xb - int64(math.Float64bits(cum[base+half]))) >> 63)
		base += half & int(m)
		n -= half
	}
	if int64(math.Float64bits(cum[base])) <= xb {
		base++
	}
	return base
}
