// Package rdf reads RDF 1.1 serialisations into a stream of triples.
//
// Readers exist for N-Triples and N-Quads (W3C Recommendations 2014), Turtle
// (W3C Recommendation 2014), RDF/XML (W3C Recommendation 2014) and JSON-LD
// (through github.com/piprate/json-gold). Each reader calls fn once per triple
// as it parses, so a large file is never held whole:
//
//	err := rdf.ReadTurtle(f, rdf.Options{File: "v.ttl", Base: "http://x/"},
//		func(t rdf.Triple) error { fmt.Println(t); return nil })
//
// Errors are *ParseError values carrying file, line and column; match the kind
// with errors.Is(err, rdf.ErrSyntax).
package rdf

import (
	"errors"
	"fmt"
	"strings"
)

// Kind says what a Term is.
type Kind uint8

const (
	// None is the zero Term, used for the default graph of a quad.
	None Kind = iota
	IRI
	Blank
	Literal
)

// XSDString and RDFLangString are the implicit datatypes of plain and
// language-tagged literals (RDF 1.1 Concepts §3.3).
const (
	XSDString     = "http://www.w3.org/2001/XMLSchema#string"
	RDFLangString = "http://www.w3.org/1999/02/22-rdf-syntax-ns#langString"
)

// Term is an IRI, a blank node or a literal.
// Value holds the IRI ("http://ex.org/a"), the blank node label without "_:"
// ("b0") or the literal's lexical form ("chat"). Datatype is set only for
// literals (XSDString when none was written, RDFLangString when Lang is set);
// Lang is lower-cased.
type Term struct {
	Kind     Kind
	Value    string
	Datatype string
	Lang     string
}

// Triple is one RDF statement. G is the graph name of an N-Quads statement
// and the zero Term for the default graph.
type Triple struct {
	S, P, O Term
	G       Term
}

// Options configure a reader. The zero value reads with no base IRI and
// names no file in errors.
type Options struct {
	// Base is the document's base IRI for resolving relative IRIs (RFC 3986 §5.1).
	Base string
	// File is the name used in error messages ("vocab.ttl").
	File string
}

// ErrSyntax is the kind of every parse error; ErrIO wraps read failures.
var (
	ErrSyntax = errors.New("syntax error")
	ErrIO     = errors.New("read error")
)

// ParseError reports where a document stopped being valid.
// Line and Col are 1-based; Col counts Unicode characters.
type ParseError struct {
	File string
	Line int
	Col  int
	Msg  string // what was expected, e.g. `expected "." after triple`
	Err  error  // ErrSyntax or ErrIO
}

func (e *ParseError) Error() string {
	f := e.File
	if f == "" {
		f = "<input>"
	}
	return fmt.Sprintf("%s:%d:%d: %s", f, e.Line, e.Col, e.Msg)
}

func (e *ParseError) Unwrap() error { return e.Err }

// String renders a term in N-Triples syntax.
func (t Term) String() string {
	switch t.Kind {
	case IRI:
		return "<" + escapeIRI(t.Value) + ">"
	case Blank:
		return "_:" + t.Value
	case Literal:
		s := `"` + escapeLiteral(t.Value) + `"`
		if t.Lang != "" {
			return s + "@" + t.Lang
		}
		if t.Datatype != "" && t.Datatype != XSDString {
			return s + "^^<" + escapeIRI(t.Datatype) + ">"
		}
		return s
	}
	return ""
}

// String renders the triple as one N-Triples (or N-Quads) line without newline.
func (t Triple) String() string {
	if t.G.Kind != None {
		return t.S.String() + " " + t.P.String() + " " + t.O.String() + " " + t.G.String() + " ."
	}
	return t.S.String() + " " + t.P.String() + " " + t.O.String() + " ."
}

func escapeLiteral(s string) string {
	if !strings.ContainsAny(s, "\"\\\n\r") {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		switch r {
		case '"':
			b.WriteString(`\"`)
		case '\\':
			b.WriteString(`\\`)
		case '\n':
			b.WriteString(`\n`)
		case '\r':
			b.WriteString(`\r`)
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

func escapeIRI(s string) string {
	if !strings.ContainsAny(s, "<>\"{}|^`\\ ") {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		if r <= 0x20 || strings.ContainsRune("<>\"{}|^`\\", r) {
			fmt.Fprintf(&b, `\u%04X`, r)
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

// isLangTag reports whether s is LANGTAG without its '@' (RDF 1.1
// N-Triples and Turtle): [a-zA-Z]+ ('-' [a-zA-Z0-9]+)*.
func isLangTag(s string) bool {
	first, seg := true, 0
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z':
			seg++
		case c >= '0' && c <= '9' && !first:
			seg++
		case c == '-' && seg > 0:
			first, seg = false, 0
		default:
			return false
		}
	}
	return seg > 0
}
