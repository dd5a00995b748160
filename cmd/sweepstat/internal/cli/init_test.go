package cli

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/studies"
)

func TestInitWritesLoadableStudy(t *testing.T) {
	t.Parallel()
	file := filepath.Join(t.TempDir(), "study.yaml")
	f, _, errOut := testFactory()
	if code := execute(f, "init", file); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if _, err := studies.Load(file); err != nil {
		t.Fatalf("studies.Load of the written file: %v", err)
	}
	data, err := os.ReadFile(file)
	if err != nil || !bytes.Equal(data, studies.InitTemplate()) {
		t.Errorf("file differs from studies.InitTemplate (err %v)", err)
	}

	// A second init keeps the file and exits 2.
	if err := os.WriteFile(file, []byte("mine\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	f, _, errOut = testFactory()
	if code := execute(f, "init", file); code != 2 {
		t.Errorf("init over an existing file: exit %d, want 2", code)
	}
	if !strings.Contains(errOut.String(), "exists (use --force") {
		t.Errorf("stderr %q", errOut)
	}
	if data, _ := os.ReadFile(file); string(data) != "mine\n" {
		t.Errorf("existing file overwritten: %q", data)
	}

	// --force replaces it.
	f, _, errOut = testFactory()
	if code := execute(f, "init", "--force", file); code != 0 {
		t.Fatalf("init --force: exit %d: %s", code, errOut)
	}
	if data, _ := os.ReadFile(file); !bytes.Equal(data, studies.InitTemplate()) {
		t.Error("init --force did not replace the file")
	}
}

func TestInitStdout(t *testing.T) {
	t.Parallel()
	f, out, errOut := testFactory()
	if code := execute(f, "init", "-"); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !bytes.Equal(out.Bytes(), studies.InitTemplate()) {
		t.Error("init - did not write the template to stdout")
	}
	if _, err := studies.Parse("stdout", out.Bytes()); err != nil {
		t.Errorf("template written to stdout does not parse: %v", err)
	}
}
