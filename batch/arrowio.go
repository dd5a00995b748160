package batch

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/ipc"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"golang.org/x/sync/errgroup"
)

// tmpSuffix marks a file that is still being written. Files are renamed to
// their final name only once complete, so an interrupted run never leaves
// a file that looks finished.
const tmpSuffix = ".tmp"

// atomicFile is a file written under a temporary name and renamed into
// place by Commit. Abort (or a failed Commit) removes it.
type atomicFile struct {
	*os.File
	final string
}

func createAtomic(path string) (*atomicFile, error) {
	f, err := os.OpenFile(path+tmpSuffix, os.O_RDWR|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return nil, err
	}
	return &atomicFile{File: f, final: path}, nil
}

// Commit flushes, closes and renames the file to its final name.
func (a *atomicFile) Commit() error { return a.CommitTo(nil) }

// CommitTo is Commit with the flush to disk left to g when g is not nil,
// so that the summaries can read a large cases.arrow while the disk
// catches up: the file is renamed at once and a goroutine of g flushes and
// closes it, a failure coming back from g.Wait. The caller must wait for g
// before it treats the file as durable (before a staging folder holding it
// replaces the final one).
func (a *atomicFile) CommitTo(g *errgroup.Group) error {
	if g != nil {
		if err := os.Rename(a.Name(), a.final); err != nil {
			a.Abort()
			return fmt.Errorf("writing %s: %w", a.final, err)
		}
		f, name := a.File, a.final
		g.Go(func() error {
			err := f.Sync()
			if cerr := f.Close(); err == nil {
				err = cerr
			}
			if err != nil {
				return fmt.Errorf("writing %s: %w", name, err)
			}
			return nil
		})
		return nil
	}
	if err := a.File.Sync(); err != nil {
		a.Abort()
		return fmt.Errorf("writing %s: %w", a.final, err)
	}
	if err := a.File.Close(); err != nil {
		os.Remove(a.Name())
		return fmt.Errorf("writing %s: %w", a.final, err)
	}
	if err := os.Rename(a.Name(), a.final); err != nil {
		os.Remove(a.Name())
		return fmt.Errorf("writing %s: %w", a.final, err)
	}
	return nil
}

// Abort closes and removes the temporary file.
func (a *atomicFile) Abort() {
	a.File.Close()
	os.Remove(a.Name())
}

// writeFileAtomic writes data to path through a temporary file.
func writeFileAtomic(path string, data []byte) error {
	f, err := createAtomic(path)
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		f.Abort()
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return f.Commit()
}

// field returns a non-nullable Arrow field with a unit in its metadata.
func field(name string, typ arrow.DataType, unit string) arrow.Field {
	f := arrow.Field{Name: name, Type: typ}
	if unit != "" {
		f.Metadata = arrow.NewMetadata([]string{"unit"}, []string{unit})
	}
	return f
}

// ipcWriter is an Arrow IPC file being written record batch by record
// batch into an atomic file. The bytes are hashed as they are written, so
// that run.json's SHA-256 of a large file needs no second reading.
type ipcWriter struct {
	file *atomicFile
	hw   *hashingWriter
	w    *ipc.FileWriter
}

func newIPCWriter(path string, schema *arrow.Schema, mem memory.Allocator) (*ipcWriter, error) {
	f, err := createAtomic(path)
	if err != nil {
		return nil, err
	}
	hw := &hashingWriter{f: f.File, h: sha256.New()}
	w, err := ipc.NewFileWriter(hw, ipc.WithSchema(schema), ipc.WithAllocator(mem))
	if err != nil {
		f.Abort()
		return nil, fmt.Errorf("writing %s: %w", path, err)
	}
	return &ipcWriter{file: f, hw: hw, w: w}, nil
}

// sha256 returns the lower-case hex SHA-256 of the bytes written, the
// whole file once committed.
func (iw *ipcWriter) sha256() string { return hex.EncodeToString(iw.hw.h.Sum(nil)) }

// hashingWriter writes to a file from its start, hashing every byte. The
// Arrow file writer only asks it for its position (Seek(0,
// io.SeekCurrent)); any other seek would break the hash and is refused.
type hashingWriter struct {
	f *os.File
	h hash.Hash
}

