package records

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func write(t *testing.T, name, content string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func collect(t *testing.T, path string, opt Options) ([]Record, Stats, error) {
	t.Helper()
	var out []Record
	st, err := ReadStats(path, opt, func(r Record) error {
		out = append(out, r)
		return nil
	})
	return out, st, err
}

func TestReadJSONL(t *testing.T) {
	p := write(t, "c.jsonl", `{"id":"r1","title":"Screen readers","text":"Speech output.","subjects":["http://ex.org/c/7"],"date":"2020","extra":{"x":1}}

{"id":42,"text":"numeric id"}
{"id":"r3","title":"","text":"  "}
`)
	recs, st, err := collect(t, p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := []Record{
		{ID: "r1", Title: "Screen readers", Text: "Speech output.", Subjects: []string{"http://ex.org/c/7"}, Date: "2020", Line: 1, File: p},
		{ID: "42", Text: "numeric id", Line: 3, File: p},
		{ID: "r3", Text: "  ", Line: 4, File: p},
	}
	if !reflect.DeepEqual(recs, want) {
		t.Fatalf("got %+v\nwant %+v", recs, want)
	}
	if st != (Stats{Read: 3, Empty: 1}) {
		t.Errorf("stats %+v", st)
	}
	if got := recs[0].Join(nil); got != "Screen readers\n\nSpeech output." {
		t.Errorf("Join = %q", got)
	}
	if got := recs[0].Join([]string{"text"}); got != "Speech output." {
		t.Errorf("Join(text) = %q", got)
	}
}

func TestReadExtraField(t *testing.T) {
	p := write(t, "c.jsonl", `{"id":"a","abstract":"About screens","text":"body"}`)
	recs, _, err := collect(t, p, Options{Fields: []string{"abstract", "text"}})
	if err != nil {
		t.Fatal(err)
	}
	if got := recs[0].Join([]string{"abstract", "text"}); got != "About screens\n\nbody" {
		t.Errorf("Join = %q", got)
	}
	// Keep reads a field without joining it.
	p = write(t, "k.jsonl", `{"id":"a","title":"T","text":"body","source_package":"src"}`)
	recs, _, err = collect(t, p, Options{Keep: []string{"source_package"}})
	if err != nil {
		t.Fatal(err)
	}
	if recs[0].Extra["source_package"] != "src" || recs[0].Join(nil) != "T\n\nbody" {
		t.Errorf("kept %q, joined %q", recs[0].Extra["source_package"], recs[0].Join(nil))
	}
}

func TestReadBadLines(t *testing.T) {
	content := `{"id":"ok1","text":"a"}
not json
["an","array"]
{"id":"x","subjects":"http://single"}
{"id":"y","text":5}
{"id":"ok2","text":"b"}`
	cases := []struct {
		line int
		msg  string
	}{
		{2, "expected a JSON object"},
		{3, "expected a JSON object, found array"},
		{4, `"subjects" must be an array of strings`},
		{5, `"text" must be a string`},
	}
	p := write(t, "bad.jsonl", content)
	_, _, err := collect(t, p, Options{})
	var e *Error
	if !errors.As(err, &e) || !errors.Is(err, ErrSyntax) {
		t.Fatalf("err = %v, want *Error ErrSyntax", err)
	}
	if e.Line != 2 || !strings.HasPrefix(err.Error(), p+":2: ") {
		t.Errorf("err = %v, want at line 2", err)
	}

	var bad []*Error
	recs, st, err := collect(t, p, Options{SkipBad: true, Bad: func(err error) { bad = append(bad, err.(*Error)) }})
	if err != nil {
		t.Fatal(err)
	}
	if st != (Stats{Read: 2, Skipped: 4}) || len(recs) != 2 || recs[1].ID != "ok2" || recs[1].Line != 6 {
		t.Errorf("stats %+v recs %+v", st, recs)
	}
	if len(bad) != len(cases) {
		t.Fatalf("bad = %v", bad)
	}
	for i, c := range cases {
		if bad[i].Line != c.line || !strings.Contains(bad[i].Msg, c.msg) {
			t.Errorf("bad[%d] = %v, want line %d %q", i, bad[i], c.line, c.msg)
		}
	}
}

func TestReadLongLine(t *testing.T) {
	// A record longer than the 1 MiB read buffer, and one over MaxLine.
	big := strings.Repeat("word ", 3<<20/5)
	p := write(t, "long.jsonl", `{"id":"big","text":"`+big+`"}`+"\n"+`{"id":"after","text":"x"}`+"\n")
	recs, _, err := collect(t, p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 2 || recs[0].Text != big || recs[1].ID != "after" || recs[1].Line != 2 {
		t.Fatalf("got %d records", len(recs))
	}
	if testing.Short() {
		return
	}
	huge := strings.Repeat("a", MaxLine+10)
	p = write(t, "huge.jsonl", `{"id":"h","text":"`+huge+`"}`+"\n"+`{"id":"after"}`)
	_, _, err = collect(t, p, Options{})
	if !errors.Is(err, ErrTooLong) {
		t.Fatalf("err = %v, want ErrTooLong", err)
	}
	recs, st, err := collect(t, p, Options{SkipBad: true})
	if err != nil || len(recs) != 1 || recs[0].ID != "after" || st.Skipped != 1 {
		t.Fatalf("skip: err %v recs %v stats %+v", err, recs, st)
	}
}

func TestReadDir(t *testing.T) {
	dir := t.TempDir()
	for name, text := range map[string]string{"b.txt": "second", "a.txt": "first", "c.md": "ignored", "e.txt": ""} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Mkdir(filepath.Join(dir, "d.txt"), 0o755); err != nil {
		t.Fatal(err)
	}
	recs, st, err := collect(t, dir, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, r := range recs {
		ids = append(ids, r.ID+"="+r.Join(nil))
	}
	if !reflect.DeepEqual(ids, []string{"a=first", "b=second", "e="}) || st != (Stats{Read: 3, Empty: 1}) {
		t.Errorf("ids %v stats %+v", ids, st)
	}
}

func TestReadStopsOnCallbackError(t *testing.T) {
	p := write(t, "c.jsonl", "{\"id\":\"a\"}\n{\"id\":\"b\"}\n")
	stop := errors.New("stop")
	n := 0
	err := Read(p, Options{}, func(Record) error { n++; return stop })
	if err != stop || n != 1 {
		t.Errorf("err %v n %d", err, n)
	}
	if err := Read(filepath.Join(t.TempDir(), "missing"), Options{}, func(Record) error { return nil }); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
}

// TestReadLang: the record's language comes from "lang", else "language".
func TestReadLang(t *testing.T) {
	p := write(t, "c.jsonl", `{"id":"a","text":"x","lang":"fr"}
{"id":"b","text":"x","language":" en-GB "}
{"id":"c","text":"x","lang":"de","language":"fr"}
{"id":"d","text":"x"}
`)
	recs, _, err := collect(t, p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, r := range recs {
		got = append(got, r.Lang)
	}
	if want := []string{"fr", "en-GB", "de", ""}; !reflect.DeepEqual(got, want) {
		t.Errorf("langs %q, want %q", got, want)
	}
	if _, _, err := collect(t, write(t, "bad.jsonl", `{"id":"a","lang":3}`), Options{}); !errors.Is(err, ErrSyntax) {
		t.Errorf("numeric lang accepted")
	}
}
