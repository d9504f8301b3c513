package terms

import (
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"unicode"
	"unicode/utf8"

	"github.com/blevesearch/snowballstem"
)

// DefaultMaxWordBytes is the longest word term kept when
// Options.MaxWordBytes is 0; longer words (base64 blobs, URLs glued
// together) are counted in Stats.Long and skipped.
const DefaultMaxWordBytes = 64

// cacheLimit bounds each per-language word cache of a scratch space (about
// 20 MB when full). A full cache takes no new words: word frequencies are
// Zipfian, so the frequent words are in it early, and the rare ones are
// analysed afresh each time.
var cacheLimit = 1 << 17 // a variable so that tests can shrink it

// Analyzer turns text into terms: UAX #29 words, NFKC and case folding,
// apostrophes (elision "l'" and possessive "'s" dropped), stopwords and a
// Snowball stemmer of the language, then multi-word phrases found by an
// Aho–Corasick matcher, longest first.
//
// Phrases are matched over the content words, as labels are analysed the
// same way: stopwords between words do not stop a phrase ("history of
// science" meets label "History of Science", term "histori scienc"), white
// space and hyphens do not either, any other punctuation does. Where phrase
// occurrences overlap, the one with more words wins, then the earlier one.
//
// Analyze, AnalyzeLang and AnalyzeWords are safe for concurrent use when grow
// is false. With grow they add to the dictionary and must not run
// concurrently with any other call. AddPhrase is not safe for concurrent use
// with anything; the matcher is rebuilt lazily by the next Analyze.
type Analyzer struct {
	opt     Options
	dict    *Dictionary
	maxWord int
	main    *langSpec
	mainFB  bool // main language fell back to neutral
	notices []string

	specMu sync.RWMutex
	specs  map[string]specErr   // tag -> spec, e.g. "en-GB" -> English; neutral for unsupported
	bases  map[string]*langSpec // loaded supported languages by base

	// free holds idle scratch spaces. Unlike a sync.Pool it is not emptied
	// by the garbage collector, so the word caches in them survive.
	freeMu sync.Mutex
	free   []*scratch

	phMu      sync.Mutex
	phrases   []phraseDef
	phraseIDs map[int32]bool
	dirty     atomic.Bool
	ac        atomic.Pointer[automaton]
	gen       uint32
}

type specErr struct {
	ls  *langSpec
	err error
}

// entry is the cached analysis of one surface word in one language.
type entry struct {
	short  [24]byte // start of key, compared first (see sameKey)
	klen   int32
	key    string // surface form, e.g. "Readers"
	term   string // "" when the word is a stopword or analysis emptied it
	long   bool
	id     int32  // dictionary id, -1 while unknown
	idLen  int32  // dictionary length when id was last looked up
	sym    int32  // phrase-matcher symbol, -1 when in no phrase
	symGen uint32 // automaton generation sym belongs to
}

// scratch is the per-goroutine working space, reused across calls.
type scratch struct {
	norm normalizer
	env  *snowballstem.Env
	buf  []byte
	// caches by language and by use: labels (AnalyzeWords) apart from
	// texts, so that a vocabulary's label words do not crowd the cache of
	// a collection's words.
	caches map[cacheKey]*wordCache
	win    []winTok
	syms   []int32
	ms     []match
	taken  []bool
}

type cacheKey struct {
	ls    *langSpec
	texts bool
}

// winTok is a word waiting for phrase matching.
type winTok struct {
	start, end int
	e          *entry
}

