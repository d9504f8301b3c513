// Package terms is the text analysis shared by vocabulary labels and records.
//
// A text is cut into words by Unicode word segmentation (UAX #29, Unicode
// Standard Annex #29), each word is normalised (NFKC, then Unicode case
// folding), apostrophes are handled ("l'église" -> "église", "John's" ->
// "john"), stopwords of the text's language are dropped and the rest is
// stemmed by the language's Snowball stemmer (de en es fi fr it nl pt ru sv;
// other languages are analysed language-neutrally: no stopwords, no
// stemming). Numbers stay terms ("1848"); a hyphenated word gives both parts
// ("screen-reading" -> "screen", "read"). Finally the longest multi-word
// label phrases are found (Aho–Corasick over word terms) and each becomes one
// token spanning its words:
//
//	"The Screen-Readers of 1848" -> [4:18 "screen reader"] [22:26 "1848"]
//
// CONTRACT (other packages code against these signatures; keep them):
//
//	a, err := terms.New(terms.Options{Languages: []string{"en", "fr"}}, terms.NewDictionary())
//	id := a.AddPhrase([]string{"screen", "reader"}) // phrase term "screen reader"
//	toks, stats := a.Analyze(text, toks[:0], true)   // true: unknown terms get new ids
//
// A phrase term's string is its word terms joined by one space; a plain word
// term never contains a space.
package terms

// Options configure an Analyzer; the zero value analyses English.
// Options are stored in a model file (encoding/gob), so keep them plain data.
type Options struct {
	// Languages are BCP 47 tags; the first is the main language of records.
	Languages []string
	// MaxWordBytes: longer word terms are skipped (counted in Stats.Long);
	// 0 means DefaultMaxWordBytes.
	MaxWordBytes int
}

// Token is one analysed word or phrase of a text.
// Start and End are byte offsets into the original text (text[Start:End] is
// the surface form; a phrase spans all its words). ID is the term's id in the
// Dictionary, or -1 when the term is unknown and Analyze was told not to grow.
type Token struct {
	Start, End int
	Term       string
	ID         int32
}

// Stats counts what analysis met in one text.
type Stats struct {
	Invalid  int  // invalid UTF-8 sequences replaced by U+FFFD
	Words    int  // word tokens before stopword removal
	Fallback bool // language not supported: language-neutral analysis used
	Long     int  // words skipped for being longer than Options.MaxWordBytes
}

// Dictionary maps term strings to dense ids 0..Len()-1.
type Dictionary struct {
	terms []string
	ids   map[string]int32
}

// NewDictionary returns an empty dictionary.
func NewDictionary() *Dictionary { return &Dictionary{ids: map[string]int32{}} }

// DictionaryOf rebuilds a dictionary from its terms in id order.
func DictionaryOf(terms []string) *Dictionary {
	d := &Dictionary{terms: terms, ids: make(map[string]int32, len(terms))}
	for i, t := range terms {
		d.ids[t] = int32(i)
	}
	return d
}

// Add returns the id of term, adding it when new.
func (d *Dictionary) Add(term string) int32 {
	if id, ok := d.ids[term]; ok {
		return id
	}
	id := int32(len(d.terms))
	d.terms = append(d.terms, term)
	d.ids[term] = id
	return id
}

// ID returns the id of term.
func (d *Dictionary) ID(term string) (int32, bool) { id, ok := d.ids[term]; return id, ok }

// Term returns the string of id.
func (d *Dictionary) Term(id int32) string { return d.terms[id] }

// Len is the number of terms.
func (d *Dictionary) Len() int { return len(d.terms) }

// Terms returns the terms in id order (shared, do not modify).
func (d *Dictionary) Terms() []string { return d.terms }
