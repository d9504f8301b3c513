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
	// Source: Unicode Standard Annex #29 "Unicode Text Segmentation",
	// WordBreakTest.txt. From memory: the lines below are typed in that
	// file's notation from memory of its sample section, and each was
	// re-derived by hand from rules WB3-WB999 of the annex.
	lines := []string{
		"÷ 0063 × 0061 × 006E × 0027 × 0074 ÷", // can't (WB6/WB7, Single_Quote)
		"÷ 0063 × 0061 × 006E × 2019 × 0074 ÷", // can’t (MidNumLet)
		"÷ 0061 × 0062 × 00AD × 0062 × 0079 ÷", // ab<SHY>by (WB4, Format)
		"÷ 0061 ÷ 0024 ÷ 002D ÷ 0033 × 0034 × 002C × 0035 × 0036 × 0037 × 002E × 0031 × 0034 ÷ 0025 ÷ 0062 ÷", // a$-34,567.14%b
		"÷ 0033 × 0061 ÷",               // 3a (WB10)
		"÷ 000D × 000A ÷",               // CR LF (WB3)
		"÷ 0020 × 0020 ÷",               // WSegSpace (WB3d)
		"÷ 0041 ÷ 003A ÷",               // A: at the end (no WB6)
		"÷ 0041 × 003A × 0041 ÷",        // A:A (WB6/WB7)
		"÷ 0031 × 002C × 0031 ÷",        // 1,1 (WB11/WB12)
		"÷ 0031 ÷ 002C ÷",               // 1, at the end
		"÷ 0061 × 005F × 0061 ÷",        // a_a (WB13a/WB13b)
		"÷ 0061 × 0308 × 0062 ÷",        // a<diaeresis>b (WB4, WB5)
		"÷ 30A2 × 30A2 ÷",               // Katakana (WB13)
		"÷ 4E00 ÷ 4E00 ÷",               // ideographs (WB999)
		"÷ 1F1E6 × 1F1E7 ÷ 1F1E8 ÷",     // regional indicators (WB15)
		"÷ 05D0 × 0027 ÷",               // Hebrew letter, quote (WB7a)
		"÷ 0061 ÷ 0020 ÷ 0062 ÷",        // a b
		"÷ 0001 ÷ 0001 ÷",               // Other, Other (WB999)
		"÷ 0061 × 002E × 0062 ÷ 002E ÷", // a.b. (WB6/WB7, then end)
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

// TestSegmenterMatchesUniseg checks the ASCII fast path against uniseg's
// full UAX #29 implementation on random texts (common practice, no source:
// differential testing against the reference library).
func TestSegmenterMatchesUniseg(t *testing.T) {
	alphabet := []string{"a", "B", "z", "0", "7", "_", ".", ",", ";", ":", "'", "\"", "-", " ", " ", "  ", "\t", "\n", "\r\n",
		"é", "ß", "ü", "\u0301", "\u00AD", "’", "中", "ア", "א", "😀", "\u200D", "\xff", "$", "%", "(", "1,000", "l'église", "co-op"}
	r := rand.New(rand.NewPCG(7, 9))
	for n := 0; n < 20000; n++ {
		var sb strings.Builder
		for k := r.IntN(12); k >= 0; k-- {
			sb.WriteString(alphabet[r.IntN(len(alphabet))])
		}
		text := sb.String()
		if got, want := wordSpans(text), unisegWordSpans(text); !slices.Equal(got, want) {
			t.Fatalf("%q: words %v, uniseg %v", text, got, want)
		}
	}
}
