package api

import (
	"fmt"
	"math"
	"strconv"

	"google.golang.org/genproto/googleapis/rpc/errdetails"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/status"

	pb "termgrove/proto/termgrove/v1"
)

// Field limits that are not configurable: generous for real records, small
// enough that a request cannot make the server do unbounded work.
const (
	maxIDBytes       = 1024
	maxModelBytes    = 256
	maxIRIBytes      = 4096
	maxSubjects      = 1000
	maxTop           = 1000
	maxTopWords      = 1000
	maxLanguageBytes = 35 // BCP 47 tags are short; RFC 5646 section 4.4.1 recommends 35
)

// violations collects the bad fields of one request.
type violations []*errdetails.BadRequest_FieldViolation

func (v *violations) add(field, format string, args ...any) {
	*v = append(*v, &errdetails.BadRequest_FieldViolation{Field: field, Description: fmt.Sprintf(format, args...)})
}

// err returns the INVALID_ARGUMENT status of v, or nil when v is empty.
func (v violations) err() error {
	if len(v) == 0 {
		return nil
	}
	msg := v[0].Field + ": " + v[0].Description
	if len(v) > 1 {
		msg += " (and " + strconv.Itoa(len(v)-1) + " more)"
	}
	st, derr := status.New(codes.InvalidArgument, msg).WithDetails(&errdetails.BadRequest{FieldViolations: v})
	if derr != nil {
		return status.Error(codes.InvalidArgument, msg)
	}
	return st.Err()
}

// join returns prefix.field, or field when prefix is empty.
func join(prefix, field string) string {
	if prefix == "" {
		return field
	}
	return prefix + "." + field
}

// validateAnnotate checks the fields of r that need no model, appending
// violations with field paths under prefix (e.g. "records[3]").
func validateAnnotate(r *pb.AnnotateRequest, prefix string, maxText int, v *violations) {
	if len(r.GetModel()) > maxModelBytes {
		v.add(join(prefix, "model"), "longer than %d bytes", maxModelBytes)
	}
	if len(r.GetId()) > maxIDBytes {
		v.add(join(prefix, "id"), "longer than %d bytes", maxIDBytes)
	}
	// An empty text is not an error: it gets an empty result, as the
	// annotate package and the command line give it (a catalogue record
	// without an abstract is ordinary input).
	if n := len(r.GetText()); n > maxText {
		v.add(join(prefix, "text"), "%d bytes, more than the server's limit of %d", n, maxText)
	}
	if t := r.GetTop(); t < 0 || t > maxTop {
		v.add(join(prefix, "top"), "%d not in 0..%d", t, maxTop)
	}
	if s := r.GetMinScore(); math.IsNaN(s) || s < 0 || s > 1 {
		v.add(join(prefix, "min_score"), "%v not in [0, 1]", s)
	}
	if n := len(r.GetSubjects()); n > maxSubjects {
		v.add(join(prefix, "subjects"), "%d subjects, more than %d", n, maxSubjects)
	} else {
		for i, s := range r.GetSubjects() {
			if s == "" || len(s) > maxIRIBytes {
				v.add(join(prefix, "subjects["+strconv.Itoa(i)+"]"), "must be a concept IRI of 1..%d bytes", maxIRIBytes)
			}
		}
	}
	if _, ok := pb.SubjectMode_name[int32(r.GetSubjectMode())]; !ok {
		v.add(join(prefix, "subject_mode"), "unknown value %d", int32(r.GetSubjectMode()))
	}
	if l := r.GetLanguage(); l != "" && !validLanguage(l) {
		v.add(join(prefix, "language"), "%q is not a BCP 47 language tag", l)
	}
}

// validLanguage accepts the shape of a BCP 47 tag (RFC 5646 section 2.1):
// subtags of 1..8 ASCII letters or digits joined by hyphens, the first of
// 2..8 letters. It does not check the subtag registry.
func validLanguage(tag string) bool {
	if len(tag) > maxLanguageBytes {
		return false
	}
	n := 0 // length of the current subtag
	first := true
	for i := 0; i <= len(tag); i++ {
		if i == len(tag) || tag[i] == '-' {
			if n == 0 || n > 8 || (first && n < 2) {
				return false
			}
			n, first = 0, false
			continue
		}
		c := tag[i]
		letter := c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z'
		digit := c >= '0' && c <= '9'
		if !letter && !(digit && !first) {
			return false
		}
		n++
	}
	return true
}
