package terms

import (
	"hash/maphash"
	"strings"
)

// wordCache maps surface words to their analysis. It is an open-addressing
// table (linear probing, load factor at most 1/2) whose slots keep the
// 64-bit hash beside the entry, so that a lookup touches one slot and the
// entry it returns; Go's map would add a control word and a key header.
type wordCache struct {
	slots []cacheSlot
	n     int // entries
}

type cacheSlot struct {
	hash uint64
	e    *entry // nil: empty slot
}

var cacheSeed = maphash.MakeSeed()

func newWordCache() *wordCache { return &wordCache{slots: make([]cacheSlot, 1<<12)} }

// get returns the entry of surface word s, nil when absent.
func (c *wordCache) get(s string) *entry {
	h := maphash.String(cacheSeed, s)
	mask := uint64(len(c.slots) - 1)
	for i := h & mask; ; i = (i + 1) & mask {
		sl := &c.slots[i]
		if sl.e == nil {
			return nil
		}
		if sl.hash == h && sl.e.sameKey(s) {
			return sl.e
		}
	}
}

// put adds e for s (absent before).
func (c *wordCache) put(s string, e *entry) {
	e.key = strings.Clone(s) // not a slice of a possibly large text
	e.klen = int32(len(s))
	copy(e.short[:], s)
	if 2*(c.n+1) > len(c.slots) {
		old := c.slots
		c.slots = make([]cacheSlot, 2*len(old))
		for _, sl := range old {
			if sl.e != nil {
				c.insert(sl.hash, sl.e)
			}
		}
	}
	c.insert(maphash.String(cacheSeed, s), e)
	c.n++
}

func (c *wordCache) insert(h uint64, e *entry) {
	mask := uint64(len(c.slots) - 1)
	i := h & mask
	for c.slots[i].e != nil {
		i = (i + 1) & mask
	}
	c.slots[i] = cacheSlot{hash: h, e: e}
}

// sameKey compares with the copy of the key inside the entry when it fits,
// which shares the entry's cache line, and with key otherwise.
func (e *entry) sameKey(s string) bool {
	if int(e.klen) != len(s) {
		return false
	}
	if len(s) <= len(e.short) {
		return string(e.short[:len(s)]) == s
	}
	return e.key == s
}
