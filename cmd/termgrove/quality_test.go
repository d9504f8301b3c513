package main

import (
	"path/filepath"
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
}
