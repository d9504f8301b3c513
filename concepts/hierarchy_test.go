package concepts

import (
	"fmt"
	"reflect"
	"testing"
	"time"
)

// diamond: top ← a, top ← b, a ← c, b ← c, c ← d; e is a root not marked top.
const diamond = `
ex:top a skos:Concept
ex:top skos:topConceptOf ex:s
ex:a a skos:Concept
ex:a skos:broader ex:top
ex:b a skos:Concept
ex:b skos:broader ex:top
ex:c a skos:Concept
ex:c skos:broader ex:a
ex:c skos:broader ex:b
ex:d a skos:Concept
ex:d skos:broader ex:c
ex:e a skos:Concept
ex:s a skos:ConceptScheme
`

func TestHierarchyQueries(t *testing.T) {
	s := mustBuild(t, diamond)
	d, c := idx(t, s, "d"), idx(t, s, "c")
	if got := iris(s, s.Ancestors(d)); !reflect.DeepEqual(got, []string{"a", "b", "c", "top"}) {
		t.Errorf("Ancestors(d) = %v", got)
	}
	if got := iris(s, s.Descendants(idx(t, s, "top"))); !reflect.DeepEqual(got, []string{"a", "b", "c", "d"}) {
		t.Errorf("Descendants(top) = %v", got)
	}
	for name, want := range map[string]int{"top": 0, "a": 1, "c": 2, "d": 3, "e": 0} {
		if got := s.Depth(idx(t, s, name)); got != want {
			t.Errorf("Depth(%s) = %d, want %d", name, got, want)
		}
	}
	if s.MaxDepth() != 3 {
		t.Errorf("MaxDepth = %d", s.MaxDepth())
	}
	var paths [][]string
	for _, p := range s.PathsToTop(d) {
		paths = append(paths, iris(s, p))
	}
	if want := [][]string{{"top", "a", "c", "d"}, {"top", "b", "c", "d"}}; !reflect.DeepEqual(paths, want) {
		t.Errorf("PathsToTop(d) = %v, want %v", paths, want)
	}
	if got := iris(s, s.TopConcepts()); !reflect.DeepEqual(got, []string{"top"}) {
		t.Errorf("TopConcepts = %v", got)
	}
	if got := iris(s, s.Roots()); !reflect.DeepEqual(got, []string{"e", "top"}) {
		t.Errorf("Roots = %v", got)
	}
	if got := s.Cycles(); got != nil {
		t.Errorf("Cycles on a DAG = %v", got)
	}
	_ = c
}

func TestHierarchyCyclesTerminate(t *testing.T) {
	s := mustBuild(t, `
ex:top a skos:Concept
ex:a a skos:Concept
ex:a skos:broader ex:b
ex:b a skos:Concept
ex:b skos:broader ex:c
ex:c a skos:Concept
ex:c skos:broader ex:a
ex:c skos:broader ex:top
ex:x a skos:Concept
ex:x skos:broader ex:x
ex:y a skos:Concept
ex:y skos:broader ex:a
`)
	done := make(chan struct{})
	go func() {
		defer close(done)
		for i := range s.Concepts {
			s.Ancestors(i)
			s.Descendants(i)
			s.Depth(i)
			s.PathsToTop(i)
		}
		s.TopConcepts()
	}()
	select {
	case <-done:
	case <-time.After(10 * time.Second):
		t.Fatal("hierarchy queries hang on a cycle")
	}
	if got := iris(s, s.Ancestors(idx(t, s, "a"))); !reflect.DeepEqual(got, []string{"a", "b", "c", "top"}) {
		t.Errorf("Ancestors(a) on cycle = %v", got)
	}
	var paths [][]string
	for _, p := range s.PathsToTop(idx(t, s, "y")) {
		paths = append(paths, iris(s, p))
	}
	if want := [][]string{{"top", "c", "b", "a", "y"}}; !reflect.DeepEqual(paths, want) {
		t.Errorf("PathsToTop(y) = %v, want %v", paths, want)
	}
	var cycles [][]string
	for _, c := range s.Cycles() {
		cycles = append(cycles, iris(s, c))
	}
	if want := [][]string{{"a", "b", "c", "a"}, {"x", "x"}}; !reflect.DeepEqual(cycles, want) {
		t.Errorf("Cycles = %v, want %v", cycles, want)
	}
}

func TestPathsToTopBounded(t *testing.T) {
	// A ladder of 20 levels with two broader concepts each: 2^20 paths.
	src := "ex:r a skos:Concept\n"
	prev := []string{"ex:r", "ex:r"}
	for l := 0; l < 20; l++ {
		cur := []string{"ex:l" + string(rune('a'+l)) + "0", "ex:l" + string(rune('a'+l)) + "1"}
		for _, c := range cur {
			src += c + " a skos:Concept\n" + c + " skos:broader " + prev[0] + "\n" + c + " skos:broader " + prev[1] + "\n"
		}
		prev = cur
	}
	s := mustBuild(t, src)
	i, _ := s.Lookup(testPrefixes["ex"] + "lt0")
	if got := len(s.PathsToTop(i)); got != MaxPaths {
		t.Errorf("PathsToTop = %d paths, want the cap %d", got, MaxPaths)
	}
}

func TestReindexAfterDecode(t *testing.T) {
	s := mustBuild(t, diamond)
	// A scheme copied field by field (as a decoder would) has no index or depths.
	c := &Scheme{IRI: s.IRI, Concepts: s.Concepts}
	if c.Depth(idx(t, s, "d")) != 3 {
		t.Errorf("Depth on decoded scheme = %d", c.Depth(idx(t, s, "d")))
	}
	if len(c.Check(CheckOptions{})) == 0 {
		t.Errorf("Check on a decoded scheme should still find the orphan ex:e")
	}
}

// TestConcurrentReads backs the package doc's promise; run with -race.
func TestConcurrentReads(t *testing.T) {
	s := mustBuild(t, diamond)
	done := make(chan bool)
	for g := 0; g < 4; g++ {
		go func() {
			for i := range s.Concepts {
				s.Lookup(s.Concepts[i].IRI)
				s.Depth(i)
				s.PathsToTop(i)
				s.Ancestors(i)
			}
			s.Check(CheckOptions{})
			done <- true
		}()
	}
	for g := 0; g < 4; g++ {
		<-done
	}
}

func TestPathsToTopDenseCycles(t *testing.T) {
	// 30 concepts, each broader of every other; only k0 leads on to the
	// root. Walking up from q through k0 meets exponentially many simple
	// paths that all dead-end on k0; the query must still end quickly and
	// find the one real path.
	src := "ex:root a skos:Concept\nex:k0 skos:broader ex:root\n"
	for a := 0; a < 30; a++ {
		src += fmt.Sprintf("ex:k%d a skos:Concept\n", a)
		for b := 0; b < 30; b++ {
			if a != b {
				src += fmt.Sprintf("ex:k%d skos:broader ex:k%d\n", a, b)
			}
		}
	}
	src += "ex:q a skos:Concept\nex:q skos:broader ex:k0\n"
	s := mustBuild(t, src)
	start := time.Now()
	var paths [][]string
	for _, p := range s.PathsToTop(idx(t, s, "q")) {
		paths = append(paths, iris(s, p))
	}
	if took := time.Since(start); took > 20*time.Second {
		t.Errorf("PathsToTop took %v", took)
	}
	if want := [][]string{{"root", "k0", "q"}}; !reflect.DeepEqual(paths, want) {
		t.Errorf("paths = %v, want %v", paths, want)
	}
}
