package amg_test

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
	"github.com/posteriori-fem/posteriori/mesh"
)

// The test matrices are assembled by package fem (fem does not import amg,
// so there is no cycle): P1 and P2 stiffness matrices with Dirichlet rows
// and columns replaced by identity rows, on uniform and graded meshes.

// domain names a model problem of internal/problems on its mesh.
type domain int

const (
	lshape  domain = iota // Laplace on the L-shape (known.LShape)
	kellogg               // Kellogg's checkerboard, contrast 161.45 (known.Kellogg)
	square                // Laplace on the unit square, u = 0 on the boundary, f = 1
)

func (d domain) String() string {
	return [...]string{"L-shape", "Kellogg", "square"}[d]
}

// baseMesh returns the uniform mesh of the domain with k cells per unit
// length.
func baseMesh(tb testing.TB, d domain, k int) *mesh.Mesh {
	tb.Helper()
	var m *mesh.Mesh
	var err error
	switch d {
	case lshape:
		m, err = mesh.LShape(k)
	case kellogg:
		m, err = mesh.Quadrants(k)
	default:
		m, err = mesh.Rectangle(0, 0, 1, 1, k, k)
	}
	if err != nil {
		tb.Fatal(err)
	}
	return m
}

// gradedMesh refines mesh m by newest-vertex bisection towards the origin
// until every triangle T satisfies diam T ≤ h0 · max(r_T, rmin)^γ, r_T the
// distance of its centroid to the origin: the kind of mesh an adaptive
// loop builds for a corner singularity, with element sizes from h0 down to
// about h0·rmin^γ.
func gradedMesh(tb testing.TB, m *mesh.Mesh, h0, gamma, rmin float64) *mesh.Mesh {
	tb.Helper()
	for range 200 {
		nt := m.NumTriangles()
		marks := make([]bool, nt)
		any := false
		for k := range nt {
			a, b, c := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
			cx := (m.X[2*a] + m.X[2*b] + m.X[2*c]) / 3
			cy := (m.X[2*a+1] + m.X[2*b+1] + m.X[2*c+1]) / 3
			r := max(math.Hypot(cx, cy), rmin)
			if m.Diameter(k) > h0*math.Pow(r, gamma) {
				marks[k] = true
				any = true
			}
		}
		if !any {
			return m
		}
		var err error
		if m, _, err = m.Refine(marks); err != nil {
			tb.Fatal(err)
		}
	}
	tb.Fatal("gradedMesh: no convergence")
	return nil
}

// problem returns the fem.Problem of the domain.
func problem(d domain) *fem.Problem {
	switch d {
	case lshape:
		_, p := known.LShape()
		return p
	case kellogg:
		_, p := known.Kellogg()
		return p
	}
	return &fem.Problem{
		F: func(x, y float64) float64 { return 1 },
		Dirichlet: map[int32]fem.Func{
			mesh.SideBottom: nil, mesh.SideRight: nil, mesh.SideTop: nil, mesh.SideLeft: nil,
		},
	}
}

// assemble returns the system of the domain's problem with elements of the
// given degree on m.
func assemble(tb testing.TB, d domain, m *mesh.Mesh, deg int) *fem.System {
	tb.Helper()
	s, err := fem.NewSpace(m, deg)
	if err != nil {
		tb.Fatal(err)
	}
	sys, err := fem.Assemble(s, problem(d))
	if err != nil {
		tb.Fatal(err)
	}
	return sys
}

// uniformFor returns the number of cells per unit length of a uniform mesh
// of d with about n unknowns for degree deg.
func uniformFor(d domain, deg, n int) int {
	area := map[domain]float64{lshape: 3, kellogg: 4, square: 1}[d]
	// P1: n ≈ area k²; P2: n ≈ 4 area k².
	c := area
	if deg == 2 {
		c *= 4
	}
	return max(2, int(math.Round(math.Sqrt(float64(n)/c))))
}

// solve runs CG with the hierarchy h as preconditioner on A x = b from
// x = 0 to relative residual tol and returns x and the result.
func solve(tb testing.TB, a *sparse.CSR, b []float64, h *amg.Hierarchy, tol float64) ([]float64, sparse.CGResult) {
	tb.Helper()
	x := make([]float64, len(b))
	res, err := sparse.CG(a, b, x, h, sparse.CGSettings{Tol: tol, MaxIter: 500})
	if err != nil {
		tb.Fatalf("CG: %v (%d iterations, residual %.3g)", err, res.Iterations, res.Residual)
	}
	return x, res
}

// family is a sequence of test problems of growing size: a domain, uniform
// or graded meshes, and the element degree.
type family struct {
	d      domain
	graded bool
	deg    int
}

func (f family) String() string {
	g := "uniform"
	if f.graded {
		g = "graded"
	}
	return f.d.String() + "/" + g + "/P" + string(rune('0'+f.deg))
}

// familyMesh returns the mesh of member r of the family: about 1.4e4
// unknowns for r = 0, times 4^r. Uniform members are generated directly;
// graded ones are a mesh graded towards the origin (h ≈ h0 r^γ, γ = 0.5
// for the L-shape, 0.8 for Kellogg's problem) refined uniformly r times,
// which keeps the grading.
func familyMesh(tb testing.TB, f family, r int) *mesh.Mesh {
	tb.Helper()
	if !f.graded {
		k := map[domain]int{lshape: 68, kellogg: 60, square: 118}[f.d]
		if f.deg == 2 {
			k /= 2
		}
		return baseMesh(tb, f.d, k<<r)
	}
	h0, gamma := 0.034, 0.5
	if f.d == kellogg {
		h0, gamma = 0.06, 0.8
	}
	if f.deg == 2 {
		h0 *= 1.9
	}
	m := gradedMesh(tb, baseMesh(tb, f.d, 2), h0, gamma, 1e-6)
	for range r {
		var err error
		if m, _, err = m.RefineUniform(); err != nil {
			tb.Fatal(err)
		}
	}
	return m
}

// csr returns fem's assembled matrix as the sparse package's matrix: the
// two types have the same fields.
func csr(m *fem.Matrix) *sparse.CSR { return (*sparse.CSR)(m) }
