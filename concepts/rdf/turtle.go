package rdf

import (
	"bytes"
	"io"
	"strconv"
)

// IRIs the Turtle reader writes for its abbreviations (RDF 1.1 Turtle §7.2).
const (
	ttlRDF      = "http://www.w3.org/1999/02/22-rdf-syntax-ns#"
	ttlXSD      = "http://www.w3.org/2001/XMLSchema#"
	ttlType     = ttlRDF + "type"
	ttlFirst    = ttlRDF + "first"
	ttlRest     = ttlRDF + "rest"
	ttlNil      = ttlRDF + "nil"
	ttlInteger  = ttlXSD + "integer"
	ttlDecimal  = ttlXSD + "decimal"
	ttlDouble   = ttlXSD + "double"
	ttlBoolean  = ttlXSD + "boolean"
	ttlMaxDepth = 10000 // nesting of [ ] and ( ); bounds recursion on hostile input
)

// ReadTurtle reads Turtle (RDF 1.1 Turtle, W3C Recommendation, 25 February
// 2014), calling fn per triple as soon as it is parsed:
//
//	@prefix skos: <http://www.w3.org/2004/02/skos/core#> .
//	<c/1> a skos:Concept ; skos:prefLabel "chat"@fr, "cat"@en ;
//	    skos:broader [ skos:prefLabel "animal"@en ] .
//
// Relative IRIs resolve against @base / BASE, else opt.Base (RFC 3986 §5.2);
// with neither they stay relative. Blank node labels are kept as written,
// except that labels starting with "_g" become "_gu" + label, because the
// reader names the blank nodes of [ ] and ( ) "_g1", "_g2", ...
//
// The first error stops reading. Errors in the document are *ParseError
// values (errors.Is ErrSyntax, or ErrIO for a failed read) whose message
// reads "file:line:col: expected ..."; fn's own error is returned unchanged.
func ReadTurtle(r io.Reader, opt Options, fn func(Triple) error) error {
	p := &turtleParser{
		lexer:    newLexer(r, opt.File),
		fn:       fn,
		base:     opt.Base,
		prefixes: make(map[string]string),
		names:    newInterner(),
	}
	return p.document()
}

// turtleParser is a recursive-descent parser over the Turtle grammar
// (Turtle §6.5), one method per production, reading from the shared lexer.
type turtleParser struct {
	*lexer
	fn       func(Triple) error
	base     string            // current base IRI, "" for none
	prefixes map[string]string // e.g. "skos" -> "http://www.w3.org/2004/02/skos/core#"
	names    interner
	iriBuf   []byte // prefix IRI + local name, reused
	blanks   int    // blank nodes generated so far
	depth    int
}

func (p *turtleParser) document() error {
	p.skipBOM()
	for {
		if err := p.skipWS(); err != nil {
			return err
		}
		c := p.peek()
		if c < 0 {
			if p.err != nil {
				return p.ioError()
			}
			return nil
		}
		if err := p.statement(c); err != nil {
			return err
		}
	}
}

func (p *turtleParser) statement(c int) error {
	switch c {
	case '@':
		return p.atDirective()
	case 'P', 'p', 'B', 'b':
		if kw := p.sparqlKeyword(); kw != "" {
			return p.sparqlDirective(kw)
		}
	}
	if err := p.triples(); err != nil {
		return err
	}
	if err := p.skipWS(); err != nil {
		return err
	}
	if p.peek() != '.' {
		return p.errorf(`expected "." to end the statement, found %s`, p.describeNext())
	}
	p.r++
	return nil
}

// atDirective reads "@prefix" PNAME_NS IRIREF "." or "@base" IRIREF ".".
func (p *turtleParser) atDirective() error {
	p.startTok()
	p.r++
	word := string(p.peekWord())
	switch word {
	case "prefix":
		p.r += len(word)
		if err := p.prefixDecl(); err != nil {
			return err
		}
	case "base":
		p.r += len(word)
		if err := p.baseDecl(); err != nil {
			return err
		}
	default:
		return p.tokErrorf(`expected "@prefix" or "@base", found "@%s"`, word)
	}
	if err := p.skipWS(); err != nil {
		return err
	}
	if p.peek() != '.' {
		return p.errorf(`expected "." after directive, found %s`, p.describeNext())
	}
	p.r++
	return nil
}

