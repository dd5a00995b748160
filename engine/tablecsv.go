package engine

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// TableError is one problem with a relative-permeability table: a broken
// rule of [NewTable] or a problem in a table file read by [ReadTables].
// Field names the column ("s", "kr1", "kr2", "sample"), "header", "csv",
// or "sample NAME" (or "table") for a rule of a whole table.
type TableError struct {
	File         string
	Line, Column int // 1-based; Column counts bytes. Both 0 for errors of NewTable.
	Field        string
	Msg          string
}

// Error returns "file:line:col: field: message", or "field: message" when
// the error has no position.
func (e *TableError) Error() string {
	if e.File == "" && e.Line == 0 {
		return e.Field + ": " + e.Msg
	}
	return fmt.Sprintf("%s:%d:%d: %s: %s", e.File, e.Line, e.Column, e.Field, e.Msg)
}

// TableErrors is a list of table problems, in file order.
type TableErrors []*TableError

// Error returns the problems one per line.
func (l TableErrors) Error() string {
	var b strings.Builder
	for i, e := range l {
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(e.Error())
	}
	return b.String()
}

// Err returns l as an error, or nil when l is empty.
func (l TableErrors) Err() error {
	if len(l) == 0 {
		return nil
	}
	return l
}

// The columns of a table file.
const (
	csvSample = iota
	csvS
	csvKr1
	csvKr2
	csvColumns
)

var csvColumnNames = [csvColumns]string{csvSample: "sample", csvS: "s", csvKr1: "kr1", csvKr2: "kr2"}

// csvRow is one data row of a table file with the positions of its cells.
type csvRow struct {
	line int
	col  [csvColumns]int // 1-based byte column of each cell, 0 when absent
	v    [3]float64      // s, kr1, kr2
}

// csvSampleRows collects one sample's rows in file order.
type csvSampleRows struct {
	name string
	rows []csvRow
	bad  bool // a cell did not parse: the table rules are not checked
}

// ReadTables reads relative-permeability tables from a CSV file (file
// names it in errors). The first record is a header naming the columns,
// in any order and case: s, kr1 and kr2, and optionally sample, a label
// that puts several samples in one file; a sample's rows need not be
// contiguous, and the tables come back in the order their labels first
// appear. Without a sample column the file holds one table named after the
// file (its base name without extension, or "table"). Lines starting with
// # are comments; blank lines are skipped; spaces around cells are ignored.
// Each sample must pass the rules of [NewTable].
//
// Every problem found is reported, as [TableErrors] sorted by position,
// each "file:line:col: field: message": unknown, duplicate and missing
// columns, records of the wrong length, cells that are not finite numbers,
// empty labels, and every broken table rule at the cell that breaks it (a
// rule of the whole sample at the sample's first row).
func ReadTables(r io.Reader, file string) ([]*Table, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	var errs TableErrors
	add := func(line, col int, field, format string, a ...any) {
		errs = append(errs, &TableError{File: file, Line: line, Column: col, Field: field, Msg: fmt.Sprintf(format, a...)})
	}
	csvErr := func(err error) TableErrors {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			add(pe.Line, pe.Column, "csv", "%v", pe.Err)
		} else {
			add(0, 0, "csv", "%v", err)
		}
		return errs
	}

	header, err := cr.Read()
	if err == io.EOF {
		add(1, 1, "header", "no header row; want columns s, kr1, kr2 and optionally sample")
		return nil, errs
	}
	if err != nil {
		return nil, csvErr(err)
	}
	headerLine, _ := cr.FieldPos(0)
	index := [csvColumns]int{-1, -1, -1, -1}
	for i, h := range header {
		name := strings.ToLower(strings.TrimSpace(h))
		_, col := cr.FieldPos(i)
		c := slices.Index(csvColumnNames[:], name)
		switch {
		case c < 0:
			add(headerLine, col, "header", "unknown column %q; want s, kr1, kr2 and optionally sample", strings.TrimSpace(h))
		case index[c] >= 0:
			add(headerLine, col, "header", "duplicate column %q", name)
		default:
			index[c] = i
		}
	}
	missing := false
	for c := csvS; c < csvColumns; c++ {
		if index[c] < 0 {
			add(headerLine, 1, "header", "missing column %q", csvColumnNames[c])
			missing = true
		}
	}
	if missing {
		return nil, errs
	}

	defaultName := "table"
	if base := filepath.Base(file); file != "" && base != "." {
		defaultName = strings.TrimSuffix(base, filepath.Ext(base))
	}
	var samples []*csvSampleRows
	byName := map[string]*csvSampleRows{}
	nrows := 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			// The CSV syntax is broken: what follows cannot be trusted.
			csvErr(err)
			break
		}
		line, _ := cr.FieldPos(0)
		nrows++
		if len(rec) != len(header) {
			add(line, 1, "csv", "%d fields, the header has %d", len(rec), len(header))
			continue
		}
		var row csvRow
		row.line = line
		for c, i := range index {
			if i >= 0 {
				_, row.col[c] = cr.FieldPos(i)
			}
		}
		name := defaultName
		if i := index[csvSample]; i >= 0 {
			name = strings.TrimSpace(rec[i])
			if name == "" {
				add(line, row.col[csvSample], "sample", "empty sample label")
				continue
			}
		}
		smp := byName[name]
		if smp == nil {
			smp = &csvSampleRows{name: name}
			byName[name] = smp
			samples = append(samples, smp)
		}
		for c := csvS; c <= csvKr2; c++ {
			text := strings.TrimSpace(rec[index[c]])
			v, perr := strconv.ParseFloat(text, 64)
			switch {
			case perr != nil:
				add(line, row.col[c], csvColumnNames[c], "%q is not a number", text)
				smp.bad = true
			case math.IsNaN(v) || math.IsInf(v, 0):
				add(line, row.col[c], csvColumnNames[c], "%q is not a finite number", text)
				smp.bad = true
			}
			row.v[c-csvS] = v
		}
		smp.rows = append(smp.rows, row)
	}
	if nrows == 0 && len(errs) == 0 {
		add(headerLine, 1, "header", "no data rows")
	}

	tables := make([]*Table, 0, len(samples))
	cols := make([][]float64, 3)
	for _, smp := range samples {
		if smp.bad {
			continue
		}
		for k := range cols {
			cols[k] = cols[k][:0]
			for _, row := range smp.rows {
				cols[k] = append(cols[k], row.v[k])
			}
		}
		issues := checkTable(cols[0], cols[1], cols[2])
		for _, is := range issues {
			if is.row < 0 {
				first := smp.rows[0]
				col := first.col[csvSample]
				if col == 0 {
					col = 1
				}
				add(first.line, col, "sample "+smp.name, "%s", is.msg)
				continue
			}
			row := smp.rows[is.row]
			add(row.line, row.col[csvS+is.col], tableColumnNames[is.col], "%s", is.msg)
		}
		if len(issues) == 0 {
			tables = append(tables, buildTable(smp.name, cols[0], cols[1], cols[2]))
		}
	}
	if len(errs) > 0 {
		slices.SortStableFunc(errs, func(a, b *TableError) int {
			if a.Line != b.Line {
				return a.Line - b.Line
			}
			return a.Column - b.Column
		})
		return nil, errs
	}
	return tables, nil
}
