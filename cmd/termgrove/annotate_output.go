package main

import (
	"encoding/json"
	"fmt"
	"html"
	"io"
	"net/url"
	"strings"
	"unicode/utf8"

	"termgrove/annotate"
	"termgrove/model"
)

// annOutput writes annotation results in one format: Begin once, Record per
// record in input order, End once. The gRPC client mode reuses it.
type annOutput interface {
	Begin() error
	Record(res *annotate.Result, text string) error
	End() error
}

// annOutputOptions configure newAnnOutput.
type annOutputOptions struct {
	RecordBase string       // ttl: record IRI = RecordBase + escaped id
	Color      bool         // text: ANSI colours
	Model      *model.Model // labels for word concepts outside the ranked list; may be nil
}

func newAnnOutput(format string, w io.Writer, o annOutputOptions) annOutput {
	switch format {
	case "json":
		return &annJSON{w: w}
	case "ttl":
		return &annTTL{w: w, o: o}
	case "html":
		return &annHTML{w: w, o: o}
	}
	return &annText{w: w, o: o}
}

// annJSON writes one object per line (docs/annotate-json.md).
type annJSON struct{ w io.Writer }

func (j *annJSON) Begin() error { return nil }
func (j *annJSON) End() error   { return nil }
func (j *annJSON) Record(res *annotate.Result, _ string) error {
	enc := json.NewEncoder(j.w)
	enc.SetEscapeHTML(false)
	return enc.Encode(res)
}

// annRank maps concept IRIs of a result to their 1-based rank.
func annRank(res *annotate.Result) map[string]int {
	r := make(map[string]int, len(res.Concepts))
	for i, c := range res.Concepts {
		r[c.IRI] = i + 1
	}
	return r
}

// annSegments walks text with its words: fn gets each stretch of text and
// the word it is (nil between words), invalid UTF-8 replaced by U+FFFD.
// Overlapping or out-of-range spans are left unmarked.
func annSegments(text string, words []annotate.Word, fn func(s string, w *annotate.Word) error) error {
	at := 0
	for i := range words {
		w := &words[i]
		if w.Start < at || w.End > len(text) || w.Start > w.End {
			continue
		}
		if w.Start > at {
			if err := fn(strings.ToValidUTF8(text[at:w.Start], "\uFFFD"), nil); err != nil {
				return err
			}
		}
		if err := fn(strings.ToValidUTF8(text[w.Start:w.End], "\uFFFD"), w); err != nil {
			return err
		}
		at = w.End
	}
	if at < len(text) {
		return fn(strings.ToValidUTF8(text[at:], "\uFFFD"), nil)
	}
	return nil
}

// annText is the terminal view.
type annText struct {
	w io.Writer
	o annOutputOptions
	n int
}

// annANSI are the colours of ranks 1, 2, ... (cycled): red, green, yellow,
// blue, magenta, cyan, then their bright variants.
var annANSI = []string{"31", "32", "33", "34", "35", "36", "91", "92", "93", "94", "95", "96"}

func (t *annText) Begin() error { return nil }
func (t *annText) End() error   { return nil }

func (t *annText) paint(s string, rank int) string {
	if !t.o.Color || rank == 0 {
		return s
	}
	return "\x1b[" + annANSI[(rank-1)%len(annANSI)] + "m" + s + "\x1b[0m"
}

func (t *annText) Record(res *annotate.Result, text string) error {
	var b strings.Builder
	if t.n > 0 {
		b.WriteString("\n")
	}
	t.n++
	head := annVisible(res.ID)
	if t.o.Color {
		head = "\x1b[1m" + head + "\x1b[0m"
	}
	fmt.Fprintf(&b, "%s  %d words, uncovered %.1f%%", head, res.Tokens, 100*res.Uncovered)
	if res.Unknown > 0 {
		fmt.Fprintf(&b, ", %d unknown", res.Unknown)
	}
	if res.Fallback {
		b.WriteString(", language-neutral analysis")
	}
	if res.Invalid > 0 {
		fmt.Fprintf(&b, ", %d invalid UTF-8 sequences replaced", res.Invalid)
	}
	b.WriteString("\n")
	if len(res.Concepts) == 0 {
		b.WriteString("  no concepts\n")
	}
	for i, c := range res.Concepts {
		fmt.Fprintf(&b, "  %s %5.1f%%  %s  <%s>\n", t.paint(fmt.Sprintf("%2d", i+1), i+1), 100*c.Score, annOneLine(c.Label), c.IRI)
		if len(c.Path) > 1 {
			var parts []string
			for _, p := range c.Path {
				parts = append(parts, fmt.Sprintf("%s (%.1f%%)", annOneLine(p.Label), 100*p.Score))
			}
			fmt.Fprintf(&b, "            %s\n", strings.Join(parts, " > "))
		}
		if len(c.Support) > 0 {
			var parts []string
			for _, s := range c.Support {
				parts = append(parts, fmt.Sprintf("%s %.2f", annVisible(s.Term), s.Weight))
			}
			fmt.Fprintf(&b, "            words: %s\n", strings.Join(parts, ", "))
		}
	}
	if strings.TrimSpace(text) != "" {
		rank := annRank(res)
		b.WriteString("\n")
		annSegments(text, res.Words, func(s string, w *annotate.Word) error {
			r := 0
			if w != nil {
				r = rank[w.Concept]
			}
			s = annVisible(s)
			switch {
			case r == 0:
				b.WriteString(s)
			case t.o.Color:
				b.WriteString(t.paint(s, r))
			default:
				fmt.Fprintf(&b, "[%s]%d", s, r)
			}
			return nil
		})
		if !strings.HasSuffix(text, "\n") {
			b.WriteString("\n")
		}
	}
	_, err := io.WriteString(t.w, b.String())
	return err
}

