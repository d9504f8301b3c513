package terms

// Analyzer STUB: replaced by the real analyzer (delete this file then).
type Analyzer struct {
	opt  Options
	dict *Dictionary
}

// New builds an analyzer over dict; multi-word terms already in dict
// (strings containing a space) are compiled into the phrase matcher.
func New(opt Options, dict *Dictionary) (*Analyzer, error) {
	return &Analyzer{opt: opt, dict: dict}, nil
}

// Dict returns the analyzer's dictionary.
func (a *Analyzer) Dict() *Dictionary { return a.dict }

// Options returns the options the analyzer was built with.
func (a *Analyzer) Options() Options { return a.opt }

// AddPhrase adds a phrase term made of already-analysed word terms and makes
// the phrase matcher find it; it returns the phrase's id.
func (a *Analyzer) AddPhrase(words []string) int32 { return -1 }

// Analyze appends text's tokens to dst. With grow, unknown terms are added to
// the dictionary; without, they get ID -1. Safe for concurrent use when grow
// is false.
func (a *Analyzer) Analyze(text string, dst []Token, grow bool) ([]Token, Stats) {
	return dst, Stats{}
}
