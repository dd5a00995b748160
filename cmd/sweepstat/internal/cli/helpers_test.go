package cli

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/spf13/cobra"

	"github.com/sweepstat/sweepstat/studies"
)

// fakeClock is a clock that moves only when told to.
type fakeClock struct{ t time.Time }

func newFakeClock() *fakeClock {
	return &fakeClock{t: time.Date(2025, 1, 2, 3, 4, 5, 0, time.UTC)}
}

func (c *fakeClock) Now() time.Time          { return c.t }
func (c *fakeClock) Advance(d time.Duration) { c.t = c.t.Add(d) }

// testFactory returns a Factory on Test streams with a fake clock and no
// batch functions, and the stdout and stderr buffers.
func testFactory() (f *Factory, out, errOut *bytes.Buffer) {
	ios, _, out, errOut := Test()
	return &Factory{IO: ios, Version: "1.2.3-test", Now: newFakeClock().Now}, out, errOut
}

// execute runs the whole command tree with args, as Main would.
func execute(f *Factory, args ...string) int {
	return Execute(context.Background(), f, args)
}

// withGlobals wraps one command in a bare root carrying the global flags
// and the root's error handling, for runF capture tests.
func withGlobals(f *Factory, sub *cobra.Command) *cobra.Command {
	root := &cobra.Command{Use: "sweepstat", SilenceUsage: true, SilenceErrors: true}
	root.SetOut(f.IO.Out)
	root.SetErr(f.IO.ErrOut)
	root.SetFlagErrorFunc(func(cmd *cobra.Command, err error) error {
		return &UsageError{Cmd: cmd.CommandPath(), Err: err}
	})
	AddGlobalFlags(root.PersistentFlags(), f.global())
	root.AddCommand(sub)
	return root
}

// studyText returns the embedded demo study renamed to name, a valid
// study file.
func studyText(t *testing.T, name string) string {
	t.Helper()
	demo, err := studies.Demo()
	if err != nil {
		t.Fatalf("studies.Demo: %v", err)
	}
	src := string(studies.DemoSource())
	old := "name: " + demo.Name
	if !strings.Contains(src, old) {
		t.Fatalf("demo study has no line %q", old)
	}
	return strings.Replace(src, old, "name: "+name, 1)
}

func writeFile(t *testing.T, path, text string) string {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// marked removes the markers from text and returns the 1-based line and
// column (in characters) of each, in marker order, the way
// encoding/csv's reader tests mark expected error positions.
func marked(text string, markers ...string) (string, [][2]int) {
	pos := make([][2]int, len(markers))
	for i, m := range markers {
		idx := strings.Index(text, m)
		if idx < 0 {
			panic("marker not found: " + m)
		}
		before := text[:idx]
		line := strings.Count(before, "\n") + 1
		col := len([]rune(before[strings.LastIndex(before, "\n")+1:])) + 1
		pos[i] = [2]int{line, col}
		text = before + text[idx+len(m):]
	}
	return text, pos
}
