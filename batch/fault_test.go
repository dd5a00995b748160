package batch

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/ipc"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"golang.org/x/sync/errgroup"
)

// removeOnPhase is a Progress that deletes a folder the first time the
// run enters phase (after its first unit of work, for "solving"), as a
// user or a cleaning job might while the run goes on.
type removeOnPhase struct {
	phase, dir string
	cur        string
	done       bool
	err        error
}

func (p *removeOnPhase) Start(_, phase string, _ int) {
	p.cur = phase
	if phase == p.phase && phase != "solving" {
		p.remove()
	}
}

func (p *removeOnPhase) Add(int) {
	if p.cur == p.phase {
		p.remove()
	}
}

func (p *removeOnPhase) Finish() {}

func (p *removeOnPhase) remove() {
	if !p.done {
		p.done = true
		p.err = os.RemoveAll(p.dir)
	}
}

// dirFiles returns every file under dir (relative path → content).
func dirFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	files := map[string][]byte{}
	err := filepath.WalkDir(dir, func(path string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := os.ReadFile(path)
		rel, _ := filepath.Rel(dir, path)
		files[rel] = data
		return err
	})
	if err != nil && !os.IsNotExist(err) {
		t.Fatal(err)
	}
	return files
}

func sameFiles(a, b map[string][]byte) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if w, ok := b[k]; !ok || !bytes.Equal(v, w) {
			return false
		}
	}
	return true
}

// TestRunFolderRemovedMidRun deletes the staging folder, or the whole
// parent output folder, while the cases are solved or while the summaries
// are computed. Run must fail with an error naming the file it could not
// write or read, leave no output folder that looks finished and no
// staging folder, and not touch the previous outputs of the study (run
// with Force over a complete earlier run).
func TestRunFolderRemovedMidRun(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		phase  string
		parent bool // remove the parent output folder, not just the staging one
		force  bool // over a complete previous run, which must survive
	}{
		{name: "staging while solving", phase: "solving"},
		{name: "staging during summaries", phase: "summaries"},
		{name: "staging during tornado", phase: "tornado"},
		{name: "out folder while solving", phase: "solving", parent: true},
		{name: "out folder during summaries", phase: "summaries", parent: true},
		{name: "staging while solving, previous run kept", phase: "solving", force: true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			st := smallStudy(t, 3000)
			out := filepath.Join(t.TempDir(), "out")
			final := filepath.Join(out, st.Name)
			var before map[string][]byte
			if tc.force {
				runInto(t, st, out, 1)
				before = dirFiles(t, final)
			}
			p := &removeOnPhase{phase: tc.phase, dir: tempDirFor(final)}
			if tc.parent {
				p.dir = out
			}
			mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
			defer mem.AssertSize(t, 0)
			_, err := Run(context.Background(), st, Options{Out: out, Workers: 2, BatchRows: 500, Progress: p, Force: tc.force, Alloc: mem})
			if !p.done || p.err != nil {
				t.Fatalf("folder not removed (done %v, err %v)", p.done, p.err)
			}
			if err == nil {
				t.Fatal("Run succeeded after its folder was removed")
			}
			t.Logf("Run: %v", err)
			if !strings.Contains(err.Error(), ".arrow") || !errors.Is(err, os.ErrNotExist) {
				t.Errorf("err = %v; want a not-exist error naming the Arrow file", err)
			}
			if tc.force {
				if after := dirFiles(t, final); !sameFiles(before, after) {
					t.Errorf("the previous outputs changed: %d files before, %d after", len(before), len(after))
				}
			} else if _, err := os.Stat(final); !os.IsNotExist(err) {
				t.Errorf("output folder %s exists after a failed run (%v)", final, err)
			}
			for _, left := range []string{tempDirFor(final), filepath.Join(out, "."+st.Name+".old")} {
				if _, err := os.Stat(left); !os.IsNotExist(err) {
					t.Errorf("%s left behind (%v)", left, err)
				}
			}
		})
	}
}

// corruptions returns damaged copies of an Arrow IPC file: empty, not
// Arrow, cut in half, cut to the magic, footer and magic cut, the footer
// length overwritten. Each must be refused with ErrCorrupt.
func corruptions(data []byte) map[string][]byte {
	footerLen := append([]byte(nil), data...)
	// The file ends with the footer length (int32) and "ARROW1"
	// (Arrow IPC file format: columnar specification).
	copy(footerLen[len(footerLen)-10:], []byte{0xff, 0xff, 0xff, 0x7f})
	return map[string][]byte{
		"empty":             {},
		"not arrow":         []byte("case,s1_init\n0,0.2\n"),
		"magic only":        data[:8],
		"cut in half":       data[:len(data)/2],
		"last byte cut":     data[:len(data)-1],
		"footer cut":        data[:len(data)-10],
		"footer length bad": footerLen,
	}
}