func (w *hashingWriter) Write(p []byte) (int, error) {
	n, err := w.f.Write(p)
	w.h.Write(p[:n])
	return n, err
}

func (w *hashingWriter) Seek(offset int64, whence int) (int64, error) {
	if offset != 0 || whence != io.SeekCurrent {
		return 0, errors.New("batch: an Arrow file is written in order")
	}
	return w.f.Seek(0, io.SeekCurrent)
}

// write writes rec as one record batch; rec's schema must be the file's.
// The bytes are written before write returns, so rec's buffers may be
// reused afterwards.
func (iw *ipcWriter) write(rec arrow.Record) error {
	if rec.NumRows() == 0 {
		return nil
	}
	if err := iw.w.Write(rec); err != nil {
		return fmt.Errorf("writing %s: %w", iw.file.final, err)
	}
	return nil
}

// valuesArray is an Arrow array of type dt over v itself, without
// copying: v must not change while the array is in use.
func valuesArray[T float64 | int64](dt arrow.DataType, v []T) arrow.Array {
	buf := memory.NewBufferBytes(arrow.GetBytes(v))
	data := array.NewData(dt, len(v), []*memory.Buffer{nil, buf}, nil, 0, 0)
	defer data.Release()
	return array.MakeFromData(data)
}

// commit writes the footer and renames the file into place, its flush to
// disk left to g when g is not nil (see atomicFile.CommitTo).
func (iw *ipcWriter) commit(g *errgroup.Group) error {
	if err := iw.w.Close(); err != nil {
		iw.file.Abort()
		return fmt.Errorf("writing %s: %w", iw.file.final, err)
	}
	return iw.file.CommitTo(g)
}

func (iw *ipcWriter) abort() {
	iw.w.Close()
	iw.file.Abort()
}

// Table is a small column-oriented table for the summary outputs: each
// column is a []string, []int64 or []float64 of the same length.
type Table struct {
	Names   []string
	Units   []string // "" for none
	Columns []any
}

// Add appends a column.
func (t *Table) Add(name, unit string, col any) {
	t.Names = append(t.Names, name)
	t.Units = append(t.Units, unit)
	t.Columns = append(t.Columns, col)
}

// writeTable writes t as a one-batch Arrow IPC file at path.
func writeTable(path string, t *Table, mem memory.Allocator) error {
	fields := make([]arrow.Field, len(t.Names))
	for i, c := range t.Columns {
		var typ arrow.DataType
		switch c.(type) {
		case []string:
			typ = arrow.BinaryTypes.String
		case []int64:
			typ = arrow.PrimitiveTypes.Int64
		case []float64:
			typ = arrow.PrimitiveTypes.Float64
		default:
			panic(fmt.Sprintf("batch: column %s has type %T", t.Names[i], c))
		}
		fields[i] = field(t.Names[i], typ, t.Units[i])
	}
	schema := arrow.NewSchema(fields, nil)
	w, err := newIPCWriter(path, schema, mem)
	if err != nil {
		return err
	}
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	for i, c := range t.Columns {
		switch c := c.(type) {
		case []string:
			b.Field(i).(*array.StringBuilder).AppendValues(c, nil)
		case []int64:
			b.Field(i).(*array.Int64Builder).AppendValues(c, nil)
		case []float64:
			b.Field(i).(*array.Float64Builder).AppendValues(c, nil)
		}
	}
	rec := b.NewRecord()
	defer rec.Release()
	if err := w.write(rec); err != nil {
		w.abort()
		return err
	}
	return w.commit(nil)
}

// ErrCorrupt is the cause of errors about Arrow files that cannot be read.
var ErrCorrupt = errors.New("not a complete Arrow IPC file")

