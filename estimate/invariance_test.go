package estimate

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// permuted returns m with its vertices renumbered by perm (old → new), its
// triangles reordered by order (new → old) and the vertices of each
// triangle rotated by a random amount (the orientation is kept).
func permuted(t *testing.T, m *mesh.Mesh, r *rand.Rand) (*mesh.Mesh, []int32, []int) {
	t.Helper()
	nv, nt := m.NumVertices(), m.NumTriangles()
	perm := make([]int32, nv)
	for i, p := range r.Perm(nv) {
		perm[i] = int32(p)
	}
	order := r.Perm(nt)
	x := make([]float64, 2*nv)
	for i := range nv {
		x[2*perm[i]], x[2*perm[i]+1] = m.X[2*i], m.X[2*i+1]
	}
	tri := make([]int32, 0, 3*nt)
	region := make([]int32, 0, nt)
	for _, k := range order {
		s := r.IntN(3)
		for i := range 3 {
			tri = append(tri, perm[m.Tri[3*k+(i+s)%3]])
		}
		region = append(region, m.Region[k])
	}
	ab, tag := m.BoundaryEdges()
	for i := range ab {
		ab[i] = perm[ab[i]]
	}
	pm, _, err := mesh.New(mesh.Arrays{X: x, Tri: tri, Region: region, Bnd: ab, BndTag: tag})
	if err != nil {
		t.Fatal(err)
	}
	return pm, perm, order
}

// transfer returns the function of the permuted space with the same nodal
// values as u.
func transfer(u *fem.Function, ps *fem.Space, perm []int32) *fem.Function {
	m, pm := u.Space.Mesh, ps.Mesh
	pu := fem.NewFunction(ps)
	nv := m.NumVertices()
	for i := range nv {
		pu.U[perm[i]] = u.U[i]
	}
	if u.Space.Degree == 2 {
		for e := range m.NumEdges() {
			a, b := perm[m.Edge[2*e]], perm[m.Edge[2*e+1]]
			// Find the permuted edge by its end vertices.
			for k := range pm.NumEdges() {
				if pm.Edge[2*k] == min(a, b) && pm.Edge[2*k+1] == max(a, b) {
					pu.U[nv+k] = u.U[nv+e]
					break
				}
			}
		}
	}
	return pu
}

// The indicators depend on the function and the geometry, not on how the
// mesh is numbered (common practice).
func TestPermutationInvariance(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(1, 1))
	ex, p := known.Kellogg()
	m, _ := mesh.Quadrants(3)
	pm, perm, order := permuted(t, m, r)
	for _, deg := range []int{1, 2} {
		u, _, _ := run(t, m, deg, ex, p)
		ps, _ := fem.NewSpace(pm, deg)
		pu := transfer(u, ps, perm)
		for _, tc := range estimators {
			a := estimateTotal(t, tc.est, u, p)
			b := estimateTotal(t, tc.est, pu, p)
			scale := a.Total() * a.Total()
			for newK, oldK := range order {
				if d := math.Abs(a.Eta2[oldK] - b.Eta2[newK]); d > 1e-12*scale {
					t.Fatalf("P%d %s: triangle %d: η² %g, permuted %g", deg, tc.name, oldK, a.Eta2[oldK], b.Eta2[newK])
				}
				if d := math.Abs(a.Osc2[oldK] - b.Osc2[newK]); d > 1e-12*max(scale, 1) {
					t.Fatalf("P%d %s: triangle %d: osc² %g, permuted %g", deg, tc.name, oldK, a.Osc2[oldK], b.Osc2[newK])
				}
			}
		}
	}
}

