package annotate

import (
	"encoding/binary"
	"math"
)

// recordSeed returns the seed of a record's random stream: a hash of the
// text and of the options that change sampling (not Top, MinScore or
// ConceptsOnly, which only cut the result: concepts-only ranks what the
// full annotation ranks), keyed by the model's SHA-256 content checksum
// (model.Model.ContentSum), which New computes once. The same model, text and options always give the same
// stream; another text, option or model another stream.
//
// It was the SHA-256 of all of these, a twentieth of a record's
// instructions (without SHA-NI; less than 1 % of the time with it). The
// seed only has to tell records apart, not resist an adversary: each
// 8-byte word w is folded in by h = (h ⊕ w)·c, h ⊕= h >> 32 (a bijection
// of h for each w, injective in w for each h), and SplitMix64's finaliser
// (Steele, Lea & Flood 2014) mixes the end state, so that every input bit
// moves about half of the output bits (TestRecordSeed).
func (a *Annotator) recordSeed(text string, opt Options, subj []int32) uint64 {
	h := seedHash{a.seedKey[0]}
	h.word(a.seedKey[1])
	h.word(uint64(len(text))) // a word of its own: ⊕ with the key, some keys and lengths would cancel
	h.text(text)
	h.word(uint64(opt.SubjectMode))
	h.word(math.Float64bits(opt.BoostFactor))
	h.word(uint64(int64(opt.BurnIn)))
	h.word(uint64(int64(opt.Samples)))
	h.word(uint64(len(subj)))
	for _, k := range subj {
		h.word(uint64(k))
	}
	h.word(seedSalt)
	return h.sum()
}

// seedKey returns recordSeed's key from the model's content checksum
// (model.Model.ContentSum: provenance left out, so that a refit of the same
// tables, at another date or by another build, annotates the same way).
func seedKey(sum [32]byte) [2]uint64 {
	return [2]uint64{binary.LittleEndian.Uint64(sum[:8]), binary.LittleEndian.Uint64(sum[8:16])}
}

// seedHash is recordSeed's running state.
type seedHash struct{ h uint64 }

// seedMul is the odd multiplier of each step: 2^64 divided by the golden
// ratio, rounded to odd (the Weyl step of SplitMix64).
const seedMul = 0x9e3779b97f4a7c15

func (s *seedHash) word(w uint64) {
	h := (s.h ^ w) * seedMul
	s.h = h ^ h>>32
}

// text folds in t 8 bytes at a time, little-endian, the last word padded
// with zeros (the length was folded in before).
func (s *seedHash) text(t string) {
	h := s.h
	for len(t) >= 8 {
		w := uint64(t[0]) | uint64(t[1])<<8 | uint64(t[2])<<16 | uint64(t[3])<<24 |
			uint64(t[4])<<32 | uint64(t[5])<<40 | uint64(t[6])<<48 | uint64(t[7])<<56
		h = (h ^ w) * seedMul
		h ^= h >> 32
		t = t[8:]
	}
	s.h = h
	if len(t) > 0 {
		w := uint64(0)
		for i := len(t) - 1; i >= 0; i-- {
			w = w<<8 | uint64(t[i])
		}
		s.word(w)
	}
}

// sum returns the state through SplitMix64's finaliser.
func (s *seedHash) sum() uint64 {
	z := s.h
	z = (z ^ z>>30) * 0xbf58476d1ce4e5b9
	z = (z ^ z>>27) * 0x94d049bb133111eb
	return z ^ z>>31
}
