package batch

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"

	"github.com/sweepstat/sweepstat/studies"
	"github.com/sweepstat/sweepstat/summarize"
)

// StudyFile is the copy of the study file kept in a study's output folder,
// byte for byte, so that the report can be rebuilt from the folder alone
// ([Report]). Its SHA-256 is run.json's study_hash (with the table, for
// a table study).
const StudyFile = "study.yaml"

// TableFile is the copy of a table study's measured curves kept in its
// output folder, byte for byte; the folder's study.yaml is read with it
// in place of the file the study names.
const TableFile = "relperm-table.csv"

// folderTables reads relperm.table from the output folder dir.
func folderTables(dir string) studies.ParseOptions {
	return studies.ParseOptions{ReadTable: func(string) (string, []byte, error) {
		path := filepath.Join(dir, TableFile)
		data, err := os.ReadFile(path)
		return path, data, err
	}}
}

// textTables serves relperm.table from bytes kept elsewhere (a shard
// manifest).
func textTables(name string, text string) studies.ParseOptions {
	return studies.ParseOptions{ReadTable: func(string) (string, []byte, error) {
		return name, []byte(text), nil
	}}
}

// studySource returns the exact bytes st was parsed from: the embedded
// demo study, or the file at st.Source if it still hashes to st.Hash. It
// returns false when neither is available (a study parsed from memory, or
// a file changed since it was loaded).
func studySource(st *studies.Study) ([]byte, bool) {
	var data []byte
	if st.Source == studies.DemoSourceName {
		data = studies.DemoSource()
	} else {
		var err error
		if data, err = os.ReadFile(st.Source); err != nil {
			return nil, false
		}
	}
	sum := sha256.Sum256(data)
	if hex.EncodeToString(sum[:]) != st.FileHash {
		return nil, false
	}
	return data, true
}

// writeStudySource writes StudyFile into dir and returns the files
// written: src when it hashes to st.Hash, else what studySource finds;
// nothing when neither is available.
func writeStudySource(dir string, st *studies.Study, src []byte) ([]string, error) {
	data, ok := src, src != nil
	if ok {
		sum := sha256.Sum256(data)
		ok = hex.EncodeToString(sum[:]) == st.FileHash
	}
	if !ok {
		data, ok = studySource(st)
	}
	if !ok {
		return nil, nil
	}
	if err := writeFileAtomic(filepath.Join(dir, StudyFile), data); err != nil {
		return nil, err
	}
	if st.Relperm.TableData == nil {
		return []string{StudyFile}, nil
	}
	if err := writeFileAtomic(filepath.Join(dir, TableFile), st.Relperm.TableData); err != nil {
		return nil, err
	}
	return []string{StudyFile, TableFile}, nil
}

// loadFolder reads what a report needs from a finished study folder:
// run.json, the study (from StudyFile, checked against run.json's hash)
// and the summary tables.
func loadFolder(dir string, mem memory.Allocator) (*studies.Study, *reportData, error) {
	js, err := os.ReadFile(filepath.Join(dir, RunFile))
	if err != nil {
		return nil, nil, err
	}
	info := new(Info)
	if err := json.Unmarshal(js, info); err != nil {
		return nil, nil, fmt.Errorf("reading %s: %w", filepath.Join(dir, RunFile), err)
	}
	path := filepath.Join(dir, StudyFile)
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, nil, fmt.Errorf("%w (the study file is kept there by runs of this version; run the study again)", err)
	}
	st, err := studies.ParseWith(path, src, folderTables(dir))
	if err != nil {
		return nil, nil, err
	}
	if st.Hash != info.StudyHash {
		return nil, nil, fmt.Errorf("%s does not match %s: study hash %s, run.json has %s", path, RunFile, st.Hash, info.StudyHash)
	}
	// The run may have been cut down (tests and benchmarks change the case
	// count of a parsed study); run.json says what was run.
	st.Cases = info.Cases

	d := &reportData{Info: info, Study: st, Convention: st.Report.Percentiles, Keys: keyOutputs(st)}
	if d.Summary, err = readSummaryRows(filepath.Join(dir, SummaryFile), mem); err != nil {
		return nil, nil, err
	}
	if d.Curves, err = readCurveRows(filepath.Join(dir, CurvesFile), mem); err != nil {
		return nil, nil, err
	}
	if d.Tornado, err = readTornadoRows(filepath.Join(dir, TornadoFile), mem); err != nil {
		return nil, nil, err
	}
	if d.Spearman, d.Sobol, err = readSensitivityRows(filepath.Join(dir, SensitivityFile), mem); err != nil {
		return nil, nil, err
	}
	return st, d, nil
}

// smallTable is a whole summary table read back: each column a []string,
// []int64 or []float64.
type smallTable struct {
	path string
	n    int
	cols map[string]any
}

