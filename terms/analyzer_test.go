package terms

import (
	"errors"
	"fmt"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/blevesearch/snowballstem"
)

func newAnalyzer(t testing.TB, langs ...string) *Analyzer {
	t.Helper()
	a, err := New(Options{Languages: langs}, nil)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// terms lists the token terms of text.
func termsOf(a *Analyzer, lang, text string) []string {
	toks, _ := a.AnalyzeLang(text, lang, nil, true)
	out := make([]string, len(toks))
	for i, tk := range toks {
		out[i] = tk.Term
	}
	return out
}

func TestAnalyzeTerms(t *testing.T) {
	a := newAnalyzer(t, "en", "fr")
	cases := []struct {
		lang, text string
		want       []string
	}{
		// Common practice, no source: what an indexer is expected to keep.
		{"en", "The Screen-Reading software", []string{"screen", "read", "softwar"}},
		{"en", "Parish records of 1848 and 1,000 acres", []string{"parish", "record", "1848", "1,000", "acr"}},
		{"en", "John's books", []string{"john", "book"}},
		{"en", "don't stop", []string{"stop"}},                    // "don't" is an English stopword
		{"en", "O'Neill", []string{"oneil"}},                      // inner apostrophe joined
		{"fr", "l'église d'Orléans", []string{"églis", "orléan"}}, // elision dropped
		{"fr", "L’Église", []string{"églis"}},                     // typographic apostrophe, capitals
		{"fr", "qu'il", nil}, // "qu'" elided, "il" a stopword
		{"en", "", nil},
		{"en", " \t\n ... --- !!!", nil},
		{"de", "Die Straße", []string{"strass"}}, // ß folds to ss; "die" a stopword
	}
	for _, c := range cases {
		got := termsOf(a, c.lang, c.text)
		if strings.Join(got, "|") != strings.Join(c.want, "|") {
			t.Errorf("%s %q: terms %q, want %q", c.lang, c.text, got, c.want)
		}
	}
}

func TestNFKC(t *testing.T) {
	// Source: Unicode Standard Annex #15 (normalization forms) and the
	// compatibility decomposition mappings of UnicodeData.txt: U+FB01 LATIN
	// SMALL LIGATURE FI -> "fi"; U+FF21.. FULLWIDTH LATIN CAPITAL LETTER ->
	// ASCII; U+2460 CIRCLED DIGIT ONE -> "1"; U+338F SQUARE KG -> "kg";
	// U+216B ROMAN NUMERAL TWELVE -> "XII"; U+FF76 HALFWIDTH KATAKANA KA ->
	// U+30AB; U+00B2 SUPERSCRIPT TWO -> "2". Case folding per CaseFolding.txt.
	cases := map[string]string{
		"ﬁsh":   "fish",
		"ＡＢＣ":   "abc",
		"①":     "1",
		"㎏":     "kg",
		"Ⅻ":     "xii",
		"ｶ":     "カ",
		"x²":    "x2",
		"CAFÉ":  "café",
		"ǅemal": "džemal",
	}
	var n normalizer
	for in, want := range cases {
		if got := string(n.fold(nil, in)); got != want {
			t.Errorf("fold(%q) = %q, want %q", in, got, want)
		}
	}
	// And through the analyzer (language-neutral: no stemming).
	a := newAnalyzer(t, "zxx")
	if got := termsOf(a, "", "ﬁsh ＡＢＣ ①"); strings.Join(got, " ") != "fish abc 1" {
		t.Errorf("analyzer NFKC: %q", got)
	}
}

func TestSnowballSamples(t *testing.T) {
	// From memory: pairs from the sample vocabularies (voc.txt) and their
	// stemmed output (output.txt) shown on the Snowball project's pages for
	// the English (Porter2), French and German stemmers, snowballstem.org.
	samples := map[string][][2]string{
		"en": {
			{"consign", "consign"}, {"consigned", "consign"}, {"consigning", "consign"}, {"consignment", "consign"},
			{"consist", "consist"}, {"consisted", "consist"}, {"consistency", "consist"}, {"consistent", "consist"},
			{"consistently", "consist"}, {"consisting", "consist"}, {"consists", "consist"}, {"consolation", "consol"},
			{"consolations", "consol"}, {"consolatory", "consolatori"}, {"console", "consol"}, {"consoled", "consol"},
			{"consolidate", "consolid"}, {"consolidated", "consolid"}, {"consoling", "consol"}, {"consonant", "conson"},
			{"conspicuous", "conspicu"}, {"conspiracy", "conspiraci"}, {"conspirator", "conspir"}, {"constable", "constabl"},
			{"knack", "knack"}, {"knackeries", "knackeri"}, {"kneaded", "knead"}, {"kneeling", "kneel"},
			{"knife", "knife"}, {"knightly", "knight"}, {"knitting", "knit"}, {"knives", "knive"}, {"knocker", "knocker"},
		},
		"fr": {
			{"continu", "continu"}, {"continua", "continu"}, {"continuait", "continu"}, {"continuant", "continu"},
			{"continuation", "continu"}, {"continue", "continu"}, {"continué", "continu"}, {"continuel", "continuel"},
			{"continuelle", "continuel"}, {"continuellement", "continuel"}, {"continuer", "continu"}, {"continuité", "continu"},
			{"main", "main"}, {"mains", "main"}, {"maintenant", "mainten"}, {"maire", "mair"}, {"mairie", "mair"},
			{"maison", "maison"}, {"maisons", "maison"}, {"majesté", "majest"}, {"majestueux", "majestu"},
			{"malade", "malad"}, {"maladie", "malad"}, {"maladroitement", "maladroit"},
		},
		"de": {
			{"aufeinanderfolge", "aufeinanderfolg"}, {"aufeinanderfolgen", "aufeinanderfolg"},
			{"aufeinanderfolgenden", "aufeinanderfolg"}, {"aufenthalt", "aufenthalt"}, {"aufenthaltes", "aufenthalt"},
			{"auferstehung", "aufersteh"}, {"katze", "katz"}, {"katzen", "katz"}, {"kaufen", "kauf"}, {"käufer", "kauf"},
		},
	}
	env := snowballstem.NewEnv("")
	for lang, pairs := range samples {
		for _, p := range pairs {
			env.SetCurrent(p[0])
			stemmers[lang](env)
			if got := env.Current(); got != p[1] {
				t.Errorf("%s stem(%q) = %q, want %q", lang, p[0], got, p[1])
			}
		}
	}
	// The analyzer applies the same stemmer.
	a := newAnalyzer(t, "fr")
	if got := termsOf(a, "", "Continuellement"); len(got) != 1 || got[0] != "continuel" {
		t.Errorf("analyzer fr: %q", got)
	}
}

func TestInvalidUTF8(t *testing.T) {
	a := newAnalyzer(t, "en")
	text := "caf\xc3 bad\xff\xfeword ok"
	toks, st := a.Analyze(text, nil, true)
	if st.Invalid != 3 {
		t.Errorf("Invalid = %d, want 3", st.Invalid)
	}
	want := []string{"caf", "bad", "word", "ok"}
	if len(toks) != len(want) {
		t.Fatalf("tokens %+v", toks)
	}
	for i, tk := range toks {
		if tk.Term != want[i] || text[tk.Start:tk.End] != want[i] {
			t.Errorf("token %d: %q at %q, want %q", i, tk.Term, text[tk.Start:tk.End], want[i])
		}
	}
}

func TestOffsetsIndexOriginal(t *testing.T) {
	a := newAnalyzer(t, "en")
	text := "ＦＵＬＬ width, ﬁne \xff Café’s"
	toks, _ := a.Analyze(text, nil, true)
	surf := []string{"ＦＵＬＬ", "width", "ﬁne", "Café’s"}
	if len(toks) != len(surf) {
		t.Fatalf("tokens %+v", toks)
	}
	for i, tk := range toks {
		if text[tk.Start:tk.End] != surf[i] {
			t.Errorf("token %d spans %q, want %q", i, text[tk.Start:tk.End], surf[i])
		}
	}
}

func TestLanguageTags(t *testing.T) {
	a, err := New(Options{Languages: []string{"en-GB", "fr-CA", "not a tag!", "ja"}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if n := a.Notices(); len(n) != 2 || !strings.Contains(n[0], "malformed") || !strings.Contains(n[1], "no stemmer") {
		t.Errorf("notices %q", n)
	}
	if b, err := a.Language(""); b != "en" || err != nil {
		t.Errorf("main language %q %v", b, err)
	}
	if b, err := a.Language("fr-CA"); b != "fr" || err != nil {
		t.Errorf("fr-CA -> %q %v", b, err)
	}
	for _, tag := range []string{"en_US!!", "zz-zz-zz-zz-zz-zz-zz-zz-zz-zz", "ja", "x"} {
		toks, st := a.AnalyzeLang("The Readers", tag, nil, true)
		if !st.Fallback {
			t.Errorf("%q: no fallback", tag)
		}
		// Neutral: no stopwords, no stemming.
		if len(toks) != 2 || toks[0].Term != "the" || toks[1].Term != "readers" {
			t.Errorf("%q: %+v", tag, toks)
		}
		if _, err := a.Language(tag); !errors.Is(err, ErrLanguage) {
			t.Errorf("%q: err %v", tag, err)
		}
	}
	// A malformed main language: New works, Analyze falls back.
	b, err := New(Options{Languages: []string{"??"}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, st := b.Analyze("x", nil, true); !st.Fallback {
		t.Error("malformed main language: no fallback")
	}
}

func TestPhrasesLongestMatch(t *testing.T) {
	// Common practice, no source: hand cases for leftmost/longest phrase
	// selection over an Aho–Corasick automaton (Aho & Corasick 1975).
	a := newAnalyzer(t, "zxx") // neutral: terms are the words
	for _, p := range []string{"screen reader", "screen reader software", "reader software", "new york", "york city", "new york city hall", "a b", "b c d", "c d"} {
		a.AddPhrase(strings.Fields(p))
	}
	cases := []struct{ text, want string }{
		{"a screen reader", "a|screen reader"},
		{"screen reader software", "screen reader software"},
		{"screen, reader software", "screen|reader software"},    // comma stops phrases
		{"screen-reader", "screen reader"},                       // hyphen does not
		{"new york city", "new york|city"},                       // equal length: leftmost wins
		{"new york city hall today", "new york city hall|today"}, // longest wins
		{"a b c d", "a|b c d"},                                   // longer overlapping one wins
		{"a b. c d", "a b|c d"},
		{"screen", "screen"},
		{"reader screen reader", "reader|screen reader"},
	}
	for _, c := range cases {
		toks, _ := a.Analyze(c.text, nil, true)
		var got []string
		for _, tk := range toks {
			got = append(got, tk.Term)
			if id, ok := a.Dict().ID(tk.Term); !ok || id != tk.ID {
				t.Errorf("%q: token %q id %d, dictionary %d", c.text, tk.Term, tk.ID, id)
			}
		}
		if strings.Join(got, "|") != c.want {
			t.Errorf("%q: %q, want %q", c.text, strings.Join(got, "|"), c.want)
		}
	}
	// A phrase token spans its words in the original text.
	text := "Visit New  York-City Hall!"
	toks, _ := a.Analyze(text, nil, false)
	if len(toks) != 2 || text[toks[1].Start:toks[1].End] != "New  York-City Hall" || toks[1].Term != "new york city hall" {
		t.Errorf("span: %+v", toks)
	}
}

func TestPhrasesFromDictionaryAndLate(t *testing.T) {
	d := DictionaryOf([]string{"screen", "reader", "screen reader"})
	a, err := New(Options{}, d)
	if err != nil {
		t.Fatal(err)
	}
	toks, _ := a.Analyze("Screen readers", nil, false)
	if len(toks) != 1 || toks[0].ID != 2 {
		t.Fatalf("phrase from dictionary: %+v", toks)
	}
	// AddPhrase after analysis: the matcher is rebuilt before the next call.
	id := a.AddPhrase([]string{"braill", "display"})
	toks, _ = a.Analyze("braille displays and screen readers", nil, false)
	if len(toks) != 2 || toks[0].ID != id || toks[1].ID != 2 {
		t.Fatalf("late phrase: %+v", toks)
	}
	// Unknown words without grow: ID -1, dictionary unchanged.
	n := a.Dict().Len()
	toks, _ = a.Analyze("unknown words", nil, false)
	if len(toks) != 2 || toks[0].ID != -1 || a.Dict().Len() != n {
		t.Fatalf("no grow: %+v", toks)
	}
}

func TestLongWordsAndLargeRecord(t *testing.T) {
	a := newAnalyzer(t, "en")
	// One 50 MB record of a single "word" and of punctuation: linear time,
	// no token, counted as long.
	big := strings.Repeat("a", 50<<20)
	start := time.Now()
	toks, st := a.Analyze(big, nil, false)
	if len(toks) != 0 || st.Long != 1 || st.Words != 1 {
		t.Errorf("50 MB word: %d tokens, %+v", len(toks), st)
	}
	toks, _ = a.Analyze(strings.Repeat("-,", 25<<20), toks[:0], false)
	if len(toks) != 0 {
		t.Errorf("50 MB punctuation: %d tokens", len(toks))
	}
	// 50 MB of non-ASCII letters goes through uniseg.
	toks, st = a.Analyze(strings.Repeat("é", 25<<20), toks[:0], false)
	if len(toks) != 0 || st.Long != 1 {
		t.Errorf("50 MB non-ASCII word: %d tokens %+v", len(toks), st)
	}
	if d := time.Since(start); d > 60*time.Second {
		t.Errorf("50 MB records took %v", d)
	}
}

func TestConcurrentAnalyze(t *testing.T) {
	a := newAnalyzer(t, "en", "fr")
	a.AddPhrase([]string{"screen", "reader"})
	texts := []string{"Screen readers and braille", "L'église de la paroisse", "1848 parish records, screen-reader"}
	want := make([]string, len(texts))
	for i, s := range texts {
		toks, _ := a.AnalyzeLang(s, []string{"en", "fr", "en"}[i], nil, true)
		want[i] = fmt.Sprint(toks)
	}
	var wg sync.WaitGroup
	errs := make(chan string, 8)
	for g := 0; g < 8; g++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var toks []Token
			for n := 0; n < 200; n++ {
				i := n % len(texts)
				toks, _ = a.AnalyzeLang(texts[i], []string{"en", "fr", "en"}[i], toks[:0], false)
				if got := fmt.Sprint(toks); got != want[i] {
					errs <- got
					return
				}
			}
		}()
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Errorf("concurrent result differs: %s", e)
	}
}

func TestStopwordLists(t *testing.T) {
	for _, lang := range Supported() {
		ls, err := loadSpec(lang)
		if err != nil {
			t.Fatal(err)
		}
		if len(ls.stop) < 50 {
			t.Errorf("%s: only %d stopwords", lang, len(ls.stop))
		}
	}
	// Source: Snowball English stop list (contains "the", "and", "don't"),
	// French (contains "le", "été"); content words are not in them.
	en, _ := loadSpec("en")
	fr, _ := loadSpec("fr")
	if !en.stop["the"] || !en.stop["don't"] || en.stop["church"] || !fr.stop["été"] || fr.stop["église"] {
		t.Error("stopword membership wrong")
	}
}

func TestFullWordCache(t *testing.T) {
	text := "Parish records of the valley mills, 1848: mills and records, farms, churches and schools."
	a := newAnalyzer(t, "en")
	want, _ := a.Analyze(text, nil, true)
	defer func(n int) { cacheLimit = n }(cacheLimit)
	cacheLimit = 3
	b := newAnalyzer(t, "en")
	for pass := 0; pass < 2; pass++ {
		got, _ := b.Analyze(text, nil, pass == 0)
		if fmt.Sprint(got) != fmt.Sprint(want) {
			t.Fatalf("pass %d with a full cache:\n%v\nwant\n%v", pass, got, want)
		}
	}
}

func TestPhraseAcrossStopwords(t *testing.T) {
	// Common practice, no source: labels and texts lose the same stopwords,
	// so a label with a stopword inside still meets the text.
	a := newAnalyzer(t, "en")
	toks, _ := a.AnalyzeWords("History of Science", "en", nil, true)
	var words []string
	for _, tk := range toks {
		words = append(words, tk.Term)
	}
	id := a.AddPhrase(words)
	text := "A history of the sciences, and history; science."
	toks, _ = a.Analyze(text, nil, false)
	if len(toks) != 3 || toks[0].ID != id || text[toks[0].Start:toks[0].End] != "history of the sciences" ||
		toks[1].Term != "histori" || toks[2].Term != "scienc" {
		t.Errorf("tokens %+v", toks)
	}
}

func TestAddPhraseEdgeCases(t *testing.T) {
	a := newAnalyzer(t, "zxx")
	if id := a.AddPhrase(nil); id != -1 {
		t.Errorf("empty phrase: id %d", id)
	}
	if id := a.AddPhrase([]string{"", " "}); id != -1 {
		t.Errorf("blank phrase: id %d", id)
	}
	one := a.AddPhrase([]string{"", "mill"})
	if a.Dict().Term(one) != "mill" || a.Phrases() != 0 {
		t.Errorf("single word: %q, %d phrases", a.Dict().Term(one), a.Phrases())
	}
	two := a.AddPhrase([]string{"corn mill"})
	if a.AddPhrase([]string{"corn", "", "mill"}) != two || a.Dict().Term(two) != "corn mill" || a.Phrases() != 1 {
		t.Errorf("phrase ids differ or phrase repeated: %d phrases", a.Phrases())
	}
}
