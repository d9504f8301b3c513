package main

import (
	"fmt"
	"testing"

	"termgrove/fit"
	"termgrove/internal/records"
)

// TestCalibSample: fit's calibration sample keeps only records with
// subjects, at most N of them, the same ones for the same seed, every
// record with equal chance (reservoir sampling, Vitter 1985, algorithm R:
// each of 2,000 records is kept with probability 50/2000 — checked over 400
// seeds against that mean within 5 standard errors), only held-out records
// with a holdout share (the ids fit.HeldOut keeps out), and none with N 0.
func TestCalibSample(t *testing.T) {
	recs := make([]records.Record, 2000)
	for i := range recs {
		recs[i] = records.Record{ID: fmt.Sprintf("r%d", i), Subjects: []string{"http://example.org/c/1"}}
		if i%10 == 9 {
			recs[i].Subjects = nil
		}
	}
	run := func(n int, holdout float64, seed int64) []string {
		c := newCalibSample(n, holdout, seed)
		for _, r := range recs {
			c.add(r, nil, "")
		}
		var ids []string
		for _, tx := range c.texts {
			ids = append(ids, tx.ID)
		}
		return ids
	}
	a, b := run(50, 0, 1), run(50, 0, 1)
	if len(a) != 50 || fmt.Sprint(a) != fmt.Sprint(b) {
		t.Fatalf("sample of 50: %d ids, repeatable %v", len(a), fmt.Sprint(a) == fmt.Sprint(b))
	}
	if fmt.Sprint(a) == fmt.Sprint(run(50, 0, 2)) {
		t.Error("seeds 1 and 2 drew the same sample")
	}
	kept := map[string]int{}
	const seeds = 400
	for s := int64(0); s < seeds; s++ {
		for _, id := range run(50, 0, s) {
			kept[id]++
		}
	}
	for _, r := range recs {
		if r.Subjects == nil && kept[r.ID] > 0 {
			t.Fatalf("%s has no subjects but was sampled", r.ID)
		}
	}
	first, second := 0, 0
	for i, r := range recs {
		if i < 1000 {
			first += kept[r.ID]
		} else {
			second += kept[r.ID]
		}
	}
	// 1,800 eligible records, 900 in each half: each half expects 25 of 50
	// per seed; the sum over seeds has standard deviation about
	// sqrt(400·50·0.5·0.5·(1750/1799)) ≈ 70.
	if d := first - seeds*25; d < -350 || d > 350 {
		t.Errorf("first half kept %d times, second %d: want about %d each", first, second, seeds*25)
	}
	all := run(5000, 0, 1)
	if len(all) != 1800 {
		t.Errorf("N above the eligible records kept %d, want all 1800", len(all))
	}
	for _, id := range run(5000, 0.2, 1) {
		if !fit.HeldOut(id, 0.2) {
			t.Errorf("%s is not held out but was sampled with --holdout 0.2", id)
		}
	}
	if n := len(run(5000, 0.2, 1)); n < 250 || n > 470 {
		t.Errorf("%d held-out records sampled, want about 360", n)
	}
	if got := run(0, 0, 1); len(got) != 0 {
		t.Errorf("N 0 kept %d", len(got))
	}
	// With groups (--group-field) the holdout keys on the group: a group is
	// sampled whole or not at all.
	c := newCalibSample(5000, 0.3, 1)
	for i, r := range recs {
		c.add(r, nil, fmt.Sprintf("g%d", i/20))
	}
	per := map[string]int{}
	for _, tx := range c.texts {
		g := c.groups[tx.ID]
		if !fit.HeldOut(g, 0.3) {
			t.Fatalf("%s of group %q sampled, but the group is not held out", tx.ID, g)
		}
		per[g]++
	}
	for g, n := range per {
		if n != 18 { // 20 records, two without subjects
			t.Errorf("group %s: %d of its 18 indexed records sampled", g, n)
		}
	}
	if len(per) < 10 || len(per) > 50 {
		t.Errorf("%d of 100 groups held out, want about 30", len(per))
	}
}
