package terms

import (
	"bufio"
	"embed"
	"errors"
	"fmt"
	"strings"

	"github.com/blevesearch/snowballstem"
	"github.com/blevesearch/snowballstem/dutch"
	"github.com/blevesearch/snowballstem/english"
	"github.com/blevesearch/snowballstem/finnish"
	"github.com/blevesearch/snowballstem/french"
	"github.com/blevesearch/snowballstem/german"
	"github.com/blevesearch/snowballstem/italian"
	"github.com/blevesearch/snowballstem/portuguese"
	"github.com/blevesearch/snowballstem/russian"
	"github.com/blevesearch/snowballstem/spanish"
	"github.com/blevesearch/snowballstem/swedish"
	"golang.org/x/text/language"
)

// ErrLanguage is matched (errors.Is) by errors about language tags that are
// malformed or name a language without stemming and stopword support.
var ErrLanguage = errors.New("language not supported")

//go:embed stopwords/*.txt
var stopFiles embed.FS

// stemmers are the Snowball algorithms by ISO 639-1 base language.
var stemmers = map[string]func(*snowballstem.Env) bool{
	"en": english.Stem,
	"fr": french.Stem,
	"de": german.Stem,
	"es": spanish.Stem,
	"it": italian.Stem,
	"nl": dutch.Stem,
	"sv": swedish.Stem,
	"fi": finnish.Stem,
	"pt": portuguese.Stem,
	"ru": russian.Stem,
}

// Supported returns the base languages with stemming and stopwords.
func Supported() []string {
	return []string{"de", "en", "es", "fi", "fr", "it", "nl", "pt", "ru", "sv"}
}

// LanguageError says why a tag falls back to language-neutral analysis.
type LanguageError struct {
	Tag    string
	Reason string // "malformed BCP 47 tag" or "no stemmer or stopwords for X"
}

func (e *LanguageError) Error() string {
	return fmt.Sprintf("language %q: %s; language-neutral analysis used (no stemming, no stopwords)", e.Tag, e.Reason)
}

// Unwrap makes errors.Is(err, ErrLanguage) true.
func (e *LanguageError) Unwrap() error { return ErrLanguage }

// ResolveLanguage maps a BCP 47 tag to its supported base language ("en"
// for "en-GB"). The empty tag resolves to "". It returns a *LanguageError
// (matching ErrLanguage) for malformed tags and unsupported languages.
func ResolveLanguage(tag string) (string, error) {
	if tag == "" {
		return "", nil
	}
	t, err := language.Parse(tag)
	if err != nil {
		return "", &LanguageError{Tag: tag, Reason: "malformed BCP 47 tag"}
	}
	base, _ := t.Base()
	b := base.String()
	if _, ok := stemmers[b]; !ok {
		return "", &LanguageError{Tag: tag, Reason: "no stemmer or stopwords for " + b}
	}
	return b, nil
}

// langSpec is the analysis of one language; neutral when stem is nil.
type langSpec struct {
	name string // base language, e.g. "fr"; "" when neutral
	stem func(*snowballstem.Env) bool
	stop map[string]bool // normalised stopwords, e.g. "dass", "don't"
}

var neutral = &langSpec{}

// loadSpec builds the spec of a supported base language.
func loadSpec(base string) (*langSpec, error) {
	f, err := stopFiles.Open("stopwords/" + base + ".txt")
	if err != nil {
		return nil, err
	}
	defer f.Close()
	ls := &langSpec{name: base, stem: stemmers[base], stop: map[string]bool{}}
	var n normalizer
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		w := strings.TrimSpace(sc.Text())
		if w == "" || strings.HasPrefix(w, "#") {
			continue
		}
		ls.stop[string(n.fold(nil, w))] = true
	}
	return ls, sc.Err()
}
