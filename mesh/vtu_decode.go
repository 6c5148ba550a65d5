package mesh

import (
	"bytes"
	"compress/zlib"
	"encoding/base64"
	"fmt"
	"io"
	"math"
	"strconv"
)

// The decoding of the binary and ASCII arrays of ReadVTU. The layout of
// binary data is described in vtu_encode.go. Each function returns a
// *FormatError whose Field is empty or an element suffix; decodeAll puts
// the name of the array in front.

// byteSource hands out the bytes of binary data in order.
type byteSource interface {
	// next returns the next n bytes, or an error if there are fewer; it
	// allocates nothing when there are fewer.
	next(n int) ([]byte, error)
}

var errTruncated = vtuErr("", ErrFormat, "data end early")

// rawSource is raw bytes.
type rawSource struct{ b []byte }

func (s *rawSource) next(n int) ([]byte, error) {
	if n < 0 || n > len(s.b) {
		return nil, vtuErr("", ErrFormat, "%d bytes wanted, %d left", n, len(s.b))
	}
	out := s.b[:n:n]
	s.b = s.b[n:]
	return out, nil
}

// b64Source decodes base64 text, skipping white space. Padding may end a
// quantum anywhere, so that a header encoded on its own and the data
// encoded after it read as one stream, as do header and data encoded
// together.
type b64Source struct {
	text []byte
	pos  int
	pend []byte // decoded bytes not yet handed out
}

func isSpace(c byte) bool { return c == ' ' || c == '\n' || c == '\r' || c == '\t' }

func (s *b64Source) next(n int) ([]byte, error) {
	if n < 0 || n > len(s.pend)+(len(s.text)-s.pos)/4*3 {
		return nil, vtuErr("", ErrFormat, "%d bytes wanted, at most %d left in base64", n, len(s.pend)+(len(s.text)-s.pos)/4*3)
	}
	out := make([]byte, 0, n+3)
	k := min(n, len(s.pend))
	out = append(out, s.pend[:k]...)
	s.pend = s.pend[k:]
	for len(out) < n {
		for s.pos < len(s.text) && isSpace(s.text[s.pos]) {
			s.pos++
		}
		want := (n - len(out) + 2) / 3 * 4 // characters still needed
		end := s.pos
		for end < len(s.text) && end-s.pos < want && !isSpace(s.text[end]) {
			end++
		}
		run := s.text[s.pos:end]
		full := len(run) / 4 * 4
		var q []byte
		switch {
		case full > 0:
			if eq := bytes.IndexByte(run[:full], '='); eq >= 0 {
				full = (eq/4 + 1) * 4 // up to the quantum that ends in padding
			}
			q = run[:full]
			s.pos += full
		default: // a quantum broken by white space, or the end
			var buf [4]byte
			j := 0
			for ; j < 4 && s.pos < len(s.text); s.pos++ {
				if !isSpace(s.text[s.pos]) {
					buf[j] = s.text[s.pos]
					j++
				}
			}
			if j < 4 {
				return nil, errTruncated
			}
			q = buf[:]
		}
		if err := s.decode(&out, q); err != nil {
			return nil, err
		}
	}
	if len(out) > n {
		s.pend = append(s.pend[:0:0], out[n:]...)
		out = out[:n]
	}
	return out, nil
}

// decode appends the bytes of the base64 quanta q to *out.
func (s *b64Source) decode(out *[]byte, q []byte) error {
	o := *out
	if cap(o)-len(o) < len(q)/4*3 {
		o = append(make([]byte, 0, len(o)+len(q)/4*3), o...)
	}
	k, err := base64.StdEncoding.Decode(o[len(o):len(o)+len(q)/4*3], q)
	if err != nil {
		return vtuErr("", ErrFormat, "bad base64: %v", err)
	}
	*out = o[:len(o)+k]
	return nil
}

// uint reads a header word.
func (p *vtuParser) uint(b []byte) uint64 {
	if p.hsize == 4 {
		return uint64(p.order.Uint32(b))
	}
	return p.order.Uint64(b)
}

// decodeBinary reads the header and data of a from src: n values exactly,
// or at most n if not exact.
func (p *vtuParser) decodeBinary(a *vtuInput, src byteSource, n int, exact bool) ([]float64, error) {
	width, _ := typeWidth(a.typ)
	want := uint64(n) * uint64(width)
	check := func(size uint64) error {
		if exact && size != want || !exact && (size > want || size%uint64(width) != 0) {
			return vtuErr("", ErrFormat, "%d bytes of data, want %d", size, want)
		}
		return nil
	}
	if !p.compressed {
		h, err := src.next(p.hsize)
		if err != nil {
			return nil, err
		}
		size := p.uint(h)
		if err := check(size); err != nil {
			return nil, err
		}
		data, err := src.next(int(size))
		if err != nil {
			return nil, err
		}
		return p.convert(a, data)
	}
	h, err := src.next(3 * p.hsize)
	if err != nil {
		return nil, err
	}
	nb, bs, last := p.uint(h), p.uint(h[p.hsize:]), p.uint(h[2*p.hsize:])
	var total uint64
	switch {
	case nb == 0:
	case bs == 0 || last > bs:
		return nil, vtuErr("", ErrFormat, "compression header: block size %d, last block %d", bs, last)
	case nb > want/bs+1:
		return nil, vtuErr("", ErrFormat, "compression header: %d blocks of %d bytes, want %d bytes", nb, bs, want)
	case last == 0:
		total = nb * bs
	default:
		total = (nb-1)*bs + last
	}
	if err := check(total); err != nil {
		return nil, err
	}
	cs, err := src.next(int(nb) * p.hsize)
	if err != nil {
		return nil, err
	}
	var out bytes.Buffer
	out.Grow(int(min(total, 1<<20)))
	var zr io.ReadCloser
	for b := range int(nb) {
		z, err := src.next(int(min(p.uint(cs[b*p.hsize:]), math.MaxInt32)))
		if err != nil {
			return nil, err
		}
		size := bs
		if b == int(nb)-1 && last != 0 {
			size = last
		}
		if zr == nil {
			zr, err = zlib.NewReader(bytes.NewReader(z))
		} else {
			err = zr.(zlib.Resetter).Reset(bytes.NewReader(z), nil)
		}
		if err == nil {
			var k int64
			k, err = io.CopyN(&out, zr, int64(size))
			if err == nil && k == int64(size) {
				var one [1]byte
				if k, _ := zr.Read(one[:]); k != 0 {
					return nil, vtuErr("", ErrFormat, "block %d holds more than %d bytes", b, size)
				}
			}
		}
		if err != nil {
			return nil, vtuErr("", ErrFormat, "block %d: zlib: %v", b, err)
		}
	}
	return p.convert(a, out.Bytes())
}

