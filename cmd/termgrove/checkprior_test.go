package main

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"termgrove/concepts"
)

func priorTestScheme() *concepts.Scheme {
	return &concepts.Scheme{Concepts: []concepts.Concept{
		{IRI: "http://ex.org/c/1", Pref: []concepts.Label{{Lang: "en", Text: "Screen readers"}}},
		{IRI: "http://ex.org/c/2", Pref: []concepts.Label{{Lang: "en", Text: "The Who"}}},
		{IRI: "http://ex.org/c/3", Pref: []concepts.Label{{Lang: "en", Text: "Reader services"}}},
	}}
}

func TestPriorReportText(t *testing.T) {
	var b bytes.Buffer
	if err := priorReport(&b, priorTestScheme(), []string{"en"}, "text"); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	for _, want := range []string{
		"prior: 3 concepts, 5 terms (2 phrases), λ=50 β0=0.01, label languages en",
		"concepts with no terms: 1\n  http://ex.org/c/2  \"The Who\"",
		"labels that analysis emptied: 1\n  http://ex.org/c/2  \"The Who\"@en",
		"  reader                         2\n",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("text report lacks %q:\n%s", want, out)
		}
	}
}

func TestPriorReportJSON(t *testing.T) {
	var b bytes.Buffer
	if err := priorReport(&b, priorTestScheme(), []string{"en", "??"}, "json"); err != nil {
		t.Fatal(err)
	}
	var j priorJSON
	if err := json.Unmarshal(b.Bytes(), &j); err != nil {
		t.Fatalf("%v\n%s", err, b.String())
	}
	p := j.Prior
	if p.Concepts != 3 || len(p.NoTerms) != 1 || p.NoTerms[0].IRI != "http://ex.org/c/2" ||
		len(p.Emptied) != 1 || p.Emptied[0].Lang != "en" || p.Emptied[0].Label != "The Who" ||
		len(p.Shared) != 1 || p.Shared[0].Term != "reader" || len(p.Notices) != 1 {
		t.Errorf("json report %+v", p)
	}
	if err := priorReport(&b, priorTestScheme(), nil, "csv"); err == nil {
		t.Error("format csv accepted")
	}
}
