// Package model is a fitted termgrove model and its .grove file format.
//
// K = C concept topics + F free topics over W word types. The topic–word
// distribution is
//
//	φ_kw = (n_kw + β0 + λ·π_kw) / (n_k + W·β0 + λ·Σ_w π_kw)
//
// with n_kw the fitted counts (Counts), n_k their row totals (Totals) and π_k
// the concept's label prior row (Prior; free topics have none).
//
// CONTRACT (fit, annotate, report, api code against these names; keep them):
//
//	m, err := model.Load("demo.grove")
//	phi := m.Phi(k, w) // (n_kw + β_kw) / (n_k + Σ_w β_kw)
//
// The file is a 56-byte header followed by the payload:
//
//	offset 0  "TGROVE\r\n"  magic (the CR-LF catches text-mode mangling)
//	offset 8  uint32 LE     format version (Version)
//	offset 12 uint32 LE     flags, 0
//	offset 16 uint64 LE     payload length in bytes
//	offset 24 [32]byte      SHA-256 of the payload
//
// The payload is a gob blob (analyzer options, provenance, the scheme's
// title and collections, and the optional sections: related concepts, the
// score calibration, the discriminative word layer with its own
// WordLayerVersion; a file without a section, as every file written before
// it was added, loads with none) followed by hand-packed flat arrays (uvarints,
// delta-coded sorted word ids, little-endian float64): words, concepts, α,
// β0, λ, prior rows, count rows, totals, record counts. Save writes to a
// temporary file in the same folder, syncs it and renames it over the target,
// so a reader never sees half a model and a failed write leaves the old file.
package model

import (
	"bytes"
	"container/heap"
	"crypto/sha256"
	"encoding/binary"
	"encoding/gob"
	"errors"
	"fmt"
	"hash"
	"io"
	"maps"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"

	"termgrove/concepts"
	"termgrove/terms"
)

// Version is the file format version written by Save.
const Version = 1

// magic opens every .grove file.
const magic = "TGROVE\r\n"

const headerSize = 56

// Errors returned by Load, wrapped in a *FileError naming the file.
var (
	// ErrFormat: the file is not a termgrove model.
	ErrFormat = errors.New("not a termgrove model file")
	// ErrVersion: a model file of a format version this build cannot read.
	ErrVersion = errors.New("unsupported model file version")
	// ErrCorrupt: the checksum does not match or the payload does not decode.
	ErrCorrupt = errors.New("model file corrupted")
	// ErrTruncated: the file ends before its payload does. errors.Is(err, ErrCorrupt) also holds.
	ErrTruncated = fmt.Errorf("%w: truncated", ErrCorrupt)
)

// FileError is a Load or Save failure naming the file.
type FileError struct {
	File string
	Err  error
}

func (e *FileError) Error() string { return e.File + ": " + e.Err.Error() }
func (e *FileError) Unwrap() error { return e.Err }

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
	// Related lists, per concept j, the concepts people assign beside it
	// more often than on average, with the lift P(k | j) − P(k) > 0 over
	// the indexed records (the row holds j itself with 1 − P(j)); nil or
	// empty rows when the corpus had no indexed records. Sorted by concept.
	Related [][]ConceptWeight
	// Calibration, when set, turns annotation's raw concept scores into
	// the probability that a person indexing the record assigns the
	// concept; learned from records people indexed (annotate.Calibrate).
	Calibration *Calibration
	// WordLayer, when set, is the discriminative word layer: per concept a
	// linear SVM over the record's TF-IDF vector, which annotation
	// combines with the calibrated topic score (annotate/wordlayer.go).
	// It needs Calibration.
	WordLayer *WordLayer

	sum    [32]byte // payload SHA-256, set by Load
	hasSum bool
}

// Calibration maps concept k's raw annotation score s (its fold-in share
// plus its related-concept boost) to
//
//	p_k = 1 / (1 + exp(−(A_k·ln s + B_k)))
//
// a Platt (1999) mapping per concept, fitted by logistic regression on
// records people indexed, each concept's (A_k, B_k) shrunk towards one
// mapping shared by all concepts (GlobalA, GlobalB) so that rare concepts
// keep close to it.
type Calibration struct {
	A, B             []float64 // C each
	GlobalA, GlobalB float64
	Shrink           float64 // the L2 weight pulling (A_k, B_k) to the shared mapping
	Records          int     // records it was learned from
	HeldOut          bool    // true when those records were kept out of the fit
}

// Apply returns concept k's calibrated score for raw score s > 0 (s ≤ 0
// counts as the smallest positive score).
func (c *Calibration) Apply(k int, s float64) float64 {
	if !(s > 0) {
		s = math.SmallestNonzeroFloat64
	}
	z := c.A[k]*math.Log(s) + c.B[k]
	return 1 / (1 + math.Exp(-z))
}

// WordLayerVersion is the WordLayer layout this build writes; it reads
// this one, version 4 (before Net: nil), version 3 (before KNN: nil),
// version 2 (before ShareFloor: 0) and version 1 (before lead features:
// Lead 0).
const WordLayerVersion = 5

