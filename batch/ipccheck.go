package batch

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
)

// The Arrow IPC reader trusts the lengths stored in a file's metadata: one
// damaged byte can make it allocate gigabytes before it reads anything,
// and a Go out-of-memory error ends the process (it cannot be recovered).
// checkIPC verifies those lengths first, so a damaged file is an error.
//
// Arrow IPC file layout (Arrow columnar format specification, "IPC File
// Format"): "ARROW1", 2 bytes of padding, the stream messages, the
// footer flatbuffer, its length as int32, "ARROW1". Each message is a
// continuation token 0xFFFFFFFF, an int32 length, a Message flatbuffer
// (padded to 8 bytes) and the body. The field slots below follow the
// flatbuffer schemas File.fbs, Schema.fbs and Message.fbs as generated in
// arrow/go/v17/arrow/internal/flatbuf.

var arrowMagic = []byte("ARROW1")

// Largest uncompressed size a compressed buffer may claim. sweepstat writes
// no compressed files; the bound keeps a damaged one from claiming more.
const maxInflatedBuffer = math.MaxInt32

// Message header types and the two type tables holding offsets (flatbuf
// MessageHeader and Type enums).
const (
	headerSchema          = 1
	headerDictionaryBatch = 2
	headerRecordBatch     = 3
	typeTimestamp         = 10
	typeUnion             = 14
)

// maxNesting is the Arrow reader's nesting limit for fields.
const maxNesting = 64

var errLayout = errors.New("damaged metadata")

// checkIPC checks that the footer, every block it lists and every message
// flatbuffer of the Arrow IPC file r of size bytes are self-consistent:
// tables, vectors and strings inside their buffers, blocks inside the
// file, buffers inside their block's body.
func checkIPC(r io.ReaderAt, size int64) error {
	const tail = 4 + 6 // footer length, magic
	if size < 8+tail {
		return fmt.Errorf("file too small (%d bytes)", size)
	}
	head := make([]byte, 6)
	end := make([]byte, tail)
	if _, err := r.ReadAt(head, 0); err != nil {
		return err
	}
	if _, err := r.ReadAt(end, size-tail); err != nil {
		return err
	}
	if !bytes.Equal(head, arrowMagic) || !bytes.Equal(end[4:], arrowMagic) {
		return errors.New("no Arrow file magic at its start and end")
	}
	n := int64(int32(binary.LittleEndian.Uint32(end)))
	if n <= 0 || n > size-8-tail {
		return fmt.Errorf("%w: footer length %d in a file of %d bytes", errLayout, n, size)
	}
	footer := make([]byte, n)
	if _, err := r.ReadAt(footer, size-tail-n); err != nil {
		return err
	}
	f := &fbuf{b: footer, budget: len(footer)/4 + 16}
	root, err := f.root()
	if err != nil {
		return fmt.Errorf("footer: %w", err)
	}
	// Footer: version, schema, dictionaries, recordBatches, custom_metadata.
	if err := f.subTable(root, 1, f.schema); err != nil {
		return fmt.Errorf("footer schema: %w", err)
	}
	if err := f.keyValues(root, 4); err != nil {
		return fmt.Errorf("footer metadata: %w", err)
	}
	dataEnd := size - tail - n
	for slot, want := range map[int]int{2: headerDictionaryBatch, 3: headerRecordBatch} {
		start, count, err := f.vector(root, slot, 24) // Block: offset, metaDataLength, pad, bodyLength
		if err != nil {
			return fmt.Errorf("footer blocks: %w", err)
		}
		for k := range count {
			p := start + 24*k
			off := int64(binary.LittleEndian.Uint64(footer[p:]))
			meta := int64(int32(binary.LittleEndian.Uint32(footer[p+8:])))
			body := int64(binary.LittleEndian.Uint64(footer[p+16:]))
			if err := checkBlock(r, off, meta, body, dataEnd, want); err != nil {
				return fmt.Errorf("block %d: %w", k, err)
			}
		}
	}
	return nil
}

// messageRoot returns the Message flatbuffer of a block's metadata buf,
// after its prefix (as the Arrow reader: continuation token + length, or
// a bare length), with a reader over it.
func messageRoot(buf []byte) (*fbuf, fbTable, error) {
	prefix := 4
	switch binary.LittleEndian.Uint32(buf) {
	case 0:
		prefix = 0
	case 0xFFFFFFFF:
		prefix = 8
	}
	f := &fbuf{b: buf[prefix:], budget: len(buf)/4 + 16}
	msg, err := f.root()
	return f, msg, err
}

