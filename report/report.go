// Package report shows where a vocabulary and a collection part ways (the
// gap report) and how good termgrove's suggestions are against human
// indexing (scoring).
//
// The gap report has five sections, all read off a fitted model and,
// optionally, the records it was fitted on:
//
//	unused      concepts whose fitted token mass or count of records about them fall below thresholds
//	themes      free topics: what the records share that no concept covers
//	candidates  corpus terms a concept owns beyond chance that label no concept
//	dead        labels whose term the corpus never holds
//	trends      per concept, share of tokens per year (records with dates only)
//
//	g, err := report.Gaps(m, annotator, recs, report.GapOptions{})
//	report.WriteHTML(w, g)
//
// Scoring follows DESIGN.md "Scoring definitions"; see Evaluate.
package report