// sparqlKeyword returns "PREFIX" or "BASE" if one (in any case) is next and
// is not the start of a prefixed name.
func (p *turtleParser) sparqlKeyword() string {
	word := p.peekWord()
	var kw string
	switch {
	case bytes.EqualFold(word, []byte("PREFIX")):
		kw = "PREFIX"
	case bytes.EqualFold(word, []byte("BASE")):
		kw = "BASE"
	default:
		return ""
	}
	if c := p.peekAt(len(word)); c == ':' || c == '.' || c == '-' || c == '_' || c >= '0' && c <= '9' || c >= 0x80 {
		return ""
	}
	return kw
}

// peekWord returns up to 17 ASCII letters ahead without consuming them; the
// slice is valid until the next read.
func (p *turtleParser) peekWord() []byte {
	n := 0
	for {
		c := p.peekAt(n)
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z') || n > 16 {
			return p.buf[p.r : p.r+n]
		}
		n++
	}
}

func (p *turtleParser) sparqlDirective(kw string) error {
	p.startTok()
	p.r += len(kw)
	if kw == "PREFIX" {
		return p.prefixDecl()
	}
	return p.baseDecl()
}

func (p *turtleParser) prefixDecl() error {
	if err := p.skipWS(); err != nil {
		return err
	}
	prefix, local, ok, err := p.readName()
	if err != nil {
		return err
	}
	if !ok || len(local) > 0 {
		return p.tokErrorf("expected prefix name ending in \":\" after PREFIX")
	}
	name := string(prefix)
	if err := p.skipWS(); err != nil {
		return err
	}
	if p.peek() != '<' {
		return p.errorf("expected IRI for prefix %q, found %s", name+":", p.describeNext())
	}
	iri, err := p.iriRef()
	if err != nil {
		return err
	}
	p.prefixes[name] = iri
	return nil
}

func (p *turtleParser) baseDecl() error {
	if err := p.skipWS(); err != nil {
		return err
	}
	if p.peek() != '<' {
		return p.errorf("expected IRI after BASE, found %s", p.describeNext())
	}
	iri, err := p.iriRef()
	if err != nil {
		return err
	}
	p.base = iri
	return nil
}

// triples reads subject predicateObjectList | blankNodePropertyList predicateObjectList?
func (p *turtleParser) triples() error {
	var s Term
	var err error
	switch c := p.peek(); c {
	case '[':
		var anon bool
		s, anon, err = p.blankNodePropertyList()
		if err != nil {
			return err
		}
		if !anon {
			if err := p.skipWS(); err != nil {
				return err
			}
			if p.peek() == '.' {
				return nil
			}
		}
	case '(':
		s, err = p.collection()
	case '<':
		s, err = p.iri()
	case '_':
		s, err = p.blank()
	case '"', '\'':
		return p.errorf("expected subject, found a literal (a literal cannot be a subject)")
	default:
		s, err = p.prefixedName("subject")
	}
	if err != nil {
		return err
	}
	return p.predicateObjectList(s)
}

// predicateObjectList reads verb objectList (";" (verb objectList)?)*.
func (p *turtleParser) predicateObjectList(s Term) error {
	for {
		if err := p.skipWS(); err != nil {
			return err
		}
		pred, err := p.verb()
		if err != nil {
			return err
		}
		if err := p.objectList(s, pred); err != nil {
			return err
		}
		if err := p.skipWS(); err != nil {
			return err
		}
		if p.peek() != ';' {
			return nil
		}
		for p.peek() == ';' {
			p.r++
			if err := p.skipWS(); err != nil {
				return err
			}
		}
		if c := p.peek(); c == '.' || c == ']' || c < 0 {
			return nil
		}
	}
}

func (p *turtleParser) verb() (Term, error) {
	switch c := p.peek(); {
	case c == '<':
		return p.iri()
	case c < 0:
		return Term{}, p.errorf("expected predicate, found end of input")
	}
	prefix, local, ok, err := p.readName()
	if err != nil {
		return Term{}, err
	}
	if !ok {
		if len(prefix) == 1 && prefix[0] == 'a' {
			return Term{Kind: IRI, Value: ttlType}, nil
		}
		return Term{}, p.notAName("predicate", prefix)
	}
	return p.expand(prefix, local)
}

func (p *turtleParser) objectList(s, pred Term) error {
	for {
		if err := p.skipWS(); err != nil {
			return err
		}
		o, err := p.object()
		if err != nil {
			return err
		}
		if err := p.fn(Triple{S: s, P: pred, O: o}); err != nil {
			return err
		}
		if err := p.skipWS(); err != nil {
			return err
		}
		if p.peek() != ',' {
			return nil
		}
		p.r++
	}
}

