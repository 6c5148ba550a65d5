package fem

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/mesh"
)

// jittered returns m with its interior vertices moved at random by up to a
// fifth of h, so that no two triangles are alike.
func jittered(t *testing.T, m *mesh.Mesh, h float64, seed uint64) *mesh.Mesh {
	t.Helper()
	r := rand.New(rand.NewPCG(seed, 1))
	x := append([]float64(nil), m.X...)
	onBoundary := m.BoundaryVertices()
	for v := range m.NumVertices() {
		if !onBoundary[v] {
			x[2*v] += 0.2 * h * (2*r.Float64() - 1)
			x[2*v+1] += 0.2 * h * (2*r.Float64() - 1)
		}
	}
	j := *m // same topology, moved vertices
	j.X = x
	return &j
}

// The P1 and P2 assemblies by edges (the diagonals of vertex rows from the
// row sums, the shared entries in slots per side) give the matrix and load
// of the element-by-element assembly, to rounding.
func TestAssemblyMatchesElements(t *testing.T) {
	q, err := mesh.Quadrants(12)
	if err != nil {
		t.Fatal(err)
	}
	sl, err := mesh.Slit(8)
	if err != nil {
		t.Fatal(err)
	}
	sq, err := mesh.Rectangle(0, 0, 1, 1, 16, 16)
	if err != nil {
		t.Fatal(err)
	}
	f := func(x, y float64) float64 { return math.Sin(3*x) + y*y }
	meshes := map[string]*mesh.Mesh{
		"quadrants": jittered(t, q, 1.0/12, 1),
		"slit":      sl,
		"square":    jittered(t, sq, 1.0/16, 2),
	}
	problems := map[string]*Problem{
		"laplace": {},
		"regions": {A: map[int32]Tensor{1: Scalar(161), 2: {XX: 2, XY: 0.5, YY: 1}, 3: Scalar(1e-3), 4: Scalar(7)}, C: 2.5, F: f},
		"afunc": {AFunc: func(x, y float64, _ int32) Tensor {
			return Tensor{XX: 1 + x*x, XY: 0.1 * y, YY: 2 + math.Cos(y)}
		}, F: f},
		"reaction": {C: 1e3},
	}
	for key, m := range meshes {
		for pn, p := range problems {
			if p.A != nil && key != "quadrants" {
				continue
			}
			for deg := 1; deg <= 2; deg++ {
				mn := fmt.Sprintf("%s/P%d", key, deg)
				s, _ := NewSpace(m, deg)
				r, err := elementRules(deg, p)
				if err != nil {
					t.Fatal(err)
				}
				ref := pattern(s, nil)
				refB := make([]float64, s.NumDOF())
				if err := assembleElements(s, p, r, ref, refB); err != nil {
					t.Fatal(err)
				}
				var a *Matrix
				var b []float64
				if deg == 1 {
					a, b, err = assembleP1(s, p, r, nil)
				} else {
					a, b = pattern(s, nil), make([]float64, s.NumDOF())
					err = assembleP2(s, p, r, a, b, nil)
				}
				if err != nil {
					t.Fatal(err)
				}
				if len(a.Col) != len(ref.Col) {
					t.Fatalf("%s/%s: %d entries, want %d", mn, pn, len(a.Col), len(ref.Col))
				}
				bmax := 0.0
				for _, v := range refB {
					bmax = max(bmax, math.Abs(v))
				}
				for i := range a.Rows {
					rmax := 0.0
					for q := ref.RowPtr[i]; q < ref.RowPtr[i+1]; q++ {
						rmax = max(rmax, math.Abs(ref.Val[q]))
					}
					for q := ref.RowPtr[i]; q < ref.RowPtr[i+1]; q++ {
						if a.RowPtr[i] != ref.RowPtr[i] || a.Col[q] != ref.Col[q] {
							t.Fatalf("%s/%s: row %d: pattern differs", mn, pn, i)
						}
						if d := math.Abs(a.Val[q] - ref.Val[q]); d > arithTol*rmax {
							t.Fatalf("%s/%s: A[%d,%d] = %.17g, elementwise %.17g", mn, pn, i, a.Col[q], a.Val[q], ref.Val[q])
						}
					}
					if d := math.Abs(b[i] - refB[i]); d > arithTol*bmax {
						t.Fatalf("%s/%s: b[%d] = %.17g, elementwise %.17g", mn, pn, i, b[i], refB[i])
					}
				}
			}
		}
	}
}

// The P1 and P2 passes split over goroutines (the P1 pattern above
// 2·2^15 vertices) give bit-identical systems whatever GOMAXPROCS is.
func TestP1AssembleDeterministicLarge(t *testing.T) {
	if testing.Short() {
		t.Skip("large mesh")
	}
	m, err := mesh.Quadrants(150) // 90,601 vertices, 180,000 triangles
	if err != nil {
		t.Fatal(err)
	}
	p := &Problem{A: map[int32]Tensor{1: Scalar(161), 2: Scalar(1), 3: Scalar(161), 4: Scalar(1)}, C: 0.5,
		F:         func(x, y float64) float64 { return math.Exp(x - y) },
		Dirichlet: map[int32]Func{mesh.SideBottom: func(x, y float64) float64 { return x }}}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for deg := 1; deg <= 2; deg++ {
		s, _ := NewSpace(m, deg)
		assembleSame(t, s, p)
	}
}

// block is the number of triangles whose element matrices are computed in
// parallel before being added, in triangle order, to the global matrix.
const block = 16384

// assembleElements is the reference of the tests: it adds the element
// matrices and loads of every triangle to a and b, in triangle order, the
// positions of the entries found by binary search in the rows.
func assembleElements(s *Space, p *Problem, rules rules, a *Matrix, b []float64) error {
	nt, ld := s.Mesh.NumTriangles(), s.LocalDOFs()
	ke := make([]float64, block*ld*ld)
	fe := make([]float64, block*ld)
	pos := make([]int32, block*ld*ld) // of entry (i, j) of each element matrix in a.Val
	dofs := make([]int32, block*ld)
	for k0 := 0; k0 < nt; k0 += block {
		k1 := min(k0+block, nt)
		err := parallel.For(k1-k0, 512, func(lo, hi int) error {
			w := newElementWork(ld)
			for off := lo; off < hi; off++ {
				k := k0 + off
				if err := element(s, p, rules, w, k, ke[off*ld*ld:(off+1)*ld*ld], fe[off*ld:(off+1)*ld]); err != nil {
					return err
				}
				d := s.ElementDOFs(dofs[off*ld:off*ld:(off+1)*ld], k)
				for i, di := range d {
					row := a.Col[a.RowPtr[di]:a.RowPtr[di+1]]
					for j, dj := range d {
						pos[(off*ld+i)*ld+j] = a.RowPtr[di] + int32(search(row, dj))
					}
				}
			}
			return nil
		})
		if err != nil {
			return err
		}
		// Each goroutine adds the entries of the rows it owns, in triangle
		// order, so every sum has the order of the serial loop.
		_ = parallel.For(a.Rows, 1<<14, func(lo, hi int) error {
			l, h := int32(lo), int32(hi)
			for off := range k1 - k0 {
				for i, di := range dofs[off*ld : (off+1)*ld] {
					if di < l || di >= h {
						continue
					}
					b[di] += fe[off*ld+i]
					r := (off*ld + i) * ld
					for j, q := range pos[r : r+ld] {
						a.Val[q] += ke[r+j]
					}
				}
			}
			return nil
		})
	}
	return nil
}
