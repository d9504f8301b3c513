package report

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"html/template"
	"io"
	"math"
	"strconv"
	"strings"
)

// WriteJSON writes the report as one indented JSON object.
func WriteJSON(w io.Writer, g *GapReport) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(g)
}

// WriteText writes the terminal view.
func WriteText(w io.Writer, g *GapReport) error {
	b := &strings.Builder{}
	fmt.Fprintf(b, "Gap report for %s\n", orDash(g.Scheme))
	fmt.Fprintf(b, "%d concepts, %d free topics, %d fitted tokens, %d records read\n\n", g.Concepts, g.FreeTopics, g.Tokens, g.Records)

	fmt.Fprintf(b, "UNUSED CONCEPTS (%.1f%% of the vocabulary)\n", 100*g.UnusedShare)
	switch g.RecordsBasis {
	case "score":
		b.WriteString("  (records: those about the concept or one below it, or indexed with one)\n")
	case "tokens":
		b.WriteString("  (records: those the model lent any token; pass the records for those about it)\n")
	}
	if len(g.Unused) == 0 {
		b.WriteString("  none: every concept is used\n")
	}
	for _, grp := range g.Unused {
		fmt.Fprintf(b, "  under %s:\n", grp.TopLabel)
		for _, c := range grp.Concepts {
			fmt.Fprintf(b, "    %-40s share %.4f%%  records %d  <%s>\n", c.Label, 100*c.Share, c.Records, c.IRI)
		}
	}

	b.WriteString("\nTHEMES NO CONCEPT COVERS (free topics)\n")
	if len(g.Themes) == 0 {
		b.WriteString("  the model has no free topics\n")
	}
	for _, t := range g.Themes {
		words := make([]string, len(t.Words))
		for i, ws := range t.Words {
			words[i] = shown(ws.Term, ws.Text)
		}
		fmt.Fprintf(b, "  theme %d  %.1f%% of tokens: %s\n", t.Topic, 100*t.Share, strings.Join(words, ", "))
		if t.Nearest != "" {
			fmt.Fprintf(b, "    closest concept: %s (Hellinger %.2f)\n", t.NearestLabel, t.Hellinger)
		}
		for _, e := range t.Examples {
			fmt.Fprintf(b, "    e.g. %s (%.0f%%): %s\n", e.ID, 100*e.Weight, e.Snippet)
		}
	}

	b.WriteString("\nCANDIDATE LABELS (corpus terms tied to a concept, not among its labels)\n")
	if len(g.Candidates) == 0 {
		b.WriteString("  none above the thresholds\n")
	}
	if g.NamesDropped > 0 {
		fmt.Fprintf(b, "  (%d terms left out: the records write them with a capital inside sentences, as names)\n", g.NamesDropped)
	}
	for _, c := range g.Candidates {
		if c.Records > 0 {
			fmt.Fprintf(b, "  %-28q for %-32s seen %d× in %d records, %.0f%% of its uses\n", shown(c.Term, c.Text), c.Label, c.Count, c.Records, 100*c.PConc)
			continue
		}
		fmt.Fprintf(b, "  %-28q for %-32s seen %d×, %.0f%% of its uses, lift %.0f\n", c.Term, c.Label, c.Count, 100*c.PConc, c.Lift)
	}

	fmt.Fprintf(b, "\nDEAD LABELS (labels the records never use): %d\n", len(g.DeadLabels))
	for i, d := range g.DeadLabels {
		if i == 30 {
			fmt.Fprintf(b, "  … and %d more (see --format json or csv)\n", len(g.DeadLabels)-30)
			break
		}
		fmt.Fprintf(b, "  %-28s of %s\n", fmt.Sprintf("%q@%s", d.Text, d.Lang), d.Label)
	}

	b.WriteString("\nUSE OVER TIME\n")
	if g.Trends == nil {
		fmt.Fprintf(b, "  absent: %s\n", g.TrendsAbsent)
	} else {
		years := make([]string, len(g.Trends.Years))
		for i, y := range g.Trends.Years {
			years[i] = strconv.Itoa(y)
		}
		fmt.Fprintf(b, "  periods: %s\n", strings.Join(years, " "))
		for _, s := range g.Trends.Series {
			fmt.Fprintf(b, "  %-8s %-32s %s  %+.2f%%/decade\n", s.Kind, s.Label, spark(s.Shares), 100*s.Slope)
		}
	}
	_, err := io.WriteString(w, visible(b.String()))
	return err
}

