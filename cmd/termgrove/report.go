package main

import (
	"flag"
	"fmt"
	"io"
	"os"

	"termgrove/annotate"
	"termgrove/model"
	"termgrove/report"
)

func cmdReport(args []string) int {
	fs := flag.NewFlagSet("report", flag.ContinueOnError)
	modelPath := fs.String("model", "", "fitted model file (.grove)")
	recPath := fs.String("records", "", "the records the model was fitted on (JSON Lines or folder of .txt): adds example records and use over time")
	format := fs.String("format", "text", "output: text, json, csv or html")
	out := fs.String("out", "", "write to this file (atomically) instead of standard output")
	lang := fs.String("lang", "en", "language of the labels shown")
	fields := fs.String("fields", "title,text", "record fields to read")
	minShare := fs.Float64("min-share", 0, "a concept below this share of fitted tokens counts as unused (default 0.0005)")
	minRecords := fs.Int("min-records", 0, "a concept used by fewer records counts as unused (default 2)")
	skipBad := fs.Bool("skip-bad", false, "skip records that are not valid JSON (counted) instead of stopping")
	fs.Usage = func() {
		fmt.Fprint(os.Stderr, `usage: termgrove report --model M.grove [--records FILE|DIR] [--format text|json|csv|html] [--out FILE]

Shows where vocabulary and collection part ways: concepts the records never
or hardly use, themes no concept covers (free topics), corpus words that
should probably become labels, label words never seen, and concept use over
time when records carry dates.

Example:
  termgrove report --model demo.grove --records records.jsonl --format html --out gaps.html

Options:
`)
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return 0
		}
		return 2
	}
	if *modelPath == "" || fs.NArg() > 0 {
		if *modelPath == "" {
			fmt.Fprintln(os.Stderr, "termgrove report: --model is required")
		} else {
			fmt.Fprintf(os.Stderr, "termgrove report: unexpected argument %q\n", fs.Arg(0))
		}
		fs.Usage()
		return 2
	}
	var write func(io.Writer, *report.GapReport) error
	switch *format {
	case "text":
		write = report.WriteText
	case "json":
		write = report.WriteJSON
	case "csv":
		write = report.WriteCSV
	case "html":
		write = report.WriteHTML
	default:
		fmt.Fprintf(os.Stderr, "termgrove report: unknown --format %q (want text, json, csv or html)\n", *format)
		return 2
	}
	if !(*minShare >= 0 && *minShare <= 1) || *minRecords < 0 {
		fmt.Fprintln(os.Stderr, "termgrove report: 0 ≤ --min-share ≤ 1 and --min-records ≥ 0")
		return 2
	}
	if err := checkOutPath(*out); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove report: --out: %v\n", err)
		return 2
	}
	if in := overwritesInput(*out, *modelPath, *recPath); in != "" {
		fmt.Fprintf(os.Stderr, "termgrove report: --out %s would overwrite the input %s\n", *out, in)
		return 2
	}
	m, err := model.Load(*modelPath)
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove report: %v\n", err)
		return 2
	}
	a, err := annotate.New(m)
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove report: %v\n", err)
		return 2
	}
	opt := report.GapOptions{Lang: *lang, Fields: splitList(*fields), MinShare: *minShare, MinRecords: *minRecords}
	var recsIn = 0
	g, err := func() (*report.GapReport, error) {
		if *recPath == "" {
			return report.Gaps(m, a, nil, opt)
		}
		recs, st, err := readAll(*recPath, opt.Fields, *skipBad, "report")
		if err != nil {
			return nil, err
		}
		recsIn = st.Read
		if st.Skipped > 0 {
			fmt.Fprintf(os.Stderr, "termgrove report: %d bad lines skipped\n", st.Skipped)
		}
		return report.Gaps(m, a, recs, opt)
	}()
	if err != nil {
		fmt.Fprintf(os.Stderr, "termgrove report: %v\n", err)
		return 2
	}
	if err := writeOutput(*out, func(w io.Writer) error { return write(w, g) }); err != nil {
		fmt.Fprintf(os.Stderr, "termgrove report: %v\n", err)
		return 1
	}
	if *out != "" && *out != "-" {
		fmt.Fprintf(os.Stderr, "termgrove report: %d records read, report written to %s\n", recsIn, *out)
	}
	return 0
}
