package model_test

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"termgrove/model"
	"termgrove/model/modeltest"
)

func small() *model.Model {
	return modeltest.Synthetic(modeltest.Options{Concepts: 50, Free: 5, Words: 800, Seed: 7})
}

func TestSaveLoadRoundTrip(t *testing.T) {
	m := small()
	// Enough options that Go's random map order would show in the bytes.
	for i := range 12 {
		m.Provenance.Options[fmt.Sprintf("option-%02d", i)] = fmt.Sprint(i * i)
	}
	p := filepath.Join(t.TempDir(), "m.grove")
	if err := model.Save(p, m); err != nil {
		t.Fatal(err)
	}
	got, err := model.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	// Compare through the exported fields; the scheme's index is rebuilt.
	if !reflect.DeepEqual(got.Words, m.Words) || !reflect.DeepEqual(got.Counts, m.Counts) ||
		!reflect.DeepEqual(got.Prior, m.Prior) || !reflect.DeepEqual(got.Alpha, m.Alpha) ||
		!reflect.DeepEqual(got.Totals, m.Totals) || !reflect.DeepEqual(got.DocCounts, m.DocCounts) ||
		!reflect.DeepEqual(got.Provenance, m.Provenance) || !reflect.DeepEqual(got.Analyzer, m.Analyzer) ||
		!reflect.DeepEqual(got.Scheme.Concepts, m.Scheme.Concepts) || got.Scheme.IRI != m.Scheme.IRI ||
		!reflect.DeepEqual(got.Scheme.Title, m.Scheme.Title) ||
		got.C != m.C || got.F != m.F || got.Beta0 != m.Beta0 || got.Lambda != m.Lambda {
		t.Fatal("round trip changed the model")
	}
	if i, ok := got.ConceptIndex(m.Scheme.Concepts[17].IRI); !ok || i != 17 {
		t.Errorf("ConceptIndex = %d %v", i, ok)
	}
	s1, _ := got.Sum()
	s2, err := m.Sum()
	if err != nil || s1 != s2 {
		t.Errorf("Sum after load %x, computed %x (%v)", s1, s2, err)
	}
	// Saving again gives the same bytes: the format is deterministic.
	p2 := filepath.Join(t.TempDir(), "m2.grove")
	if err := model.Save(p2, got); err != nil {
		t.Fatal(err)
	}
	b1, _ := os.ReadFile(p)
	b2, _ := os.ReadFile(p2)
	if !bytes.Equal(b1, b2) {
		t.Error("save → load → save changed the bytes")
	}
}

func TestPhiIsDistribution(t *testing.T) {
	m := small()
	for _, k := range []int{0, 3, m.C, m.K() - 1} {
		sum := 0.0
		for w := 0; w < m.W(); w++ {
			sum += m.Phi(k, w)
		}
		// φ_k is a distribution over words by its definition (DESIGN.md "The model").
		if math.Abs(sum-1) > 1e-9 {
			t.Errorf("topic %d: Σ_w φ = %.15f", k, sum)
		}
	}
	// Hand-computed entry: concept 0's first prior word.
	w := int(m.Prior[0][0].Word)
	want := (float64(m.Count(0, w)) + m.Beta0 + m.Lambda*m.Prior[0][0].Weight) /
		(float64(m.Totals[0]) + float64(m.W())*m.Beta0 + m.Lambda)
	if got := m.Phi(0, w); math.Abs(got-want) > 1e-15 {
		t.Errorf("Phi = %v, want %v", got, want)
	}
}

func TestTopWords(t *testing.T) {
	m := small()
	for _, k := range []int{1, m.C + 1} {
		top := m.TopWords(k, 10)
		if len(top) != 10 {
			t.Fatalf("got %d words", len(top))
		}
		// Brute force over all words.
		best := make([]float64, 0, m.W())
		for w := 0; w < m.W(); w++ {
			best = append(best, m.Phi(k, w))
		}
		for i, ww := range top {
			if math.Abs(ww.Weight-m.Phi(k, int(ww.Word))) > 1e-15 {
				t.Errorf("weight of %d", ww.Word)
			}
			if i > 0 && ww.Weight > top[i-1].Weight {
				t.Errorf("not sorted at %d", i)
			}
			above := 0
			for _, p := range best {
				if p > ww.Weight {
					above++
				}
			}
			if above > i {
				t.Errorf("rank %d: %d words weigh more", i, above)
			}
		}
	}
}

