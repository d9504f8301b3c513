package concepts

import (
	"bytes"
	"path/filepath"
	"strings"
	"unicode/utf8"
)

// Format names accepted in LoadOptions.Format and returned by DetectFormat.
const (
	FormatTurtle   = "turtle"
	FormatNTriples = "ntriples"
	FormatNQuads   = "nquads"
	FormatRDFXML   = "rdfxml"
	FormatJSONLD   = "jsonld"
)

// formatAliases maps what users type (--format, file extensions) to a format.
var formatAliases = map[string]string{
	"turtle": FormatTurtle, "ttl": FormatTurtle, "n3": FormatTurtle,
	"ntriples": FormatNTriples, "nt": FormatNTriples, "n-triples": FormatNTriples,
	"nquads": FormatNQuads, "nq": FormatNQuads, "n-quads": FormatNQuads,
	"rdfxml": FormatRDFXML, "rdf": FormatRDFXML, "xml": FormatRDFXML, "owl": FormatRDFXML, "rdf/xml": FormatRDFXML,
	"jsonld": FormatJSONLD, "json-ld": FormatJSONLD, "json": FormatJSONLD,
}

// NormalizeFormat returns the canonical name of a format or extension
// ("ttl" → "turtle"), or "" when it names none.
func NormalizeFormat(s string) string {
	return formatAliases[strings.ToLower(strings.TrimPrefix(s, "."))]
}

// sniffResult is what DetectFormat learned from the first bytes.
type sniffResult struct {
	format    string
	empty     bool   // only white space and comments were seen
	line, col int    // position of the first significant byte (1-based)
	why       string // when format is "": what made the content unrecognisable
}

// DetectFormat guesses the RDF serialisation of a document from its first
// bytes (head) and, only when the content says nothing (empty or comments
// only), from the extension of name. It returns "" when head is not RDF.
func DetectFormat(head []byte, name string) string {
	r := sniff(head, name, false)
	return r.format
}

// sniff looks at the content first; the extension is only a tie-breaker.
// Examples of what decides:
//
//	<?xml ...  | <rdf:RDF ...   → rdfxml
//	{ "@context" ...  | [ {      → jsonld
//	@prefix | PREFIX | @base | ex:a ... → turtle
//	<http://a> <http://b> "c" .  → ntriples (4 terms → nquads)
func sniff(head []byte, name string, eof bool) sniffResult {
	hint := NormalizeFormat(filepath.Ext(name))
	b := bytes.TrimPrefix(head, []byte("\xef\xbb\xbf"))
	if len(b) >= 2 && b[0] == 0x1f && b[1] == 0x8b {
		return sniffResult{line: 1, col: 1, why: "gzip-compressed data; decompress it first"}
	}
	if len(b) >= 2 && (b[0] == 0xff && b[1] == 0xfe || b[0] == 0xfe && b[1] == 0xff) {
		return sniffResult{line: 1, col: 1, why: "UTF-16 text; save or convert it as UTF-8 first (e.g. iconv -f UTF-16 -t UTF-8)"}
	}
	line, col := 1, 1
	i := 0
	// Skip white space and '#' comment lines; remember the position.
	for i < len(b) {
		c := b[i]
		switch {
		case c == '\n':
			line, col = line+1, 1
			i++
		case c == ' ' || c == '\t' || c == '\r':
			col++
			i++
		case c == '#':
			for i < len(b) && b[i] != '\n' {
				i++
			}
		default:
			goto found
		}
	}
	if hint == "" {
		hint = FormatTurtle
	}
	return sniffResult{format: hint, empty: true, line: line, col: col}
found:
	res := sniffResult{line: line, col: col}
	rest := b[i:]
	if bytes.IndexByte(rest[:min(len(rest), 512)], 0) >= 0 {
		res.why = "binary data"
		return res
	}
	if k := invalidUTF8(trimPartialRune(rest[:min(len(rest), 4096)])); k >= 0 {
		for _, c := range rest[:k] {
			if c == '\n' {
				res.line, res.col = res.line+1, 1
			} else if utf8.RuneStart(c) {
				res.col++
			}
		}
		res.why = "invalid UTF-8"
		return res
	}
	switch rest[0] {
	case '{':
		res.format = FormatJSONLD
		return res
	case '[':
		// JSON array of objects, or a Turtle blank node "[ a skos:Concept ] ."
		j := skipSpace(rest, 1)
		if j == len(rest) || rest[j] == '{' || (rest[j] == ']' && skipSpace(rest, j+1) == len(rest)) {
			res.format = FormatJSONLD
		} else {
			res.format = FormatTurtle
		}
		return res
	case '<':
		if len(rest) > 1 && (rest[1] == '?' || rest[1] == '!') {
			res.format = FormatRDFXML
			return res
		}
		// An IRI "<http://x>" closes before any white space; an XML tag
		// "<rdf:RDF xmlns:...>" does not.
		for j := 1; j < len(rest); j++ {
			if rest[j] == '>' {
				res.format = lineFormat(rest, eof)
				return res
			}
			if rest[j] == ' ' || rest[j] == '\t' || rest[j] == '\n' || rest[j] == '\r' {
				res.format = FormatRDFXML
				return res
			}
		}
		res.format = FormatRDFXML
		return res
	case '@':
		if hasWordPrefix(rest, "@prefix") || hasWordPrefix(rest, "@base") {
			res.format = FormatTurtle
			return res
		}
	case '_':
		if len(rest) > 1 && rest[1] == ':' {
			res.format = lineFormat(rest, eof)
			return res
		}
	}
	if hasWordPrefixFold(rest, "prefix") || hasWordPrefixFold(rest, "base") {
		res.format = FormatTurtle
		return res
	}
	// A prefixed name ("ex:a", ":a") starts a Turtle statement.
	j := 0
	for j < len(rest) && j < 200 && isPNChar(rest[j]) {
		j++
	}
	if j < len(rest) && rest[j] == ':' && (j == 0 || isPNStart(rest[0])) {
		res.format = FormatTurtle
		return res
	}
	res.why = "expected Turtle, N-Triples, N-Quads, RDF/XML or JSON-LD, found " + quoteStart(rest)
	return res
}