// object reads an object; triples inside it ([ ] and ( )) are emitted first.
func (p *turtleParser) object() (Term, error) {
	switch c := p.peek(); {
	case c == '<':
		return p.iri()
	case c == '_':
		return p.blank()
	case c == '[':
		t, _, err := p.blankNodePropertyList()
		return t, err
	case c == '(':
		return p.collection()
	case c == '"' || c == '\'':
		return p.literal(byte(c))
	case c >= '0' && c <= '9' || c == '+' || c == '-':
		return p.number()
	case c == '.':
		if d := p.peekAt(1); d >= '0' && d <= '9' {
			return p.number()
		}
		return Term{}, p.errorf(`expected object, found "."`)
	case c < 0:
		return Term{}, p.errorf("expected object, found end of input")
	}
	prefix, local, ok, err := p.readName()
	if err != nil {
		return Term{}, err
	}
	if !ok {
		switch string(prefix) {
		case "true", "false":
			return Term{Kind: Literal, Value: string(prefix), Datatype: ttlBoolean}, nil
		}
		return Term{}, p.notAName("object", prefix)
	}
	return p.expand(prefix, local)
}

// blankNodePropertyList reads "[" predicateObjectList? "]" at buf[r];
// anon reports the empty form "[]".
func (p *turtleParser) blankNodePropertyList() (t Term, anon bool, err error) {
	if p.depth++; p.depth > ttlMaxDepth {
		return Term{}, false, p.errorf("expected at most %d nested [ ] and ( ), found more", ttlMaxDepth)
	}
	defer func() { p.depth-- }()
	p.r++ // '['
	t = p.newBlank()
	if err := p.skipWS(); err != nil {
		return Term{}, false, err
	}
	if p.peek() == ']' {
		p.r++
		return t, true, nil
	}
	if err := p.predicateObjectList(t); err != nil {
		return Term{}, false, err
	}
	if err := p.skipWS(); err != nil {
		return Term{}, false, err
	}
	if p.peek() != ']' {
		return Term{}, false, p.errorf(`expected "]" to end blank node property list, found %s`, p.describeNext())
	}
	p.r++
	return t, false, nil
}

// collection reads "(" object* ")" at buf[r] into an rdf:first/rdf:rest list.
func (p *turtleParser) collection() (Term, error) {
	if p.depth++; p.depth > ttlMaxDepth {
		return Term{}, p.errorf("expected at most %d nested [ ] and ( ), found more", ttlMaxDepth)
	}
	defer func() { p.depth-- }()
	p.r++ // '('

	head := Term{Kind: IRI, Value: ttlNil}
	var last Term
	for {
		if err := p.skipWS(); err != nil {
			return Term{}, err
		}
		if p.peek() == ')' {
			p.r++
			if last.Kind != None {
				if err := p.fn(Triple{S: last, P: Term{Kind: IRI, Value: ttlRest}, O: Term{Kind: IRI, Value: ttlNil}}); err != nil {
					return Term{}, err
				}
			}
			return head, nil
		}
		node := p.newBlank()
		if last.Kind == None {
			head = node
		} else if err := p.fn(Triple{S: last, P: Term{Kind: IRI, Value: ttlRest}, O: node}); err != nil {
			return Term{}, err
		}
		o, err := p.object()
		if err != nil {
			return Term{}, err
		}
		if err := p.fn(Triple{S: node, P: Term{Kind: IRI, Value: ttlFirst}, O: o}); err != nil {
			return Term{}, err
		}
		last = node
	}
}

func (p *turtleParser) newBlank() Term {
	p.blanks++
	return Term{Kind: Blank, Value: "_g" + strconv.Itoa(p.blanks)}
}

// literal reads a quoted string and its language tag or datatype.
func (p *turtleParser) literal(q byte) (Term, error) {
	long := p.peekAt(1) == int(q) && p.peekAt(2) == int(q)
	b, err := p.readString(q, long)
	if err != nil {
		return Term{}, err
	}
	t := Term{Kind: Literal, Value: string(b), Datatype: XSDString}
	// White space may separate the string from its tag (Turtle §6.5).
	if err := p.skipWS(); err != nil {
		return Term{}, err
	}
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
			return Term{}, p.errorf(`expected "^^" before datatype`)
		}
		p.r += 2
		var dt Term
		if p.peek() == '<' {
			dt, err = p.iri()
		} else {
			dt, err = p.prefixedName("datatype IRI")
		}
		if err != nil {
			return Term{}, err
		}
		t.Datatype = dt.Value
	}
	return t, nil
}

