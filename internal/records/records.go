// Package records reads a corpus: JSON Lines records
// {"id", "title", "text", "subjects": [IRIs], "date"} or a folder of .txt
// files (file name = id).
//
// A JSON Lines corpus holds one record per line; unknown fields are ignored
// and blank lines are skipped:
//
//	{"id": "r1", "title": "Screen readers", "text": "Speech output for ...", "subjects": ["http://ex.org/c/7"]}
//	{"id": "r2", "text": "..."}
//
// A folder corpus is read in file-name order; "a-42.txt" becomes the record
// with id "a-42" whose Text is the file's content.
//
//	err := records.Read("corpus.jsonl", records.Options{}, func(r records.Record) error {
//		fmt.Println(r.ID, r.Join(nil))
//		return nil
//	})
//
// CONTRACT: Read(path, opt, fn) calls fn per record in file order.
package records

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Record is one catalogue record. Line is its 1-based line in the file.
type Record struct {
	ID       string   `json:"id"`
	Title    string   `json:"title"`
	Text     string   `json:"text"`
	Subjects []string `json:"subjects"`
	Date     string   `json:"date"`
	// Lang is the record's language as a BCP 47 tag ("fr"), read from "lang"
	// or, when that is absent, "language"; "" = unknown (the main language).
	Lang string `json:"lang,omitempty"`
	Line int    `json:"-"`
	// File is the file the record came from ("-" for standard input).
	File string `json:"-"`
	// Extra holds other top-level string fields named in Options.Fields
	// (e.g. "abstract"); nil when none were asked for.
	Extra map[string]string `json:"-"`
	// Invalid counts the invalid UTF-8 sequences of a JSON Lines record's
	// line, which the JSON decoder replaced with U+FFFD (0 for .txt files,
	// whose text is kept as it is).
	Invalid int `json:"-"`
}

// DefaultFields are the text fields read when Options.Fields is empty.
var DefaultFields = []string{"title", "text"}

// MaxLine is the longest JSON Lines line Read accepts (64 MiB).
const MaxLine = 64 << 20

// Options configure Read; the zero value reads title and text and stops at
// the first bad line.
type Options struct {
	// Fields are the text fields joined by Join (default "title", "text").
	// Any top-level string field of a JSON record may be named, e.g. "abstract";
	// "text" of a .txt file is its content.
	Fields []string
	// Keep are further top-level string fields read into Record.Extra but
	// not joined (e.g. a grouping key).
	Keep []string
	// SkipBad skips bad lines (counted in Stats.Skipped) instead of failing.
	SkipBad bool
	// Bad, when set with SkipBad, is called with each skipped line's error.
	Bad func(error)
}

// Stats counts what Read met.
type Stats struct {
	Read    int // records passed to fn
	Skipped int // bad lines skipped (SkipBad)
	Empty   int // records passed to fn whose chosen fields hold no text
	Invalid int // invalid UTF-8 sequences replaced in the records passed to fn
}

// ErrSyntax marks a line that is not a JSON object of the record shape.
var ErrSyntax = errors.New("bad record")

// ErrTooLong marks a line longer than MaxLine.
var ErrTooLong = errors.New("line too long")

// Error is a bad line: file, line and what was wrong.
type Error struct {
	File string
	Line int
	Err  error  // ErrSyntax or ErrTooLong
	Msg  string // what was expected, e.g. `"subjects" must be an array of strings`
}

func (e *Error) Error() string {
	return fmt.Sprintf("%s:%d: %v: %s", e.File, e.Line, e.Err, e.Msg)
}

func (e *Error) Unwrap() error { return e.Err }

// Join returns the record's chosen text fields joined by a blank line
// (fields nil: DefaultFields). Fields not among id/title/text/date are taken
// from Extra.
func (r *Record) Join(fields []string) string {
	if len(fields) == 0 {
		fields = DefaultFields
	}
	var b strings.Builder
	for _, f := range fields {
		s := r.field(f)
		if strings.TrimSpace(s) == "" {
			continue
		}
		if b.Len() > 0 {
			b.WriteString("\n\n")
		}
		b.WriteString(s)
	}
	return b.String()
}

