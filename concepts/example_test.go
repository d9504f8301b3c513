package concepts_test

import (
	"fmt"
	"strings"

	"termgrove/concepts"
)

func ExampleLoad() {
	s, err := concepts.Load("../testdata/small.ttl", concepts.LoadOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	i, _ := s.Lookup("https://example.org/garden/nasturtium")
	c := &s.Concepts[i]
	fmt.Println(c.PrefLabel("fr"), s.Depth(i))
	for _, path := range s.PathsToTop(i) {
		var names []string
		for _, p := range path {
			names = append(names, s.Concepts[p].PrefLabel("en"))
		}
		fmt.Println(strings.Join(names, " / "))
	}
	fmt.Println(len(s.Check(concepts.CheckOptions{Langs: []string{"en", "fr"}})), "problems")
	// Output:
	// capucine 2
	// plants / flowers / nasturtium
	// plants / herbs / nasturtium
	// 0 problems
}
