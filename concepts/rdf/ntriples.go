package rdf

import (
	"errors"
	"fmt"
	"hash/maphash"
	"io"
	"unicode/utf8"
)

// ReadNTriples reads N-Triples (W3C Recommendation, 25 February 2014),
// calling fn per triple as each line is parsed:
//
//	<http://ex.org/c1> <http://www.w3.org/2004/02/skos/core#prefLabel> "chat"@fr .
//	_:b0 <http://ex.org/p> "caf\u00E9"^^<http://www.w3.org/2001/XMLSchema#string> . # comment
//
// IRIs must be absolute; opt.Base is not used. Blank node labels are kept
// as written. Input is read in 64 KiB chunks and only the statement being
// parsed is held. The first error stops reading: a *ParseError
// ("file:line:col: expected ...", errors.Is ErrSyntax or ErrIO); fn's own
// error is returned unchanged.
func ReadNTriples(r io.Reader, opt Options, fn func(Triple) error) error {
	return readLines(r, opt, fn, false)
}

// ReadNQuads reads N-Quads (W3C Recommendation, 25 February 2014): N-Triples
// lines with an optional fourth term, the graph name, which is set in G.
func ReadNQuads(r io.Reader, opt Options, fn func(Triple) error) error {
	return readLines(r, opt, fn, true)
}

// lineParser reads the line-based formats.
type lineParser struct {
	*lexer
	quads  bool
	format string // "N-Triples" or "N-Quads", for messages
	names  interner
}

func readLines(r io.Reader, opt Options, fn func(Triple) error, quads bool) error {
	p := &lineParser{lexer: newLexer(r, opt.File), quads: quads, format: "N-Triples", names: newInterner()}
	if quads {
		p.format = "N-Quads"
	}
	p.skipBOM()
	for {
		p.skipBlanks()
		switch c := p.peek(); c {
		case -1:
			if p.err != nil {
				return p.ioError()
			}
			return nil
		case '\n', '\r':
			p.skipEOL()
			continue
		case '#':
			if err := p.skipComment(); err != nil {
				return err
			}
			continue
		}
		t, err := p.statement()
		if err != nil {
			return err
		}
		if err := fn(t); err != nil {
			return err
		}
	}
}

// statement reads subject predicate object [graph] "." and what may follow
// on the line (blanks, a comment), up to but not including the line break.
func (p *lineParser) statement() (Triple, error) {
	var t Triple
	var err error
	switch p.peek() {
	case '<':
		t.S, err = p.iri()
	case '_':
		t.S, err = p.blank()
	default:
		return t, p.errorf("expected subject (IRI or blank node), found %s", p.describeNext())
	}
	if err != nil {
		return t, err
	}
	p.skipBlanks()
	if p.peek() != '<' {
		return t, p.errorf("expected predicate IRI, found %s", p.describeNext())
	}
	if t.P, err = p.iri(); err != nil {
		return t, err
	}
	p.skipBlanks()
	switch p.peek() {
	case '<':
		t.O, err = p.iri()
	case '_':
		t.O, err = p.blank()
	case '"':
		t.O, err = p.literal()
	default:
		return t, p.errorf("expected object (IRI, blank node or literal), found %s", p.describeNext())
	}
	if err != nil {
		return t, err
	}
	p.skipBlanks()
	if p.quads {
		switch p.peek() {
		case '<':
			t.G, err = p.iri()
		case '_':
			t.G, err = p.blank()
		}
		if err != nil {
			return t, err
		}
		p.skipBlanks()
	}
	if p.peek() != '.' {
		what := `"."`
		if p.quads && t.G.Kind == None {
			what = `graph name or "."`
		}
		return t, p.errorf("expected %s after %s statement, found %s", what, p.format, p.describeNext())
	}
	p.r++
	p.skipBlanks()
	switch c := p.peek(); c {
	case -1, '\n', '\r':
	case '#':
		if err := p.skipComment(); err != nil {
			return t, err
		}
	default:
		return t, p.errorf("expected end of line after \".\", found %s", p.describeNext())
	}
	return t, nil
}

func (p *lineParser) iri() (Term, error) {
	b, err := p.readIRIRef()
	if err != nil {
		return Term{}, err
	}
	if !hasScheme(b) {
		return Term{}, p.tokErrorf("expected absolute IRI, found relative IRI <%s> (%s allows no relative IRIs)", b, p.format)
	}
	return Term{Kind: IRI, Value: p.names.get(b)}, nil
}

