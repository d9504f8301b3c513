package report

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"termgrove/annotate"
	"termgrove/concepts"
	"termgrove/internal/records"
	"termgrove/model"
	"termgrove/terms"
)

// Annotator is what the report needs of annotate.Annotator.
type Annotator interface {
	Annotate(id, text string, opt annotate.Options) (*annotate.Result, error)
}

// GapOptions tune the gap report; zero values mean the defaults in brackets.
type GapOptions struct {
	// A concept counts as unused when its share of fitted tokens is below
	// MinShare [0.0005] or fewer than MinRecords [2] records use it (see
	// GapReport.RecordsBasis), unless a record carries it as a subject.
	MinShare   float64
	MinRecords int
	// TopWords per free topic [12]; Examples records per free topic [3].
	TopWords int
	Examples int
	// Candidates per concept [5], each seen at least MinCount [3] times
	// with lift at least MinLift [5], the concept holding a share of the
	// term's tokens of at least MinOwned [0.3] (at the lower end of its
	// 95% Wilson interval) and, when records are read, taking it in at
	// least MinRecords of them.
	Candidates int
	MinCount   int
	MinLift    float64
	MinOwned   float64
	// Lang picks labels shown ["en"].
	Lang string
	// Fields are the record fields read [title, text].
	Fields []string
	// RecordThreshold is the concept score from which a record counts as
	// using a concept [0.05].
	RecordThreshold float64
}

func (o *GapOptions) defaults() {
	if o.MinShare == 0 {
		o.MinShare = 0.0005
	}
	if o.MinRecords == 0 {
		o.MinRecords = 2
	}
	if o.TopWords == 0 {
		o.TopWords = 12
	}
	if o.Examples == 0 {
		o.Examples = 3
	}
	if o.Candidates == 0 {
		o.Candidates = 5
	}
	if o.MinCount == 0 {
		o.MinCount = 3
	}
	if o.MinLift == 0 {
		o.MinLift = 5
	}
	if o.MinOwned == 0 {
		o.MinOwned = 0.3
	}
	if o.Lang == "" {
		o.Lang = "en"
	}
	if o.RecordThreshold == 0 {
		o.RecordThreshold = 0.05
	}
}

// GapReport is the whole report. JSON names are part of the output format.
type GapReport struct {
	Scheme      string        `json:"scheme"`
	Concepts    int           `json:"concepts"`
	FreeTopics  int           `json:"free_topics"`
	Tokens      int64         `json:"tokens"`
	Records     int           `json:"records"`
	Tree        []*TreeNode   `json:"tree"`
	Unused      []UnusedGroup `json:"unused"`
	UnusedShare float64       `json:"unused_share"` // of the vocabulary's concepts
	Themes      []Theme       `json:"themes"`
	Candidates  []Candidate   `json:"candidates"`
	DeadLabels  []DeadLabel   `json:"dead_labels"`
	// NamesDropped counts candidate labels left out because the records
	// write them with a capital inside sentences (names, not subjects).
	NamesDropped int `json:"candidate_names_dropped"`
	// RecordsBasis says what the records of a concept count: "score",
	// records whose scores for the concept and those below it sum to at
	// least RecordThreshold or that carry one of them as a subject; or
	// "tokens" (no records given), records any of whose tokens the fitted
	// model gave the concept or one below it.
	RecordsBasis string  `json:"records_basis"`
	Trends       *Trends `json:"trends,omitempty"`
	TrendsAbsent string  `json:"trends_absent,omitempty"` // why there is no trends section
}

// TreeNode is one concept in the hierarchy with its use. Children are
// shown under every broader concept (a poly-hierarchy repeats them).
type TreeNode struct {
	IRI      string      `json:"iri"`
	Label    string      `json:"label"`
	Share    float64     `json:"share"`   // own fitted token share
	Subtree  float64     `json:"subtree"` // share of the concept and all below it
	Records  int         `json:"records"` // records whose tokens it took
	Unused   bool        `json:"unused"`  // below the thresholds
	Children []*TreeNode `json:"children,omitempty"`
}

// UnusedGroup lists the unused concepts under one top concept.
type UnusedGroup struct {
	Top      string          `json:"top"`
	TopLabel string          `json:"top_label"`
	Concepts []UnusedConcept `json:"concepts"`
}

// UnusedConcept is a concept the collection never or hardly uses.
type UnusedConcept struct {
	IRI     string  `json:"iri"`
	Label   string  `json:"label"`
	Share   float64 `json:"share"`   // with its narrower concepts
	Records int     `json:"records"` // with its narrower concepts
}

// Theme is one free topic.
type Theme struct {
	Topic    int         `json:"topic"`
	Share    float64     `json:"share"` // of all fitted tokens
	Words    []WordShare `json:"words"`
	Examples []Example   `json:"examples,omitempty"`
	// Nearest is the concept whose learned word distribution is closest
	// (Hellinger distance): a place the theme might go.
	Nearest      string  `json:"nearest"`
	NearestLabel string  `json:"nearest_label"`
	Hellinger    float64 `json:"hellinger"`
}

