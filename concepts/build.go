package concepts

import (
	"fmt"
	"slices"
	"sort"
	"strings"

	"termgrove/concepts/rdf"
)

// Namespaces of the vocabularies the loader understands.
const (
	nsSKOS   = "http://www.w3.org/2004/02/skos/core#"
	nsSKOSXL = "http://www.w3.org/2008/05/skos-xl#"
	nsRDF    = "http://www.w3.org/1999/02/22-rdf-syntax-ns#"
	nsOWL    = "http://www.w3.org/2002/07/owl#"
	rdfNil   = nsRDF + "nil"
)

// pred is a predicate the loader keeps; every other triple is dropped as
// soon as it is read.
type pred uint8

const (
	pNone pred = iota
	pType
	pPref
	pAlt
	pHidden
	pXLPref
	pXLAlt
	pXLHidden
	pLiteralForm
	pNotation
	pDefinition
	pScopeNote
	pTitle
	pBroader
	pNarrower
	pBroaderT
	pNarrowerT
	pRelated
	pTopConceptOf
	pHasTopConcept
	pInScheme
	pMember
	pMemberList
	pFirst
	pRest
	pDeprecated
	pExactMatch
	pBroadMatch
	pNarrowMatch
	pRelatedMatch
)

var predicates = map[string]pred{
	nsRDF + "type":                               pType,
	nsSKOS + "prefLabel":                         pPref,
	nsSKOS + "altLabel":                          pAlt,
	nsSKOS + "hiddenLabel":                       pHidden,
	nsSKOSXL + "prefLabel":                       pXLPref,
	nsSKOSXL + "altLabel":                        pXLAlt,
	nsSKOSXL + "hiddenLabel":                     pXLHidden,
	nsSKOSXL + "literalForm":                     pLiteralForm,
	nsSKOS + "notation":                          pNotation,
	nsSKOS + "definition":                        pDefinition,
	nsSKOS + "scopeNote":                         pScopeNote,
	"http://purl.org/dc/terms/title":             pTitle,
	"http://purl.org/dc/elements/1.1/title":      pTitle,
	"http://www.w3.org/2000/01/rdf-schema#label": pTitle,
	nsSKOS + "broader":                           pBroader,
	nsSKOS + "narrower":                          pNarrower,
	nsSKOS + "broaderTransitive":                 pBroaderT,
	nsSKOS + "narrowerTransitive":                pNarrowerT,
	nsSKOS + "related":                           pRelated,
	nsSKOS + "topConceptOf":                      pTopConceptOf,
	nsSKOS + "hasTopConcept":                     pHasTopConcept,
	nsSKOS + "inScheme":                          pInScheme,
	nsSKOS + "member":                            pMember,
	nsSKOS + "memberList":                        pMemberList,
	nsRDF + "first":                              pFirst,
	nsRDF + "rest":                               pRest,
	nsOWL + "deprecated":                         pDeprecated,
	nsSKOS + "exactMatch":                        pExactMatch,
	nsSKOS + "broadMatch":                        pBroadMatch,
	nsSKOS + "narrowMatch":                       pNarrowMatch,
	nsSKOS + "relatedMatch":                      pRelatedMatch,
}

// Classes (rdf:type objects) the loader keeps, as bits of node.types.
const (
	tConcept uint8 = 1 << iota
	tScheme
	tCollection
	tOrdered
	tXLLabel
)

var classes = map[string]uint8{
	nsSKOS + "Concept":           tConcept,
	nsSKOS + "ConceptScheme":     tScheme,
	nsSKOS + "Collection":        tCollection,
	nsSKOS + "OrderedCollection": tOrdered | tCollection,
	nsSKOSXL + "Label":           tXLLabel,
}

// node accumulates what the document says about one subject (or names one
// object). Only facts the loader uses are kept, never whole triples.
type node struct {
	iri   string // "http://ex.org/c/1", or "_:b0" for a blank node
	types uint8  // tConcept | ...
	dep   bool   // owl:deprecated true
	lits  []litFact
	links []linkFact
}

