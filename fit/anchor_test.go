package fit

import (
	"context"
	"errors"
	"math"
	"path/filepath"
	"reflect"
	"slices"
	"testing"

	"termgrove/model"
	"termgrove/prior"
)

// TestAnchorSubjects: with Options.Anchor a record without subjects may use
// the concepts whose label terms it contains (not those named only by
// note-weight terms), a record naming none only the free topics, and an
// indexed record keeps its subjects. Common practice, no source.
func TestAnchorSubjects(t *testing.T) {
	p := &prior.Prior{Lambda: 5, Beta0: 0.01, Rows: [][]prior.Entry{
		{{Word: 0, Weight: 0.5}, {Word: 1, Weight: 0.45}, {Word: 2, Weight: 0.05}}, // label words 0, 1; note word 2
		{{Word: 1, Weight: 1}},
		{},
	}}
	c := &Corpus{W: 5, Docs: []Doc{
		{ID: "a", Words: []int32{0, 3}},
		{ID: "b", Words: []int32{1, 1}},
		{ID: "c", Words: []int32{2, 3, 4}},
		{ID: "d", Words: []int32{4}, Subjects: []int32{2}},
	}}
	st, err := newState(p, c, Options{FreeTopics: 2, Workers: 1, Anchor: true})
	if err != nil {
		t.Fatal(err)
	}
	want := [][]int32{{0}, {0, 1}, {}, {2}}
	for i, d := range st.docs {
		if d.subjects == nil || !reflect.DeepEqual(d.subjects, want[i]) {
			t.Errorf("record %s: allowed concepts %v, want %v", st.ids[i], d.subjects, want[i])
		}
	}
	st.initAssign()
	for i := 0; i < 3; i++ {
		st.sweepOnce()
	}
	for di, d := range st.docs {
		for i := d.start; i < d.end; i++ {
			if k := st.z[i]; int(k) < st.C && !contains32(d.subjects, k) {
				t.Fatalf("record %s: token on concept %d outside %v", st.ids[di], k, d.subjects)
			}
		}
	}
	if _, err := newState(p, c, Options{Anchor: true}); err == nil {
		t.Error("Anchor without free topics accepted")
	}
	st, err = newState(p, c, Options{FreeTopics: 2, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if st.docs[0].subjects != nil {
		t.Error("record restricted without Anchor")
	}
}

func contains32(s []int32, k int32) bool {
	for _, v := range s {
		if v == k {
			return true
		}
	}
	return false
}

// TestRelated: the related rows hold the positive lifts P(k|j) − P(k) over
// the records people indexed (anchored records left out), worked by hand.
// Source: Rubin et al. 2012 (Dependency-LDA) for the idea; the figures are
// this test's own arithmetic.
func TestRelated(t *testing.T) {
	p := &prior.Prior{Lambda: 5, Beta0: 0.01, Rows: [][]prior.Entry{
		{{Word: 0, Weight: 1}}, {{Word: 1, Weight: 1}}, {{Word: 2, Weight: 1}},
	}}
	c := &Corpus{W: 4, Docs: []Doc{
		{ID: "a", Words: []int32{0, 1}, Subjects: []int32{0, 1}},
		{ID: "b", Words: []int32{0, 3}, Subjects: []int32{1, 0}},
		{ID: "c", Words: []int32{2}, Subjects: []int32{2}},
		{ID: "d", Words: []int32{0}, Subjects: []int32{0}},
		{ID: "e", Words: []int32{0, 2}}, // anchored to 0 and 2: not a person's choice
	}}
	st, err := newState(p, c, Options{FreeTopics: 1, Workers: 1, Anchor: true})
	if err != nil {
		t.Fatal(err)
	}
	// D = 4 indexed records; df = 3, 2, 1.
	want := [][]model.ConceptWeight{
		{{Concept: 0, Weight: 1 - 0.75}, {Concept: 1, Weight: 2.0/3 - 0.5}},
		{{Concept: 0, Weight: 1 - 0.75}, {Concept: 1, Weight: 1 - 0.5}},
		{{Concept: 2, Weight: 1 - 0.25}},
	}
	got := st.related()
	for j := range want {
		if len(got[j]) != len(want[j]) {
			t.Fatalf("row %d = %v, want %v", j, got[j], want[j])
		}
		for i := range want[j] {
			if got[j][i].Concept != want[j][i].Concept || math.Abs(got[j][i].Weight-want[j][i].Weight) > 1e-12 {
				t.Errorf("row %d = %v, want %v", j, got[j], want[j])
			}
		}
	}
	c.Docs = c.Docs[4:]
	st, err = newState(p, c, Options{FreeTopics: 1, Workers: 1, Anchor: true})
	if err != nil {
		t.Fatal(err)
	}
	if r := st.related(); r != nil {
		t.Errorf("related rows without indexed records: %v", r)
	}
}

// TestAnchoredStart: after initAssign with Options.Anchor and AnchorRelease, a token of an
// anchored record whose word is a prior term of one of the record's allowed
// concepts sits in an allowed concept; every other token sits in a free
// topic or in an allowed concept, and the number of those in a concept
// follows labelDraw: a token of record d starts in a concept with chance
// L_d/n_d (L_d labelled tokens of n_d). Indexed records keep their
// subjects, and the counts match z. Common practice, no source.
func TestAnchoredStart(t *testing.T) {
	p, c := randomSetup(33, 12, 20, 400, 30)
	st, err := newState(p, c, Options{FreeTopics: 3, Seed: 5, Workers: 2, Anchor: true, AnchorRelease: true})
	if err != nil {
		t.Fatal(err)
	}
	st.initAssign()
	var got, mean, vari float64
	anchored := 0
	for di := range st.docs {
		d := &st.docs[di]
		var labelled, others []int32
		for i := d.start; i < d.end; i++ {
			w, k := st.words[i], st.z[i]
			if int(k) < st.C && !slices.Contains(d.subjects, k) {
				t.Fatalf("record %d: token in concept %d, outside %v", di, k, d.subjects)
			}
			lab := false
			for _, j := range st.pTopic[st.pStart[w]:st.pStart[w+1]] {
				lab = lab || slices.Contains(d.subjects, j)
			}
			if lab && d.anchored {
				if int(k) >= st.C {
					t.Fatalf("record %d: labelled token of word %d in free topic %d", di, w, k)
				}
				labelled = append(labelled, k)
			} else {
				others = append(others, k)
			}
		}
		if !d.anchored || len(labelled) == 0 {
			continue
		}
		anchored++
		q := float64(len(labelled)) / float64(d.end-d.start)
		for _, k := range others {
			if int(k) < st.C {
				got++
			}
		}
		mean += float64(len(others)) * q
		vari += float64(len(others)) * q * (1 - q)
	}
	if anchored < 50 || mean < 20 {
		t.Fatalf("setup: %d seeded anchored records, %.1f expected tokens in concepts", anchored, mean)
	}
	if math.Abs(got-mean) > 4*math.Sqrt(vari) {
		t.Fatalf("unlabelled tokens of anchored records in concepts: %.0f, want %.1f ± %.1f", got, mean, math.Sqrt(vari))
	}
	nk := slices.Clone(st.nk)
	if err := st.rebuildCounts(); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(nk, st.nk) {
		t.Fatal("n_k does not match z after the start")
	}
}

// TestAnchorRelease: with Options.AnchorRelease the anchored records keep
// their restriction for the burn-in sweeps and lose it after (their tokens
// may then take any concept); without it they keep it to the end; the
// model's provenance says which. A fit resumed from a checkpoint written
// before or after the release ends with the model of the uninterrupted
// fit. Common practice, no source.
func TestAnchorRelease(t *testing.T) {
	p, c := randomSetup(34, 12, 20, 300, 30)
	opt := Options{FreeTopics: 3, Sweeps: 14, BurnIn: 6, OptimizeEvery: 3, LogLikEvery: 4, Seed: 3, Workers: 1, Anchor: true, AnchorRelease: true}
	run := func(o Options) (*state, *Result, [][]int32) {
		st, err := newState(p, c, o)
		if err != nil {
			t.Fatal(err)
		}
		allowed := make([][]int32, len(st.docs))
		for i, d := range st.docs {
			allowed[i] = d.subjects
		}
		st.initAssign()
		res, err := st.run(t.Context())
		if err != nil {
			t.Fatal(err)
		}
		return st, res, allowed
	}
	outside := func(st *state, allowed [][]int32) int {
		n := 0
		for di, d := range st.docs {
			for i := d.start; i < d.end; i++ {
				if k := st.z[i]; int(k) < st.C && !slices.Contains(allowed[di], k) {
					n++
				}
			}
		}
		return n
	}
	st, full, allowed := run(opt)
	anchored := 0
	for i, d := range st.docs {
		if c.Docs[i].Subjects == nil && d.subjects != nil {
			t.Fatalf("record %s still restricted to %v after the release", st.ids[i], d.subjects)
		}
		if c.Docs[i].Subjects == nil {
			anchored++
		}
	}
	if n := outside(st, allowed); anchored == 0 || n == 0 {
		t.Errorf("after the release no token of %d anchored records left its allowed concepts", anchored)
	}
	if s := full.Model.Provenance.Options["anchor"]; s != "released after sweep 6" {
		t.Errorf("provenance anchor = %q", s)
	}
	keep := opt
	keep.AnchorRelease = false
	st, res, allowed := run(keep)
	if n := outside(st, allowed); n != 0 {
		t.Errorf("without AnchorRelease: %d tokens outside their records' allowed concepts", n)
	}
	if s := res.Model.Provenance.Options["anchor"]; s != "kept" {
		t.Errorf("provenance anchor = %q", s)
	}

	// The flat path and the word-major sweep (one worker, forced) take the
	// released records as unrestricted ones.
	withFlat(t)
	st, _, _ = run(opt)
	units := 0
	for i, d := range st.docs {
		if c.Docs[i].Subjects == nil {
			units += int(d.end - d.start)
		}
	}
	if st.wm == nil || st.wm.units != units {
		t.Errorf("word-major index after the release: %v, want %d tokens", st.wm != nil, units)
	}
	testFlat = false

	for _, stop := range []int{3, 9} { // before and after the release
		ck := filepath.Join(t.TempDir(), "fit.checkpoint")
		ctx, cancel := context.WithCancel(t.Context())
		o := opt
		o.Checkpoint, o.CheckpointPath = 1<<40, ck
		o.Progress = func(pr Progress) {
			if pr.Sweep == stop {
				cancel()
			}
		}
		if _, err := RunContext(ctx, p, c, o); !errors.Is(err, context.Canceled) {
			t.Fatalf("cancelled run: %v", err)
		}
		res, err := Resume(t.Context(), ck, p, c, Options{})
		if err != nil {
			t.Fatalf("resume after sweep %d: %v", stop, err)
		}
		if !reflect.DeepEqual(res.Model.Counts, full.Model.Counts) || !reflect.DeepEqual(res.Model.Alpha, full.Model.Alpha) {
			t.Fatalf("fit resumed after sweep %d differs from the uninterrupted one", stop)
		}
	}
}
