package rdf

// RDF/XML reader: the grammar of RDF 1.1 XML Syntax (W3C Recommendation,
// 25 February 2014), §7, run over encoding/xml's raw token stream so that
// only the chain of open elements is ever held in memory.
//
//	<rdf:Description rdf:about="http://ex.org/a">   node element: subject
//	  <skos:prefLabel xml:lang="en">cat</skos:prefLabel>   property element
//	</rdf:Description>
//
// gives <http://ex.org/a> <…skos/core#prefLabel> "cat"@en .

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

const (
	rdfNS = "http://www.w3.org/1999/02/22-rdf-syntax-ns#"
	xmlNS = "http://www.w3.org/XML/1998/namespace"

	rdfType      = rdfNS + "type"
	rdfFirst     = rdfNS + "first"
	rdfRest      = rdfNS + "rest"
	rdfNil       = rdfNS + "nil"
	rdfSubject   = rdfNS + "subject"
	rdfPredicate = rdfNS + "predicate"
	rdfObject    = rdfNS + "object"
	rdfStatement = rdfNS + "Statement"
	// RDFXMLLiteral is the datatype of rdf:parseType="Literal" values.
	RDFXMLLiteral = rdfNS + "XMLLiteral"
)

// maxXMLDepth bounds element nesting so that hostile input cannot grow the
// parser's recursion without limit. Real vocabularies nest a few levels.
const maxXMLDepth = 10000

// ReadRDFXML reads RDF/XML (RDF 1.1 XML Syntax, W3C Recommendation 2014),
// calling fn once per triple as the document is parsed. opt.Base is the
// document IRI that relative IRIs, rdf:ID and xml:base resolve against.
//
// Syntax errors, invalid UTF-8 and truncated input give a *ParseError with
// the line and column where the problem was found; an error returned by fn
// stops the parse and is returned unchanged. Names the specification only
// warns about (unknown rdf: names such as rdf:foo) are accepted silently.
// Encodings other than UTF-8, US-ASCII and ISO-8859-1 are refused.
func ReadRDFXML(r io.Reader, opt Options, fn func(Triple) error) error {
	pr := &posReader{r: r, buf: make([]byte, 64<<10), line: 1, col: 1, validate: true}
	pr.skipBOM()
	d := xml.NewDecoder(pr)
	d.Strict = true
	d.CharsetReader = func(label string, in io.Reader) (io.Reader, error) {
		switch strings.ToLower(label) {
		case "us-ascii", "ascii":
			return in, nil
		case "iso-8859-1", "latin1", "latin-1", "iso_8859-1", "l1":
			pr.validate = false
			return &latin1Reader{r: in}, nil
		}
		return nil, &charsetError{fmt.Sprintf("unsupported encoding %q (only UTF-8, US-ASCII and ISO-8859-1 are read)", label)}
	}
	p := &xmlParser{dec: d, pos: pr, opt: opt, emit: fn, ids: map[string]struct{}{}}
	return p.document()
}

// posReader feeds the XML decoder byte by byte, keeping the line and the
// column (in Unicode characters) of the next byte and of the last one, since
// the decoder may hold one byte back. It also rejects invalid UTF-8, which
// the decoder checks only in some places.
type posReader struct {
	r          io.Reader
	buf        []byte // read buffer, reused; bytes buf[i:n] are not handed out yet
	i, n       int
	off        int64 // bytes handed out so far
	line, col  int   // position of the next byte
	pline, pcl int   // position of the last byte handed out
	validate   bool  // check UTF-8 (off once a Latin-1 declaration is seen)
	need       int   // continuation bytes still expected in the current rune
	lo, hi     byte  // allowed range of the next continuation byte
	bad        bool  // an invalid byte sequence was met
	ioErr      error // a read error of the underlying reader, not EOF
	// The bytes read since the current token began (the decoder may have
	// read its first byte already) are raw followed by buf[rawStart:i];
	// raw only fills when the buffer is refilled inside a token. They serve
	// attribute normalization.
	raw      []byte
	rawStart int
	// bline, bcol locate the first byte of the current (or the invalid)
	// UTF-8 sequence.
	bline, bcol int
}

// skipBOM drops a UTF-8 byte order mark at the start of the input (XML 1.0
// §4.3.3 allows it; the decoder would take it for text before the root).
// Call it before any other read.
func (p *posReader) skipBOM() {
	k, err := io.ReadFull(p.r, p.buf[:3])
	if k == 3 && string(p.buf[:3]) == "\ufeff" {
		k = 0
	}
	p.i, p.n = 0, k
	if err != nil && err != io.EOF && err != io.ErrUnexpectedEOF {
		p.ioErr = err
	}
}

// errBadUTF8 is returned by posReader on an invalid byte sequence.
var errBadUTF8 = errors.New("invalid UTF-8")

func (p *posReader) ReadByte() (byte, error) {
	if p.i == p.n {
		if err := p.fill(); err != nil {
			if err == io.EOF && p.validate && p.need > 0 {
				p.bad = true
				p.bline, p.bcol = p.line, p.col
				return 0, errBadUTF8
			}
			if err != io.EOF {
				p.ioErr = err
			}
			return 0, err
		}
	}
	b := p.buf[p.i]
	p.i++
	p.pline, p.pcl = p.line, p.col
	p.off++
	if b < 0x80 && p.need == 0 { // ASCII outside a multi-byte sequence
		if b == '\n' {
			p.line++
			p.col = 1
		} else {
			p.col++
		}
		return b, nil
	}
	if b == '\n' {
		p.line++
		p.col = 1
	} else if b&0xC0 != 0x80 {
		p.col++
	}
	if p.validate && !p.checkUTF8(b) {
		p.bad = true
		return 0, errBadUTF8
	}
	return b, nil
}

// fill reads more input into buf, keeping the current token's bytes.
func (p *posReader) fill() error {
	p.raw = append(p.raw, p.buf[p.rawStart:p.n]...)
	p.rawStart = 0
	for range 100 {
		n, err := p.r.Read(p.buf)
		p.i, p.n = 0, n
		if n > 0 {
			return nil
		}
		if err != nil {
			return err
		}
	}
	return io.ErrNoProgress
}

