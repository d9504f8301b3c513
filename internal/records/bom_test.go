package records

import (
	"strings"
	"testing"
)

// TestReadJSONLByteOrderMark: a JSON Lines file saved by a Windows editor
// or spreadsheet starts with a UTF-8 byte order mark and has CRLF line
// ends; both are read as plain records. A BOM elsewhere stays an error.
// Source: RFC 8259 §8.1 (parsers MAY ignore a leading BOM); common practice.
func TestReadJSONLByteOrderMark(t *testing.T) {
	in := "\ufeff{\"id\":\"a\",\"text\":\"mill\"}\r\n{\"id\":\"b\",\"text\":\"weir\"}\r\n"
	var ids []string
	st, err := ReadJSONL(strings.NewReader(in), "bom.jsonl", Options{}, func(r Record) error {
		ids = append(ids, r.ID)
		return nil
	})
	if err != nil || st.Read != 2 || strings.Join(ids, ",") != "a,b" {
		t.Errorf("leading BOM: read %d %v, err %v", st.Read, ids, err)
	}
	_, err = ReadJSONL(strings.NewReader("{\"id\":\"a\"}\n\ufeff{\"id\":\"b\"}\n"), "mid.jsonl", Options{}, func(Record) error { return nil })
	if err == nil || !strings.Contains(err.Error(), "mid.jsonl:2") {
		t.Errorf("BOM on line 2: err %v, want mid.jsonl:2", err)
	}
}

// TestReadJSONLCountsInvalidUTF8: encoding/json replaces invalid UTF-8 in
// strings with U+FFFD silently; the records say how many sequences were
// replaced so that annotate and fit can report it (issue 5: "binary or
// invalid UTF-8 (replaced, counted)"). Source: encoding/json docs
// ("invalid UTF-8 ... replaced by U+FFFD").
func TestReadJSONLCountsInvalidUTF8(t *testing.T) {
	in := "{\"id\":\"a\",\"text\":\"mill \xff\xfe river\"}\n{\"id\":\"b\",\"text\":\"clean\"}\n"
	var got []int
	st, err := ReadJSONL(strings.NewReader(in), "u.jsonl", Options{}, func(r Record) error {
		got = append(got, r.Invalid)
		return nil
	})
	if err != nil || len(got) != 2 || got[0] != 2 || got[1] != 0 || st.Invalid != 2 {
		t.Errorf("invalid counts %v, total %d, err %v; want [2 0], 2", got, st.Invalid, err)
	}
}

// TestReadJSONLUTF16SaysSo: a UTF-16 records file (a Windows "Unicode"
// export) is named as such on line 1 rather than as a bad JSON character.
func TestReadJSONLUTF16SaysSo(t *testing.T) {
	_, err := ReadJSONL(strings.NewReader("\xff\xfe{\x00}\x00\n\x00"), "u.jsonl", Options{}, func(Record) error { return nil })
	if err == nil || !strings.Contains(err.Error(), "u.jsonl:1") || !strings.Contains(err.Error(), "UTF-16") {
		t.Errorf("UTF-16 records: %v", err)
	}
}