// WordShare is a term and its probability in a topic.
type WordShare struct {
	Term string  `json:"term"`
	P    float64 `json:"p"`
	// Text is the form the records write the term in most often, lower
	// case ("harrowmere" for the stem "harrowmer"); empty without records.
	Text string `json:"text,omitempty"`
	word int32
}

// Example is a record that a free topic explains well.
type Example struct {
	ID      string  `json:"id"`
	Title   string  `json:"title"`
	Weight  float64 `json:"weight"` // share of the record's tokens the theme explains
	Snippet string  `json:"snippet"`
}

// Candidate is a corpus term strongly tied to a concept that is none of its labels.
type Candidate struct {
	IRI   string  `json:"iri"`
	Label string  `json:"label"`
	Term  string  `json:"term"`
	Text  string  `json:"text,omitempty"` // the records' commonest form of the term, lower case
	Count int32   `json:"count"`          // tokens of the term the concept took
	Lift  float64 `json:"lift"`           // φ_cw over the prior's β_cw/B_c
	PConc float64 `json:"p_concept"`      // share of the term's tokens taken by the concept
	// Records in which the annotator gives the term to the concept (0 when
	// no records were read).
	Records int     `json:"records"`
	word    int32   // the term's word id
	concept int     // the concept's index
	owned   float64 // lower end of PConc's 95% Wilson interval
	// Records holding the term that carry subjects, and those of them
	// that carry the concept or one below it.
	indexed, indexedAs int
}

// DeadLabel is a preferred, alternative or hidden label whose term (the
// phrase term of a label of several words) the corpus never holds.
type DeadLabel struct {
	IRI   string `json:"iri"`
	Label string `json:"label"` // the concept's label
	Term  string `json:"term"`
	Text  string `json:"text"` // the label as written
	Lang  string `json:"lang"`
}

// Trends is concept use over time.
type Trends struct {
	Years  []int         `json:"years"`
	Series []TrendSeries `json:"series"` // the concepts that rose or fell most, and the busiest
}

// TrendSeries is one concept's share of tokens per year (same order as Years).
type TrendSeries struct {
	IRI    string    `json:"iri"`
	Label  string    `json:"label"`
	Shares []float64 `json:"shares"`
	Slope  float64   `json:"slope"` // least-squares change of share per decade
	Kind   string    `json:"kind"`  // "rising", "falling" or "busiest"
}

// ErrNoModel is returned for a nil or empty model.
var ErrNoModel = errors.New("report: model has no topics")

// ErrOptions: an option of Score or Gaps is out of range.
var ErrOptions = errors.New("report: bad option")