// visible shows the control characters of s other than newline and tab as
// Unicode control pictures (ESC as ␛) and C1 controls as U+FFFD, so that
// labels and record ids cannot send escape sequences to the terminal.
func visible(s string) string {
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

func orDash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// spark draws shares as a line of block characters.
func spark(xs []float64) string {
	const bars = "▁▂▃▄▅▆▇█"
	mx := 0.0
	for _, x := range xs {
		mx = math.Max(mx, x)
	}
	r := []rune(bars)
	var b strings.Builder
	for _, x := range xs {
		i := 0
		if mx > 0 {
			i = int(x / mx * float64(len(r)-1))
		}
		b.WriteRune(r[i])
	}
	return b.String()
}

// WriteCSV writes every section into one CSV table whose first column
// names the section: section,iri,label,term,value,count,detail.
func WriteCSV(w io.Writer, g *GapReport) error {
	cw := csv.NewWriter(w)
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }
	rows := [][]string{{"section", "iri", "label", "term", "value", "count", "detail"}}
	for _, grp := range g.Unused {
		for _, c := range grp.Concepts {
			rows = append(rows, []string{"unused", c.IRI, c.Label, "", f(c.Share), strconv.Itoa(c.Records), "under " + grp.TopLabel})
		}
	}
	for _, t := range g.Themes {
		words := make([]string, len(t.Words))
		for i, ws := range t.Words {
			words[i] = ws.Term
		}
		ex := make([]string, len(t.Examples))
		for i, e := range t.Examples {
			ex[i] = e.ID
		}
		rows = append(rows, []string{"theme", t.Nearest, t.NearestLabel, strings.Join(words, " "), f(t.Share), strconv.Itoa(t.Topic),
			"hellinger=" + f(t.Hellinger) + " examples=" + strings.Join(ex, " ")})
	}
	for _, c := range g.Candidates {
		rows = append(rows, []string{"candidate", c.IRI, c.Label, c.Term, f(c.Lift), strconv.Itoa(int(c.Count)), "p_concept=" + f(c.PConc)})
	}
	for _, d := range g.DeadLabels {
		rows = append(rows, []string{"dead", d.IRI, d.Label, d.Text, "", "0", "lang=" + d.Lang + " term=" + d.Term})
	}
	if g.Trends != nil {
		for _, s := range g.Trends.Series {
			for i, y := range g.Trends.Years {
				rows = append(rows, []string{"trend", s.IRI, s.Label, strconv.Itoa(y), f(s.Shares[i]), "", s.Kind})
			}
		}
	} else {
		rows = append(rows, []string{"trend", "", "", "", "", "", "absent: " + g.TrendsAbsent})
	}
	for _, r := range rows[1:] {
		for i := range r {
			r[i] = csvSafe(r[i])
		}
	}
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	cw.Flush()
	return cw.Error()
}

// shown is what a reader sees of a term: the records' commonest form of
// it when known, else the analysed term.
func shown(term, text string) string {
	if text != "" {
		return text
	}
	return term
}

// WriteHTML writes one self-contained page (no network): the hierarchy as
// an expandable tree coloured by use, the themes table, the suggestions and
// small inline-SVG charts of use over time.
func WriteHTML(w io.Writer, g *GapReport) error {
	return pageTmpl.Execute(w, g)
}