func (p *lineParser) blank() (Term, error) {
	b, err := p.readBlankLabel()
	if err != nil {
		return Term{}, err
	}
	return Term{Kind: Blank, Value: p.names.get(b)}, nil
}

func (p *lineParser) literal() (Term, error) {
	b, err := p.readString('"', false)
	if err != nil {
		return Term{}, err
	}
	t := Term{Kind: Literal, Value: string(b), Datatype: XSDString}
	p.skipBlanks() // white space may surround terminals (N-Triples §7)
	switch p.peek() {
	case '@':
		lang, err := p.readLangTag()
		if err != nil {
			return Term{}, err
		}
		t.Lang, t.Datatype = p.names.get(lang), RDFLangString
	case '^':
		if p.peekAt(1) != '^' {
			p.r++
			return Term{}, p.errorf(`expected "^^" before datatype IRI`)
		}
		p.r += 2
		if p.peek() != '<' {
			return Term{}, p.errorf("expected datatype IRI after \"^^\", found %s", p.describeNext())
		}
		dt, err := p.iri()
		if err != nil {
			return Term{}, err
		}
		t.Datatype = dt.Value
	}
	return t, nil
}

// skipBlanks skips spaces and tabs.
func (p *lineParser) skipBlanks() {
	for {
		for p.r < p.w {
			if c := p.buf[p.r]; c != ' ' && c != '\t' {
				return
			}
			p.r++
		}
		p.startTok()
		if !p.fill() {
			return
		}
	}
}

// skipEOL consumes one line break character.
func (p *lineParser) skipEOL() {
	if p.buf[p.r] == '\n' || p.peekAt(1) != '\n' { // a lone CR ends a line too
		p.newline(p.r)
	}
	p.r++
}

// interner turns byte slices into strings, sharing one string between
// equal values that recur close together (the predicates, datatypes and
// language tags of every statement, a scheme IRI on every concept). It is a
// direct-mapped cache of internSlots strings indexed by a hash of the bytes:
// it never grows, and a miss costs only the allocation string(b) would.
type interner struct {
	seed  maphash.Seed
	slots *[internSlots]string
}

const internSlots = 4096

func newInterner() interner {
	return interner{seed: maphash.MakeSeed(), slots: new([internSlots]string)}
}

func (in interner) get(b []byte) string {
	slot := &in.slots[maphash.Bytes(in.seed, b)&(internSlots-1)]
	if *slot == string(b) {
		return *slot
	}
	s := string(b)
	*slot = s
	return s
}

// lexer is the buffered byte source shared by the N-Triples, N-Quads and
// Turtle readers. It reads the io.Reader in chunks into buf and keeps every
// byte from the start of the current token (tok) on refill, so a token's raw
// bytes can be sliced out of buf without copying; bytes before tok are
// dropped. Only the current token is ever held, never the whole document.
//
// Positions are computed on demand: cur and tokAt remember the line number
// and where that line starts in buf, so a column costs a rune count only
// when an error is reported.
type lexer struct {
	rd   io.Reader
	file string
	buf  []byte // buf[r:w] is unread input, buf[tok:r] the current token so far
	r, w int
	tok  int
	eof  bool
	err  error // the read error that ended input early, other than io.EOF

	cur   linePos // line of buf[r]
	tokAt linePos // line of buf[tok]

	sb []byte // decoded token content when escapes occur; reused
}

// linePos locates a line in the buffer.
type linePos struct {
	line  int // 1-based line number
	start int // index in buf of the line's first byte; negative once dropped
	carry int // characters of this line already dropped from buf
}

func (p *linePos) drop(buf []byte, keep int) {
	if p.start < keep {
		p.carry += utf8.RuneCount(buf[max(p.start, 0):keep])
	}
	p.start -= keep
}

// col returns the 1-based character column of buf[i] on line p.
func (p *linePos) col(buf []byte, i int) int {
	s := max(p.start, 0)
	if i < s {
		return p.carry + 1
	}
	return p.carry + utf8.RuneCount(buf[s:i]) + 1
}

const lexBufSize = 64 << 10

