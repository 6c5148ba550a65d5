package mesh_test

import (
	"errors"
	"math"
	"slices"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// A mesh with a curved interface, stripped of its curves (as VTU files
// and Relabel leave it), gets its curve back from WithInterfaceCurves by
// the pair of regions, on exactly the interface edges, and refining the
// two meshes with the same marks gives the same vertices, bit for bit.
func TestWithInterfaceCurves(t *testing.T) {
	t.Parallel()
	m, _, err := mesh.Triangulate(fibre(), mesh.Options{H: 0.5})
	if err != nil {
		t.Fatal(err)
	}
	back, err := m.WithCurves(nil)
	if err != nil || back.EdgeCurve != nil {
		t.Fatalf("WithCurves(nil): %v", err)
	}
	again, err := back.WithInterfaceCurves(map[[2]int32]mesh.Curve{{1, 0}: mesh.Circle{R: 1}})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(again.EdgeCurve, m.EdgeCurve) {
		t.Fatal("the curve is on other edges than Triangulate put it")
	}
	checkInterface(t, again, nil, "reattached")
	sameRefinements(t, m, again, 3, "from the reattached curve")
}

// sameRefinements refines a and b twice with the same marks (every
// every-th triangle) and checks that they get the same vertices, bit for
// bit; what names b in the message.
func sameRefinements(t *testing.T, a, b *mesh.Mesh, every int, what string) {
	t.Helper()
	for range 2 {
		marks := make([]bool, a.NumTriangles())
		for k := range marks {
			marks[k] = k%every == 0
		}
		fa, _, err := a.Refine(marks)
		if err != nil {
			t.Fatal(err)
		}
		fb, _, err := b.Refine(marks)
		if err != nil {
			t.Fatal(err)
		}
		for i := range fa.X {
			if math.Float64bits(fa.X[i]) != math.Float64bits(fb.X[i]) {
				t.Fatalf("vertex %d at %g, %s at %g", i/2, fa.X[i], what, fb.X[i])
			}
		}
		a, b = fa, fb
	}
}

// WithInterfaceCurves rejects bad input with a *CurveError.
func TestWithInterfaceCurvesErrors(t *testing.T) {
	t.Parallel()
	m, _, err := mesh.Triangulate(fibre(), mesh.Options{H: 0.5})
	if err != nil {
		t.Fatal(err)
	}
	if m, err = m.WithCurves(nil); err != nil {
		t.Fatal(err)
	}
	c := mesh.Circle{R: 1}
	for _, tc := range []struct {
		name string
		by   map[[2]int32]mesh.Curve
		want error
	}{
		{"nil curve", map[[2]int32]mesh.Curve{{0, 1}: nil}, mesh.ErrCurve},
		{"zero radius", map[[2]int32]mesh.Curve{{0, 1}: mesh.Circle{}}, mesh.ErrCurve},
		{"one region", map[[2]int32]mesh.Curve{{1, 1}: c}, mesh.ErrCurve},
		{"both orders", map[[2]int32]mesh.Curve{{0, 1}: c, {1, 0}: c}, mesh.ErrCurve},
		{"no such interface", map[[2]int32]mesh.Curve{{0, 1}: c, {1, 7}: c}, mesh.ErrCurve},
		{"off the curve", map[[2]int32]mesh.Curve{{0, 1}: mesh.Circle{R: 1.1}}, mesh.ErrOffCurve},
	} {
		_, err := m.WithInterfaceCurves(tc.by)
		var ce *mesh.CurveError
		t.Logf("%s: %v", tc.name, err)
		if !errors.Is(err, tc.want) || !errors.As(err, &ce) {
			t.Errorf("%s: err = %v, want a *CurveError wrapping %v", tc.name, err, tc.want)
		}
	}
	// Nothing to attach: the same mesh.
	same, err := m.WithInterfaceCurves(nil)
	if err != nil || same.EdgeCurve != nil {
		t.Errorf("empty map: %v, curves %v", err, same.EdgeCurve != nil)
	}
}
