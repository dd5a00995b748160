package cli

import (
	"bufio"
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/batch"
)

// corpusDirs hold the bad study files (testdata/bad/README.md): each
// starts with "# want: fragment" and optionally "# at: line[:col]".
// design/ holds studies that parse but whose sampling design cannot be
// built.
var corpusDirs = []string{"../../../../testdata/bad", "../../../../testdata/bad/design"}

// corpusWant reads the header of a corpus file: the message fragment and
// the position ("" when not given) as it prints, "line" or "line:col".
func corpusWant(t *testing.T, data []byte) (want, at string) {
	t.Helper()
	sc := bufio.NewScanner(bytes.NewReader(data))
	for sc.Scan() {
		line := sc.Text()
		if !strings.HasPrefix(line, "#") {
			break
		}
		key, val, ok := strings.Cut(strings.TrimSpace(strings.TrimPrefix(line, "#")), ":")
		if !ok {
			continue
		}
		switch strings.TrimSpace(key) {
		case "want":
			want = strings.TrimSpace(val)
		case "at":
			at = strings.TrimSpace(val)
		}
	}
	if want == "" {
		t.Fatalf("no '# want:' header")
	}
	return want, at
}

// stackTrace reports whether text looks like a Go panic or a goroutine
// dump, which no input may ever produce.
func stackTrace(text string) bool {
	for _, s := range []string{"panic:", "goroutine ", "runtime error", "runtime/debug", ".go:"} {
		if strings.Contains(text, s) {
			return true
		}
	}
	return false
}

// corpusFiles returns every bad study file, at least 40 of them.
func corpusFiles(t *testing.T) []string {
	t.Helper()
	var files []string
	for _, dir := range corpusDirs {
		fs, err := filepath.Glob(filepath.Join(dir, "*.yaml"))
		if err != nil {
			t.Fatal(err)
		}
		files = append(files, fs...)
	}
	if len(files) < 40 {
		t.Fatalf("%d bad study files, want at least 40", len(files))
	}
	return files
}

// TestCorpusCommands runs `sweepstat check FILE` and `sweepstat run FILE
// --out DIR` (with the real batch.Run) on every bad study: exit code 2, a
// stderr line "FILE:AT: …" holding the expected fragment, nothing on
// stdout, no panic or stack trace text, and no --out folder created.
func TestCorpusCommands(t *testing.T) {
	t.Parallel()
	for _, file := range corpusFiles(t) {
		name := strings.TrimPrefix(file, "../../../../testdata/")
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			data, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			want, at := corpusWant(t, data)
			prefix := file + ":"
			if at != "" {
				prefix += at + ": "
			}
			for _, cmd := range []string{"check", "run"} {
				out := filepath.Join(t.TempDir(), "out")
				f, stdout, stderr := testFactory()
				f.Run = batch.Run
				args := []string{cmd, file}
				if cmd == "run" {
					args = append(args, "--out", out, "--workers", "1")
				}
				code := execute(f, args...)
				text := stderr.String()
				if code != ExitBadInput {
					t.Errorf("%s: exit %d, want %d; stderr:\n%s", cmd, code, ExitBadInput, text)
				}
				found := false
				for _, line := range strings.Split(text, "\n") {
					if strings.HasPrefix(line, prefix) && strings.Contains(line, want) {
						found = true
						break
					}
				}
				if !found {
					t.Errorf("%s: no stderr line starts %q and holds %q; stderr:\n%s", cmd, prefix, want, text)
				}
				if stackTrace(text) || stackTrace(stdout.String()) {
					t.Errorf("%s: panic or stack trace text in the output:\n%s%s", cmd, stdout, text)
				}
				if stdout.Len() != 0 {
					t.Errorf("%s: stdout %q, want nothing", cmd, stdout)
				}
				if _, err := os.Lstat(out); err == nil {
					t.Errorf("%s: %s was created for a bad study", cmd, out)
				}
			}
		})
	}
}