// number reads INTEGER, DECIMAL or DOUBLE (Turtle §6.5); the lexical form is
// kept as written.
func (p *turtleParser) number() (Term, error) {
	p.startTok()
	if c := p.peek(); c == '+' || c == '-' {
		p.r++
	}
	intDigits := p.digits()
	dt := ttlInteger
	if p.peek() == '.' {
		d := p.peekAt(1)
		switch {
		case d >= '0' && d <= '9':
			p.r++
			p.digits()
			dt = ttlDecimal
		case (d == 'e' || d == 'E') && intDigits > 0 && p.exponentAt(2):
			p.r++
		}
	}
	if c := p.peek(); (c == 'e' || c == 'E') && (intDigits > 0 || dt == ttlDecimal) {
		if !p.exponentAt(1) {
			p.r++
			return Term{}, p.errorf("expected digits in exponent, found %s", p.describeNext())
		}
		p.r++
		if c := p.peek(); c == '+' || c == '-' {
			p.r++
		}
		p.digits()
		dt = ttlDouble
	}
	if intDigits == 0 && dt == ttlInteger {
		return Term{}, p.tokErrorf("expected number")
	}
	return Term{Kind: Literal, Value: string(p.buf[p.tok:p.r]), Datatype: dt}, nil
}

// exponentAt reports whether buf[r+k:] starts with [+-]?[0-9].
func (p *turtleParser) exponentAt(k int) bool {
	c := p.peekAt(k)
	if c == '+' || c == '-' {
		c = p.peekAt(k + 1)
	}
	return c >= '0' && c <= '9'
}

func (p *turtleParser) digits() int {
	n := 0
	for c := p.peek(); c >= '0' && c <= '9'; c = p.peek() {
		p.r++
		n++
	}
	return n
}

func (p *turtleParser) iri() (Term, error) {
	s, err := p.iriRef()
	if err != nil {
		return Term{}, err
	}
	return Term{Kind: IRI, Value: s}, nil
}

// iriRef reads an IRIREF and resolves it against the base.
func (p *turtleParser) iriRef() (string, error) {
	b, err := p.readIRIRef()
	if err != nil {
		return "", err
	}
	if p.base == "" || hasScheme(b) && !hasDotSegment(b) {
		return p.names.get(b), nil
	}
	return p.names.get([]byte(ResolveIRI(p.base, string(b)))), nil
}

func (p *turtleParser) blank() (Term, error) {
	b, err := p.readBlankLabel()
	if err != nil {
		return Term{}, err
	}
	if len(b) >= 2 && b[0] == '_' && b[1] == 'g' {
		p.iriBuf = append(append(p.iriBuf[:0], "_gu"...), b...)
		b = p.iriBuf
	}
	return Term{Kind: Blank, Value: p.names.get(b)}, nil
}

// prefixedName reads a PrefixedName in a position that needs an IRI.
func (p *turtleParser) prefixedName(what string) (Term, error) {
	if p.peek() < 0 {
		return Term{}, p.errorf("expected %s, found end of input", what)
	}
	prefix, local, ok, err := p.readName()
	if err != nil {
		return Term{}, err
	}
	if !ok {
		return Term{}, p.notAName(what, prefix)
	}
	return p.expand(prefix, local)
}

func (p *turtleParser) notAName(what string, word []byte) error {
	if len(word) == 0 {
		return p.errorf("expected %s, found %s", what, p.describeNext())
	}
	return p.tokErrorf("expected %s, found %q (not an IRI, prefixed name or literal)", what, word)
}

// expand turns prefix:local into an IRI.
func (p *turtleParser) expand(prefix, local []byte) (Term, error) {
	ns, ok := p.prefixes[string(prefix)]
	if !ok {
		return Term{}, p.tokErrorf("expected a declared prefix, found undefined prefix %q", string(prefix)+":")
	}
	p.iriBuf = append(append(p.iriBuf[:0], ns...), local...)
	return Term{Kind: IRI, Value: p.names.get(p.iriBuf)}, nil
}

// pnLocalEsc holds the characters PN_LOCAL_ESC may escape with "\".
var pnLocalEsc = func() (t [128]bool) {
	for _, c := range "_~.-!$&'()*+,;=/?#@%" {
		t[c] = true
	}
	return t
}()