// checkBlock checks one block of the file: inside the data part, and its
// Message flatbuffer (of type want) consistent with its body.
func checkBlock(r io.ReaderAt, off, meta, body, dataEnd int64, want int) error {
	if off < 8 || meta < 8 || body < 0 || off > dataEnd || meta > dataEnd-off || body > dataEnd-off-meta {
		return fmt.Errorf("%w: block at %d (metadata %d, body %d bytes) outside the %d bytes of data", errLayout, off, meta, body, dataEnd)
	}
	buf := make([]byte, meta)
	if _, err := r.ReadAt(buf, off); err != nil {
		return err
	}
	f, msg, err := messageRoot(buf)
	if err != nil {
		return err
	}
	// Message: version, header_type, header, bodyLength, custom_metadata.
	if err := f.keyValues(msg, 4); err != nil {
		return err
	}
	kind, err := f.scalar(msg, 1, 1)
	if err != nil {
		return err
	}
	if int(kind) != want {
		return fmt.Errorf("%w: message type %d, want %d", errLayout, kind, want)
	}
	bodyAt := off + meta
	switch want {
	case headerRecordBatch:
		return f.subTable(msg, 2, func(t fbTable) error { return f.recordBatch(t, r, bodyAt, body) })
	case headerDictionaryBatch:
		// DictionaryBatch: id, data, isDelta.
		return f.subTable(msg, 2, func(t fbTable) error {
			return f.subTable(t, 1, func(t fbTable) error { return f.recordBatch(t, r, bodyAt, body) })
		})
	}
	return nil
}

// recordBatch checks a RecordBatch table (length, nodes, buffers,
// compression, variadicBufferCounts) against its body of body bytes at
// bodyAt in r.
func (f *fbuf) recordBatch(t fbTable, r io.ReaderAt, bodyAt, body int64) error {
	if _, _, err := f.vector(t, 1, 16); err != nil { // FieldNode: length, null_count
		return err
	}
	if _, _, err := f.vector(t, 4, 8); err != nil {
		return err
	}
	compressed := false
	if _, ok, err := f.fieldOf(t, 3, 4); err != nil {
		return err
	} else if ok {
		compressed = true
		if err := f.subTable(t, 3, func(fbTable) error { return nil }); err != nil {
			return err
		}
	}
	start, count, err := f.vector(t, 2, 16) // Buffer: offset, length
	if err != nil {
		return err
	}
	for k := range count {
		p := start + 16*k
		o := int64(binary.LittleEndian.Uint64(f.b[p:]))
		n := int64(binary.LittleEndian.Uint64(f.b[p+8:]))
		if o < 0 || n < 0 || o > body || n > body-o {
			return fmt.Errorf("%w: buffer %d at %d (%d bytes) outside a body of %d bytes", errLayout, k, o, n, body)
		}
		if compressed && n >= 8 {
			var raw [8]byte
			if _, err := r.ReadAt(raw[:], bodyAt+o); err != nil {
				return err
			}
			if u := int64(binary.LittleEndian.Uint64(raw[:])); u != -1 && (u < 0 || u > maxInflatedBuffer) {
				return fmt.Errorf("%w: compressed buffer %d claims %d bytes", errLayout, k, u)
			}
		}
	}
	return nil
}

// schema checks a Schema table: endianness, fields, custom_metadata,
// features.
func (f *fbuf) schema(t fbTable) error {
	if err := f.tables(t, 1, func(t fbTable) error { return f.field(t, 1) }); err != nil {
		return err
	}
	if err := f.keyValues(t, 2); err != nil {
		return err
	}
	_, _, err := f.vector(t, 3, 8)
	return err
}

// field checks a Field table: name, nullable, type_type, type,
// dictionary, children, custom_metadata.
func (f *fbuf) field(t fbTable, depth int) error {
	if depth > maxNesting {
		return fmt.Errorf("%w: fields nested deeper than %d", errLayout, maxNesting)
	}
	if _, _, err := f.vector(t, 0, 1); err != nil {
		return err
	}
	typ, err := f.scalar(t, 2, 1)
	if err != nil {
		return err
	}
	err = f.subTable(t, 3, func(tt fbTable) error {
		switch typ {
		case typeTimestamp: // unit, timezone
			_, _, err := f.vector(tt, 1, 1)
			return err
		case typeUnion: // mode, typeIds
			_, _, err := f.vector(tt, 1, 4)
			return err
		}
		return nil
	})
	if err != nil {
		return err
	}
	// DictionaryEncoding: id, indexType (Int: scalars), isOrdered, kind.
	err = f.subTable(t, 4, func(d fbTable) error {
		return f.subTable(d, 1, func(fbTable) error { return nil })
	})
	if err != nil {
		return err
	}
	if err := f.tables(t, 5, func(c fbTable) error { return f.field(c, depth+1) }); err != nil {
		return err
	}
	return f.keyValues(t, 6)
}

// keyValues checks a vector of KeyValue tables (key, value strings).
func (f *fbuf) keyValues(t fbTable, slot int) error {
	return f.tables(t, slot, func(kv fbTable) error {
		if _, _, err := f.vector(kv, 0, 1); err != nil {
			return err
		}
		_, _, err := f.vector(kv, 1, 1)
		return err
	})
}