// startToken marks the start of a token's bytes.
func (p *posReader) startToken() {
	p.raw = p.raw[:0]
	p.rawStart = p.i
}

// tokenBytes returns the bytes read since startToken; valid until the next
// read.
func (p *posReader) tokenBytes() []byte {
	return append(p.raw, p.buf[p.rawStart:p.i]...)
}

// checkUTF8 advances the UTF-8 state by one byte (Unicode 15 Table 3-7,
// well-formed byte sequences).
func (p *posReader) checkUTF8(b byte) bool {
	if p.need > 0 {
		if b < p.lo || b > p.hi {
			return false
		}
		p.need--
		p.lo, p.hi = 0x80, 0xBF
		return true
	}
	p.bline, p.bcol = p.pline, p.pcl
	switch {
	case b < 0x80:
		return true
	case b >= 0xC2 && b <= 0xDF:
		p.need, p.lo, p.hi = 1, 0x80, 0xBF
	case b == 0xE0:
		p.need, p.lo, p.hi = 2, 0xA0, 0xBF
	case b >= 0xE1 && b <= 0xEC || b == 0xEE || b == 0xEF:
		p.need, p.lo, p.hi = 2, 0x80, 0xBF
	case b == 0xED:
		p.need, p.lo, p.hi = 2, 0x80, 0x9F
	case b == 0xF0:
		p.need, p.lo, p.hi = 3, 0x90, 0xBF
	case b >= 0xF1 && b <= 0xF3:
		p.need, p.lo, p.hi = 3, 0x80, 0xBF
	case b == 0xF4:
		p.need, p.lo, p.hi = 3, 0x80, 0x8F
	default:
		return false
	}
	return true
}

// Read serves a charset reader installed after an encoding declaration.
// Each call stops after a '>', so the decoder's read-ahead, and with it the
// error positions reported, stays within about one tag.
func (p *posReader) Read(b []byte) (int, error) {
	n := 0
	for n < len(b) {
		c, err := p.ReadByte()
		if err != nil {
			if n > 0 && err == io.EOF {
				return n, nil
			}
			return n, err
		}
		b[n] = c
		n++
		if c == '>' {
			break
		}
	}
	return n, nil
}

// at gives the line and column of byte offset off, which is the next byte
// or the one before it.
func (p *posReader) at(off int64) (int, int) {
	if off == p.off-1 {
		return p.pline, p.pcl
	}
	return p.line, p.col
}

// charsetError reports an encoding declaration the reader cannot honour.
type charsetError struct{ msg string }

func (e *charsetError) Error() string { return e.msg }

// latin1Reader turns ISO-8859-1 bytes into UTF-8.
type latin1Reader struct {
	r   io.Reader
	buf []byte
}

func (l *latin1Reader) Read(b []byte) (int, error) {
	if len(b) < utf8.UTFMax {
		return 0, io.ErrShortBuffer
	}
	if cap(l.buf) < len(b)/2 {
		l.buf = make([]byte, len(b)/2)
	}
	in := l.buf[:len(b)/2]
	n, err := l.r.Read(in)
	out := 0
	for _, c := range in[:n] {
		out += utf8.EncodeRune(b[out:], rune(c))
	}
	return out, err
}

// xmlParser holds the state of one ReadRDFXML call.
type xmlParser struct {
	dec  *xml.Decoder
	pos  *posReader
	opt  Options
	emit func(Triple) error

	ns    []nsBinding // in-scope namespace declarations, innermost last
	stack []frame     // open elements
	elems []*element  // elems[d] is reused for every element at depth d
	// line, col locate the start of the token read last.
	line, col int
	bnodes    int
	ids       map[string]struct{} // IRIs made from rdf:ID so far, e.g. "http://ex.org/doc#x"
	text      strings.Builder     // reused for text content
}

type nsBinding struct{ prefix, uri string }

// frame is one open element: its name as written, for matching the end tag,
// and what it puts in scope.
type frame struct {
	name       xml.Name // Space holds the prefix ("skos"), Local the local name
	nsMark     int      // len(ns) before this element's declarations
	base, lang string
}

// element is a start tag with names resolved and xml:base/xml:lang applied.
type element struct {
	prefix, local string // as written: "skos", "prefLabel"
	ns            string // namespace IRI: "http://www.w3.org/2004/02/skos/core#"
	attrs         []attr // every attribute but namespace declarations
	base, lang    string // in scope on this element
	line, col     int
}

func (e *element) iri() string { return e.ns + e.local }

type attr struct {
	prefix, local, ns, value string
}

func (a *attr) iri() string { return a.ns + a.local }

// propAttr is a property attribute: predicate IRI and literal value.
type propAttr struct{ pred, value string }

// token kinds returned by next.
const (
	tokEOF = iota
	tokStart
	tokEnd
	tokText
	tokOther // comment, processing instruction, directive
)

func (p *xmlParser) errAt(line, col int, format string, args ...any) error {
	return &ParseError{File: p.opt.File, Line: line, Col: col, Msg: fmt.Sprintf(format, args...), Err: ErrSyntax}
}

func (p *xmlParser) errEl(e *element, format string, args ...any) error {
	return p.errAt(e.line, e.col, format, args...)
}

// decodeErr turns an error of the XML decoder into a *ParseError.
func (p *xmlParser) decodeErr(err error) error {
	line, col := p.pos.at(p.dec.InputOffset())
	if p.pos.bad || errors.Is(err, errBadUTF8) {
		return &ParseError{File: p.opt.File, Line: p.pos.bline, Col: p.pos.bcol, Msg: "invalid UTF-8", Err: ErrSyntax}
	}
	var ce *charsetError
	if errors.As(err, &ce) {
		return p.errAt(p.line, p.col, "%s", ce.msg)
	}
	var se *xml.SyntaxError
	if errors.As(err, &se) {
		msg := se.Msg
		if msg == "unexpected EOF" {
			msg = "unexpected end of input inside markup"
		}
		return &ParseError{File: p.opt.File, Line: line, Col: col, Msg: "XML: " + msg, Err: ErrSyntax}
	}
	if p.pos.ioErr != nil {
		return &ParseError{File: p.opt.File, Line: line, Col: col, Msg: err.Error(), Err: fmt.Errorf("%w: %w", ErrIO, err)}
	}
	// The decoder's other complaints (XML version, charset) are about the text.
	return &ParseError{File: p.opt.File, Line: line, Col: col, Msg: strings.TrimPrefix(err.Error(), "xml: "), Err: ErrSyntax}
}

