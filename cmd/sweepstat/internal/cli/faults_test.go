package cli

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/sweepstat/sweepstat/batch"
)

// tinyStudy writes the demo study renamed to name, cut to cases cases and
// without Sobol indices, into dir, and returns its path.
func tinyStudy(t *testing.T, dir, name string, cases int) string {
	t.Helper()
	text := studyText(t, name)
	for old, repl := range map[string]string{"cases: 20000": "cases: " + strconv.Itoa(cases), "sobol: 1024": "sobol: 0"} {
		if !strings.Contains(text, old) {
			t.Fatalf("demo study has no %q", old)
		}
		text = strings.Replace(text, old, repl, 1)
	}
	return writeFile(t, filepath.Join(dir, name+".yaml"), text)
}

// realFactory is testFactory with the real batch functions.
func realFactory() (*Factory, *bytes.Buffer, *bytes.Buffer) {
	f, out, errOut := testFactory()
	f.Run = batch.Run
	f.Export = batch.ExportCSV
	return f, out, errOut
}

// treeFiles returns every file under dir (relative path → content), nil
// when dir does not exist.
func treeFiles(t *testing.T, dir string) map[string]string {
	t.Helper()
	files := map[string]string{}
	err := filepath.WalkDir(dir, func(path string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := os.ReadFile(path)
		rel, _ := filepath.Rel(dir, path)
		files[rel] = string(data)
		return err
	})
	if os.IsNotExist(err) {
		return nil
	}
	if err != nil {
		t.Fatal(err)
	}
	return files
}

func sameTree(a, b map[string]string) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if w, ok := b[k]; !ok || v != w {
			return false
		}
	}
	return true
}

// mountTmpfs mounts a tmpfs of the given options on a new folder and
// unmounts it at the end of the test. It skips the test, saying why, when
// mounting is not possible (not root, or no mount permission).
func mountTmpfs(t *testing.T, opts string) string {
	t.Helper()
	if os.Geteuid() != 0 {
		t.Skip("needs root to mount a tmpfs (" + opts + ")")
	}
	dir := filepath.Join(t.TempDir(), "mnt")
	if err := os.Mkdir(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	if msg, err := exec.Command("mount", "-t", "tmpfs", "-o", opts, "tmpfs", dir).CombinedOutput(); err != nil {
		t.Skipf("cannot mount a tmpfs here (%v: %s)", err, bytes.TrimSpace(msg))
	}
	t.Cleanup(func() {
		if msg, err := exec.Command("umount", dir).CombinedOutput(); err != nil {
			t.Errorf("umount %s: %v: %s", dir, err, msg)
		}
	})
	return dir
}

// TestRunUnusableOutputPath: an --out that is a file, lies under a file,
// or is a read-only folder (a read-only tmpfs when root, whom permission
// bits do not stop; a mode 0555 folder otherwise) is bad input (exit 2)
// with a message naming the path, found before any case is solved;
// nothing is created and the file stays as it was.
func TestRunUnusableOutputPath(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		out  func(t *testing.T) string // returns the --out value
		want string                    // in stderr after "--out PATH"
	}{
		{"a file", func(t *testing.T) string {
			return writeFile(t, filepath.Join(t.TempDir(), "results"), "not a folder\n")
		}, " is a file, not a folder"},
		{"under a file", func(t *testing.T) string {
			return filepath.Join(writeFile(t, filepath.Join(t.TempDir(), "results"), "not a folder\n"), "sub")
		}, " cannot be used as the output folder: "},
		{"read-only folder", func(t *testing.T) string {
			if os.Geteuid() == 0 {
				return mountTmpfs(t, "size=1m,ro")
			}
			dir := filepath.Join(t.TempDir(), "ro")
			if err := os.Mkdir(dir, 0o555); err != nil {
				t.Fatal(err)
			}
			return dir
		}, ": cannot write in the output folder: "},
		{"under a read-only folder", func(t *testing.T) string {
			if os.Geteuid() == 0 {
				return filepath.Join(mountTmpfs(t, "size=1m,ro"), "deeper")
			}
			dir := filepath.Join(t.TempDir(), "ro")
			if err := os.Mkdir(dir, 0o555); err != nil {
				t.Fatal(err)
			}
			return filepath.Join(dir, "deeper")
		}, ": cannot create the output folder: "},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			study := tinyStudy(t, t.TempDir(), "tiny", 50)
			out := tc.out(t)
			parent := filepath.Dir(out)
			before := treeFiles(t, parent)
			f, stdout, stderr := realFactory()
			code := execute(f, "run", study, "--out", out, "--workers", "1", "-q")
			if code != ExitBadInput {
				t.Errorf("exit %d, want %d; stderr %q", code, ExitBadInput, stderr)
			}
			if want := "sweepstat: --out " + out + tc.want; !strings.HasPrefix(stderr.String(), want) {
				t.Errorf("stderr %q, want it to start %q", stderr, want)
			}
			if stackTrace(stderr.String()) || stdout.Len() != 0 {
				t.Errorf("stdout %q stderr %q", stdout, stderr)
			}
			if after := treeFiles(t, parent); !sameTree(before, after) {
				t.Errorf("files under %s changed: %d before, %d after", parent, len(before), len(after))
			}
		})
	}
}