// litFact is a literal-valued statement, e.g. {pPref, true, "en", "cat"}.
// plain is false when a label property has a non-plain value (an IRI, a
// blank node or a typed literal, SKOS Reference S12); text then holds it in
// N-Triples syntax.
type litFact struct {
	p     pred
	plain bool
	lang  string
	text  string
}

// linkFact is a resource-valued statement: p and the object's node id.
type linkFact struct {
	p pred
	o int32
}

// builder turns a stream of triples into a Scheme.
type builder struct {
	nodes   []node
	iris    map[string]int32 // IRI -> node id
	blanks  map[string]int32 // blank node label -> node id
	triples int

	// One-entry caches: consecutive triples mostly share subject and often
	// predicate.
	lastS     string
	lastSKind rdf.Kind
	lastSID   int32
	lastP     string
	lastPred  pred
	lastLang  string
	lastO     string // last IRI object interned, e.g. the scheme of inScheme
	lastOID   int32

	schemes []int32 // schemeIDs, once the document is read
}

func newBuilder() *builder {
	return &builder{iris: make(map[string]int32, 1024), blanks: make(map[string]int32), lastSID: -1, lastOID: -1}
}

func (b *builder) id(t rdf.Term) int32 {
	m, key := b.iris, t.Value
	if t.Kind == rdf.Blank {
		m = b.blanks
	}
	if id, ok := m[key]; ok {
		return id
	}
	id := int32(len(b.nodes))
	iri := key
	if t.Kind == rdf.Blank {
		iri = "_:" + key
	}
	b.nodes = append(b.nodes, node{iri: iri})
	m[key] = id
	return id
}

func (b *builder) add(t rdf.Triple) error {
	b.triples++
	var p pred
	if t.P.Value == b.lastP {
		p = b.lastPred
	} else {
		p = predicates[t.P.Value]
		b.lastP, b.lastPred = t.P.Value, p
	}
	if p == pNone {
		return nil
	}
	var s int32
	if t.S.Kind == b.lastSKind && t.S.Value == b.lastS && b.lastSID >= 0 {
		s = b.lastSID
	} else {
		s = b.id(t.S)
		b.lastS, b.lastSKind, b.lastSID = t.S.Value, t.S.Kind, s
	}
	n := &b.nodes[s]
	switch p {
	case pType:
		n.types |= classes[t.O.Value]
	case pDeprecated:
		n.dep = t.O.Kind == rdf.Literal && (t.O.Value == "true" || t.O.Value == "1")
	case pPref, pAlt, pHidden, pLiteralForm, pNotation, pDefinition, pScopeNote, pTitle:
		f := litFact{p: p, plain: t.O.Kind == rdf.Literal, text: t.O.Value}
		if t.O.Kind == rdf.Literal {
			if t.O.Lang != "" {
				if t.O.Lang != b.lastLang {
					b.lastLang = t.O.Lang
				}
				f.lang = b.lastLang
			} else if t.O.Datatype != "" && t.O.Datatype != rdf.XSDString && p != pNotation {
				f.plain = false
				f.text = t.O.String()
			}
		} else {
			f.text = t.O.String()
		}
		if n.lits == nil {
			n.lits = make([]litFact, 0, 4) // a concept has a few labels and notes
		}
		n.lits = append(n.lits, f)
	default:
		if t.O.Kind != rdf.IRI && t.O.Kind != rdf.Blank {
			return nil
		}
		var o int32
		if t.O.Kind == rdf.IRI && t.O.Value == b.lastO && b.lastOID >= 0 {
			o = b.lastOID
		} else {
			o = b.id(t.O) // may grow b.nodes: n is stale after this
			if t.O.Kind == rdf.IRI {
				b.lastO, b.lastOID = t.O.Value, o
			}
		}
		if b.nodes[s].links == nil {
			b.nodes[s].links = make([]linkFact, 0, 4)
		}
		b.nodes[s].links = append(b.nodes[s].links, linkFact{p: p, o: o})
	}
	return nil
}

