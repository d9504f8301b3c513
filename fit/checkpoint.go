package fit

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/gob"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// A checkpoint file is
//
//	"termgrove-checkpoint\n"  magic
//	uint32 LE                 version (checkpointVersion)
//	uint64 LE                 payload length
//	payload                   encoding/gob of checkpoint
//	[32]byte                  SHA-256 of the payload
//
// written to a temporary file in the same folder, synced, and renamed over
// the old one, so a crash leaves either the old or the new checkpoint.
const (
	checkpointMagic   = "termgrove-checkpoint\n"
	checkpointVersion = 1
)

type checkpoint struct {
	Options  Options
	K, C, F  int
	W        int
	Sweep    int
	Z        []int32
	Alpha    []float64
	RNG      [][]byte
	Corpus   uint64 // corpus checksum
	Tokens   int64
	LogLik   []LogLikPoint
	Seconds  float64
	Beta0    float64
	Lambda   float64
	Training int // training records
}

func (st *state) writeCheckpoint(path string, secs float64) error {
	ck := checkpoint{
		Options: st.opt, K: st.K, C: st.C, F: st.F, W: st.W,
		Sweep: st.sweep, Z: st.z, Alpha: st.alpha, Corpus: st.checksum,
		Tokens: int64(len(st.words)), LogLik: st.llHist, Seconds: st.secs + secs,
		Beta0: st.beta0, Lambda: st.lambda, Training: len(st.docs),
	}
	ck.Options.Progress = nil
	for _, r := range st.rngs {
		b, err := r.p.MarshalBinary()
		if err != nil {
			return err
		}
		ck.RNG = append(ck.RNG, b)
	}
	var buf bytes.Buffer
	if err := gob.NewEncoder(&buf).Encode(&ck); err != nil {
		return fmt.Errorf("fit: encoding checkpoint: %w", err)
	}
	return writeAtomic(path, func(w io.Writer) error {
		var hdr [12]byte
		binary.LittleEndian.PutUint32(hdr[:4], checkpointVersion)
		binary.LittleEndian.PutUint64(hdr[4:], uint64(buf.Len()))
		sum := sha256.Sum256(buf.Bytes())
		for _, b := range [][]byte{[]byte(checkpointMagic), hdr[:], buf.Bytes(), sum[:]} {
			if _, err := w.Write(b); err != nil {
				return err
			}
		}
		return nil
	})
}

// writeAtomic writes a file through a temporary file in the same folder:
// write, fsync, close, rename, fsync the folder. On any error the temporary
// file is removed and the old file, if any, is untouched.
func writeAtomic(path string, fill func(io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("fit: writing %s: %w", path, err)
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
			err = fmt.Errorf("fit: writing %s: %w", path, err)
		}
	}()
	bw := bufio.NewWriterSize(f, 1<<20)
	if err = fill(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return err
	}
	if err = f.Sync(); err != nil {
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	if err = os.Rename(tmp, path); err != nil {
		return err
	}
	if d, derr := os.Open(dir); derr == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

func readCheckpoint(path string) (*checkpoint, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("%w: %v", ErrCheckpoint, err)
	}
	bad := func(why string) error { return fmt.Errorf("%w: %s: %s", ErrCheckpoint, path, why) }
	if !bytes.HasPrefix(data, []byte(checkpointMagic)) {
		return nil, bad("not a termgrove checkpoint")
	}
	data = data[len(checkpointMagic):]
	if len(data) < 12 {
		return nil, bad("truncated")
	}
	if v := binary.LittleEndian.Uint32(data[:4]); v != checkpointVersion {
		return nil, bad(fmt.Sprintf("version %d, this termgrove reads %d", v, checkpointVersion))
	}
	n := binary.LittleEndian.Uint64(data[4:12])
	data = data[12:]
	if uint64(len(data)) != n+32 {
		return nil, bad("truncated")
	}
	sum := sha256.Sum256(data[:n])
	if !bytes.Equal(sum[:], data[n:]) {
		return nil, bad("checksum mismatch (corrupted)")
	}
	var ck checkpoint
	if err := gob.NewDecoder(bytes.NewReader(data[:n])).Decode(&ck); err != nil {
		return nil, bad(err.Error())
	}
	return &ck, nil
}

// restore loads a checkpoint into a fresh state built from the same corpus
// and prior.
func (st *state) restore(ck *checkpoint, path string) error {
	bad := func(why string) error { return fmt.Errorf("%w: %s: %s", ErrCheckpoint, path, why) }
	if ck.Corpus != st.checksum {
		return bad("the records or the vocabulary (their analysed words) differ from those of the checkpointed fit")
	}
	if ck.K != st.K || ck.C != st.C || ck.F != st.F || ck.W != st.W {
		return bad(fmt.Sprintf("topics/words differ: checkpoint K=%d C=%d W=%d, now K=%d C=%d W=%d", ck.K, ck.C, ck.W, st.K, st.C, st.W))
	}
	if int64(len(ck.Z)) != int64(len(st.words)) || len(ck.Alpha) != st.K {
		return bad("sizes differ")
	}
	if ck.Beta0 != st.beta0 || ck.Lambda != st.lambda {
		return bad("prior settings differ")
	}
	copy(st.z, ck.Z)
	copy(st.alpha, ck.Alpha)
	st.sweep = ck.Sweep
	st.llHist = ck.LogLik
	st.secs = ck.Seconds
	if r := st.anchorRelease(); r > 0 && st.sweep >= r {
		st.releaseAnchors()
	}
	if err := st.rebuildCounts(); err != nil {
		return err
	}
	if len(ck.RNG) == len(st.rngs) {
		for i, b := range ck.RNG {
			if err := st.rngs[i].p.UnmarshalBinary(b); err != nil {
				return bad(err.Error())
			}
		}
	} else { // another worker count: fresh streams derived from the sweep
		for i := range st.rngs {
			st.rngs[i].p.Seed(uint64(st.opt.Seed)^uint64(st.sweep)<<32, 0x9e3779b97f4a7c15^uint64(i))
		}
	}
	if len(st.workers) > 1 {
		for _, w := range st.workers {
			w.attachLocal()
		}
	} else {
		st.workers[0].attachGlobal()
	}
	return nil
}