// annOneLine keeps a label on one line.
func annOneLine(s string) string {
	return annVisible(strings.Join(strings.Fields(s), " "))
}

// annVisible shows the control characters of s, other than newline and
// tab, as Unicode control pictures (ESC as ␛), so that a record cannot
// send escape sequences to the terminal; C1 controls become U+FFFD.
// Windows line ends (CRLF) become plain newlines.
func annVisible(s string) string {
	s = strings.ReplaceAll(s, "\r\n", "\n")
	return strings.Map(func(r rune) rune {
		switch {
		case r == '\n' || r == '\t':
			return r
		case r < 0x20:
			return 0x2400 + r
		case r == 0x7f:
			return 0x2421
		case r >= 0x80 && r < 0xa0:
			return 0xfffd
		}
		return r
	}, s)
}

// annTTL writes dcterms:subject triples, scores and labels as comments.
type annTTL struct {
	w io.Writer
	o annOutputOptions
}

func (t *annTTL) Begin() error {
	_, err := io.WriteString(t.w, "@prefix dcterms: <http://purl.org/dc/terms/> .\n")
	return err
}

func (t *annTTL) End() error { return nil }

func (t *annTTL) Record(res *annotate.Result, _ string) error {
	var b strings.Builder
	rec := annIRI(t.o.RecordBase + url.PathEscape(res.ID))
	fmt.Fprintf(&b, "\n# %s: %d words, uncovered %.4f\n", annComment(res.ID), res.Tokens, res.Uncovered)
	for _, c := range res.Concepts {
		fmt.Fprintf(&b, "%s dcterms:subject %s .  # %.4f %s\n", rec, annIRI(c.IRI), c.Score, annComment(c.Label))
	}
	_, err := io.WriteString(t.w, b.String())
	return err
}

// annIRI writes an IRIREF (Turtle §6.4), escaping the characters it forbids
// as \u UCHARs.
func annIRI(s string) string {
	var b strings.Builder
	b.WriteByte('<')
	for _, r := range s {
		if r <= 0x20 || strings.ContainsRune("<>\"{}|^`\\", r) || r == utf8.RuneError {
			fmt.Fprintf(&b, "\\u%04X", r)
			continue
		}
		b.WriteRune(r)
	}
	b.WriteByte('>')
	return b.String()
}

// annComment keeps a comment on one line.
func annComment(s string) string {
	return strings.Map(func(r rune) rune {
		if r == '\n' || r == '\r' || r < 0x20 {
			return ' '
		}
		return r
	}, s)
}

// annHTML writes one self-contained page: no scripts, no network.
type annHTML struct {
	w io.Writer
	o annOutputOptions
	n int
}

// annPalette: 12 distinguishable hues for ranks 1..12; later ranks and
// concepts outside the list are grey.
var annPalette = []string{"#e6194b", "#3cb44b", "#ffe119", "#4363d8", "#f58231", "#911eb4",
	"#42d4f4", "#f032e6", "#bfef45", "#fabed4", "#469990", "#dcbeff"}