// readName reads PNAME_NS PN_LOCAL? (ok true, prefix without ":") or, when
// no ":" follows, a bare word such as "true" (ok false, word in prefix).
// A trailing "." is left unread. The slices are valid until the next read.
func (p *turtleParser) readName() (prefix, local []byte, ok bool, err error) {
	p.startTok()
	// PN_PREFIX ::= PN_CHARS_BASE ((PN_CHARS | '.')* PN_CHARS)?
	c, n := p.peekRune()
	if n > 0 && isPNCharsBase(c) {
		p.r += n
		good := p.r - p.tok
		for {
			for p.r < p.w && p.buf[p.r] < 0x80 && pnCharsASCII[p.buf[p.r]] {
				p.r++ // fast path for ASCII PN_CHARS
				good = p.r - p.tok
			}
			c, n = p.peekRune()
			if n == 0 {
				break
			}
			if c == '.' {
				p.r++
				continue
			}
			if !isPNChars(c) {
				break
			}
			p.r += n
			good = p.r - p.tok
		}
		if p.r-p.tok != good && c == ':' {
			return nil, nil, false, p.errorf(`expected prefix name not ending in "." before ":"`)
		}
		p.r = p.tok + good
	}
	if c < 0 && n == 1 {
		return nil, nil, false, p.errorf("expected UTF-8 text, found invalid byte 0x%02X", p.buf[p.r])
	}
	plen := p.r - p.tok
	if p.peek() != ':' {
		return p.buf[p.tok:p.r], nil, false, nil
	}
	p.r++
	// PN_LOCAL ::= (PN_CHARS_U | ':' | [0-9] | PLX) ((PN_CHARS | '.' | ':' | PLX)* (PN_CHARS | ':' | PLX))?
	start := p.r - p.tok
	cs := start   // start of the pending raw chunk, relative to tok
	good := start // end of the name without trailing dots, relative to tok
	escaped := false
	for first := true; ; first = false {
		if !first {
			// Fast path: a run of ASCII PN_CHARS, ':' and '.'.
			for p.r < p.w {
				if c := p.buf[p.r]; c < 0x80 && (pnCharsASCII[c] || c == ':') {
					p.r++
					good = p.r - p.tok
				} else if c == '.' {
					p.r++
				} else {
					break
				}
			}
		}
		c, n := p.peekRune()
		if n == 0 {
			break
		}
		switch {
		case c == '.' && !first:
			p.r++
			continue
		case c == ':' || c >= '0' && c <= '9' || isPNChars(c) && (!first || c == '_' || isPNCharsBase(c)):
			p.r += n
		case c == '%':
			if !isHex(p.peekAt(1)) || !isHex(p.peekAt(2)) {
				p.r++
				return nil, nil, false, p.errorf(`expected two hex digits after "%%" in local name`)
			}
			p.r += 3
		case c == '\\':
			e := p.peekAt(1)
			if e < 0 || e >= 0x80 || !pnLocalEsc[e] {
				p.r++
				return nil, nil, false, p.errorf(`expected one of _~.-!$&'()*+,;=/?#@%% after "\" in local name, found %s`, p.describeNext())
			}
			if !escaped {
				p.sb = p.sb[:0]
				escaped = true
			}
			p.sb = append(p.sb, p.buf[p.tok+cs:p.r]...)
			p.sb = append(p.sb, byte(e))
			p.r += 2
			cs = p.r - p.tok
		default:
			if c < 0 && n == 1 {
				return nil, nil, false, p.errorf("expected UTF-8 text, found invalid byte 0x%02X", p.buf[p.r])
			}
			p.r = p.tok + good
			goto done
		}
		good = p.r - p.tok
	}
	p.r = p.tok + good
done:
	prefix = p.buf[p.tok : p.tok+plen]
	if escaped {
		p.sb = append(p.sb, p.buf[p.tok+cs:p.r]...)
		return prefix, p.sb, true, nil
	}
	return prefix, p.buf[p.tok+start : p.r], true, nil
}

func isHex(c int) bool {
	return c >= '0' && c <= '9' || c >= 'a' && c <= 'f' || c >= 'A' && c <= 'F'
}

// skipWS skips white space and comments.
func (l *lexer) skipWS() error {
	for {
		for l.r < l.w {
			switch l.buf[l.r] {
			case ' ', '\t':
				l.r++
			case '\r':
				if l.peekAt(1) != '\n' { // a lone CR ends a line too
					l.newline(l.r)
				}
				l.r++
			case '\n':
				l.newline(l.r)
				l.r++
			case '#':
				if err := l.skipComment(); err != nil {
					return err
				}
			default:
				return nil
			}
		}
		l.startTok()
		if !l.fill() {
			return nil
		}
	}
}
