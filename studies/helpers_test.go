package studies

import (
	"errors"
	"strings"
	"testing"
	"unicode/utf8"
)

// baseStudy is a small valid study; the bad-study tests edit one line of
// it at a time.
const baseStudy = `name: base-study
cases: 100
seed: 5
parameters:
  s1_init: 0.2
  s1r: {same_as: s1_init}
  s2r: {dist: triangular, min: 0.15, mode: 0.25, max: 0.35}
  kr1_max: {dist: uniform, min: 0.2, max: 0.5}
  kr2_max: 0.85
  n1: {dist: uniform, min: 1.5, max: 4}
  n2: {dist: uniform, min: 1.5, max: 3.5}
  mu1_cp: 0.5
  mu2_cp: {dist: lognormal, mean: 3, sd: 1.2, min: 0.8}
correlations:
  - [n1, n2, 0.4]
`

// dipLines give baseStudy an uncertain dip with everything it needs.
const dipLines = `  dip_deg: {dist: uniform, min: -8, max: 8}
  rho1: 1040
  rho2: 860
  perm_md: {dist: lognormal, mean: 150, sd: 80}
  velocity_m_per_day: 0.3
`

// edit returns baseStudy with the first line that starts with old
// replaced by repl (which may span several lines or be empty). It panics
// when no line matches: a broken fixture is a bug in the test.
func edit(old, repl string) string {
	return editIn(baseStudy, old, repl)
}

func editIn(src, old, repl string) string {
	lines := strings.SplitAfter(src, "\n")
	for i, l := range lines {
		if strings.HasPrefix(l, old) {
			if repl != "" && !strings.HasSuffix(repl, "\n") {
				repl += "\n"
			}
			lines[i] = repl
			return strings.Join(lines, "")
		}
	}
	panic("edit: no line starts with " + old)
}

// withDip returns baseStudy with dipLines added at the end of parameters.
func withDip() string {
	return edit("  mu2_cp:", "  mu2_cp: {dist: lognormal, mean: 3, sd: 1.2, min: 0.8}\n"+dipLines)
}

// mark removes the § marking the expected error position from src and
// returns the text and that position (column in characters, as the YAML
// parser counts), following encoding/csv's reader_test.
func mark(t *testing.T, src string) (string, Pos) {
	t.Helper()
	i := strings.Index(src, "§")
	if i < 0 {
		t.Fatalf("fixture has no § marker:\n%s", src)
	}
	if strings.Count(src, "§") != 1 {
		t.Fatalf("fixture has more than one § marker")
	}
	before := src[:i]
	line := 1 + strings.Count(before, "\n")
	start := strings.LastIndexByte(before, '\n') + 1
	return before + src[i+len("§"):], Pos{Line: line, Column: 1 + utf8.RuneCountInString(before[start:])}
}

// findError looks for an entry of err at pos (only the line when
// lineOnly) with the given path, cause and message fragment.
func findError(err error, pos Pos, lineOnly bool, path string, cause error, frag string) *Error {
	var list ErrorList
	if !errors.As(err, &list) {
		return nil
	}
	for _, e := range list {
		if e.Line != pos.Line || (!lineOnly && e.Column != pos.Column) {
			continue
		}
		if e.Path == path && errors.Is(e, cause) && strings.Contains(e.Error(), frag) {
			return e
		}
	}
	return nil
}

// listText prints every entry of an error list, one per line.
func listText(err error) string {
	var list ErrorList
	if !errors.As(err, &list) {
		if err == nil {
			return "<nil>"
		}
		return "not an ErrorList: " + err.Error()
	}
	var b strings.Builder
	for _, e := range list {
		b.WriteString("\t" + e.Error() + "\n")
	}
	return b.String()
}

// rep replaces the first old in src by repl and panics when src has no
// old, so that a fixture never silently stays valid.
func rep(src, old, repl string) string {
	if !strings.Contains(src, old) {
		panic("rep: fixture has no " + old)
	}
	return strings.Replace(src, old, repl, 1)
}