// fbuf reads a flatbuffer defensively: every position is checked against
// the buffer before it is read, and budget bounds the tables visited (a
// damaged offset can point back at a table already seen).
type fbuf struct {
	b      []byte
	budget int
}

// fbTable is a table of a flatbuffer: its position, its vtable's and the
// sizes of both.
type fbTable struct {
	pos, vt, vtSize, size int
}

func (f *fbuf) u32(p int) (int, error) {
	if p < 0 || p > len(f.b)-4 {
		return 0, fmt.Errorf("%w: offset %d outside %d bytes", errLayout, p, len(f.b))
	}
	return int(binary.LittleEndian.Uint32(f.b[p:])), nil
}

func (f *fbuf) u16(p int) (int, error) {
	if p < 0 || p > len(f.b)-2 {
		return 0, fmt.Errorf("%w: offset %d outside %d bytes", errLayout, p, len(f.b))
	}
	return int(binary.LittleEndian.Uint16(f.b[p:])), nil
}

func (f *fbuf) root() (fbTable, error) {
	off, err := f.u32(0)
	if err != nil {
		return fbTable{}, err
	}
	return f.table(off)
}

// table checks the table at pos: its vtable and its inline part inside
// the buffer.
func (f *fbuf) table(pos int) (fbTable, error) {
	if f.budget--; f.budget < 0 {
		return fbTable{}, fmt.Errorf("%w: more tables than the buffer can hold", errLayout)
	}
	so, err := f.u32(pos)
	if err != nil {
		return fbTable{}, err
	}
	vt := pos - int(int32(so))
	vtSize, err := f.u16(vt)
	if err != nil {
		return fbTable{}, err
	}
	size, err := f.u16(vt + 2)
	if err != nil {
		return fbTable{}, err
	}
	if vtSize < 4 || vtSize%2 != 0 || vt+vtSize > len(f.b) || size < 4 || pos+size > len(f.b) {
		return fbTable{}, fmt.Errorf("%w: table at %d outside %d bytes", errLayout, pos, len(f.b))
	}
	return fbTable{pos: pos, vt: vt, vtSize: vtSize, size: size}, nil
}

// fieldOf returns the position of the field of t in slot (false when
// absent), checking that width bytes of it lie inside the table.
func (f *fbuf) fieldOf(t fbTable, slot, width int) (int, bool, error) {
	at := 4 + 2*slot
	if at+2 > t.vtSize {
		return 0, false, nil
	}
	off, err := f.u16(t.vt + at)
	if err != nil || off == 0 {
		return 0, false, err
	}
	if off+width > t.size {
		return 0, false, fmt.Errorf("%w: field %d of the table at %d runs past it", errLayout, slot, t.pos)
	}
	return t.pos + off, true, nil
}

// scalar reads the unsigned scalar of width 1 in slot (0 when absent).
func (f *fbuf) scalar(t fbTable, slot, width int) (uint8, error) {
	p, ok, err := f.fieldOf(t, slot, width)
	if err != nil || !ok {
		return 0, err
	}
	return f.b[p], nil
}

// ref follows the offset in slot to what it points at.
func (f *fbuf) ref(t fbTable, slot int) (int, bool, error) {
	p, ok, err := f.fieldOf(t, slot, 4)
	if err != nil || !ok {
		return 0, false, err
	}
	off, err := f.u32(p)
	if err != nil {
		return 0, false, err
	}
	return p + off, true, nil
}

// vector returns where the elements of the vector in slot start and how
// many there are, checking that count·elem bytes fit in the buffer.
func (f *fbuf) vector(t fbTable, slot, elem int) (start, count int, err error) {
	p, ok, err := f.ref(t, slot)
	if err != nil || !ok {
		return 0, 0, err
	}
	n, err := f.u32(p)
	if err != nil {
		return 0, 0, err
	}
	if int64(n)*int64(elem) > int64(len(f.b)-p-4) {
		return 0, 0, fmt.Errorf("%w: a vector of %d elements at %d in %d bytes", errLayout, n, p, len(f.b))
	}
	return p + 4, n, nil
}

// subTable checks the table in slot, if any, with check.
func (f *fbuf) subTable(t fbTable, slot int, check func(fbTable) error) error {
	p, ok, err := f.ref(t, slot)
	if err != nil || !ok {
		return err
	}
	sub, err := f.table(p)
	if err != nil {
		return err
	}
	return check(sub)
}

// tables checks every table of the vector of tables in slot with check.
func (f *fbuf) tables(t fbTable, slot int, check func(fbTable) error) error {
	start, n, err := f.vector(t, slot, 4)
	if err != nil {
		return err
	}
	for k := range n {
		p := start + 4*k
		off, err := f.u32(p)
		if err != nil {
			return err
		}
		sub, err := f.table(p + off)
		if err != nil {
			return err
		}
		if err := check(sub); err != nil {
			return err
		}
	}
	return nil
}