var pageTmpl = template.Must(template.New("page").Funcs(template.FuncMap{
	"shown": shown,
	"pct":   func(x float64) string { return strconv.FormatFloat(100*x, 'f', 2, 64) + "%" },
	"num":   func(x float64) string { return strconv.FormatFloat(x, 'f', 2, 64) },
	"heat": func(x float64) template.CSS {
		// Unused concepts (the page passes 0) are drawn apart; others from pale to deep green
		// on a log scale of their subtree share.
		if x <= 0 {
			return "background:#f3d9d6"
		}
		v := (math.Log10(x) + 5) / 4 // 1e-5 → 0, 0.1 → 1
		v = math.Max(0, math.Min(1, v))
		l := 94 - 44*v
		return template.CSS(fmt.Sprintf("background:hsl(140,45%%,%.0f%%)", l))
	},
	"chart": chartSVG,
}).Parse(pageHTML))

// chartSVG draws one series as a small line chart.
func chartSVG(s TrendSeries, years []int) template.HTML {
	const W, H, pad = 220.0, 60.0, 4.0
	mx := 0.0
	for _, v := range s.Shares {
		mx = math.Max(mx, v)
	}
	if mx == 0 {
		mx = 1
	}
	var pts []string
	for i, v := range s.Shares {
		x := pad
		if len(s.Shares) > 1 {
			x += (W - 2*pad) * float64(i) / float64(len(s.Shares)-1)
		}
		y := H - pad - (H-2*pad)*v/mx
		pts = append(pts, fmt.Sprintf("%.1f,%.1f", x, y))
	}
	first, last := "", ""
	if len(years) > 0 {
		first, last = strconv.Itoa(years[0]), strconv.Itoa(years[len(years)-1])
	}
	return template.HTML(fmt.Sprintf(`<svg class="chart" width="%.0f" height="%.0f" viewBox="0 0 %.0f %.0f" role="img" aria-label="%s"><rect width="100%%" height="100%%" fill="#fafafa"/><polyline fill="none" stroke="#2a6f4e" stroke-width="2" points="%s"/><text x="2" y="%.0f" font-size="9">%s</text><text x="%.0f" y="%.0f" font-size="9" text-anchor="end">%s</text></svg>`,
		W, H+12, W, H+12, template.HTMLEscapeString(s.Label), strings.Join(pts, " "), H+10, first, W-2, H+10, last))
}

