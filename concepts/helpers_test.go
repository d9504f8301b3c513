package concepts

import (
	"strings"
	"testing"

	"termgrove/concepts/rdf"
)

var testPrefixes = map[string]string{
	"ex":     "https://example.org/t/",
	"skos":   nsSKOS,
	"skosxl": nsSKOSXL,
	"rdf":    nsRDF,
	"owl":    nsOWL,
	"dct":    "http://purl.org/dc/terms/",
	"xsd":    "http://www.w3.org/2001/XMLSchema#",
}

// graph turns lines "s p o" of prefixed names, _:blank and "literal"@lang
// (or "literal"^^xsd:type) into triples, so the loader can be tested
// without any RDF reader. "a" is rdf:type.
func graph(t testing.TB, src string) []rdf.Triple {
	t.Helper()
	var out []rdf.Triple
	for ln, line := range strings.Split(src, "\n") {
		line = strings.TrimSpace(line)
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		toks := splitTokens(line)
		if len(toks) != 3 {
			t.Fatalf("graph line %d: want 3 terms, got %q", ln+1, toks)
		}
		var terms [3]rdf.Term
		for i, tok := range toks {
			terms[i] = term(t, tok)
		}
		if toks[1] == "a" {
			terms[1] = rdf.Term{Kind: rdf.IRI, Value: nsRDF + "type"}
		}
		out = append(out, rdf.Triple{S: terms[0], P: terms[1], O: terms[2]})
	}
	return out
}

func splitTokens(line string) []string {
	var toks []string
	for line != "" {
		line = strings.TrimLeft(line, " \t")
		if line == "" {
			break
		}
		end := strings.IndexAny(line, " \t")
		if line[0] == '"' {
			q := strings.Index(line[1:], `"`) + 1
			end = strings.IndexAny(line[q:], " \t")
			if end >= 0 {
				end += q
			}
		}
		if end < 0 {
			end = len(line)
		}
		toks = append(toks, line[:end])
		line = line[end:]
	}
	return toks
}

func term(t testing.TB, tok string) rdf.Term {
	t.Helper()
	switch {
	case tok == "a":
		return rdf.Term{Kind: rdf.IRI, Value: nsRDF + "type"}
	case strings.HasPrefix(tok, "_:"):
		return rdf.Term{Kind: rdf.Blank, Value: tok[2:]}
	case strings.HasPrefix(tok, "<"):
		return rdf.Term{Kind: rdf.IRI, Value: strings.Trim(tok, "<>")}
	case strings.HasPrefix(tok, `"`):
		q := strings.LastIndex(tok, `"`)
		lit := rdf.Term{Kind: rdf.Literal, Value: tok[1:q], Datatype: rdf.XSDString}
		rest := tok[q+1:]
		if strings.HasPrefix(rest, "@") {
			lit.Lang, lit.Datatype = rest[1:], rdf.RDFLangString
		} else if strings.HasPrefix(rest, "^^") {
			lit.Datatype = expand(t, rest[2:])
		}
		return lit
	}
	return rdf.Term{Kind: rdf.IRI, Value: expand(t, tok)}
}

func expand(t testing.TB, name string) string {
	t.Helper()
	p, local, ok := strings.Cut(name, ":")
	ns, known := testPrefixes[p]
	if !ok || !known {
		t.Fatalf("graph: unknown prefixed name %q", name)
	}
	return ns + local
}

// build runs the loader on triples as LoadReader does after parsing.
func build(t testing.TB, ts []rdf.Triple, scheme string) (*Scheme, error) {
	t.Helper()
	b := newBuilder()
	for _, tr := range ts {
		if err := b.add(tr); err != nil {
			t.Fatal(err)
		}
	}
	return b.build(scheme)
}

func mustBuild(t testing.TB, src string) *Scheme {
	t.Helper()
	s, err := build(t, graph(t, src), "")
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// iris maps concept indices to IRIs without the ex: namespace.
func iris(s *Scheme, idx []int) []string {
	out := make([]string, len(idx))
	for i, c := range idx {
		out[i] = strings.TrimPrefix(s.Concepts[c].IRI, testPrefixes["ex"])
	}
	return out
}

func idx(t testing.TB, s *Scheme, local string) int {
	t.Helper()
	i, ok := s.Lookup(testPrefixes["ex"] + local)
	if !ok {
		t.Fatalf("no concept ex:%s", local)
	}
	return i
}