// openIPC opens an Arrow IPC file for reading. Malformed files give an
// error wrapping ErrCorrupt and naming the file, never a panic: the
// metadata lengths the Arrow reader allocates by are checked first
// (checkIPC), and its panics on malformed bodies are recovered.
func openIPC(path string, mem memory.Allocator) (r *ipc.FileReader, f *os.File, err error) {
	f, err = os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("reading %s: %w (%v)", path, ErrCorrupt, p)
		}
		if err != nil {
			f.Close()
		}
	}()
	fi, err := f.Stat()
	if err != nil {
		return nil, nil, fmt.Errorf("reading %s: %w", path, err)
	}
	if fi.IsDir() {
		return nil, nil, fmt.Errorf("reading %s: %w (a folder)", path, ErrCorrupt)
	}
	if err := checkIPC(f, fi.Size()); err != nil {
		return nil, nil, fmt.Errorf("reading %s: %w (%v)", path, ErrCorrupt, err)
	}
	r, err = ipc.NewFileReader(f, ipc.WithAllocator(mem))
	if err != nil {
		return nil, nil, fmt.Errorf("reading %s: %w (%v)", path, ErrCorrupt, err)
	}
	return r, f, nil
}

// forEachRecord calls fn for every record batch of the file at path.
func forEachRecord(path string, mem memory.Allocator, fn func(rec arrow.Record) error) (err error) {
	r, f, err := openIPC(path, mem)
	if err != nil {
		return err
	}
	defer f.Close()
	defer r.Close()
	defer func() {
		// The Arrow reader panics on some malformed bodies; report the
		// file instead.
		if p := recover(); p != nil {
			err = fmt.Errorf("reading %s: %w (%v)", path, ErrCorrupt, p)
		}
	}()
	for i := 0; i < r.NumRecords(); i++ {
		rec, err := r.Record(i)
		if err != nil {
			return fmt.Errorf("reading %s: record batch %d: %w (%v)", path, i, ErrCorrupt, err)
		}
		if err := fn(rec); err != nil {
			return err
		}
	}
	return nil
}

// ReadFloat64Columns reads the named float64 columns of the Arrow file at
// path into memory, in file order.
func ReadFloat64Columns(path string, names []string, mem memory.Allocator) ([][]float64, error) {
	return readColumns(path, names, 0, mem)
}

// ExportCSV writes the Arrow IPC file at path to w as CSV: a header row of
// column names, then one row per record. Floats are written in the
// shortest form that reads back to the same value; NaN as NaN, nulls as
// empty fields.
func ExportCSV(w io.Writer, path string) error {
	mem := memory.DefaultAllocator
	header := false
	var line []byte
	return forEachRecord(path, mem, func(rec arrow.Record) error {
		if !header {
			line = line[:0]
			for i, f := range rec.Schema().Fields() {
				if i > 0 {
					line = append(line, ',')
				}
				line = appendCSV(line, f.Name)
			}
			line = append(line, '\n')
			if _, err := w.Write(line); err != nil {
				return err
			}
			header = true
		}
		cols := rec.Columns()
		for r := 0; r < int(rec.NumRows()); r++ {
			line = line[:0]
			for i, c := range cols {
				if i > 0 {
					line = append(line, ',')
				}
				line = appendValue(line, c, r)
			}
			line = append(line, '\n')
			if _, err := w.Write(line); err != nil {
				return err
			}
		}
		return nil
	})
}

func appendValue(b []byte, c arrow.Array, r int) []byte {
	if c.IsNull(r) {
		return b
	}
	switch c := c.(type) {
	case *array.Float64:
		v := c.Value(r)
		if math.IsNaN(v) {
			return append(b, "NaN"...)
		}
		return strconv.AppendFloat(b, v, 'g', -1, 64)
	case *array.Int64:
		return strconv.AppendInt(b, c.Value(r), 10)
	case *array.String:
		return appendCSV(b, c.Value(r))
	default:
		return appendCSV(b, c.ValueStr(r))
	}
}

// appendCSV appends s, quoted when it holds a comma, quote or line break
// (RFC 4180).
func appendCSV(b []byte, s string) []byte {
	quote := false
	for i := 0; i < len(s); i++ {
		if c := s[i]; c == ',' || c == '"' || c == '\n' || c == '\r' {
			quote = true
			break
		}
	}
	if !quote {
		return append(b, s...)
	}
	b = append(b, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			b = append(b, '"')
		}
		b = append(b, s[i])
	}
	return append(b, '"')
}

// tempDirFor returns the staging folder of a study's outputs: beside the
// final folder, hidden, so that a finished run appears by one rename.
func tempDirFor(final string) string {
	return filepath.Join(filepath.Dir(final), "."+filepath.Base(final)+".partial")
}
