package cli

import (
	"fmt"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/studies"
)

func TestCheckGood(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	file := writeFile(t, filepath.Join(dir, "good.yaml"), studyText(t, "good-study"))
	st, err := studies.Load(file)
	if err != nil {
		t.Fatal(err)
	}
	f, out, errOut := testFactory()
	if code := execute(f, "check", file); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	want := fmt.Sprintf("ok: %s (good-study, %d cases, %d uncertain parameters)\n", file, st.Cases, len(st.Uncertain()))
	if out.String() != want {
		t.Errorf("stdout %q, want %q", out, want)
	}
	if errOut.Len() != 0 {
		t.Errorf("stderr %q, want nothing", errOut)
	}
}

// A bad study prints every positioned error, file:line:col: key.path: …,
// and exits 2; good files given with it are still listed. The expected
// positions are marked in the text (§ and ∑), as encoding/csv's tests do.
func TestCheckBad(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	good := writeFile(t, filepath.Join(dir, "a-good.yaml"), studyText(t, "good-study"))
	text := studyText(t, "bad-study")
	text = strings.Replace(text, "cases: ", "∑colour: blue\ncases: ", 1)
	text = strings.Replace(text, "mu1_cp: {", "mu1_cp: §-1 # {", 1)
	text, pos := marked(text, "∑", "§")
	bad := writeFile(t, filepath.Join(dir, "b-bad.yaml"), text)

	f, out, errOut := testFactory()
	code := execute(f, "check", dir)
	if code != 2 {
		t.Errorf("exit %d, want 2", code)
	}
	if !strings.HasPrefix(out.String(), "ok: "+good+" ") {
		t.Errorf("stdout %q does not list the good file", out)
	}
	for i, want := range []string{
		fmt.Sprintf("%s:%d:%d: colour: ", bad, pos[0][0], pos[0][1]),
		fmt.Sprintf("%s:%d:%d: parameters.mu1_cp: ", bad, pos[1][0], pos[1][1]),
	} {
		if !strings.Contains(errOut.String(), "\n"+want) && !strings.HasPrefix(errOut.String(), want) {
			t.Errorf("error %d: stderr lacks a line starting %q:\n%s", i, want, errOut)
		}
	}
	if !strings.Contains(errOut.String(), "sweepstat: 2 errors in 1 of 2 study files\n") {
		t.Errorf("stderr lacks the summary line:\n%s", errOut)
	}
}

func TestCheckMissingFile(t *testing.T) {
	t.Parallel()
	f, _, errOut := testFactory()
	missing := filepath.Join(t.TempDir(), "none.yaml")
	if code := execute(f, "check", missing); code != 2 {
		t.Errorf("exit %d, want 2", code)
	}
	if !strings.Contains(errOut.String(), missing) {
		t.Errorf("stderr %q does not name %s", errOut, missing)
	}
}

func TestCheckEmptyFolder(t *testing.T) {
	t.Parallel()
	f, _, errOut := testFactory()
	if code := execute(f, "check", t.TempDir()); code != 2 {
		t.Errorf("exit %d, want 2", code)
	}
	if !strings.Contains(errOut.String(), "no study files") {
		t.Errorf("stderr %q", errOut)
	}
}
