package concepts

import (
	"fmt"
	"slices"
	"strings"
)

// Problem is one integrity problem found by Check.
type Problem struct {
	// Code names the rule: an integrity condition of the SKOS Reference
	// ("S9", "S12", "S13", "S14", "S27", "S37", "S46") or one of termgrove's
	// own: "cycle", "no-preflabel", "orphan", "shared-preflabel".
	Code    string `json:"code"`
	Concept string `json:"concept"` // IRI of the resource at fault
	Message string `json:"message"`
	Section string `json:"section,omitempty"` // where the rule comes from
}

func (p Problem) String() string {
	return p.Code + " <" + p.Concept + "> " + p.Message
}

// CheckOptions configure Check; the zero value checks every language.
type CheckOptions struct {
	// Langs are the languages every concept needs a prefLabel in and in
	// which shared prefLabels are reported; empty = any prefLabel will do
	// and shared prefLabels are reported in every language.
	Langs []string
}

// Where each rule comes from: W3C SKOS Reference, Recommendation
// 18 August 2009 (https://www.w3.org/TR/2009/REC-skos-reference-20090818/).
// From memory of that document (section numbers: each section's "Integrity
// Conditions" subsection); S13/S14 in §5.4 is confirmed by the W3C SWD
// Working Group's ISSUE-179, the text of S14 and S46 by the SKOS RDF schema
// comments.
const (
	secS9     = "SKOS Reference §4.4 (S9: skos:ConceptScheme is disjoint with skos:Concept)"
	secS12    = "SKOS Reference §5.3 (S12: the range of the labelling properties is the plain literals)"
	secS13    = "SKOS Reference §5.4 (S13: prefLabel, altLabel and hiddenLabel are pairwise disjoint)"
	secS14    = "SKOS Reference §5.4 (S14: at most one prefLabel per language tag)"
	secS27    = "SKOS Reference §8.4 (S27: skos:related is disjoint with skos:broaderTransitive)"
	secS37    = "SKOS Reference §9.4 (S37: skos:Collection is disjoint with skos:Concept and skos:ConceptScheme)"
	secS46    = "SKOS Reference §10.4 (S46: skos:exactMatch is disjoint with skos:broadMatch and skos:relatedMatch)"
	secCycle  = "termgrove rule: the broader hierarchy must be a DAG (SKOS itself does not forbid cycles)"
	secNoPref = "termgrove rule: every concept has a prefLabel in each chosen language"
	secOrphan = "termgrove rule: a concept with no broader concept is a top concept of its scheme"
	secShared = "termgrove rule: no two concepts share a prefLabel in one language (SKOS practice, not a SKOS condition)"
)

// codeOrder fixes the order problems are listed in.
var codeOrder = map[string]int{"S9": 0, "S12": 1, "S13": 2, "S14": 3, "S27": 4, "S37": 5, "S46": 6,
	"cycle": 7, "no-preflabel": 8, "orphan": 9, "shared-preflabel": 10}

// Check returns the integrity problems of the scheme, sorted by rule then
// concept IRI. S9, S12, S37 and S46 need facts only Load sees, so a
// decoded scheme (from a model file) is checked without them.
func (s *Scheme) Check(opt CheckOptions) []Problem {
	s.ensure()
	// The shared-label scan is the costliest rule on a large scheme; it
	// only reads the scheme, so it runs beside the others.
	var shared []Problem
	done := make(chan struct{})
	go func() {
		defer close(done)
		shared = s.checkShared(opt)
	}()
	var out []Problem
	if s.facts != nil {
		out = append(out, s.facts.problems...)
	}
	out = append(out, s.checkLabels(opt)...)
	out = append(out, s.checkRelated()...)
	for _, cyc := range s.Cycles() {
		iris := make([]string, len(cyc))
		for k, c := range cyc {
			iris[k] = s.Concepts[c].IRI
		}
		out = append(out, Problem{Code: "cycle", Concept: iris[0], Section: secCycle,
			Message: "broader cycle: " + strings.Join(iris, " → ")})
	}
	for i := range s.Concepts {
		c := &s.Concepts[i]
		if len(c.Broader) == 0 && !c.Top && !c.Deprecated {
			out = append(out, Problem{Code: "orphan", Concept: c.IRI, Section: secOrphan,
				Message: "has no broader concept and is not a top concept"})
		}
	}
	<-done
	out = append(out, shared...)
	slices.SortStableFunc(out, func(a, b Problem) int {
		if a.Code != b.Code {
			return codeOrder[a.Code] - codeOrder[b.Code]
		}
		if c := strings.Compare(a.Concept, b.Concept); c != 0 {
			return c
		}
		return strings.Compare(a.Message, b.Message)
	})
	return out
}

