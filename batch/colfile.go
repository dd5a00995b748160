package batch

import (
	"encoding/binary"
	"fmt"
	"math"
	"os"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/endian"
	"github.com/apache/arrow/go/v17/arrow/memory"
)

// columnFile reads float64 columns of an Arrow IPC file one at a time,
// straight from each record batch's value buffer: the Arrow reader
// decodes every column of a batch to deliver one, so a pass over the 35
// columns of cases.arrow for one column reads 35 times what it needs.
//
// The file is checked as [openIPC] checks it; its footer and each record
// batch's metadata are then read once (the same flatbuffer layout
// checkIPC follows) into an index of where every column's values lie.
// Files this index does not cover (compressed buffers, nulls, dictionary
// or nested columns, big-endian data) are read through the Arrow library
// instead, with the same results. A columnFile is safe for concurrent use.
type columnFile struct {
	path string
	f    *os.File
	mem  memory.Allocator // for the Arrow fallback
	rows int
	// fields maps a float64 column's name to its field index; nil when
	// the file is read through the Arrow library.
	fields map[string]int
	blocks []colBlock
}

// colBlock is one record batch: its first row, its row count and the
// file offset of each field's value buffer (float64 fields only).
type colBlock struct {
	start, rows int
	at          []int64
}

// openColumnFile opens the Arrow IPC file at path and indexes its float64
// columns. Errors about the file wrap ErrCorrupt, as openIPC's do.
func openColumnFile(path string, mem memory.Allocator) (*columnFile, error) {
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	r, f, err := openIPC(path, mem)
	if err != nil {
		return nil, err
	}
	schema := r.Schema()
	n := r.NumRecords()
	r.Close()
	c := &columnFile{path: path, f: f, mem: mem}
	ok, err := c.index(schema, n)
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("reading %s: %w (%v)", path, ErrCorrupt, err)
	}
	if !ok {
		c.fields, c.blocks, c.rows = nil, nil, 0
		err := forEachRecord(path, mem, func(rec arrow.Record) error {
			c.rows += int(rec.NumRows())
			return nil
		})
		if err != nil {
			f.Close()
			return nil, err
		}
	}
	return c, nil
}

func (c *columnFile) close() error { return c.f.Close() }

// numBuffers returns how many IPC buffers a flat field of type t has
// (Arrow columnar format, "Buffer listing for each layout"), or false for
// types the index does not cover.
func numBuffers(t arrow.DataType) (int, bool) {
	switch t.ID() {
	case arrow.STRING, arrow.BINARY, arrow.LARGE_STRING, arrow.LARGE_BINARY:
		return 3, true
	case arrow.DICTIONARY, arrow.EXTENSION:
		return 0, false
	}
	if _, ok := t.(arrow.FixedWidthDataType); ok {
		return 2, true
	}
	return 0, false
}

