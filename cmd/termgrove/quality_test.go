package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"termgrove/model"
)

// TestDemoFitQuality fits the demo scenario (testdata/demo) as `make demo`
// does and checks the facts its README says a good fit shows. Source:
// testdata/demo/README.md, "What tests and docs may rely on": the
// beekeeping theme that no label, definition or note names, the six
// concepts no record uses, and the 27 French records.
func TestDemoFitQuality(t *testing.T) {
	if testing.Short() {
		t.Skip("fits the demo corpus")
	}
	out := filepath.Join(t.TempDir(), "demo.grove")
	demo := filepath.Join("..", "..", "testdata", "demo")
	if code := cmdFit([]string{"--vocab", filepath.Join(demo, "vocabulary.ttl"), "--records", filepath.Join(demo, "records.jsonl"),
		"--out", out, "--lang", "en,fr", "--quiet", "--checkpoint", "0", "--workers", "1"}); code != 0 {
		t.Fatalf("fit exit %d", code)
	}
	m, err := model.Load(out)
	if err != nil {
		t.Fatal(err)
	}
	word := map[string]int{}
	for w, s := range m.Words {
		word[s] = w
	}
	// The bee words as the analyzer stems them (English and French).
	var bee []int
	for _, s := range []string{"bee", "beekeep", "hive", "honey", "swarm", "apiari", "skep", "abeill", "ruch", "miel", "apiculteur", "essaim"} {
		if w, ok := word[s]; ok {
			bee = append(bee, w)
		}
	}
	if len(bee) < 8 {
		t.Fatalf("only %d bee terms in the model's words", len(bee))
	}
	unused := map[string]bool{}
	for _, n := range []string{"mining", "coal-mining", "canals", "religious-houses", "higher-education", "fortifications"} {
		unused["https://harrowmere.example/vocab/"+n] = true
	}
	var free, all, inUnused float64
	for k := 0; k < m.K(); k++ {
		for _, w := range bee {
			n := float64(m.Count(k, w))
			all += n
			if k >= m.C {
				free += n
			} else if unused[m.Scheme.Concepts[k].IRI] {
				inUnused += n
				if n > 0 {
					t.Errorf("unused concept %s holds %v tokens of bee term %q", m.Scheme.Concepts[k].IRI, n, m.Words[w])
				}
			}
		}
	}
	if all < 100 || free/all < 0.8 {
		t.Errorf("bee tokens in free topics: %.0f of %.0f, want at least 80%%", free, all)
	}
	// French function words are stopwords of the French records.
	for k := m.C; k < m.K(); k++ {
		for _, ww := range m.TopWords(k, 12) {
			switch m.Words[ww.Word] {
			case "de", "la", "et", "les", "le", "du", "des":
				t.Errorf("free topic %d lists the French stopword %q", k-m.C, m.Words[ww.Word])
			}
		}
	}
	t.Logf("bee tokens: %.0f, in free topics %.0f%%", all, 100*free/all)

	// The held-out texts with the CLI's defaults. Source: the table of
	// testdata/demo/README.md, "The held-out texts".
	var stdout, stderr bytes.Buffer
	if code := runAnnotate([]string{"--model", out, "--records", "--format", "json", filepath.Join(demo, "holdout.jsonl")}, strings.NewReader(""), &stdout, &stderr); code != 0 {
		t.Fatalf("annotate exit %d: %s", code, stderr.String())
	}
	got := map[string]demoAnnotation{}
	sc := bufio.NewScanner(&stdout)
	for sc.Scan() {
		var r demoAnnotation
		if err := json.Unmarshal(sc.Bytes(), &r); err != nil {
			t.Fatal(err)
		}
		got[r.ID] = r
	}
	if len(got) != 6 {
		t.Fatalf("%d annotated texts, want 6", len(got))
	}
	for id, r := range got {
		for _, c := range r.Concepts {
			if c.Score < 0.01 { // the noise floor seen on these texts (bench/quality.md)
				t.Errorf("%s: %s scores %v, below 0.01: the CLI default should leave it out", id, c.IRI, c.Score)
			}
		}
	}
	top := func(id string) string {
		if len(got[id].Concepts) == 0 {
			return ""
		}
		return strings.TrimPrefix(got[id].Concepts[0].IRI, "https://harrowmere.example/vocab/")
	}
	if c := top("hv-9001"); c != "flour-milling" {
		t.Errorf("hv-9001 (a burnt corn mill): first concept %q, want flour-milling", c)
	}
	// hv-9004 is French: analysed as French, most of its words are known.
	if r := got["hv-9004"]; r.Unknown > 20 {
		t.Errorf("hv-9004 (French): %d unknown tokens; analysed as English?", r.Unknown)
	}
	for _, id := range []string{"hv-9004", "hv-9006"} {
		if u := got[id].Uncovered; u < 0.4 {
			t.Errorf("%s (beekeeping): uncovered %.2f, want mostly uncovered", id, u)
		}
	}
}

// demoAnnotation is the part of annotate's JSON output the test reads.
type demoAnnotation struct {
	ID        string  `json:"id"`
	Uncovered float64 `json:"uncovered"`
	Unknown   int     `json:"unknown"`
	Concepts  []struct {
		IRI   string  `json:"iri"`
		Score float64 `json:"score"`
	} `json:"concepts"`
}