// New builds an analyzer over dict (a new dictionary when nil); multi-word
// terms already in dict (strings containing a space) are compiled into the
// phrase matcher. Languages that are malformed or unsupported do not make
// New fail: they are analysed language-neutrally and listed by Notices.
func New(opt Options, dict *Dictionary) (*Analyzer, error) {
	if dict == nil {
		dict = NewDictionary()
	}
	a := &Analyzer{
		opt:       opt,
		dict:      dict,
		maxWord:   opt.MaxWordBytes,
		specs:     map[string]specErr{},
		bases:     map[string]*langSpec{},
		phraseIDs: map[int32]bool{},
	}
	if a.maxWord <= 0 {
		a.maxWord = DefaultMaxWordBytes
	}
	mainTag := "en"
	if len(opt.Languages) > 0 {
		mainTag = opt.Languages[0]
	}
	for i, tag := range append([]string{mainTag}, opt.Languages...) {
		ls, err := a.spec(tag)
		if err != nil && i > 0 {
			a.notices = append(a.notices, err.Error())
		}
		if i == 0 {
			a.main, a.mainFB = ls, err != nil
		}
	}
	for id, t := range dict.Terms() {
		if strings.Contains(t, " ") {
			a.phrases = append(a.phrases, phraseDef{id: int32(id), term: t})
			a.phraseIDs[int32(id)] = true
		}
	}
	a.dirty.Store(len(a.phrases) > 0)
	return a, nil
}

// Dict returns the analyzer's dictionary.
func (a *Analyzer) Dict() *Dictionary { return a.dict }

// Options returns the options the analyzer was built with.
func (a *Analyzer) Options() Options { return a.opt }

// Notices returns one message per configured language that fell back to
// language-neutral analysis, e.g. `language "xx-!": malformed BCP 47 tag; ...`.
func (a *Analyzer) Notices() []string { return a.notices }

// Language returns the base language used for tag ("" when neutral) and
// the reason for a fallback (nil when tag is supported; "" means the main
// language).
func (a *Analyzer) Language(tag string) (string, error) {
	if tag == "" {
		if a.mainFB {
			return "", a.mainErr()
		}
		return a.main.name, nil
	}
	ls, err := a.spec(tag)
	return ls.name, err
}

func (a *Analyzer) mainErr() error {
	tag := "en"
	if len(a.opt.Languages) > 0 {
		tag = a.opt.Languages[0]
	}
	_, err := ResolveLanguage(tag)
	return err
}

// spec returns the analysis for a tag, loading it on first use.
func (a *Analyzer) spec(tag string) (*langSpec, error) {
	a.specMu.RLock()
	se, ok := a.specs[tag]
	a.specMu.RUnlock()
	if ok {
		return se.ls, se.err
	}
	base, err := ResolveLanguage(tag)
	ls := neutral
	if err == nil && base != "" {
		a.specMu.Lock()
		if b, ok := a.bases[base]; ok {
			ls = b
		} else if b, lerr := loadSpec(base); lerr == nil {
			a.bases[base] = b
			ls = b
		} else {
			err = lerr
		}
		a.specMu.Unlock()
	}
	a.specMu.Lock()
	a.specs[tag] = specErr{ls, err}
	a.specMu.Unlock()
	return ls, err
}

// AddPhrase adds a phrase term made of already-analysed word terms and makes
// the phrase matcher find it; it returns the phrase's id (-1 when words
// hold nothing). Words are split at spaces and empty ones ignored; a single
// word is added as a plain term. Not safe for concurrent use; the matcher
// is rebuilt by the next Analyze or AnalyzeLang.
func (a *Analyzer) AddPhrase(words []string) int32 {
	var sb strings.Builder
	n := 0
	for _, w := range words {
		for _, f := range strings.Fields(w) {
			if n > 0 {
				sb.WriteByte(' ')
			}
			sb.WriteString(f)
			n++
		}
	}
	if n == 0 {
		return -1
	}
	term := sb.String()
	id := a.dict.Add(term)
	if n < 2 {
		return id
	}
	a.phMu.Lock()
	if !a.phraseIDs[id] {
		a.phraseIDs[id] = true
		a.phrases = append(a.phrases, phraseDef{id: id, term: term})
		a.dirty.Store(true)
	}
	a.phMu.Unlock()
	return id
}

// Phrases is the number of phrase terms the matcher knows.
func (a *Analyzer) Phrases() int {
	a.phMu.Lock()
	defer a.phMu.Unlock()
	return len(a.phrases)
}

// matcher returns the current automaton, rebuilding it when phrases were
// added; nil when there are none.
func (a *Analyzer) matcher() *automaton {
	if a.dirty.Load() {
		a.phMu.Lock()
		if a.dirty.Load() {
			a.gen++
			a.ac.Store(buildAutomaton(slices.Clone(a.phrases), a.gen))
			a.dirty.Store(false)
		}
		a.phMu.Unlock()
	}
	return a.ac.Load()
}