func (h *annHTML) Begin() error {
	var b strings.Builder
	b.WriteString(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>termgrove annotations</title>
<style>
body { font: 15px/1.5 system-ui, sans-serif; margin: 2em auto; max-width: 60em; color: #222; }
section.record { border-top: 1px solid #ccc; padding-top: 1em; margin-top: 1.5em; }
.meta { color: #666; }
ol.legend { padding-left: 1.5em; }
ol.legend li { margin: .3em 0; }
.swatch { display: inline-block; width: .9em; height: .9em; border-radius: .2em; vertical-align: middle; margin-right: .3em; }
.score { color: #444; font-variant-numeric: tabular-nums; }
.path { color: #666; font-size: 90%; }
.support { color: #666; font-size: 90%; }
.text { white-space: pre-wrap; background: #fafafa; padding: 1em; border-radius: .3em; }
.w { border-radius: .2em; padding: 0 .1em; }
.other { background: #e0e0e0; }
.free { text-decoration: underline dotted #999; }
`)
	for i, c := range annPalette {
		fmt.Fprintf(&b, ".c%d { background: %s55; } .c%d .swatch, .swatch.c%d { background: %s; }\n", i+1, c, i+1, i+1, c)
	}
	b.WriteString("</style>\n</head>\n<body>\n<h1>termgrove annotations</h1>\n")
	_, err := io.WriteString(h.w, b.String())
	return err
}

func (h *annHTML) End() error {
	_, err := io.WriteString(h.w, "</body>\n</html>\n")
	return err
}

func (h *annHTML) class(rank int) string {
	if rank >= 1 && rank <= len(annPalette) {
		return fmt.Sprintf("c%d", rank)
	}
	return "other"
}

func (h *annHTML) label(iri string) string {
	if h.o.Model != nil {
		if k, ok := h.o.Model.ConceptIndex(iri); ok {
			lang := ""
			if l := h.o.Model.Analyzer.Languages; len(l) > 0 {
				lang = strings.ToLower(l[0])
			}
			return h.o.Model.Scheme.Concepts[k].PrefLabel(lang)
		}
	}
	return iri
}

func (h *annHTML) Record(res *annotate.Result, text string) error {
	var b strings.Builder
	h.n++
	esc := html.EscapeString
	fmt.Fprintf(&b, "<section class=\"record\" id=\"record-%d\">\n<h2>%s</h2>\n", h.n, esc(res.ID))
	fmt.Fprintf(&b, "<p class=\"meta\">%d words · uncovered %.1f%%", res.Tokens, 100*res.Uncovered)
	if res.Unknown > 0 {
		fmt.Fprintf(&b, " · %d unknown", res.Unknown)
	}
	if res.Fallback {
		b.WriteString(" · language-neutral analysis")
	}
	if res.Invalid > 0 {
		fmt.Fprintf(&b, " · %d invalid UTF-8 sequences replaced", res.Invalid)
	}
	b.WriteString("</p>\n<ol class=\"legend\">\n")
	for i, c := range res.Concepts {
		cl := h.class(i + 1)
		// Link only http(s) IRIs: a vocabulary may hold javascript: ones.
		tag := "span"
		if l := strings.ToLower(c.IRI); strings.HasPrefix(l, "http://") || strings.HasPrefix(l, "https://") {
			tag = "a href=\"" + esc(c.IRI) + "\""
		}
		fmt.Fprintf(&b, "<li><span class=\"swatch %s\"></span><%s title=\"%s\">%s</%s> <span class=\"score\">%.1f%%</span>",
			cl, tag, esc(c.IRI), esc(c.Label), strings.Fields(tag)[0], 100*c.Score)
		if len(c.Path) > 0 {
			b.WriteString("<div class=\"path\">")
			for j, p := range c.Path {
				if j > 0 {
					b.WriteString(" › ")
				}
				fmt.Fprintf(&b, "<span title=\"%s\">%s (%.1f%%)</span>", esc(p.IRI), esc(p.Label), 100*p.Score)
			}
			b.WriteString("</div>")
		}
		if len(c.Support) > 0 {
			b.WriteString("<div class=\"support\">words: ")
			for j, s := range c.Support {
				if j > 0 {
					b.WriteString(", ")
				}
				fmt.Fprintf(&b, "%s %.2f", esc(s.Term), s.Weight)
			}
			b.WriteString("</div>")
		}
		b.WriteString("</li>\n")
	}
	b.WriteString("</ol>\n<div class=\"text\">")
	rank := annRank(res)
	annSegments(text, res.Words, func(s string, w *annotate.Word) error {
		switch {
		case w == nil:
			b.WriteString(esc(s))
		case w.Concept == "":
			fmt.Fprintf(&b, "<span class=\"w free\" title=\"%s\">%s</span>", esc(fmt.Sprintf("no concept: free topics %.2f", w.P)), esc(s))
		default:
			fmt.Fprintf(&b, "<span class=\"w %s\" title=\"%s\">%s</span>", h.class(rank[w.Concept]),
				esc(fmt.Sprintf("%s (%.2f)", h.label(w.Concept), w.P)), esc(s))
		}
		return nil
	})
	b.WriteString("</div>\n</section>\n")
	_, err := io.WriteString(h.w, b.String())
	return err
}