// Gaps builds the gap report from a model and, when recs is non-empty, the
// records (with an annotator for per-record concept use). It does not
// change the model.
func Gaps(m *model.Model, a Annotator, recs []records.Record, opt GapOptions) (*GapReport, error) {
	opt.defaults()
	if m == nil || m.K() == 0 || len(m.Totals) != m.K() {
		return nil, ErrNoModel
	}
	s := m.Scheme
	if s == nil {
		s = &concepts.Scheme{}
	}
	var total int64
	for _, n := range m.Totals {
		total += n
	}
	g := &GapReport{Scheme: s.IRI, Concepts: m.C, FreeTopics: m.F, Tokens: total, Records: len(recs)}
	label := func(c int) string { return s.Concepts[c].PrefLabel(opt.Lang) }
	share := func(k int) float64 {
		if total == 0 {
			return 0
		}
		return float64(m.Totals[k]) / float64(total)
	}
	docs := func(k int) int {
		if k < len(m.DocCounts) {
			return int(m.DocCounts[k])
		}
		return 0
	}
	wordTotal := make([]int64, m.W())
	for _, row := range m.Counts {
		for _, wc := range row {
			wordTotal[wc.Word] += int64(wc.Count)
		}
	}
	// (d) dead labels, and the pool of candidate labels (c).
	pool, err := candidatePool(g, m, wordTotal, label, opt)
	if err != nil {
		return nil, err
	}

	// A broader concept whose narrower concepts are used is no gap: the
	// thresholds apply to the concept together with everything below it.
	subShare, subDocs := subtreeTotals(s, m.C, share, docs)
	indexed := make([]int, len(subDocs))
	g.RecordsBasis = "tokens"
	var use *recordUse
	if len(recs) > 0 && a != nil {
		// A concept the model lent a few stray tokens in many records (a
		// label word used in another sense, a rare word the smoothing floor
		// of a nearly empty topic attracts) is still unused: with the
		// records at hand, count only those about it.
		if use, err = useByRecord(m, s, a, recs, pool, opt); err != nil {
			return nil, err
		}
		subDocs, indexed = use.records, use.indexed
		g.RecordsBasis = "score"
	}
	// What people indexed with is in use, however little text it holds.
	unused := func(c int) bool {
		return indexed[c] == 0 && (subShare[c] < opt.MinShare || subDocs[c] < opt.MinRecords)
	}

	// (a) unused concepts, grouped under their top concepts, and the tree.
	g.Tree = buildTree(s, m.C, label, share, subShare, subDocs, unused)
	groups := map[int]*UnusedGroup{}
	var order []int
	nUnused := 0
	for c := 0; c < m.C && c < len(s.Concepts); c++ {
		if s.Concepts[c].Deprecated || !unused(c) {
			continue
		}
		nUnused++
		top := topOf(s, c)
		grp := groups[top]
		if grp == nil {
			grp = &UnusedGroup{Top: s.Concepts[top].IRI, TopLabel: label(top)}
			groups[top] = grp
			order = append(order, top)
		}
		grp.Concepts = append(grp.Concepts, UnusedConcept{IRI: s.Concepts[c].IRI, Label: label(c), Share: subShare[c], Records: subDocs[c]})
	}
	sort.Slice(order, func(i, j int) bool { return label(order[i]) < label(order[j]) })
	for _, t := range order {
		g.Unused = append(g.Unused, *groups[t])
	}
	if m.C > 0 {
		g.UnusedShare = float64(nUnused) / float64(m.C)
	}

	// (b) free topics with their nearest concept.
	for f := m.C; f < m.K(); f++ {
		th := Theme{Topic: f - m.C, Share: share(f)}
		for _, ww := range m.TopWords(f, opt.TopWords) {
			th.Words = append(th.Words, WordShare{Term: m.Words[ww.Word], P: ww.Weight, word: ww.Word})
		}
		if c, h, ok := nearestConcept(m, f); ok {
			th.Nearest, th.NearestLabel, th.Hellinger = s.Concepts[c].IRI, label(c), h
		}
		g.Themes = append(g.Themes, th)
	}
	sort.SliceStable(g.Themes, func(i, j int) bool { return g.Themes[i].Share > g.Themes[j].Share })

	// (c) candidate labels: with records, ranked once they have also told
	// which terms are names.
	g.Candidates = rankCandidates(pool, use != nil, opt)

	// Per-record use: examples of themes and trends.
	if len(recs) == 0 {
		g.TrendsAbsent = "no records given: pass the records the model was fitted on (--records) for example records and use over time"
		return g, nil
	}
	if err := perRecord(g, m, use, pool, recs, opt, label); err != nil {
		return nil, err
	}
	return g, nil
}

// recordUse is what annotating every record once tells about concept use.
type recordUse struct {
	// records[c]: records whose scores for c and the concepts below it sum
	// to at least RecordThreshold, or that carry one of them as a subject.
	records []int
	// indexed[c]: records that carry c or a concept below it as a subject.
	indexed []int
	// Tokens per year and, per year, tokens per concept (own score times
	// the record's tokens), from the dated records.
	yearTok     map[int]float64
	yearConcept map[int]map[int]float64
	dated       int
}

// useByRecord annotates each record in its own language and credits every
// concept's score to the concept and each of its broader concepts once
// (poly-hierarchy: once, however many routes lead up). It also counts, for
// each candidate of pool, the records in which the annotator gives one of
// the term's occurrences to the candidate's concept, and the records
// holding the term that carry subjects (with or without the concept).
func useByRecord(m *model.Model, s *concepts.Scheme, a Annotator, recs []records.Record, pool []Candidate, opt GapOptions) (*recordUse, error) {
	n := min(len(s.Concepts), m.C)
	u := &recordUse{records: make([]int, n), indexed: make([]int, n),
		yearTok: map[int]float64{}, yearConcept: map[int]map[int]float64{}}
	sum := make([]float64, n)
	carried := make([]bool, n)
	mark := make([]int, n) // mark[x] == gen: x already credited for this concept
	gen := 0
	var touched, stack []int
	// Candidates by concept IRI and term, and the record that last counted each.
	type pair struct{ iri, term string }
	cand := make(map[pair]int, len(pool))
	byTerm := map[string][]int{}
	for i, cd := range pool {
		cand[pair{cd.IRI, cd.Term}] = i
		byTerm[cd.Term] = append(byTerm[cd.Term], i)
	}
	counted := make([]int, len(pool))
	seen := make([]int, len(pool))
	up := func(c int, fn func(x int)) {
		gen++
		stack = append(stack[:0], c)
		mark[c] = gen
		for len(stack) > 0 {
			x := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			fn(x)
			for _, b := range s.Concepts[x].Broader {
				if b < n && mark[b] != gen {
					mark[b] = gen
					stack = append(stack, b)
				}
			}
		}
	}
	touch := func(x int) {
		if sum[x] == 0 && !carried[x] {
			touched = append(touched, x)
		}
	}
	for ri := range recs {
		r := &recs[ri]
		res, err := a.Annotate(r.ID, r.Join(opt.Fields), annotate.Options{Top: m.C, MinScore: opt.RecordThreshold / 10,
			Language: r.Lang, IncludeWords: len(pool) > 0, Uncalibrated: true})
		if err != nil {
			return nil, fmt.Errorf("record %s: %w", r.ID, err)
		}
		for _, w := range res.Words {
			if i, ok := cand[pair{w.Concept, w.Term}]; ok && counted[i] != ri+1 {
				counted[i] = ri + 1
				pool[i].Records++
			}
		}
		touched = touched[:0]
		year, dated := parseYear(r.Date)
		var yc map[int]float64
		if dated {
			u.dated++
			u.yearTok[year] += float64(res.Tokens)
			if yc = u.yearConcept[year]; yc == nil {
				yc = map[int]float64{}
				u.yearConcept[year] = yc
			}
		}
		for _, c := range res.Concepts {
			i, ok := m.ConceptIndex(c.IRI)
			if !ok || i >= n || c.Score <= 0 {
				continue
			}
			if dated {
				yc[i] += c.Score * float64(res.Tokens)
			}
			up(i, func(x int) { touch(x); sum[x] += c.Score })
		}
		subjects := false
		for _, iri := range r.Subjects {
			if i, ok := m.ConceptIndex(iri); ok && i < n {
				up(i, func(x int) { touch(x); carried[x] = true })
				subjects = true
			}
		}
		if subjects {
			for _, w := range res.Words {
				for _, i := range byTerm[w.Term] {
					if seen[i] != ri+1 {
						seen[i] = ri + 1
						pool[i].indexed++
						if carried[pool[i].concept] {
							pool[i].indexedAs++
						}
					}
				}
			}
		}
		for _, x := range touched {
			if carried[x] {
				u.indexed[x]++
			}
			if carried[x] || sum[x] >= opt.RecordThreshold {
				u.records[x]++
			}
			sum[x], carried[x] = 0, false
		}
	}
	return u, nil
}