// WordLayer is a per-concept linear model over a record's words (a
// one-vs-rest linear SVM, linear.OneVsRest, trained on the records people
// indexed) and how annotation combines it with the topic model. A record's
// features (Features) are its word ids and, with Bigrams > 0, its pairs of
// consecutive words hashed into Bigrams buckets numbered from W; its
// vector is x_w = (1 + ln tf_w)·IDF[w] over the features, scaled to unit
// length (features with IDF 0 left out); concept k's decision value is
//
//	d_k = Bias[k] + Σ_w x_w·weight(w, k)
//
// with word w's weights Concept[Start[w]:Start[w+1]] / Weight[…] (word
// major, so a record walks only its own words). With z_k the calibrated
// topic log-odds (Calibration), annotation ranks by
//
//	v_k = d_k + TopicWeight·z_k − FreqWeight·LnFreq[k]
//
// and reports σ(ScaleA·v_k + ScaleB). With ShareFloor > 0, z_k is the
// calibrated log-odds of max(s_k, ShareFloor), s_k the raw score: a
// concept the fold-in did not reach (s_k = 0) is ranked by its words
// rather than dropped to the bottom by any TopicWeight > 0. FreqWeight lowers concepts people
// assign often, which spreads the suggestions over more concepts (macro
// F1); both weights and the scale are learned on records people indexed.
//
// With Lead > 0 a record's vector has a second part: the same construction
// over the words of its lead paragraph alone (LeadEnd: a record's first
// field, the title, when records are joined), as features numbered from
// W + Bigrams with their own IDF, scaled to length Lead. The words of a
// title say more about a record's subjects than the same words further down.
//
// With KNN (version 4) annotation also adds KNN.Weight·K_k to d_k, K_k
// the vote of the record's most similar training records (Neighbours).
// With Net (version 5) it adds Net.Weight·g_k, g_k the log-probability of
// k under a one-hidden-layer network over the same vector (WordNet).
type WordLayer struct {
	Version int
	Bigrams int       // bigram buckets (0: words only)
	IDF     []float32 // Dim(W) features: ln((1 + N)/(1 + df_f)) + 1, 0 for features in fewer than MinDF records
	Lead    float64   // length of the lead paragraph's part (0: none; version 1 files)
	Start   []int32   // W + Bigrams + 1
	Concept []int32   // weights' concepts, ascending within a word
	Weight  []float32
	Bias    []float32 // C
	LnFreq  []float32 // C: ln(1 + records people indexed with k)

	TopicWeight, FreqWeight float64
	ScaleA, ScaleB          float64
	ShareFloor              float64 // least raw score z_k is taken of (0: none; version 1 and 2 files)

	SVMC    float64 // the SVM's loss weight C
	MinDF   int
	Prune   float64 // weights below this magnitude were dropped
	Records int     // records the SVMs were trained on
	Tuned   int     // records the combination was learned on
	// TunedF1 is micro plus macro F1@k (k = 5 unless TuneOptions.At says
	// otherwise) of the Tuned records ranked with the chosen weights (0 in
	// files written before).
	TunedF1 float64
	// TunedMicro and TunedMacro are its two parts, and TunedMacroFloor
	// the floor macro F1 had to reach (annotate.TuneOptions.MacroFloor;
	// 0: micro plus macro was maximised). All 0 in files written before.
	TunedMicro, TunedMacro, TunedMacroFloor float64
	// Labels is how many concepts' label terms the SVMs learned as one
	// more record of the concept, each weighing LabelWeight records
	// (0: none, as in files written before).
	Labels      int
	LabelWeight float64
	// CRecords: concepts with n > CRecords records people indexed were
	// trained with C·√(CRecords/n) instead of SVMC (0: SVMC for all).
	CRecords int
	// KNN, when set, is the nearest-neighbour vote (nil in files before
	// version 4, and when tuning gave it no weight).
	KNN *Neighbours
	// Net, when set, is the network whose log-probabilities join the
	// decision values (nil in files before version 5, and when tuning
	// gave it no weight).
	Net *WordNet
}

