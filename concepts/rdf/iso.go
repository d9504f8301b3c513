package rdf

import (
	"fmt"
	"sort"
	"strings"
)

// Isomorphic reports whether two graphs are isomorphic in the sense of RDF
// 1.1 Concepts §3.6: as sets of triples (duplicates count once) they are
// equal under some one-to-one mapping of blank nodes. IRIs, lexical forms and
// datatypes compare exactly, language tags case-insensitively; G (the graph
// name of a quad) is compared like a fourth term. When they differ, the
// string says why, naming a triple of one graph that the other lacks where
// it can.
//
// Blank nodes are first coloured by iterated hashing of their neighbourhoods
// (colour refinement); a backtracking search over nodes of equal colour then
// looks for the mapping. The search gives up, reporting false, after
// isoMaxSteps steps, which only highly symmetric blank-node structures reach.
func Isomorphic(a, b []Triple) (bool, string) {
	terms := &isoTerms{ids: make(map[Term]int32)}
	ga, gb := terms.graph(a), terms.graph(b)
	if len(ga.triples) != len(gb.triples) {
		return false, fmt.Sprintf("%d distinct triples against %d%s", len(ga.triples), len(gb.triples), groundDiff(terms, ga, gb))
	}
	if d := groundDiff(terms, ga, gb); d != "" {
		return false, strings.TrimPrefix(d, "; ")
	}
	if len(ga.blanks) != len(gb.blanks) {
		return false, fmt.Sprintf("%d blank nodes against %d", len(ga.blanks), len(gb.blanks))
	}
	if len(ga.blanks) == 0 {
		return true, "" // equal sizes and every triple of a is in b
	}
	refine(terms, ga, gb)
	if !sameColours(ga, gb) {
		return false, "no blank node mapping: the blank nodes' neighbourhoods differ" + blankDiff(terms, ga, gb)
	}
	s := isoSearch{a: ga, b: gb, fwd: make([]int32, len(ga.blanks)), used: make([]bool, len(gb.blanks))}
	s.order()
	if !s.assign(0) {
		if s.steps > isoMaxSteps {
			return false, "gave up searching for a blank node mapping"
		}
		return false, "no blank node mapping makes the graphs equal" + blankDiff(terms, ga, gb)
	}
	return true, ""
}

const isoMaxSteps = 1_000_000

// isoTerms numbers the terms that are not blank nodes, shared by both
// graphs: id i ≥ 1 is list[i-1]. A blank node of a graph is -(1+its index in
// that graph's blanks); 0 is the zero Term (default graph).
type isoTerms struct {
	ids  map[Term]int32 // term with lower-case language tag -> id
	list []Term
}

func (ts *isoTerms) id(t Term) int32 {
	if t.Kind == None {
		return 0
	}
	if t.Lang != "" {
		t.Lang = strings.ToLower(t.Lang)
	}
	if id, ok := ts.ids[t]; ok {
		return id
	}
	ts.list = append(ts.list, t)
	id := int32(len(ts.list))
	ts.ids[t] = id
	return id
}

func (ts *isoTerms) term(g *isoGraph, id int32) Term {
	switch {
	case id > 0:
		return ts.list[id-1]
	case id < 0:
		return Term{Kind: Blank, Value: g.blanks[-id-1]}
	}
	return Term{}
}

func (ts *isoTerms) String(g *isoGraph, t isoTriple) string {
	return Triple{S: ts.term(g, t[0]), P: ts.term(g, t[1]), O: ts.term(g, t[2]), G: ts.term(g, t[3])}.String()
}

// isoGraph is one graph with its terms numbered.
type isoGraph struct {
	triples []isoTriple
	set     map[isoTriple]struct{}
	blanks  []string  // labels; blank node k has id -(k+1)
	in      [][]int32 // blank node k -> indices of its triples
	colour  []uint64  // blank node k -> current colour
}

type isoTriple [4]int32

func blankIndex(id int32) int { return int(-id - 1) }

func (ts *isoTerms) graph(triples []Triple) *isoGraph {
	g := &isoGraph{set: make(map[isoTriple]struct{}, len(triples))}
	blankIDs := map[string]int32{}
	for _, t := range triples {
		var it isoTriple
		for j, x := range [4]Term{t.S, t.P, t.O, t.G} {
			if x.Kind != Blank {
				it[j] = ts.id(x)
				continue
			}
			id, ok := blankIDs[x.Value]
			if !ok {
				g.blanks = append(g.blanks, x.Value)
				g.in = append(g.in, nil)
				id = -int32(len(g.blanks))
				blankIDs[x.Value] = id
			}
			it[j] = id
		}
		if _, dup := g.set[it]; dup {
			continue
		}
		g.set[it] = struct{}{}
		i := int32(len(g.triples))
		g.triples = append(g.triples, it)
		for j, x := range it {
			if x < 0 && !repeats(it, j) {
				g.in[blankIndex(x)] = append(g.in[blankIndex(x)], i)
			}
		}
	}
	g.colour = make([]uint64, len(g.blanks))
	return g
}

// repeats reports whether it[j] already occurs before position j.
func repeats(it isoTriple, j int) bool {
	for i := 0; i < j; i++ {
		if it[i] == it[j] {
			return true
		}
	}
	return false
}

func (t isoTriple) ground() bool { return t[0] >= 0 && t[1] >= 0 && t[2] >= 0 && t[3] >= 0 }

