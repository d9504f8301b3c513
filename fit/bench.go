package fit

import (
	"time"

	"termgrove/model"
	"termgrove/prior"
)

// Bench drives the sampler one sweep at a time, for benchmarks and
// comparisons that need to look at the model between sweeps.
type Bench struct {
	st          *state
	InitSeconds float64 // time of the initial assignment
}

// NewBench builds the sampler and draws the initial assignment.
func NewBench(p *prior.Prior, c *Corpus, opt Options) (*Bench, error) {
	st, err := newState(p, c, opt)
	if err != nil {
		return nil, err
	}
	t := time.Now()
	st.initAssign()
	return &Bench{st: st, InitSeconds: time.Since(t).Seconds()}, nil
}

// Sweep runs one Gibbs sweep (and the α update when it is due).
func (b *Bench) Sweep() {
	st := b.st
	st.sweepOnce()
	st.sweep++
	if !st.opt.FixedAlpha && st.sweep > st.opt.BurnIn && st.sweep%st.opt.OptimizeEvery == 0 {
		st.optimizeAlpha()
	}
}

// LogLik is the training joint log p(w, z).
func (b *Bench) LogLik() float64 { return b.st.logLik() }

// Model builds the model of the current state.
func (b *Bench) Model() *model.Model { return b.st.buildModel() }

// HeldOut returns the held-out records' word ids.
func (b *Bench) HeldOut() [][]int32 {
	var out [][]int32
	for _, i := range b.st.heldout {
		out = append(out, b.st.corpus.Docs[i].Words)
	}
	return out
}

// ListStats returns, averaged over the training tokens, the length of the
// token's word–topic list and the number of distinct topics of its record:
// the two walks a sparse sampler's cost per token grows with.
func (b *Bench) ListStats() (wordList, recordTopics float64) {
	st := b.st
	seen := make([]bool, st.K)
	var ks []int32
	var n float64
	for di := range st.docs {
		d := &st.docs[di]
		for i := d.start; i < d.end; i++ {
			if k := st.z[i]; !seen[k] {
				seen[k] = true
				ks = append(ks, k)
			}
		}
		for i := d.start; i < d.end; i++ {
			wordList += float64(len(st.wt[st.words[i]]))
			recordTopics += float64(len(ks))
			n++
		}
		for _, k := range ks {
			seen[k] = false
		}
		ks = ks[:0]
	}
	if n > 0 {
		wordList /= n
		recordTopics /= n
	}
	return wordList, recordTopics
}

// Phases returns the phase timers of multi-worker sweeps since the last
// call and resets them.
func (b *Bench) Phases() Phases {
	p := b.st.phase
	b.st.phase = Phases{Sample: make([]float64, len(p.Sample))}
	return p
}

// FlatStats returns the counts of the flat path's draws (flat.go) since the
// last call and resets them.
func (b *Bench) FlatStats() FlatStats {
	var f FlatStats
	for _, wk := range b.st.workers {
		s := wk.fst
		f.Tokens += s.Tokens
		f.WordProposals += s.WordProposals
		f.WordAccepted += s.WordAccepted
		f.SmoothProposals += s.SmoothProposals
		f.SmoothAccepted += s.SmoothAccepted
		f.WordMajorTokens += s.WordMajorTokens
		f.DocProposals += s.DocProposals
		f.DocAccepted += s.DocAccepted
		wk.fst = FlatStats{}
	}
	return f
}