func newLexer(rd io.Reader, file string) *lexer {
	return &lexer{
		rd:    rd,
		file:  file,
		buf:   make([]byte, lexBufSize),
		cur:   linePos{line: 1},
		tokAt: linePos{line: 1},
		sb:    make([]byte, 0, 256),
	}
}

// fill reads more input, keeping buf[tok:]. It reports whether new bytes
// arrived.
func (l *lexer) fill() bool {
	if l.eof {
		return false
	}
	if keep := l.tok; keep > 0 {
		l.cur.drop(l.buf, keep)
		l.tokAt.drop(l.buf, keep)
		l.w = copy(l.buf, l.buf[keep:l.w])
		l.r -= keep
		l.tok = 0
	}
	if l.w == len(l.buf) {
		nb := make([]byte, 2*len(l.buf))
		copy(nb, l.buf[:l.w])
		l.buf = nb
	}
	for tries := 0; ; tries++ {
		n, err := l.rd.Read(l.buf[l.w:])
		l.w += n
		if err != nil {
			l.eof = true
			if err != io.EOF {
				l.err = err
			}
			return n > 0
		}
		if n > 0 {
			return true
		}
		if tries > 100 {
			l.eof = true
			l.err = io.ErrNoProgress
			return false
		}
	}
}

// skipBOM skips a UTF-8 byte order mark at the start of the input, which
// editors on some systems write; the grammars do not mention it.
func (l *lexer) skipBOM() {
	if l.peekAt(2) >= 0 && l.buf[l.r] == 0xEF && l.buf[l.r+1] == 0xBB && l.buf[l.r+2] == 0xBF {
		l.r += 3
		l.cur.start = l.r
	}
}

// peek returns the next byte without consuming it, or -1 at the end.
func (l *lexer) peek() int {
	if l.r < l.w || l.fill() {
		return int(l.buf[l.r])
	}
	return -1
}

// peekAt returns the byte k positions ahead of the next one, or -1.
func (l *lexer) peekAt(k int) int {
	for l.r+k >= l.w {
		if !l.fill() {
			return -1
		}
	}
	return int(l.buf[l.r+k])
}

// startTok marks the next byte as the start of a token.
func (l *lexer) startTok() {
	l.tok = l.r
	l.tokAt = l.cur
}

// newline records that buf[i] is a line feed.
func (l *lexer) newline(i int) {
	l.cur.line++
	l.cur.start = i + 1
	l.cur.carry = 0
}

// errorf returns a syntax error at the current read position. If the input
// ended because of a read error, that error is returned instead.
func (l *lexer) errorf(format string, args ...any) error {
	return l.errAtPos(l.cur.line, l.cur.col(l.buf, l.r), format, args...)
}

// tokErrorf returns a syntax error at the start of the current token.
func (l *lexer) tokErrorf(format string, args ...any) error {
	return l.errAtPos(l.tokAt.line, l.tokAt.col(l.buf, l.tok), format, args...)
}

func (l *lexer) errAtPos(line, col int, format string, args ...any) error {
	if l.err != nil {
		return l.ioError()
	}
	return &ParseError{File: l.file, Line: line, Col: col, Msg: fmt.Sprintf(format, args...), Err: ErrSyntax}
}

func (l *lexer) ioError() error {
	return &ParseError{File: l.file, Line: l.cur.line, Col: l.cur.col(l.buf, l.r),
		Msg: "read failed: " + l.err.Error(), Err: errors.Join(ErrIO, l.err)}
}

// checkUTF8 returns an error at the first byte of buf[from:to] that is not
// valid UTF-8. The range must not contain a line feed after an invalid byte
// for the column to be exact, which holds for every token checked.
func (l *lexer) checkUTF8(from, to int, p *linePos) error {
	b := l.buf[from:to]
	if utf8.Valid(b) {
		return nil
	}
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			return l.errAtPos(p.line, p.col(l.buf, from+i), "expected UTF-8 text, found invalid byte 0x%02X", b[i])
		}
		i += n
	}
	return nil
}

// skipComment consumes a comment from the '#' at buf[r] up to, not
// including, the line break.
func (l *lexer) skipComment() error {
	l.startTok()
	for {
		for l.r < l.w {
			if c := l.buf[l.r]; c == '\n' || c == '\r' {
				return l.checkUTF8(l.tok, l.r, &l.cur)
			}
			l.r++
		}
		if !l.fill() {
			return l.checkUTF8(l.tok, l.r, &l.cur)
		}
	}
}

