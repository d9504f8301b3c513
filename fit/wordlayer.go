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
	// Lead is the length of the lead paragraph's part of a record's vector
	// (model.WordLayer.Lead; default DefaultWordLead, negative: none).
	Lead float64
}

// DefaultWordLead: the lead paragraph's (title's) words as a second part
// of the vector, half the length of the whole text's. On a validation
// slice of debtags' train split (grouped by source package, bench/quality.md)
// 0.5 did better than 0.3, 0.7 and 1.
const DefaultWordLead = 0.5

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
	if opt.Lead == 0 {
		opt.Lead = DefaultWordLead
	}
	if opt.Lead < 0 || math.IsNaN(opt.Lead) {
		opt.Lead = 0
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
	words := max(c.W, opt.Words)
	N := float64(len(docs))
	l := &model.WordLayer{
		Version: model.WordLayerVersion,
		Bigrams: opt.Bigrams,
		Lead:    opt.Lead,
		Bias:    make([]float32, C),
		LnFreq:  make([]float32, C),
		SVMC:    opt.C, MinDF: opt.MinDF, Prune: opt.Prune, Records: len(docs),
	}
	W := l.Dim(words)
	// Document frequencies of the features: words and bigram buckets, and
	// the lead paragraph's words from words + Bigrams on.
	df := make([]int, W)
	var ids, cnt []int32
	for _, i := range docs {
		d := &c.Docs[i]
		ids, cnt = model.Features(d.Words, words, opt.Bigrams, ids, cnt)
		for _, f := range ids {
			df[f]++
		}
		if l.Lead > 0 && d.Lead > 0 {
			ids, cnt = model.Features(d.Words[:min(int(d.Lead), len(d.Words))], words, 0, ids, cnt)
			for _, f := range ids {
				df[words+opt.Bigrams+int(f)]++
			}
		}
	}
	l.IDF = make([]float32, W)
	for w, n := range df {
		if n >= opt.MinDF {
			l.IDF[w] = float32(math.Log((1+N)/(1+float64(n))) + 1)
		}
	}
	xs := make([]linear.Vector, len(docs))
	labels := make([][]int32, len(docs))
	var sc model.VectorScratch
	for n, i := range docs {
		d := &c.Docs[i]
		xs[n].Index, xs[n].Value = l.Vector(d.Words, int(d.Lead), words, &sc, nil, nil)
		labels[n] = d.Subjects
		for _, k := range d.Subjects {
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