// candidatePool lists, per concept, the terms it took that might be
// labels it lacks, and fills g.DeadLabels. A term is left out when
//   - it is a term of the concept's own prior (labels and notes),
//   - it is a label term of another concept: it names that one already,
//     so the model's choice between the two is no missing label,
//   - it is no word: numbers, dates, ordinals and abbreviations ("1st",
//     "1947", "p.m") are no subject terms,
//   - the concept took fewer than MinCount of its tokens or its lift is
//     below MinLift,
//   - the share of its tokens the concept took is below MinOwned at the
//     lower end of its 95% Wilson score interval: a frequent word of which
//     a small concept took 3 of 7 uses ("must", "great") is chance, a word
//     it took 6 of 6 times is not.
func candidatePool(g *GapReport, m *model.Model, wordTotal []int64, label func(int) string, opt GapOptions) ([]Candidate, error) {
	s := m.Scheme
	isLabel, dead, err := labelTerms(m, wordTotal)
	if err != nil {
		return nil, err
	}
	for _, d := range dead {
		d.Label = label(d.concept)
		g.DeadLabels = append(g.DeadLabels, d.DeadLabel)
	}
	var pool []Candidate
	for c := 0; c < m.C && c < len(m.Prior) && c < len(s.Concepts); c++ {
		own := map[int32]bool{}
		for _, e := range m.Prior[c] {
			own[e.Word] = true
		}
		den := float64(m.Totals[c]) + m.BetaSum(c)
		floor := m.Beta0 / m.BetaSum(c) // prior probability of a non-label word
		for _, wc := range m.Counts[c] {
			if own[wc.Word] || isLabel[wc.Word] || wc.Count < int32(opt.MinCount) || !wordLike(m.Words[wc.Word]) {
				continue
			}
			lift := (float64(wc.Count) + m.Beta0) / den / floor
			owned := wilsonLower(float64(wc.Count), float64(wordTotal[wc.Word]))
			if lift < opt.MinLift || owned < opt.MinOwned {
				continue
			}
			pool = append(pool, Candidate{IRI: s.Concepts[c].IRI, Label: label(c), Term: m.Words[wc.Word],
				Count: wc.Count, Lift: lift, PConc: float64(wc.Count) / float64(wordTotal[wc.Word]),
				word: wc.Word, concept: c, owned: owned})
		}
	}
	return pool, nil
}

// rankCandidates keeps, when records were read, the terms their concept
// took in at least MinRecords of them (one text's habit is no label) and
// that the indexers did not pass over: when at least MinRecords records
// holding the term carry subjects and none carries the concept or one
// below it, the people who read those records judged otherwise. Then it
// keeps the best Candidates per concept by owned share (lower end) times
// log(1 + count), most seen first overall.
func rankCandidates(pool []Candidate, counted bool, opt GapOptions) []Candidate {
	var kept []Candidate
	for _, cd := range pool {
		if counted && (cd.Records < opt.MinRecords || cd.indexed >= opt.MinRecords && cd.indexedAs == 0) {
			continue
		}
		kept = append(kept, cd)
	}
	rank := func(cd Candidate) float64 { return cd.owned * math.Log1p(float64(cd.Count)) }
	sort.SliceStable(kept, func(i, j int) bool {
		a, b := kept[i], kept[j]
		if a.concept != b.concept {
			return a.concept < b.concept
		}
		if ra, rb := rank(a), rank(b); ra != rb {
			return ra > rb
		}
		return a.Term < b.Term
	})
	out := kept[:0]
	for i, cd := range kept {
		if i >= opt.Candidates && kept[i-opt.Candidates].concept == cd.concept {
			continue
		}
		out = append(out, cd)
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Count > out[j].Count })
	return out
}