// ConceptWeight is a concept index with a weight.
type ConceptWeight struct {
	Concept int32
	Weight  float64
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

// W is the number of word types.
func (m *Model) W() int { return len(m.Words) }

// PriorMass is Σ_w π_kw for topic k (1 for a concept with terms, else 0).
func (m *Model) PriorMass(k int) float64 {
	if k >= len(m.Prior) {
		return 0
	}
	s := 0.0
	for _, e := range m.Prior[k] {
		s += e.Weight
	}
	return s
}

// BetaSum is B_k = Σ_w β_kw = W·β0 + λ·Σ_w π_kw.
func (m *Model) BetaSum(k int) float64 {
	return float64(len(m.Words))*m.Beta0 + m.Lambda*m.PriorMass(k)
}

// Count returns n_kw.
func (m *Model) Count(k, w int) int32 {
	row := m.Counts[k]
	i := sort.Search(len(row), func(i int) bool { return int(row[i].Word) >= w })
	if i < len(row) && int(row[i].Word) == w {
		return row[i].Count
	}
	return 0
}

// PriorWeight returns π_kw.
func (m *Model) PriorWeight(k, w int) float64 {
	if k >= len(m.Prior) {
		return 0
	}
	row := m.Prior[k]
	i := sort.Search(len(row), func(i int) bool { return int(row[i].Word) >= w })
	if i < len(row) && int(row[i].Word) == w {
		return row[i].Weight
	}
	return 0
}

// Phi returns φ_kw = (n_kw + β0 + λ·π_kw) / (n_k + B_k). It costs two binary
// searches; hot loops should precompute (as package annotate does).
func (m *Model) Phi(k, w int) float64 {
	num := float64(m.Count(k, w)) + m.Beta0 + m.Lambda*m.PriorWeight(k, w)
	return num / (float64(m.Totals[k]) + m.BetaSum(k))
}

// TopWords returns the n words of topic k with the highest φ_kw, highest
// first (ties by word id), with φ_kw as Weight. Only words with counts or
// prior weight are candidates; the rest share the smoothing floor.
func (m *Model) TopWords(k, n int) []WordWeight {
	if n <= 0 {
		return nil
	}
	den := float64(m.Totals[k]) + m.BetaSum(k)
	h := &minHeap{}
	push := func(w int32, num float64) {
		ww := WordWeight{Word: w, Weight: num / den}
		if h.Len() < n {
			heap.Push(h, ww)
		} else if less((*h)[0], ww) {
			(*h)[0] = ww
			heap.Fix(h, 0)
		}
	}
	m.EachWord(k, push)
	out := make([]WordWeight, h.Len())
	for i := len(out) - 1; i >= 0; i-- {
		out[i] = heap.Pop(h).(WordWeight)
	}
	return out
}

// EachWord calls fn for every word of topic k whose β-smoothed count
// exceeds the floor β0, in word order, with num = n_kw + β0 + λ·π_kw (so
// φ_kw = num/(n_k+B_k)); every other word has num = β0. It merges the sorted
// count and prior rows, so it costs O(nnz).
func (m *Model) EachWord(k int, fn func(w int32, num float64)) {
	var pr []WordWeight
	if k < len(m.Prior) {
		pr = m.Prior[k]
	}
	cr := m.Counts[k]
	i, j := 0, 0
	for i < len(cr) || j < len(pr) {
		switch {
		case j >= len(pr) || (i < len(cr) && cr[i].Word < pr[j].Word):
			fn(cr[i].Word, float64(cr[i].Count)+m.Beta0)
			i++
		case i >= len(cr) || pr[j].Word < cr[i].Word:
			fn(pr[j].Word, m.Beta0+m.Lambda*pr[j].Weight)
			j++
		default:
			fn(cr[i].Word, float64(cr[i].Count)+m.Beta0+m.Lambda*pr[j].Weight)
			i++
			j++
		}
	}
}

// less orders a below b in TopWords' ranking (lower weight, or higher id on a tie).
func less(a, b WordWeight) bool {
	if a.Weight != b.Weight {
		return a.Weight < b.Weight
	}
	return a.Word > b.Word
}

type minHeap []WordWeight

func (h minHeap) Len() int           { return len(h) }
func (h minHeap) Less(i, j int) bool { return less(h[i], h[j]) }
func (h minHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *minHeap) Push(x any)        { *h = append(*h, x.(WordWeight)) }
func (h *minHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}

// ConceptIndex returns the topic of the concept with this IRI.
func (m *Model) ConceptIndex(iri string) (int, bool) {
	if m.Scheme == nil {
		return 0, false
	}
	return m.Scheme.Lookup(iri)
}

// NewAnalyzer builds a text analyzer over the model's word types, so that
// analysed text gets the ids the model was fitted with. Analyze with
// grow=false: unknown terms get id -1. (Field Analyzer holds its options.)
func (m *Model) NewAnalyzer() (*terms.Analyzer, error) {
	return terms.New(m.Analyzer, terms.DictionaryOf(slices.Clip(m.Words)))
}

// Sum returns the SHA-256 of the model's payload as Save writes it: stored by
// Load, computed (by encoding the model) otherwise.
func (m *Model) Sum() ([32]byte, error) {
	if m.hasSum {
		return m.sum, nil
	}
	return encodedSum(m)
}

// encodedSum returns the SHA-256 of m's payload as encode writes it.
func encodedSum(m *Model) ([32]byte, error) {
	h := sha256.New()
	if err := encode(h, m); err != nil {
		return [32]byte{}, err
	}
	var s [32]byte
	h.Sum(s[:0])
	return s, nil
}

// ContentSum returns the SHA-256 of the model's payload with its
// provenance left out (the build, the date, the input files, the fit's
// options): two fits that learned the same tables have the same content
// sum, whenever and by whichever build they ran, where Sum differs with
// the date alone. Annotation seeds its records from it.
func (m *Model) ContentSum() ([32]byte, error) {
	c := *m
	c.Provenance = Provenance{}
	return encodedSum(&c)
}

// Validate checks that the model's tables agree in size and order.
func (m *Model) Validate() error {
	K, W := m.K(), len(m.Words)
	switch {
	case m.C < 0 || m.F < 0:
		return fmt.Errorf("negative topic counts C=%d F=%d", m.C, m.F)
	case m.Scheme == nil && m.C > 0:
		return errors.New("no scheme")
	case m.Scheme != nil && len(m.Scheme.Concepts) != m.C:
		return fmt.Errorf("scheme has %d concepts, C = %d", len(m.Scheme.Concepts), m.C)
	case len(m.Alpha) != K || len(m.Counts) != K || len(m.Totals) != K:
		return fmt.Errorf("K = %d but %d alpha, %d count rows, %d totals", K, len(m.Alpha), len(m.Counts), len(m.Totals))
	case len(m.DocCounts) != 0 && len(m.DocCounts) != K:
		return fmt.Errorf("K = %d but %d doc counts", K, len(m.DocCounts))
	case len(m.Related) != 0 && len(m.Related) != m.C:
		return fmt.Errorf("%d related rows for %d concepts", len(m.Related), m.C)
	case len(m.Prior) > m.C:
		return fmt.Errorf("%d prior rows for %d concepts", len(m.Prior), m.C)
	case !(m.Beta0 > 0) || math.IsInf(m.Beta0, 0) || m.Lambda < 0 || math.IsNaN(m.Lambda) || math.IsInf(m.Lambda, 0):
		return fmt.Errorf("bad beta0 %v or lambda %v", m.Beta0, m.Lambda)
	}
	for j, row := range m.Related {
		for _, r := range row {
			if r.Concept < 0 || int(r.Concept) >= m.C || !(r.Weight > 0) || r.Weight > 1 {
				return fmt.Errorf("related[%d]: concept %d weight %v", j, r.Concept, r.Weight)
			}
		}
	}
	if c := m.Calibration; c != nil {
		if len(c.A) != m.C || len(c.B) != m.C {
			return fmt.Errorf("calibration has %d and %d parameters for %d concepts", len(c.A), len(c.B), m.C)
		}
		for k := range c.A {
			if !finite(c.A[k]) || !finite(c.B[k]) {
				return fmt.Errorf("calibration[%d] = (%v, %v)", k, c.A[k], c.B[k])
			}
		}
	}
	if l := m.WordLayer; l != nil {
		if err := l.validate(m.C, W); err != nil {
			return fmt.Errorf("word layer: %w", err)
		}
		if m.Calibration == nil {
			return errors.New("word layer without calibration")
		}
	}
	for k, a := range m.Alpha {
		if !(a > 0) || math.IsInf(a, 0) {
			return fmt.Errorf("alpha[%d] = %v", k, a)
		}
	}
	for k, row := range m.Counts {
		var sum int64
		for i, e := range row {
			if e.Word < 0 || int(e.Word) >= W || (i > 0 && e.Word <= row[i-1].Word) || e.Count <= 0 {
				return fmt.Errorf("count row %d: entry %d (word %d, count %d) out of range or order", k, i, e.Word, e.Count)
			}
			sum += int64(e.Count)
		}
		if sum != m.Totals[k] {
			return fmt.Errorf("topic %d: counts sum to %d, total says %d", k, sum, m.Totals[k])
		}
	}
	for k, row := range m.Prior {
		for i, e := range row {
			if e.Word < 0 || int(e.Word) >= W || (i > 0 && e.Word <= row[i-1].Word) || !(e.Weight >= 0) {
				return fmt.Errorf("prior row %d: entry %d (word %d, weight %v) out of range or order", k, i, e.Word, e.Weight)
			}
		}
	}
	if m.Scheme != nil {
		for i, c := range m.Scheme.Concepts {
			for _, j := range append(slices.Clip(c.Broader), c.Narrower...) {
				if j < 0 || j >= m.C {
					return fmt.Errorf("concept %d (%s): link to %d out of range", i, c.IRI, j)
				}
			}
		}
	}
	return nil
}

// Save writes m to path atomically: a temporary file in the same folder,
// synced, then renamed over path. On any error the old file is untouched and
// the temporary file removed.
func Save(path string, m *Model) error {
	return save(path, m, nil)
}

// save is Save with an optional writer wrapper (tests inject failures).
func save(path string, m *Model, wrap func(io.Writer) io.Writer) (err error) {
	fail := func(err error) error { return &FileError{File: path, Err: err} }
	if err := m.Validate(); err != nil {
		return fail(fmt.Errorf("invalid model: %w", err))
	}
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp*")
	if err != nil {
		return fail(err)
	}
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(f.Name())
		}
	}()
	var hdr [headerSize]byte
	if _, err := f.Write(hdr[:]); err != nil {
		return fail(err)
	}
	var w io.Writer = f
	if wrap != nil {
		w = wrap(f)
	}
	bw := newCountingWriter(w)
	if err := encode(bw, m); err != nil {
		return fail(err)
	}
	if err := bw.Flush(); err != nil {
		return fail(err)
	}
	copy(hdr[:], magic)
	binary.LittleEndian.PutUint32(hdr[8:], Version)
	binary.LittleEndian.PutUint64(hdr[16:], uint64(bw.n))
	bw.h.Sum(hdr[24:24])
	if _, err := f.WriteAt(hdr[:], 0); err != nil {
		return fail(err)
	}
	if err := f.Sync(); err != nil {
		return fail(err)
	}
	if err := f.Close(); err != nil {
		return fail(err)
	}
	// CreateTemp makes the file 0600; a model is read by services that may
	// run as another user, so give it 0644, or the mode of the file it
	// replaces.
	mode := os.FileMode(0o644)
	if fi, err := os.Stat(path); err == nil && fi.Mode().IsRegular() {
		mode = fi.Mode().Perm()
	}
	if err := os.Chmod(f.Name(), mode); err != nil {
		return fail(err)
	}
	if err := os.Rename(f.Name(), path); err != nil {
		return fail(err)
	}
	// Make the rename itself durable; not all systems can sync a folder.
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// countingWriter buffers, hashes and counts what passes through.
type countingWriter struct {
	w   io.Writer
	h   hash.Hash
	buf []byte
	n   int64
	err error
}

