package rdf

import "strings"

// iriRef is a URI reference split into the five components of RFC 3986 §3,
// with flags telling an absent component from an empty one
// ("http://a/b?" has an empty query; "http://a/b" has none).
type iriRef struct {
	scheme, authority, path, query, fragment   string
	hasScheme, hasAuthority, hasQuery, hasFrag bool
}

// splitIRI splits s as the regular expression of RFC 3986 Appendix B does,
//
//	^(([^:/?#]+):)?(//([^/?#]*))?([^?#]*)(\?([^#]*))?(#(.*))?
//
// except that a scheme must match the §3.1 grammar, so that "1a:b" is a
// path as it is for hasScheme.
func splitIRI(s string) iriRef {
	var r iriRef
	if hasScheme(s) {
		i := strings.IndexByte(s, ':')
		r.scheme, r.hasScheme = s[:i], true
		s = s[i+1:]
	}
	if strings.HasPrefix(s, "//") {
		s = s[2:]
		i := strings.IndexAny(s, "/?#")
		if i < 0 {
			i = len(s)
		}
		r.authority, r.hasAuthority = s[:i], true
		s = s[i:]
	}
	if i := strings.IndexByte(s, '#'); i >= 0 {
		r.fragment, r.hasFrag = s[i+1:], true
		s = s[:i]
	}
	if i := strings.IndexByte(s, '?'); i >= 0 {
		r.query, r.hasQuery = s[i+1:], true
		s = s[:i]
	}
	r.path = s
	return r
}

// String recomposes the components (RFC 3986 §5.3).
func (r *iriRef) String() string {
	var b strings.Builder
	b.Grow(len(r.scheme) + len(r.authority) + len(r.path) + len(r.query) + len(r.fragment) + 6)
	if r.hasScheme {
		b.WriteString(r.scheme)
		b.WriteByte(':')
	}
	if r.hasAuthority {
		b.WriteString("//")
		b.WriteString(r.authority)
	}
	b.WriteString(r.path)
	if r.hasQuery {
		b.WriteByte('?')
		b.WriteString(r.query)
	}
	if r.hasFrag {
		b.WriteByte('#')
		b.WriteString(r.fragment)
	}
	return b.String()
}

// ResolveIRI resolves the reference ref against the absolute IRI base with
// the strict algorithm of RFC 3986 §5.2.2 (merge §5.2.3, dot-segment removal
// §5.2.4). An empty base leaves ref unchanged, so a relative reference stays
// relative. It does not check that either argument is a well-formed IRI.
func ResolveIRI(base, ref string) string {
	if base == "" {
		return ref
	}
	r := splitIRI(ref)
	if r.hasScheme {
		if !hasDotSegment(r.path) {
			return ref
		}
		r.path = removeDotSegments(r.path)
		return r.String()
	}
	b := splitIRI(base)
	t := iriRef{scheme: b.scheme, hasScheme: b.hasScheme, fragment: r.fragment, hasFrag: r.hasFrag}
	switch {
	case r.hasAuthority:
		t.authority, t.hasAuthority = r.authority, true
		t.path = removeDotSegments(r.path)
		t.query, t.hasQuery = r.query, r.hasQuery
	case r.path == "":
		t.authority, t.hasAuthority = b.authority, b.hasAuthority
		t.path = b.path
		if r.hasQuery {
			t.query, t.hasQuery = r.query, true
		} else {
			t.query, t.hasQuery = b.query, b.hasQuery
		}
	default:
		t.authority, t.hasAuthority = b.authority, b.hasAuthority
		if r.path[0] == '/' {
			t.path = removeDotSegments(r.path)
		} else {
			t.path = removeDotSegments(mergePaths(&b, r.path))
		}
		t.query, t.hasQuery = r.query, r.hasQuery
	}
	return t.String()
}

// mergePaths is RFC 3986 §5.2.3.
func mergePaths(b *iriRef, ref string) string {
	if b.hasAuthority && b.path == "" {
		return "/" + ref
	}
	i := strings.LastIndexByte(b.path, '/')
	return b.path[:i+1] + ref
}

// hasDotSegment reports whether a path has a "." or ".." segment.
func hasDotSegment[T string | []byte](p T) bool {
	for i := 0; i < len(p); i++ {
		if p[i] != '.' || (i > 0 && p[i-1] != '/') {
			continue
		}
		j := i + 1
		if j < len(p) && p[j] == '.' {
			j++
		}
		if j == len(p) || p[j] == '/' {
			return true
		}
	}
	return false
}

// removeDotSegments is RFC 3986 §5.2.4, written over an output stack of
// segments: each input segment starts with its leading "/" (if any).
func removeDotSegments(in string) string {
	if !hasDotSegment(in) {
		return in
	}
	out := make([]string, 0, 8)
	for in != "" {
		switch {
		case strings.HasPrefix(in, "../"):
			in = in[3:]
		case strings.HasPrefix(in, "./"):
			in = in[2:]
		case strings.HasPrefix(in, "/./"):
			in = in[2:]
		case in == "/.":
			in = "/"
		case strings.HasPrefix(in, "/../"):
			in = in[3:]
			if len(out) > 0 {
				out = out[:len(out)-1]
			}
		case in == "/..":
			in = "/"
			if len(out) > 0 {
				out = out[:len(out)-1]
			}
		case in == "." || in == "..":
			in = ""
		default:
			// Move the first segment, with its leading "/" if any, to out.
			start := 0
			if in[0] == '/' {
				start = 1
			}
			j := strings.IndexByte(in[start:], '/')
			if j < 0 {
				j = len(in)
			} else {
				j += start
			}
			out = append(out, in[:j])
			in = in[j:]
		}
	}
	return strings.Join(out, "")
}

// IsAbsoluteIRI reports whether s has a scheme (RFC 3987 "IRI", not
// "irelative-ref") and no character that an IRI may never hold.
func IsAbsoluteIRI(s string) bool {
	return hasScheme(s) && ValidIRIChars(s)
}

// hasScheme reports whether s starts with scheme ":" where
// scheme = ALPHA *( ALPHA / DIGIT / "+" / "-" / "." ) (RFC 3986 §3.1).
func hasScheme[T string | []byte](s T) bool {
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z':
		case i > 0 && (c >= '0' && c <= '9' || c == '+' || c == '-' || c == '.'):
		case i > 0 && c == ':':
			return true
		default:
			return false
		}
	}
	return false
}

// ValidIRIChars is the cheap validity check the readers apply to every IRI:
// no control character, space or one of <>"{}|^`\ (the characters the
// N-Triples and Turtle IRIREF production excludes, RDF 1.1 N-Triples §7).
// It does not check the RFC 3987 grammar in full.
func ValidIRIChars(s string) bool {
	for i := 0; i < len(s); i++ {
		if iriForbidden[s[i]] {
			return false
		}
	}
	return true
}

// iriForbidden marks the bytes an IRIREF may not hold unescaped.
var iriForbidden = func() (t [256]bool) {
	for c := 0; c <= 0x20; c++ {
		t[c] = true
	}
	for _, c := range []byte("<>\"{}|^`\\") {
		t[c] = true
	}
	return t
}()