// index reads the footer and every record batch's metadata. It returns
// false, with no error, for a file whose layout it does not cover.
func (c *columnFile) index(schema *arrow.Schema, numRecords int) (bool, error) {
	if schema.Endianness() != endian.LittleEndian {
		return false, nil
	}
	fields := schema.Fields()
	firstBuf := make([]int, len(fields)) // index of each field's first buffer
	nbuf := 0
	c.fields = map[string]int{}
	seen, dup := map[string]bool{}, map[string]bool{}
	for k, fd := range fields {
		nb, ok := numBuffers(fd.Type)
		if !ok {
			return false, nil
		}
		firstBuf[k] = nbuf
		nbuf += nb
		dup[fd.Name] = seen[fd.Name]
		seen[fd.Name] = true
		if fd.Type.ID() == arrow.FLOAT64 {
			c.fields[fd.Name] = k
		}
	}
	for name, d := range dup {
		if d {
			delete(c.fields, name) // an ambiguous name is no column, as for scanFloat64
		}
	}

	fi, err := c.f.Stat()
	if err != nil {
		return false, err
	}
	const tail = 4 + 6 // footer length, magic
	end := make([]byte, tail)
	if _, err := c.f.ReadAt(end, fi.Size()-tail); err != nil {
		return false, err
	}
	size := int64(int32(binary.LittleEndian.Uint32(end)))
	footer := make([]byte, size)
	if _, err := c.f.ReadAt(footer, fi.Size()-tail-size); err != nil {
		return false, err
	}
	fb := &fbuf{b: footer, budget: len(footer)/4 + 16}
	root, err := fb.root()
	if err != nil {
		return false, err
	}
	if _, count, err := fb.vector(root, 2, 24); err != nil || count > 0 {
		return false, err // dictionary batches
	}
	start, count, err := fb.vector(root, 3, 24) // Block: offset, metaDataLength, pad, bodyLength
	if err != nil {
		return false, err
	}
	if count != numRecords {
		return false, fmt.Errorf("%w: %d record blocks, the reader sees %d", errLayout, count, numRecords)
	}
	var meta []byte
	for b := range count {
		p := start + 24*b
		off := int64(binary.LittleEndian.Uint64(footer[p:]))
		metaLen := int64(int32(binary.LittleEndian.Uint32(footer[p+8:])))
		if cap(meta) < int(metaLen) {
			meta = make([]byte, metaLen)
		}
		meta = meta[:metaLen]
		if _, err := c.f.ReadAt(meta, off); err != nil {
			return false, err
		}
		blk, ok, err := parseBatch(meta, off+metaLen, len(fields), nbuf, firstBuf, c.fields)
		if err != nil || !ok {
			return false, err
		}
		blk.start = c.rows
		c.rows += blk.rows
		c.blocks = append(c.blocks, blk)
	}
	return true, nil
}

// parseBatch reads the RecordBatch message of one block (metadata meta,
// body at bodyAt): its length and, for each float64 field, where its
// values lie. It returns false for a layout the index does not cover.
func parseBatch(meta []byte, bodyAt int64, nfields, nbuf int, firstBuf []int, floats map[string]int) (colBlock, bool, error) {
	fb, msg, err := messageRoot(meta)
	if err != nil {
		return colBlock{}, false, err
	}
	// Message: version, header_type, header, bodyLength, custom_metadata.
	kind, err := fb.scalar(msg, 1, 1)
	if err != nil {
		return colBlock{}, false, err
	}
	if kind != headerRecordBatch {
		return colBlock{}, false, fmt.Errorf("%w: message type %d in a record block", errLayout, kind)
	}
	hp, ok, err := fb.ref(msg, 2)
	if err != nil || !ok {
		return colBlock{}, false, err
	}
	rb, err := fb.table(hp)
	if err != nil {
		return colBlock{}, false, err
	}
	// RecordBatch: length, nodes, buffers, compression.
	if _, compressed, err := fb.fieldOf(rb, 3, 4); err != nil || compressed {
		return colBlock{}, false, err
	}
	var length int64
	if p, ok, err := fb.fieldOf(rb, 0, 8); err != nil {
		return colBlock{}, false, err
	} else if ok {
		length = int64(binary.LittleEndian.Uint64(fb.b[p:]))
	}
	nodes, nn, err := fb.vector(rb, 1, 16) // FieldNode: length, null_count
	if err != nil {
		return colBlock{}, false, err
	}
	bufs, nb, err := fb.vector(rb, 2, 16) // Buffer: offset, length
	if err != nil {
		return colBlock{}, false, err
	}
	if nn != nfields || nb != nbuf || length < 0 || length > math.MaxInt32 {
		return colBlock{}, false, nil
	}
	blk := colBlock{rows: int(length), at: make([]int64, nfields)}
	for _, k := range floats {
		node := nodes + 16*k
		if int64(binary.LittleEndian.Uint64(fb.b[node:])) != length || binary.LittleEndian.Uint64(fb.b[node+8:]) != 0 {
			return colBlock{}, false, nil // nulls, or a field of another length
		}
		buf := bufs + 16*(firstBuf[k]+1) // after the validity bitmap
		off := int64(binary.LittleEndian.Uint64(fb.b[buf:]))
		n := int64(binary.LittleEndian.Uint64(fb.b[buf+8:]))
		if n < 8*length {
			return colBlock{}, false, fmt.Errorf("%w: a float64 buffer of %d bytes for %d values", errLayout, n, length)
		}
		blk.at[k] = bodyAt + off
	}
	return blk, true, nil
}

