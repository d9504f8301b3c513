// Package annotate infers the concepts of a new text from a fitted model by
// fold-in Gibbs sampling with the topic-word tables fixed.
//
// CONTRACT (api, report, cmd code against these names; keep them):
//
//	a, err := annotate.New(m)
//	res, err := a.Annotate("rec-1", text, annotate.Options{Top: 10})
package annotate

// SubjectMode says how known subjects in a request are used.
type SubjectMode int

const (
	// Restrict samples only from the known subjects plus the free topics.
	Restrict SubjectMode = iota
	// Boost multiplies the known subjects' α by a factor.
	Boost
)

// Options for one annotation; zero values mean defaults.
type Options struct {
	Top          int     // concepts returned (default 10)
	MinScore     float64 // drop concepts scoring below
	Subjects     []string
	SubjectMode  SubjectMode
	IncludeWords bool
	Language     string // BCP 47 tag of the text; "" = the model's main language
}

// Result is the annotation of one text. JSON names are part of the CLI format.
type Result struct {
	ID        string    `json:"id"`
	Concepts  []Concept `json:"concepts"`
	Uncovered float64   `json:"uncovered"`
	Words     []Word    `json:"words,omitempty"`
	Tokens    int       `json:"tokens"`
	Language  string    `json:"language,omitempty"`
	Fallback  bool      `json:"fallback,omitempty"` // language-neutral analysis used
	Invalid   int       `json:"invalid_utf8,omitempty"`
}

// Concept is one ranked concept with its hierarchy path and supporting terms.
type Concept struct {
	IRI     string     `json:"iri"`
	Label   string     `json:"label"`
	Score   float64    `json:"score"`
	Path    []PathNode `json:"path"`
	Support []Support  `json:"support,omitempty"`
}

// PathNode is one concept on the path from a top concept down.
type PathNode struct {
	IRI   string  `json:"iri"`
	Label string  `json:"label"`
	Score float64 `json:"score"`
}

// Support is a term supporting a concept with its weight.
type Support struct {
	Term   string  `json:"term"`
	Weight float64 `json:"weight"`
}

// Word is one analysed occurrence with the concept it most supports.
type Word struct {
	Start   int     `json:"start"`
	End     int     `json:"end"`
	Text    string  `json:"text"`
	Term    string  `json:"term"`
	Concept string  `json:"concept"` // IRI, or "" when a free topic wins
	P       float64 `json:"p"`
}