type deadLabel struct {
	DeadLabel
	concept int
}

// labelTerms marks the terms of every concept's preferred, alternative and
// hidden labels: each label's words and, for a label of several words,
// its phrase term, analysed as the prior analysed them. It also returns the
// labels, in the model's languages, of current concepts whose own term
// (the phrase term of a label of several words) the corpus never holds.
func labelTerms(m *model.Model, wordTotal []int64) ([]bool, []deadLabel, error) {
	is := make([]bool, m.W())
	if m.Scheme == nil || m.W() == 0 {
		return is, nil, nil
	}
	an, err := m.NewAnalyzer()
	if err != nil {
		return nil, nil, err
	}
	langs := map[string]bool{}
	for _, l := range m.Analyzer.Languages {
		langs[primaryTag(l)] = true
	}
	var toks []terms.Token
	var dead []deadLabel
	for ci := range m.Scheme.Concepts {
		c := &m.Scheme.Concepts[ci]
		for _, ls := range [][]concepts.Label{c.Pref, c.Alt, c.Hidden} {
			for _, l := range ls {
				toks, _ = an.AnalyzeWords(l.Text, l.Lang, toks[:0], false)
				for _, t := range toks {
					if t.ID >= 0 && int(t.ID) < len(is) {
						is[t.ID] = true
					}
				}
				toks, _ = an.AnalyzeLang(l.Text, l.Lang, toks[:0], false)
				if len(toks) == 1 && toks[0].ID >= 0 && int(toks[0].ID) < len(is) {
					is[toks[0].ID] = true
				}
				if ci >= m.C || c.Deprecated || len(toks) == 0 || (len(langs) > 0 && l.Lang != "" && !langs[primaryTag(l.Lang)]) {
					continue
				}
				// A label of several words that does not read as one
				// phrase term has no term of its own in the model.
				if len(toks) > 1 || toks[0].ID < 0 || int(toks[0].ID) >= len(wordTotal) || wordTotal[toks[0].ID] == 0 {
					d := deadLabel{DeadLabel{IRI: c.IRI, Text: l.Text, Lang: l.Lang}, ci}
					if len(toks) == 1 {
						d.Term = toks[0].Term
					}
					dead = append(dead, d)
				}
			}
		}
	}
	return is, dead, nil
}

// primaryTag is the primary language subtag, lower case: "fr" for "fr-CA".
func primaryTag(tag string) string {
	tag = strings.ToLower(tag)
	if i := strings.IndexAny(tag, "-_"); i >= 0 {
		tag = tag[:i]
	}
	return tag
}

// wordLike reports whether a term is made of letters, with single
// spaces, hyphens or apostrophes between them.
func wordLike(term string) bool {
	prev := ' '
	for _, r := range term {
		switch {
		case unicode.IsLetter(r) || unicode.IsMark(r):
		case (r == ' ' || r == '-' || r == '\'') && (unicode.IsLetter(prev) || unicode.IsMark(prev)):
		default:
			return false
		}
		prev = r
	}
	return term != "" && (unicode.IsLetter(prev) || unicode.IsMark(prev))
}

// wilsonLower is the lower end of the 95% Wilson score interval for k
// successes in n trials (0 when n is 0). From memory: E. B. Wilson,
// "Probable inference, the law of succession, and statistical
// inference", JASA 22 (1927) 209-212:
//
//	(p + z²/2n − z·sqrt(p(1−p)/n + z²/4n²)) / (1 + z²/n),  z = 1.96.
func wilsonLower(k, n float64) float64 {
	if n <= 0 {
		return 0
	}
	const z = 1.959963984540054
	p := k / n
	return (p + z*z/(2*n) - z*math.Sqrt(p*(1-p)/n+z*z/(4*n*n))) / (1 + z*z/n)
}

// topOf follows the first broader link up to a concept with none (cycle-safe).
func topOf(s *concepts.Scheme, c int) int {
	seen := map[int]bool{}
	for len(s.Concepts[c].Broader) > 0 && !seen[c] {
		seen[c] = true
		c = s.Concepts[c].Broader[0]
	}
	return c
}