// readHex decodes n hex digits at buf[r:] (after "\u" or "\U"), consuming them.
func (l *lexer) readHex(n int) (rune, error) {
	if l.peekAt(n-1) < 0 {
		l.r = l.w
		return 0, l.errorf("expected %d hex digits in escape", n)
	}
	var v rune
	for i := 0; i < n; i++ {
		c := l.buf[l.r]
		var d byte
		switch {
		case c >= '0' && c <= '9':
			d = c - '0'
		case c >= 'a' && c <= 'f':
			d = c - 'a' + 10
		case c >= 'A' && c <= 'F':
			d = c - 'A' + 10
		default:
			return 0, l.errorf("expected hex digit in escape, found %s", quoteByte(c))
		}
		v = v<<4 | rune(d)
		l.r++
	}
	// Eight hex digits can overflow a rune into the negatives (\U80000000).
	if v < 0 || v > utf8.MaxRune || (v >= 0xD800 && v <= 0xDFFF) {
		l.r -= n + 2 // point at the backslash
		return 0, l.errorf("expected a Unicode scalar value in escape, found U+%04X (a surrogate or beyond U+10FFFF)", uint32(v))
	}
	return v, nil
}

// readUCHAR decodes a \u or \U escape; buf[r] is the letter u or U.
func (l *lexer) readUCHAR() (rune, error) {
	n := 4
	if l.buf[l.r] == 'U' {
		n = 8
	}
	l.r++
	return l.readHex(n)
}

func quoteByte(c byte) string {
	if c >= 0x21 && c < 0x7F {
		return fmt.Sprintf("%q", rune(c))
	}
	return fmt.Sprintf("byte 0x%02X", c)
}

// describeNext names the next input for an error message.
func (l *lexer) describeNext() string {
	c := l.peek()
	switch {
	case c < 0:
		return "end of input"
	case c == '\n' || c == '\r':
		return "end of line"
	case c < 0x80:
		return quoteByte(byte(c))
	}
	l.peekAt(3)
	r, _ := utf8.DecodeRune(l.buf[l.r:l.w])
	if r == utf8.RuneError {
		return quoteByte(byte(c))
	}
	return fmt.Sprintf("%q", r)
}

// readIRIRef reads an IRIREF whose "<" is at buf[r]: ([^#x00-#x20<>"{}|^`\] | UCHAR)* ">".
// It returns the raw content, or the decoded one in l.sb when escapes occur;
// the slice is valid until the next read.
func (l *lexer) readIRIRef() ([]byte, error) {
	l.startTok()
	l.r++   // '<'
	cs := 1 // start of the pending raw chunk, relative to tok
	escaped := false
	for {
		for l.r < l.w {
			c := l.buf[l.r]
			if !iriForbidden[c] {
				l.r++
				continue
			}
			switch c {
			case '>':
				raw := l.buf[l.tok+cs : l.r]
				if err := l.checkUTF8(l.tok+cs, l.r, &l.cur); err != nil {
					return nil, err
				}
				l.r++
				if escaped {
					l.sb = append(l.sb, raw...)
					return l.sb, nil
				}
				return raw, nil
			case '\\':
				if err := l.checkUTF8(l.tok+cs, l.r, &l.cur); err != nil {
					return nil, err
				}
				if !escaped {
					l.sb = l.sb[:0]
					escaped = true
				}
				l.sb = append(l.sb, l.buf[l.tok+cs:l.r]...)
				l.r++
				if c := l.peek(); c != 'u' && c != 'U' {
					return nil, l.errorf("expected \\u or \\U escape in IRI")
				}
				v, err := l.readUCHAR()
				if err != nil {
					return nil, err
				}
				if v < 0x80 && iriForbidden[v] {
					return nil, l.errorf("expected a character allowed in an IRI, found escape for U+%04X", v)
				}
				l.sb = utf8.AppendRune(l.sb, v)
				cs = l.r - l.tok
				continue
			case '\n', '\r':
				return nil, l.errorf("expected \">\" to end IRI before end of line")
			default:
				return nil, l.errorf("expected \">\" to end IRI, found %s (not allowed in an IRI)", describeByte(c))
			}
		}
		if !l.fill() {
			return nil, l.errorf("expected \">\" to end IRI, found end of input")
		}
	}
}

