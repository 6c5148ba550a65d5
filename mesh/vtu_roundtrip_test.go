package mesh

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"testing"
)

// vtuEncodings lists every encoding WriteVTU can write.
func vtuEncodings() []VTUOptions {
	out := []VTUOptions{{Encoding: VTUASCII}}
	for _, enc := range []VTUEncoding{VTUAppendedRaw, VTUAppendedBase64, VTUInline} {
		for _, unc := range []bool{false, true} {
			for _, h32 := range []bool{false, true} {
				out = append(out, VTUOptions{Encoding: enc, Uncompressed: unc, Header32: h32})
			}
		}
	}
	return out
}

func (o VTUOptions) String() string {
	return fmt.Sprintf("enc%d/unc=%v/h32=%v", o.Encoding, o.Uncompressed, o.Header32)
}

// p2Data returns testData with a quadratic field "u" whose midpoint
// values are not the mean of the end values, and a linear field "w".
func p2Data(m *Mesh) *Data {
	d := testData(m)
	ev := make([]float64, m.NumEdges())
	for e := range ev {
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		x := 0.5 * (m.X[2*a] + m.X[2*b])
		y := 0.5 * (m.X[2*a+1] + m.X[2*b+1])
		ev[e] = math.Sin(x)*math.Exp(y*1e-3)/3 + 1e-3*float64(e%7)
	}
	d.Edge = map[string][]float64{"u": ev}
	return d
}

// edgeValues maps the edges of m by vertex pair to the values of f.
func edgeValues(m *Mesh, f []float64) map[[2]int32]float64 {
	out := map[[2]int32]float64{}
	for e := range m.NumEdges() {
		out[[2]int32{m.Edge[2*e], m.Edge[2*e+1]}] = f[e]
	}
	return out
}

// sameData reports whether b equals a, Edge fields compared by the vertex
// pairs of their edges on ma and mb, bit for bit.
func sameData(ma, mb *Mesh, a, b *Data) bool {
	if !sameFields(a.Point, b.Point) || !sameFields(a.Cell, b.Cell) || len(a.Edge) != len(b.Edge) {
		return false
	}
	for name, v := range a.Edge {
		w, ok := b.Edge[name]
		if !ok {
			return false
		}
		ea, eb := edgeValues(ma, v), edgeValues(mb, w)
		if len(ea) != len(eb) {
			return false
		}
		for k, x := range ea {
			if y, ok := eb[k]; !ok || math.Float64bits(x) != math.Float64bits(y) {
				return false
			}
		}
	}
	return true
}

// roundTripMeshes adds to testMeshes a refined mesh, whose edges are not
// in New's order.
func roundTripMeshes(t testing.TB) map[string]*Mesh {
	ms := testMeshes(t)
	m := ms["LShape"]
	mk := make([]bool, m.NumTriangles())
	for k := range mk {
		mk[k] = k%3 == 0
	}
	f, _, err := m.Refine(mk)
	if err != nil {
		t.Fatal(err)
	}
	ms["LShape refined"] = f
	return ms
}

// The mesh, regions, boundary tags and fields come back bit for bit in
// every encoding, linear and quadratic.
func TestVTURoundTrip(t *testing.T) {
	t.Parallel()
	for name, m := range roundTripMeshes(t) {
		for _, o := range vtuEncodings() {
			for _, d := range []*Data{nil, testData(m), p2Data(m)} {
				var buf bytes.Buffer
				if err := WriteVTU(&buf, m, d, &o); err != nil {
					t.Fatalf("%s %v: WriteVTU: %v", name, o, err)
				}
				m2, d2, err := ReadVTU(&buf)
				if err != nil {
					t.Fatalf("%s %v: ReadVTU: %v", name, o, err)
				}
				if !slices.Equal(m.X, m2.X) || !slices.Equal(m.Tri, m2.Tri) || !slices.Equal(m.Region, m2.Region) {
					t.Fatalf("%s %v: mesh differs", name, o)
				}
				ab, tag := m.BoundaryEdges()
				ab2, tag2 := m2.BoundaryEdges()
				if !sameTags(ab, tag, ab2, tag2) {
					t.Fatalf("%s %v: boundary tags differ", name, o)
				}
				if d == nil {
					d = &Data{}
				}
				if !sameData(m, m2, d, d2) {
					t.Fatalf("%s %v: fields differ", name, o)
				}
				if w := d2.Point["w_2.x-y"]; d.Point != nil && !math.Signbit(w[0]) {
					t.Errorf("%s %v: -0 lost its sign", name, o)
				}
			}
		}
	}
}

// sameTags reports whether two lists of tagged boundary edges hold the
// same edges with the same tags, in any order.
func sameTags(ab, tag, ab2, tag2 []int32) bool {
	if len(tag) != len(tag2) {
		return false
	}
	want := map[[2]int32]int32{}
	for b := range tag {
		want[[2]int32{ab[2*b], ab[2*b+1]}] = tag[b]
	}
	for b := range tag2 {
		if v, ok := want[[2]int32{ab2[2*b], ab2[2*b+1]}]; !ok || v != tag2[b] {
			return false
		}
	}
	return true
}