func newCountingWriter(w io.Writer) *countingWriter {
	return &countingWriter{w: w, h: sha256.New(), buf: make([]byte, 0, 1<<20)}
}

func (c *countingWriter) Write(p []byte) (int, error) {
	if c.err != nil {
		return 0, c.err
	}
	n := len(p)
	c.h.Write(p)
	c.n += int64(len(p))
	for len(p) > 0 {
		k := copy(c.buf[len(c.buf):cap(c.buf)], p)
		c.buf = c.buf[:len(c.buf)+k]
		p = p[k:]
		if len(c.buf) == cap(c.buf) {
			if err := c.Flush(); err != nil {
				return 0, err
			}
		}
	}
	return n, nil
}

func (c *countingWriter) Flush() error {
	if c.err != nil {
		return c.err
	}
	if len(c.buf) > 0 {
		_, c.err = c.w.Write(c.buf)
		c.buf = c.buf[:0]
	}
	return c.err
}

// Load reads a model written by Save. Errors are *FileError values naming
// the file; match ErrFormat, ErrVersion, ErrCorrupt or ErrTruncated with
// errors.Is.
func Load(path string) (*Model, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	m, err := Decode(b)
	if err != nil {
		return nil, &FileError{File: path, Err: err}
	}
	return m, nil
}