func describeByte(c byte) string {
	if c == ' ' {
		return "space"
	}
	return quoteByte(c)
}

// echar maps the letter of an ECHAR escape to its character
// (RDF 1.1 Turtle §6.4, N-Triples §7); 0 marks letters without one.
var echar = [256]byte{'t': '\t', 'b': '\b', 'n': '\n', 'r': '\r', 'f': '\f', '"': '"', '\'': '\'', '\\': '\\'}

// readString reads a quoted string whose opening quote q is at buf[r].
// With long set it reads a triple-quoted string (the three quotes at buf[r]).
// The content, decoded, is in the returned slice, valid until the next read.
func (l *lexer) readString(q byte, long bool) ([]byte, error) {
	l.startTok()
	open := 1
	if long {
		open = 3
	}
	l.r += open
	cs := open
	escaped := false
	for {
		for l.r < l.w {
			c := l.buf[l.r]
			if c != q && c != '\\' && c != '\n' && c != '\r' {
				l.r++
				continue
			}
			switch {
			case c == q:
				if long {
					if l.peekAt(2) < 0 {
						l.r = l.w
						return nil, l.errorf("expected %c%c%c to end string, found end of input", q, q, q)
					}
					if l.buf[l.r+1] != q || l.buf[l.r+2] != q {
						l.r++
						continue
					}
				}
				if !escaped {
					if err := l.checkUTF8(l.tok+cs, l.r, &l.cur); err != nil {
						return nil, err
					}
					raw := l.buf[l.tok+cs : l.r]
					l.r += open
					return raw, nil
				}
				if err := l.flushChunk(cs, &escaped); err != nil {
					return nil, err
				}
				l.r += open
				return l.sb, nil
			case c == '\\':
				if err := l.flushChunk(cs, &escaped); err != nil {
					return nil, err
				}
				l.r++
				e := l.peek()
				switch {
				case e < 0:
					return nil, l.errorf("expected escape after \"\\\", found end of input")
				case e == 'u' || e == 'U':
					v, err := l.readUCHAR()
					if err != nil {
						return nil, err
					}
					l.sb = utf8.AppendRune(l.sb, v)
				case echar[e] != 0:
					l.sb = append(l.sb, echar[e])
					l.r++
				default:
					l.r--
					return nil, l.errorf("expected escape (\\t \\b \\n \\r \\f \\\" \\' \\\\ \\u \\U), found \\%s", quoteByte(byte(e)))
				}
				cs = l.r - l.tok
			default: // line break
				if !long {
					return nil, l.errorf("expected %c to end string before end of line", q)
				}
				if c == '\n' {
					// Flush before the line number changes so that a bad
					// byte's column is reported on its own line.
					if err := l.flushChunk(cs, &escaped); err != nil {
						return nil, err
					}
					l.sb = append(l.sb, '\n')
					l.newline(l.r)
					l.r++
					cs = l.r - l.tok
				} else {
					l.r++
				}
			}
		}
		if !l.fill() {
			return nil, l.errorf("expected %c to end string, found end of input", q)
		}
	}
}

// flushChunk validates buf[tok+cs:r] and appends it to l.sb, switching the
// token to decoded mode.
func (l *lexer) flushChunk(cs int, escaped *bool) error {
	if err := l.checkUTF8(l.tok+cs, l.r, &l.cur); err != nil {
		return err
	}
	if !*escaped {
		l.sb = l.sb[:0]
		*escaped = true
	}
	l.sb = append(l.sb, l.buf[l.tok+cs:l.r]...)
	return nil
}

// readLangTag reads LANGTAG after the '@' at buf[r]: [a-zA-Z]+ ('-' [a-zA-Z0-9]+)*,
// lower-cased into l.sb.
func (l *lexer) readLangTag() ([]byte, error) {
	l.r++ // '@'
	l.sb = l.sb[:0]
	first, seg := true, 0
	for {
		c := l.peek()
		switch {
		case c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z':
			l.sb = append(l.sb, byte(c)|0x20)
			seg++
		case c >= '0' && c <= '9' && !first:
			l.sb = append(l.sb, byte(c))
			seg++
		case c == '-' && seg > 0:
			l.sb = append(l.sb, '-')
			first, seg = false, 0
		default:
			if seg == 0 {
				return nil, l.errorf("expected language tag letters, found %s", l.describeNext())
			}
			return l.sb, nil
		}
		l.r++
	}
}

