package main

import (
	"context"
	"net"
	"testing"
	"time"

	"google.golang.org/grpc"
	"google.golang.org/grpc/codes"
	"google.golang.org/grpc/credentials/insecure"
	"google.golang.org/grpc/status"

	pb "termgrove/proto/termgrove/v1"
)

// echoServer answers Annotate with the request's id and text length, or
// with a wrong id when the text is "lie".
type echoServer struct {
	pb.UnimplementedAnnotationServiceServer
}

func (echoServer) Annotate(_ context.Context, r *pb.AnnotateRequest) (*pb.AnnotateResponse, error) {
	if r.GetText() == "lie" {
		return &pb.AnnotateResponse{Id: "other"}, nil
	}
	if r.GetText() == "busy" {
		return nil, status.Error(codes.ResourceExhausted, "busy")
	}
	return &pb.AnnotateResponse{Id: r.GetId(), Tokens: int32(len(r.GetText()))}, nil
}

func TestPreparedCalls(t *testing.T) {
	lis, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	srv := grpc.NewServer()
	pb.RegisterAnnotationServiceServer(srv, echoServer{})
	go srv.Serve(lis)
	defer srv.Stop()
	cc, err := grpc.NewClient(lis.Addr().String(), grpc.WithTransportCredentials(insecure.NewCredentials()),
		grpc.WithDefaultCallOptions(grpc.ForceCodecV2(wireCodec{})))
	if err != nil {
		t.Fatal(err)
	}
	defer cc.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	reqs, err := prepare("m", []string{"some words here", "lie", "busy"})
	if err != nil {
		t.Fatal(err)
	}
	if resp, err := call(ctx, cc, &reqs[0], true); err != nil || resp.GetTokens() != int32(len("some words here")) {
		t.Fatalf("checked call: %v %v", resp, err)
	}
	for _, check := range []bool{true, false} {
		if _, err := call(ctx, cc, &reqs[0], check); err != nil {
			t.Fatalf("check=%v: %v", check, err)
		}
	}
	// A checked answer must carry the request's id; an unchecked one is
	// only counted.
	if _, err := call(ctx, cc, &reqs[1], true); status.Code(err) != codes.DataLoss {
		t.Fatalf("wrong id not caught: %v", err)
	}
	if _, err := call(ctx, cc, &reqs[1], false); err != nil {
		t.Fatalf("unchecked: %v", err)
	}
	if _, err := call(ctx, cc, &reqs[2], false); status.Code(err) != codes.ResourceExhausted {
		t.Fatalf("status lost: %v", err)
	}
	// Ordinary messages still go through the proto codec on the same conn.
	resp, err := pb.NewAnnotationServiceClient(cc).Annotate(ctx, &pb.AnnotateRequest{Id: "x", Text: "abc"})
	if err != nil || resp.GetId() != "x" || resp.GetTokens() != 3 {
		t.Fatalf("plain call: %v %v", resp, err)
	}
}
