package rdf

// JSON-LD reader: JSON-LD 1.1 Processing Algorithms (W3C Recommendation
// 2020), "Deserialize JSON-LD to RDF", done by github.com/piprate/json-gold.
//
//	{"@context": {"skos": "http://www.w3.org/2004/02/skos/core#"},
//	 "@id": "http://ex.org/a", "skos:prefLabel": {"@value": "cat", "@language": "en"}}
//
// gives <http://ex.org/a> <…skos/core#prefLabel> "cat"@en .

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"maps"
	"slices"
	"sort"
	"strings"
	"unicode/utf8"

	"github.com/piprate/json-gold/ld"
)

// ErrRemoteContext is the kind of error ReadJSONLD gives for a document that
// needs a context from the network: the reader never fetches one.
var ErrRemoteContext = errors.New("remote JSON-LD context not loaded")

// ReadJSONLD reads a JSON-LD document, converts it to an RDF dataset and
// calls fn once per triple: default-graph triples first, then those of each
// named graph (G set) in order of graph name. Unlike the other readers it
// holds the whole document in memory, as JSON-LD expansion needs it.
//
// Remote contexts ("@context": "https://...") are refused with an error
// matching ErrRemoteContext; inline the context instead. JSON syntax errors
// carry line and column; JSON-LD errors from json-gold carry the position
// of the offending IRI when it can be found in the text, else 1:1.
func ReadJSONLD(r io.Reader, opt Options, fn func(Triple) error) error {
	src, err := io.ReadAll(r)
	if err != nil {
		return &ParseError{File: opt.File, Line: 1, Col: 1, Msg: err.Error(), Err: fmt.Errorf("%w: %w", ErrIO, err)}
	}
	// RFC 8259 §8.1: a parser may ignore a leading byte order mark.
	src = bytes.TrimPrefix(src, []byte("\ufeff"))
	if !utf8.Valid(src) {
		off := 0
		for off < len(src) {
			r, n := utf8.DecodeRune(src[off:])
			if r == utf8.RuneError && n == 1 {
				break
			}
			off += n
		}
		return jsonErrAt(opt, src, off, "invalid UTF-8", ErrSyntax)
	}
	var doc any
	dec := json.NewDecoder(bytes.NewReader(src))
	if err := dec.Decode(&doc); err != nil {
		return jsonSyntaxErr(opt, src, dec, err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return jsonErrAt(opt, src, int(dec.InputOffset()), "data after the JSON-LD document", ErrSyntax)
	}

	// json-gold leaves out a value whose @language is not a language
	// tag (JSON-LD 1.1 "Deserialize JSON-LD to RDF"): a label would go
	// missing without a word. Such a document is refused instead, as the
	// other readers refuse it.
	exp, err := expand(doc, opt.Base)
	if err != nil {
		return jsonLDErr(opt, src, err)
	}
	if tag, bad := badLanguage(exp); bad {
		off := max(bytes.Index(src, []byte(`"`+tag+`"`)), 0)
		return jsonErrAt(opt, src, off, fmt.Sprintf("JSON-LD: @language %q is not a language tag: want letters, then groups of letters or digits after '-' (BCP 47, e.g. en or en-GB); json-gold would drop the value", tag), ErrSyntax)
	}
	ds, err := toRDF(exp, opt.Base)
	if err != nil {
		return jsonLDErr(opt, src, err)
	}
	names := make([]string, 0, len(ds.Graphs))
	for name := range ds.Graphs {
		if name != "@default" {
			names = append(names, name)
		}
	}
	sort.Strings(names)
	names = append([]string{"@default"}, names...)
	for _, name := range names {
		for _, q := range ds.Graphs[name] {
			t := Triple{S: ldTerm(q.Subject), P: ldTerm(q.Predicate), O: ldTerm(q.Object)}
			if name != "@default" {
				t.G = ldGraphName(name)
			}
			if t.S.Kind == None || t.P.Kind == None || t.O.Kind == None {
				continue
			}
			if err := fn(t); err != nil {
				return err
			}
		}
	}
	return nil
}

// withJSONGold runs f with json-gold's processor and this reader's
// options (JSON-LD 1.1, no remote documents). A panic inside the library
// on some odd document becomes an error, as user input must never crash
// the program.
func withJSONGold[T any](base string, f func(*ld.JsonLdProcessor, *ld.JsonLdOptions) (T, error)) (out T, err error) {
	defer func() {
		if r := recover(); r != nil {
			var zero T
			out, err = zero, fmt.Errorf("json-gold failed on this document: %v", r)
		}
	}()
	lopt := ld.NewJsonLdOptions(base)
	lopt.DocumentLoader = refusingLoader{}
	lopt.ProcessingMode = ld.JsonLd_1_1
	return f(ld.NewJsonLdProcessor(), lopt)
}

// toRDF converts an expanded document (expand) to an RDF dataset: the
// step JsonLdProcessor.ToRDF takes after its own expansion, which would
// expand the document a second time.
func toRDF(exp []any, base string) (*ld.RDFDataset, error) {
	return withJSONGold(base, func(_ *ld.JsonLdProcessor, o *ld.JsonLdOptions) (*ld.RDFDataset, error) {
		return ld.NewJsonLdApi().ToRDF(exp, o)
	})
}

// expand runs json-gold's expansion.
func expand(doc any, base string) ([]any, error) {
	return withJSONGold(base, func(p *ld.JsonLdProcessor, o *ld.JsonLdOptions) ([]any, error) { return p.Expand(doc, o) })
}

// badLanguage finds, in an expanded JSON-LD document, the first value
// object whose @language is not a language tag (isLangTag). A value's
// own @value (a JSON literal may hold any keys) is not searched.
func badLanguage(v any) (string, bool) {
	switch v := v.(type) {
	case []any:
		for _, x := range v {
			if tag, bad := badLanguage(x); bad {
				return tag, true
			}
		}
	case map[string]any:
		if l, ok := v["@language"].(string); ok && !isLangTag(l) {
			return l, true
		}
		for _, k := range slices.Sorted(maps.Keys(v)) { // sorted: the same report every run
			if k == "@value" {
				continue
			}
			if tag, bad := badLanguage(v[k]); bad {
				return tag, true
			}
		}
	}
	return "", false
}

// refusingLoader is a json-gold document loader that loads nothing, so
// parsing a vocabulary never touches the network.
type refusingLoader struct{}

func (refusingLoader) LoadDocument(u string) (*ld.RemoteDocument, error) {
	return nil, fmt.Errorf("%w: %s (remote documents are never fetched; put the context inline)", ErrRemoteContext, u)
}

func ldTerm(n ld.Node) Term {
	switch n := n.(type) {
	case ld.IRI:
		return Term{Kind: IRI, Value: n.Value}
	case *ld.IRI:
		return Term{Kind: IRI, Value: n.Value}
	case ld.BlankNode:
		return Term{Kind: Blank, Value: strings.TrimPrefix(n.Attribute, "_:")}
	case *ld.BlankNode:
		return Term{Kind: Blank, Value: strings.TrimPrefix(n.Attribute, "_:")}
	case ld.Literal:
		return ldLiteral(n)
	case *ld.Literal:
		return ldLiteral(*n)
	}
	return Term{}
}

func ldLiteral(l ld.Literal) Term {
	t := Term{Kind: Literal, Value: l.Value, Datatype: l.Datatype}
	if l.Language != "" {
		t.Lang = strings.ToLower(l.Language)
		t.Datatype = RDFLangString
	}
	if t.Datatype == "" {
		t.Datatype = XSDString
	}
	return t
}

func ldGraphName(name string) Term {
	if strings.HasPrefix(name, "_:") {
		return Term{Kind: Blank, Value: name[2:]}
	}
	return Term{Kind: IRI, Value: name}
}

// jsonSyntaxErr locates an encoding/json error in the source.
func jsonSyntaxErr(opt Options, src []byte, dec *json.Decoder, err error) error {
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &se):
		return jsonErrAt(opt, src, int(se.Offset)-1, "JSON: "+se.Error(), ErrSyntax)
	case errors.As(err, &te):
		return jsonErrAt(opt, src, int(te.Offset), "JSON: "+te.Error(), ErrSyntax)
	case err == io.EOF || err == io.ErrUnexpectedEOF:
		return jsonErrAt(opt, src, len(src), "JSON: unexpected end of input", ErrSyntax)
	}
	return jsonErrAt(opt, src, int(dec.InputOffset()), "JSON: "+err.Error(), ErrSyntax)
}