func saved(t *testing.T) (string, []byte) {
	t.Helper()
	p := filepath.Join(t.TempDir(), "m.grove")
	if err := model.Save(p, small()); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	return p, b
}

func TestLoadBadFiles(t *testing.T) {
	_, good := saved(t)
	flip := func(i int) []byte { b := bytes.Clone(good); b[i] ^= 0x40; return b }
	other := bytes.Clone(good)
	other[8] = 99
	cases := []struct {
		name string
		data []byte
		want error
		msg  string
	}{
		{"empty", nil, model.ErrFormat, "not a termgrove model"},
		{"text", []byte("hello, world, this is not a model at all, no no no no no no"), model.ErrFormat, "not a termgrove model"},
		{"header cut", good[:30], model.ErrTruncated, "truncated"},
		{"payload cut", good[:len(good)/2], model.ErrTruncated, "truncated"},
		{"one byte short", good[:len(good)-1], model.ErrTruncated, "truncated"},
		{"trailing bytes", append(bytes.Clone(good), 0), model.ErrCorrupt, "after the payload"},
		{"payload bit flip", flip(len(good) / 2), model.ErrCorrupt, "checksum"},
		{"last byte flip", flip(len(good) - 1), model.ErrCorrupt, "checksum"},
		{"checksum flip", flip(30), model.ErrCorrupt, "checksum"},
		{"other version", other, model.ErrVersion, "version 99"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := filepath.Join(t.TempDir(), "bad.grove")
			if err := os.WriteFile(p, c.data, 0o644); err != nil {
				t.Fatal(err)
			}
			m, err := model.Load(p)
			if m != nil || !errors.Is(err, c.want) {
				t.Fatalf("Load = %v, %v; want %v", m, err, c.want)
			}
			if !strings.HasPrefix(err.Error(), p+": ") || !strings.Contains(err.Error(), c.msg) {
				t.Errorf("message %q should name the file and say %q", err, c.msg)
			}
		})
	}
	if errors.Is(model.ErrTruncated, model.ErrCorrupt) == false {
		t.Error("ErrTruncated should match ErrCorrupt")
	}
	if _, err := model.Load(filepath.Join(t.TempDir(), "missing.grove")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing: %v", err)
	}
}

// FuzzDecode: no input makes Decode panic or hang. The checksum hides most
// mutations from the payload decoder, so the seed corpus also carries
// payloads with a recomputed checksum (see fixChecksum).
func FuzzDecode(f *testing.F) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 5, Free: 2, Words: 30, Seed: 1})
	p := filepath.Join(f.TempDir(), "m.grove")
	if err := model.Save(p, m); err != nil {
		f.Fatal(err)
	}
	good, _ := os.ReadFile(p)
	f.Add(good)
	f.Add(good[:100])
	f.Fuzz(func(t *testing.T, b []byte) {
		model.Decode(b)
		model.Decode(model.FixChecksum(b))
	})
}

type failAfter struct {
	w io.Writer
	n int
}

func (f *failAfter) Write(p []byte) (int, error) {
	if len(p) > f.n {
		return 0, syscall.ENOSPC
	}
	f.n -= len(p)
	return f.w.Write(p)
}

func TestSaveFailureKeepsOldFile(t *testing.T) {
	p, old := saved(t)
	big := modeltest.Synthetic(modeltest.Options{Concepts: 500, Free: 10, Words: 5000, Seed: 3})
	err := model.SaveWith(p, big, func(w io.Writer) io.Writer { return &failAfter{w: w, n: 100 << 10} })
	if !errors.Is(err, syscall.ENOSPC) || !strings.Contains(err.Error(), p) {
		t.Fatalf("err = %v, want ENOSPC naming the file", err)
	}
	now, _ := os.ReadFile(p)
	if !bytes.Equal(now, old) {
		t.Error("failed save changed the old file")
	}
	ents, _ := os.ReadDir(filepath.Dir(p))
	if len(ents) != 1 {
		t.Errorf("temporary files left: %v", ents)
	}
}