// next reads one token. Start tags come back as an element with namespaces
// resolved; end tags are checked against the open element.
func (p *xmlParser) next() (int, *element, string, error) {
	p.line, p.col = p.pos.at(p.dec.InputOffset())
	t, err := p.rawToken()
	if err != nil {
		if err == io.EOF && !p.pos.bad {
			if n := len(p.stack); n > 0 {
				return 0, nil, "", p.errAt(p.pos.line, p.pos.col, "unexpected end of input: element <%s> is not closed", qname(p.stack[n-1].name.Space, p.stack[n-1].name.Local))
			}
			return tokEOF, nil, "", nil
		}
		return 0, nil, "", p.decodeErr(err)
	}
	switch t := t.(type) {
	case xml.StartElement:
		e, err := p.open(t)
		return tokStart, e, "", err
	case xml.EndElement:
		n := len(p.stack)
		if n == 0 {
			return 0, nil, "", p.errAt(p.line, p.col, "end tag </%s> without a start tag", qname(t.Name.Space, t.Name.Local))
		}
		f := p.stack[n-1]
		if f.name != t.Name {
			return 0, nil, "", p.errAt(p.line, p.col, "end tag </%s> does not match <%s>", qname(t.Name.Space, t.Name.Local), qname(f.name.Space, f.name.Local))
		}
		p.ns = p.ns[:f.nsMark]
		p.stack = p.stack[:n-1]
		return tokEnd, nil, "", nil
	case xml.CharData:
		return tokText, nil, string(t), nil
	case xml.Directive:
		if len(p.stack) == 0 {
			p.doctype(t)
		}
		return tokOther, nil, "", nil
	case xml.Comment:
		return tokOther, nil, string(t), nil
	case xml.ProcInst:
		if len(p.stack) > 0 && strings.EqualFold(t.Target, "xml") {
			return 0, nil, "", p.errAt(p.line, p.col, "XML declaration inside an element")
		}
		return tokOther, nil, "", nil
	}
	return tokOther, nil, "", nil
}

// rawToken reads one token, keeping its bytes in p.pos.raw.
func (p *xmlParser) rawToken() (xml.Token, error) {
	p.pos.startToken()
	return p.dec.RawToken()
}

func qname(prefix, local string) string {
	if prefix == "" {
		return local
	}
	return prefix + ":" + local
}

// open pushes a start tag's namespaces, base and language.
func (p *xmlParser) open(t xml.StartElement) (*element, error) {
	if len(p.stack) >= maxXMLDepth {
		return nil, p.errAt(p.line, p.col, "elements nested deeper than %d", maxXMLDepth)
	}
	f := frame{name: t.Name, nsMark: len(p.ns), base: p.opt.Base}
	if n := len(p.stack); n > 0 {
		f.base, f.lang = p.stack[n-1].base, p.stack[n-1].lang
	}
	// One element value per depth, reused: an element is only used while
	// it is open, and its children live one level deeper.
	depth := len(p.stack)
	if depth == len(p.elems) {
		p.elems = append(p.elems, &element{})
	}
	e := p.elems[depth]
	*e = element{prefix: t.Name.Space, local: t.Name.Local, line: p.line, col: p.col, attrs: e.attrs[:0]}
	for _, a := range t.Attr {
		switch {
		case a.Name.Space == "xmlns":
			if a.Value == "" {
				return nil, p.errEl(e, "namespace prefix %q bound to an empty IRI", a.Name.Local)
			}
			p.ns = append(p.ns, nsBinding{a.Name.Local, a.Value})
		case a.Name.Space == "" && a.Name.Local == "xmlns":
			p.ns = append(p.ns, nsBinding{"", a.Value})
		}
	}
	if t.Name.Space == "xmlns" {
		return nil, p.errEl(e, "element name <%s> uses the reserved prefix xmlns", qname(t.Name.Space, t.Name.Local))
	}
	uri, ok := p.lookup(t.Name.Space)
	if !ok {
		return nil, p.errEl(e, "undeclared namespace prefix %q", t.Name.Space)
	}
	e.ns = uri
	for i := range t.Attr {
		// Not after a Latin-1 declaration: raw bytes are then not UTF-8.
		if p.pos.validate && strings.ContainsAny(t.Attr[i].Value, "\t\n\r") {
			p.normalizeAttrs(t.Attr)
			break
		}
	}
	for _, a := range t.Attr {
		if a.Name.Space == "xmlns" || a.Name.Space == "" && a.Name.Local == "xmlns" {
			continue
		}
		at := attr{prefix: a.Name.Space, local: a.Name.Local, value: a.Value}
		if a.Name.Space != "" {
			// Unprefixed attributes are in no namespace (Namespaces in XML §6.2).
			at.ns, ok = p.lookup(a.Name.Space)
			if !ok {
				return nil, p.errEl(e, "undeclared namespace prefix %q on attribute %s", a.Name.Space, qname(a.Name.Space, a.Name.Local))
			}
		}
		if at.ns == xmlNS {
			switch at.local {
			case "base":
				f.base = ResolveIRI(f.base, a.Value)
			case "lang":
				// "" ends the language in scope; anything else must be
				// a tag the other syntaxes can write (LANGTAG of
				// N-Triples and Turtle), or the literals it marks could
				// not be written out again.
				if a.Value != "" && !isLangTag(a.Value) {
					return nil, p.errEl(e, "xml:lang %q is not a language tag: want letters, then groups of letters or digits after '-' (BCP 47, e.g. en or en-GB)", a.Value)
				}
				f.lang = strings.ToLower(a.Value)
			}
		}
		e.attrs = append(e.attrs, at)
	}
	e.base, e.lang = f.base, f.lang
	p.stack = append(p.stack, f)
	return e, nil
}