func (r *Record) field(name string) string {
	switch name {
	case "title":
		return r.Title
	case "text":
		return r.Text
	case "id":
		return r.ID
	case "date":
		return r.Date
	}
	return r.Extra[name]
}

// Read reads the corpus at path — a JSON Lines file, "-" for standard input,
// or a folder of .txt files — and calls fn per record in order. It stops at
// fn's first error and returns it. A bad line is an *Error (file:line) unless
// opt.SkipBad. ReadStats also returns the counts.
func Read(path string, opt Options, fn func(Record) error) error {
	_, err := ReadStats(path, opt, fn)
	return err
}

// ReadStats is Read returning what it met.
func ReadStats(path string, opt Options, fn func(Record) error) (Stats, error) {
	if path == "-" {
		return ReadJSONL(os.Stdin, "-", opt, fn)
	}
	fi, err := os.Stat(path)
	if err != nil {
		return Stats{}, err
	}
	if fi.IsDir() {
		return readDir(path, opt, fn)
	}
	f, err := os.Open(path)
	if err != nil {
		return Stats{}, err
	}
	defer f.Close()
	return ReadJSONL(f, path, opt, fn)
}

// ReadJSONL reads JSON Lines from r; name is used in errors.
func ReadJSONL(r io.Reader, name string, opt Options, fn func(Record) error) (Stats, error) {
	var st Stats
	br := bufio.NewReaderSize(r, 1<<20)
	extra := extraFields(append(slices.Clone(opt.Fields), opt.Keep...))
	var long []byte // reused across lines longer than the buffer
	for line := 1; ; line++ {
		b, err := br.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			long = append(long[:0], b...)
			for err == bufio.ErrBufferFull && len(long) <= MaxLine {
				b, err = br.ReadSlice('\n')
				long = append(long, b...)
			}
			b = long
			if len(b) > MaxLine {
				// Drain the rest of the line so that SkipBad can go on.
				for err == bufio.ErrBufferFull {
					_, err = br.ReadSlice('\n')
				}
				e := &Error{File: name, Line: line, Err: ErrTooLong, Msg: fmt.Sprintf("longer than %d bytes", MaxLine)}
				if !opt.SkipBad {
					return st, e
				}
				st.Skipped++
				if opt.Bad != nil {
					opt.Bad(e)
				}
				if err == io.EOF {
					return st, nil
				}
				if err != nil {
					return st, fmt.Errorf("%s:%d: %w", name, line, err)
				}
				continue
			}
		}
		if err != nil && err != io.EOF {
			return st, fmt.Errorf("%s:%d: %w", name, line, err)
		}
		eof := err == io.EOF
		if line == 1 {
			// Windows editors and spreadsheets start UTF-8 files with a
			// byte order mark; RFC 8259 §8.1 lets a parser ignore it.
			b = bytes.TrimPrefix(b, []byte("\ufeff"))
			if bytes.HasPrefix(b, []byte{0xff, 0xfe}) || bytes.HasPrefix(b, []byte{0xfe, 0xff}) {
				// RFC 8259 §8.1: JSON exchanged between systems is UTF-8.
				return st, &Error{File: name, Line: line, Err: ErrSyntax, Msg: "UTF-16 text; save or convert it as UTF-8 first (e.g. iconv -f UTF-16 -t UTF-8)"}
			}
		}
		t := bytes.TrimSpace(b)
		if len(t) > 0 {
			rec, msg := decode(t, extra)
			if msg != "" {
				e := &Error{File: name, Line: line, Err: ErrSyntax, Msg: msg}
				if !opt.SkipBad {
					return st, e
				}
				st.Skipped++
				if opt.Bad != nil {
					opt.Bad(e)
				}
			} else {
				rec.Line = line
				rec.File = name
				rec.Invalid = invalidUTF8(t)
				st.Invalid += rec.Invalid
				if strings.TrimSpace(rec.Join(opt.Fields)) == "" {
					st.Empty++
				}
				st.Read++
				if err := fn(rec); err != nil {
					return st, err
				}
			}
		}
		if eof {
			return st, nil
		}
	}
}

