package mesh

import (
	"math"
	"testing"
)

// legGrid is an n × n grid of the unit square written by hand, as a user
// would: each cell cut along its diagonal from the lower-left corner, with
// the vertices listed so that the refinement edge (Tri[3k+1]–Tri[3k+2])
// is a leg of the right triangle, not its hypotenuse.
func legGrid(n int) Arrays {
	var a Arrays
	id := func(i, j int) int32 { return int32(j*(n+1) + i) }
	for j := range n + 1 {
		for i := range n + 1 {
			a.X = append(a.X, float64(i)/float64(n), float64(j)/float64(n))
		}
	}
	for j := range n {
		for i := range n {
			a.Tri = append(a.Tri, id(i, j), id(i+1, j), id(i+1, j+1))
			a.Tri = append(a.Tri, id(i, j), id(i+1, j+1), id(i, j+1))
		}
	}
	return a
}

// refineAt bisects, steps times, the triangles whose closure holds (px, py).
func refineAt(t *testing.T, m *Mesh, px, py float64, steps int) *Mesh {
	t.Helper()
	for range steps {
		marked := make([]bool, m.NumTriangles())
		for k := range marked {
			a, b, c := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
			ax, ay, bx, by, cx, cy := m.X[2*a], m.X[2*a+1], m.X[2*b], m.X[2*b+1], m.X[2*c], m.X[2*c+1]
			marked[k] = orientXY(ax, ay, bx, by, px, py) >= 0 && orientXY(bx, by, cx, cy, px, py) >= 0 && orientXY(cx, cy, ax, ay, px, py) >= 0
		}
		f, _, err := m.Refine(marked)
		if err != nil {
			t.Fatal(err)
		}
		m = f
	}
	return m
}

// Issue 17's measurement: a grid labelled with the legs as refinement
// edges, refined 30 times at one point, loses angle quality; relabelled
// with the hypotenuses (Relabel), it keeps the right isosceles shape, so
// its smallest angle stays 45° (newest-vertex bisection of a right
// isosceles triangle through its hypotenuse gives two similar ones:
// common practice).
func TestRelabelKeepsAngles(t *testing.T) {
	t.Parallel()
	legs, _, err := New(legGrid(4))
	if err != nil {
		t.Fatal(err)
	}
	relabelled, unmatched, err := legs.Relabel()
	if err != nil {
		t.Fatal(err)
	}
	if unmatched != 0 {
		t.Errorf("grid: %d unmatched refinement edges, want 0 (every hypotenuse is shared by its cell)", unmatched)
	}
	for k := range relabelled.NumTriangles() {
		if l := relabelled.EdgeLength(int(relabelled.TriEdge[3*k])); math.Abs(l-math.Sqrt2/4) > 1e-15 {
			t.Fatalf("triangle %d: refinement edge of length %g, want the hypotenuse √2/4", k, l)
		}
	}
	// The relabelling keeps boundary tags and regions.
	for e := range relabelled.NumEdges() {
		if relabelled.EdgeTag[e] != legs.EdgeTag[e] {
			t.Fatalf("edge %d: tag %d, was %d", e, relabelled.EdgeTag[e], legs.EdgeTag[e])
		}
	}
	const steps = 30
	const px, py = 0.3, 0.4
	qLegs, err := refineAt(t, legs, px, py, steps).Quality()
	if err != nil {
		t.Fatal(err)
	}
	qHyp, err := refineAt(t, relabelled, px, py, steps).Quality()
	if err != nil {
		t.Fatal(err)
	}
	deg := 180 / math.Pi
	t.Logf("after %d local refinements at (%g, %g): smallest angle %.4g° with the legs, %.4g° with the hypotenuses", steps, px, py, qLegs.MinAngle*deg, qHyp.MinAngle*deg)
	if math.Abs(qHyp.MinAngle*deg-45) > 1e-9 {
		t.Errorf("hypotenuse labelling: smallest angle %.6g°, want 45° (closed form)", qHyp.MinAngle*deg)
	}
	// atan(1/3) = 18.43°: the value issue 17 measured with the legs.
	if want := math.Atan(1.0/3) * deg; math.Abs(qLegs.MinAngle*deg-want) > 1e-9 {
		t.Errorf("leg labelling: smallest angle %.6g°, want atan(1/3) = %.6g° (issue 17's 18.4°)", qLegs.MinAngle*deg, want)
	}
}
