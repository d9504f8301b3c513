// Package prior turns each concept's labels into a Dirichlet prior row over
// word types: β[k][w] = β0 + λ·π[k][w] (see DESIGN.md, "The model").
//
// CONTRACT (fit and model code against these names; keep them):
//
//	p, err := prior.Build(scheme, analyzer, prior.Options{})
//	row := p.Rows[k] // sparse, sorted by Word, weights sum to 1 (empty: no terms)
package prior

import (
	"termgrove/concepts"
	"termgrove/terms"
)

// Entry is one word of a prior row.
type Entry struct {
	Word   int32
	Weight float64
}

// Options for Build; the zero value means the documented defaults.
type Options struct {
	Lambda float64 // prior strength in pseudo-counts per concept (default set by Build)
	Beta0  float64 // base smoothing for every topic and word (default set by Build)
	// Languages of labels to use; empty = the analyzer's languages.
	Languages []string
	// Weights per source; zero = default.
	WeightPref, WeightAlt, WeightHidden, WeightNote float64
	// InheritDecay > 0 adds narrower concepts' terms with this factor per level.
	InheritDecay float64
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
}

// Shared is a term and how many concept rows contain it.
type Shared struct {
	Term     string
	Concepts int
}

// Build STUB: replaced by the real implementation.
func Build(s *concepts.Scheme, a *terms.Analyzer, opt Options) (*Prior, error) {
	return &Prior{Scheme: s, Analyzer: a, Rows: make([][]Entry, len(s.Concepts)), Lambda: 50, Beta0: 0.01}, nil
}