// Decode reads a model from the bytes of a .grove file.
func Decode(b []byte) (*Model, error) {
	if len(b) < len(magic) || string(b[:len(magic)]) != magic {
		return nil, ErrFormat
	}
	if len(b) < headerSize {
		return nil, fmt.Errorf("%w: %d-byte file ends inside the header", ErrTruncated, len(b))
	}
	if v := binary.LittleEndian.Uint32(b[8:]); v != Version {
		return nil, fmt.Errorf("%w: file has version %d, this build reads version %d", ErrVersion, v, Version)
	}
	n := binary.LittleEndian.Uint64(b[16:])
	payload := b[headerSize:]
	if uint64(len(payload)) < n {
		return nil, fmt.Errorf("%w: payload has %d of %d bytes", ErrTruncated, len(payload), n)
	}
	if uint64(len(payload)) > n {
		return nil, fmt.Errorf("%w: %d bytes after the payload", ErrCorrupt, uint64(len(payload))-n)
	}
	sum := sha256.Sum256(payload)
	if !bytes.Equal(sum[:], b[24:56]) {
		return nil, fmt.Errorf("%w: checksum mismatch", ErrCorrupt)
	}
	m, err := decode(payload)
	if err != nil {
		return nil, fmt.Errorf("%w: %v", ErrCorrupt, err)
	}
	if err := m.Validate(); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrCorrupt, err)
	}
	m.sum, m.hasSum = sum, true
	return m, nil
}

// meta is the gob-encoded part of the payload: small, and shaped by other
// packages (terms.Options may gain fields).
type meta struct {
	Analyzer    terms.Options
	Provenance  Provenance
	SchemeIRI   string
	Title       []concepts.Label
	Collections []concepts.Collection
	HasScheme   bool
	// Related is Model.Related; files written before it was added decode
	// to nil (gob ignores missing fields).
	Related [][]ConceptWeight
	// Calibration is Model.Calibration; older files decode to nil, which
	// annotation reads as uncalibrated scores.
	Calibration *Calibration
	// WordLayer is Model.WordLayer; older files decode to nil (no layer).
	WordLayer *WordLayer
	// Options is Provenance.Options as pairs sorted by key: gob writes a
	// map in Go's random iteration order, which made the bytes, and so the
	// checksum that seeds annotation, differ from one encoding of the same
	// model to the next. Provenance.Options itself is written empty; files
	// from before hold the map there, and older builds reading a newer file
	// ignore this field (gob skips fields it does not know).
	Options [][2]string
}

// enc packs the flat arrays.
type enc struct {
	w   io.Writer
	b   []byte
	err error
}

func (e *enc) flush() {
	if e.err == nil && len(e.b) > 0 {
		_, e.err = e.w.Write(e.b)
	}
	e.b = e.b[:0]
}

func (e *enc) maybeFlush() {
	if len(e.b) >= 64<<10 {
		e.flush()
	}
}

func (e *enc) uvarint(v uint64) { e.b = binary.AppendUvarint(e.b, v); e.maybeFlush() }
func (e *enc) varint(v int64)   { e.b = binary.AppendVarint(e.b, v); e.maybeFlush() }
func (e *enc) f64(v float64) {
	e.b = binary.LittleEndian.AppendUint64(e.b, math.Float64bits(v))
	e.maybeFlush()
}
func (e *enc) str(s string) {
	e.b = binary.AppendUvarint(e.b, uint64(len(s)))
	e.b = append(e.b, s...)
	e.maybeFlush()
}
func (e *enc) labels(ls []concepts.Label) {
	e.uvarint(uint64(len(ls)))
	for _, l := range ls {
		e.str(l.Lang)
		e.str(l.Text)
	}
}
func (e *enc) ints(xs []int) {
	e.uvarint(uint64(len(xs)))
	for _, x := range xs {
		e.varint(int64(x))
	}
}

// encodeOptionsAsMap: tests set it to write Provenance.Options as files
// written before meta.Options did.
var encodeOptionsAsMap bool

