package fit

import (
	"errors"
	"math"
	"slices"

	"termgrove/linear"
	"termgrove/model"
)

// WordLayerOptions tune TrainWordLayer; zero values mean the defaults.
type WordLayerOptions struct {
	// C is the SVMs' loss weight (default DefaultWordC).
	C float64
	// MinDF leaves out words in fewer records (default 2).
	MinDF int
	// Prune drops weights of smaller magnitude (default DefaultWordPrune;
	// negative: keep all).
	Prune float64
	// Workers train concepts in parallel (default 1).
	Workers int
	// Skip, when set, leaves out the records it is true for (by index into
	// the corpus): fit trains a second layer without the records the
	// combination is tuned on.
	Skip func(i int) bool
	Seed uint64
	// Bigrams is the number of buckets pairs of consecutive words are
	// hashed into (0: words only; bench/quality.md measured 2^18).
	Bigrams int
	// Words is the model's word count when it has more words than the
	// corpus (label terms no record uses); they get no weights.
	Words int
}

// DefaultWordC is the SVMs' C: the value scripts/anchors.py's validation
// chose among 0.1, 0.3 and 1 for its TF-IDF + LinearSVC anchor on the
// debtags benchmark (bench/quality.md).
const DefaultWordC = 0.3

// DefaultWordPrune: weights below it change a decision value by at most
// its size times the record's few non-zero x_w; pruning them keeps the
// model file small (bench/quality.md).
const DefaultWordPrune = 0.01

// ErrNoIndexed: no record has subjects and words to train the layer on.
var ErrNoIndexed = errors.New("no record people indexed has words to train the word layer")

// TrainWordLayer trains the discriminative word layer (model.WordLayer) on
// the corpus records that have subjects: one linear SVM per concept
// (linear.OneVsRest) over the records' TF-IDF vectors. The combination
// weights are left zero (annotate.TuneWordLayer learns them). C is the
// number of concepts.
func TrainWordLayer(c *Corpus, C int, opt WordLayerOptions) (*model.WordLayer, error) {
	if opt.C == 0 {
		opt.C = DefaultWordC
	}
	if opt.MinDF <= 0 {
		opt.MinDF = 2
	}
	if opt.Prune == 0 {
		opt.Prune = DefaultWordPrune
	}
	if opt.Prune < 0 {
		opt.Prune = 0
	}
	if opt.Bigrams < 0 {
		opt.Bigrams = 0
	}
	var docs []int
	for i := range c.Docs {
		if len(c.Docs[i].Subjects) > 0 && len(c.Docs[i].Words) > 0 && (opt.Skip == nil || !opt.Skip(i)) {
			docs = append(docs, i)
		}
	}
	if len(docs) == 0 {
		return nil, ErrNoIndexed
	}
	// Distinct features and counts per record.
	ids := make([][]int32, len(docs))
	cnts := make([][]int32, len(docs))
	words := max(c.W, opt.Words)
	W := words + opt.Bigrams
	df := make([]int, W)
	for n, i := range docs {
		ids[n], cnts[n] = model.Features(c.Docs[i].Words, words, opt.Bigrams, nil, nil)
		for _, f := range ids[n] {
			df[f]++
		}
	}
	N := float64(len(docs))
	l := &model.WordLayer{
		Version: model.WordLayerVersion,
		Bigrams: opt.Bigrams,
		IDF:     make([]float32, W),
		Bias:    make([]float32, C),
		LnFreq:  make([]float32, C),
		SVMC:    opt.C, MinDF: opt.MinDF, Prune: opt.Prune, Records: len(docs),
	}
	for w, n := range df {
		if n >= opt.MinDF {
			l.IDF[w] = float32(math.Log((1+N)/(1+float64(n))) + 1)
		}
	}
	xs := make([]linear.Vector, len(docs))
	labels := make([][]int32, len(docs))
	for n, i := range docs {
		xs[n].Index, xs[n].Value = model.WordVector(ids[n], cnts[n], l.IDF, nil, nil)
		labels[n] = c.Docs[i].Subjects
		for _, k := range c.Docs[i].Subjects {
			l.LnFreq[k]++
		}
	}
	for k := range l.LnFreq {
		l.LnFreq[k] = float32(math.Log1p(float64(l.LnFreq[k])))
	}
	svms, err := linear.OneVsRest(xs, labels, C, W, linear.OneVsRestOptions{
		SVM: linear.SVMOptions{C: opt.C, Seed: opt.Seed}, Prune: opt.Prune, Workers: opt.Workers})
	if err != nil {
		return nil, err
	}
	// Concept-major to word-major.
	l.Start = make([]int32, W+1)
	for k, s := range svms {
		l.Bias[k] = float32(s.Bias)
		for _, w := range s.Index {
			l.Start[w+1]++
		}
	}
	for w := 0; w < W; w++ {
		l.Start[w+1] += l.Start[w]
	}
	n := l.Start[W]
	l.Concept = make([]int32, n)
	l.Weight = make([]float32, n)
	fill := slices.Clone(l.Start[:W])
	for k, s := range svms { // k ascending: concepts come out sorted within a word
		for j, w := range s.Index {
			l.Concept[fill[w]] = int32(k)
			l.Weight[fill[w]] = s.Weight[j]
			fill[w]++
		}
	}
	return l, nil
}
