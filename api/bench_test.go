package api

import (
	"context"
	"strings"
	"testing"

	pb "termgrove/proto/termgrove/v1"
)

// BenchmarkAnnotateOverhead measures what the server and a loopback gRPC
// round trip add to an annotation: the annotator is the cheap test double,
// so nearly all the time is transport, validation, metrics and conversion.
func BenchmarkAnnotateOverhead(b *testing.B) {
	ts := startServer(b, Config{MaxConcurrent: 1 << 16}, nil)
	text := strings.Repeat("cat purr dog bark weather rain animal other words here ", 15) // 150 words
	req := &pb.AnnotateRequest{Text: text}
	b.ReportAllocs()
	b.ResetTimer()
	b.RunParallel(func(pb *testing.PB) {
		for pb.Next() {
			if _, err := ts.c.Annotate(context.Background(), req); err != nil {
				b.Error(err)
				return
			}
		}
	})
}
