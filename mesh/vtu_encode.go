package mesh

import (
	"bytes"
	"compress/zlib"
	"encoding/base64"
	"encoding/binary"
	"math"

	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// The binary data of a VTU file. Each array is stored as a header of
// unsigned integers (UInt32 or UInt64, as header_type says), in the byte
// order of the file, followed by its bytes:
//
//	uncompressed:  [n] data                        n = bytes of data
//	compressed:    [b][s][r][c_1]…[c_b] z_1 … z_b  b blocks of s bytes before compression,
//	                                               the last of r bytes (0: it is full),
//	                                               z_i block i compressed by zlib, of c_i bytes
//
// In base64, the header of compressed data is encoded on its own and the
// blocks after it as one stream; uncompressed data are encoded with their
// header as one stream. The offset of an appended array counts bytes from
// the character after the underscore that opens the AppendedData section,
// or base64 characters in a base64 section.
//
// References:
//   - VTK XML file formats, "Appended Data Section" and "Compressed Data",
//     https://docs.vtk.org/en/latest/vtk_file_formats/vtkxml_file_format.html
//     and the VTK XML Formats page of the VTK wiki.

// vtuBlockSize is the size of a block of binary data before compression.
const vtuBlockSize = 1 << 16

// compressArrays compresses the data of every array in blocks of
// vtuBlockSize bytes, the blocks in parallel, and sets each array's
// block0. The result holds the blocks of all arrays in order; it does not
// depend on the number of goroutines.
func compressArrays(arrays []*vtuArray) ([][]byte, error) {
	var owner []int32 // owner[i] is the array of block i
	for j, a := range arrays {
		a.block0 = len(owner)
		for range numBlocks(a.n * a.width) {
			owner = append(owner, int32(j))
		}
	}
	blocks := make([][]byte, len(owner))
	type worker struct {
		raw []byte
		buf bytes.Buffer
		zw  *zlib.Writer
	}
	start := func() (*worker, error) {
		w := &worker{raw: make([]byte, vtuBlockSize)}
		var err error
		w.zw, err = zlib.NewWriterLevel(&w.buf, zlib.BestSpeed)
		return w, err
	}
	err := parallel.Dynamic(len(owner), 1, start, func(w *worker, lo, hi int) error {
		for b := lo; b < hi; b++ {
			a := arrays[owner[b]]
			per := vtuBlockSize / a.width
			first := (b - a.block0) * per
			last := min(first+per, a.n)
			raw := encodeValues(a, w.raw[:0], first, last)
			w.buf.Reset()
			w.zw.Reset(&w.buf)
			if _, err := w.zw.Write(raw); err != nil {
				return err
			}
			if err := w.zw.Close(); err != nil {
				return err
			}
			blocks[b] = bytes.Clone(w.buf.Bytes())
		}
		return nil
	})
	return blocks, err
}

// numBlocks returns the number of blocks of n bytes of data.
func numBlocks(n int) int { return (n + vtuBlockSize - 1) / vtuBlockSize }

// encodeValues appends values [lo, hi) of a to dst in little-endian order.
func encodeValues(a *vtuArray, dst []byte, lo, hi int) []byte {
	le := binary.LittleEndian
	switch a.typ {
	case "Float64":
		for i := lo; i < hi; i++ {
			dst = le.AppendUint64(dst, math.Float64bits(a.f(i)))
		}
	case "Int64":
		for i := lo; i < hi; i++ {
			dst = le.AppendUint64(dst, uint64(a.k(i)))
		}
	case "Int32":
		for i := lo; i < hi; i++ {
			dst = le.AppendUint32(dst, uint32(int32(a.k(i))))
		}
	case "UInt8":
		for i := lo; i < hi; i++ {
			dst = append(dst, uint8(a.k(i)))
		}
	default:
		panic("mesh: vtu: unknown array type " + a.typ)
	}
	return dst
}

// header returns the header of the data of a.
func (e *vtuEncoder) header(a *vtuArray) []byte {
	n := a.n * a.width
	var words []uint64
	if e.blocks == nil {
		words = []uint64{uint64(n)}
	} else {
		nb := numBlocks(n)
		words = []uint64{uint64(nb), vtuBlockSize, uint64(n % vtuBlockSize)}
		for _, z := range e.blocks[a.block0 : a.block0+nb] {
			words = append(words, uint64(len(z)))
		}
	}
	h := make([]byte, 0, e.hsize*len(words))
	for _, w := range words {
		if e.hsize == 4 {
			h = binary.LittleEndian.AppendUint32(h, uint32(w))
		} else {
			h = binary.LittleEndian.AppendUint64(h, w)
		}
	}
	return h
}

// dataSize returns the number of bytes of the data of a after the header.
func (e *vtuEncoder) dataSize(a *vtuArray) int {
	if e.blocks == nil {
		return a.n * a.width
	}
	s := 0
	for _, z := range e.blocks[a.block0 : a.block0+numBlocks(a.n*a.width)] {
		s += len(z)
	}
	return s
}

// encodedSize returns the length of the header and data of a in the
// appended section: bytes, or base64 characters.
func (e *vtuEncoder) encodedSize(a *vtuArray) int {
	h, d := e.hsize*(3+numBlocks(a.n*a.width)), e.dataSize(a)
	if e.blocks == nil {
		h = e.hsize
	}
	switch {
	case e.o.Encoding == VTUAppendedRaw:
		return h + d
	case e.blocks == nil:
		return base64.StdEncoding.EncodedLen(h + d)
	}
	return base64.StdEncoding.EncodedLen(h) + base64.StdEncoding.EncodedLen(d)
}

// binary writes the header and data of a, raw or in base64.
func (e *vtuEncoder) binary(a *vtuArray, b64 bool) {
	t := e.t
	var out interface {
		Write([]byte) (int, error)
	} = textSink{t}
	var enc interface {
		Write([]byte) (int, error)
		Close() error
	}
	begin := func() {
		if b64 {
			enc = base64.NewEncoder(base64.StdEncoding, textSink{t})
			out = enc
		}
	}
	end := func() {
		if b64 {
			if err := enc.Close(); err != nil && t.err == nil {
				t.err = err
			}
		}
	}
	begin()
	out.Write(e.header(a))
	if e.blocks != nil {
		end() // the header of compressed data is encoded on its own
		begin()
		for _, z := range e.blocks[a.block0 : a.block0+numBlocks(a.n*a.width)] {
			out.Write(z)
		}
		end()
		return
	}
	raw := make([]byte, 0, vtuBlockSize)
	per := vtuBlockSize / a.width
	for lo := 0; lo < a.n && t.err == nil; lo += per {
		raw = encodeValues(a, raw[:0], lo, min(lo+per, a.n))
		out.Write(raw)
	}
	end()
}

// textSink is an io.Writer on a textWriter; it keeps the first error in
// the textWriter.
type textSink struct{ t *textWriter }

func (s textSink) Write(p []byte) (int, error) {
	s.t.bytes(p)
	if s.t.err != nil {
		return 0, s.t.err
	}
	return len(p), nil
}
