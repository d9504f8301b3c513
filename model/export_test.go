package model

import (
	"crypto/sha256"
	"encoding/binary"
)

// SaveWith exposes save's writer hook to the external tests.
var SaveWith = save

// FixChecksum rewrites the length and checksum of a .grove image so that a
// fuzzed payload reaches the decoder.
func FixChecksum(b []byte) []byte {
	if len(b) < headerSize {
		return b
	}
	b = append([]byte(nil), b...)
	binary.LittleEndian.PutUint64(b[16:], uint64(len(b)-headerSize))
	s := sha256.Sum256(b[headerSize:])
	copy(b[24:], s[:])
	return b
}

// SetEncodeOptionsAsMap makes Save write Provenance.Options as builds before
// meta.Options did, until the returned function is called.
func SetEncodeOptionsAsMap() (undo func()) {
	encodeOptionsAsMap = true
	return func() { encodeOptionsAsMap = false }
}
