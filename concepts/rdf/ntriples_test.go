package rdf

import (
	"errors"
	"io"
	"regexp"
	"strings"
	"testing"
	"testing/iotest"
)

// collect reads src with rd, once whole and once one byte per Read call (to
// exercise every buffer refill path), and checks that both agree.
func collect(t *testing.T, rd reader, src string, opt Options) ([]Triple, error) {
	t.Helper()
	var whole, bytewise []Triple
	err1 := rd(strings.NewReader(src), opt, func(tr Triple) error { whole = append(whole, tr); return nil })
	err2 := rd(iotest.OneByteReader(strings.NewReader(src)), opt, func(tr Triple) error { bytewise = append(bytewise, tr); return nil })
	if (err1 == nil) != (err2 == nil) || err1 != nil && err1.Error() != err2.Error() {
		t.Fatalf("whole read gives %v, byte-wise read gives %v", err1, err2)
	}
	if len(whole) != len(bytewise) {
		t.Fatalf("whole read gives %d triples, byte-wise read %d", len(whole), len(bytewise))
	}
	for i := range whole {
		if whole[i] != bytewise[i] {
			t.Fatalf("triple %d: whole read %v, byte-wise read %v", i, whole[i], bytewise[i])
		}
	}
	return whole, err1
}

func TestNTriplesTerms(t *testing.T) {
	// Source: RDF 1.1 N-Triples §2 (examples) and §7 (grammar: ECHAR, UCHAR, LANGTAG).
	tests := []struct {
		in   string
		want Triple
	}{
		{`<http://ex.org/s> <http://ex.org/p> <http://ex.org/o> .`,
			Triple{S: Term{Kind: IRI, Value: "http://ex.org/s"}, P: Term{Kind: IRI, Value: "http://ex.org/p"}, O: Term{Kind: IRI, Value: "http://ex.org/o"}}},
		{`_:b1 <http://ex.org/p> _:b.2 .`,
			Triple{S: Term{Kind: Blank, Value: "b1"}, P: Term{Kind: IRI, Value: "http://ex.org/p"}, O: Term{Kind: Blank, Value: "b.2"}}},
		{`_:a <http://ex.org/p> "chat"@FR-be .`,
			Triple{S: Term{Kind: Blank, Value: "a"}, P: Term{Kind: IRI, Value: "http://ex.org/p"}, O: Term{Kind: Literal, Value: "chat", Lang: "fr-be", Datatype: RDFLangString}}},
		{`_:a <http://ex.org/p> "1"^^<http://www.w3.org/2001/XMLSchema#integer> .`,
			Triple{S: Term{Kind: Blank, Value: "a"}, P: Term{Kind: IRI, Value: "http://ex.org/p"}, O: Term{Kind: Literal, Value: "1", Datatype: "http://www.w3.org/2001/XMLSchema#integer"}}},
		{`_:a <http://ex.org/p> "t\tq\"b\\n\nu\u00E9U\U0001F600" .`,
			Triple{S: Term{Kind: Blank, Value: "a"}, P: Term{Kind: IRI, Value: "http://ex.org/p"}, O: Term{Kind: Literal, Value: "t\tq\"b\\n\nué" + "U\U0001F600", Datatype: XSDString}}},
		{`<http://ex.org/\u00E9> <http://ex.org/p> "" . # comment`,
			Triple{S: Term{Kind: IRI, Value: "http://ex.org/é"}, P: Term{Kind: IRI, Value: "http://ex.org/p"}, O: Term{Kind: Literal, Value: "", Datatype: XSDString}}},
		{"\t<http://ex.org/s><http://ex.org/p>\"x\".",
			Triple{S: Term{Kind: IRI, Value: "http://ex.org/s"}, P: Term{Kind: IRI, Value: "http://ex.org/p"}, O: Term{Kind: Literal, Value: "x", Datatype: XSDString}}},
	}
	for _, tc := range tests {
		got, err := collect(t, ReadNTriples, "# head\n\n"+tc.in+"\r\n", Options{})
		if err != nil {
			t.Errorf("%s: %v", tc.in, err)
			continue
		}
		if len(got) != 1 || got[0] != tc.want {
			t.Errorf("%s:\n got %v\nwant %v", tc.in, got, tc.want)
		}
	}
}

