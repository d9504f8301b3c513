package main

import (
	"context"
	"fmt"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/encoding"
	"google.golang.org/grpc/mem"
	"google.golang.org/grpc/status"
	"google.golang.org/protobuf/proto"

	pb "termgrove/proto/termgrove/v1"
)

// The load tool shares the machine's cores with the server it measures, so
// its own work per call is kept small: each record's request is marshalled
// once, before the run, and a response is decoded in full only for every
// -check-every'th call (and for every warm-up call); the others are only
// counted. The server does all its work either way.

// annotateMethod is the full name of the unary annotation call.
const annotateMethod = "/termgrove.v1.AnnotationService/Annotate"

// prepared is an AnnotateRequest marshalled once, with its record id.
type prepared struct {
	id   string
	wire []byte
}

// prepare marshals one request per text, with id "r<index>".
func prepare(modelName string, texts []string) ([]prepared, error) {
	out := make([]prepared, len(texts))
	for i, t := range texts {
		id := fmt.Sprintf("r%d", i)
		b, err := proto.Marshal(&pb.AnnotateRequest{Model: modelName, Id: id, Text: t})
		if err != nil {
			return nil, err
		}
		out[i] = prepared{id: id, wire: b}
	}
	return out, nil
}

// reply receives a response: its size, and its bytes when check is set.
type reply struct {
	check bool
	n     int
	wire  []byte
}

// protoCodec is gRPC's own proto codec, for the calls that use messages.
var protoCodec = encoding.GetCodecV2("proto")

// wireCodec sends a prepared request's bytes as they are and receives a
// reply without decoding it; other messages go through protoCodec. Its name
// is "proto", so the calls carry the usual content type.
type wireCodec struct{}

func (wireCodec) Name() string { return "proto" }

func (wireCodec) Marshal(v any) (mem.BufferSlice, error) {
	if p, ok := v.(*prepared); ok {
		return mem.BufferSlice{mem.SliceBuffer(p.wire)}, nil
	}
	return protoCodec.Marshal(v)
}

func (wireCodec) Unmarshal(data mem.BufferSlice, v any) error {
	if r, ok := v.(*reply); ok {
		r.n = data.Len()
		if r.check {
			r.wire = data.Materialize()
		}
		return nil
	}
	return protoCodec.Unmarshal(data, v)
}

// call makes one Annotate call with a prepared request. With check, the
// response is decoded, must carry the request's id, and is returned.
func call(ctx context.Context, cc *grpc.ClientConn, p *prepared, check bool, opts ...grpc.CallOption) (*pb.AnnotateResponse, error) {
	r := reply{check: check}
	if err := cc.Invoke(ctx, annotateMethod, p, &r, opts...); err != nil {
		return nil, err
	}
	if !check {
		if r.n == 0 { // an answer always carries the record's id
			return nil, status.Errorf(codes.DataLoss, "empty response to %s", p.id)
		}
		return nil, nil
	}
	resp := &pb.AnnotateResponse{}
	if err := proto.Unmarshal(r.wire, resp); err != nil {
		return nil, status.Errorf(codes.DataLoss, "response to %s: %v", p.id, err)
	}
	if resp.GetId() != p.id {
		return nil, status.Errorf(codes.DataLoss, "response to %s carries id %q", p.id, resp.GetId())
	}
	return resp, nil
}