// schemeIDs returns the node ids of every concept scheme, sorted by IRI:
// resources typed skos:ConceptScheme or named by inScheme, topConceptOf
// or hasTopConcept (their rdfs:domain/range, SKOS Reference S6–S8).
func (b *builder) schemeIDs() []int32 {
	if b.schemes != nil {
		return b.schemes
	}
	is := make([]bool, len(b.nodes))
	for i := range b.nodes {
		n := &b.nodes[i]
		if n.types&tScheme != 0 {
			is[i] = true
		}
		for _, l := range n.links {
			switch l.p {
			case pInScheme, pTopConceptOf:
				is[l.o] = true
			case pHasTopConcept:
				is[i] = true
			}
		}
	}
	var ids []int32
	for i, ok := range is {
		if ok {
			ids = append(ids, int32(i))
		}
	}
	sort.Slice(ids, func(x, y int) bool { return b.nodes[ids[x]].iri < b.nodes[ids[y]].iri })
	if ids == nil {
		ids = []int32{} // non-nil: computed, and empty
	}
	b.schemes = ids
	return ids
}

func (b *builder) schemeIRIs() []string {
	ids := b.schemeIDs()
	out := make([]string, len(ids))
	for i, id := range ids {
		out[i] = b.nodes[id].iri
	}
	return out
}

// inferred types: what S7/S8 (hasTopConcept range, topConceptOf domain) and
// S6 (inScheme range) add to the written rdf:type.
func (b *builder) inferTypes() []uint8 {
	ty := make([]uint8, len(b.nodes))
	for i := range b.nodes {
		ty[i] |= b.nodes[i].types
		for _, l := range b.nodes[i].links {
			switch l.p {
			case pTopConceptOf:
				ty[i] |= tConcept
				ty[l.o] |= tScheme
			case pHasTopConcept:
				ty[i] |= tScheme
				ty[l.o] |= tConcept
			case pInScheme:
				ty[l.o] |= tScheme
			case pMember:
				ty[i] |= tCollection
			case pMemberList:
				ty[i] |= tCollection | tOrdered
			}
		}
	}
	return ty
}

