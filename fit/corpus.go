package fit

import (
	"strconv"

	"termgrove/concepts"
	"termgrove/model"
	"termgrove/terms"
)

// CorpusBuilder turns records into a Corpus: it analyses their text with the
// analyzer the prior was built with (new terms grow its dictionary) and maps
// subject IRIs to concept indices. Build it with the prior's analyzer and
// scheme, call Add per record, then Finish.
type CorpusBuilder struct {
	Analyzer *terms.Analyzer
	Scheme   *concepts.Scheme

	// Counts of what Add met.
	Records         int // records added with at least one token
	Empty           int // records with no token after analysis (not added)
	UnknownSubjects int // subject IRIs not in the scheme (dropped)
	InvalidUTF8     int // invalid UTF-8 sequences replaced
	Fallback        int // records analysed language-neutrally

	corpus Corpus
	toks   []terms.Token // reused across records
}

// Add analyses one record. It returns the subject IRIs that are not
// concepts of the scheme (they are dropped; a record whose subjects are all
// unknown is unrestricted). A record left without tokens is not added and
// Add returns false.
func (b *CorpusBuilder) Add(id, text string, subjects []string, date string) (added bool, unknown []string) {
	return b.AddLang(id, text, "", subjects, date)
}

// AddLang is Add for a record in language lang (a BCP 47 tag, "" = the
// analyzer's main language): its stopwords and stemmer are that language's,
// so a French record meets the French labels' terms.
func (b *CorpusBuilder) AddLang(id, text, lang string, subjects []string, date string) (added bool, unknown []string) {
	toks, stats := b.Analyzer.AnalyzeLang(text, lang, b.toks[:0], true)
	b.toks = toks
	b.InvalidUTF8 += stats.Invalid
	if stats.Fallback {
		b.Fallback++
	}
	d := Doc{ID: id, Year: yearOf(date)}
	for _, s := range subjects {
		k, ok := -1, false
		if b.Scheme != nil {
			k, ok = b.Scheme.Lookup(s)
		}
		if !ok {
			unknown = append(unknown, s)
			b.UnknownSubjects++
			continue
		}
		d.Subjects = append(d.Subjects, int32(k))
	}
	end := model.LeadEnd(text)
	for _, t := range toks {
		if t.ID >= 0 {
			d.Words = append(d.Words, t.ID)
			if t.Start < end {
				d.Lead++
			}
		}
	}
	if len(d.Words) == 0 {
		b.Empty++
		return false, unknown
	}
	b.Records++
	b.corpus.Docs = append(b.corpus.Docs, d)
	return true, unknown
}

// Finish returns the corpus; W is the analyzer's dictionary size.
func (b *CorpusBuilder) Finish() *Corpus {
	c := b.corpus
	c.W = b.Analyzer.Dict().Len()
	return &c
}

// yearOf reads the leading four-digit year of a date ("1999-05-01" → 1999).
func yearOf(date string) int {
	if len(date) < 4 {
		return 0
	}
	y, err := strconv.Atoi(date[:4])
	if err != nil {
		return 0
	}
	return y
}
