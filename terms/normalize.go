package terms

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/text/cases"
	"golang.org/x/text/unicode/norm"
)

// normalizer applies NFKC, Unicode full case folding and NFKC again (a
// close approximation of Unicode's NFKC_Casefold), then unifies apostrophes
// to U+0027 and drops white space that compatibility mappings can introduce.
// It is not safe for concurrent use (the case folder keeps state).
type normalizer struct {
	fold1 cases.Caser
	init  bool
}

// fold appends the normalised form of s to dst.
func (n *normalizer) fold(dst []byte, s string) []byte {
	ascii := true
	for i := 0; i < len(s); i++ {
		if s[i] >= utf8.RuneSelf {
			ascii = false
			break
		}
	}
	if ascii {
		for i := 0; i < len(s); i++ {
			c := s[i]
			if 'A' <= c && c <= 'Z' {
				c += 'a' - 'A'
			}
			if c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\v' || c == '\f' {
				continue
			}
			dst = append(dst, c)
		}
		return dst
	}
	if !n.init {
		n.fold1 = cases.Fold()
		n.init = true
	}
	s = strings.ToValidUTF8(s, "\uFFFD")
	s = norm.NFKC.String(s)
	s = n.fold1.String(s)
	s = norm.NFKC.String(s)
	for _, r := range s {
		switch {
		case r == '\u2019' || r == '\u02BC' || r == '\u2018':
			dst = append(dst, '\'')
		case unicode.IsSpace(r) || unicode.Is(unicode.Cf, r):
			// White space from compatibility mappings; format characters
			// such as U+00AD SOFT HYPHEN or U+2060 WORD JOINER.
		default:
			dst = utf8.AppendRune(dst, r)
		}
	}
	return dst
}