// normalizeAttrs applies attribute-value normalization (XML 1.0 §3.3.3),
// which encoding/xml leaves out: a tab, line feed or carriage return
// written as such in a value becomes a space, while one written as a
// character reference stays. The values are decoded again from the raw
// bytes of the start tag.
func (p *xmlParser) normalizeAttrs(attrs []xml.Attr) {
	raw := p.pos.tokenBytes()
	for i := range attrs {
		// Each value is the next quoted string after an "=".
		eq := bytes.IndexByte(raw, '=')
		if eq < 0 {
			return
		}
		raw = bytes.TrimLeft(raw[eq+1:], " \t\r\n")
		if len(raw) == 0 || raw[0] != '"' && raw[0] != '\'' {
			return
		}
		end := bytes.IndexByte(raw[1:], raw[0])
		if end < 0 {
			return
		}
		val := raw[1 : 1+end]
		raw = raw[2+end:]
		if strings.ContainsAny(attrs[i].Value, "\t\n\r") {
			if v, ok := p.decodeAttr(val); ok {
				attrs[i].Value = v
			}
		}
	}
}

// decodeAttr normalizes white space in a raw attribute value and expands
// its references; ok is false for a reference it does not know.
func (p *xmlParser) decodeAttr(raw []byte) (string, bool) {
	var b strings.Builder
	for i := 0; i < len(raw); i++ {
		c := raw[i]
		switch c {
		case '\r':
			if i+1 < len(raw) && raw[i+1] == '\n' {
				i++
			}
			b.WriteByte(' ')
		case '\n', '\t':
			b.WriteByte(' ')
		case '&':
			j := bytes.IndexByte(raw[i:], ';')
			if j < 0 {
				return "", false
			}
			name := string(raw[i+1 : i+j])
			i += j
			switch {
			case strings.HasPrefix(name, "#x"):
				n, err := strconv.ParseUint(name[2:], 16, 32)
				if err != nil {
					return "", false
				}
				b.WriteRune(rune(n))
			case strings.HasPrefix(name, "#"):
				n, err := strconv.ParseUint(name[1:], 10, 32)
				if err != nil {
					return "", false
				}
				b.WriteRune(rune(n))
			default:
				v, ok := xmlPredefined[name]
				if !ok {
					v, ok = p.dec.Entity[name]
				}
				if !ok {
					return "", false
				}
				b.WriteString(v)
			}
		default:
			b.WriteByte(c)
		}
	}
	return b.String(), true
}

// xmlPredefined are the five entities every XML document has (XML 1.0 §4.6).
var xmlPredefined = map[string]string{"lt": "<", "gt": ">", "amp": "&", "apos": "'", "quot": `"`}

// lookup finds the namespace IRI bound to prefix; "xml" is always bound.
func (p *xmlParser) lookup(prefix string) (string, bool) {
	for i := len(p.ns) - 1; i >= 0; i-- {
		if p.ns[i].prefix == prefix {
			return p.ns[i].uri, true
		}
	}
	switch prefix {
	case "":
		return "", true
	case "xml":
		return xmlNS, true
	}
	return "", false
}

// doctype records the internal general entities of a DOCTYPE declaration,
// such as <!ENTITY skos "http://www.w3.org/2004/02/skos/core#">, which
// hand-written vocabularies use inside attribute values.
func (p *xmlParser) doctype(d xml.Directive) {
	s := string(d)
	if !strings.HasPrefix(s, "DOCTYPE") {
		return
	}
	for {
		i := strings.Index(s, "<!ENTITY")
		if i < 0 {
			return
		}
		s = strings.TrimLeft(s[i+len("<!ENTITY"):], " \t\r\n")
		if strings.HasPrefix(s, "%") { // parameter entity: not used in content
			continue
		}
		j := strings.IndexAny(s, " \t\r\n")
		if j <= 0 {
			return
		}
		name := s[:j]
		s = strings.TrimLeft(s[j:], " \t\r\n")
		if s == "" || s[0] != '"' && s[0] != '\'' {
			continue // SYSTEM or PUBLIC: external, never fetched
		}
		k := strings.IndexByte(s[1:], s[0])
		if k < 0 {
			return
		}
		if p.dec.Entity == nil {
			p.dec.Entity = map[string]string{}
		}
		p.dec.Entity[name] = s[1 : 1+k]
		s = s[2+k:]
	}
}

// document is the production doc (§7.2.2 and §7.2.3): one root element,
// either rdf:RDF holding node elements or a single node element.
func (p *xmlParser) document() error {
	seenRoot := false
	for {
		kind, e, text, err := p.next()
		if err != nil {
			return err
		}
		switch kind {
		case tokEOF:
			if !seenRoot {
				return p.errAt(p.pos.line, p.pos.col, "no RDF/XML root element found")
			}
			return nil
		case tokText:
			if !isXMLSpace(text) {
				return p.errAt(p.line, p.col, "text outside the root element")
			}
		case tokStart:
			if seenRoot {
				return p.errEl(e, "a second root element <%s>", qname(e.prefix, e.local))
			}
			seenRoot = true
			if e.ns == rdfNS && e.local == "RDF" {
				for i := range e.attrs {
					if a := &e.attrs[i]; a.ns == rdfNS {
						return p.errEl(e, "attribute %s is not allowed on rdf:RDF", qname(a.prefix, a.local))
					}
				}
				if err := p.nodeElementList(); err != nil {
					return err
				}
			} else if _, err := p.nodeElement(e); err != nil {
				return err
			}
		}
	}
}

// nodeElementList reads node elements up to the end of the enclosing element.
func (p *xmlParser) nodeElementList() error {
	for {
		kind, e, text, err := p.next()
		if err != nil {
			return err
		}
		switch kind {
		case tokEnd:
			return nil
		case tokText:
			if !isXMLSpace(text) {
				return p.errAt(p.line, p.col, "text where a node element was expected")
			}
		case tokStart:
			if _, err := p.nodeElement(e); err != nil {
				return err
			}
		}
	}
}

