package concepts

import (
	"errors"
	"strings"
	"testing"
)

// TestLoadUTF16SaysSo: Windows "Unicode" exports are UTF-16 with a byte
// order mark; the error says so and how to fix it, instead of "binary
// data". Source: Unicode Standard §23.8 (FE FF / FF FE byte order marks).
func TestLoadUTF16SaysSo(t *testing.T) {
	for _, head := range []string{"\xff\xfe@\x00p\x00", "\xfe\xff\x00@\x00p"} {
		_, err := LoadReader(strings.NewReader(head), LoadOptions{File: "v.ttl"})
		if !errors.Is(err, ErrNotRDF) || !strings.Contains(err.Error(), "UTF-16") || !strings.Contains(err.Error(), "UTF-8") {
			t.Errorf("UTF-16 %q: %v", head[:2], err)
		}
	}
}