// TestExportDamagedArrow gives ExportCSV Arrow files truncated or
// corrupted in known ways, and many with random bytes flipped (seeded;
// SWEEPSTAT_FAULT_FLIPS sets how many per file, 40 by default). The known
// damage must give an error wrapping ErrCorrupt that names the file;
// random flips may go unnoticed (Arrow IPC has no checksums) but must
// never panic and any error must name the file. The damaged file itself
// is never modified.
func TestExportDamagedArrow(t *testing.T) {
	t.Parallel()
	flips := 40
	if v := os.Getenv("SWEEPSTAT_FAULT_FLIPS"); v != "" {
		flips, _ = strconv.Atoi(v)
	}
	st := smallStudy(t, 600)
	out := t.TempDir()
	runInto(t, st, out, 1)
	dir := filepath.Join(out, st.Name)
	original := dirFiles(t, dir)
	work := t.TempDir()
	rng := rand.New(rand.NewPCG(8, 8))
	detected, undetected := 0, 0
	for _, name := range []string{CasesFile, SummaryFile, TornadoFile, SensitivityFile, CurvesFile} {
		data := original[name]
		if len(data) == 0 {
			t.Fatalf("%s missing from the run", name)
		}
		try := func(label string, bad []byte, mustFail bool) {
			path := filepath.Join(work, strings.ReplaceAll(label, " ", "-")+"-"+name)
			if err := os.WriteFile(path, bad, 0o644); err != nil {
				t.Fatal(err)
			}
			err := exportNoPanic(path)
			switch {
			case err != nil && strings.HasPrefix(err.Error(), "PANIC"):
				t.Errorf("%s %s: %v", label, name, err)
			case err == nil && mustFail:
				t.Errorf("%s %s: exported without an error", label, name)
			case err == nil:
				undetected++
			case !strings.Contains(err.Error(), path):
				t.Errorf("%s %s: error %q does not name the file", label, name, err)
			case mustFail && !errors.Is(err, ErrCorrupt):
				t.Errorf("%s %s: error %v does not wrap ErrCorrupt", label, name, err)
			default:
				detected++
			}
			if got, _ := os.ReadFile(path); !bytes.Equal(got, bad) {
				t.Errorf("%s %s: export changed the file", label, name)
			}
			os.Remove(path)
		}
		for label, bad := range corruptions(data) {
			try(label, bad, true)
		}
		for k := range flips {
			bad := append([]byte(nil), data...)
			for range 1 + rng.IntN(16) {
				bad[rng.IntN(len(bad))] ^= byte(1 + rng.IntN(255))
			}
			try(fmt.Sprintf("flip %d", k), bad, false)
		}
	}
	if after := dirFiles(t, dir); !sameFiles(original, after) {
		t.Error("the run's own files changed")
	}
	t.Logf("damaged Arrow files: %d refused with an error naming the file, %d read without error (flips in data bytes), 0 panics", detected, undetected)
}

// exportNoPanic runs ExportCSV and turns a panic that escapes it into an
// error starting "PANIC".
func exportNoPanic(path string) (err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("PANIC: %v", p)
		}
	}()
	return ExportCSV(io.Discard, path)
}

