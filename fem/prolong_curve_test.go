package fem

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// curvedFan is the unit disc as 6 triangles around the centre whose
// boundary edges follow the unit circle.
func curvedFan(t *testing.T) *mesh.Mesh {
	t.Helper()
	x := []float64{0, 0}
	var tri []int32
	for i := range 6 {
		a := math.Pi / 3 * float64(i)
		x = append(x, math.Cos(a), math.Sin(a))
		tri = append(tri, 0, int32(1+i), int32(1+(i+1)%6))
	}
	m, _, err := mesh.New(mesh.Arrays{X: x, Tri: tri})
	if err != nil {
		t.Fatal(err)
	}
	if m, err = m.WithCurves(map[int32]mesh.Curve{0: mesh.Circle{R: 1}}); err != nil {
		t.Fatal(err)
	}
	return m
}

// On a curved mesh the new boundary vertices lie outside their parent
// triangles, and Prolong evaluates the parent's polynomial there: a
// polynomial of the space's degree is carried exactly, at the old
// vertices and at the moved ones (closed form: the polynomial itself).
func TestProlongCurvedPolynomial(t *testing.T) {
	t.Parallel()
	const tol = 1e-13 // rounding on unit-size data
	r := rand.New(rand.NewPCG(1, 1))
	polys := map[int]Func{
		1: func(x, y float64) float64 { return 1 + 2*x - 3*y },
		2: func(x, y float64) float64 { return 1 + x - 2*y + 3*x*x - x*y + y*y },
	}
	for deg, f := range polys {
		m := curvedFan(t)
		s, _ := NewSpace(m, deg)
		u, err := Interpolate(s, f)
		if err != nil {
			t.Fatal(err)
		}
		moved := 0
		for step := range 6 {
			var fine *mesh.Mesh
			var p *mesh.Parents
			if step%2 == 0 {
				fine, p, err = m.RefineUniform()
			} else {
				marked := make([]bool, m.NumTriangles())
				for k := range marked {
					marked[k] = r.Float64() < 0.3
				}
				fine, p, err = m.Refine(marked)
			}
			if err != nil {
				t.Fatal(err)
			}
			fs, _ := NewSpace(fine, deg)
			v, err := u.Prolong(fs, p)
			if err != nil {
				t.Fatal(err)
			}
			for i := range p.OldVertices {
				if v.U[i] != u.U[i] {
					t.Fatalf("degree %d step %d: old vertex %d: %g, want %g unchanged", deg, step, i, v.U[i], u.U[i])
				}
			}
			for i := range v.U {
				x, y := fs.DOFPoint(i)
				if want := f(x, y); math.Abs(v.U[i]-want) > tol {
					t.Fatalf("degree %d step %d: DOF %d at (%g, %g): %.16g, want %.16g", deg, step, i, x, y, v.U[i], want)
				}
			}
			for i, w := range p.Vertex[p.OldVertices:] {
				e := w - int32(p.OldVertices) // the old edge that new vertex OldVertices+i bisects
				a, b := m.Edge[2*e], m.Edge[2*e+1]
				x, y := fine.Vertex(p.OldVertices + i)
				ax, ay := m.Vertex(int(a))
				bx, by := m.Vertex(int(b))
				if math.Hypot(x-(ax+bx)/2, y-(ay+by)/2) > 1e-3 {
					moved++
				}
			}
			m, u = fine, v
		}
		if moved == 0 {
			t.Errorf("degree %d: no vertex moved onto the circle; the test checks nothing of curves", deg)
		}
	}
}

// The documented rule for a general function: the value at a moved vertex
// is the parent's linear polynomial there, Σ λ_i u_i with the barycentric
// coordinates λ of the moved point in the parent (negative for the vertex
// opposite the curved edge: an extrapolation), computed here by Cramer's
// rule (closed form), not by the chord midpoint's average ½(u_a + u_b).
func TestProlongCurvedRule(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(2, 2))
	m := curvedFan(t)
	s, _ := NewSpace(m, 1)
	u := NewFunction(s)
	for i := range u.U {
		u.U[i] = r.NormFloat64()
	}
	fine, p, err := m.RefineUniform()
	if err != nil {
		t.Fatal(err)
	}
	fs, _ := NewSpace(fine, 1)
	v, err := u.Prolong(fs, p)
	if err != nil {
		t.Fatal(err)
	}
	checked := 0
	for i, w := range p.Vertex[p.OldVertices:] {
		e := w - int32(p.OldVertices) // the old edge that new vertex OldVertices+i bisects
		if !m.IsBoundary(int(e)) {
			continue
		}
		k := int(m.EdgeTri[2*e])
		t0, t1, t2 := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
		x0, y0 := m.Vertex(int(t0))
		x1, y1 := m.Vertex(int(t1))
		x2, y2 := m.Vertex(int(t2))
		x, y := fine.Vertex(p.OldVertices + i)
		det := (x1-x0)*(y2-y0) - (x2-x0)*(y1-y0)
		l1 := ((x-x0)*(y2-y0) - (x2-x0)*(y-y0)) / det
		l2 := ((x1-x0)*(y-y0) - (x-x0)*(y1-y0)) / det
		l0 := 1 - l1 - l2
		if l0 >= 0 { // t0 is the centre, opposite the boundary edge
			t.Errorf("edge %d: the moved vertex has λ = %g ≥ 0 for the opposite vertex: not outside the parent", e, l0)
		}
		want := l0*u.U[t0] + l1*u.U[t1] + l2*u.U[t2]
		if math.Abs(v.U[p.OldVertices+i]-want) > 1e-13 {
			t.Errorf("edge %d: value %.16g, want the parent's polynomial %.16g", e, v.U[p.OldVertices+i], want)
		}
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		if chord := 0.5 * (u.U[a] + u.U[b]); math.Abs(want-chord) < 1e-6 {
			t.Errorf("edge %d: the rule and the chord average agree (%g); the check cannot tell them apart", e, chord)
		}
		checked++
	}
	if checked != 6 { // the fan's six boundary edges
		t.Errorf("checked %d boundary edges, want 6", checked)
	}
}