func encode(w io.Writer, m *Model) error {
	md := meta{Analyzer: m.Analyzer, Provenance: m.Provenance, Related: m.Related, Calibration: m.Calibration, WordLayer: m.WordLayer}
	if !encodeOptionsAsMap {
		md.Provenance.Options = nil
		for _, k := range slices.Sorted(maps.Keys(m.Provenance.Options)) {
			md.Options = append(md.Options, [2]string{k, m.Provenance.Options[k]})
		}
	}
	if m.Scheme != nil {
		md.HasScheme = true
		md.SchemeIRI, md.Title, md.Collections = m.Scheme.IRI, m.Scheme.Title, m.Scheme.Collections
	}
	var gb bytes.Buffer
	if err := gob.NewEncoder(&gb).Encode(&md); err != nil {
		return err
	}
	e := &enc{w: w, b: make([]byte, 0, 80<<10)}
	e.uvarint(uint64(gb.Len()))
	e.flush()
	if e.err == nil {
		_, e.err = w.Write(gb.Bytes())
	}
	e.uvarint(uint64(m.C))
	e.uvarint(uint64(m.F))
	e.uvarint(uint64(len(m.Words)))
	for _, s := range m.Words {
		e.str(s)
	}
	if m.Scheme != nil {
		for i := range m.Scheme.Concepts {
			c := &m.Scheme.Concepts[i]
			e.str(c.IRI)
			e.labels(c.Pref)
			e.labels(c.Alt)
			e.labels(c.Hidden)
			e.uvarint(uint64(len(c.Notation)))
			for _, s := range c.Notation {
				e.str(s)
			}
			e.labels(c.Definition)
			e.labels(c.ScopeNote)
			e.ints(c.Broader)
			e.ints(c.Narrower)
			var fl uint64
			if c.Top {
				fl |= 1
			}
			if c.Deprecated {
				fl |= 2
			}
			e.uvarint(fl)
		}
	}
	for _, a := range m.Alpha {
		e.f64(a)
	}
	e.f64(m.Beta0)
	e.f64(m.Lambda)
	e.uvarint(uint64(len(m.Prior)))
	for _, row := range m.Prior {
		e.uvarint(uint64(len(row)))
		prev := int32(0)
		for _, x := range row {
			e.uvarint(uint64(x.Word - prev))
			prev = x.Word
			e.f64(x.Weight)
		}
	}
	var total uint64
	for _, row := range m.Counts {
		total += uint64(len(row))
	}
	e.uvarint(total)
	for _, row := range m.Counts {
		e.uvarint(uint64(len(row)))
		prev := int32(0)
		for _, x := range row {
			e.uvarint(uint64(x.Word - prev))
			prev = x.Word
			e.uvarint(uint64(x.Count))
		}
	}
	for _, t := range m.Totals {
		e.varint(t)
	}
	e.uvarint(uint64(len(m.DocCounts)))
	for _, d := range m.DocCounts {
		e.varint(int64(d))
	}
	e.flush()
	return e.err
}

// dec unpacks the flat arrays; the first error sticks and later reads
// return zeros, so decode checks once per section.
type dec struct {
	b   []byte
	off int
	err error
}

var errShort = errors.New("payload ends early")

func (d *dec) uvarint() uint64 {
	if d.err != nil {
		return 0
	}
	v, n := binary.Uvarint(d.b[d.off:])
	if n <= 0 {
		d.err = errShort
		return 0
	}
	d.off += n
	return v
}

func (d *dec) varint() int64 {
	if d.err != nil {
		return 0
	}
	v, n := binary.Varint(d.b[d.off:])
	if n <= 0 {
		d.err = errShort
		return 0
	}
	d.off += n
	return v
}

// count reads a length and checks that at least min bytes per item remain.
func (d *dec) count(min int) int {
	v := d.uvarint()
	if d.err == nil && v > uint64(len(d.b)-d.off)/uint64(min) {
		d.err = fmt.Errorf("length %d exceeds the payload at byte %d", v, d.off)
		return 0
	}
	return int(v)
}

func (d *dec) f64() float64 {
	if d.err != nil {
		return 0
	}
	if len(d.b)-d.off < 8 {
		d.err = errShort
		return 0
	}
	v := math.Float64frombits(binary.LittleEndian.Uint64(d.b[d.off:]))
	d.off += 8
	return v
}

func (d *dec) str() string {
	n := d.count(1)
	if d.err != nil {
		return ""
	}
	s := string(d.b[d.off : d.off+n])
	d.off += n
	return s
}

func (d *dec) labels() []concepts.Label {
	n := d.count(2)
	if n == 0 {
		return nil
	}
	ls := make([]concepts.Label, n)
	for i := range ls {
		ls[i] = concepts.Label{Lang: d.str(), Text: d.str()}
	}
	return ls
}

func (d *dec) ints() []int {
	n := d.count(1)
	if n == 0 {
		return nil
	}
	xs := make([]int, n)
	for i := range xs {
		xs[i] = int(d.varint())
	}
	return xs
}