// TestSaveDiskFull fills a real 64 KiB tmpfs (needs root; skipped otherwise).
func TestSaveDiskFull(t *testing.T) {
	if runtime.GOOS != "linux" || os.Geteuid() != 0 {
		t.Skip("needs root to mount a tmpfs")
	}
	dir := t.TempDir()
	if out, err := exec.Command("mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", dir).CombinedOutput(); err != nil {
		t.Skipf("cannot mount tmpfs: %v %s", err, out)
	}
	defer exec.Command("umount", dir).Run()
	p := filepath.Join(dir, "m.grove")
	tiny := modeltest.Synthetic(modeltest.Options{Concepts: 5, Free: 2, Words: 30, Seed: 1})
	if err := model.Save(p, tiny); err != nil {
		t.Fatal(err)
	}
	old, _ := os.ReadFile(p)
	big := modeltest.Synthetic(modeltest.Options{Concepts: 2000, Free: 10, Words: 20000, Seed: 3})
	err := model.Save(p, big)
	if !errors.Is(err, syscall.ENOSPC) {
		t.Fatalf("err = %v, want ENOSPC", err)
	}
	now, _ := os.ReadFile(p)
	if !bytes.Equal(now, old) {
		t.Error("disk-full save changed the old file")
	}
	if m, err := model.Load(p); err != nil || m.C != 5 {
		t.Errorf("old model unreadable: %v", err)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Errorf("temporary files left: %v", ents)
	}
}

func TestSaveRejectsInvalid(t *testing.T) {
	m := small()
	m.Totals[2]++
	p := filepath.Join(t.TempDir(), "m.grove")
	if err := model.Save(p, m); err == nil || !strings.Contains(err.Error(), "topic 2") {
		t.Errorf("err = %v", err)
	}
	if _, err := os.Stat(p); !errors.Is(err, os.ErrNotExist) {
		t.Error("invalid model written")
	}
}

// BenchmarkLoad loads a synthetic model shaped like the 117k-concept
// vocabulary's (K = 117,659 + 50 free, 100k words). Target: under 2 s.
func BenchmarkLoad(b *testing.B) {
	p := filepath.Join(b.TempDir(), "big.grove")
	t0 := time.Now()
	m := modeltest.Synthetic(modeltest.Options{Concepts: 117659, Free: 50, Words: 100000, Seed: 1})
	if err := model.Save(p, m); err != nil {
		b.Fatal(err)
	}
	fi, _ := os.Stat(p)
	var nnz int
	for _, r := range m.Counts {
		nnz += len(r)
	}
	b.Logf("built and saved in %v: %d bytes, %d nonzero counts", time.Since(t0), fi.Size(), nnz)
	m = nil
	runtime.GC()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := model.Load(p); err != nil {
			b.Fatal(err)
		}
	}
}

// TestRelatedRoundTrip: the related-concept rows survive Save and Load, a
// model without them loads with none, and a bad row is refused. Common
// practice, no source.
func TestRelatedRoundTrip(t *testing.T) {
	m := small()
	m.Related = make([][]model.ConceptWeight, m.C)
	m.Related[3] = []model.ConceptWeight{{Concept: 3, Weight: 0.9}, {Concept: 17, Weight: 0.25}}
	got := saveLoad(t, m)
	if !reflect.DeepEqual(got.Related[3], m.Related[3]) || len(got.Related) != m.C {
		t.Errorf("related rows after load: %v", got.Related[3])
	}
	if got := saveLoad(t, small()); got.Related != nil {
		t.Errorf("model without related rows: %v", got.Related)
	}
	m.Related[3][1].Concept = int32(m.C)
	if err := model.Save(filepath.Join(t.TempDir(), "bad.grove"), m); err == nil {
		t.Error("related concept out of range saved")
	}
}

