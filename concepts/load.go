package concepts

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"net/url"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"termgrove/concepts/rdf"
)

// LoadOptions configure Load and LoadReader. The zero value loads the only
// concept scheme of the file, sniffing its format from the content.
type LoadOptions struct {
	// Scheme is the IRI of the skos:ConceptScheme to load ("" = the only
	// one; an error lists the schemes when the file has several).
	Scheme string
	// Base resolves relative IRIs ("" = the file's file:// URI in Load,
	// none in LoadReader).
	Base string
	// Format is "turtle", "ntriples", "nquads", "rdfxml" or "jsonld" (an
	// extension such as "ttl" works too); "" = sniff the content.
	Format string
	// File names the input in error messages (LoadReader; Load uses its path).
	File string
}

// Errors of Load, to match with errors.Is. Syntax errors of the document
// are *rdf.ParseError values (errors.Is(err, rdf.ErrSyntax)).
var (
	// ErrNotRDF: the content is no RDF serialisation termgrove reads.
	ErrNotRDF = errors.New("not an RDF document")
	// ErrNoConcepts: the document parsed but holds no skos:Concept
	// (of the chosen scheme).
	ErrNoConcepts = errors.New("no concepts found")
	// ErrScheme: several schemes and none chosen, or the chosen one is absent.
	ErrScheme = errors.New("concept scheme")
	// ErrFormat: LoadOptions.Format names no known format.
	ErrFormat = errors.New("unknown format")
)

// LoadInfo says what Load read.
type LoadInfo struct {
	File    string   `json:"file"`
	Format  string   `json:"format"`
	Triples int      `json:"triples"`
	Schemes []string `json:"schemes"` // every concept scheme in the file, sorted
}

// Load reads a SKOS vocabulary file (Turtle, N-Triples, N-Quads, RDF/XML or
// JSON-LD, sniffed from the content) and returns the chosen concept scheme.
func Load(path string, opt LoadOptions) (*Scheme, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	opt.File = path
	if opt.Base == "" {
		opt.Base = FileIRI(path)
	}
	return LoadReader(f, opt)
}

// FileIRI returns the file: IRI of a path ("v.ttl" → "file:///home/a/v.ttl"),
// the base IRI rapper and most RDF tools give a local file.
func FileIRI(path string) string {
	abs, err := filepath.Abs(path)
	if err != nil {
		abs = path
	}
	return (&url.URL{Scheme: "file", Path: filepath.ToSlash(abs)}).String()
}

// LoadReader is Load on a stream; opt.File names it in errors.
func LoadReader(r io.Reader, opt LoadOptions) (*Scheme, error) {
	b := newBuilder()
	format, err := readPipelined(r, opt, b.add)
	if err != nil {
		return nil, err
	}
	s, err := b.build(opt.Scheme)
	if err != nil {
		return nil, err
	}
	s.info = LoadInfo{File: opt.File, Format: format, Triples: b.triples, Schemes: b.schemeIRIs()}
	if len(s.Concepts) == 0 {
		name := opt.File
		if name == "" {
			name = "input"
		}
		return nil, fmt.Errorf("%w in %s", ErrNoConcepts, name)
	}
	return s, nil
}

// readPipelined runs the parser and fn on two goroutines, handing triples
// over in batches, so that building the scheme overlaps parsing on a
// second core. fn sees the triples in document order.
func readPipelined(r io.Reader, opt LoadOptions, fn func(rdf.Triple) error) (string, error) {
	if runtime.GOMAXPROCS(0) < 2 {
		return ReadTriples(r, opt, fn)
	}
	const nbuf, size = 4, 1024
	full := make(chan []rdf.Triple, nbuf)
	free := make(chan []rdf.Triple, nbuf)
	for range nbuf {
		free <- make([]rdf.Triple, 0, size)
	}
	var fnErr error
	done := make(chan struct{})
	go func() {
		defer close(done)
		for batch := range full {
			for _, t := range batch {
				if fnErr == nil {
					fnErr = fn(t)
				}
			}
			free <- batch[:0]
		}
	}()
	cur := <-free
	format, err := ReadTriples(r, opt, func(t rdf.Triple) error {
		cur = append(cur, t)
		if len(cur) == size {
			full <- cur
			cur = <-free
		}
		return nil
	})
	full <- cur
	close(full)
	<-done
	if err == nil {
		err = fnErr
	}
	return format, err
}

// Info says which file, format and how many triples the scheme came from
// (zero for a scheme not made by Load).
func (s *Scheme) Info() LoadInfo { return s.info }

// sniffSize is how much of the input DetectFormat sees. Turtle files often
// open with a long licence comment, so it is generous.
const sniffSize = 64 << 10

// ReadTriples streams the triples of an RDF document to fn, choosing the
// reader from opt.Format or, when empty, from the content. It returns the
// format read.
func ReadTriples(r io.Reader, opt LoadOptions, fn func(rdf.Triple) error) (string, error) {
	br := bufio.NewReaderSize(r, sniffSize)
	format := ""
	if opt.Format != "" {
		format = NormalizeFormat(opt.Format)
		if format == "" {
			return "", fmt.Errorf("%w %q (want turtle, ntriples, nquads, rdfxml or jsonld)", ErrFormat, opt.Format)
		}
	} else {
		head, err := br.Peek(sniffSize)
		eof := errors.Is(err, io.EOF)
		if err != nil && !errors.Is(err, io.EOF) && !errors.Is(err, bufio.ErrBufferFull) {
			return "", &rdf.ParseError{File: opt.File, Line: 1, Col: 1, Msg: err.Error(), Err: rdf.ErrIO}
		}
		res := sniff(head, opt.File, eof)
		if res.format == "" {
			return "", &rdf.ParseError{File: opt.File, Line: res.line, Col: res.col,
				Msg: "not an RDF document: " + res.why, Err: ErrNotRDF}
		}
		if res.empty {
			return res.format, nil
		}
		format = res.format
	}
	ropt := rdf.Options{Base: opt.Base, File: opt.File}
	var err error
	switch format {
	case FormatTurtle:
		err = rdf.ReadTurtle(br, ropt, fn)
	case FormatNTriples:
		err = rdf.ReadNTriples(br, ropt, fn)
	case FormatNQuads:
		err = rdf.ReadNQuads(br, ropt, fn)
	case FormatRDFXML:
		err = rdf.ReadRDFXML(br, ropt, fn)
	case FormatJSONLD:
		err = rdf.ReadJSONLD(br, ropt, fn)
	}
	return format, err
}

// IsNotImplemented reports whether err comes from an RDF reader that is not
// written yet (so tests can skip a format).
func IsNotImplemented(err error) bool {
	return err != nil && strings.Contains(err.Error(), "not implemented")
}