// rdfName classifies an attribute as one of RDF's own names. Unprefixed
// about, ID, resource, parseType and type are read as rdf: names for
// compatibility (RDF 1.1 XML Syntax §6.1.4). ignore is set for attributes
// that produce nothing: the xml: ones and unprefixed names starting "xml".
func rdfName(a *attr) (local string, isRDF, ignore bool) {
	switch {
	case a.ns == rdfNS:
		return a.local, true, false
	case a.ns == xmlNS:
		return "", false, true
	case a.ns == "" && a.prefix == "":
		if len(a.local) >= 3 && strings.EqualFold(a.local[:3], "xml") {
			return "", false, true
		}
		switch a.local {
		case "about", "ID", "resource", "parseType", "type":
			return a.local, true, false
		}
	}
	return "", false, false
}

// isOldTerm reports the names RDF/XML removed (§5.1): rdf:aboutEach,
// rdf:aboutEachPrefix and rdf:bagID.
func isOldTerm(local string) bool {
	return local == "aboutEach" || local == "aboutEachPrefix" || local == "bagID"
}

// isCoreSyntaxTerm: rdf:RDF, ID, about, parseType, resource, nodeID, datatype.
func isCoreSyntaxTerm(local string) bool {
	switch local {
	case "RDF", "ID", "about", "parseType", "resource", "nodeID", "datatype":
		return true
	}
	return false
}

// nodeElement is the production nodeElement (§7.2.11). It returns the
// subject after reading the element through its end tag.
func (p *xmlParser) nodeElement(e *element) (Term, error) {
	if e.ns == "" {
		return Term{}, p.errEl(e, "node element <%s> has no namespace", e.local)
	}
	if e.ns == rdfNS && (isCoreSyntaxTerm(e.local) || e.local == "li" || isOldTerm(e.local)) {
		return Term{}, p.errEl(e, "rdf:%s is not allowed as a node element", e.local)
	}
	var (
		subj     Term
		idSet    int
		props    []propAttr
		typeAttr *attr
	)
	for i := range e.attrs {
		a := &e.attrs[i]
		local, isRDF, ignore := rdfName(a)
		if ignore {
			continue
		}
		if !isRDF {
			if a.ns == "" {
				return Term{}, p.errEl(e, "attribute %q has no namespace", a.local)
			}
			if err := p.absolute(e, a.iri()); err != nil {
				return Term{}, err
			}
			props = append(props, propAttr{a.iri(), a.value})
			continue
		}
		switch local {
		case "ID":
			iri, err := p.idIRI(e, a.value)
			if err != nil {
				return Term{}, err
			}
			subj = Term{Kind: IRI, Value: iri}
			idSet++
		case "nodeID":
			if !isNCName(a.value) {
				return Term{}, p.errEl(e, "rdf:nodeID %q is not an XML NCName", a.value)
			}
			subj = Term{Kind: Blank, Value: nodeIDLabel(a.value)}
			idSet++
		case "about":
			iri := ResolveIRI(e.base, a.value)
			if err := p.absolute(e, iri); err != nil {
				return Term{}, err
			}
			subj = Term{Kind: IRI, Value: iri}
			idSet++
		case "type":
			typeAttr = a
		case "aboutEach", "aboutEachPrefix", "bagID":
			return Term{}, p.errEl(e, "rdf:%s was removed from RDF (RDF 1.1 XML Syntax §5.1)", local)
		case "li", "Description", "RDF", "parseType", "resource", "datatype":
			return Term{}, p.errEl(e, "rdf:%s is not allowed as an attribute of a node element", local)
		default:
			props = append(props, propAttr{rdfNS + local, a.value})
		}
	}
	if idSet > 1 {
		return Term{}, p.errEl(e, "a node element takes only one of rdf:ID, rdf:about and rdf:nodeID")
	}
	if idSet == 0 {
		subj = p.newBlank()
	}
	if !(e.ns == rdfNS && e.local == "Description") {
		if err := p.absolute(e, e.iri()); err != nil {
			return Term{}, err
		}
		if err := p.triple(subj, rdfType, Term{Kind: IRI, Value: e.iri()}); err != nil {
			return Term{}, err
		}
	}
	if typeAttr != nil {
		iri := ResolveIRI(e.base, typeAttr.value)
		if err := p.absolute(e, iri); err != nil {
			return Term{}, err
		}
		if err := p.triple(subj, rdfType, Term{Kind: IRI, Value: iri}); err != nil {
			return Term{}, err
		}
	}
	for _, a := range props {
		if err := p.triple(subj, a.pred, p.plain(a.value, e.lang)); err != nil {
			return Term{}, err
		}
	}
	return subj, p.propertyEltList(subj)
}

// propertyEltList reads property elements up to the end of the node element.
func (p *xmlParser) propertyEltList(subj Term) error {
	li := 1
	for {
		kind, e, text, err := p.next()
		if err != nil {
			return err
		}
		switch kind {
		case tokEnd:
			return nil
		case tokText:
			if !isXMLSpace(text) {
				return p.errAt(p.line, p.col, "text where a property element was expected")
			}
		case tokStart:
			if err := p.propertyElt(subj, e, &li); err != nil {
				return err
			}
		}
	}
}