// extraFields returns the chosen fields that are not Record fields.
func extraFields(fields []string) []string {
	var out []string
	for _, f := range fields {
		switch f {
		case "id", "title", "text", "date", "subjects":
		default:
			out = append(out, f)
		}
	}
	return out
}

// invalidUTF8 counts the invalid sequences of b the way the JSON decoder
// replaces them: one U+FFFD per byte that starts no valid rune.
func invalidUTF8(b []byte) int {
	if utf8.Valid(b) {
		return 0
	}
	n := 0
	for len(b) > 0 {
		r, size := utf8.DecodeRune(b)
		if r == utf8.RuneError && size == 1 {
			n++
		}
		b = b[size:]
	}
	return n
}

// decode parses one line; msg says what was expected when it is bad.
func decode(b []byte, extra []string) (Record, string) {
	var raw map[string]json.RawMessage
	if err := json.Unmarshal(b, &raw); err != nil {
		var ute *json.UnmarshalTypeError
		if errors.As(err, &ute) {
			return Record{}, "expected a JSON object, found " + ute.Value
		}
		return Record{}, "expected a JSON object: " + err.Error()
	}
	var r Record
	str := func(key string, dst *string) string {
		v, ok := raw[key]
		if !ok || string(v) == "null" {
			return ""
		}
		if err := json.Unmarshal(v, dst); err != nil {
			// A numeric id is common in exports; accept it as its decimal text.
			if key == "id" {
				var n json.Number
				if json.Unmarshal(v, &n) == nil {
					*dst = n.String()
					return ""
				}
			}
			return strconv.Quote(key) + " must be a string"
		}
		return ""
	}
	for _, kv := range []struct {
		k string
		d *string
	}{{"id", &r.ID}, {"title", &r.Title}, {"text", &r.Text}, {"date", &r.Date}} {
		if msg := str(kv.k, kv.d); msg != "" {
			return Record{}, msg
		}
	}
	for _, key := range []string{"lang", "language"} {
		if msg := str(key, &r.Lang); msg != "" {
			return Record{}, msg
		}
		if r.Lang != "" {
			break
		}
	}
	r.Lang = strings.TrimSpace(r.Lang)
	if v, ok := raw["subjects"]; ok && string(v) != "null" {
		if err := json.Unmarshal(v, &r.Subjects); err != nil {
			return Record{}, `"subjects" must be an array of strings`
		}
	}
	for _, f := range extra {
		var s string
		if msg := str(f, &s); msg != "" {
			return Record{}, msg
		}
		if s != "" {
			if r.Extra == nil {
				r.Extra = map[string]string{}
			}
			r.Extra[f] = s
		}
	}
	return r, ""
}

// readDir reads the .txt files of dir in name order.
func readDir(dir string, opt Options, fn func(Record) error) (Stats, error) {
	var st Stats
	ents, err := os.ReadDir(dir)
	if err != nil {
		return st, err
	}
	var names []string
	for _, e := range ents {
		if !e.IsDir() && strings.HasSuffix(e.Name(), ".txt") {
			names = append(names, e.Name())
		}
	}
	sort.Strings(names)
	for _, n := range names {
		p := filepath.Join(dir, n)
		b, err := os.ReadFile(p)
		if err != nil {
			return st, err
		}
		r := Record{ID: strings.TrimSuffix(n, ".txt"), Text: string(b), Line: 1, File: p}
		if strings.TrimSpace(r.Join(opt.Fields)) == "" {
			st.Empty++
		}
		st.Read++
		if err := fn(r); err != nil {
			return st, err
		}
	}
	return st, nil
}
