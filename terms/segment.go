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
// loop; any stretch holding a non-ASCII byte is handed to uniseg, together
// with the white space before it when a mark or format character could
// attach to that (WB4), and past following spaces that WB3d then joins.
// ASCII white space otherwise always has a word boundary on its left, so the
// result equals uniseg over the whole text (TestSegmenterMatchesUniseg).
// Invalid UTF-8 bytes are read as U+FFFD, a symbol, and so never end up
// inside a word.
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
			for p+len(w) == g.stretchEnd && g.stretchEnd < len(t) && t[g.stretchEnd] == ' ' && startsWSegSpace(w) {
				// White space, marks, then more spaces: WB3d joins them
				// (WB4 ignores the marks), so read on past the spaces.
				e := g.stretchEnd
				for e < len(t) && t[e] == ' ' {
					e++
				}
				g.startStretch(e)
				g.uni = true
				w, _, st = uniseg.FirstWordInString(t[p:g.stretchEnd], g.uniState)
			}
			g.uniState = st
			g.pos = p + len(w)
			return p, g.pos, classify(w), true
		}
		return g.nextASCII(p)
	}
	c := t[p]
	if c < utf8.RuneSelf {
		switch asciiClass[c] {
		case cSpace, cTab:
			e := p + 1
			for c == ' ' && e < len(t) && t[e] == ' ' {
				e++
			}
			if e < len(t) && t[e] >= utf8.RuneSelf {
				// A combining mark or format character may attach to
				// the white space (WB4): let uniseg read both.
				g.startStretch(e)
				g.stretchStart(p)
				return g.next()
			}
			g.pos = e
			return p, e, segSoft, true
		case cNewline:
			e := p + 1
			if c == '\r' && e < len(t) && t[e] == '\n' {
				e++
			}
			g.pos = e
			return p, e, segSoft, true
		}
	}
	g.startStretch(p)
	return g.next()
}

// startStretch starts a stretch at p that runs to the next ASCII white
// space; it goes through uniseg when it holds a non-ASCII byte.
func (g *segmenter) startStretch(p int) {
	t := g.text
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
}

// stretchStart moves the start of a uniseg stretch back to p (white space
// that precedes it).
func (g *segmenter) stretchStart(p int) { g.pos = p }

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

// startsWSegSpace reports whether s starts with a Word_Break=WSegSpace
// character (UAX #29: Zs characters other than no-break spaces).
func startsWSegSpace(s string) bool {
	r, _ := utf8.DecodeRuneInString(s)
	switch r {
	case ' ', '\u1680', '\u205F', '\u3000':
		return true
	}
	return r >= '\u2000' && r <= '\u200A' && r != '\u2007'
}