// TestRunNeverOverwritesWithoutForce: a second `run` of a study whose
// output folder exists exits 2, names the folder and the --force flag,
// and leaves every file byte for byte; with --force the new outputs (of
// a changed seed) replace the old ones whole.
func TestRunNeverOverwritesWithoutForce(t *testing.T) {
	t.Parallel()
	dir, out := t.TempDir(), filepath.Join(t.TempDir(), "out")
	study := tinyStudy(t, dir, "keep-me", 300)
	final := filepath.Join(out, "keep-me")
	f, _, stderr := realFactory()
	if code := execute(f, "run", study, "--out", out, "-q"); code != 0 {
		t.Fatalf("first run: exit %d: %s", code, stderr)
	}
	writeFile(t, filepath.Join(final, "notes.txt"), "mine\n")
	before := treeFiles(t, final)

	// Same name, another seed: different outputs if it ran.
	text, _ := os.ReadFile(study)
	reseeded := strings.Replace(string(text), "seed: 7919", "seed: 11", 1)
	if reseeded == string(text) {
		t.Fatal("demo study seed line not found")
	}
	writeFile(t, study, reseeded)

	f, stdout, stderr := realFactory()
	code := execute(f, "run", study, "--out", out, "-q")
	if code != ExitBadInput {
		t.Errorf("second run: exit %d, want %d", code, ExitBadInput)
	}
	if want := "sweepstat: keep-me: " + final + ": output folder exists (use --force to replace it)"; !strings.Contains(stderr.String(), want) {
		t.Errorf("stderr %q lacks %q", stderr, want)
	}
	if stdout.Len() != 0 {
		t.Errorf("stdout %q", stdout)
	}
	if after := treeFiles(t, final); !sameTree(before, after) {
		t.Error("the previous outputs changed without --force")
	}

	f, _, stderr = realFactory()
	if code := execute(f, "run", study, "--out", out, "-q", "--force"); code != 0 {
		t.Fatalf("forced run: exit %d: %s", code, stderr)
	}
	after := treeFiles(t, final)
	if _, kept := after["notes.txt"]; kept || after[batch.CasesFile] == before[batch.CasesFile] {
		t.Error("--force did not replace the outputs whole")
	}
	if left, _ := filepath.Glob(filepath.Join(out, ".*")); len(left) != 0 {
		t.Errorf("left behind: %v", left)
	}
}