// Analyze appends the tokens of text, in the main language, to dst. With
// grow, unknown terms are added to the dictionary; without, they get ID -1.
// Safe for concurrent use when grow is false.
func (a *Analyzer) Analyze(text string, dst []Token, grow bool) ([]Token, Stats) {
	return a.run(text, a.main, a.mainFB, dst, grow, true)
}

// AnalyzeLang is Analyze for a text in language lang (a BCP 47 tag; ""
// means the main language). A malformed or unsupported tag is analysed
// language-neutrally and Stats.Fallback is set; Language(lang) gives the
// reason.
func (a *Analyzer) AnalyzeLang(text, lang string, dst []Token, grow bool) ([]Token, Stats) {
	if lang == "" {
		return a.Analyze(text, dst, grow)
	}
	ls, err := a.spec(lang)
	return a.run(text, ls, err != nil, dst, grow, true)
}

// AnalyzeWords is AnalyzeLang without phrase matching: every token is one
// word. Labels are analysed this way before AddPhrase, so that a label is
// never read through phrases added before it.
func (a *Analyzer) AnalyzeWords(text, lang string, dst []Token, grow bool) ([]Token, Stats) {
	ls, fb := a.main, a.mainFB
	if lang != "" {
		var err error
		ls, err = a.spec(lang)
		fb = err != nil
	}
	return a.run(text, ls, fb, dst, grow, false)
}

func (a *Analyzer) run(text string, ls *langSpec, fallback bool, dst []Token, grow, phrases bool) ([]Token, Stats) {
	st := Stats{Fallback: fallback}
	if !utf8.ValidString(text) {
		for i := 0; i < len(text); {
			r, n := utf8.DecodeRuneInString(text[i:])
			if r == utf8.RuneError && n == 1 {
				st.Invalid++
			}
			i += n
		}
	}
	var ac *automaton
	if phrases {
		ac = a.matcher()
	}
	sc := a.getScratch()
	defer a.putScratch(sc)
	ck := cacheKey{ls, phrases}
	cache := sc.caches[ck]
	if cache == nil {
		cache = newWordCache()
		sc.caches[ck] = cache
	}
	dictLen := int32(a.dict.Len())
	sc.win = sc.win[:0]
	var g segmenter
	g.reset(text)
	for {
		start, end, kind, ok := g.next()
		if !ok {
			break
		}
		if kind != segWord {
			if kind == segHard && len(sc.win) > 0 {
				dst = a.flush(sc, ac, dst)
			}
			continue
		}
		st.Words++
		surface := text[start:end]
		e := cache.get(surface)
		if e == nil {
			e = a.analyzeWord(sc, ls, surface)
			if cache.n < cacheLimit {
				cache.put(surface, e)
			}
		}
		if e.term == "" {
			if e.long {
				st.Long++
			}
			continue
		}
		if e.id < 0 {
			if e.idLen != dictLen {
				if id, ok := a.dict.ID(e.term); ok {
					e.id = id
				}
				e.idLen = dictLen
			}
			if e.id < 0 && grow {
				e.id = a.dict.Add(e.term)
				dictLen = int32(a.dict.Len())
			}
		}
		if ac == nil {
			dst = append(dst, Token{Start: start, End: end, Term: e.term, ID: e.id})
			continue
		}
		if e.symGen != ac.gen {
			e.sym = -1
			if s, ok := ac.syms[e.term]; ok {
				e.sym = s
			}
			e.symGen = ac.gen
		}
		sc.win = append(sc.win, winTok{start: start, end: end, e: e})
	}
	if len(sc.win) > 0 {
		dst = a.flush(sc, ac, dst)
	}
	return dst, st
}

func (a *Analyzer) getScratch() *scratch {
	a.freeMu.Lock()
	defer a.freeMu.Unlock()
	if n := len(a.free); n > 0 {
		sc := a.free[n-1]
		a.free = a.free[:n-1]
		return sc
	}
	return &scratch{env: snowballstem.NewEnv(""), caches: map[cacheKey]*wordCache{}}
}

