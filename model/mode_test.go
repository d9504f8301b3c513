package model_test

import (
	"os"
	"path/filepath"
	"testing"

	"termgrove/model"
	"termgrove/model/modeltest"
)

// TestSaveFileMode: a new model file is readable by the group and others
// (0644, like the other files a tool writes), so that a service running
// as another user can load it; an existing file keeps its permissions.
// os.CreateTemp alone would leave 0600. Common practice, no source.
func TestSaveFileMode(t *testing.T) {
	m := modeltest.Synthetic(modeltest.Options{Concepts: 5, Free: 1, Words: 30, Seed: 1})
	dir := t.TempDir()
	p := filepath.Join(dir, "m.grove")
	if err := model.Save(p, m); err != nil {
		t.Fatal(err)
	}
	fi, err := os.Stat(p)
	if err != nil {
		t.Fatal(err)
	}
	if got := fi.Mode().Perm(); got != 0o644 {
		t.Errorf("new model file mode %v, want -rw-r--r--", got)
	}
	if err := os.Chmod(p, 0o640); err != nil {
		t.Fatal(err)
	}
	if err := model.Save(p, m); err != nil {
		t.Fatal(err)
	}
	fi, _ = os.Stat(p)
	if got := fi.Mode().Perm(); got != 0o640 {
		t.Errorf("rewritten model file mode %v, want the old -rw-r-----", got)
	}
}
