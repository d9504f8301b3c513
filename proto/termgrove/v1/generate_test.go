package termgrovev1_test

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"testing"
)

// TestGeneratedCodeFresh regenerates the Go code with buf into a scratch
// folder and fails when the committed files differ (run `make proto`). The
// plugin version lines of the headers are ignored, so that a developer with
// other plugin versions is not failed for them; scripts/proto.sh --check
// pins the versions and compares byte for byte. Skips when buf or the
// plugins are not installed.
func TestGeneratedCodeFresh(t *testing.T) {
	gobin := filepath.Join(os.Getenv("HOME"), "go", "bin")
	if p, err := exec.Command("go", "env", "GOPATH").Output(); err == nil {
		gobin = filepath.Join(string(bytes.TrimSpace(p)), "bin")
	}
	t.Setenv("PATH", gobin+string(os.PathListSeparator)+os.Getenv("PATH"))
	for _, tool := range []string{"buf", "protoc-gen-go", "protoc-gen-go-grpc"} {
		if _, err := exec.LookPath(tool); err != nil {
			t.Skipf("%s not installed (scripts/proto.sh installs it): %v", tool, err)
		}
	}
	_, self, _, _ := runtime.Caller(0)
	root := filepath.Join(filepath.Dir(self), "..", "..", "..")
	out := t.TempDir()
	cmd := exec.Command("buf", "generate", "-o", out)
	cmd.Dir = root
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("buf generate: %v\n%s", err, b)
	}
	for _, name := range []string{"annotation.pb.go", "annotation_grpc.pb.go"} {
		want, err := os.ReadFile(filepath.Join(out, "proto", "termgrove", "v1", name))
		if err != nil {
			t.Fatal(err)
		}
		got, err := os.ReadFile(filepath.Join(root, "proto", "termgrove", "v1", name))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(stripVersions(got), stripVersions(want)) {
			t.Errorf("%s is stale: run `make proto` and commit the result", name)
		}
	}
}

// stripVersions drops the "// versions:" header lines naming plugin versions.
func stripVersions(b []byte) []byte {
	var out [][]byte
	for _, l := range bytes.Split(b, []byte("\n")) {
		if bytes.HasPrefix(l, []byte("// \tprotoc")) || bytes.HasPrefix(l, []byte("// - protoc")) {
			continue
		}
		out = append(out, l)
	}
	return bytes.Join(out, []byte("\n"))
}