func (a *Analyzer) putScratch(sc *scratch) {
	a.freeMu.Lock()
	a.free = append(a.free, sc)
	a.freeMu.Unlock()
}

// flush emits the words of the window, replacing the longest phrase
// occurrences by phrase tokens.
func (a *Analyzer) flush(sc *scratch, ac *automaton, dst []Token) []Token {
	win := sc.win
	sc.win = sc.win[:0]
	if ac == nil || len(win) < 2 {
		for _, w := range win {
			dst = append(dst, Token{Start: w.start, End: w.end, Term: w.e.term, ID: w.e.id})
		}
		return dst
	}
	sc.syms = sc.syms[:0]
	for _, w := range win {
		sc.syms = append(sc.syms, w.e.sym)
	}
	sc.ms = ac.findAll(sc.syms, sc.ms[:0])
	if len(sc.ms) == 0 {
		for _, w := range win {
			dst = append(dst, Token{Start: w.start, End: w.end, Term: w.e.term, ID: w.e.id})
		}
		return dst
	}
	if cap(sc.taken) < len(win) {
		sc.taken = make([]bool, len(win))
	}
	taken := sc.taken[:len(win)]
	clear(taken)
	kept := selectLongest(sc.ms, taken)
	i := 0
	for _, m := range kept {
		for ; i < int(m.start); i++ {
			w := win[i]
			dst = append(dst, Token{Start: w.start, End: w.end, Term: w.e.term, ID: w.e.id})
		}
		ph := ac.phrases[m.phrase]
		last := win[m.start+m.n-1]
		dst = append(dst, Token{Start: win[m.start].start, End: last.end, Term: ph.term, ID: ph.id})
		i = int(m.start + m.n)
	}
	for ; i < len(win); i++ {
		w := win[i]
		dst = append(dst, Token{Start: w.start, End: w.end, Term: w.e.term, ID: w.e.id})
	}
	return dst
}

// elisions are clitics written before an apostrophe (French, Italian,
// Catalan) that carry no meaning of their own: "l'église" -> "église".
var elisions = map[string]bool{
	"l": true, "d": true, "j": true, "m": true, "n": true, "s": true, "t": true, "c": true,
	"qu": true, "jusqu": true, "lorsqu": true, "puisqu": true, "quoiqu": true,
	"dell": true, "nell": true, "all": true, "dall": true, "sull": true, "coll": true,
	"quell": true, "quest": true, "un": true,
}

// analyzeWord analyses one surface word (cache miss path).
func (a *Analyzer) analyzeWord(sc *scratch, ls *langSpec, surface string) *entry {
	e := &entry{id: -1, idLen: -1, sym: -1}
	b := sc.norm.fold(sc.buf[:0], surface)
	sc.buf = b[:0]
	if len(b) == 0 || ls.stop[string(b)] {
		return e
	}
	if i := indexByte(b, '\''); i >= 0 {
		b = apostrophes(b, i)
		if len(b) == 0 || ls.stop[string(b)] {
			return e
		}
	}
	term := string(b)
	if ls.stem != nil && hasLetter(term) {
		sc.env.SetCurrent(term)
		ls.stem(sc.env)
		if s := sc.env.Current(); s != "" {
			term = s
		}
	}
	if len(term) > a.maxWord {
		e.long = true
		return e
	}
	e.term = term
	return e
}

func indexByte(b []byte, c byte) int {
	for i, x := range b {
		if x == c {
			return i
		}
	}
	return -1
}

// apostrophes drops an elided article ("l'", "qu'", "dell'"), a possessive
// "'s" or a trailing "'", and joins what is left ("o'neill" -> "oneill").
// i is the index of the first apostrophe.
func apostrophes(b []byte, i int) []byte {
	if i > 0 && i+1 < len(b) && elisions[string(b[:i])] {
		b = b[i+1:]
	}
	if n := len(b); n >= 2 && b[n-2] == '\'' && b[n-1] == 's' {
		b = b[:n-2]
	}
	out := b[:0]
	for _, c := range b {
		if c != '\'' {
			out = append(out, c)
		}
	}
	return out
}

func hasLetter(s string) bool {
	for _, r := range s {
		if unicode.IsLetter(r) {
			return true
		}
	}
	return false
}
