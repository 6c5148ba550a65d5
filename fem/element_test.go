package fem

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// elementMatrix returns the element matrix of triangle 0 of m for p.
func elementMatrix(t *testing.T, m *mesh.Mesh, degree int, p *Problem) []float64 {
	t.Helper()
	s, err := NewSpace(m, degree)
	if err != nil {
		t.Fatal(err)
	}
	r, err := elementRules(degree, p)
	if err != nil {
		t.Fatal(err)
	}
	ld := s.LocalDOFs()
	ke, fe := make([]float64, ld*ld), make([]float64, ld)
	if err := element(s, p, r, newElementWork(ld), 0, ke, fe); err != nil {
		t.Fatal(err)
	}
	return ke
}

func oneTriangle(t *testing.T, x []float64) *mesh.Mesh {
	t.Helper()
	m, _, err := mesh.New(mesh.Arrays{X: x, Tri: []int32{0, 1, 2}})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

const arithTol = 1e-13 // arithmetic checks: rounding of a few operations

func TestP1StiffnessReference(t *testing.T) {
	t.Parallel()
	m := oneTriangle(t, []float64{0, 0, 1, 0, 0, 1})
	got := elementMatrix(t, m, 1, &Problem{})
	// Closed form on the reference triangle (common practice, no source).
	want := []float64{1, -0.5, -0.5, -0.5, 0.5, 0, -0.5, 0, 0.5}
	for i := range want {
		if math.Abs(got[i]-want[i]) > arithTol {
			t.Fatalf("K = %v, want %v", got, want)
		}
	}
}

func TestP2StiffnessReference(t *testing.T) {
	t.Parallel()
	m := oneTriangle(t, []float64{0, 0, 1, 0, 0, 1})
	got := elementMatrix(t, m, 2, &Problem{})
	// Closed form on the reference triangle, derived by hand from
	// ∫ λ0^a λ1^b λ2^c = 2|T| a! b! c! / (a+b+c+2)! (classical formula), in
	// the order v0, v1, v2, m01, m12, m20, all times 1/6.
	ref := [6][6]float64{
		{6, 1, 1, -4, 0, -4},
		{1, 3, 0, -4, 0, 0},
		{1, 0, 3, 0, 0, -4},
		{-4, -4, 0, 16, -8, 0},
		{0, 0, 0, -8, 16, -8},
		{-4, 0, -4, 0, -8, 16},
	}
	// Our local order: v0, v1, v2, then the midpoints opposite v0 (m12),
	// v1 (m20) and v2 (m01).
	perm := []int{0, 1, 2, 4, 5, 3}
	for i := range 6 {
		for j := range 6 {
			want := ref[perm[i]][perm[j]] / 6
			if g := got[6*i+j]; math.Abs(g-want) > arithTol {
				t.Fatalf("K[%d][%d] = %g, want %g", i, j, g, want)
			}
		}
	}
}

func TestP2MassClosedForm(t *testing.T) {
	t.Parallel()
	// Any triangle: the mass matrix is |T|/180 times a fixed matrix
	// (hand-derived from the same classical formula).
	m := oneTriangle(t, []float64{0.3, -0.2, 2.1, 0.4, 0.9, 1.7})
	area := m.Area(0)
	k0 := elementMatrix(t, m, 2, &Problem{})
	k1 := elementMatrix(t, m, 2, &Problem{C: 1})
	for i := range 6 {
		for j := range 6 {
			var want float64
			switch {
			case i < 3 && j < 3 && i == j:
				want = 6
			case i < 3 && j < 3:
				want = -1
			case i >= 3 && j >= 3 && i == j:
				want = 32
			case i >= 3 && j >= 3:
				want = 16
			case i < 3 && j == i+3, j < 3 && i == j+3: // vertex and the opposite midpoint
				want = -4
			}
			want *= area / 180
			if g := k1[6*i+j] - k0[6*i+j]; math.Abs(g-want) > arithTol*area {
				t.Fatalf("M[%d][%d] = %g, want %g", i, j, g, want)
			}
		}
	}
}

// Stiffness rows sum to zero (constants are in the kernel), and the P1
// stiffness of any triangle is area · ∇λ_i·∇λ_j (common practice).
func TestStiffnessRowsSumToZero(t *testing.T) {
	t.Parallel()
	m := oneTriangle(t, []float64{0.3, -0.2, 2.1, 0.4, 0.9, 1.7})
	for _, deg := range []int{1, 2} {
		p := &Problem{A: map[int32]Tensor{0: {XX: 2, XY: 0.5, YY: 1}}}
		k := elementMatrix(t, m, deg, p)
		ld := 3 * deg
		for i := range ld {
			sum := 0.0
			for j := range ld {
				sum += k[ld*i+j]
				if math.Abs(k[ld*i+j]-k[ld*j+i]) > arithTol {
					t.Fatalf("degree %d: K not symmetric at %d,%d", deg, i, j)
				}
			}
			if math.Abs(sum) > arithTol {
				t.Fatalf("degree %d: row %d sums to %g", deg, i, sum)
			}
		}
	}
}

// The closed-form P2 stiffness equals the quadrature of the gradients
// (exact for constant tensors) on scalene triangles with anisotropic
// tensors.
func TestP2StiffnessClosedForm(t *testing.T) {
	t.Parallel()
	for _, x := range [][]float64{{0, 0, 1, 0, 0, 1}, {0.1, -0.2, 2.3, 0.4, 0.7, 1.9}, {0, 0, 1, 0, 0.999, 0.01}} {
		m := oneTriangle(t, x)
		for _, ten := range []Tensor{Scalar(1), {XX: 3, XY: 0.7, YY: 0.5}, {XX: 1e3, XY: -2, YY: 1e-2}} {
			closed := elementMatrix(t, m, 2, &Problem{A: map[int32]Tensor{0: ten}})
			quad := elementMatrix(t, m, 2, &Problem{AFunc: func(float64, float64, int32) Tensor { return ten }})
			scale := 0.0
			for _, v := range quad {
				scale = max(scale, math.Abs(v))
			}
			for i := range closed {
				if math.Abs(closed[i]-quad[i]) > arithTol*scale {
					t.Fatalf("%v %+v: K[%d] = %.17g closed form, %.17g by quadrature", x, ten, i, closed[i], quad[i])
				}
			}
		}
	}
}
