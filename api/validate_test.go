package api

import (
	"math"
	"strings"
	"testing"

	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"
	"google.golang.org/protobuf/proto"

	pb "termgrove/proto/termgrove/v1"
)

func TestValidLanguage(t *testing.T) {
	// Source: RFC 5646 section 2.1 (syntax) and its appendix A examples.
	for tag, want := range map[string]bool{
		"en": true, "fr-CA": true, "zh-Hant-TW": true, "sr-Latn-RS": true, "es-419": true, "de-CH-1901": true,
		"": false, "e": false, "en_US": false, "en-": false, "-en": false, "en--us": false,
		"1en": false, "toolongsubtag": false, "en-abcdefghi": false, "ça": false,
		strings.Repeat("ab-", 12) + "ab": false,
	} {
		if got := validLanguage(tag); got != want {
			t.Errorf("validLanguage(%q) = %v, want %v", tag, got, want)
		}
	}
}

// FuzzValidate decodes random bytes as requests the way the gRPC server does
// (proto.Unmarshal) and validates them: it must never panic, and a request it
// accepts must respect every limit.
func FuzzValidate(f *testing.F) {
	seed := func(m proto.Message) {
		b, err := proto.Marshal(m)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	seed(&pb.AnnotateRequest{Id: "r1", Text: "cat dog", Top: 3, MinScore: 0.1, Language: "en-GB", Subjects: []string{"http://ex.org/c/cats"}})
	seed(&pb.AnnotateRequest{Text: "x", MinScore: math.NaN(), Top: -4, SubjectMode: 7})
	seed(&pb.AnnotateStreamRequest{Records: []*pb.AnnotateRequest{{Text: "a"}, {Id: "b"}}})
	f.Add([]byte{0x0a, 0xff, 0xff, 0xff, 0xff, 0x0f})
	f.Add([]byte{})
	const maxText = 64
	f.Fuzz(func(t *testing.T, b []byte) {
		var stream pb.AnnotateStreamRequest
		if proto.Unmarshal(b, &stream) == nil {
			for _, r := range stream.GetRecords() {
				var v violations
				validateAnnotate(r, "records[0]", maxText, &v)
				check(t, r, v, maxText)
			}
		}
		var r pb.AnnotateRequest
		if err := proto.Unmarshal(b, &r); err != nil {
			return
		}
		var v violations
		validateAnnotate(&r, "", maxText, &v)
		check(t, &r, v, maxText)
	})
}

func check(t *testing.T, r *pb.AnnotateRequest, v violations, maxText int) {
	err := v.err()
	if len(v) > 0 {
		if status.Code(err) != codes.InvalidArgument || len(badRequestViolations(status.Convert(err))) != len(v) {
			t.Fatalf("violations %v gave %v", v, err)
		}
		for _, fv := range v {
			if fv.GetField() == "" || fv.GetDescription() == "" {
				t.Fatalf("empty violation %v", fv)
			}
		}
		return
	}
	if err != nil {
		t.Fatalf("no violation but error %v", err)
	}
	ok := len(r.GetText()) <= maxText && // an empty text is accepted: an empty result
		r.GetTop() >= 0 && r.GetTop() <= maxTop &&
		r.GetMinScore() >= 0 && r.GetMinScore() <= 1 &&
		len(r.GetSubjects()) <= maxSubjects && len(r.GetId()) <= maxIDBytes &&
		(r.GetLanguage() == "" || len(r.GetLanguage()) <= maxLanguageBytes)
	if !ok {
		t.Fatalf("accepted a request beyond the limits: %v", r)
	}
	_ = OptionsFromProto(r)
}
