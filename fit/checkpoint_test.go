package fit

import (
	"context"
	"errors"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// TestResumeSameAsUninterrupted stops a one-worker fit half-way (the
// checkpoint is written on cancel), resumes it, and expects exactly the model
// of an uninterrupted fit. Common practice, no source.
func TestResumeSameAsUninterrupted(t *testing.T) {
	p, c := randomSetup(21, 10, 40, 100, 30)
	opt := Options{FreeTopics: 3, Sweeps: 30, BurnIn: 4, OptimizeEvery: 3, LogLikEvery: 4, Seed: 8, Workers: 1}
	full, err := RunContext(t.Context(), p, c, opt)
	if err != nil {
		t.Fatal(err)
	}
	ck := filepath.Join(t.TempDir(), "fit.checkpoint")
	ctx, cancel := context.WithCancel(t.Context())
	o := opt
	o.Checkpoint, o.CheckpointPath = 1<<40, ck
	o.Progress = func(pr Progress) {
		if pr.Sweep == 13 {
			cancel()
		}
	}
	if _, err := RunContext(ctx, p, c, o); !errors.Is(err, context.Canceled) {
		t.Fatalf("cancelled run: %v", err)
	}
	res, err := Resume(t.Context(), ck, p, c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(res.Model.Counts, full.Model.Counts) || !reflect.DeepEqual(res.Model.Alpha, full.Model.Alpha) {
		t.Fatal("resumed fit differs from the uninterrupted one")
	}
	if !reflect.DeepEqual(res.LogLik, full.LogLik) {
		t.Fatalf("log-likelihood history differs:\n%v\n%v", res.LogLik, full.LogLik)
	}

	// Another corpus must be refused.
	c2 := *c
	c2.Docs = c.Docs[1:]
	if _, err := Resume(t.Context(), ck, p, &c2, Options{}); !errors.Is(err, ErrCheckpoint) {
		t.Fatalf("resume on other records: %v", err)
	}
	// A damaged checkpoint must be refused with the file named.
	data, _ := os.ReadFile(ck)
	data[len(data)/2] ^= 0xff
	bad := filepath.Join(t.TempDir(), "bad.checkpoint")
	os.WriteFile(bad, data, 0o644)
	if _, err := Resume(t.Context(), bad, p, c, Options{}); !errors.Is(err, ErrCheckpoint) {
		t.Fatalf("corrupted checkpoint: %v", err)
	}
	os.WriteFile(bad, data[:len(data)/3], 0o644)
	if _, err := Resume(t.Context(), bad, p, c, Options{}); !errors.Is(err, ErrCheckpoint) {
		t.Fatalf("truncated checkpoint: %v", err)
	}
}

// TestWriteAtomicFailure: a write that fails half-way (a full disk, say)
// leaves the old file as it was and no temporary file behind.
// Common practice, no source.
func TestWriteAtomicFailure(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "state.checkpoint")
	if err := os.WriteFile(path, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	full := errors.New("no space left on device")
	err := writeAtomic(path, func(w io.Writer) error {
		w.Write(make([]byte, 4<<20))
		return full
	})
	if !errors.Is(err, full) || !strings.Contains(err.Error(), path) {
		t.Fatalf("error %v should wrap the cause and name the file", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "old" {
		t.Fatalf("old file changed: %q", b)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		t.Fatalf("left behind: %v", ents)
	}
}