// subtreeTotals adds every concept's own share and record count to each of
// its ancestors, once per ancestor even in a poly-hierarchy (cycle-safe):
// O(Σ ancestors), not O(concepts²).
func subtreeTotals(s *concepts.Scheme, C int, share func(int) float64, docs func(int) int) ([]float64, []int) {
	n := min(len(s.Concepts), C)
	subShare := make([]float64, n)
	subDocs := make([]int, n)
	seen := make([]int, n) // seen[a] == c+1: a already credited for c
	var stack []int
	for c := 0; c < n; c++ {
		sh, d := share(c), docs(c)
		stack = append(stack[:0], c)
		seen[c] = c + 1
		for len(stack) > 0 {
			a := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			subShare[a] += sh
			subDocs[a] += d
			for _, b := range s.Concepts[a].Broader {
				if b < n && seen[b] != c+1 {
					seen[b] = c + 1
					stack = append(stack, b)
				}
			}
		}
	}
	return subShare, subDocs
}

// buildTree lays the concepts out from the roots down; a concept with
// several broader concepts appears under each.
func buildTree(s *concepts.Scheme, C int, label func(int) string, share func(int) float64, subShare []float64, subDocs []int, unused func(int) bool) []*TreeNode {
	n := min(len(s.Concepts), C)
	var node func(c int, path map[int]bool) *TreeNode
	node = func(c int, path map[int]bool) *TreeNode {
		t := &TreeNode{IRI: s.Concepts[c].IRI, Label: label(c), Share: share(c), Subtree: subShare[c], Records: subDocs[c], Unused: unused(c)}
		path[c] = true
		for _, ch := range s.Concepts[c].Narrower {
			if ch < n && !path[ch] {
				t.Children = append(t.Children, node(ch, path))
			}
		}
		delete(path, c)
		sort.Slice(t.Children, func(i, j int) bool { return t.Children[i].Label < t.Children[j].Label })
		return t
	}
	var roots []*TreeNode
	for c := 0; c < n; c++ {
		if len(s.Concepts[c].Broader) == 0 && !s.Concepts[c].Deprecated {
			roots = append(roots, node(c, map[int]bool{}))
		}
	}
	sort.Slice(roots, func(i, j int) bool { return roots[i].Label < roots[j].Label })
	return roots
}

// nearestConcept returns the concept topic c minimising the Hellinger
// distance H(φ_f, φ_c) = sqrt(1 − Σ_w sqrt(φ_fw φ_cw)) among the concepts
// that hold at least minLearned tokens (all, when none does). A concept
// the corpus hardly uses has no learned distribution, only its flat prior,
// which is close to any broad theme: on the demo the beekeeping theme was
// sent to Mining. φ_c is a floor
// β0/(n_c+B_c) plus a sparse part, so the Bhattacharyya sum costs O(nnz):
// Σ_w sqrt(φ_fw·floor) + Σ_{w sparse} (sqrt(φ_fw·φ_cw) − sqrt(φ_fw·floor)).
func nearestConcept(m *model.Model, f int) (int, float64, bool) {
	const minLearned = 10
	W := m.W()
	if m.C == 0 || W == 0 {
		return 0, 0, false
	}
	phiF := make([]float64, W)
	denF := float64(m.Totals[f]) + m.BetaSum(f)
	for w := range phiF {
		phiF[w] = m.Beta0 / denF
	}
	m.EachWord(f, func(w int32, num float64) { phiF[w] = num / denF })
	sqrtF := 0.0
	for _, p := range phiF {
		sqrtF += math.Sqrt(p)
	}
	best, bestBC := -1, -1.0
	learned := false
	for c := 0; c < m.C; c++ {
		learned = learned || m.Totals[c] >= minLearned
	}
	for c := 0; c < m.C; c++ {
		if learned && m.Totals[c] < minLearned {
			continue
		}
		den := float64(m.Totals[c]) + m.BetaSum(c)
		floor := m.Beta0 / den
		bc := math.Sqrt(floor) * sqrtF
		m.EachWord(c, func(w int32, num float64) {
			bc += math.Sqrt(phiF[w]*num/den) - math.Sqrt(phiF[w]*floor)
		})
		if bc > bestBC {
			best, bestBC = c, bc
		}
	}
	return best, math.Sqrt(math.Max(0, 1-math.Min(1, bestBC))), true
}