// lineFormat tells N-Triples/N-Quads from Turtle by lexing whole lines in
// the N-Triples grammar: if every complete line has 3 terms and " .", it is
// N-Triples; 4 terms, N-Quads; anything else (";", ",", prefixed names,
// multi-line statements) is Turtle, whose grammar includes N-Triples.
func lineFormat(b []byte, eof bool) string {
	if k := bytes.LastIndexByte(b, '\n'); k >= 0 && !eof {
		b = b[:k]
	}
	terms := -1
	for len(b) > 0 {
		var ln []byte
		if k := bytes.IndexByte(b, '\n'); k >= 0 {
			ln, b = b[:k], b[k+1:]
		} else {
			ln, b = b, nil
		}
		n, ok := ntLine(ln)
		if !ok {
			return FormatTurtle
		}
		if n == 0 {
			continue
		}
		if terms == -1 {
			terms = n
		} else if n != terms && !(terms == 4 && n == 3) && !(terms == 3 && n == 4) {
			return FormatTurtle
		}
		if n == 4 {
			terms = 4
		}
	}
	if terms == 4 {
		return FormatNQuads
	}
	return FormatNTriples
}

// ntLine lexes one line as N-Triples/N-Quads and returns its number of terms
// (0 for blank or comment lines).
func ntLine(ln []byte) (int, bool) {
	i, n := skipSpace(ln, 0), 0
	for i < len(ln) {
		switch c := ln[i]; {
		case c == '#' && n == 0:
			return 0, true
		case c == '.':
			j := skipSpace(ln, i+1)
			if j < len(ln) && ln[j] != '#' {
				return 0, false
			}
			return n, n == 3 || n == 4
		case c == '<':
			k := bytes.IndexByte(ln[i:], '>')
			if k < 0 || bytes.ContainsAny(ln[i:i+k], " \t") {
				return 0, false
			}
			i += k + 1
		case c == '_' && i+1 < len(ln) && ln[i+1] == ':':
			i += 2
			for i < len(ln) && ln[i] != ' ' && ln[i] != '\t' && !(ln[i] == '.' && (i+1 == len(ln) || ln[i+1] == ' ' || ln[i+1] == '\t')) {
				i++
			}
		case c == '"':
			i++
			for i < len(ln) && ln[i] != '"' {
				if ln[i] == '\\' {
					i++
				}
				i++
			}
			if i >= len(ln) {
				return 0, false
			}
			i++
			if i < len(ln) && ln[i] == '@' {
				for i < len(ln) && ln[i] != ' ' && ln[i] != '\t' && ln[i] != '.' {
					i++
				}
			} else if i+2 < len(ln) && ln[i] == '^' && ln[i+1] == '^' && ln[i+2] == '<' {
				k := bytes.IndexByte(ln[i:], '>')
				if k < 0 {
					return 0, false
				}
				i += k + 1
			}
		default:
			return 0, false
		}
		n++
		if n > 4 {
			return 0, false
		}
		i = skipSpace(ln, i)
	}
	return 0, n == 0
}

func skipSpace(b []byte, i int) int {
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\r' || b[i] == '\n') {
		i++
	}
	return i
}

func hasWordPrefix(b []byte, w string) bool {
	return bytes.HasPrefix(b, []byte(w)) && (len(b) == len(w) || b[len(w)] == ' ' || b[len(w)] == '\t' || b[len(w)] == '<' || b[len(w)] == ':' || b[len(w)] == '\n' || b[len(w)] == '\r')
}

func hasWordPrefixFold(b []byte, w string) bool {
	if len(b) < len(w) || !strings.EqualFold(string(b[:len(w)]), w) {
		return false
	}
	return len(b) == len(w) || b[len(w)] == ' ' || b[len(w)] == '\t'
}

func isPNStart(c byte) bool {
	return c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= 0x80
}

func isPNChar(c byte) bool {
	return isPNStart(c) || c >= '0' && c <= '9' || c == '_' || c == '-' || c == '.'
}

// trimPartialRune drops an incomplete UTF-8 sequence cut by the peek window.
func trimPartialRune(b []byte) []byte {
	for k := 1; k <= 3 && k <= len(b); k++ {
		if utf8.RuneStart(b[len(b)-k]) {
			if !utf8.FullRune(b[len(b)-k:]) {
				return b[:len(b)-k]
			}
			break
		}
	}
	return b
}

func quoteStart(b []byte) string {
	s := b[:min(len(b), 24)]
	if k := bytes.IndexAny(s, "\r\n"); k >= 0 {
		s = s[:k]
	}
	return strings.TrimSpace(`"`+string(s)) + `"`
}

// invalidUTF8 returns the offset of the first byte that is not UTF-8, or -1.
func invalidUTF8(b []byte) int {
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n <= 1 {
			return i
		}
		i += n
	}
	return -1
}
