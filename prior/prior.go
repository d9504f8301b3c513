// Package prior turns each concept's labels into a Dirichlet prior row over
// word types: β[k][w] = β0 + λ·π[k][w] (see DESIGN.md, "The model").
//
// π[k] is a distribution over the terms of concept k's labels, each source
// with its weight before normalisation:
//
//	prefLabel "Screen readers"@en     -> "screen reader" 1.0, "screen" 0.5, "reader" 0.5
//	altLabel  "Talking browsers"@en   -> "talk browser" 0.6, "talk" 0.3, "browser" 0.3
//	definition "Software that reads…" -> "softwar" 0.1, "read" 0.1, …
//
// A label of n ≥ 2 words gives its phrase term the source weight and each of
// its words weight/n; a note gives each of its content words (phrases
// included) the note weight. Notations are never terms.
//
// CONTRACT (fit and model code against these names; keep them):
//
//	p, err := prior.Build(scheme, analyzer, prior.Options{})
//	row := p.Rows[k] // sparse, sorted by Word, weights sum to 1 (empty: no terms)
package prior

import (
	"errors"
	"fmt"
	"slices"
	"strings"

	"termgrove/concepts"
	"termgrove/terms"
)

// Defaults of Options.
const (
	// DefaultLambda is the prior strength in pseudo-counts per concept: about
	// one or two records' worth of words. A concept topic that the corpus
	// gives few tokens is decided by its labels; one with hundreds of tokens
	// is shaped by its records, so labels guide without dominating.
	DefaultLambda = 50
	// DefaultBeta0 is the flat base for every topic and word. Its total mass
	// per topic is β0·W (1,000 pseudo-counts at W = 100,000 word types), so
	// against λ = 50 a label term of weight 0.5 is still 2,500 times as
	// likely a priori as a word outside the labels.
	DefaultBeta0 = 0.01

	DefaultWeightPref   = 1.0
	DefaultWeightAlt    = 0.6
	DefaultWeightHidden = 0.4
	DefaultWeightNote   = 0.1
	// DefaultInheritLevels is how many levels of narrower concepts
	// InheritDecay reaches when InheritLevels is 0.
	DefaultInheritLevels = 2
	// SharedTop is how many of the most shared terms Report lists.
	SharedTop = 20
)

// ErrOptions is matched (errors.Is) by errors about invalid Options.
var ErrOptions = errors.New("invalid prior options")

// Entry is one word of a prior row.
type Entry struct {
	Word   int32
	Weight float64
}

// Options for Build; the zero value means the documented defaults:
// Lambda DefaultLambda (50), Beta0 DefaultBeta0 (0.01), weights pref 1.0,
// alt 0.6, hidden 0.4, note 0.1, no inheritance.
type Options struct {
	Lambda float64 // prior strength in pseudo-counts per concept (default set by Build)
	Beta0  float64 // base smoothing for every topic and word (default set by Build)
	// Languages of labels to use; empty = the analyzer's languages. Untagged
	// labels are always used. Tags match on their primary language
	// ("en" takes "en-GB" labels).
	Languages []string
	// Weights per source; zero = default.
	WeightPref, WeightAlt, WeightHidden, WeightNote float64
	// InheritDecay > 0 adds narrower concepts' terms with this factor per level.
	InheritDecay float64
	// InheritLevels bounds the levels InheritDecay reaches; 0 = DefaultInheritLevels.
	InheritLevels int
}

// Prior holds one sparse row per concept of Scheme (index = concept index =
// topic number). Free topics have no row.
type Prior struct {
	Scheme   *concepts.Scheme
	Analyzer *terms.Analyzer
	Rows     [][]Entry
	Lambda   float64
	Beta0    float64
	Report   Report
}

// Report says what the prior could not use.
type Report struct {
	NoTerms     []int    // concept indices left with no terms in the chosen languages
	Emptied     []string // labels that analysis emptied, "IRI\tlabel@lang"
	SharedTerms []Shared // terms in the rows of very many concepts, most shared first

	Languages []string // primary languages of the labels used, e.g. ["en", "fr"]
	Notices   []string // languages analysed language-neutrally, and why
	Terms     int      // distinct terms in the rows
	Phrases   int      // of which phrase terms
	Skipped   int      // labels and notes in other languages, not used
}

// Shared is a term and how many concept rows contain it.
type Shared struct {
	Term     string
	Concepts int
}