// propertyElt is the production propertyElt (§7.2.14) with all its forms.
func (p *xmlParser) propertyElt(subj Term, e *element, li *int) error {
	if e.ns == "" {
		return p.errEl(e, "property element <%s> has no namespace", e.local)
	}
	pred := e.iri()
	if e.ns == rdfNS {
		switch {
		case e.local == "li":
			pred = rdfNS + "_" + strconv.Itoa(*li)
			*li++
		case isCoreSyntaxTerm(e.local) || e.local == "Description" || isOldTerm(e.local):
			return p.errEl(e, "rdf:%s is not allowed as a property element", e.local)
		}
	} else if err := p.absolute(e, pred); err != nil {
		return err
	}
	var (
		id, parseType, resource, nodeID, datatype *attr
		props                                     []propAttr
	)
	for i := range e.attrs {
		a := &e.attrs[i]
		local, isRDF, ignore := rdfName(a)
		if ignore {
			continue
		}
		if !isRDF {
			if a.ns == "" {
				return p.errEl(e, "attribute %q has no namespace", a.local)
			}
			if err := p.absolute(e, a.iri()); err != nil {
				return err
			}
			props = append(props, propAttr{a.iri(), a.value})
			continue
		}
		switch local {
		case "ID":
			id = a
		case "parseType":
			parseType = a
		case "resource":
			resource = a
		case "nodeID":
			nodeID = a
		case "datatype":
			datatype = a
		case "aboutEach", "aboutEachPrefix", "bagID":
			return p.errEl(e, "rdf:%s was removed from RDF (RDF 1.1 XML Syntax §5.1)", local)
		case "li", "Description", "RDF", "about":
			return p.errEl(e, "rdf:%s is not allowed as an attribute of a property element", local)
		default: // rdf:type and the other rdf: names
			props = append(props, propAttr{rdfNS + local, a.value})
		}
	}
	var reif string // the IRI an rdf:ID names, for reification
	if id != nil {
		iri, err := p.idIRI(e, id.value)
		if err != nil {
			return err
		}
		reif = iri
	}
	if nodeID != nil && !isNCName(nodeID.value) {
		return p.errEl(e, "rdf:nodeID %q is not an XML NCName", nodeID.value)
	}
	if parseType != nil {
		if resource != nil || nodeID != nil || datatype != nil || len(props) > 0 {
			return p.errEl(e, "rdf:parseType allows no attribute but rdf:ID on a property element")
		}
		switch parseType.value {
		case "Resource":
			obj := p.newBlank()
			if err := p.stated(subj, pred, obj, reif); err != nil {
				return err
			}
			return p.propertyEltList(obj)
		case "Collection":
			return p.collection(subj, pred, reif)
		default: // "Literal" and any other value (§7.2.20)
			lex, err := p.xmlLiteral()
			if err != nil {
				return err
			}
			return p.stated(subj, pred, Term{Kind: Literal, Value: lex, Datatype: RDFXMLLiteral}, reif)
		}
	}

	// The content decides the form: an element makes it a resource
	// property element, text a literal one, nothing an empty one.
	p.text.Reset()
	sawText := false
	for {
		kind, child, text, err := p.next()
		if err != nil {
			return err
		}
		switch kind {
		case tokText:
			sawText = true
			p.text.WriteString(text)
		case tokStart:
			if !isXMLSpace(p.text.String()) {
				return p.errEl(child, "element <%s> after text inside property element <%s>", qname(child.prefix, child.local), qname(e.prefix, e.local))
			}
			if resource != nil || nodeID != nil || datatype != nil || len(props) > 0 {
				return p.errEl(e, "property element <%s> with a node element inside takes no attribute but rdf:ID", qname(e.prefix, e.local))
			}
			obj, err := p.nodeElement(child)
			if err != nil {
				return err
			}
			if err := p.stated(subj, pred, obj, reif); err != nil {
				return err
			}
			return p.endOnly(e)
		case tokEnd:
			if sawText || datatype != nil {
				if resource != nil || nodeID != nil || len(props) > 0 {
					return p.errEl(e, "property element <%s> with text takes no rdf:resource, rdf:nodeID or property attribute", qname(e.prefix, e.local))
				}
				obj := p.plain(p.text.String(), e.lang)
				if datatype != nil {
					dt := ResolveIRI(e.base, datatype.value)
					if err := p.absolute(e, dt); err != nil {
						return err
					}
					obj = Term{Kind: Literal, Value: p.text.String(), Datatype: dt}
				}
				return p.stated(subj, pred, obj, reif)
			}
			return p.emptyPropertyElt(subj, pred, e, reif, resource, nodeID, props)
		}
	}
}

// emptyPropertyElt is §7.2.21: no content, the object named by rdf:resource
// or rdf:nodeID, or a fresh blank node described by property attributes, or
// the empty literal when there is none of these.
func (p *xmlParser) emptyPropertyElt(subj Term, pred string, e *element, reif string, resource, nodeID *attr, props []propAttr) error {
	if resource == nil && nodeID == nil && len(props) == 0 {
		return p.stated(subj, pred, p.plain("", e.lang), reif)
	}
	var obj Term
	switch {
	case resource != nil && nodeID != nil:
		return p.errEl(e, "rdf:resource and rdf:nodeID on one property element")
	case resource != nil:
		obj = Term{Kind: IRI, Value: ResolveIRI(e.base, resource.value)}
		if err := p.absolute(e, obj.Value); err != nil {
			return err
		}
	case nodeID != nil:
		obj = Term{Kind: Blank, Value: nodeIDLabel(nodeID.value)}
	default:
		obj = p.newBlank()
	}
	if err := p.stated(subj, pred, obj, reif); err != nil {
		return err
	}
	for _, a := range props {
		o := p.plain(a.value, e.lang)
		if a.pred == rdfType {
			o = Term{Kind: IRI, Value: ResolveIRI(e.base, a.value)}
			if err := p.absolute(e, o.Value); err != nil {
				return err
			}
		}
		if err := p.triple(obj, a.pred, o); err != nil {
			return err
		}
	}
	return nil
}

// endOnly reads up to the end tag of a resource property element, allowing
// only white space, comments and processing instructions.
func (p *xmlParser) endOnly(e *element) error {
	for {
		kind, child, text, err := p.next()
		if err != nil {
			return err
		}
		switch kind {
		case tokEnd:
			return nil
		case tokText:
			if !isXMLSpace(text) {
				return p.errAt(p.line, p.col, "text after the node element inside property element <%s>", qname(e.prefix, e.local))
			}
		case tokStart:
			return p.errEl(child, "a second node element inside property element <%s>", qname(e.prefix, e.local))
		}
	}
}