// perRecord finds example records for the themes, drops names from the
// candidate labels of pool before ranking them and, from use (nil without
// an annotator), draws the trends.
func perRecord(g *GapReport, m *model.Model, use *recordUse, pool []Candidate, recs []records.Record, opt GapOptions, label func(int) string) error {
	fields := opt.Fields
	// Theme examples use the responsibility of each free topic for the
	// record's known words under the model's document-independent prior,
	// p(f | w) ∝ α_f φ_fw: cheap, and it names records by what they say.
	an, err := m.NewAnalyzer()
	if err != nil {
		return err
	}
	type ex struct {
		rec int
		w   float64
	}
	examples := make([][]ex, m.F)
	resp := freeResponsibility(m)
	var toks []terms.Token
	// The forms the records write the shown terms in, to show "harrowmere"
	// rather than the stem "harrowmer".
	forms := map[int32]map[string]int{}
	for _, c := range pool {
		forms[c.word] = map[string]int{}
	}
	for _, th := range g.Themes {
		for _, w := range th.Words {
			forms[w.word] = map[string]int{}
		}
	}
	// Per word type: occurrences inside a sentence, and how many of them
	// start with a capital — names of people, farms and places, which are
	// no labels for a concept however strongly they cling to one.
	inner := make([]int32, m.W())
	capital := make([]int32, m.W())
	for ri := range recs {
		r := &recs[ri]
		text := r.Join(fields)
		// Each record in its own language, as fit read it: French read as
		// English keeps "les" and "des" as words.
		toks, _ = an.AnalyzeLang(text, r.Lang, toks[:0], false)
		for _, t := range toks {
			if f, ok := forms[t.ID]; ok && t.ID >= 0 {
				f[strings.ToLower(strings.Join(strings.Fields(text[t.Start:t.End]), " "))]++
			}
			if t.ID < 0 || sentenceStart(text, t.Start) {
				continue
			}
			inner[t.ID]++
			if r, _ := utf8.DecodeRuneInString(text[t.Start:]); unicode.IsUpper(r) {
				capital[t.ID]++
			}
		}
		if m.F > 0 {
			acc := make([]float64, m.F)
			n := 0
			for _, t := range toks {
				if t.ID < 0 {
					continue
				}
				n++
				row := resp[int(t.ID)*m.F : int(t.ID+1)*m.F]
				for f, v := range row {
					acc[f] += v
				}
			}
			if n > 0 {
				for f := range acc {
					examples[f] = append(examples[f], ex{ri, acc[f] / float64(n)})
				}
			}
		}
	}
	for i := range g.Themes {
		for j := range g.Themes[i].Words {
			g.Themes[i].Words[j].Text = commonest(forms[g.Themes[i].Words[j].word])
		}
	}
	var kept []Candidate
	for _, c := range pool {
		c.Text = commonest(forms[c.word])
		if w := c.word; inner[w] >= 3 && float64(capital[w]) >= 0.8*float64(inner[w]) {
			if use == nil || c.Records >= opt.MinRecords {
				g.NamesDropped++
			}
			continue
		}
		kept = append(kept, c)
	}
	g.Candidates = rankCandidates(kept, use != nil, opt)
	for _, th := range g.Themes {
		list := examples[th.Topic]
		sort.Slice(list, func(i, j int) bool {
			if list[i].w != list[j].w {
				return list[i].w > list[j].w
			}
			return list[i].rec < list[j].rec
		})
		for i := 0; i < len(list) && i < opt.Examples; i++ {
			r := &recs[list[i].rec]
			g.Themes[indexOfTheme(g.Themes, th.Topic)].Examples = append(g.Themes[indexOfTheme(g.Themes, th.Topic)].Examples,
				Example{ID: r.ID, Title: r.Title, Weight: list[i].w, Snippet: snippet(r.Join(fields), 160)})
		}
	}
	if use == nil {
		g.TrendsAbsent = "no annotator given: use over time needs the records annotated"
		return nil
	}
	if use.dated == 0 {
		g.TrendsAbsent = "no record carries a date (field \"date\": YYYY or YYYY-MM-DD), so use over time cannot be shown"
		return nil
	}
	g.Trends = trends(m, use.yearTok, use.yearConcept, label)
	if g.Trends == nil {
		g.TrendsAbsent = "records span a single year: use over time needs at least two"
	}
	return nil
}

// commonest returns the most frequent form (ties: the shorter, then the
// first in byte order), or "" for none.
func commonest(forms map[string]int) string {
	best, n := "", 0
	for f, k := range forms {
		if k > n || k == n && (len(f) < len(best) || len(f) == len(best) && f < best) {
			best, n = f, k
		}
	}
	return best
}

func indexOfTheme(ts []Theme, topic int) int {
	for i := range ts {
		if ts[i].Topic == topic {
			return i
		}
	}
	return 0
}