// TestCalibrationRoundTrip: the calibration section survives Save and
// Load, a model written without one (as every file before it was added)
// loads with none, a wrong-sized or non-finite one is refused, and Apply is
// the logistic of A·ln s + B. Common practice (Platt 1999), no source.
func TestCalibrationRoundTrip(t *testing.T) {
	m := small()
	cal := &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C), GlobalA: 1.1, GlobalB: 2, Shrink: 3, Records: 40, HeldOut: true}
	for k := range cal.A {
		cal.A[k], cal.B[k] = 1+float64(k)/10, -float64(k)
	}
	m.Calibration = cal
	got := saveLoad(t, m)
	p := filepath.Join(t.TempDir(), "m.grove")
	if !reflect.DeepEqual(got.Calibration, cal) {
		t.Errorf("calibration after load: %+v, want %+v", got.Calibration, cal)
	}
	// p = 1/(1 + e^−(A ln s + B)); concept 2: A = 1.2, B = −2, s = 0.5.
	want := 1 / (1 + math.Exp(-(1.2*math.Log(0.5) - 2)))
	if v := got.Calibration.Apply(2, 0.5); math.Abs(v-want) > 1e-15 {
		t.Errorf("Apply(2, 0.5) = %v, want %v", v, want)
	}
	if v := got.Calibration.Apply(2, 0); !(v >= 0 && v < 1e-100) {
		t.Errorf("Apply(2, 0) = %v, want about 0", v)
	}
	if err := model.Save(p, small()); err != nil {
		t.Fatal(err)
	}
	if got, err := model.Load(p); err != nil || got.Calibration != nil {
		t.Errorf("model without calibration: %v, %v", got.Calibration, err)
	}
	m.Calibration = &model.Calibration{A: cal.A[:1], B: cal.B}
	if err := model.Save(p, m); err == nil {
		t.Error("calibration of the wrong size saved")
	}
	bad := *cal
	bad.B = append([]float64(nil), cal.B...)
	bad.B[1] = math.NaN()
	m.Calibration = &bad
	if err := model.Save(p, m); err == nil {
		t.Error("NaN calibration saved")
	}
}

// TestWordLayerRoundTrip: the word layer section survives Save and Load, a
// model without one loads with none, and a layer of the wrong shape, of
// another version, or without a calibration is refused. Common practice,
// no source.
func TestWordLayerRoundTrip(t *testing.T) {
	m := small()
	W := len(m.Words)
	m.Calibration = &model.Calibration{A: make([]float64, m.C), B: make([]float64, m.C)}
	l := &model.WordLayer{Version: model.WordLayerVersion, IDF: make([]float32, W), Start: make([]int32, W+1),
		Bias: make([]float32, m.C), LnFreq: make([]float32, m.C), TopicWeight: 0.2, FreqWeight: 0.04, ScaleA: 1.5, ScaleB: -2,
		SVMC: 0.3, MinDF: 2, Prune: 0.01, Records: 10, Tuned: 5}
	for w := 0; w < W; w++ {
		l.IDF[w] = float32(w%5) / 2
		l.Start[w+1] = l.Start[w]
		if w%3 == 0 {
			l.Concept = append(l.Concept, int32(w%(m.C-1)), int32(w%(m.C-1))+1)
			l.Weight = append(l.Weight, 0.5, -0.25)
			l.Start[w+1] += 2
		}
	}
	for k := range l.Bias {
		l.Bias[k], l.LnFreq[k] = -1, float32(k)/10
	}
	m.WordLayer = l
	got := saveLoad(t, m)
	p := filepath.Join(t.TempDir(), "m.grove")
	if !reflect.DeepEqual(got.WordLayer, l) {
		t.Error("word layer changed by Save and Load")
	}
	// Decision: bias plus the weights of the vector's words.
	idx, val := model.WordVector([]int32{3, 4}, []int32{1, 2}, l.IDF, nil, nil)
	d := make([]float64, m.C)
	got.WordLayer.Decision(idx, val, d)
	// x_3 = 1.5, x_4 = (1 + ln 2)·2, unit length; word 3 holds concepts 3, 4
	// (w mod (C − 1) and the next).
	x3 := 1.5 / math.Hypot(1.5, (1+math.Log(2))*2)
	if math.Abs(d[3]-(-1+0.5*x3)) > 1e-6 || math.Abs(d[4]-(-1-0.25*x3)) > 1e-6 || d[5] != -1 {
		t.Errorf("decision values %v %v %v", d[3], d[4], d[5])
	}
	m2 := small()
	if err := model.Save(p, m2); err != nil {
		t.Fatal(err)
	}
	if got, err := model.Load(p); err != nil || got.WordLayer != nil {
		t.Errorf("model without a word layer: %v, %v", got.WordLayer, err)
	}
	for name, bad := range map[string]func(l *model.WordLayer){
		"version":      func(l *model.WordLayer) { l.Version = model.WordLayerVersion + 1 },
		"v1 with lead": func(l *model.WordLayer) { l.Version, l.Lead = 1, 0.5 },
		"lead, no IDF": func(l *model.WordLayer) { l.Lead = 0.5 },
		"NaN lead":     func(l *model.WordLayer) { l.Lead = math.NaN() },
		"short IDF":    func(l *model.WordLayer) { l.IDF = l.IDF[1:] },
		"concept":      func(l *model.WordLayer) { l.Concept = append([]int32{int32(m.C)}, l.Concept[1:]...) },
		"NaN weight":   func(l *model.WordLayer) { l.ScaleA = math.NaN() },
		"short biases": func(l *model.WordLayer) { l.Bias = l.Bias[1:] },
	} {
		c := *l
		bad(&c)
		m.WordLayer = &c
		if err := model.Save(p, m); err == nil {
			t.Errorf("%s: bad word layer saved", name)
		}
	}
	v1 := *l
	v1.Version = 1 // before lead features: still read
	m.WordLayer = &v1
	if err := model.Save(p, m); err != nil {
		t.Errorf("version 1 layer: %v", err)
	} else if got, err := model.Load(p); err != nil || got.WordLayer.Version != 1 {
		t.Errorf("version 1 layer loaded: %v", err)
	}
	m.WordLayer, m.Calibration = l, nil
	if err := model.Save(p, m); err == nil {
		t.Error("word layer without calibration saved")
	}
}