// collection is parseType="Collection" (§7.2.19): the node elements become
// an rdf:first/rdf:rest list ending in rdf:nil.
func (p *xmlParser) collection(subj Term, pred, reif string) error {
	var prev Term
	for {
		kind, e, text, err := p.next()
		if err != nil {
			return err
		}
		switch kind {
		case tokText:
			if !isXMLSpace(text) {
				return p.errAt(p.line, p.col, "text inside a parseType=\"Collection\" property element")
			}
		case tokStart:
			cell := p.newBlank()
			if prev.Kind == None {
				err = p.stated(subj, pred, cell, reif)
			} else {
				err = p.triple(prev, rdfRest, cell)
			}
			if err != nil {
				return err
			}
			item, err := p.nodeElement(e)
			if err != nil {
				return err
			}
			if err := p.triple(cell, rdfFirst, item); err != nil {
				return err
			}
			prev = cell
		case tokEnd:
			nilTerm := Term{Kind: IRI, Value: rdfNil}
			if prev.Kind == None {
				return p.stated(subj, pred, nilTerm, reif)
			}
			return p.triple(prev, rdfRest, nilTerm)
		}
	}
}

// xmlLiteral reads the content of a parseType="Literal" element up to its
// end tag and returns it in exclusive canonical form with comments
// (Exclusive XML Canonicalization 1.0, W3C Recommendation 2002), as the
// lexical form of an rdf:XMLLiteral (RDF 1.1 XML Syntax §7.2.17).
func (p *xmlParser) xmlLiteral() (string, error) {
	var b strings.Builder
	// rendered[i] holds the namespace declarations written on the i-th open
	// element of the literal, e.g. {"html", "http://www.w3.org/1999/xhtml"}.
	var rendered [][]nsBinding
	depth := 0
	for {
		p.line, p.col = p.pos.at(p.dec.InputOffset())
		t, err := p.rawToken()
		if err != nil {
			if err == io.EOF && !p.pos.bad {
				n := len(p.stack)
				return "", p.errAt(p.pos.line, p.pos.col, "unexpected end of input: element <%s> is not closed", qname(p.stack[n-1].name.Space, p.stack[n-1].name.Local))
			}
			return "", p.decodeErr(err)
		}
		switch t := t.(type) {
		case xml.StartElement:
			e, err := p.open(t)
			if err != nil {
				return "", err
			}
			decls := p.visibleNamespaces(e, rendered)
			rendered = append(rendered, decls)
			depth++
			writeCanonicalStart(&b, e, decls)
		case xml.EndElement:
			n := len(p.stack)
			f := p.stack[n-1]
			if f.name != t.Name {
				return "", p.errAt(p.line, p.col, "end tag </%s> does not match <%s>", qname(t.Name.Space, t.Name.Local), qname(f.name.Space, f.name.Local))
			}
			p.ns = p.ns[:f.nsMark]
			p.stack = p.stack[:n-1]
			if depth == 0 {
				return b.String(), nil
			}
			depth--
			rendered = rendered[:depth]
			b.WriteString("</")
			b.WriteString(qname(t.Name.Space, t.Name.Local))
			b.WriteByte('>')
		case xml.CharData:
			escapeC14NText(&b, string(t))
		case xml.Comment:
			b.WriteString("<!--")
			b.Write(t)
			b.WriteString("-->")
		case xml.ProcInst:
			b.WriteString("<?")
			b.WriteString(t.Target)
			if len(t.Inst) > 0 {
				b.WriteByte(' ')
				b.Write(t.Inst)
			}
			b.WriteString("?>")
		case xml.Directive:
			return "", p.errAt(p.line, p.col, "<!%s> inside an XML literal", firstWord(string(t)))
		}
	}
}

func firstWord(s string) string {
	if i := strings.IndexAny(s, " \t\r\n"); i >= 0 {
		return s[:i]
	}
	return s
}

// visibleNamespaces lists the declarations exclusive canonicalization writes
// on e: those of the prefixes e and its attributes use (the default
// namespace for an unprefixed element name) whose binding differs from the
// one nearest output ancestor wrote. Sorted by prefix, default first.
func (p *xmlParser) visibleNamespaces(e *element, rendered [][]nsBinding) []nsBinding {
	var out []nsBinding
	need := func(prefix, uri string) {
		if prefix == "xml" {
			return
		}
		for _, d := range out {
			if d.prefix == prefix {
				return
			}
		}
		prev := "" // a prefix no output ancestor declared counts as unbound
		found := false
		for i := len(rendered) - 1; i >= 0 && !found; i-- {
			for _, d := range rendered[i] {
				if d.prefix == prefix {
					prev, found = d.uri, true
					break
				}
			}
		}
		if prev != uri {
			out = append(out, nsBinding{prefix, uri})
		}
	}
	need(e.prefix, e.ns)
	for i := range e.attrs {
		if a := &e.attrs[i]; a.prefix != "" {
			need(a.prefix, a.ns)
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].prefix < out[j].prefix })
	return out
}

// writeCanonicalStart writes a start tag in canonical form: declarations
// first, then attributes ordered by namespace IRI and local name.
func writeCanonicalStart(b *strings.Builder, e *element, decls []nsBinding) {
	b.WriteByte('<')
	b.WriteString(qname(e.prefix, e.local))
	for _, d := range decls {
		if d.prefix == "" {
			b.WriteString(` xmlns="`)
		} else {
			b.WriteString(" xmlns:")
			b.WriteString(d.prefix)
			b.WriteString(`="`)
		}
		escapeC14NAttr(b, d.uri)
		b.WriteByte('"')
	}
	attrs := make([]*attr, len(e.attrs))
	for i := range e.attrs {
		attrs[i] = &e.attrs[i]
	}
	sort.Slice(attrs, func(i, j int) bool {
		if attrs[i].ns != attrs[j].ns {
			return attrs[i].ns < attrs[j].ns
		}
		return attrs[i].local < attrs[j].local
	})
	for _, a := range attrs {
		b.WriteByte(' ')
		b.WriteString(qname(a.prefix, a.local))
		b.WriteString(`="`)
		escapeC14NAttr(b, a.value)
		b.WriteByte('"')
	}
	b.WriteByte('>')
}