// Build analyses every concept's labels and notes with a (growing its
// dictionary and adding multi-word labels as phrases) and returns the rows.
// It does not check the scheme's integrity (concepts.Scheme.Check does).
func Build(s *concepts.Scheme, a *terms.Analyzer, opt Options) (*Prior, error) {
	if s == nil || a == nil {
		return nil, fmt.Errorf("prior: nil scheme or analyzer: %w", ErrOptions)
	}
	if err := opt.fill(a); err != nil {
		return nil, err
	}
	p := &Prior{Scheme: s, Analyzer: a, Rows: make([][]Entry, len(s.Concepts)), Lambda: opt.Lambda, Beta0: opt.Beta0}
	b := builder{a: a, opt: opt, langs: map[string]bool{}}
	for _, l := range opt.Languages {
		b.langs[primary(l)] = true
	}
	for l := range b.langs {
		p.Report.Languages = append(p.Report.Languages, l)
	}
	slices.Sort(p.Report.Languages)
	for _, l := range opt.Languages {
		if _, err := a.Language(l); err != nil {
			p.Report.Notices = append(p.Report.Notices, err.Error())
		}
	}

	// Labels first, so that every phrase is known before notes are read.
	own := make([][]Entry, len(s.Concepts))
	for i := range s.Concepts {
		c := &s.Concepts[i]
		b.row = b.row[:0]
		b.label(c, c.Pref, opt.WeightPref, &p.Report)
		b.label(c, c.Alt, opt.WeightAlt, &p.Report)
		b.label(c, c.Hidden, opt.WeightHidden, &p.Report)
		own[i] = slices.Clone(b.row)
	}
	for i := range s.Concepts {
		c := &s.Concepts[i]
		b.row = own[i]
		b.note(c, c.Definition, &p.Report)
		b.note(c, c.ScopeNote, &p.Report)
		own[i] = normalize(b.row)
	}
	if opt.InheritDecay > 0 {
		p.Rows = inherit(s, own, opt.InheritDecay, opt.InheritLevels)
	} else {
		p.Rows = own
	}
	p.Report.fill(p.Rows, a.Dict())
	return p, nil
}

// Beta returns β[k][w] for concept k (a free topic has β0 everywhere).
func (p *Prior) Beta(k int, w int32) float64 {
	if k >= len(p.Rows) {
		return p.Beta0
	}
	row := p.Rows[k]
	if i, ok := slices.BinarySearchFunc(row, w, func(e Entry, w int32) int { return int(e.Word - w) }); ok {
		return p.Beta0 + p.Lambda*row[i].Weight
	}
	return p.Beta0
}

func (o *Options) fill(a *terms.Analyzer) error {
	for _, v := range []float64{o.Lambda, o.Beta0, o.WeightPref, o.WeightAlt, o.WeightHidden, o.WeightNote, o.InheritDecay} {
		if v < 0 || v != v {
			return fmt.Errorf("prior: negative or NaN option %v: %w", v, ErrOptions)
		}
	}
	if o.InheritDecay >= 1 {
		return fmt.Errorf("prior: InheritDecay %v must be below 1: %w", o.InheritDecay, ErrOptions)
	}
	def := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	def(&o.Lambda, DefaultLambda)
	def(&o.Beta0, DefaultBeta0)
	def(&o.WeightPref, DefaultWeightPref)
	def(&o.WeightAlt, DefaultWeightAlt)
	def(&o.WeightHidden, DefaultWeightHidden)
	def(&o.WeightNote, DefaultWeightNote)
	if o.InheritLevels <= 0 {
		o.InheritLevels = DefaultInheritLevels
	}
	if len(o.Languages) == 0 {
		o.Languages = a.Options().Languages
	}
	if len(o.Languages) == 0 {
		o.Languages = []string{"en"}
	}
	return nil
}

// primary returns the lower-case primary language subtag: "en-GB" -> "en".
func primary(tag string) string {
	tag = strings.ToLower(tag)
	if i := strings.IndexAny(tag, "-_"); i >= 0 {
		tag = tag[:i]
	}
	return tag
}

// builder holds the scratch space of Build.
type builder struct {
	a     *terms.Analyzer
	opt   Options
	langs map[string]bool
	row   []Entry // unnormalised, unsorted, may repeat words
	toks  []terms.Token
	words []string
}

func (b *builder) use(lang string) bool { return lang == "" || b.langs[primary(lang)] }

