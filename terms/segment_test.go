package terms

import (
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"
	"testing"
	"unicode"

	"github.com/rivo/uniseg"
)

// parseBreakTest reads one line in the notation of Unicode's
// WordBreakTest.txt: code points in hex, "÷" for a boundary, "×" for none.
// It returns the text and the byte offsets of its boundaries.
func parseBreakTest(t *testing.T, line string) (string, []int) {
	t.Helper()
	var sb strings.Builder
	var breaks []int
	for _, f := range strings.Fields(line) {
		switch f {
		case "÷":
			breaks = append(breaks, sb.Len())
		case "×":
		default:
			cp, err := strconv.ParseUint(f, 16, 32)
			if err != nil {
				t.Fatalf("bad code point %q in %q", f, line)
			}
			sb.WriteRune(rune(cp))
		}
	}
	return sb.String(), breaks
}

func segmentBreaks(text string) []int {
	var g segmenter
	g.reset(text)
	br := []int{0}
	for {
		_, end, _, ok := g.next()
		if !ok {
			break
		}
		br = append(br, end)
	}
	return br
}

func TestWordBreakUAX29(t *testing.T) {
	// Source: Unicode 15.0.0, UCD auxiliary/WordBreakTest.txt (Unicode
	// Standard Annex #29), as carried in the generated table
	// wordbreak_test.go of github.com/rivo/uniseg v0.4.7; the number is the
	// case's position in that table. Unicode License v3.
	lines := []string{
		"÷ 0001 ÷ 0001 ÷",                                 // 0
		"÷ 0020 × 0308 ÷ 0061 ÷ 0027 × 2060 ÷",            // 975: WB4 after white space
		"÷ 0061 × 0027 × 0308 × 0061 ÷ 0027 × 2060 ÷",     // 1323: WB6/WB7 across Extend
		"÷ 0061 × 0027 × 2060 × 0308 × 0061 × 2060 ÷",     // 1375
		"÷ 0031 × 0027 × 0308 × 0031 ÷ 002E × 2060 ÷",     // 1565: WB11/WB12
		"÷ 0061 × 005F × 0031 ÷ 002E ÷ 003A ÷ 0031 ÷",     // 1788
		"÷ 000D × 000A ÷ 0061 ÷ 000A ÷ 0308 ÷",            // 1682: WB3, WB3a, WB3b
		"÷ 0020 × 200D ÷ 0646 ÷",                          // 1684: WB4 after white space
		"÷ 0646 × 200D ÷ 0020 ÷",                          // 1685
		"÷ 0041 × 0041 × 0041 ÷",                          // 1686: WB5
		"÷ 0041 × 003A × 0041 ÷",                          // 1687: WB6/WB7
		"÷ 0041 ÷ 003A ÷ 003A ÷ 0041 ÷",                   // 1688
		"÷ 05D0 × 0027 ÷",                                 // 1689: WB7a
		"÷ 05D0 × 0022 × 05D0 ÷",                          // 1690: WB7b/WB7c
		"÷ 0041 × 0030 × 0030 × 0041 ÷",                   // 1691: WB9, WB8, WB10
		"÷ 0030 × 002C × 0030 ÷",                          // 1692: WB11/WB12
		"÷ 0030 ÷ 002C ÷ 002C ÷ 0030 ÷",                   // 1693
		"÷ 3031 × 3031 ÷",                                 // 1694: WB13 Katakana
		"÷ 0041 × 005F × 0030 × 005F × 3031 × 005F ÷",     // 1695: WB13a/WB13b
		"÷ 0041 × 005F × 005F × 0041 ÷",                   // 1696
		"÷ 0061 ÷ 1F1E6 × 1F1E7 ÷ 1F1E8 ÷ 0062 ÷",         // 1698: WB15/WB16
		"÷ 0061 ÷ 1F1E6 × 1F1E7 ÷ 1F1E8 × 1F1E9 ÷ 0062 ÷", // 1701
		"÷ 0061 × 200D × 1F6D1 ÷",                         // 1704: WB3c
		"÷ 0061 × 0308 × 200D × 0308 × 0062 ÷",            // 1713
		"÷ 0061 ÷ 0020 × 0020 ÷ 0062 ÷",                   // 1714: WB3d
		"÷ 0031 ÷ 003A ÷ 003A ÷ 0031 ÷",                   // 1715
	}
	for _, line := range lines {
		text, want := parseBreakTest(t, line)
		if got := segmentBreaks(text); !slices.Equal(got, want) {
			t.Errorf("%s\n  %q: breaks %v, want %v", line, text, got, want)
		}
	}
}

// wordSpans lists the spans of word segments (a letter or number inside).
func wordSpans(text string) [][2]int {
	var out [][2]int
	var g segmenter
	g.reset(text)
	for {
		s, e, k, ok := g.next()
		if !ok {
			return out
		}
		if k == segWord {
			out = append(out, [2]int{s, e})
		}
	}
}

// unisegWordSpans is the reference: uniseg over the whole text.
func unisegWordSpans(text string) [][2]int {
	var out [][2]int
	st := -1
	pos := 0
	for rest := text; len(rest) > 0; {
		var w string
		w, rest, st = uniseg.FirstWordInString(rest, st)
		if strings.IndexFunc(w, func(r rune) bool { return unicode.IsLetter(r) || unicode.IsNumber(r) }) >= 0 {
			out = append(out, [2]int{pos, pos + len(w)})
		}
		pos += len(w)
	}
	return out
}

// unisegBreaks lists all boundaries uniseg finds.
func unisegBreaks(text string) []int {
	br := []int{0}
	st := -1
	for rest := text; len(rest) > 0; {
		var w string
		w, rest, st = uniseg.FirstWordInString(rest, st)
		br = append(br, br[len(br)-1]+len(w))
	}
	return br
}

// TestSegmenterMatchesUniseg checks the ASCII fast path against uniseg's
// full UAX #29 implementation on random texts (common practice, no source:
// differential testing against the reference library).
func TestSegmenterMatchesUniseg(t *testing.T) {
	alphabet := []string{"a", "B", "z", "0", "7", "_", ".", ",", ";", ":", "'", "\"", "-", " ", " ", "  ", "\t", "\n", "\r\n",
		"é", "ß", "ü", "\u0301", "\u00AD", "’", "中", "ア", "א", "😀", "\u200D", "\xff", "$", "%", "(", "1,000", "l'église", "co-op",
		"\u3000", "\u00A0", "\u2060", "\U0001F1E6", "\u0646", "\u05D0\"", "\v", "\x85"}
	r := rand.New(rand.NewPCG(7, 9))
	for n := 0; n < 200000; n++ {
		var sb strings.Builder
		for k := r.IntN(12); k >= 0; k-- {
			sb.WriteString(alphabet[r.IntN(len(alphabet))])
		}
		text := sb.String()
		if got, want := wordSpans(text), unisegWordSpans(text); !slices.Equal(got, want) {
			t.Fatalf("%q: words %v, uniseg %v", text, got, want)
		}
		if got, want := segmentBreaks(text), unisegBreaks(text); !slices.Equal(got, want) {
			t.Fatalf("%q: breaks %v, uniseg %v", text, got, want)
		}
	}
}