// escapeC14NText escapes character data as Canonical XML 1.0 §2.3 says.
func escapeC14NText(b *strings.Builder, s string) {
	for _, r := range s {
		switch r {
		case '&':
			b.WriteString("&amp;")
		case '<':
			b.WriteString("&lt;")
		case '>':
			b.WriteString("&gt;")
		case '\r':
			b.WriteString("&#xD;")
		default:
			b.WriteRune(r)
		}
	}
}

// escapeC14NAttr escapes an attribute value as Canonical XML 1.0 §2.3 says.
func escapeC14NAttr(b *strings.Builder, s string) {
	for _, r := range s {
		switch r {
		case '&':
			b.WriteString("&amp;")
		case '<':
			b.WriteString("&lt;")
		case '"':
			b.WriteString("&quot;")
		case '\t':
			b.WriteString("&#x9;")
		case '\n':
			b.WriteString("&#xA;")
		case '\r':
			b.WriteString("&#xD;")
		default:
			b.WriteRune(r)
		}
	}
}

// idIRI checks an rdf:ID value and makes its IRI, rejecting a second use of
// the same IRI in the document (§5.3).
func (p *xmlParser) idIRI(e *element, id string) (string, error) {
	if !isNCName(id) {
		return "", p.errEl(e, "rdf:ID %q is not an XML NCName", id)
	}
	iri := ResolveIRI(e.base, "#"+id)
	if err := p.absolute(e, iri); err != nil {
		return "", err
	}
	if _, dup := p.ids[iri]; dup {
		return "", p.errEl(e, "rdf:ID %q used twice (IRI <%s>)", id, iri)
	}
	p.ids[iri] = struct{}{}
	return iri, nil
}

// absolute checks an IRI made from the document: RDF graphs hold only
// absolute IRIs (RDF 1.1 Concepts §3.2), and the characters N-Triples cannot
// write in an IRI are refused as the Turtle reader refuses them.
func (p *xmlParser) absolute(e *element, iri string) error {
	if IsAbsoluteIRI(iri) {
		return nil
	}
	if !hasScheme(iri) {
		return p.errEl(e, "relative IRI <%s> and no base IRI to resolve it against", iri)
	}
	return p.errEl(e, "IRI <%s> holds a character an IRI may not contain", iri)
}

// stated emits s p o and, when reif names an rdf:ID, its reification
// (§7.3, reification rules).
func (p *xmlParser) stated(s Term, pred string, o Term, reif string) error {
	if err := p.triple(s, pred, o); err != nil {
		return err
	}
	if reif == "" {
		return nil
	}
	r := Term{Kind: IRI, Value: reif}
	if err := p.triple(r, rdfType, Term{Kind: IRI, Value: rdfStatement}); err != nil {
		return err
	}
	if err := p.triple(r, rdfSubject, s); err != nil {
		return err
	}
	if err := p.triple(r, rdfPredicate, Term{Kind: IRI, Value: pred}); err != nil {
		return err
	}
	return p.triple(r, rdfObject, o)
}

func (p *xmlParser) triple(s Term, pred string, o Term) error {
	return p.emit(Triple{S: s, P: Term{Kind: IRI, Value: pred}, O: o})
}

// plain makes a literal with the in-scope language, if any.
func (p *xmlParser) plain(v, lang string) Term {
	if lang != "" {
		return Term{Kind: Literal, Value: v, Datatype: RDFLangString, Lang: lang}
	}
	return Term{Kind: Literal, Value: v, Datatype: XSDString}
}

// newBlank makes a blank node labelled b0, b1, ... Labels from rdf:nodeID
// never take that form (see nodeIDLabel).
func (p *xmlParser) newBlank() Term {
	t := Term{Kind: Blank, Value: "b" + strconv.Itoa(p.bnodes)}
	p.bnodes++
	return t
}

// nodeIDLabel keeps an rdf:nodeID as the blank node label unless it looks
// like a generated one ("b12", "b12_", ...): those get one more "_", which
// keeps distinct nodeIDs distinct and apart from generated labels.
func nodeIDLabel(id string) string {
	if len(id) < 2 || id[0] != 'b' {
		return id
	}
	i := 1
	for i < len(id) && id[i] >= '0' && id[i] <= '9' {
		i++
	}
	if i == 1 {
		return id
	}
	for i < len(id) && id[i] == '_' {
		i++
	}
	if i == len(id) {
		return id + "_"
	}
	return id
}

func isXMLSpace(s string) bool {
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case ' ', '\t', '\n', '\r':
		default:
			return false
		}
	}
	return true
}

// isNCName reports whether s is an XML NCName: a Name (XML 1.0 fifth
// edition §2.3, productions [4] and [4a]) without ':'.
func isNCName(s string) bool {
	if s == "" {
		return false
	}
	for i, r := range s {
		if r == utf8.RuneError {
			return false
		}
		if i == 0 {
			if !isNameStart(r) {
				return false
			}
		} else if !isNameStart(r) && !isNameRest(r) {
			return false
		}
	}
	return true
}

func isNameStart(r rune) bool {
	switch {
	case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r == '_':
		return true
	case r < 0xC0:
		return false
	}
	return r <= 0xD6 || r >= 0xD8 && r <= 0xF6 || r >= 0xF8 && r <= 0x2FF ||
		r >= 0x370 && r <= 0x37D || r >= 0x37F && r <= 0x1FFF ||
		r >= 0x200C && r <= 0x200D || r >= 0x2070 && r <= 0x218F ||
		r >= 0x2C00 && r <= 0x2FEF || r >= 0x3001 && r <= 0xD7FF ||
		r >= 0xF900 && r <= 0xFDCF || r >= 0xFDF0 && r <= 0xFFFD ||
		r >= 0x10000 && r <= 0xEFFFF
}

func isNameRest(r rune) bool {
	return r == '-' || r == '.' || r >= '0' && r <= '9' || r == 0xB7 ||
		r >= 0x300 && r <= 0x36F || r >= 0x203F && r <= 0x2040
}