func TestNQuadsGraph(t *testing.T) {
	// Source: RDF 1.1 N-Quads §2 (graphLabel is an IRI or blank node).
	src := "<http://ex.org/s> <http://ex.org/p> \"o\" <http://ex.org/g> .\n" +
		"<http://ex.org/s> <http://ex.org/p> \"o\" _:g .\n" +
		"<http://ex.org/s> <http://ex.org/p> \"o\" .\n"
	got, err := collect(t, ReadNQuads, src, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := []Term{{Kind: IRI, Value: "http://ex.org/g"}, {Kind: Blank, Value: "g"}, {}}
	for i, g := range want {
		if got[i].G != g {
			t.Errorf("quad %d: graph %v, want %v", i, got[i].G, g)
		}
	}
	if _, err := collect(t, ReadNTriples, src, Options{}); err == nil {
		t.Error("N-Triples reader accepted a graph name")
	}
}

// errPattern is the shape every reader error must have: file:line:col: expected ...
var errPattern = regexp.MustCompile(`^[^:]+:\d+:\d+: expected `)

func TestNTriplesErrors(t *testing.T) {
	tests := []struct {
		name, in string
		pos      string // "file:line:col" the error must start with
		contains string
	}{
		// Source: RDF 1.1 N-Triples §7, IRIREF must be absolute (the W3C
		// suite's nt-syntax-bad-uri-06..09 test the same).
		{"relative IRI", "<http://ex.org/s> <p> <http://ex.org/o> .", "x.nt:1:19", "relative IRI <p>"},
		{"space in IRI", "<http://ex.org/a b> <http://ex.org/p> <http://ex.org/o> .", "x.nt:1:17", "space"},
		{"bad escape", `<http://ex.org/s> <http://ex.org/p> "a\qb" .`, "x.nt:1:39", `\'q'`},
		{"surrogate", `<http://ex.org/s> <http://ex.org/p> "\uD800" .`, "x.nt:1:38", "U+D800"},
		// Found by FuzzTurtle in CI: eight hex digits overflowed a rune into
		// the negatives and indexed a table with it.
		{"escape beyond int32 in IRI", `<http://ex.org/\U80000000> <http://ex.org/p> <http://ex.org/o> .`, "x.nt:1:16", "U+80000000"},
		{"escape beyond int32 in string", `<http://ex.org/s> <http://ex.org/p> "\UFFFFFFFF" .`, "x.nt:1:38", "U+FFFFFFFF"},
		{"missing dot", "<http://ex.org/s> <http://ex.org/p> <http://ex.org/o>\n", "x.nt:1:54", `"."`},
		{"two triples on a line", "<http://ex.org/s> <http://ex.org/p> <http://ex.org/o> . <http://ex.org/s> <http://ex.org/p> <http://ex.org/o> .", "x.nt:1:57", "end of line"},
		{"literal subject", `"s" <http://ex.org/p> <http://ex.org/o> .`, "x.nt:1:1", "subject"},
		{"truncated", "<http://ex.org/s> <http://ex.org/p> \"abc", "x.nt:1:41", "end"},
		{"newline in string", "<http://ex.org/s> <http://ex.org/p> \"ab\n\" .", "x.nt:1:40", "end of line"},
		{"bad lang", `<http://ex.org/s> <http://ex.org/p> "a"@1 .`, "x.nt:1:41", "language tag"},
		// Column counts characters, not bytes: "é" is one column.
		{"invalid UTF-8", "\n<http://ex.org/s> <http://ex.org/p> \"é\xff\" .", "x.nt:2:39", "0xFF"},
		{"invalid UTF-8 in comment", "# ok\n# caf\xe9\n", "x.nt:2:6", "0xE9"},
		// Common practice, no source: CR LF and a lone CR each end one line.
		{"line count with CR LF and CR", "# a\r\n# b\r# c\r\n<a>", "x.nt:4:1", "relative IRI"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := collect(t, ReadNTriples, tc.in, Options{File: "x.nt"})
			checkParseError(t, err, tc.pos, tc.contains)
		})
	}
}

func checkParseError(t *testing.T, err error, pos, contains string) {
	t.Helper()
	if err == nil {
		t.Fatal("no error")
	}
	var pe *ParseError
	if !errors.As(err, &pe) || !errors.Is(err, ErrSyntax) {
		t.Fatalf("error %v is not a *ParseError of kind ErrSyntax", err)
	}
	msg := err.Error()
	if !strings.HasPrefix(msg, pos+": ") || !errPattern.MatchString(msg) || !strings.Contains(msg, contains) {
		t.Errorf("error %q, want %q: expected ... containing %q", msg, pos, contains)
	}
}

func TestReadErrorIsErrIO(t *testing.T) {
	boom := errors.New("disk on fire")
	src := io.MultiReader(strings.NewReader("<http://ex.org/s> <http://ex.org/p> \"ab"), iotest.ErrReader(boom))
	err := ReadNTriples(src, Options{}, func(Triple) error { return nil })
	if !errors.Is(err, ErrIO) || !errors.Is(err, boom) {
		t.Fatalf("got %v, want an ErrIO wrapping the read error", err)
	}
	src = io.MultiReader(strings.NewReader("<s> <p> \"ab"), iotest.ErrReader(boom))
	if err := ReadTurtle(src, Options{}, func(Triple) error { return nil }); !errors.Is(err, ErrIO) {
		t.Fatalf("Turtle: got %v, want ErrIO", err)
	}
}

func TestCallbackErrorStops(t *testing.T) {
	stop := errors.New("stop")
	n := 0
	src := strings.Repeat("<http://ex.org/s> <http://ex.org/p> <http://ex.org/o> .\n", 10)
	err := ReadNTriples(strings.NewReader(src), Options{}, func(Triple) error { n++; return stop })
	if err != stop || n != 1 {
		t.Fatalf("got %v after %d triples, want the callback's error after 1", err, n)
	}
}