// limit53 bounds the 64-bit integers that convert exactly to float64.
const limit53 = 1 << 53

// convert turns the bytes of a's data into values.
func (p *vtuParser) convert(a *vtuInput, b []byte) ([]float64, error) {
	width, _ := typeWidth(a.typ)
	v := make([]float64, len(b)/width)
	o := p.order
	for i := range v {
		x := b[i*width:]
		switch a.typ {
		case "Int8":
			v[i] = float64(int8(x[0]))
		case "UInt8":
			v[i] = float64(x[0])
		case "Int16":
			v[i] = float64(int16(o.Uint16(x)))
		case "UInt16":
			v[i] = float64(o.Uint16(x))
		case "Int32":
			v[i] = float64(int32(o.Uint32(x)))
		case "UInt32":
			v[i] = float64(o.Uint32(x))
		case "Int64":
			k := int64(o.Uint64(x))
			if k > limit53 || k < -limit53 {
				return nil, vtuErr(elem("", i), ErrFormat, "%d is beyond the integers of float64", k)
			}
			v[i] = float64(k)
		case "UInt64":
			k := o.Uint64(x)
			if k > limit53 {
				return nil, vtuErr(elem("", i), ErrFormat, "%d is beyond the integers of float64", k)
			}
			v[i] = float64(k)
		case "Float32":
			v[i] = float64(math.Float32frombits(o.Uint32(x)))
		case "Float64":
			v[i] = math.Float64frombits(o.Uint64(x))
		}
		if math.IsNaN(v[i]) || math.IsInf(v[i], 0) {
			return nil, notFinite(i, v[i])
		}
	}
	return v, nil
}

func notFinite(i int, v float64) error {
	return &FormatError{Format: "vtu", Field: elem("", i), Err: fmt.Errorf("%w: %w: %v", ErrFormat, ErrNotFinite, v)}
}

// decodeASCII reads the values of a from its text: n exactly, or at most
// n if not exact.
func decodeASCII(a *vtuInput, n int, exact bool) ([]float64, error) {
	isFloat := a.typ == "Float32" || a.typ == "Float64"
	bits := 64
	if a.typ == "Float32" {
		bits = 32
	}
	unsigned := a.typ[0] == 'U'
	var v []float64
	text := a.text
	for i := 0; ; i++ {
		for len(text) > 0 && isSpace(text[0]) {
			text = text[1:]
		}
		if len(text) == 0 {
			break
		}
		j := 0
		for j < len(text) && !isSpace(text[j]) {
			j++
		}
		s := string(text[:j])
		text = text[j:]
		if i >= n {
			return nil, vtuErr("", ErrFormat, "more than %d values", n)
		}
		var x float64
		var err error
		switch {
		case isFloat:
			x, err = strconv.ParseFloat(s, bits)
		case unsigned:
			var k uint64
			k, err = strconv.ParseUint(s, 10, 64)
			if k > limit53 {
				err = strconv.ErrRange
			}
			x = float64(k)
		default:
			var k int64
			k, err = strconv.ParseInt(s, 10, 64)
			if k > limit53 || k < -limit53 {
				err = strconv.ErrRange
			}
			x = float64(k)
		}
		if err != nil {
			return nil, vtuErr(elem("", i), ErrFormat, "%q is not a number of type %s", s, a.typ)
		}
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, notFinite(i, x)
		}
		if !isFloat {
			if w, _ := typeWidth(a.typ); w < 8 && !fitsType(x, a.typ) {
				return nil, vtuErr(elem("", i), ErrFormat, "%s is out of the range of %s", s, a.typ)
			}
		}
		v = append(v, x)
	}
	if exact && len(v) != n {
		return nil, vtuErr("", ErrFormat, "%d values, want %d", len(v), n)
	}
	return v, nil
}

// fitsType reports whether the integer x is in the range of the integer
// type typ of at most 32 bits.
func fitsType(x float64, typ string) bool {
	lo, hi := 0.0, 0.0
	switch typ {
	case "Int8":
		lo, hi = math.MinInt8, math.MaxInt8
	case "UInt8":
		hi = math.MaxUint8
	case "Int16":
		lo, hi = math.MinInt16, math.MaxInt16
	case "UInt16":
		hi = math.MaxUint16
	case "Int32":
		lo, hi = math.MinInt32, math.MaxInt32
	case "UInt32":
		hi = math.MaxUint32
	}
	return lo <= x && x <= hi
}