func (b *builder) label(c *concepts.Concept, labels []concepts.Label, w float64, r *Report) {
	for _, l := range labels {
		if !b.use(l.Lang) {
			r.Skipped++
			continue
		}
		b.toks, _ = b.a.AnalyzeWords(l.Text, l.Lang, b.toks[:0], true)
		switch n := len(b.toks); n {
		case 0:
			r.Emptied = append(r.Emptied, c.IRI+"\t"+l.Text+"@"+l.Lang)
		case 1:
			b.row = append(b.row, Entry{b.toks[0].ID, w})
		default:
			b.words = b.words[:0]
			for _, t := range b.toks {
				b.words = append(b.words, t.Term)
				b.row = append(b.row, Entry{t.ID, w / float64(n)})
			}
			b.row = append(b.row, Entry{b.a.AddPhrase(b.words), w})
		}
	}
}

func (b *builder) note(c *concepts.Concept, notes []concepts.Label, r *Report) {
	for _, l := range notes {
		if !b.use(l.Lang) {
			r.Skipped++
			continue
		}
		b.toks, _ = b.a.AnalyzeLang(l.Text, l.Lang, b.toks[:0], true)
	next:
		for _, t := range b.toks {
			for _, nt := range c.Notation {
				if strings.EqualFold(l.Text[t.Start:t.End], nt) {
					continue next
				}
			}
			b.row = append(b.row, Entry{t.ID, b.opt.WeightNote})
		}
	}
}

// normalize sorts row by word, merges repeated words and scales the
// weights to sum 1. It reuses row's storage.
func normalize(row []Entry) []Entry {
	if len(row) == 0 {
		return nil
	}
	slices.SortFunc(row, func(x, y Entry) int { return int(x.Word - y.Word) })
	out := row[:1]
	for _, e := range row[1:] {
		if last := &out[len(out)-1]; last.Word == e.Word {
			last.Weight += e.Weight
		} else {
			out = append(out, e)
		}
	}
	var sum float64
	for _, e := range out {
		sum += e.Weight
	}
	for i := range out {
		out[i].Weight /= sum
	}
	return slices.Clip(out)
}

// inherit adds to each row the own rows of its narrower concepts, decay^L
// for those L levels down (each descendant once, at its nearest level),
// then renormalises.
func inherit(s *concepts.Scheme, own [][]Entry, decay float64, levels int) [][]Entry {
	rows := make([][]Entry, len(own))
	seen := make([]int, len(own)) // concept -> last root index+1 that reached it
	var row []Entry
	var frontier, nextFrontier []int
	for i := range own {
		row = append(row[:0], own[i]...)
		seen[i] = i + 1
		frontier = append(frontier[:0], i)
		f := 1.0
		for l := 1; l <= levels && len(frontier) > 0; l++ {
			f *= decay
			nextFrontier = nextFrontier[:0]
			for _, c := range frontier {
				for _, n := range s.Concepts[c].Narrower {
					if n < 0 || n >= len(own) || seen[n] == i+1 {
						continue
					}
					seen[n] = i + 1
					nextFrontier = append(nextFrontier, n)
					for _, e := range own[n] {
						row = append(row, Entry{e.Word, f * e.Weight})
					}
				}
			}
			frontier, nextFrontier = nextFrontier, frontier
		}
		rows[i] = normalize(slices.Clone(row))
	}
	return rows
}

func (r *Report) fill(rows [][]Entry, d *terms.Dictionary) {
	count := make([]int32, d.Len())
	for i, row := range rows {
		if len(row) == 0 {
			r.NoTerms = append(r.NoTerms, i)
		}
		for _, e := range row {
			count[e.Word]++
		}
	}
	for w, n := range count {
		if n == 0 {
			continue
		}
		r.Terms++
		if strings.Contains(d.Term(int32(w)), " ") {
			r.Phrases++
		}
		if n < 2 {
			continue
		}
		sh := Shared{Term: d.Term(int32(w)), Concepts: int(n)}
		i, _ := slices.BinarySearchFunc(r.SharedTerms, sh, cmpShared)
		if i < SharedTop {
			r.SharedTerms = slices.Insert(r.SharedTerms, i, sh)
			if len(r.SharedTerms) > SharedTop {
				r.SharedTerms = r.SharedTerms[:SharedTop]
			}
		}
	}
}

// cmpShared orders most shared first, then by term.
func cmpShared(x, y Shared) int {
	if x.Concepts != y.Concepts {
		return y.Concepts - x.Concepts
	}
	return strings.Compare(x.Term, y.Term)
}
