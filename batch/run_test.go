package batch

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"testing"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/engine"
	"github.com/sweepstat/sweepstat/studies"
)

// smallStudy returns the demo study cut to n cases.
func smallStudy(t *testing.T, n int) *studies.Study {
	t.Helper()
	st, err := studies.Demo()
	if err != nil {
		t.Fatal(err)
	}
	st.Cases = n
	st.Sensitivity.Sobol = 0
	return st
}

func runInto(t *testing.T, st *studies.Study, out string, workers int) *Info {
	t.Helper()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	info, err := Run(context.Background(), st, Options{Out: out, Workers: workers, Version: "test", Alloc: mem, BatchRows: 1000})
	if err != nil {
		t.Fatalf("Run: %v", err)
	}
	return info
}

// readCases reads cases.arrow back with the Arrow library: every column as
// float64 (case as int64 converted), and the status strings.
func readCases(t *testing.T, path string) (schema *arrow.Schema, cols map[string][]float64, status []string) {
	t.Helper()
	cols = map[string][]float64{}
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	err := forEachRecord(path, mem, func(rec arrow.Record) error {
		schema = rec.Schema()
		for i, f := range schema.Fields() {
			switch c := rec.Column(i).(type) {
			case *array.Float64:
				cols[f.Name] = append(cols[f.Name], c.Float64Values()...)
			case *array.Int64:
				for _, v := range c.Int64Values() {
					cols[f.Name] = append(cols[f.Name], float64(v))
				}
			case *array.String:
				for k := range c.Len() {
					status = append(status, c.Value(k))
				}
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return schema, cols, status
}

func same(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

// TestRunEndToEnd runs a cut-down demo study, reads cases.arrow back with
// the Arrow library, checks the schema and row count, and solves rows
// again with the engine: every output must match exactly.
func TestRunEndToEnd(t *testing.T) {
	t.Parallel()
	const n = 5000
	st := smallStudy(t, n)
	out := t.TempDir()
	info := runInto(t, st, out, 2)
	if info.Cases != n {
		t.Errorf("info.Cases = %d", info.Cases)
	}
	dir := filepath.Join(out, st.Name)
	checkCases(t, st, dir, []int{0, 1, 17, 999, 1000, 2500, n - 1})
	for _, name := range []string{RunFile} {
		if _, err := os.Stat(filepath.Join(dir, name)); err != nil {
			t.Errorf("missing %s: %v", name, err)
		}
	}
	leftovers, _ := filepath.Glob(filepath.Join(out, ".*"))
	tmps, _ := filepath.Glob(filepath.Join(dir, "*"+tmpSuffix))
	if len(leftovers)+len(tmps) > 0 {
		t.Errorf("staging or temporary files left: %v %v", leftovers, tmps)
	}
}

// TestRunDeterministic: the same study and seed give byte-identical
// files for one and two workers and any batch size.
func TestRunDeterministic(t *testing.T) {
	t.Parallel()
	st := smallStudy(t, 3000)
	a, b := t.TempDir(), t.TempDir()
	runInto(t, st, a, 1)
	mem := memory.NewGoAllocator()
	if _, err := Run(context.Background(), st, Options{Out: b, Workers: 2, BatchRows: 777, Alloc: mem}); err != nil {
		t.Fatal(err)
	}
	// Batch size changes the file layout but not one value.
	_, ca, sa := readCases(t, filepath.Join(a, st.Name, CasesFile))
	_, cb, sb := readCases(t, filepath.Join(b, st.Name, CasesFile))
	if !slices.Equal(sa, sb) {
		t.Error("status columns differ")
	}
	for name, col := range ca {
		for i := range col {
			if math.Float64bits(col[i]) != math.Float64bits(cb[name][i]) {
				t.Fatalf("%s row %d: %v vs %v", name, i, col[i], cb[name][i])
			}
		}
	}
	// Same batch size, different worker counts: identical bytes.
	c := t.TempDir()
	runInto(t, st, c, 2)
	for _, name := range []string{CasesFile} {
		x, _ := os.ReadFile(filepath.Join(a, st.Name, name))
		y, _ := os.ReadFile(filepath.Join(c, st.Name, name))
		if !bytes.Equal(x, y) {
			t.Errorf("%s differs between 1 and 2 workers", name)
		}
	}
}

// TestRunKeepsExistingOutputs: an existing folder is not overwritten
// without Force, and a forced run replaces it whole.
func TestRunKeepsExistingOutputs(t *testing.T) {
	t.Parallel()
	st := smallStudy(t, 200)
	out := t.TempDir()
	runInto(t, st, out, 1)
	marker := filepath.Join(out, st.Name, "keep.txt")
	if err := os.WriteFile(marker, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := Run(context.Background(), st, Options{Out: out, Workers: 1})
	if !errors.Is(err, ErrExists) {
		t.Fatalf("second run: err = %v, want ErrExists", err)
	}
	if _, err := os.Stat(marker); err != nil {
		t.Fatalf("existing output touched: %v", err)
	}
	if _, err := Run(context.Background(), st, Options{Out: out, Workers: 1, Force: true}); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(marker); !os.IsNotExist(err) {
		t.Errorf("forced run kept an old file: %v", err)
	}
}

// TestRunCancelled: a cancelled run leaves neither the output folder nor
// its staging folder behind.
func TestRunCancelled(t *testing.T) {
	t.Parallel()
	st := smallStudy(t, 50000)
	out := t.TempDir()
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Run(ctx, st, Options{Out: out, Workers: 2}); !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
	entries, _ := os.ReadDir(out)
	if len(entries) != 0 {
		t.Errorf("cancelled run left %v", entries)
	}
}

// TestCasesReadByArrowJS reads cases.arrow with a second, independent Arrow
// implementation (the apache-arrow npm package through node): same
// columns, rows and values. .ci/run installs the package; elsewhere the
// test skips unless SWEEPSTAT_REQUIRE_ARROWJS is set.
func TestCasesReadByArrowJS(t *testing.T) {
	t.Parallel()
	script, _ := filepath.Abs(filepath.Join("..", "testdata", "arrowjs", "read.mjs"))
	mod := filepath.Join(filepath.Dir(script), "node_modules", "apache-arrow")
	node, err := exec.LookPath("node")
	if _, serr := os.Stat(mod); err != nil || serr != nil {
		if os.Getenv("SWEEPSTAT_REQUIRE_ARROWJS") != "" {
			t.Fatalf("node or apache-arrow missing (node: %v; module: %v); run npm ci in testdata/arrowjs", err, serr)
		}
		t.Skip("node or testdata/arrowjs/node_modules missing; `npm ci --prefix testdata/arrowjs` installs it")
	}
	st := smallStudy(t, 1500)
	out := t.TempDir()
	runInto(t, st, out, 2)
	path := filepath.Join(out, st.Name, CasesFile)
	cmd := exec.Command(node, script, path, "4")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	js, err := cmd.Output()
	if err != nil {
		t.Fatalf("node: %v\n%s", err, stderr.String())
	}
	var got struct {
		NumRows int
		Fields  []struct{ Name, Type, Unit string }
		Head    []map[string]any
	}
	if err := json.Unmarshal(js, &got); err != nil {
		t.Fatalf("node output: %v\n%s", err, js)
	}
	schema, cols, status := readCases(t, path)
	if got.NumRows != st.Cases {
		t.Errorf("arrow-js rows = %d, want %d", got.NumRows, st.Cases)
	}
	if len(got.Fields) != len(schema.Fields()) {
		t.Fatalf("arrow-js sees %d fields, Go %d", len(got.Fields), len(schema.Fields()))
	}
	for i, f := range schema.Fields() {
		unit, _ := f.Metadata.GetValue("unit")
		if got.Fields[i].Name != f.Name || got.Fields[i].Unit != unit {
			t.Errorf("field %d: arrow-js %+v, Go %s [%s]", i, got.Fields[i], f.Name, unit)
		}
	}
	for r, row := range got.Head {
		for name, v := range row {
			switch v := v.(type) {
			case float64:
				if cols[name][r] != v {
					t.Errorf("row %d %s: arrow-js %v, Go %v", r, name, v, cols[name][r])
				}
			case string:
				if name == engine.ColStatus {
					if status[r] != v {
						t.Errorf("row %d status: arrow-js %q, Go %q", r, v, status[r])
					}
				} else if v != "NaN" || !math.IsNaN(cols[name][r]) {
					t.Errorf("row %d %s: arrow-js %q, Go %v", r, name, v, cols[name][r])
				}
			}
		}
	}
}

// TestRunRefusesConcurrentWriter: while another live process holds the
// study folder's lock, a run fails with ErrBusy and leaves the other's
// work alone; a lock left by a dead process is taken over.
func TestRunRefusesConcurrentWriter(t *testing.T) {
	t.Parallel()
	st := smallStudy(t, 100)
	out := t.TempDir()
	lock := lockPathFor(filepath.Join(out, st.Name))
	// Our parent process stands in for a live writer.
	if err := os.WriteFile(lock, []byte(strconv.Itoa(os.Getppid())+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Run(context.Background(), st, Options{Out: out, Workers: 1}); !errors.Is(err, ErrBusy) {
		t.Fatalf("err = %v, want ErrBusy", err)
	}
	if _, err := os.Stat(lock); err != nil {
		t.Fatalf("the other writer's lock was removed: %v", err)
	}
	// A pid that cannot be running: the lock is stale.
	if err := os.WriteFile(lock, []byte("2147483646\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Run(context.Background(), st, Options{Out: out, Workers: 1}); err != nil {
		t.Fatalf("stale lock not taken over: %v", err)
	}
	if _, err := os.Stat(lock); !os.IsNotExist(err) {
		t.Errorf("lock left behind after the run: %v", err)
	}
}

// checkCases reads dir's cases.arrow back with the Arrow library, checks
// its columns (case, the model's parameters, the model's outputs, status)
// and row count, and solves the given rows again with the engine from the
// parameter columns: every output and status must match exactly.
func checkCases(t *testing.T, st *studies.Study, dir string, rows []int) (cols map[string][]float64, status []string) {
	t.Helper()
	n := st.Cases
	schema, cols, status := readCases(t, filepath.Join(dir, CasesFile))
	m := st.Model()
	outs := m.Outputs(st.Report.PVI)
	want := []string{engine.ColCase}
	for _, p := range m.Params() {
		want = append(want, p.String())
	}
	for _, o := range outs {
		want = append(want, o.Name)
	}
	want = append(want, engine.ColStatus)
	var got []string
	for _, f := range schema.Fields() {
		got = append(got, f.Name)
	}
	if !slices.Equal(got, want) {
		t.Fatalf("columns\n got %v\nwant %v", got, want)
	}
	if len(status) != n || len(cols[engine.ColCase]) != n {
		t.Fatalf("rows: %d status, %d cases; want %d", len(status), len(cols[engine.ColCase]), n)
	}
	for i, c := range cols[engine.ColCase] {
		if c != float64(i) {
			t.Fatalf("case column at row %d = %v", i, c)
		}
	}
	s := engine.Solver{Model: m}
	var r engine.Result
	for _, i := range rows {
		var p engine.Params
		for _, q := range m.Params() {
			p[q] = cols[q.String()][i]
		}
		s.SolveCase(&p, st.Report.PVI, st.Report.CutLimit, &r)
		for _, o := range outs {
			if g, w := cols[o.Name][i], o.Get(&r); !same(g, w) {
				t.Errorf("row %d %s = %v, engine gives %v", i, o.Name, g, w)
			}
		}
		if status[i] != r.StatusText() {
			t.Errorf("row %d status %q, engine %q", i, status[i], r.StatusText())
		}
	}
	return cols, status
}
