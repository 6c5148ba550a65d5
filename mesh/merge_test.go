package mesh

import (
	"errors"
	"math"
	"testing"
)

// Two n × n Rectangle meshes of [0, 1]² and [1, 2] × [0, 1], joined
// without merging, share n + 1 vertex positions on x = 1. Merging gives
// 2(n+1)² − (n+1) vertices, drops the 2n seam edges listed once by each
// mesh, and New then accepts the union, with area 2 and Euler
// characteristic 1 (common practice).
func TestMergeCoincident(t *testing.T) {
	t.Parallel()
	const n = 3
	left, _ := Rectangle(0, 0, 1, 1, n, n)
	right, _ := Rectangle(1, 0, 2, 1, n, n)
	var a Arrays
	for _, m := range []*Mesh{left, right} {
		off := int32(len(a.X) / 2)
		a.X = append(a.X, m.X...)
		for _, v := range m.Tri {
			a.Tri = append(a.Tri, v+off)
		}
		bnd, tag := m.BoundaryEdges()
		for _, v := range bnd {
			a.Bnd = append(a.Bnd, v+off)
		}
		a.BndTag = append(a.BndTag, tag...)
	}
	if _, _, err := New(a); !errors.Is(err, ErrCoincident) {
		t.Fatalf("New before merging: %v, want ErrCoincident", err)
	}
	merged, rep, err := MergeCoincident(a, 0)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := len(merged.X)/2, 2*(n+1)*(n+1)-(n+1); got != want {
		t.Errorf("%d vertices, want %d", got, want)
	}
	if len(rep.Pairs) != 2*(n+1) || len(rep.Dropped) != 2*n {
		t.Errorf("%d merged, %d dropped; want %d, %d", len(rep.Pairs)/2, len(rep.Dropped), n+1, 2*n)
	}
	for p := 0; p < len(rep.Pairs); p += 2 {
		v, w := rep.Pairs[p], rep.Pairs[p+1]
		if a.X[2*v] != a.X[2*w] || a.X[2*v+1] != a.X[2*w+1] || rep.Vertex[v] != rep.Vertex[w] {
			t.Errorf("pair %d, %d was not coincident or not merged", v, w)
		}
	}
	m, _, err := New(merged)
	if err != nil {
		t.Fatal(err)
	}
	area := 0.0
	for k := range m.NumTriangles() {
		area += m.Area(k)
	}
	if math.Abs(area-2) > 1e-14 || m.NumVertices()-m.NumEdges()+m.NumTriangles() != 1 {
		t.Errorf("area %g, V − E + T = %d", area, m.NumVertices()-m.NumEdges()+m.NumTriangles())
	}
	// A tolerance merges near copies too.
	a.X[2*(len(a.X)/2-1)] += 1e-9
	if _, rep2, err := MergeCoincident(a, 1e-6); err != nil || len(rep2.Pairs) != len(rep.Pairs) {
		t.Errorf("tol 1e-6: %v, %d merged", err, len(rep2.Pairs)/2)
	}
	for _, tol := range []float64{-1, math.NaN(), math.Inf(1)} {
		if _, _, err := MergeCoincident(a, tol); !errors.Is(err, ErrArgument) {
			t.Errorf("tol %v: %v", tol, err)
		}
	}
	a.Tri[4] = 999
	var ve *ValidationError
	if _, _, err := MergeCoincident(a, 0); !errors.Is(err, ErrIndex) || !errors.As(err, &ve) || ve.Triangle != 1 {
		t.Errorf("bad index: %v", err)
	}
}