// jsonLDErr reports a json-gold error at the first place in the source that
// holds the IRI it names, or at 1:1.
func jsonLDErr(opt Options, src []byte, err error) error {
	kind := ErrSyntax
	if errors.Is(err, ErrRemoteContext) {
		kind = fmt.Errorf("%w: %w", ErrSyntax, ErrRemoteContext)
	}
	msg := "JSON-LD: " + err.Error()
	var le *ld.JsonLdError
	if errors.As(err, &le) {
		msg = "JSON-LD: " + string(le.Code)
		if le.Details != nil {
			msg += ": " + fmt.Sprint(le.Details)
		}
	}
	off := 0
	if u := quotedIRIIn(msg); u != "" {
		if i := bytes.Index(src, []byte(`"`+u+`"`)); i >= 0 {
			off = i
		}
	}
	return jsonErrAt(opt, src, off, msg, kind)
}

// quotedIRIIn finds the remote IRI named in a json-gold message, such as
// "... context (https://ex.org/ctx.jsonld): ...".
func quotedIRIIn(msg string) string {
	i := strings.Index(msg, "(")
	j := strings.Index(msg, "):")
	if i < 0 || j <= i {
		return ""
	}
	return msg[i+1 : j]
}

// jsonErrAt makes a *ParseError at byte offset off of src.
func jsonErrAt(opt Options, src []byte, off int, msg string, kind error) error {
	if off < 0 {
		off = 0
	}
	if off > len(src) {
		off = len(src)
	}
	line, col := 1, 1
	for _, r := range string(src[:off]) {
		if r == '\n' {
			line++
			col = 1
		} else {
			col++
		}
	}
	return &ParseError{File: opt.File, Line: line, Col: col, Msg: msg, Err: kind}
}