func decode(b []byte) (*Model, error) {
	d := &dec{b: b}
	gn := d.count(1)
	if d.err != nil {
		return nil, d.err
	}
	var md meta
	if err := gob.NewDecoder(bytes.NewReader(b[d.off : d.off+gn])).Decode(&md); err != nil {
		return nil, fmt.Errorf("header: %v", err)
	}
	d.off += gn
	m := &Model{Analyzer: md.Analyzer, Provenance: md.Provenance, Related: md.Related, Calibration: md.Calibration, WordLayer: md.WordLayer}
	if len(md.Options) > 0 {
		m.Provenance.Options = make(map[string]string, len(md.Options))
		for _, kv := range md.Options {
			m.Provenance.Options[kv[0]] = kv[1]
		}
	}
	m.C = d.count(1)
	m.F = d.count(1)
	if d.err == nil && m.C+m.F > len(b) {
		return nil, fmt.Errorf("K = %d exceeds the payload", m.C+m.F)
	}
	W := d.count(1)
	m.Words = make([]string, W)
	for i := range m.Words {
		m.Words[i] = d.str()
	}
	if d.err != nil {
		return nil, d.err
	}
	if md.HasScheme {
		s := &concepts.Scheme{IRI: md.SchemeIRI, Title: md.Title, Collections: md.Collections}
		s.Concepts = make([]concepts.Concept, m.C)
		for i := range s.Concepts {
			c := &s.Concepts[i]
			c.IRI = d.str()
			c.Pref = d.labels()
			c.Alt = d.labels()
			c.Hidden = d.labels()
			if n := d.count(1); n > 0 {
				c.Notation = make([]string, n)
				for j := range c.Notation {
					c.Notation[j] = d.str()
				}
			}
			c.Definition = d.labels()
			c.ScopeNote = d.labels()
			c.Broader = d.ints()
			c.Narrower = d.ints()
			fl := d.uvarint()
			c.Top, c.Deprecated = fl&1 != 0, fl&2 != 0
			if d.err != nil {
				return nil, fmt.Errorf("concept %d: %v", i, d.err)
			}
		}
		s.Reindex()
		m.Scheme = s
	}
	K := m.K()
	if K > (len(b)-d.off)/8 {
		return nil, fmt.Errorf("K = %d exceeds the payload", K)
	}
	m.Alpha = make([]float64, K)
	for k := range m.Alpha {
		m.Alpha[k] = d.f64()
	}
	m.Beta0 = d.f64()
	m.Lambda = d.f64()
	np := d.count(1)
	if np > 0 {
		m.Prior = make([][]WordWeight, np)
	}
	for k := range m.Prior {
		n := d.count(9)
		if n == 0 {
			continue
		}
		row := make([]WordWeight, n)
		w := uint64(0)
		for i := range row {
			w += d.uvarint()
			row[i] = WordWeight{Word: clampWord(w), Weight: d.f64()}
		}
		m.Prior[k] = row
	}
	total := d.count(2)
	if d.err != nil {
		return nil, d.err
	}
	flat := make([]WordCount, total)
	m.Counts = make([][]WordCount, K)
	for k := range m.Counts {
		n := d.count(2)
		if n > len(flat) {
			return nil, fmt.Errorf("count row %d longer than the declared total", k)
		}
		row := flat[:n:n]
		flat = flat[n:]
		w := uint64(0)
		for i := range row {
			w += d.uvarint()
			c := d.uvarint()
			if c > math.MaxInt32 {
				c = 0 // rejected by Validate
			}
			row[i] = WordCount{Word: clampWord(w), Count: int32(c)}
		}
		m.Counts[k] = row
	}
	m.Totals = make([]int64, K)
	for k := range m.Totals {
		m.Totals[k] = d.varint()
	}
	if n := d.count(1); n > 0 {
		m.DocCounts = make([]int32, n)
		for k := range m.DocCounts {
			m.DocCounts[k] = int32(d.varint())
		}
	}
	if d.err != nil {
		return nil, d.err
	}
	if d.off != len(b) {
		return nil, fmt.Errorf("%d bytes left after the payload", len(b)-d.off)
	}
	return m, nil
}