// build makes the Scheme for the scheme IRI want ("" = the only one).
func (b *builder) build(want string) (*Scheme, error) {
	schemes := b.schemeIDs()
	chosen := int32(-1)
	if want != "" {
		for _, id := range schemes {
			if b.nodes[id].iri == want {
				chosen = id
			}
		}
		if chosen < 0 {
			return nil, fmt.Errorf("%w %s not found; the file has %s", ErrScheme, want, listSchemes(b, schemes))
		}
	} else if len(schemes) > 1 {
		return nil, fmt.Errorf("%w not chosen: the file has %s; choose one by its IRI", ErrScheme, listSchemes(b, schemes))
	} else if len(schemes) == 1 {
		chosen = schemes[0]
	}

	ty := b.inferTypes()
	// Scheme membership: 1 = of the chosen scheme, 2 = of another one only.
	member := make([]uint8, len(b.nodes))
	anyMember := false
	mark := func(c, s int32) {
		anyMember = true
		if s == chosen {
			member[c] = 1
		} else if member[c] == 0 {
			member[c] = 2
		}
	}
	for i := range b.nodes {
		for _, l := range b.nodes[i].links {
			switch l.p {
			case pInScheme, pTopConceptOf:
				mark(int32(i), l.o)
			case pHasTopConcept:
				mark(l.o, int32(i))
			}
		}
	}
	var ids []int32
	for i := range b.nodes {
		if ty[i]&tConcept == 0 {
			continue
		}
		switch {
		case member[i] == 1:
		case member[i] == 2:
			continue
		case len(schemes) > 1 && anyMember:
			// Several schemes and the file says which concept is in which:
			// an unattached concept belongs to none of them.
			continue
		}
		ids = append(ids, int32(i))
	}
	sort.Slice(ids, func(x, y int) bool { return b.nodes[ids[x]].iri < b.nodes[ids[y]].iri })
	cidx := make([]int32, len(b.nodes))
	for i := range cidx {
		cidx[i] = -1
	}
	for k, id := range ids {
		cidx[id] = int32(k)
	}

	s := &Scheme{Concepts: make([]Concept, len(ids)), facts: &facts{}}
	if chosen >= 0 {
		s.IRI = b.nodes[chosen].iri
		for _, f := range b.nodes[chosen].lits {
			if (f.p == pTitle || f.p == pPref) && f.plain {
				s.Title = appendLabel(s.Title, Label{f.lang, f.text})
			}
		}
	}
	topTarget := make([]bool, len(b.nodes)) // objects of hasTopConcept
	for i := range b.nodes {
		if chosen >= 0 && int32(i) != chosen {
			continue
		}
		for _, l := range b.nodes[i].links {
			if l.p == pHasTopConcept {
				topTarget[l.o] = true
			}
		}
	}
	for k, id := range ids {
		b.fillConcept(&s.Concepts[k], id, chosen)
		s.Concepts[k].Top = s.Concepts[k].Top || topTarget[id]
	}

	// Hierarchy: broader from both directions, then broaderTransitive
	// (SKOS Reference S22, S24) for concepts left with no direct link.
	for k, id := range ids {
		for _, l := range b.nodes[id].links {
			o := cidx[l.o]
			if o < 0 {
				continue
			}
			switch l.p {
			case pBroader:
				s.Concepts[k].Broader = append(s.Concepts[k].Broader, int(o))
			case pNarrower:
				s.Concepts[o].Broader = append(s.Concepts[o].Broader, k)
			case pRelated:
				s.Concepts[k].Related = append(s.Concepts[k].Related, int(o))
				s.Concepts[o].Related = append(s.Concepts[o].Related, k)
			case pBroaderT:
				s.facts.broaderT = append(s.facts.broaderT, [2]int32{int32(k), o})
			case pNarrowerT:
				s.facts.broaderT = append(s.facts.broaderT, [2]int32{o, int32(k)})
			}
		}
	}
	for k := range s.Concepts {
		c := &s.Concepts[k]
		c.Broader = sortUnique(c.Broader)
		c.Related = sortUnique(c.Related)
	}
	b.addTransitive(s)
	for k := range s.Concepts {
		for _, p := range s.Concepts[k].Broader {
			s.Concepts[p].Narrower = append(s.Concepts[p].Narrower, k)
		}
	}

	s.Collections = b.collections(ty, member)
	b.typeProblems(s, ty)
	s.Reindex()
	return s, nil
}

func listSchemes(b *builder, ids []int32) string {
	if len(ids) == 0 {
		return "no skos:ConceptScheme"
	}
	names := make([]string, len(ids))
	for i, id := range ids {
		names[i] = b.nodes[id].iri
	}
	return fmt.Sprintf("%d schemes: %s", len(ids), strings.Join(names, ", "))
}

