package terms

import (
	"strings"
	"testing"
	"unicode/utf8"
)

// checkTokens verifies the invariants every analysis keeps: spans inside
// the text, in order, not overlapping, on UTF-8 boundaries of valid input;
// terms non-empty, valid UTF-8, no space in a word term.
func checkTokens(t *testing.T, text string, toks []Token, st Stats) {
	t.Helper()
	prev := 0
	for i, tk := range toks {
		if tk.Start < prev || tk.End <= tk.Start || tk.End > len(text) {
			t.Fatalf("%q: token %d span [%d,%d) after %d", text, i, tk.Start, tk.End, prev)
		}
		prev = tk.End
		if tk.Term == "" || !utf8.ValidString(tk.Term) {
			t.Fatalf("%q: token %d term %q", text, i, tk.Term)
		}
		if utf8.ValidString(text) && !utf8.ValidString(text[tk.Start:tk.End]) {
			t.Fatalf("%q: token %d splits a character", text, i)
		}
	}
	if len(toks) > st.Words {
		t.Fatalf("%q: %d tokens from %d words", text, len(toks), st.Words)
	}
	if utf8.ValidString(text) != (st.Invalid == 0) {
		t.Fatalf("%q: Invalid = %d", text, st.Invalid)
	}
}

func TestEmptyText(t *testing.T) {
	a := newAnalyzer(t, "en")
	a.AddPhrase([]string{"screen", "reader"})
	for _, text := range []string{"", " ", "\n\n", "\xff"} {
		toks, st := a.Analyze(text, nil, true)
		if len(toks) != 0 || st.Words != 0 {
			t.Errorf("%q: %+v %+v", text, toks, st)
		}
		checkTokens(t, text, toks, st)
	}
}

func FuzzAnalyze(f *testing.F) {
	for _, s := range []string{"", "The Screen-Readers of 1848", "l'église d’Orléans", "ＡＢＣ ① ﬁ", "caf\xc3 \xff",
		"a.b.c 1,000.5 _x_ rock'n'roll", "\u0301a \u200d😀 中文 ア"} {
		f.Add(s, "en")
		f.Add(s, "fr")
	}
	f.Add("x", "not a tag!")
	a, _ := New(Options{Languages: []string{"en", "fr"}}, nil)
	for _, p := range []string{"screen reader", "new york city", "a b", "b c d"} {
		a.AddPhrase(strings.Fields(p))
	}
	f.Fuzz(func(t *testing.T, text, lang string) {
		toks, st := a.AnalyzeLang(text, lang, nil, true)
		checkTokens(t, text, toks, st)
		toks2, _ := a.AnalyzeLang(text, lang, nil, false)
		if len(toks2) != len(toks) {
			t.Fatalf("%q: grow=false gives %d tokens, grow=true %d", text, len(toks2), len(toks))
		}
	})
}