// TestRunDiskFull runs into a 1 MiB tmpfs (root only; skipped with a
// message otherwise). A small study fits; then a larger one of the same
// name with --force runs out of space while writing cases.arrow: exit 1,
// an error naming the file and the cause, the staging folder removed and
// the small study's outputs untouched.
func TestRunDiskFull(t *testing.T) {
	t.Parallel()
	out := mountTmpfs(t, "size=1m")
	dir := t.TempDir()
	final := filepath.Join(out, "filler")
	f, _, stderr := realFactory()
	if code := execute(f, "run", tinyStudy(t, dir, "filler", 200), "--out", out, "-q", "--workers", "1"); code != 0 {
		t.Fatalf("small run: exit %d: %s", code, stderr)
	}
	before := treeFiles(t, final)

	// 20,000 cases are about 5 MB of cases.arrow.
	big := tinyStudy(t, t.TempDir(), "filler", 20000)
	f, stdout, stderr := realFactory()
	code := execute(f, "run", big, "--out", out, "-q", "--force", "--workers", "2")
	if code != ExitFailure {
		t.Errorf("exit %d, want %d; stderr %q", code, ExitFailure, stderr)
	}
	msg := stderr.String()
	if !strings.Contains(msg, batch.CasesFile) || !strings.Contains(msg, "no space left on device") || stackTrace(msg) {
		t.Errorf("stderr %q should name %s and say no space left on device", msg, batch.CasesFile)
	}
	if stdout.Len() != 0 {
		t.Errorf("stdout %q", stdout)
	}
	if after := treeFiles(t, final); !sameTree(before, after) {
		t.Error("the previous outputs changed")
	}
	ents, _ := os.ReadDir(out)
	if len(ents) != 1 || ents[0].Name() != "filler" {
		var names []string
		for _, e := range ents {
			names = append(names, e.Name())
		}
		t.Errorf("%s holds %v, want only filler", out, names)
	}
}

// TestExportDamagedFile: `export` of an Arrow file that is empty, not
// Arrow, cut short or has its footer broken is bad input: exit 2, one
// line naming the file, no panic; a file that does not exist and a folder
// are bad input too. (batch's TestExportDamagedArrow flips random bytes.)
func TestExportDamagedFile(t *testing.T) {
	t.Parallel()
	out := t.TempDir()
	f, _, stderr := realFactory()
	if code := execute(f, "run", tinyStudy(t, t.TempDir(), "tiny", 300), "--out", out, "-q"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, stderr)
	}
	good, err := os.ReadFile(filepath.Join(out, "tiny", batch.SummaryFile))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	tests := []struct {
		name string
		data []byte // nil: do not create the file
		dir  bool
	}{
		{name: "empty", data: []byte{}},
		{name: "not arrow", data: []byte("output,n\nbreakthrough_pvi,300\n")},
		{name: "magic only", data: good[:6]},
		{name: "cut in half", data: good[:len(good)/2]},
		{name: "footer cut", data: good[:len(good)-10]},
		{name: "missing"},
		{name: "a folder", dir: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			path := filepath.Join(dir, strings.ReplaceAll(tc.name, " ", "-")+".arrow")
			switch {
			case tc.dir:
				if err := os.Mkdir(path, 0o755); err != nil {
					t.Fatal(err)
				}
			case tc.data != nil:
				writeFile(t, path, string(tc.data))
			}
			f, stdout, stderr := realFactory()
			code := execute(f, "export", path, "--csv")
			if code != ExitBadInput {
				t.Errorf("exit %d, want %d; stderr %q", code, ExitBadInput, stderr)
			}
			msg := stderr.String()
			if !strings.HasPrefix(msg, "sweepstat: ") || !strings.Contains(msg, path) || strings.Count(msg, "\n") != 1 || stackTrace(msg) {
				t.Errorf("stderr %q: want one line naming %s", msg, path)
			}
			if stdout.Len() != 0 {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			if tc.data != nil {
				if got, _ := os.ReadFile(path); !bytes.Equal(got, tc.data) {
					t.Error("export changed the file")
				}
			}
		})
	}
}
