package main

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"testing"
)

func TestInTestSplitDeterministicShare(t *testing.T) {
	// Common practice, no source: a hash split keeps about the asked share
	// and puts the same id on the same side every time.
	n := 0
	for i := 0; i < 20000; i++ {
		id := fmt.Sprintf("rec-%d", i)
		a := inTestSplit(id, 0.2)
		if a != inTestSplit(id, 0.2) {
			t.Fatalf("%s changes side", id)
		}
		if a {
			n++
		}
		if inTestSplit(id, 0.1) && !a {
			t.Fatalf("%s is in the 10%% split but not in the 20%% one", id)
		}
	}
	if n < 3800 || n > 4200 {
		t.Errorf("20%% split took %d of 20000", n)
	}
}

func TestScoreSplitOnDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("fits a model")
	}
	// stdout must hold exactly one JSON document: fit's summary line goes
	// to stderr.
	r, w, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	saved := os.Stdout
	os.Stdout = w
	code := run([]string{"score", "--split", "0.3", "--vocab", "../../testdata/demo/vocabulary.ttl",
		"--records", "../../testdata/demo/records.jsonl", "--format", "json", "--", "--sweeps", "30", "--free-topics", "5"})
	os.Stdout = saved
	w.Close()
	out, _ := io.ReadAll(r)
	if code != 0 {
		t.Fatalf("score --split exit %d", code)
	}
	var res struct {
		Records int `json:"records"`
	}
	if err := json.Unmarshal(out, &res); err != nil || res.Records == 0 {
		t.Fatalf("stdout is not one score document (%v):\n%s", err, out)
	}
	if code := run([]string{"score", "--split", "1.5", "--vocab", "x", "--records", "y"}); code != 2 {
		t.Errorf("--split 1.5: exit %d, want 2", code)
	}
	if code := run([]string{"score", "--model", "m.grove", "--records", "y", "--", "--sweeps", "3"}); code != 2 {
		t.Errorf("fit options without --split: exit %d, want 2", code)
	}
}