// TestWordLayerVector: with a lead part a record's vector is the words'
// unit TF-IDF vector followed by the lead words' own, over features from
// W + Bigrams on with their IDF, of length Lead; without one (or an empty
// lead) it is WordVector of Features. Common practice, no source: the
// definition in model.WordLayer, recomputed here.
func TestWordLayerVector(t *testing.T) {
	const W = 6
	l := &model.WordLayer{Lead: 0.5, IDF: make([]float32, 2*W)}
	for f := range l.IDF {
		l.IDF[f] = float32(1 + f%4)
	}
	l.IDF[2] = 0   // word 2 left out of the body part
	l.IDF[W+1] = 0 // word 1 left out of the lead part
	seq := []int32{1, 4, 1, 2, 5, 4, 4}
	var sc model.VectorScratch
	idx, val := l.Vector(seq, 3, W, &sc, nil, nil)
	// body: words 1 (×2), 4 (×3), 5; lead (1, 4, 1): word 4 only.
	b1, b4, b5 := (1+math.Log(2))*2, (1+math.Log(3))*1, 2.0
	n := math.Sqrt(b1*b1 + b4*b4 + b5*b5)
	wantIdx := []int32{1, 4, 5, W + 4}
	wantVal := []float64{b1 / n, b4 / n, b5 / n, 0.5}
	if !reflect.DeepEqual(idx, wantIdx) {
		t.Fatalf("features %v, want %v", idx, wantIdx)
	}
	for i := range val {
		if math.Abs(float64(val[i])-wantVal[i]) > 1e-6 {
			t.Errorf("feature %d: %v, want %v", idx[i], val[i], wantVal[i])
		}
	}
	if l.Dim(W) != 2*W {
		t.Errorf("Dim %d, want %d", l.Dim(W), 2*W)
	}
	for _, lead := range []int{0, 100} {
		idx, _ = l.Vector(seq, lead, W, &sc, idx, val)
		if lead == 0 && len(idx) != 3 || lead == 100 && len(idx) != 6 {
			t.Errorf("lead %d: features %v", lead, idx)
		}
	}
	if got := model.LeadEnd("title\n\nbody"); got != 5 {
		t.Errorf("LeadEnd %d, want 5", got)
	}
	if got := model.LeadEnd("one paragraph"); got != 13 {
		t.Errorf("LeadEnd of one paragraph %d, want its length", got)
	}
}