func TestEstimateErrors(t *testing.T) {
	t.Parallel()
	ex, p := sine()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	u, _, _ := run(t, m, 1, ex, p)
	nan := fem.NewFunction(u.Space)
	nan.U[3] = math.NaN()
	short := &fem.Function{Space: u.Space, U: u.U[:5]}
	badF := &fem.Problem{F: func(x, y float64) float64 { return math.Log(x - 0.5) }, Dirichlet: p.Dirichlet}
	badA := &fem.Problem{A: map[int32]fem.Tensor{0: fem.Scalar(-1)}, Dirichlet: p.Dirichlet}
	for _, tc := range estimators {
		for _, c := range []struct {
			name string
			u    *fem.Function
			p    *fem.Problem
			want error
		}{
			{"nil solution", nil, p, ErrArgument},
			{"nil problem", u, nil, ErrArgument},
			{"NaN solution", nan, p, ErrNotFinite},
			{"short solution", short, p, ErrArgument},
			{"NaN source", u, badF, ErrNotFinite},
			{"negative diffusion", u, badA, fem.ErrDiffusion},
		} {
			in, err := tc.est.Estimate(nil, c.u, c.p)
			if in != nil || !errors.Is(err, c.want) {
				t.Errorf("%s %s: got %v, %v; want %v", tc.name, c.name, in, err, c.want)
			}
		}
	}
	// A Method that is neither Averaging nor SPR.
	for _, meth := range []Method{-1, 2, 7} {
		in, err := Recovery{Method: meth}.Estimate(nil, u, p)
		if in != nil || !errors.Is(err, ErrArgument) {
			t.Errorf("Recovery{Method: %d}: got %v, %v; want ErrArgument", meth, in, err)
		}
	}
}

func TestAssess(t *testing.T) {
	t.Parallel()
	// Hand-computed case (arithmetic): η² = [4, 1, 3, 2], total 10; θ = 0.5
	// needs 5: the two largest (4 + 3) are the smallest such set.
	in := &Indicators{Eta2: []float64{4, 1, 3, 2}, Osc2: make([]float64, 4)}
	e2 := []float64{1, 5, 1, 3} // total 10; the best two hold 5 + 3
	a, err := Assess(in, e2, 0.5)
	if err != nil {
		t.Fatal(err)
	}
	if a.Marked != 2 || a.Found != 0.2 || a.Ideal != 0.8 || a.Effectivity != 1 {
		t.Errorf("Assess = %+v, want 2 marked, found 0.2, ideal 0.8, effectivity 1", a)
	}
	if a, _ := Assess(in, e2, 1); a.Marked != 4 || a.Found != 1 {
		t.Errorf("θ = 1: %+v, want all marked", a)
	}
	for _, c := range []struct {
		name  string
		in    *Indicators
		e2    []float64
		theta float64
		want  error
	}{
		{"length", in, e2[:3], 0.5, ErrLength},
		{"nil", nil, e2, 0.5, ErrLength},
		{"θ = 0", in, e2, 0, ErrArgument},
		{"θ > 1", in, e2, 1.5, ErrArgument},
		{"θ NaN", in, e2, math.NaN(), ErrArgument},
		{"NaN error", in, []float64{1, math.NaN(), 1, 1}, 0.5, ErrNotFinite},
		{"negative indicator", &Indicators{Eta2: []float64{1, -1, 1, 1}}, e2, 0.5, ErrNotFinite},
	} {
		if _, err := Assess(c.in, c.e2, c.theta); !errors.Is(err, c.want) {
			t.Errorf("%s: %v, want %v", c.name, err, c.want)
		}
	}
}

func TestFitRate(t *testing.T) {
	t.Parallel()
	// Exact power laws are fitted exactly (least squares on exact data).
	n := []float64{100, 400, 1600, 6400}
	v := make([]float64, len(n))
	for i, x := range n {
		v[i] = 3 * math.Pow(x, -0.5)
	}
	rate, c, err := FitRate(n, v)
	if err != nil || math.Abs(rate-0.5) > 1e-14 || math.Abs(c-3) > 1e-12 {
		t.Errorf("FitRate = %g, %g, %v; want 0.5, 3", rate, c, err)
	}
	for _, tc := range []struct {
		name string
		n, v []float64
		want error
	}{
		{"lengths", n, v[:2], ErrLength},
		{"one point", n[:1], v[:1], ErrTooFew},
		{"equal N", []float64{5, 5}, []float64{1, 2}, ErrTooFew},
		{"zero value", []float64{5, 6}, []float64{0, 2}, ErrArgument},
		{"NaN", []float64{5, math.NaN()}, []float64{1, 2}, ErrArgument},
		{"Inf", []float64{5, 6}, []float64{1, math.Inf(1)}, ErrArgument},
	} {
		if _, _, err := FitRate(tc.n, tc.v); !errors.Is(err, tc.want) {
			t.Errorf("%s: %v, want %v", tc.name, err, tc.want)
		}
	}
}
