package terms

import (
	"math/bits"
	"slices"
	"strings"
)

// automaton is an Aho–Corasick matcher (Aho & Corasick 1975, "Efficient
// string matching: an aid to bibliographic search", CACM 18(6)) whose
// alphabet is word terms: each distinct word of a phrase gets a symbol, and
// a phrase is a sequence of symbols. It is immutable once built, so any
// number of goroutines may match with it.
type automaton struct {
	gen     uint32           // build generation, to validate cached symbols
	syms    map[string]int32 // word term -> symbol, e.g. "screen" -> 17
	root    []int32          // symbol -> state after the root (0 = none)
	next    edgeTable        // state<<32|symbol -> state, for states other than the root
	states  []acState
	phrases []phraseDef
}

// acState is one trie node; its fields share a cache line.
type acState struct {
	fail    int32  // longest proper suffix state
	out     int32  // phrase ending exactly here, -1 if none
	outLink int32  // nearest suffix state with out >= 0, 0 if none
	depth   int32  // words from the root
	kids    uint64 // bit sym%64 set for each child's symbol: most failing steps skip the edge table
}

// phraseDef is one compiled phrase.
type phraseDef struct {
	id   int32  // dictionary id of the phrase term
	term string // e.g. "screen reader"
}

// buildAutomaton compiles phrases (terms whose words are separated by one
// space, at least two words each).
func buildAutomaton(phrases []phraseDef, gen uint32) *automaton {
	a := &automaton{
		gen:     gen,
		syms:    map[string]int32{},
		states:  []acState{{out: -1}},
		phrases: phrases,
	}
	edges := map[uint64]int32{}
	step := func(s, sym int32) int32 {
		if s == 0 {
			return a.root[sym]
		}
		return edges[uint64(s)<<32|uint64(sym)]
	}
	for pi, ph := range phrases {
		s := int32(0)
		for _, w := range strings.Split(ph.term, " ") {
			sym, ok := a.syms[w]
			if !ok {
				sym = int32(len(a.syms))
				a.syms[w] = sym
				a.root = append(a.root, 0)
			}
			nx := step(s, sym)
			if nx == 0 {
				nx = int32(len(a.states))
				a.states = append(a.states, acState{out: -1, depth: a.states[s].depth + 1})
				if s == 0 {
					a.root[sym] = nx
				} else {
					edges[uint64(s)<<32|uint64(sym)] = nx
					a.states[s].kids |= 1 << (uint(sym) & 63)
				}
			}
			s = nx
		}
		if a.states[s].out < 0 {
			a.states[s].out = int32(pi)
		}
	}
	// Failure links in breadth-first order from the root's children.
	kids := make(map[int32][][2]int32, len(a.states)) // state -> (symbol, child)
	for k, c := range edges {
		p := int32(k >> 32)
		kids[p] = append(kids[p], [2]int32{int32(uint32(k)), c})
	}
	queue := make([]int32, 0, len(a.states))
	for _, c := range a.root {
		if c != 0 {
			queue = append(queue, c)
		}
	}
	for qi := 0; qi < len(queue); qi++ {
		s := queue[qi]
		for _, sc := range kids[s] {
			sym, c := sc[0], sc[1]
			f := a.states[s].fail
			for {
				if nx := step(f, sym); nx != 0 {
					a.states[c].fail = nx
					break
				}
				if f == 0 {
					a.states[c].fail = 0
					break
				}
				f = a.states[f].fail
			}
			fc := a.states[c].fail
			if a.states[fc].out >= 0 {
				a.states[c].outLink = fc
			} else {
				a.states[c].outLink = a.states[fc].outLink
			}
			queue = append(queue, c)
		}
	}
	a.next = newEdgeTable(edges)
	return a
}

// goTo is the goto function without failure (0 = no edge).
func (a *automaton) goTo(s, sym int32) int32 {
	if s == 0 {
		return a.root[sym]
	}
	if a.states[s].kids&(1<<(uint(sym)&63)) == 0 {
		return 0
	}
	return a.next.get(uint64(s)<<32 | uint64(sym))
}

// edgeTable is an open-addressing hash table from uint64 keys to non-zero
// int32 values (linear probing, load factor at most 1/2); it is built once
// and then only read, so lookups need no locking.
type edgeTable struct {
	keys  []uint64
	vals  []int32
	shift uint
}

func newEdgeTable(m map[uint64]int32) edgeTable {
	n := 16
	for n < 2*len(m) {
		n *= 2
	}
	t := edgeTable{keys: make([]uint64, n), vals: make([]int32, n), shift: uint(64 - bits.TrailingZeros(uint(n)))}
	for k, v := range m {
		i := t.slot(k)
		for t.vals[i] != 0 {
			i = (i + 1) & (n - 1)
		}
		t.keys[i], t.vals[i] = k, v
	}
	return t
}

func (t *edgeTable) slot(k uint64) int { return int((k * 0x9E3779B97F4A7C15) >> t.shift) }

// get returns the value of k, 0 when absent.
func (t *edgeTable) get(k uint64) int32 {
	if len(t.keys) == 0 {
		return 0
	}
	mask := len(t.keys) - 1
	for i := t.slot(k); ; i = (i + 1) & mask {
		v := t.vals[i]
		if v == 0 {
			return 0
		}
		if t.keys[i] == k {
			return v
		}
	}
}

// match is a phrase occurrence over window positions [start, start+n).
type match struct {
	start, n int32
	phrase   int32
}

// findAll appends every phrase occurrence in the symbol sequence syms
// (-1 = a word in no phrase) to dst.
func (a *automaton) findAll(syms []int32, dst []match) []match {
	s := int32(0)
	for i, sym := range syms {
		if sym < 0 {
			s = 0
			continue
		}
		for {
			if nx := a.goTo(s, sym); nx != 0 {
				s = nx
				break
			}
			if s == 0 {
				break
			}
			s = a.states[s].fail
		}
		o := s
		if a.states[o].out < 0 {
			o = a.states[o].outLink
		}
		for o != 0 {
			st := &a.states[o]
			dst = append(dst, match{start: int32(i) - st.depth + 1, n: st.depth, phrase: st.out})
			o = st.outLink
		}
	}
	return dst
}

// selectLongest keeps the longest occurrences that do not overlap a longer
// (or, for equal length, an earlier) kept one, and returns them sorted by
// start. taken is scratch space of len(syms).
func selectLongest(ms []match, taken []bool) []match {
	if len(ms) <= 1 {
		return ms
	}
	slices.SortFunc(ms, func(x, y match) int {
		if x.n != y.n {
			return int(y.n - x.n)
		}
		return int(x.start - y.start)
	})
	kept := ms[:0]
	for _, m := range ms {
		free := true
		for j := m.start; j < m.start+m.n; j++ {
			if taken[j] {
				free = false
				break
			}
		}
		if !free {
			continue
		}
		for j := m.start; j < m.start+m.n; j++ {
			taken[j] = true
		}
		kept = append(kept, m)
	}
	slices.SortFunc(kept, func(x, y match) int { return int(x.start - y.start) })
	return kept
}
