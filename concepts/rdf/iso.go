package rdf

import (
	"fmt"
	"hash/fnv"
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
	ga, gb := newIsoGraph(a), newIsoGraph(b)
	if len(ga.triples) != len(gb.triples) {
		return false, fmt.Sprintf("%d distinct triples against %d%s", len(ga.triples), len(gb.triples), groundDiff(ga, gb))
	}
	if d := groundDiff(ga, gb); d != "" {
		return false, strings.TrimPrefix(d, "; ")
	}
	if len(ga.blanks) != len(gb.blanks) {
		return false, fmt.Sprintf("%d blank nodes against %d", len(ga.blanks), len(gb.blanks))
	}
	refine(ga, gb)
	if !sameColours(ga, gb) {
		return false, "no blank node mapping: the blank nodes' neighbourhoods differ" + blankDiff(ga, gb)
	}
	s := isoSearch{a: ga, b: gb, fwd: make(map[string]string), used: make(map[string]bool)}
	s.order()
	if !s.assign(0) {
		if s.steps > isoMaxSteps {
			return false, "gave up searching for a blank node mapping"
		}
		return false, "no blank node mapping makes the graphs equal" + blankDiff(ga, gb)
	}
	return true, ""
}

const isoMaxSteps = 1_000_000

// isoTerm is a term as compared: key is "_:label" for a blank node,
// otherwise a form equal exactly when the terms are equal.
type isoTerm struct {
	key   string
	blank bool
}

type isoGraph struct {
	triples []isoTriple
	set     map[[4]string]bool   // keys of all triples
	blanks  []string             // blank node keys, sorted
	in      map[string][]int     // blank node key -> indices of its triples
	colour  map[string]uint64    // blank node key -> current colour
	orig    map[[4]string]Triple // for messages
}

type isoTriple [4]isoTerm

func isoKey(t Term) isoTerm {
	switch t.Kind {
	case Blank:
		return isoTerm{key: "_:" + t.Value, blank: true}
	case IRI:
		return isoTerm{key: "<" + t.Value}
	case Literal:
		return isoTerm{key: "\"" + t.Value + "\x00" + t.Datatype + "\x00" + strings.ToLower(t.Lang)}
	}
	return isoTerm{key: ""}
}

func newIsoGraph(ts []Triple) *isoGraph {
	g := &isoGraph{set: make(map[[4]string]bool, len(ts)), in: make(map[string][]int),
		colour: make(map[string]uint64), orig: make(map[[4]string]Triple)}
	for _, t := range ts {
		it := isoTriple{isoKey(t.S), isoKey(t.P), isoKey(t.O), isoKey(t.G)}
		k := it.keys()
		if g.set[k] {
			continue
		}
		g.set[k] = true
		g.orig[k] = t
		i := len(g.triples)
		g.triples = append(g.triples, it)
		for j, x := range it {
			if !x.blank || (j > 0 && repeats(it, j)) {
				continue
			}
			if _, seen := g.in[x.key]; !seen {
				g.blanks = append(g.blanks, x.key)
			}
			g.in[x.key] = append(g.in[x.key], i)
		}
	}
	sort.Strings(g.blanks)
	return g
}

// repeats reports whether it[j] already occurs before position j.
func repeats(it isoTriple, j int) bool {
	for i := 0; i < j; i++ {
		if it[i].key == it[j].key {
			return true
		}
	}
	return false
}

func (t *isoTriple) keys() [4]string {
	return [4]string{t[0].key, t[1].key, t[2].key, t[3].key}
}

func (t *isoTriple) ground() bool {
	return !t[0].blank && !t[1].blank && !t[2].blank && !t[3].blank
}

// groundDiff names a triple without blank nodes that one graph has and the
// other lacks, or returns "".
func groundDiff(a, b *isoGraph) string {
	for _, x := range []struct {
		g, h       *isoGraph
		name, than string
	}{{a, b, "first", "second"}, {b, a, "second", "first"}} {
		for i := range x.g.triples {
			t := &x.g.triples[i]
			if k := t.keys(); t.ground() && !x.h.set[k] {
				return fmt.Sprintf("; the %s graph has %s, the %s does not", x.name, x.g.orig[k], x.than)
			}
		}
	}
	return ""
}

func blankDiff(a, b *isoGraph) string {
	ca, cb := map[uint64]int{}, map[uint64]int{}
	for _, k := range a.blanks {
		ca[a.colour[k]]++
	}
	for _, k := range b.blanks {
		cb[b.colour[k]]++
	}
	for _, k := range a.blanks {
		if ca[a.colour[k]] != cb[a.colour[k]] {
			return fmt.Sprintf("; first differing blank node of the first graph is in %s", a.orig[a.triples[a.in[k][0]].keys()])
		}
	}
	return ""
}

func fnvString(s string) uint64 {
	h := fnv.New64a()
	h.Write([]byte(s))
	return h.Sum64()
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
func refine(a, b *isoGraph) {
	ground := map[string]uint64{}
	hashOf := func(g *isoGraph, x isoTerm) uint64 {
		if x.blank {
			return g.colour[x.key]
		}
		h, ok := ground[x.key]
		if !ok {
			h = fnvString(x.key)
			ground[x.key] = h
		}
		return h
	}
	classes := func(g *isoGraph) int {
		m := map[uint64]bool{}
		for _, k := range g.blanks {
			m[g.colour[k]] = true
		}
		return len(m)
	}
	na, nb := 1, 1
	for round := 0; round <= len(a.blanks)+1; round++ {
		for _, g := range []*isoGraph{a, b} {
			next := make(map[string]uint64, len(g.blanks))
			for _, k := range g.blanks {
				var sum uint64
				for _, ti := range g.in[k] {
					t := g.triples[ti]
					var h uint64 = 1
					for j, x := range t {
						if x.key == k {
							h = mix(h, uint64(j)+0xB1A4) // where k sits, itself
						} else {
							h = mix(h, hashOf(g, x)+uint64(j))
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
	for _, k := range a.blanks {
		m[a.colour[k]]++
	}
	for _, k := range b.blanks {
		m[b.colour[k]]--
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
	nodes []string            // a's blank nodes in search order
	cands map[uint64][]string // colour -> b's blank nodes of that colour
	fwd   map[string]string
	used  map[string]bool
	steps int
}

// order searches the nodes of the smallest colour classes first.
func (s *isoSearch) order() {
	s.cands = map[uint64][]string{}
	for _, k := range s.b.blanks {
		c := s.b.colour[k]
		s.cands[c] = append(s.cands[c], k)
	}
	s.nodes = append([]string(nil), s.a.blanks...)
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
		if s.used[m] {
			continue
		}
		if s.steps++; s.steps > isoMaxSteps {
			return false
		}
		s.fwd[n], s.used[m] = m, true
		if s.consistent(n) && s.assign(i+1) {
			return true
		}
		delete(s.fwd, n)
		delete(s.used, m)
	}
	return false
}

// consistent checks the triples of n whose blank nodes are all mapped.
func (s *isoSearch) consistent(n string) bool {
next:
	for _, ti := range s.a.in[n] {
		t := s.a.triples[ti]
		var k [4]string
		for j, x := range t {
			if !x.blank {
				k[j] = x.key
				continue
			}
			m, ok := s.fwd[x.key]
			if !ok {
				continue next
			}
			k[j] = m
		}
		if !s.b.set[k] {
			return false
		}
	}
	return true
}
