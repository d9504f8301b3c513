package rdf

import "testing"

func TestResolveIRI(t *testing.T) {
	// Source: RFC 3986 §5.4.1 (normal examples) and §5.4.2 (abnormal
	// examples, strict parser), base "http://a/b/c/d;p?q".
	const base = "http://a/b/c/d;p?q"
	tests := []struct{ ref, want string }{
		// §5.4.1
		{"g:h", "g:h"},
		{"g", "http://a/b/c/g"},
		{"./g", "http://a/b/c/g"},
		{"g/", "http://a/b/c/g/"},
		{"/g", "http://a/g"},
		{"//g", "http://g"},
		{"?y", "http://a/b/c/d;p?y"},
		{"g?y", "http://a/b/c/g?y"},
		{"#s", "http://a/b/c/d;p?q#s"},
		{"g#s", "http://a/b/c/g#s"},
		{"g?y#s", "http://a/b/c/g?y#s"},
		{";x", "http://a/b/c/;x"},
		{"g;x", "http://a/b/c/g;x"},
		{"g;x?y#s", "http://a/b/c/g;x?y#s"},
		{"", "http://a/b/c/d;p?q"},
		{".", "http://a/b/c/"},
		{"./", "http://a/b/c/"},
		{"..", "http://a/b/"},
		{"../", "http://a/b/"},
		{"../g", "http://a/b/g"},
		{"../..", "http://a/"},
		{"../../", "http://a/"},
		{"../../g", "http://a/g"},
		// §5.4.2
		{"../../../g", "http://a/g"},
		{"../../../../g", "http://a/g"},
		{"/./g", "http://a/g"},
		{"/../g", "http://a/g"},
		{"g.", "http://a/b/c/g."},
		{".g", "http://a/b/c/.g"},
		{"g..", "http://a/b/c/g.."},
		{"..g", "http://a/b/c/..g"},
		{"./../g", "http://a/b/g"},
		{"./g/.", "http://a/b/c/g/"},
		{"g/./h", "http://a/b/c/g/h"},
		{"g/../h", "http://a/b/c/h"},
		{"g;x=1/./y", "http://a/b/c/g;x=1/y"},
		{"g;x=1/../y", "http://a/b/c/y"},
		{"g?y/./x", "http://a/b/c/g?y/./x"},
		{"g?y/../x", "http://a/b/c/g?y/../x"},
		{"g#s/./x", "http://a/b/c/g#s/./x"},
		{"g#s/../x", "http://a/b/c/g#s/../x"},
		{"http:g", "http:g"}, // strict parser
	}
	for _, tc := range tests {
		if got := ResolveIRI(base, tc.ref); got != tc.want {
			t.Errorf("ResolveIRI(%q, %q) = %q, want %q", base, tc.ref, got, tc.want)
		}
	}
}

func TestResolveIRIEdgeCases(t *testing.T) {
	tests := []struct{ base, ref, want string }{
		// Source: RFC 3986 §5.2.3, first rule of merge (base with authority, empty path).
		{"http://a", "g", "http://a/g"},
		{"http://a?q", "?y", "http://a?y"},
		// Source: W3C RDF 1.1 Turtle test suite, IRI-resolution-08 (README of
		// ../shared/conformance: RFC 3986 gives http://ab//de/xyz).
		{"http://ab//de//ghi", "../xyz", "http://ab//de/xyz"},
		// Common practice, no source: an empty base leaves the reference as is.
		{"", "g/../h", "g/../h"},
		// Source: RFC 3986 §5.2.2, a fragment-only reference keeps base query.
		{"http://a/b?q#f", "#g", "http://a/b?q#g"},
		// Source: RFC 3986 §5.2.2, a reference with a scheme has its dot segments removed.
		{"http://x/", "http://a/b/../c", "http://a/c"},
		// Source: RFC 3986 §5.2.4 example "mid/content=5/../6".
		{"http://a/", "mid/content=5/../6", "http://a/mid/6"},
	}
	for _, tc := range tests {
		if got := ResolveIRI(tc.base, tc.ref); got != tc.want {
			t.Errorf("ResolveIRI(%q, %q) = %q, want %q", tc.base, tc.ref, got, tc.want)
		}
	}
}

func TestIsAbsoluteIRI(t *testing.T) {
	// Source: RFC 3986 §3.1 (scheme grammar) and RDF 1.1 N-Triples §7 IRIREF.
	tests := []struct {
		s    string
		want bool
	}{
		{"http://a/b", true},
		{"urn:x-y:z", true},
		{"a+b.c-d:x", true},
		{"g", false},
		{"/a:b", false},
		{"1a:b", false},
		{":b", false},
		{"http://a/b c", false},
		{"http://a/<b>", false},
		{"http://a/\\u0041", false},
		{"http://a/é", true},
	}
	for _, tc := range tests {
		if got := IsAbsoluteIRI(tc.s); got != tc.want {
			t.Errorf("IsAbsoluteIRI(%q) = %v, want %v", tc.s, got, tc.want)
		}
	}
}