// readBlankLabel reads BLANK_NODE_LABEL after "_:" (buf[r] is '_'):
// (PN_CHARS_U | [0-9]) ((PN_CHARS | '.')* PN_CHARS)?. A trailing '.' is left
// unread. The label is returned as a slice of buf, valid until the next read.
func (l *lexer) readBlankLabel() ([]byte, error) {
	l.startTok()
	if l.peekAt(1) != ':' {
		l.r++
		return nil, l.errorf("expected \":\" after \"_\" in blank node label")
	}
	l.r += 2
	c, n := l.peekRune()
	if n == 0 || !(isPNCharsU(c) || c >= '0' && c <= '9') {
		if c < 0 && n == 1 {
			return nil, l.errorf("expected UTF-8 text, found invalid byte 0x%02X", l.buf[l.r])
		}
		return nil, l.errorf("expected blank node label after \"_:\", found %s", l.describeNext())
	}
	l.r += n
	lastGood := l.r - l.tok
	for {
		c, n := l.peekRune()
		if n == 0 {
			break
		}
		if c == '.' {
			l.r++
			continue
		}
		if !isPNChars(c) {
			if c < 0 && n == 1 {
				return nil, l.errorf("expected UTF-8 text, found invalid byte 0x%02X", l.buf[l.r])
			}
			break
		}
		l.r += n
		lastGood = l.r - l.tok
	}
	l.r = l.tok + lastGood
	return l.buf[l.tok+2 : l.r], nil
}

// peekRune decodes the next character without consuming it; n is 0 at the
// end of input; an invalid byte gives -1 with n 1.
func (l *lexer) peekRune() (rune, int) {
	if l.r >= l.w && !l.fill() {
		return 0, 0
	}
	c := l.buf[l.r]
	if c < utf8.RuneSelf {
		return rune(c), 1
	}
	if l.r+utf8.UTFMax > l.w {
		l.peekAt(utf8.UTFMax - 1)
	}
	r, n := utf8.DecodeRune(l.buf[l.r:l.w])
	if r == utf8.RuneError && n == 1 {
		return -1, 1
	}
	return r, n
}

// isPNCharsBase is PN_CHARS_BASE of RDF 1.1 Turtle §6.5.
func isPNCharsBase(c rune) bool {
	switch {
	case c < 0x80:
		return c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z'
	case c >= 0xC0 && c <= 0xD6, c >= 0xD8 && c <= 0xF6, c >= 0xF8 && c <= 0x2FF,
		c >= 0x370 && c <= 0x37D, c >= 0x37F && c <= 0x1FFF, c >= 0x200C && c <= 0x200D,
		c >= 0x2070 && c <= 0x218F, c >= 0x2C00 && c <= 0x2FEF, c >= 0x3001 && c <= 0xD7FF,
		c >= 0xF900 && c <= 0xFDCF, c >= 0xFDF0 && c <= 0xFFFD, c >= 0x10000 && c <= 0xEFFFF:
		return true
	}
	return false
}

// isPNCharsU is PN_CHARS_U: PN_CHARS_BASE | '_'.
func isPNCharsU(c rune) bool { return c == '_' || isPNCharsBase(c) }

// isPNChars is PN_CHARS: PN_CHARS_U | '-' | [0-9] | #xB7 | [#x0300-#x036F] | [#x203F-#x2040].
func isPNChars(c rune) bool {
	if c < 0x80 {
		return c >= 0 && pnCharsASCII[c]
	}
	return c == 0xB7 || c >= 0x300 && c <= 0x36F || c >= 0x203F && c <= 0x2040 || isPNCharsBase(c)
}

var pnCharsASCII = func() (t [128]bool) {
	for c := 'a'; c <= 'z'; c++ {
		t[c] = true
		t[c-'a'+'A'] = true
	}
	for c := '0'; c <= '9'; c++ {
		t[c] = true
	}
	t['_'], t['-'] = true, true
	return t
}()
