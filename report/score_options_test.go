package report

import (
	"testing"

	"termgrove/annotate"
	"termgrove/internal/records"
)

// optsAnnotator records the options of each call.
type optsAnnotator struct{ got map[string]annotate.Options }

func (o optsAnnotator) Annotate(id, text string, opt annotate.Options) (*annotate.Result, error) {
	o.got[id] = opt
	return fakeAnnotator{}.Annotate(id, text, opt)
}

// TestScorePassesFoldInAndLanguage: the fold-in settings reach every
// annotation, Top is the largest k, and each record is annotated in its own
// language. Common practice, no source.
func TestScorePassesFoldInAndLanguage(t *testing.T) {
	recs := []records.Record{
		{ID: "a", Text: "mill", Subjects: []string{"http://ex.org/milling"}, Lang: "fr"},
		{ID: "b", Text: "railway", Subjects: []string{"http://ex.org/transport"}},
	}
	a := optsAnnotator{got: map[string]annotate.Options{}}
	_, err := Score(gapModel(), a, recs, ScoreOptions{Annotate: annotate.Options{BurnIn: 7, Samples: 33, Language: "en"}})
	if err != nil {
		t.Fatal(err)
	}
	for id, lang := range map[string]string{"a": "fr", "b": "en"} {
		o := a.got[id]
		if o.BurnIn != 7 || o.Samples != 33 || o.Top != 10 || o.Language != lang {
			t.Errorf("record %s annotated with %+v; want burn-in 7, samples 33, top 10, language %s", id, o, lang)
		}
	}
}
