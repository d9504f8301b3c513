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
	// Labels, when set, holds per concept its label terms (LabelTerms):
	// each concept with terms the records use learns them as one more
	// record of its own, weighing LabelWeight records.
	Labels [][]int32
	// LabelWeight is the weight of a concept's label record (default
	// DefaultWordLabelWeight; negative: no label records).
	LabelWeight float64
	// CRecords: the SVM of a concept people indexed n > CRecords records
	// with is trained with C·√(CRecords/n) (default DefaultWordCRecords;
	// negative: C for every concept).
	CRecords int
	// Neighbours, when > 0, is how many of the most similar training
	// records vote (model.Neighbours); 0, the default, stores no vote.
	Neighbours int
	// NeighbourPower is the power similarities are raised to in the vote
	// (default DefaultWordNeighbourPower).
	NeighbourPower float64
	// Net is the network's training (model.WordNet; its Seed is replaced
	// by Seed); Net.Hidden < 0: no network.
	Net WordNetOptions
}

// DefaultWordNeighbourPower: votes weigh by squared cosine. On a validation
// slice of debtags' train split (grouped by source package,
// bench/quality.md, sixth round) the vote of the 20–50 most similar
// records raised micro + macro F1@5 of the SVM alone by about 0.006 for
// powers 1–4, squares a little ahead. In a full fit, with the topic term,
// the tuning records gained nothing (0.880 without, 0.880 with) while
// annotation took 3.5 times as long, so the vote is off unless asked for.
const DefaultWordNeighbourPower = 2

// DefaultWordCRecords: concepts people assign to more than 300 records get
// a smaller C, so their SVMs are regularised more. Their decision values
// otherwise crowd the rarer concepts out of the first five; on a
// validation slice of debtags' train split (bench/quality.md) micro + macro
// F1@5 rose by about 0.01 with 100 or 300, with C·√ or C·(300/n).
const DefaultWordCRecords = 300

// DefaultWordLabelWeight: a concept's labels count as two records people
// indexed with it. Rare concepts have few records to learn from, and their
// labels name them; on a validation slice of debtags' train split (grouped
// by source package, bench/quality.md) label records of weight 1–3 moved
// micro + macro F1@5 up by about 0.02 and weight 10 by less.
const DefaultWordLabelWeight = 2