// clampWord maps an out-of-range decoded id to -1 so that Validate rejects it.
func clampWord(w uint64) int32 {
	if w > math.MaxInt32 {
		return -1
	}
	return int32(w)
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// validate checks a word layer's shape against C concepts and W words.
func (l *WordLayer) validate(C, W int) error {
	if l.Bigrams < 0 || l.Bigrams > 1<<26 {
		return fmt.Errorf("%d bigram buckets", l.Bigrams)
	}
	if l.Version < 1 || l.Version > WordLayerVersion {
		return fmt.Errorf("%w: word layer version %d, this build reads 1 to %d", ErrVersion, l.Version, WordLayerVersion)
	}
	if l.KNN != nil {
		if l.Version < 4 {
			return fmt.Errorf("version %d layer with a neighbour vote", l.Version)
		}
		if err := l.KNN.validate(C, W+l.Bigrams); err != nil {
			return fmt.Errorf("neighbour vote: %w", err)
		}
	}
	if l.Net != nil {
		if l.Version < 5 {
			return fmt.Errorf("version %d layer with a network", l.Version)
		}
		if err := l.Net.validate(C, l.Dim(W)); err != nil {
			return fmt.Errorf("word network: %w", err)
		}
	}
	W = l.Dim(W)
	switch {
	case l.Version < 1 || l.Version > WordLayerVersion:
		return fmt.Errorf("%w: word layer version %d, this build reads 1 to %d", ErrVersion, l.Version, WordLayerVersion)
	case l.Version < 3 && l.ShareFloor != 0, !finite(l.ShareFloor) || l.ShareFloor < 0 || l.ShareFloor >= 1:
		return fmt.Errorf("version %d layer with share floor %v", l.Version, l.ShareFloor)
	case l.Version == 1 && l.Lead != 0, !finite(l.Lead) || l.Lead < 0:
		return fmt.Errorf("version %d layer with lead weight %v", l.Version, l.Lead)
	case len(l.IDF) != W || len(l.Start) != W+1:
		return fmt.Errorf("%d IDF values and %d feature starts for %d features", len(l.IDF), len(l.Start), W)
	case len(l.Bias) != C || len(l.LnFreq) != C:
		return fmt.Errorf("%d biases and %d frequencies for %d concepts", len(l.Bias), len(l.LnFreq), C)
	case len(l.Concept) != len(l.Weight) || l.Start[0] != 0 || int(l.Start[W]) != len(l.Weight):
		return fmt.Errorf("%d concepts, %d weights, starts %d..%d", len(l.Concept), len(l.Weight), l.Start[0], l.Start[W])
	}
	if l.Labels < 0 || !finite(l.LabelWeight) || l.LabelWeight < 0 || l.CRecords < 0 {
		return fmt.Errorf("%d label records of weight %v", l.Labels, l.LabelWeight)
	}
	for _, v := range []float64{l.TopicWeight, l.FreqWeight, l.ScaleA, l.ScaleB} {
		if !finite(v) {
			return fmt.Errorf("combination weight %v", v)
		}
	}
	for w := 0; w < W; w++ {
		if l.Start[w+1] < l.Start[w] || !finite(float64(l.IDF[w])) || l.IDF[w] < 0 {
			return fmt.Errorf("word %d: start %d..%d, IDF %v", w, l.Start[w], l.Start[w+1], l.IDF[w])
		}
		for i := l.Start[w]; i < l.Start[w+1]; i++ {
			if c := l.Concept[i]; c < 0 || int(c) >= C || (i > l.Start[w] && c <= l.Concept[i-1]) || !finite(float64(l.Weight[i])) {
				return fmt.Errorf("word %d: entry %d (concept %d, weight %v) out of range or order", w, i, c, l.Weight[i])
			}
		}
	}
	for k := 0; k < C; k++ {
		if !finite(float64(l.Bias[k])) || !finite(float64(l.LnFreq[k])) {
			return fmt.Errorf("concept %d: bias %v, ln frequency %v", k, l.Bias[k], l.LnFreq[k])
		}
	}
	return nil
}

// Dim is the number of features of a layer over W words: the words, the
// bigram buckets and, with Lead > 0, the lead paragraph's words.
func (l *WordLayer) Dim(W int) int {
	if l.Lead > 0 {
		return 2*W + l.Bigrams
	}
	return W + l.Bigrams
}

// LeadEnd is the byte offset where a text's lead paragraph ends: the first
// blank line ("\n\n", which joins a record's fields), or the text's end.
func LeadEnd(text string) int {
	if i := strings.Index(text, "\n\n"); i >= 0 {
		return i
	}
	return len(text)
}

// VectorScratch holds Vector's buffers for reuse.
type VectorScratch struct {
	ids, cnt, lids, lcnt []int32
	lval                 []float32
}

// Vector writes the layer's vector of a record into idx and val (reused,
// returned resliced): seq is the record's known word ids in text order
// (each < W), the first lead of them from its lead paragraph. Without a
// lead part it is WordVector of Features; with one, that vector followed by
// the lead words' own (ids from W + Bigrams on, IDF from there) scaled to
// length Lead. Indices come out ascending.
func (l *WordLayer) Vector(seq []int32, lead, W int, sc *VectorScratch, idx []int32, val []float32) ([]int32, []float32) {
	sc.ids, sc.cnt = Features(seq, W, l.Bigrams, sc.ids, sc.cnt)
	idx, val = WordVector(sc.ids, sc.cnt, l.IDF, idx, val)
	if l.Lead <= 0 || lead <= 0 {
		return idx, val
	}
	base := int32(W + l.Bigrams)
	sc.lids, sc.lcnt = Features(seq[:min(lead, len(seq))], W, 0, sc.lids, sc.lcnt)
	for i := range sc.lids {
		sc.lids[i] += base
	}
	sc.lids, sc.lval = WordVector(sc.lids, sc.lcnt, l.IDF, sc.lids, sc.lval)
	for i, f := range sc.lids {
		idx = append(idx, f)
		val = append(val, float32(float64(sc.lval[i])*l.Lead))
	}
	return idx, val
}

// WordVector writes a record's word-layer vector into idx and val (reused,
// returned resliced): ids are the record's distinct word ids, counts their
// occurrences; x_w = (1 + ln count)·idf[w], scaled to unit length, words
// with idf 0 left out (scikit-learn's TfidfVectorizer with sublinear_tf).
func WordVector(ids, counts []int32, idf []float32, idx []int32, val []float32) ([]int32, []float32) {
	idx, val = idx[:0], val[:0]
	var ss float64
	for i, w := range ids {
		if w < 0 || int(w) >= len(idf) || idf[w] == 0 || counts[i] <= 0 {
			continue
		}
		v := (1 + math.Log(float64(counts[i]))) * float64(idf[w])
		idx = append(idx, w)
		val = append(val, float32(v))
		ss += v * v
	}
	if ss > 0 {
		n := 1 / math.Sqrt(ss)
		for i := range val {
			val[i] = float32(float64(val[i]) * n)
		}
	}
	return idx, val
}

// Decision adds to dst (len C, reset to the biases first) every concept's
// decision value d_k for the vector (idx, val) from WordVector.
func (l *WordLayer) Decision(idx []int32, val []float32, dst []float64) {
	for k, b := range l.Bias {
		dst[k] = float64(b)
	}
	for i, w := range idx {
		x := float64(val[i])
		for j := l.Start[w]; j < l.Start[w+1]; j++ {
			dst[l.Concept[j]] += x * float64(l.Weight[j])
		}
	}
}

// Features writes the distinct features of a record's word sequence seq
// (word ids below W, in text order) and their counts into ids and cnt
// (reused, returned resliced, ids ascending): the word ids and, with
// bigrams > 0 buckets, each pair of consecutive words as W plus its bucket.
func Features(seq []int32, W, bigrams int, ids, cnt []int32) ([]int32, []int32) {
	ids, cnt = ids[:0], cnt[:0]
	ids = append(ids, seq...)
	if bigrams > 0 {
		for i := 1; i < len(seq); i++ {
			h := (uint64(uint32(seq[i-1]))<<32 | uint64(uint32(seq[i]))) * 0x9E3779B97F4A7C15
			ids = append(ids, int32(W+int((h>>32)%uint64(bigrams))))
		}
	}
	slices.Sort(ids)
	n := 0
	for i := 0; i < len(ids); {
		j := i
		for j < len(ids) && ids[j] == ids[i] {
			j++
		}
		ids[n] = ids[i]
		cnt = append(cnt, int32(j-i))
		n++
		i = j
	}
	return ids[:n], cnt
}