// trends bins years into decades when they span more than 30 years, and
// picks the concepts whose share rose and fell most (least-squares slope)
// and the busiest ones.
func trends(m *model.Model, yearTok map[int]float64, yearConcept map[int]map[int]float64, label func(int) string) *Trends {
	bin := func(y int) int { return y }
	var years []int
	for y := range yearTok {
		years = append(years, y)
	}
	sort.Ints(years)
	if len(years) < 2 {
		return nil
	}
	if years[len(years)-1]-years[0] > 30 {
		bin = func(y int) int { return y / 10 * 10 }
	}
	tok := map[int]float64{}
	conc := map[int]map[int]float64{}
	for y, n := range yearTok {
		b := bin(y)
		tok[b] += n
		if conc[b] == nil {
			conc[b] = map[int]float64{}
		}
		for c, v := range yearConcept[y] {
			conc[b][c] += v
		}
	}
	var bins []int
	for b := range tok {
		bins = append(bins, b)
	}
	sort.Ints(bins)
	if len(bins) < 2 {
		return nil
	}
	type row struct {
		c      int
		shares []float64
		slope  float64
		mass   float64
	}
	var rows []row
	for c := 0; c < m.C; c++ {
		r := row{c: c, shares: make([]float64, len(bins))}
		for i, b := range bins {
			if tok[b] > 0 {
				r.shares[i] = conc[b][c] / tok[b]
			}
			r.mass += conc[b][c]
		}
		if r.mass == 0 {
			continue
		}
		r.slope = slope(bins, r.shares) * 10
		rows = append(rows, r)
	}
	t := &Trends{Years: bins}
	pick := func(kind string, less func(a, b row) bool, n int) {
		sort.Slice(rows, func(i, j int) bool {
			if less(rows[i], rows[j]) != less(rows[j], rows[i]) {
				return less(rows[i], rows[j])
			}
			return rows[i].c < rows[j].c
		})
		taken := 0
		for _, r := range rows {
			if taken == n {
				break
			}
			dup := false
			for _, s := range t.Series {
				if s.IRI == m.Scheme.Concepts[r.c].IRI {
					dup = true
				}
			}
			if dup || (kind == "rising" && r.slope <= 0) || (kind == "falling" && r.slope >= 0) {
				continue
			}
			t.Series = append(t.Series, TrendSeries{IRI: m.Scheme.Concepts[r.c].IRI, Label: label(r.c), Shares: r.shares, Slope: r.slope, Kind: kind})
			taken++
		}
	}
	pick("rising", func(a, b row) bool { return a.slope > b.slope }, 5)
	pick("falling", func(a, b row) bool { return a.slope < b.slope }, 5)
	pick("busiest", func(a, b row) bool { return a.mass > b.mass }, 5)
	return t
}

func slope(xs []int, ys []float64) float64 {
	n := float64(len(xs))
	var sx, sy, sxx, sxy float64
	for i, x := range xs {
		fx := float64(x)
		sx += fx
		sy += ys[i]
		sxx += fx * fx
		sxy += fx * ys[i]
	}
	d := n*sxx - sx*sx
	if d == 0 {
		return 0
	}
	return (n*sxy - sx*sy) / d
}

// parseYear reads the year of "1923", "1923-04" or "1923-04-17".
func parseYear(date string) (int, bool) {
	date = strings.TrimSpace(date)
	if len(date) < 4 {
		return 0, false
	}
	y, err := strconv.Atoi(date[:4])
	if err != nil || y < 1 {
		return 0, false
	}
	if len(date) > 4 && date[4] != '-' {
		return 0, false
	}
	return y, true
}

func snippet(s string, n int) string {
	s = strings.Join(strings.Fields(s), " ")
	if len(s) <= n {
		return s
	}
	cut := n
	for cut > 0 && (s[cut]&0xC0) == 0x80 {
		cut--
	}
	if i := strings.LastIndexByte(s[:cut], ' '); i > n/2 {
		cut = i
	}
	return s[:cut] + "…"
}

// freeResponsibility returns, flat by word then free topic, p(f | w) =
// α_f φ_fw / Σ_k α_k φ_kw. The denominator is a dense floor Σ_k α_k β0/(n_k+B_k)
// plus sparse terms over each topic's counted and prior words, so it costs
// O(W·F + nnz), not O(W·K).
func freeResponsibility(m *model.Model) []float64 {
	W, K := m.W(), m.K()
	den := make([]float64, W)
	base := 0.0
	for k := 0; k < K; k++ {
		d := float64(m.Totals[k]) + m.BetaSum(k)
		base += m.Alpha[k] * m.Beta0 / d
		for _, wc := range m.Counts[k] {
			den[wc.Word] += m.Alpha[k] * float64(wc.Count) / d
		}
		if k < len(m.Prior) {
			for _, e := range m.Prior[k] {
				den[e.Word] += m.Alpha[k] * m.Lambda * e.Weight / d
			}
		}
	}
	out := make([]float64, W*m.F)
	for f := 0; f < m.F; f++ {
		k := m.C + f
		d := float64(m.Totals[k]) + m.BetaSum(k)
		floor := m.Alpha[k] * m.Beta0 / d
		for w := 0; w < W; w++ {
			out[w*m.F+f] = floor
		}
		for _, wc := range m.Counts[k] {
			out[int(wc.Word)*m.F+f] += m.Alpha[k] * float64(wc.Count) / d
		}
	}
	for w := 0; w < W; w++ {
		z := base + den[w]
		for f := 0; f < m.F; f++ {
			out[w*m.F+f] /= z
		}
	}
	return out
}

// sentenceStart reports whether the word at byte i opens a sentence: only
// spaces, quotes or brackets stand between it and the text's start or a
// full stop, question or exclamation mark, colon or line break.
func sentenceStart(text string, i int) bool {
	for j := i - 1; j >= 0; j-- {
		switch text[j] {
		case ' ', '\t', '"', '\'', '(', '[':
			continue
		case '.', '!', '?', ':', '\n', '\r':
			return true
		}
		return false
	}
	return true
}