// groundDiff names a triple without blank nodes that one graph has and the
// other lacks, or returns "".
func groundDiff(ts *isoTerms, a, b *isoGraph) string {
	for _, x := range []struct {
		g, h       *isoGraph
		name, than string
	}{{a, b, "first", "second"}, {b, a, "second", "first"}} {
		for _, t := range x.g.triples {
			if _, ok := x.h.set[t]; t.ground() && !ok {
				return fmt.Sprintf("; the %s graph has %s, the %s does not", x.name, ts.String(x.g, t), x.than)
			}
		}
	}
	return ""
}

func blankDiff(ts *isoTerms, a, b *isoGraph) string {
	cb := map[uint64]int{}
	for _, c := range b.colour {
		cb[c]++
	}
	for k, c := range a.colour {
		if cb[c] == 0 {
			return fmt.Sprintf("; blank node _:%s of the first graph has no counterpart, see %s",
				a.blanks[k], ts.String(a, a.triples[a.in[k][0]]))
		}
	}
	return ""
}

// fnvString is 64-bit FNV-1a.
func fnvString(s string) uint64 {
	h := uint64(14695981039346656037)
	for i := 0; i < len(s); i++ {
		h ^= uint64(s[i])
		h *= 1099511628211
	}
	return h
}

// mix combines two hashes (the finaliser of SplitMix64 over a+b*odd).
func mix(a, b uint64) uint64 {
	x := a + b*0x9E3779B97F4A7C15 + 0x632BE59BD9B4E019
	x ^= x >> 30
	x *= 0xBF58476D1CE4E5B9
	x ^= x >> 27
	x *= 0x94D049BB133111EB
	x ^= x >> 31
	return x
}

// refine colours the blank nodes of both graphs by the same deterministic
// function: each round a node's colour becomes a hash of its colour and the
// multiset of (position, other terms) of its triples. It stops when a round
// splits no colour class in either graph.
func refine(ts *isoTerms, a, b *isoGraph) {
	ground := make([]uint64, len(ts.list)+1)
	for i, t := range ts.list {
		ground[i+1] = mix(mix(fnvString(t.Value), fnvString(t.Datatype)+uint64(t.Kind)), fnvString(t.Lang))
	}
	classes := func(g *isoGraph) int {
		m := map[uint64]bool{}
		for _, c := range g.colour {
			m[c] = true
		}
		return len(m)
	}
	na, nb := 1, 1
	for round := 0; round <= len(a.blanks)+1; round++ {
		for _, g := range []*isoGraph{a, b} {
			next := make([]uint64, len(g.colour))
			for k := range g.blanks {
				self := -int32(k + 1)
				var sum uint64
				for _, ti := range g.in[k] {
					var h uint64 = 1
					for j, x := range g.triples[ti] {
						switch {
						case x == self:
							h = mix(h, uint64(j)+0xB1A4)
						case x < 0:
							h = mix(h, g.colour[blankIndex(x)]+uint64(j))
						default:
							h = mix(h, ground[x]+uint64(j))
						}
					}
					sum += mix(h, 7)
				}
				next[k] = mix(g.colour[k], sum)
			}
			g.colour = next
		}
		ca, cb := classes(a), classes(b)
		if ca == na && cb == nb && round > 0 {
			return
		}
		na, nb = ca, cb
	}
}

func sameColours(a, b *isoGraph) bool {
	m := map[uint64]int{}
	for _, c := range a.colour {
		m[c]++
	}
	for _, c := range b.colour {
		m[c]--
	}
	for _, n := range m {
		if n != 0 {
			return false
		}
	}
	return true
}

// isoSearch extends a partial blank node mapping fwd (a's nodes to b's)
// one node at a time, checking every triple whose nodes are all mapped.
type isoSearch struct {
	a, b  *isoGraph
	nodes []int              // a's blank nodes in search order
	cands map[uint64][]int32 // colour -> b's blank node ids of that colour
	fwd   []int32            // a's blank node index -> b's id, 0 when unmapped
	used  []bool             // b's blank node index -> taken
	steps int
}

// order searches the nodes of the smallest colour classes first.
func (s *isoSearch) order() {
	s.cands = map[uint64][]int32{}
	for k, c := range s.b.colour {
		s.cands[c] = append(s.cands[c], -int32(k+1))
	}
	s.nodes = make([]int, len(s.a.blanks))
	for k := range s.nodes {
		s.nodes[k] = k
	}
	sort.SliceStable(s.nodes, func(i, j int) bool {
		return len(s.cands[s.a.colour[s.nodes[i]]]) < len(s.cands[s.a.colour[s.nodes[j]]])
	})
}

func (s *isoSearch) assign(i int) bool {
	if i == len(s.nodes) {
		return true
	}
	n := s.nodes[i]
	for _, m := range s.cands[s.a.colour[n]] {
		if s.used[blankIndex(m)] {
			continue
		}
		if s.steps++; s.steps > isoMaxSteps {
			return false
		}
		s.fwd[n], s.used[blankIndex(m)] = m, true
		if s.consistent(n) && s.assign(i+1) {
			return true
		}
		s.fwd[n], s.used[blankIndex(m)] = 0, false
	}
	return false
}

// consistent checks the triples of n whose blank nodes are all mapped.
func (s *isoSearch) consistent(n int) bool {
next:
	for _, ti := range s.a.in[n] {
		k := s.a.triples[ti]
		for j, x := range k {
			if x >= 0 {
				continue
			}
			m := s.fwd[blankIndex(x)]
			if m == 0 {
				continue next
			}
			k[j] = m
		}
		if _, ok := s.b.set[k]; !ok {
			return false
		}
	}
	return true
}
