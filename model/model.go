// Package model is a fitted termgrove model and its .grove file format.
//
// CONTRACT (fit, annotate, report, api code against these names; keep them):
//
//	m, err := model.Load("demo.grove")
//	phi := m.Phi(k, w) // (n_kw + β_kw) / (n_k + Σ_w β_kw)
package model

import (
	"termgrove/concepts"
	"termgrove/terms"
)

// Version is the file format version written by Save.
const Version = 1

// WordWeight is a sparse (word, weight) pair, e.g. a prior row entry.
type WordWeight struct {
	Word   int32
	Weight float64
}

// WordCount is a sparse (word, count) pair of a topic's word counts.
type WordCount struct {
	Word  int32
	Count int32
}

// Model is K = C concept topics + F free topics over W word types.
// Topic k < C is concept Scheme.Concepts[k]; topics C..K-1 are free.
type Model struct {
	Scheme     *concepts.Scheme
	Analyzer   terms.Options
	Words      []string       // word types by id (phrase terms contain a space)
	C, F       int            // concept and free topic counts
	Alpha      []float64      // K, learned asymmetric document-topic prior
	Beta0      float64        // base topic-word prior
	Lambda     float64        // prior strength
	Prior      [][]WordWeight // C rows, sorted by word, sum 1 each (or empty)
	Counts     [][]WordCount  // K rows: n_kw > 0, sorted by word
	Totals     []int64        // K: n_k
	DocCounts  []int32        // K: records whose tokens a topic took (for reports)
	Provenance Provenance
}

// Provenance records where a model came from.
type Provenance struct {
	TermgroveVersion string
	Created          string // RFC 3339
	VocabFile        string
	VocabSHA256      string
	CorpusFile       string
	CorpusSHA256     string
	Records          int
	Tokens           int64
	Sweeps           int
	Seed             int64
	Options          map[string]string
	HeldOutLLPerWord float64 // 0 when no holdout
}

// K is the number of topics.
func (m *Model) K() int { return m.C + m.F }