// checkLabels: S13, S14 and missing prefLabels.
func (s *Scheme) checkLabels(opt CheckOptions) []Problem {
	var out []Problem
	for i := range s.Concepts {
		c := &s.Concepts[i]
		for _, pair := range [...]struct {
			a, b   []Label
			na, nb string
		}{{c.Pref, c.Alt, "prefLabel", "altLabel"}, {c.Pref, c.Hidden, "prefLabel", "hiddenLabel"}, {c.Alt, c.Hidden, "altLabel", "hiddenLabel"}} {
			for _, l := range pair.a {
				if slices.Contains(pair.b, l) {
					out = append(out, Problem{Code: "S13", Concept: c.IRI, Section: secS13,
						Message: fmt.Sprintf("%s is both %s and %s", showLabel(l), pair.na, pair.nb)})
				}
			}
		}
		for k, l := range c.Pref {
			first := true
			for _, m := range c.Pref[:k] {
				if m.Lang == l.Lang {
					first = false
				}
			}
			if !first {
				continue
			}
			var texts []string
			for _, m := range c.Pref[k:] {
				if m.Lang == l.Lang {
					texts = append(texts, fmt.Sprintf("%q", m.Text))
				}
			}
			if len(texts) > 1 {
				out = append(out, Problem{Code: "S14", Concept: c.IRI, Section: secS14,
					Message: fmt.Sprintf("%d prefLabels in language %s: %s", len(texts), langName(l.Lang), strings.Join(texts, ", "))})
			}
		}
		if len(opt.Langs) == 0 {
			if len(c.Pref) == 0 {
				out = append(out, Problem{Code: "no-preflabel", Concept: c.IRI, Section: secNoPref,
					Message: "has no prefLabel"})
			}
			continue
		}
		for _, lang := range opt.Langs {
			has := false
			for _, l := range c.Pref {
				if l.Lang == lang {
					has = true
					break
				}
			}
			if !has {
				out = append(out, Problem{Code: "no-preflabel", Concept: c.IRI, Section: secNoPref,
					Message: "has no prefLabel in " + langName(lang)})
			}
		}
	}
	return out
}

// checkRelated: S27. skos:related is symmetric (S23) and broader is a
// sub-property of the transitive broaderTransitive (S22, S24), so a related
// pair must not be linked by any chain of broader or broaderTransitive links.
func (s *Scheme) checkRelated() []Problem {
	var out []Problem
	up := map[int][]int{} // extra broaderTransitive edges not in Broader
	if s.facts != nil {
		for _, e := range s.facts.broaderT {
			up[int(e[0])] = append(up[int(e[0])], int(e[1]))
		}
	}
	mark := make([]int32, len(s.Concepts)) // generation stamps, reused per walk
	gen := int32(0)
	var queue []int
	reaches := func(from, to int) bool {
		gen++
		queue = append(queue[:0], from)
		for len(queue) > 0 {
			c := queue[len(queue)-1]
			queue = queue[:len(queue)-1]
			for _, list := range [2][]int{s.Concepts[c].Broader, up[c]} {
				for _, p := range list {
					if p == to {
						return true
					}
					if mark[p] != gen {
						mark[p] = gen
						queue = append(queue, p)
					}
				}
			}
		}
		return false
	}
	for i := range s.Concepts {
		for _, r := range s.Concepts[i].Related {
			if r == i {
				continue
			}
			if r < i && slices.Contains(s.Concepts[r].Related, i) {
				continue // the pair was checked from r
			}
			a, b := i, r
			if reaches(a, b) || reaches(b, a) {
				if reaches(b, a) && !reaches(a, b) {
					a, b = b, a
				}
				out = append(out, Problem{Code: "S27", Concept: s.Concepts[a].IRI, Section: secS27,
					Message: fmt.Sprintf("skos:related <%s>, which is also one of its broader (transitive) concepts", s.Concepts[b].IRI)})
			}
		}
	}
	return out
}

// checkShared reports prefLabels used by more than one (non-deprecated)
// concept in one language, comparing case-insensitively.
func (s *Scheme) checkShared(opt CheckOptions) []Problem {
	type key struct{ lang, text string }
	first := make(map[key]int32, len(s.Concepts)) // first concept with the label
	groups := map[key][]int{}                     // only labels held by several
	for i := range s.Concepts {
		c := &s.Concepts[i]
		if c.Deprecated {
			continue
		}
		for _, l := range c.Pref {
			if len(opt.Langs) > 0 && !slices.Contains(opt.Langs, l.Lang) {
				continue
			}
			k := key{l.Lang, foldLabel(l.Text)}
			f, ok := first[k]
			switch {
			case !ok:
				first[k] = int32(i)
			case int(f) == i:
			default:
				g := groups[k]
				if len(g) == 0 {
					g = append(g, int(f))
				}
				if g[len(g)-1] != i {
					groups[k] = append(g, i)
				}
			}
		}
	}
	var out []Problem
	for k, g := range groups {
		if len(g) < 2 {
			continue
		}
		var others []string
		for _, c := range g[1:min(len(g), 6)] {
			others = append(others, "<"+s.Concepts[c].IRI+">")
		}
		more := ""
		if len(g) > 6 {
			more = fmt.Sprintf(" and %d more", len(g)-6)
		}
		text := s.Concepts[g[0]].PrefLabel(k.lang)
		out = append(out, Problem{Code: "shared-preflabel", Concept: s.Concepts[g[0]].IRI, Section: secShared,
			Message: fmt.Sprintf("prefLabel %s is shared with %s%s", showLabel(Label{k.lang, text}), strings.Join(others, ", "), more)})
	}
	return out
}

func showLabel(l Label) string {
	if l.Lang == "" {
		return fmt.Sprintf("%q", l.Text)
	}
	return fmt.Sprintf("%q@%s", l.Text, l.Lang)
}

func langName(lang string) string {
	if lang == "" {
		return "(no language tag)"
	}
	return `"` + lang + `"`
}

// foldLabel is the form labels are compared in: trimmed and lower-cased
// (without allocating for labels that already are).
func foldLabel(t string) string {
	for i := 0; i < len(t); i++ {
		c := t[i]
		if c >= 'A' && c <= 'Z' || c >= 0x80 || (i == 0 || i == len(t)-1) && c <= ' ' {
			return strings.ToLower(strings.TrimSpace(t))
		}
	}
	return t
}
