package rdf

import (
	"fmt"
	"strings"
	"testing"
)

func mustNT(t *testing.T, src string) []Triple {
	t.Helper()
	var ts []Triple
	if err := ReadNQuads(strings.NewReader(src), Options{}, func(tr Triple) error { ts = append(ts, tr); return nil }); err != nil {
		t.Fatal(err)
	}
	return ts
}

// cycle writes blank nodes prefix0..prefix(n-1) linked in a ring by <http://ex.org/next>.
func cycle(prefix string, n int) string {
	var b strings.Builder
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "_:%s%d <http://ex.org/next> _:%s%d .\n", prefix, i, prefix, (i+1)%n)
	}
	return b.String()
}

func TestIsomorphic(t *testing.T) {
	// Source: RDF 1.1 Concepts §3.6 (graph isomorphism), and the README of
	// ../shared/conformance (language tags compare case-insensitively).
	tests := []struct {
		name string
		a, b string
		want bool
	}{
		{"relabelled blank nodes",
			"_:x <http://ex.org/p> _:y .\n_:y <http://ex.org/q> \"v\" .\n",
			"_:b <http://ex.org/q> \"v\" .\n_:a <http://ex.org/p> _:b .\n", true},
		{"blank nodes swapped roles",
			"_:x <http://ex.org/p> _:y .\n_:y <http://ex.org/q> \"v\" .\n",
			"_:x <http://ex.org/p> _:y .\n_:x <http://ex.org/q> \"v\" .\n", false},
		{"language tag case", `<http://ex.org/s> <http://ex.org/p> "Cheers"@en-UK .`, `<http://ex.org/s> <http://ex.org/p> "Cheers"@en-uk .`, true},
		{"duplicates count once",
			"<http://ex.org/s> <http://ex.org/p> \"o\" .\n<http://ex.org/s> <http://ex.org/p> \"o\" .\n",
			"<http://ex.org/s> <http://ex.org/p> \"o\" .\n", true},
		{"datatype differs", `<http://ex.org/s> <http://ex.org/p> "1" .`, `<http://ex.org/s> <http://ex.org/p> "1"^^<http://ex.org/int> .`, false},
		{"IRI against literal", `<http://ex.org/s> <http://ex.org/p> <http://ex.org/o> .`, `<http://ex.org/s> <http://ex.org/p> "http://ex.org/o" .`, false},
		{"graph name compared", `<http://ex.org/s> <http://ex.org/p> "o" <http://ex.org/g> .`, `<http://ex.org/s> <http://ex.org/p> "o" .`, false},
		{"blank node against IRI", `_:a <http://ex.org/p> "o" .`, `<http://ex.org/a> <http://ex.org/p> "o" .`, false},
		// Colour refinement cannot tell these apart (every node has one
		// in- and one out-edge): the backtracking search must.
		{"one 6-ring against two 3-rings", cycle("a", 6), cycle("b", 3) + cycle("c", 3), false},
		{"two 3-rings relabelled", cycle("a", 3) + cycle("b", 3), cycle("y", 3) + cycle("z", 3), true},
		{"empty graphs", "", "", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ok, why := Isomorphic(mustNT(t, tc.a), mustNT(t, tc.b))
			if ok != tc.want {
				t.Fatalf("Isomorphic = %v (%s), want %v", ok, why, tc.want)
			}
			if !ok && why == "" {
				t.Error("no reason given for a difference")
			}
			if back, _ := Isomorphic(mustNT(t, tc.b), mustNT(t, tc.a)); back != ok {
				t.Errorf("not symmetric: %v one way, %v the other", ok, back)
			}
		})
	}
}

func TestIsomorphicNamesMissingTriple(t *testing.T) {
	a := mustNT(t, "<http://ex.org/s> <http://ex.org/p> \"o\" .\n<http://ex.org/s> <http://ex.org/p> \"x\" .\n")
	b := mustNT(t, "<http://ex.org/s> <http://ex.org/p> \"o\" .\n<http://ex.org/s> <http://ex.org/p> \"y\" .\n")
	_, why := Isomorphic(a, b)
	if !strings.Contains(why, `"x"`) {
		t.Errorf("reason %q does not name the triple the second graph lacks", why)
	}
}