// TestFeatures: a record's features are its words and its hashed pairs of
// consecutive words, each once with its count. Common practice, no source.
func TestFeatures(t *testing.T) {
	ids, cnt := model.Features([]int32{5, 6, 5, 6}, 10, 0, nil, nil)
	if !reflect.DeepEqual(ids, []int32{5, 6}) || !reflect.DeepEqual(cnt, []int32{2, 2}) {
		t.Errorf("words only: %v %v", ids, cnt)
	}
	ids, cnt = model.Features([]int32{5, 6, 5, 6}, 10, 1000, ids, cnt)
	// Pairs (5,6) twice and (6,5) once, in buckets 10..1009.
	if len(ids) != 4 || ids[0] != 5 || ids[1] != 6 || ids[2] < 10 || ids[3] >= 1010 || ids[2] == ids[3] {
		t.Fatalf("with pairs: %v %v", ids, cnt)
	}
	if !(cnt[0] == 2 && cnt[1] == 2 && cnt[2]+cnt[3] == 3 && cnt[2]*cnt[3] == 2) {
		t.Errorf("counts %v, want 2, 2 and the pairs 2 and 1", cnt)
	}
	if ids, cnt := model.Features(nil, 10, 1000, nil, nil); len(ids) != 0 || len(cnt) != 0 {
		t.Errorf("empty record: %v %v", ids, cnt)
	}
}

// TestOptionsDeterministic: a model with many provenance options encodes to
// the same bytes every time, so its checksum, which seeds annotation, is
// the same for the same model (gob writes maps in random order; meta keeps
// them as sorted pairs). Files written before, with the map, still load
// with their options. Common practice, no source.
func TestOptionsDeterministic(t *testing.T) {
	m := small()
	for i := range 16 {
		m.Provenance.Options[fmt.Sprintf("k%02d", i)] = fmt.Sprint(i)
	}
	want, err := m.Sum()
	if err != nil {
		t.Fatal(err)
	}
	for i := range 20 {
		if got, _ := m.Sum(); got != want {
			t.Fatalf("encoding %d gave checksum %x, the first %x", i, got, want)
		}
	}
	undo := model.SetEncodeOptionsAsMap()
	p := filepath.Join(t.TempDir(), "old.grove")
	err = model.Save(p, m)
	undo()
	if err != nil {
		t.Fatal(err)
	}
	got, err := model.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got.Provenance.Options, m.Provenance.Options) {
		t.Errorf("options of a file with the map: %v, want %v", got.Provenance.Options, m.Provenance.Options)
	}
}

// saveLoad writes m to a new file and reads it back.
func saveLoad(t *testing.T, m *model.Model) *model.Model {
	t.Helper()
	p := filepath.Join(t.TempDir(), "m.grove")
	if err := model.Save(p, m); err != nil {
		t.Fatal(err)
	}
	got, err := model.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	return got
}

// TestContentSum: the content checksum leaves the provenance out (another
// date, build, input path or option gives the same sum, where Sum differs)
// and follows the tables (one count changed gives another sum); a loaded
// file gives the sum of the model saved. Common practice, no source.
func TestContentSum(t *testing.T) {
	m := small()
	m.Provenance.Created = "2026-12-01T10:00:00Z"
	m.Provenance.TermgroveVersion = "a"
	want, err := m.ContentSum()
	if err != nil {
		t.Fatal(err)
	}
	sum0, _ := m.Sum()
	m.Provenance.Created = "2026-12-02T11:00:00Z"
	m.Provenance.TermgroveVersion = "b"
	m.Provenance.CorpusFile = "elsewhere.jsonl"
	m.Provenance.Options["workers"] = "7"
	if got, _ := m.ContentSum(); got != want {
		t.Errorf("content sum moved with the provenance: %x, want %x", got, want)
	}
	if sum1, _ := m.Sum(); sum1 == sum0 {
		t.Error("Sum did not move with the provenance: the test does not tell the two apart")
	}
	if got, _ := saveLoad(t, m).ContentSum(); got != want {
		t.Errorf("content sum after Save and Load: %x, want %x", got, want)
	}
	m.Counts[3][0].Count++
	if got, _ := m.ContentSum(); got == want {
		t.Error("content sum did not move with a count")
	}
}
