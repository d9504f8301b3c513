package annotate

import (
	"math"
	"math/bits"
	"math/rand/v2"
	"testing"

	"termgrove/model/modeltest"
)

// TestRecordSeed: the record seed is the same for the same model, text and
// options, and another for any other text, option, known subject, salt or
// model key; and it passes the avalanche criterion: flipping one input bit
// flips each of the 64 output bits with probability 1/2, within 5 standard
// errors over 20,000 flips of texts of 0 to 300 bytes. Source: the
// avalanche test of SMHasher (Austin Appleby), from memory; the
// tolerance is the binomial standard error.
func TestRecordSeed(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 10, Free: 2, Words: 50, WordsPerConcept: 5, Seed: 3})
	a, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	b, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	base := Options{Top: 5}
	text := "the quick brown fox jumps over the lazy dog, twice"
	s0 := a.recordSeed(text, base, nil)
	if got := b.recordSeed(text, Options{Top: 7, ConceptsOnly: true, MinScore: 0.2}, nil); got != s0 {
		t.Errorf("same model and text, options that only cut the result: seed %x, want %x", got, s0)
	}
	others := map[string]uint64{
		"text":        a.recordSeed(text+".", base, nil),
		"nul":         a.recordSeed(text+"\x00", base, nil),
		"byte":        a.recordSeed("The"+text[3:], base, nil),
		"empty":       a.recordSeed("", base, nil),
		"mode":        a.recordSeed(text, Options{SubjectMode: Boost}, nil),
		"boost":       a.recordSeed(text, Options{BoostFactor: 2}, nil),
		"burn-in":     a.recordSeed(text, Options{BurnIn: 1}, nil),
		"samples":     a.recordSeed(text, Options{Samples: 4}, nil),
		"subject":     a.recordSeed(text, base, []int32{3}),
		"subjects":    a.recordSeed(text, base, []int32{3, 4}),
		"swapped":     a.recordSeed(text, base, []int32{4, 3}),
		"subject 0":   a.recordSeed(text, base, []int32{0}),
		"another key": (&Annotator{seedKey: [2]uint64{a.seedKey[0] ^ 1, a.seedKey[1]}}).recordSeed(text, base, nil),
		"second key":  (&Annotator{seedKey: [2]uint64{a.seedKey[0], a.seedKey[1] ^ 1<<63}}).recordSeed(text, base, nil),
	}
	seen := map[uint64]string{s0: "base"}
	for name, s := range others {
		if prev, ok := seen[s]; ok {
			t.Errorf("%s: seed %x, the same as %s's", name, s, prev)
		}
		seen[s] = name
	}
	seedSalt = 1
	salted := a.recordSeed(text, base, nil)
	seedSalt = 0
	if salted == s0 {
		t.Error("salt: the same seed")
	}

	// Avalanche.
	r := rand.New(rand.NewPCG(5, 6))
	const n = 20000
	var flips [64]int
	buf := make([]byte, 300)
	for i := 0; i < n; i++ {
		l := 1 + r.IntN(300)
		for j := range buf[:l] {
			buf[j] = byte(r.Uint32())
		}
		x := a.recordSeed(string(buf[:l]), base, nil)
		bit := r.IntN(8 * l)
		buf[bit/8] ^= 1 << (bit % 8)
		y := a.recordSeed(string(buf[:l]), base, nil)
		d := x ^ y
		for o := range flips {
			flips[o] += int(d >> o & 1)
		}
		if i == 0 && bits.OnesCount64(d) == 0 {
			t.Fatal("a flipped bit left the seed as it was")
		}
	}
	se := math.Sqrt(0.25 / n)
	for o, c := range flips {
		if p := float64(c) / n; math.Abs(p-0.5) > 5*se {
			t.Errorf("output bit %d flips with probability %.4f, want 0.5 ± %.4f", o, p, 5*se)
		}
	}
}