// TestCheckIPCAcceptsArrowFeatures: the metadata check refuses no valid
// file, including features sweepstat does not write itself: LZ4 and Zstd
// bodies, a dictionary-encoded column (a dictionary block), a timestamp
// with a time zone, nested list and struct columns, schema metadata. The
// files are written by the Arrow library, the reference here.
func TestCheckIPCAcceptsArrowFeatures(t *testing.T) {
	t.Parallel()
	dictType := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "ts", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "Europe/Oslo"}, Nullable: true},
		{Name: "label", Type: dictType},
		{Name: "xs", Type: arrow.ListOf(arrow.PrimitiveTypes.Float64)},
		{Name: "pt", Type: arrow.StructOf(arrow.Field{Name: "a", Type: arrow.PrimitiveTypes.Int64}, arrow.Field{Name: "b", Type: arrow.BinaryTypes.String})},
	}, func() *arrow.Metadata { m := arrow.NewMetadata([]string{"k"}, []string{"v"}); return &m }())
	for _, tc := range []struct {
		name string
		opts []ipc.Option
	}{
		{"plain", nil},
		{"lz4", []ipc.Option{ipc.WithLZ4()}},
		{"zstd", []ipc.Option{ipc.WithZstd()}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			mem := memory.NewGoAllocator()
			path := filepath.Join(t.TempDir(), "x.arrow")
			writeTestIPC(t, path, mem, schema, tc.opts, 3, func(b *array.RecordBuilder, batch int) {
				for i := range 500 {
					b.Field(0).(*array.TimestampBuilder).Append(arrow.Timestamp(1_700_000_000_000 + i))
					if err := b.Field(1).(*array.BinaryDictionaryBuilder).AppendString([]string{"ok", "rejected"}[i%2]); err != nil {
						t.Fatal(err)
					}
					lb := b.Field(2).(*array.ListBuilder)
					lb.Append(true)
					lb.ValueBuilder().(*array.Float64Builder).AppendValues([]float64{float64(i), 0, 0, 0}, nil)
					sb := b.Field(3).(*array.StructBuilder)
					sb.Append(true)
					sb.FieldBuilder(0).(*array.Int64Builder).Append(int64(batch))
					sb.FieldBuilder(1).(*array.StringBuilder).Append("pad pad pad pad")
				}
			})
			fi, err := os.Stat(path)
			if err != nil {
				t.Fatal(err)
			}
			r, err := os.Open(path)
			if err != nil {
				t.Fatal(err)
			}
			defer r.Close()
			if err := checkIPC(r, fi.Size()); err != nil {
				t.Fatalf("checkIPC refuses a valid file: %v", err)
			}
			fr, err := ipc.NewFileReader(r, ipc.WithAllocator(mem))
			if err != nil {
				t.Fatal(err)
			}
			if fr.NumDictionaries() == 0 || fr.NumRecords() != 3 {
				t.Errorf("%d dictionary blocks, %d record blocks; want a dictionary and 3 records checked", fr.NumDictionaries(), fr.NumRecords())
			}
			fr.Close()
			var csv bytes.Buffer
			if err := ExportCSV(&csv, path); err != nil {
				t.Fatalf("ExportCSV: %v", err)
			}
			if n := strings.Count(csv.String(), "\n"); n != 1+3*500 {
				t.Errorf("%d CSV lines, want %d", n, 1+3*500)
			}
		})
	}
}

// TestCommitToDefersTheFlush checks the background flush of a large file:
// CommitTo renames at once, the group's wait reports a flush that failed
// (here the file was closed under it) with the file's name.
func TestCommitToDefersTheFlush(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	path := filepath.Join(dir, "big.arrow")
	f, err := createAtomic(path)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.Write([]byte("rows")); err != nil {
		t.Fatal(err)
	}
	var g errgroup.Group
	if err := f.CommitTo(&g); err != nil {
		t.Fatal(err)
	}
	if err := g.Wait(); err != nil {
		t.Fatalf("wait: %v", err)
	}
	if b, err := os.ReadFile(path); err != nil || string(b) != "rows" {
		t.Fatalf("committed file: %q, %v", b, err)
	}
	if _, err := os.Stat(path + tmpSuffix); !os.IsNotExist(err) {
		t.Errorf("temporary file left: %v", err)
	}

	f, err = createAtomic(filepath.Join(dir, "lost.arrow"))
	if err != nil {
		t.Fatal(err)
	}
	f.File.Close() // the flush will fail
	var bad errgroup.Group
	if err := f.CommitTo(&bad); err != nil {
		t.Fatal(err)
	}
	if err := bad.Wait(); err == nil || !strings.Contains(err.Error(), "lost.arrow") {
		t.Errorf("wait = %v, want a failure naming lost.arrow", err)
	}
}

// writeTestIPC writes an Arrow IPC file of schema at path, with the writer
// options opts, in batches record batches, fill appending batch k's rows.
func writeTestIPC(t *testing.T, path string, mem memory.Allocator, schema *arrow.Schema, opts []ipc.Option, batches int, fill func(b *array.RecordBuilder, batch int)) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	w, err := ipc.NewFileWriter(f, append([]ipc.Option{ipc.WithSchema(schema), ipc.WithAllocator(mem)}, opts...)...)
	if err != nil {
		t.Fatal(err)
	}
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	for k := range batches {
		fill(b, k)
		rec := b.NewRecord()
		err := w.Write(rec)
		rec.Release()
		if err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}
