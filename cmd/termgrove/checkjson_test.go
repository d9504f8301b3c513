package main

import (
	"bytes"
	"encoding/json"
	"testing"
)

// check --format json --prior must stay one JSON document that tools can
// parse, with the prior report as its "prior" member.
func TestCheckJSONWithPriorIsOneDocument(t *testing.T) {
	var out, errb bytes.Buffer
	code := runCheck([]string{"--format", "json", "--prior", "--lang", "en,fr", "../../testdata/demo/vocabulary.ttl"}, &out, &errb)
	if code == 2 {
		t.Fatalf("exit 2: %s", errb.String())
	}
	dec := json.NewDecoder(&out)
	var doc struct {
		Concepts int `json:"concepts"`
		Prior    struct {
			Concepts int `json:"concepts"`
			Terms    int `json:"terms"`
		} `json:"prior"`
	}
	if err := dec.Decode(&doc); err != nil {
		t.Fatalf("not JSON: %v", err)
	}
	if dec.More() {
		t.Fatal("a second JSON document follows the first")
	}
	if doc.Concepts == 0 || doc.Prior.Concepts != doc.Concepts || doc.Prior.Terms == 0 {
		t.Errorf("summary %+v: want the prior report inside with the same concept count", doc)
	}
}
