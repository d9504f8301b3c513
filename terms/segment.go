package terms

import (
	"unicode"
	"unicode/utf8"

	"github.com/rivo/uniseg"
)

// Segment kinds.
const (
	segWord = iota // contains a letter or a number: analysed
	segSoft        // white space or hyphens: phrases continue across it
	segHard        // any other punctuation or symbol: phrases stop here
)

// ASCII word-break classes (UAX #29, section 4.1, Word_Break property values
// of the ASCII characters).
const (
	cOther   = iota
	cLetter  // ALetter: A-Z a-z
	cDigit   // Numeric: 0-9
	cExtNum  // ExtendNumLet: _
	cMidL    // MidLetter: ':'
	cMidN    // MidNum: ',' ';'
	cMidNL   // MidNumLet '.' and Single_Quote '\''
	cSpace   // U+0020 (WSegSpace)
	cNewline // CR, LF, VT, FF (CR, LF, Newline)
	cTab     // U+0009 (Other, but ends a stretch)
)

var asciiClass [128]uint8

func init() {
	for c := 'a'; c <= 'z'; c++ {
		asciiClass[c] = cLetter
		asciiClass[c-'a'+'A'] = cLetter
	}
	for c := '0'; c <= '9'; c++ {
		asciiClass[c] = cDigit
	}
	asciiClass['_'] = cExtNum
	asciiClass[':'] = cMidL
	asciiClass[','] = cMidN
	asciiClass[';'] = cMidN
	asciiClass['.'] = cMidNL
	asciiClass['\''] = cMidNL
	asciiClass[' '] = cSpace
	asciiClass['\r'] = cNewline
	asciiClass['\n'] = cNewline
	asciiClass['\v'] = cNewline
	asciiClass['\f'] = cNewline
	asciiClass['\t'] = cTab
}

// segmenter walks the UAX #29 word segments of a text with byte offsets into
// it. Stretches between ASCII white space that are pure ASCII are segmented
// by the rules of UAX #29 restricted to ASCII (WB5-WB13b) in a table-driven
// loop; any stretch holding a non-ASCII byte is handed to uniseg. ASCII
// white space always has a word boundary on its left (WB3a, WB3d and WB999
// only join it to more white space), so the split is exact for words; it can
// differ from UAX #29 only in attaching a combining mark that follows white
// space (WB4), which never changes a word segment. Invalid UTF-8 bytes are
// read as U+FFFD, a symbol, and so never end up inside a word.
type segmenter struct {
	text       string
	pos        int
	stretchEnd int  // end of the current non-white stretch
	uni        bool // current stretch goes through uniseg
	uniState   int
}

func (g *segmenter) reset(text string) {
	*g = segmenter{text: text}
}

// next returns the next segment; ok is false at the end of the text.
func (g *segmenter) next() (start, end, kind int, ok bool) {
	t := g.text
	p := g.pos
	if p >= len(t) {
		return 0, 0, 0, false
	}
	if p < g.stretchEnd {
		if g.uni {
			w, _, st := uniseg.FirstWordInString(t[p:g.stretchEnd], g.uniState)
			g.uniState = st
			g.pos = p + len(w)
			return p, g.pos, classify(w), true
		}
		return g.nextASCII(p)
	}
	c := t[p]
	if c < utf8.RuneSelf {
		switch asciiClass[c] {
		case cSpace:
			e := p + 1
			for e < len(t) && t[e] == ' ' {
				e++
			}
			g.pos = e
			return p, e, segSoft, true
		case cNewline, cTab:
			e := p + 1
			if c == '\r' && e < len(t) && t[e] == '\n' {
				e++
			}
			g.pos = e
			return p, e, segSoft, true
		}
	}
	// A new stretch up to the next ASCII white space.
	e := p
	ascii := true
	for e < len(t) {
		c := t[e]
		if c >= utf8.RuneSelf {
			ascii = false
		} else if k := asciiClass[c]; k == cSpace || k == cNewline || k == cTab {
			break
		}
		e++
	}
	g.stretchEnd = e
	g.uni = !ascii
	g.uniState = -1
	return g.next()
}

// nextASCII segments inside a pure-ASCII stretch.
func (g *segmenter) nextASCII(p int) (start, end, kind int, ok bool) {
	t := g.text[:g.stretchEnd]
	k := asciiClass[t[p]]
	if k != cLetter && k != cDigit && k != cExtNum {
		g.pos = p + 1
		if t[p] == '-' {
			return p, p + 1, segSoft, true
		}
		return p, p + 1, segHard, true
	}
	word := k != cExtNum
	i := p + 1
	for i < len(t) {
		prev := asciiClass[t[i-1]]
		c := asciiClass[t[i]]
		if c == cLetter || c == cDigit || c == cExtNum {
			// WB5, WB8, WB9, WB10, WB13a, WB13b
			if c != cExtNum {
				word = true
			}
			i++
			continue
		}
		if i+1 < len(t) {
			n := asciiClass[t[i+1]]
			// WB6/WB7: AHLetter (MidLetter | MidNumLetQ) AHLetter
			if prev == cLetter && n == cLetter && (c == cMidL || c == cMidNL) {
				i += 2
				continue
			}
			// WB11/WB12: Numeric (MidNum | MidNumLetQ) Numeric
			if prev == cDigit && n == cDigit && (c == cMidN || c == cMidNL) {
				i += 2
				continue
			}
		}
		break
	}
	g.pos = i
	if word {
		return p, i, segWord, true
	}
	return p, i, segHard, true
}

// classify tells the kind of a segment found by uniseg.
func classify(s string) int {
	soft := true
	for _, r := range s {
		if unicode.IsLetter(r) || unicode.IsNumber(r) {
			return segWord
		}
		if !unicode.IsSpace(r) && !isHyphen(r) {
			soft = false
		}
	}
	if soft {
		return segSoft
	}
	return segHard
}

// isHyphen reports hyphen characters that join compound words (not dashes).
func isHyphen(r rune) bool {
	return r == '-' || r == '\u2010' || r == '\u2011' || r == '\u00AD'
}