// fillConcept copies a node's labels and notes into c.
func (b *builder) fillConcept(c *Concept, id, chosen int32) {
	n := &b.nodes[id]
	c.IRI = n.iri
	c.Deprecated = n.dep
	for _, f := range n.lits {
		if !f.plain && f.p != pNotation {
			continue // reported as S12 by typeProblems
		}
		l := Label{f.lang, f.text}
		switch f.p {
		case pPref:
			c.Pref = appendLabel(c.Pref, l)
		case pAlt:
			c.Alt = appendLabel(c.Alt, l)
		case pHidden:
			c.Hidden = appendLabel(c.Hidden, l)
		case pNotation:
			if !slices.Contains(c.Notation, f.text) {
				c.Notation = append(c.Notation, f.text)
			}
		case pDefinition:
			c.Definition = appendLabel(c.Definition, l)
		case pScopeNote:
			c.ScopeNote = appendLabel(c.ScopeNote, l)
		}
	}
	for _, l := range n.links {
		switch l.p {
		case pXLPref, pXLAlt, pXLHidden:
			// SKOS-XL S55–S57: (skosxl:prefLabel, skosxl:literalForm) is a
			// sub-property chain of skos:prefLabel, and so on.
			for _, f := range b.nodes[l.o].lits {
				if f.p != pLiteralForm || !f.plain {
					continue
				}
				lb := Label{f.lang, f.text}
				switch l.p {
				case pXLPref:
					c.Pref = appendLabel(c.Pref, lb)
				case pXLAlt:
					c.Alt = appendLabel(c.Alt, lb)
				default:
					c.Hidden = appendLabel(c.Hidden, lb)
				}
			}
		case pTopConceptOf:
			if chosen < 0 || l.o == chosen {
				c.Top = true
			}
		}
	}
}

// addTransitive gives concepts with no direct broader link their
// broaderTransitive targets, minus those another target already reaches
// (so "a bT b, a bT c, b bT c" makes a→b only).
func (b *builder) addTransitive(s *Scheme) {
	if len(s.facts.broaderT) == 0 {
		return
	}
	up := map[int32][]int32{}
	for _, e := range s.facts.broaderT {
		if e[0] != e[1] {
			up[e[0]] = append(up[e[0]], e[1])
		}
	}
	// reaches: is t an ancestor of o through broader or broaderTransitive?
	reaches := func(o, t int32) bool {
		seen := map[int32]bool{o: true}
		queue := []int32{o}
		for len(queue) > 0 {
			c := queue[0]
			queue = queue[1:]
			next := up[c]
			for _, p := range s.Concepts[c].Broader {
				next = append(next[:len(next):len(next)], int32(p))
			}
			for _, p := range next {
				if p == t {
					return true
				}
				if !seen[p] {
					seen[p] = true
					queue = append(queue, p)
				}
			}
		}
		return false
	}
	var add [][2]int32
	for c, ts := range up {
		if len(s.Concepts[c].Broader) > 0 {
			continue
		}
		for _, t := range ts {
			redundant := false
			for _, o := range ts {
				if o != t && reaches(o, t) {
					redundant = true
					break
				}
			}
			if !redundant {
				add = append(add, [2]int32{c, t})
			}
		}
	}
	// Add after deciding, so the outcome does not depend on map order.
	for _, e := range add {
		s.Concepts[e[0]].Broader = append(s.Concepts[e[0]].Broader, int(e[1]))
	}
	for _, e := range add {
		s.Concepts[e[0]].Broader = sortUnique(s.Concepts[e[0]].Broader)
	}
}

// collections returns the skos:Collections not tied to another scheme,
// with members in list order (memberList) then in document order.
func (b *builder) collections(ty []uint8, member []uint8) []Collection {
	var out []Collection
	for i := range b.nodes {
		if ty[i]&tCollection == 0 || member[i] == 2 {
			continue
		}
		n := &b.nodes[i]
		col := Collection{IRI: n.iri, Ordered: ty[i]&tOrdered != 0}
		for _, f := range n.lits {
			if f.p == pPref && f.plain {
				col.Labels = appendLabel(col.Labels, Label{f.lang, f.text})
			}
		}
		seen := map[int32]bool{}
		for _, l := range n.links {
			if l.p != pMemberList {
				continue
			}
			visited := map[int32]bool{}
			for cur := l.o; cur >= 0 && b.nodes[cur].iri != rdfNil && !visited[cur]; {
				visited[cur] = true
				next := int32(-1)
				for _, f := range b.nodes[cur].links {
					switch f.p {
					case pFirst:
						if !seen[f.o] {
							seen[f.o] = true
							col.Members = append(col.Members, b.nodes[f.o].iri)
						}
					case pRest:
						next = f.o
					}
				}
				cur = next
			}
		}
		for _, l := range n.links {
			if l.p == pMember && !seen[l.o] {
				seen[l.o] = true
				col.Members = append(col.Members, b.nodes[l.o].iri)
			}
		}
		out = append(out, col)
	}
	sort.Slice(out, func(x, y int) bool { return out[x].IRI < out[y].IRI })
	return out
}