// LabelTerms returns per prior row its label terms: the words weighing at
// least AnchorShare of the row's heaviest, so label words and phrases but
// not the words of definitions and notes, ascending.
func LabelTerms(rows [][]model.WordWeight) [][]int32 {
	out := make([][]int32, len(rows))
	for k, row := range rows {
		top := 0.0
		for _, e := range row {
			top = max(top, e.Weight)
		}
		for _, e := range row {
			if e.Weight > 0 && e.Weight >= AnchorShare*top {
				out[k] = append(out[k], e.Word)
			}
		}
		slices.Sort(out[k])
	}
	return out
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
// (linear.OneVsRest) over the records' TF-IDF vectors, and unless
// opt.Net.Hidden < 0 a network over the same vectors (TrainWordNet). The
// combination weights are left zero (annotate.TuneWordLayer learns them). C is the
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
	if opt.LabelWeight == 0 {
		opt.LabelWeight = DefaultWordLabelWeight
	}
	if !(opt.LabelWeight > 0) || math.IsInf(opt.LabelWeight, 0) || opt.Labels == nil {
		opt.LabelWeight = 0
	}
	if opt.CRecords == 0 {
		opt.CRecords = DefaultWordCRecords
	}
	if opt.CRecords < 0 {
		opt.CRecords = 0
	}
	if !(opt.NeighbourPower > 0) || math.IsInf(opt.NeighbourPower, 0) {
		opt.NeighbourPower = DefaultWordNeighbourPower
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
		LabelWeight: opt.LabelWeight, CRecords: opt.CRecords,
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
	if opt.Neighbours > 0 {
		l.KNN = neighbours(xs, labels, words+opt.Bigrams, opt.Neighbours, opt.NeighbourPower)
	}
	var labelC []float64
	for k, n := range l.LnFreq {
		if l.CRecords > 0 && int(n) > l.CRecords {
			if labelC == nil {
				labelC = make([]float64, C)
			}
			labelC[k] = opt.C * math.Sqrt(float64(l.CRecords)/float64(n))
		}
		l.LnFreq[k] = float32(math.Log1p(float64(n)))
	}
	// Label records: a concept's label terms as a record whose whole text
	// is its lead paragraph (labels are title-like), with the records'
	// IDF, so terms no record uses twice drop out. They do not count in
	// LnFreq: people did not index them.
	var weight []float64
	if l.LabelWeight > 0 {
		weight = make([]float64, len(xs), len(xs)+C)
		for i := range weight {
			weight[i] = 1
		}
		for k, ts := range opt.Labels {
			if k >= C || len(ts) == 0 {
				continue
			}
			seq := slices.DeleteFunc(slices.Clone(ts), func(w int32) bool { return w < 0 || int(w) >= words })
			var x linear.Vector
			x.Index, x.Value = l.Vector(seq, len(seq), words, &sc, nil, nil)
			if len(x.Index) == 0 {
				continue
			}
			xs = append(xs, x)
			labels = append(labels, []int32{int32(k)})
			weight = append(weight, l.LabelWeight)
			l.Labels++
		}
	}
	// The network learns from the same vectors, records and weights as
	// the SVMs; with more than one worker, beside them.
	var netErr error
	netDone := make(chan struct{})
	trainNet := func() {
		defer close(netDone)
		if opt.Net.Hidden >= 0 {
			no := opt.Net
			no.Seed = opt.Seed
			l.Net, netErr = TrainWordNet(xs, labels, weight, C, W, no)
		}
	}
	if opt.Workers > 1 {
		go trainNet()
	} else {
		trainNet()
	}
	svms, err := linear.OneVsRest(xs, labels, C, W, linear.OneVsRestOptions{
		SVM: linear.SVMOptions{C: opt.C, Seed: opt.Seed, Weight: weight}, LabelC: labelC, Prune: opt.Prune, Workers: opt.Workers})
	<-netDone
	if err != nil {
		return nil, err
	}
	if netErr != nil {
		return nil, netErr
	}
	// Concept-major to word-major.
	for k, sv := range svms {
		l.Bias[k] = float32(sv.Bias)
	}
	l.Start, l.Concept, l.Weight = byColumn(len(svms), W, func(k int) ([]int32, []float32) { return svms[k].Index, svms[k].Weight })
	return l, nil
}

// neighbours builds the nearest-neighbour vote (model.Neighbours) over the
// records' vectors xs and subjects: the features below parts (the
// whole-text part) feature-major, records in order. The vote's weight is
// left 0 (annotate.TuneWordLayer learns it).
func neighbours(xs []linear.Vector, subjects [][]int32, parts, n int, power float64) *model.Neighbours {
	nb := &model.Neighbours{N: n, Power: power, SubjectStart: make([]int32, 1, len(xs)+1)}
	nb.Start, nb.Record, nb.Value = byColumn(len(xs), parts, func(r int) ([]int32, []float32) { return xs[r].Index, xs[r].Value })
	for r := range xs {
		ks := slices.Clone(subjects[r])
		slices.Sort(ks)
		nb.Subject = append(nb.Subject, slices.Compact(ks)...)
		nb.SubjectStart = append(nb.SubjectStart, int32(len(nb.Subject)))
	}
	return nb
}

// byColumn turns n sparse rows (row(i): column indices and values) into
// column-major form over the columns below cols: start[c]..start[c+1]
// index the rows holding column c, ascending, and their values. Columns
// at or above cols are left out.
func byColumn(n, cols int, row func(i int) ([]int32, []float32)) (start, rows []int32, vals []float32) {
	start = make([]int32, cols+1)
	for i := 0; i < n; i++ {
		idx, _ := row(i)
		for _, c := range idx {
			if int(c) < cols {
				start[c+1]++
			}
		}
	}
	for c := 0; c < cols; c++ {
		start[c+1] += start[c]
	}
	rows = make([]int32, start[cols])
	vals = make([]float32, start[cols])
	fill := slices.Clone(start[:cols])
	for i := 0; i < n; i++ { // i ascending: rows come out sorted within a column
		idx, val := row(i)
		for j, c := range idx {
			if int(c) < cols {
				rows[fill[c]] = int32(i)
				vals[fill[c]] = val[j]
				fill[c]++
			}
		}
	}
	return start, rows, vals
}
