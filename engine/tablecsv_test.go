package engine

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func readTableFile(t *testing.T, name string) ([]*Table, error) {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", "tables", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	return ReadTables(f, name)
}

// TestReadTablesErrors reads the bad fixtures of testdata/tables and wants
// every problem, each at the line and byte column of the offending cell
// (counted by hand in the fixture; 1-based, as encoding/csv's FieldPos).
func TestReadTablesErrors(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		file string
		want []string
	}{
		{"bad-kr1-falls.csv", []string{"bad-kr1-falls.csv:4:5: kr1: must not decrease: 0.15 after 0.2"}},
		{"bad-kr2-rises.csv", []string{"bad-kr2-rises.csv:4:16: kr2: must not increase: 0.45 after 0.4"}},
		{"bad-s-range.csv", []string{
			"bad-s-range.csv:2:1: s: -0.05 is outside [0, 1]",
			"bad-s-range.csv:5:1: s: 1.2 is outside [0, 1]",
		}},
		{"bad-s-order.csv", []string{"bad-s-order.csv:4:1: s: must increase from row to row: 0.4 after 0.5"}},
		{"bad-few-rows.csv", []string{"bad-few-rows.csv:2:1: sample core-a: 2 rows; a table needs at least 3"}},
		{"bad-missing-column.csv", []string{`bad-missing-column.csv:1:1: header: missing column "kr2"`}},
		{"bad-unknown-column.csv", []string{`bad-unknown-column.csv:1:11: header: unknown column "pc_bar"; want s, kr1, kr2 and optionally sample`}},
		{"bad-not-number.csv", []string{
			`bad-not-number.csv:3:5: kr1: "0.2O" is not a number`,
			`bad-not-number.csv:4:9: kr2: "NaN" is not a finite number`,
		}},
		{"bad-empty-sample.csv", []string{"bad-empty-sample.csv:3:1: sample: empty sample label"}},
		{"bad-no-window.csv", []string{"bad-no-window.csv:2:1: sample bad-no-window: no mobile window: kr1 is 0 up to S = 0.5 and kr2 is 0 from S = 0.5"}},
		{"bad-field-count.csv", []string{"bad-field-count.csv:3:1: csv: 2 fields, the header has 3"}},
		{"bad-empty.csv", []string{"bad-empty.csv:1:1: header: no header row; want columns s, kr1, kr2 and optionally sample"}},
		{"bad-header-only.csv", []string{"bad-header-only.csv:1:1: header: no data rows"}},
		{"bad-end-rows.csv", []string{
			"bad-end-rows.csv:2:12: kr1: must be 0 at the first row, got 0.05",
			"bad-end-rows.csv:4:16: kr2: must be 0 at the last row, got 0.1",
		}},
	} {
		t.Run(tc.file, func(t *testing.T) {
			t.Parallel()
			tabs, err := readTableFile(t, tc.file)
			var errs TableErrors
			if !errors.As(err, &errs) || tabs != nil {
				t.Fatalf("ReadTables = %v, %v; want TableErrors and no tables", tabs, err)
			}
			if got := err.Error(); got != strings.Join(tc.want, "\n") {
				t.Errorf("errors:\n%s\nwant:\n%s", got, strings.Join(tc.want, "\n"))
			}
			var te *TableError
			if !errors.As(errs[0], &te) || te.File != tc.file || te.Line == 0 {
				t.Errorf("first error %#v: want a *TableError with file and line", errs[0])
			}
		})
	}
}

// TestReadTablesTwoSamples reads an invented file with two interleaved
// samples, comments, a blank line, spaces and an upper-case header, and a
// file without a sample column. The end points follow from the rows by
// the rules of NewTable (worked out here by reading the fixture): core-a
// has kr1 = 0 up to S = 0.20 and kr2 = 0 from S = 0.75, so s1r_t = 0.2,
// s2r_t = 0.25, Kr1Max_t = 0.33 and Kr2Max_t = 0.85; core-b gives 0.15,
// 0.2, 0.52 and 0.92; plug-9 gives 0.12, 0.28, 0.41 and 0.78.
func TestReadTablesTwoSamples(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		file string
		want []struct {
			name             string
			s1r, s2r, k1, k2 float64
		}
	}{
		{"two-cores.csv", []struct {
			name             string
			s1r, s2r, k1, k2 float64
		}{{"core-a", 0.2, 0.25, 0.33, 0.85}, {"core-b", 0.15, 0.2, 0.52, 0.92}}},
		{"plug-9.csv", []struct {
			name             string
			s1r, s2r, k1, k2 float64
		}{{"plug-9", 0.12, 0.28, 0.41, 0.78}}},
	} {
		tabs, err := readTableFile(t, tc.file)
		if err != nil {
			t.Fatalf("%s: %v", tc.file, err)
		}
		if len(tabs) != len(tc.want) {
			t.Fatalf("%s: %d tables, want %d", tc.file, len(tabs), len(tc.want))
		}
		for i, w := range tc.want {
			tab := tabs[i]
			s1r, s2r, k1, k2 := tab.EndPoints()
			if tab.Name() != w.name || math.Abs(s1r-w.s1r) > 1e-15 || math.Abs(s2r-w.s2r) > 1e-15 || k1 != w.k1 || k2 != w.k2 {
				t.Errorf("%s table %d: %q %v %v %v %v, want %+v", tc.file, i, tab.Name(), s1r, s2r, k1, k2, w)
			}
		}
	}
	// core-b's rows come back from the scaled table (S = 0.5: kr1 0.18, kr2 0.18).
	tabs, _ := readTableFile(t, "two-cores.csv")
	if v := ownScale(tabs[1]).Eval(0.5); math.Abs(v.Kr1-0.18) > 1e-15 || math.Abs(v.Kr2-0.18) > 1e-15 {
		t.Errorf("core-b at S = 0.5: kr = %v, %v, want 0.18, 0.18", v.Kr1, v.Kr2)
	}
}