// typeProblems records the conditions that need raw facts of the whole
// file: disjoint classes (S9, S37), label ranges (S12) and mapping
// disjointness (S46).
func (b *builder) typeProblems(s *Scheme, ty []uint8) {
	f := s.facts
	for i := range b.nodes {
		n := &b.nodes[i]
		t := ty[i]
		if t&tConcept != 0 && t&tScheme != 0 {
			f.problems = append(f.problems, Problem{Code: "S9", Concept: n.iri, Section: secS9,
				Message: "is both a skos:Concept and a skos:ConceptScheme (written or implied by inScheme/topConceptOf/hasTopConcept)"})
		}
		if t&tCollection != 0 && t&(tConcept|tScheme) != 0 {
			what := "skos:Concept"
			if t&tConcept == 0 {
				what = "skos:ConceptScheme"
			}
			f.problems = append(f.problems, Problem{Code: "S37", Concept: n.iri, Section: secS37,
				Message: "is both a skos:Collection and a " + what})
		}
		for _, l := range n.lits {
			if l.plain {
				continue
			}
			var name string
			switch l.p {
			case pPref:
				name = "skos:prefLabel"
			case pAlt:
				name = "skos:altLabel"
			case pHidden:
				name = "skos:hiddenLabel"
			default:
				continue
			}
			f.problems = append(f.problems, Problem{Code: "S12", Concept: n.iri, Section: secS12,
				Message: fmt.Sprintf("%s value %s is not a plain literal", name, l.text)})
		}
	}
	b.matchProblems(s)
}

// matchProblems: S46, skos:exactMatch is disjoint with skos:broadMatch and
// skos:relatedMatch. exactMatch is transitive and symmetric (S44, S45), so
// resources are grouped into exactMatch classes first.
func (b *builder) matchProblems(s *Scheme) {
	parent := map[int32]int32{}
	var find func(x int32) int32
	find = func(x int32) int32 {
		p, ok := parent[x]
		if !ok || p == x {
			return x
		}
		r := find(p)
		parent[x] = r
		return r
	}
	any := false
	for i := range b.nodes {
		for _, l := range b.nodes[i].links {
			if l.p == pExactMatch {
				any = true
				a, c := find(int32(i)), find(l.o)
				if a != c {
					if a < c {
						parent[c] = a
					} else {
						parent[a] = c
					}
				}
			}
		}
	}
	if !any {
		return
	}
	for i := range b.nodes {
		for _, l := range b.nodes[i].links {
			var name string
			switch l.p {
			case pBroadMatch:
				name = "skos:broadMatch"
			case pNarrowMatch:
				name = "skos:narrowMatch" // inverse of broadMatch (S43)
			case pRelatedMatch:
				name = "skos:relatedMatch"
			default:
				continue
			}
			if find(int32(i)) == find(l.o) {
				s.facts.problems = append(s.facts.problems, Problem{Code: "S46", Concept: b.nodes[i].iri, Section: secS46,
					Message: fmt.Sprintf("%s <%s> while the two are linked by skos:exactMatch", name, b.nodes[l.o].iri)})
			}
		}
	}
}

func appendLabel(ls []Label, l Label) []Label {
	if slices.Contains(ls, l) {
		return ls
	}
	return append(ls, l)
}

func sortUnique(xs []int) []int {
	if len(xs) < 2 {
		return xs
	}
	slices.Sort(xs)
	return slices.Compact(xs)
}