// numRows returns the rows of the file.
func (c *columnFile) numRows() (int, error) { return c.rows, nil }

// scan calls fn with the values of the named float64 column, record batch
// by record batch in row order, start being the row of vals[0], until
// limit rows (all when limit ≤ 0) have been seen. vals is valid only
// during the call.
func (c *columnFile) scan(name string, limit int, fn func(start int, vals []float64) error) error {
	if c.fields == nil {
		return scanFloat64(c.path, c.mem, []string{name}, func(start int, cols [][]float64) error {
			v := cols[0]
			if limit > 0 {
				if start >= limit {
					return errStopScan
				}
				v = v[:min(len(v), limit-start)]
			}
			return fn(start, v)
		})
	}
	k, ok := c.fields[name]
	if !ok {
		return fmt.Errorf("reading %s: no float64 column %q", c.path, name)
	}
	var raw []byte
	var vals []float64
	for _, b := range c.blocks {
		n := b.rows
		if limit > 0 {
			if b.start >= limit {
				break
			}
			n = min(n, limit-b.start)
		}
		if n == 0 {
			continue
		}
		if cap(raw) < 8*n {
			raw, vals = make([]byte, 8*n), make([]float64, n)
		}
		raw, vals = raw[:8*n], vals[:n]
		if _, err := c.f.ReadAt(raw, b.at[k]); err != nil {
			return fmt.Errorf("reading %s: %w", c.path, err)
		}
		for i := range vals {
			vals[i] = math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
		}
		if err := fn(b.start, vals); err != nil {
			return err
		}
	}
	return nil
}

// read returns the first limit rows (all when limit ≤ 0) of the named
// float64 column, in dst's storage when it is large enough.
func (c *columnFile) read(name string, limit int, dst []float64) ([]float64, error) {
	k, ok := c.fields[name]
	if !ok {
		dst = dst[:0]
		err := c.scan(name, limit, func(_ int, vals []float64) error {
			dst = append(dst, vals...)
			return nil
		})
		return dst, err
	}
	n := c.rows
	if limit > 0 {
		n = min(n, limit)
	}
	if cap(dst) < n {
		dst = make([]float64, n)
	}
	dst = dst[:n]
	var raw []byte
	for _, b := range c.blocks {
		if b.start >= n {
			break
		}
		m := min(b.rows, n-b.start)
		if cap(raw) < 8*m {
			raw = make([]byte, 8*m)
		}
		raw = raw[:8*m]
		if _, err := c.f.ReadAt(raw, b.at[k]); err != nil {
			return nil, fmt.Errorf("reading %s: %w", c.path, err)
		}
		out := dst[b.start : b.start+m]
		for i := range out {
			out[i] = math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
		}
	}
	return dst, nil
}

// at returns the value of each named float64 column at row.
func (c *columnFile) at(names []string, row int) ([]float64, error) {
	out := make([]float64, len(names))
	for j, name := range names {
		k, ok := c.fields[name]
		if c.fields != nil && !ok {
			return nil, fmt.Errorf("reading %s: no float64 column %q", c.path, name)
		}
		if c.fields == nil {
			err := c.scan(name, row+1, func(start int, vals []float64) error {
				if row >= start && row < start+len(vals) {
					out[j] = vals[row-start]
				}
				return nil
			})
			if err != nil {
				return nil, err
			}
			continue
		}
		var raw [8]byte
		for _, b := range c.blocks {
			if row >= b.start && row < b.start+b.rows {
				if _, err := c.f.ReadAt(raw[:], b.at[k]+8*int64(row-b.start)); err != nil {
					return nil, fmt.Errorf("reading %s: %w", c.path, err)
				}
				out[j] = math.Float64frombits(binary.LittleEndian.Uint64(raw[:]))
			}
		}
	}
	return out, nil
}
