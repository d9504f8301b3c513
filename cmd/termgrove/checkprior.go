package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"strings"
	"time"

	"termgrove/concepts"
	"termgrove/prior"
	"termgrove/terms"
)

// priorListMax bounds each list of the text report; json lists everything.
const priorListMax = 20

// priorJSON is the json form of the prior report (check --prior --format json).
type priorJSON struct {
	Prior struct {
		Concepts  int            `json:"concepts"`
		Terms     int            `json:"terms"`
		Phrases   int            `json:"phrases"`
		Lambda    float64        `json:"lambda"`
		Beta0     float64        `json:"beta0"`
		Languages []string       `json:"languages"`
		Notices   []string       `json:"notices"`
		Skipped   int            `json:"skipped_other_language"`
		NoTerms   []priorConcept `json:"no_terms"`
		Emptied   []priorLabel   `json:"emptied_labels"`
		Shared    []priorShared  `json:"shared_terms"`
		Seconds   float64        `json:"seconds"`
	} `json:"prior"`
}

type priorConcept struct {
	IRI   string `json:"iri"`
	Label string `json:"label"`
}

type priorLabel struct {
	IRI   string `json:"iri"`
	Label string `json:"label"`
	Lang  string `json:"lang,omitempty"`
}

type priorShared struct {
	Term     string `json:"term"`
	Concepts int    `json:"concepts"`
}

// priorReport writes the prior report (check --prior) for s: how the
// labels of the chosen languages (langs; empty = English) turn into prior
// rows, and what could not be used. format is "text" or "json".
func priorReport(w io.Writer, s *concepts.Scheme, langs []string, format string) error {
	if format != "" && format != "text" && format != "json" {
		return fmt.Errorf("unknown format %q (want text or json)", format)
	}
	a, err := terms.New(terms.Options{Languages: langs}, nil)
	if err != nil {
		return err
	}
	start := time.Now()
	p, err := prior.Build(s, a, prior.Options{Languages: langs})
	if err != nil {
		return err
	}
	var j priorJSON
	r := &j.Prior
	r.Seconds = time.Since(start).Seconds()
	r.Concepts, r.Terms, r.Phrases = len(s.Concepts), p.Report.Terms, p.Report.Phrases
	r.Lambda, r.Beta0 = p.Lambda, p.Beta0
	r.Languages, r.Notices, r.Skipped = p.Report.Languages, p.Report.Notices, p.Report.Skipped
	r.NoTerms = []priorConcept{}
	mainLang := "en"
	if len(langs) > 0 {
		mainLang = strings.ToLower(langs[0])
	}
	for _, i := range p.Report.NoTerms {
		c := &s.Concepts[i]
		r.NoTerms = append(r.NoTerms, priorConcept{IRI: c.IRI, Label: c.PrefLabel(mainLang)})
	}
	r.Emptied = []priorLabel{}
	for _, e := range p.Report.Emptied {
		iri, rest, _ := strings.Cut(e, "\t")
		l := priorLabel{IRI: iri, Label: rest}
		if at := strings.LastIndexByte(rest, '@'); at >= 0 {
			l.Label, l.Lang = rest[:at], rest[at+1:]
		}
		r.Emptied = append(r.Emptied, l)
	}
	r.Shared = []priorShared{}
	for _, sh := range p.Report.SharedTerms {
		r.Shared = append(r.Shared, priorShared{Term: sh.Term, Concepts: sh.Concepts})
	}
	if r.Notices == nil {
		r.Notices = []string{}
	}

	out := bufio.NewWriter(w)
	if format == "json" {
		enc := json.NewEncoder(out)
		enc.SetIndent("", "  ")
		if err := enc.Encode(&j); err != nil {
			return err
		}
		return out.Flush()
	}
	fmt.Fprintf(out, "\nprior: %d concepts, %d terms (%d phrases), λ=%g β0=%g, label languages %s (%.2fs)\n",
		r.Concepts, r.Terms, r.Phrases, r.Lambda, r.Beta0, strings.Join(r.Languages, ","), r.Seconds)
	for _, n := range r.Notices {
		fmt.Fprintf(out, "  notice: %s\n", n)
	}
	if r.Skipped > 0 {
		fmt.Fprintf(out, "  %d labels and notes in other languages not used\n", r.Skipped)
	}
	fmt.Fprintf(out, "concepts with no terms: %d\n", len(r.NoTerms))
	for i, c := range r.NoTerms {
		if i == priorListMax {
			fmt.Fprintf(out, "  ... and %d more\n", len(r.NoTerms)-i)
			break
		}
		fmt.Fprintf(out, "  %s  %q\n", c.IRI, c.Label)
	}
	fmt.Fprintf(out, "labels that analysis emptied: %d\n", len(r.Emptied))
	for i, l := range r.Emptied {
		if i == priorListMax {
			fmt.Fprintf(out, "  ... and %d more\n", len(r.Emptied)-i)
			break
		}
		lang := ""
		if l.Lang != "" {
			lang = "@" + l.Lang
		}
		fmt.Fprintf(out, "  %s  %q%s\n", l.IRI, l.Label, lang)
	}
	fmt.Fprintf(out, "terms shared by the most concepts:\n")
	for _, sh := range r.Shared {
		fmt.Fprintf(out, "  %-30s %d\n", sh.Term, sh.Concepts)
	}
	return out.Flush()
}
