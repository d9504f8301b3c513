package terms_test

import (
	"fmt"

	"termgrove/terms"
)

func ExampleAnalyzer_Analyze() {
	a, _ := terms.New(terms.Options{Languages: []string{"en", "fr"}}, terms.NewDictionary())
	a.AddPhrase([]string{"screen", "reader"})
	text := "The Screen-Readers of 1848"
	toks, stats := a.Analyze(text, nil, true)
	for _, t := range toks {
		fmt.Printf("%d:%d %q -> %q\n", t.Start, t.End, text[t.Start:t.End], t.Term)
	}
	fmt.Println(stats.Words, "words")
	toks, _ = a.AnalyzeLang("l'église", "fr", toks[:0], true)
	fmt.Println(toks[0].Term)
	// Output:
	// 4:18 "Screen-Readers" -> "screen reader"
	// 22:26 "1848" -> "1848"
	// 5 words
	// églis
}