// readSmallTable reads every record batch of a small Arrow file.
func readSmallTable(path string, mem memory.Allocator) (*smallTable, error) {
	t := &smallTable{path: path, cols: map[string]any{}}
	err := forEachRecord(path, mem, func(rec arrow.Record) error {
		for i, f := range rec.Schema().Fields() {
			switch c := rec.Column(i).(type) {
			case *array.String:
				s, _ := t.cols[f.Name].([]string)
				for k := range c.Len() {
					s = append(s, c.Value(k))
				}
				t.cols[f.Name] = s
			case *array.Int64:
				s, _ := t.cols[f.Name].([]int64)
				t.cols[f.Name] = append(s, c.Int64Values()...)
			case *array.Float64:
				s, _ := t.cols[f.Name].([]float64)
				t.cols[f.Name] = append(s, c.Float64Values()...)
			}
		}
		t.n += int(rec.NumRows())
		return nil
	})
	return t, err
}

// str, ints and floats return a column, or an error naming the file.
func (t *smallTable) str(name string) ([]string, error) {
	c, ok := t.cols[name].([]string)
	if !ok && t.n > 0 {
		return nil, fmt.Errorf("reading %s: no string column %q", t.path, name)
	}
	return c, nil
}

func (t *smallTable) ints(name string) ([]int64, error) {
	c, ok := t.cols[name].([]int64)
	if !ok && t.n > 0 {
		return nil, fmt.Errorf("reading %s: no int64 column %q", t.path, name)
	}
	return c, nil
}

// floats reads several float64 columns into the fields dst point at, row
// by row: set(i, values) receives row i's values in the order of names.
func (t *smallTable) floats(names []string, set func(i int, v []float64)) error {
	cols := make([][]float64, len(names))
	for k, name := range names {
		c, ok := t.cols[name].([]float64)
		if !ok && t.n > 0 {
			return fmt.Errorf("reading %s: no float64 column %q", t.path, name)
		}
		cols[k] = c
	}
	v := make([]float64, len(names))
	for i := range t.n {
		for k := range cols {
			v[k] = cols[k][i]
		}
		set(i, v)
	}
	return nil
}

func readSummaryRows(path string, mem memory.Allocator) ([]summarize.SummaryRow, error) {
	t, err := readSmallTable(path, mem)
	if err != nil {
		return nil, err
	}
	out, err := t.str("output")
	if err != nil {
		return nil, err
	}
	n, err := t.ints("n")
	if err != nil {
		return nil, err
	}
	rej, err := t.ints("n_rejected")
	if err != nil {
		return nil, err
	}
	rows := make([]summarize.SummaryRow, t.n)
	err = t.floats(fieldNames(summaryFields), func(i int, v []float64) {
		r := &rows[i]
		r.Output, r.N, r.NRejected = out[i], int(n[i]), int(rej[i])
		r.Level = PercentileLevel
		setFields(r, summaryFields, v)
	})
	return rows, err
}

func readCurveRows(path string, mem memory.Allocator) ([]summarize.CurveRow, error) {
	t, err := readSmallTable(path, mem)
	if err != nil {
		return nil, err
	}
	rows := make([]summarize.CurveRow, t.n)
	err = t.floats(fieldNames(curveFields), func(i int, v []float64) {
		setFields(&rows[i], curveFields, v)
	})
	return rows, err
}

func readTornadoRows(path string, mem memory.Allocator) ([]summarize.TornadoRow, error) {
	t, err := readSmallTable(path, mem)
	if err != nil {
		return nil, err
	}
	out, err := t.str("output")
	if err != nil {
		return nil, err
	}
	par, err := t.str("parameter")
	if err != nil {
		return nil, err
	}
	rank, err := t.ints("rank")
	if err != nil {
		return nil, err
	}
	rows := make([]summarize.TornadoRow, t.n)
	err = t.floats(fieldNames(tornadoFields), func(i int, v []float64) {
		r := &rows[i]
		r.Output, r.Parameter, r.Rank = out[i], par[i], int(rank[i])
		setFields(r, tornadoFields, v)
	})
	return rows, err
}

func readSensitivityRows(path string, mem memory.Allocator) ([]summarize.SpearmanRow, []summarize.SobolRow, error) {
	t, err := readSmallTable(path, mem)
	if err != nil {
		return nil, nil, err
	}
	out, err := t.str("output")
	if err != nil {
		return nil, nil, err
	}
	par, err := t.str("parameter")
	if err != nil {
		return nil, nil, err
	}
	nsp, err := t.ints("n_spearman")
	if err != nil {
		return nil, nil, err
	}
	nsob, err := t.ints("n_sobol")
	if err != nil {
		return nil, nil, err
	}
	sp := make([]summarize.SpearmanRow, t.n)
	var sob []summarize.SobolRow
	names := []string{"spearman", "sobol_first", "sobol_first_low", "sobol_first_high", "sobol_total", "sobol_total_low", "sobol_total_high"}
	err = t.floats(names, func(i int, v []float64) {
		sp[i] = summarize.SpearmanRow{Output: out[i], Parameter: par[i], Spearman: v[0], N: int(nsp[i])}
		if nsob[i] > 0 {
			sob = append(sob, summarize.SobolRow{Output: out[i], Parameter: par[i], First: v[1], FirstLow: v[2], FirstHigh: v[3],
				Total: v[4], TotalLow: v[5], TotalHigh: v[6], N: int(nsob[i])})
		}
	})
	return sp, sob, err
}