const pageHTML = `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>termgrove gap report</title>
<style>
body{font-family:system-ui,sans-serif;margin:2rem;max-width:70rem;color:#222}
h1{font-size:1.5rem} h2{font-size:1.2rem;margin-top:2rem;border-bottom:1px solid #ccc}
table{border-collapse:collapse;width:100%} th,td{text-align:left;padding:.25rem .5rem;border-bottom:1px solid #eee;vertical-align:top}
details{margin-left:1.2rem} summary{cursor:pointer;padding:1px 4px;border-radius:3px;display:inline-block}
.leaf{margin-left:1.2rem;padding:1px 4px;border-radius:3px;display:table}
.unused{text-decoration:line-through dotted #a33}
.muted{color:#666;font-size:.9em} .charts{display:flex;flex-wrap:wrap;gap:1rem}
.charts figure{margin:0} figcaption{font-size:.85em}
</style></head><body>
<h1>Gap report</h1>
<p class="muted">Vocabulary {{.Scheme}} · {{.Concepts}} concepts · {{.FreeTopics}} free topics · {{.Tokens}} fitted tokens · {{.Records}} records read.
Colour shows each concept's share of the collection's words (with everything below it); struck-through concepts are hardly used.</p>

<h2 id="tree">The vocabulary as the collection uses it</h2>
<div id="hierarchy">
{{define "node"}}{{if .Children}}<details{{if gt .Subtree 0.02}} open{{end}}><summary style="{{if .Unused}}{{heat 0.0}}{{else}}{{heat .Subtree}}{{end}}" class="{{if .Unused}}unused{{end}}" title="{{.IRI}}">{{.Label}} <span class="muted">{{pct .Subtree}} · {{.Records}} records</span></summary>
{{range .Children}}{{template "node" .}}{{end}}</details>
{{else}}<div class="leaf {{if .Unused}}unused{{end}}" style="{{if .Unused}}{{heat 0.0}}{{else}}{{heat .Subtree}}{{end}}" title="{{.IRI}}">{{.Label}} <span class="muted">{{pct .Subtree}} · {{.Records}} records</span></div>
{{end}}{{end}}
{{range .Tree}}{{template "node" .}}{{end}}
</div>

<h2 id="unused">Concepts the collection never or hardly uses ({{pct .UnusedShare}} of the vocabulary)</h2>
{{if .Unused}}<table id="unused-table"><tr><th>Top concept</th><th>Concept</th><th>Share</th><th>Records</th></tr>
{{range .Unused}}{{$top := .TopLabel}}{{range .Concepts}}<tr><td>{{$top}}</td><td title="{{.IRI}}">{{.Label}}</td><td>{{pct .Share}}</td><td>{{.Records}}</td></tr>
{{end}}{{end}}</table>{{else}}<p>Every concept is used.</p>{{end}}

<h2 id="themes">Themes no concept covers</h2>
{{if .Themes}}<table id="themes-table"><tr><th>Theme</th><th>Share</th><th>Top words</th><th>Closest concept</th><th>Example records</th></tr>
{{range .Themes}}<tr><td>{{.Topic}}</td><td>{{pct .Share}}</td><td>{{range $i, $w := .Words}}{{if $i}}, {{end}}{{shown $w.Term $w.Text}}{{end}}</td>
<td title="{{.Nearest}}">{{.NearestLabel}} <span class="muted">(H {{num .Hellinger}})</span></td>
<td>{{range .Examples}}<div><b>{{.ID}}</b> {{.Title}} <span class="muted">{{.Snippet}}</span></div>{{end}}</td></tr>
{{end}}</table>{{else}}<p>The model has no free topics.</p>{{end}}

<h2 id="candidates">Suggested labels</h2>
{{if .Candidates}}<table id="candidates-table"><tr><th>Term</th><th>For concept</th><th>Seen</th><th>Records</th><th>Share of its uses</th><th>Lift</th></tr>
{{range .Candidates}}<tr><td title="term: {{.Term}}">{{shown .Term .Text}}</td><td title="{{.IRI}}">{{.Label}}</td><td>{{.Count}}</td><td>{{.Records}}</td><td>{{pct .PConc}}</td><td>{{num .Lift}}</td></tr>
{{end}}</table>{{else}}<p>No term passes the thresholds.</p>{{end}}

<h2 id="dead">Labels never seen in the collection ({{len .DeadLabels}})</h2>
{{if .DeadLabels}}<table id="dead-table"><tr><th>Label</th><th>Concept</th></tr>
{{range .DeadLabels}}<tr><td lang="{{.Lang}}">{{.Text}}</td><td title="{{.IRI}}">{{.Label}}</td></tr>
{{end}}</table>{{end}}

<h2 id="trends">Use over time</h2>
{{if .Trends}}{{$y := .Trends.Years}}<div class="charts" id="trend-charts">
{{range .Trends.Series}}<figure>{{chart . $y}}<figcaption><b>{{.Label}}</b> · {{.Kind}} ({{num .Slope}} per decade, as a share)</figcaption></figure>
{{end}}</div>{{else}}<p id="trends-absent">Not shown: {{.TrendsAbsent}}</p>{{end}}
<p class="muted">Suggestions are for review by people who know the collection; shares are the model's estimates, not counts of indexing.</p>
</body></html>
`

// csvSafe keeps a spreadsheet from running a cell as a formula: text that
// starts with =, +, @, a tab or a carriage return, or with - not followed by
// a digit, gets a leading apostrophe (OWASP's advice on CSV injection).
func csvSafe(v string) string {
	if v == "" {
		return v
	}
	switch v[0] {
	case '=', '+', '@', '\t', '\r':
		return "'" + v
	case '-':
		if len(v) > 1 && (v[1] >= '0' && v[1] <= '9' || v[1] == '.') {
			return v
		}
		return "'" + v
	}
	return v
}
