package estimate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// fastCase is a P1 function and a problem with piecewise-constant diffusion,
// the input of the P1 fast paths.
type fastCase struct {
	name string
	u    *fem.Function
	p    *fem.Problem
}

// jiggled returns m with its interior vertices moved at random by up to a
// quarter of h, so that no two triangles are alike.
func jiggled(t *testing.T, m *mesh.Mesh, h float64, r *rand.Rand) *mesh.Mesh {
	t.Helper()
	x := append([]float64(nil), m.X...)
	onBoundary := m.BoundaryVertices()
	for v := range m.NumVertices() {
		if !onBoundary[v] {
			x[2*v] += 0.25 * h * (2*r.Float64() - 1)
			x[2*v+1] += 0.25 * h * (2*r.Float64() - 1)
		}
	}
	ab, tag := m.BoundaryEdges()
	jm, _, err := mesh.New(mesh.Arrays{X: x, Tri: m.Tri, Region: m.Region, Bnd: ab, BndTag: tag})
	if err != nil {
		t.Fatal(err)
	}
	return jm
}

// refinedAtRandom refines a random third of the triangles of m, steps
// times, which gives the numbering of an adaptive loop (children appended).
func refinedAtRandom(t *testing.T, m *mesh.Mesh, steps int, r *rand.Rand) *mesh.Mesh {
	t.Helper()
	for range steps {
		marks := make([]bool, m.NumTriangles())
		for k := range marks {
			marks[k] = r.IntN(3) == 0
		}
		var err error
		if m, _, err = m.Refine(marks); err != nil {
			t.Fatal(err)
		}
	}
	return m
}

// fastCases returns the test cases of the fast paths: uniform, adaptively
// numbered, jiggled and permuted meshes; the Kellogg regions (contrast
// 161) and anisotropic tensors with contrast; Dirichlet, Neumann (with data
// and homogeneous), Robin and untagged edges; a source per region; c > 0 with and without f; regions
// of equal a but different tags; region tags too far apart for a table.
func fastCases(t *testing.T) []fastCase {
	t.Helper()
	r := rand.New(rand.NewPCG(6, 1))
	sq, _ := mesh.Rectangle(0, 0, 1, 1, 9, 7)
	quads, _ := mesh.Quadrants(6)
	lshape, _ := mesh.LShape(3)
	adaptive := refinedAtRandom(t, lshape, 4, r)
	kquads := refinedAtRandom(t, quads, 3, r)
	jig := jiggled(t, sq, 1.0/9, r)
	perm, _, _ := permuted(t, kquads, r)
	_, kellogg := known.Kellogg()
	_, lp := known.LShape()
	f := func(x, y float64) float64 { return math.Exp(x-y) + 3*x*y }
	g := func(x, y float64) float64 { return math.Cos(4*x) - y }
	aniso := map[int32]fem.Tensor{
		1: {XX: 3, XY: 1, YY: 2}, 2: {XX: 1e-2, XY: 0, YY: 1}, 3: {XX: 200, XY: -50, YY: 40}, 4: fem.Scalar(0.5),
	}
	// Regions 0 and 70000 with the same a: two sides per interface vertex,
	// and a region range too wide for fem.RegionTable's table (1<<16).
	split := func(m *mesh.Mesh) *mesh.Mesh {
		region := make([]int32, m.NumTriangles())
		for k := range region {
			if x, _ := m.Vertex(int(m.Tri[3*k])); x > 0.5 {
				region[k] = 70000
			}
		}
		ab, tag := m.BoundaryEdges()
		sm, _, err := mesh.New(mesh.Arrays{X: m.X, Tri: m.Tri, Region: region, Bnd: ab, BndTag: tag})
		if err != nil {
			t.Fatal(err)
		}
		return sm
	}
	wide := split(jig)
	return []fastCase{
		{"square, f, Dirichlet", noisy(t, sq, 1, r), &fem.Problem{F: f, Dirichlet: map[int32]fem.Func{
			mesh.SideBottom: nil, mesh.SideRight: nil, mesh.SideTop: nil, mesh.SideLeft: nil}}},
		{"jiggled, c > 0, f, Neumann", noisy(t, jig, 1, r), &fem.Problem{C: 2.5, F: f,
			Dirichlet: map[int32]fem.Func{mesh.SideLeft: nil},
			Neumann:   map[int32]fem.Func{mesh.SideBottom: g, mesh.SideTop: nil}}},
		{"jiggled, c > 0, no f, Neumann", noisy(t, jig, 1, r), &fem.Problem{C: 0.7,
			A:       map[int32]fem.Tensor{0: {XX: 2, XY: 0.5, YY: 1}},
			Neumann: map[int32]fem.Func{mesh.SideRight: g}}},
		{"adaptive L-shape", noisy(t, adaptive, 1, r), lp},
		{"adaptive L-shape, f", noisy(t, adaptive, 1, r), &fem.Problem{F: f, Dirichlet: lp.Dirichlet}},
		{"Kellogg", noisy(t, kquads, 1, r), kellogg},
		{"Kellogg permuted, f, Neumann", noisy(t, perm, 1, r), &fem.Problem{A: kellogg.A, F: f,
			Dirichlet: map[int32]fem.Func{mesh.SideLeft: nil, mesh.SideTop: nil},
			Neumann:   map[int32]fem.Func{mesh.SideBottom: g}}},
		{"anisotropic contrast, c > 0", noisy(t, kquads, 1, r), &fem.Problem{A: aniso, C: 1,
			Neumann: map[int32]fem.Func{mesh.SideRight: g, mesh.SideTop: g}}},
		{"two tags, one a, wide range", noisy(t, wide, 1, r), &fem.Problem{
			A:         map[int32]fem.Tensor{0: fem.Scalar(1), 70000: fem.Scalar(1)},
			Dirichlet: map[int32]fem.Func{mesh.SideBottom: nil}, Neumann: map[int32]fem.Func{mesh.SideTop: g}}},
		{"two tags, contrast, wide range, f", noisy(t, wide, 1, r), &fem.Problem{F: f,
			A:         map[int32]fem.Tensor{0: fem.Scalar(1), 70000: {XX: 30, XY: 3, YY: 10}},
			Dirichlet: map[int32]fem.Func{mesh.SideBottom: nil, mesh.SideRight: nil}}},
		{"jiggled, contrast, Robin, source per region", noisy(t, wide, 1, r), &fem.Problem{
			FRegion: func(x, y float64, r int32) float64 { return f(x, y) * float64(1+r/70000) },
			A:       map[int32]fem.Tensor{0: fem.Scalar(1), 70000: {XX: 30, XY: 3, YY: 10}},
			Robin: map[int32]fem.RobinData{mesh.SideRight: {Alpha: 2, G: g},
				mesh.SideTop: {AlphaFunc: func(x, y float64) float64 { return 1 + x }}}}},
	}
}

// general runs the general path of est (the reference for the fast paths).
func general(t *testing.T, est Estimator, u *fem.Function, p *fem.Problem) *Indicators {
	t.Helper()
	dst, err := estimateBy("test", nil, u, p, generalPath(est))
	if err != nil {
		t.Fatal(err)
	}
	return dst
}

// generalPath returns the general path of est.
func generalPath(est Estimator) path {
	switch e := est.(type) {
	case Residual:
		return e.general
	case Recovery:
		return e.general
	}
	panic(fmt.Sprintf("no general path for %T", est))
}

// agree reports the triangle whose indicators differ most, relative, if
// that is more than tol.
func agree(got, want *Indicators, tol float64) error {
	worst, at := 0.0, -1
	for k := range want.Eta2 {
		for _, c := range [][2]float64{{got.Eta2[k], want.Eta2[k]}, {got.Osc2[k], want.Osc2[k]}} {
			d := math.Abs(c[0] - c[1])
			if d == 0 {
				continue
			}
			if rel := d / math.Abs(c[1]); !(rel <= worst) {
				worst, at = rel, k
			}
		}
	}
	if worst > tol || tol < 0 {
		return fmt.Errorf("triangle %d: η² %.17g, general path %.17g; osc² %.17g, general path %.17g (relative difference %.3g)",
			at, got.Eta2[at], want.Eta2[at], got.Osc2[at], want.Osc2[at], worst)
	}
	return nil
}

// The P1 fast paths give the indicators of the general path to rounding,
// triangle by triangle, on every kind of mesh and problem they take, also
// when dst holds the indicators of another problem.
func TestFastPathsMatchGeneral(t *testing.T) {
	t.Parallel()
	const tol = 1e-12
	cases := fastCases(t)
	for _, est := range []Estimator{Residual{}, Recovery{Method: Averaging}} {
		reused := &Indicators{}
		for _, c := range cases {
			want := general(t, est, c.u, c.p)
			got := estimateTotal(t, est, c.u, c.p)
			if err := agree(got, want, tol); err != nil {
				t.Errorf("%T %s: %v", est, c.name, err)
			}
			if testing.Verbose() {
				t.Logf("%T %s (%d triangles): %v", est, c.name, len(got.Eta2), agree(got, want, -1))
			}
			// dst from the previous case (another mesh and problem).
			var err error
			if reused, err = est.Estimate(reused, c.u, c.p); err != nil {
				t.Fatal(err)
			}
			if err := agree(reused, got, 0); err != nil {
				t.Errorf("%T %s: with a reused dst: %v", est, c.name, err)
			}
		}
	}
}

// The fast paths give bit-identical indicators whatever GOMAXPROCS, on
// meshes large enough to be split (several chunks and vertex owners), with
// one region and with several.
func TestFastPathsGOMAXPROCS(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	r := rand.New(rand.NewPCG(6, 2))
	sq, _ := mesh.Rectangle(0, 0, 1, 1, 150, 150)
	quads, _ := mesh.Quadrants(40)
	kq := refinedAtRandom(t, quads, 3, r)
	_, kellogg := known.Kellogg()
	f := func(x, y float64) float64 { return math.Exp(x - y) }
	psq, _, _ := permuted(t, sq, r)
	cases := []fastCase{
		{"square", noisy(t, sq, 1, r), &fem.Problem{F: f, C: 1, Neumann: map[int32]fem.Func{mesh.SideTop: f}}},
		{"permuted square", noisy(t, psq, 1, r), &fem.Problem{Dirichlet: map[int32]fem.Func{mesh.SideTop: f}}},
		{"Kellogg", noisy(t, kq, 1, r), kellogg},
	}
	for _, c := range cases {
		if nv := c.u.Space.Mesh.NumVertices(); nv < 5*4096 {
			t.Fatalf("%s: %d vertices, too few for five vertex owners", c.name, nv)
		}
		for _, est := range []Estimator{Residual{}, Recovery{}} {
			var ref *Indicators
			for _, procs := range []int{1, 2, 3, 5} {
				runtime.GOMAXPROCS(procs)
				in := estimateTotal(t, est, c.u, c.p)
				if ref == nil {
					ref = in
					continue
				}
				for k := range ref.Eta2 {
					if math.Float64bits(in.Eta2[k]) != math.Float64bits(ref.Eta2[k]) || math.Float64bits(in.Osc2[k]) != math.Float64bits(ref.Osc2[k]) {
						t.Fatalf("%T %s: GOMAXPROCS=%d: triangle %d differs from GOMAXPROCS=1", est, c.name, procs, k)
					}
				}
			}
		}
	}
}

// The fast paths report bad data as the general path does.
func TestFastPathsErrors(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	s, _ := fem.NewSpace(m, 1)
	u, _ := fem.Interpolate(s, func(x, y float64) float64 { return x * y })
	bad := func(x, y float64) float64 { return math.Log(x - 0.5) }
	dir := map[int32]fem.Func{mesh.SideLeft: nil}
	for _, est := range []Estimator{Residual{}, Recovery{}} {
		for _, p := range []*fem.Problem{
			{F: bad, Dirichlet: dir},
			{Neumann: map[int32]fem.Func{mesh.SideBottom: bad}, Dirichlet: dir},
		} {
			_, errGeneral := estimateBy("test", nil, u, p, generalPath(est))
			in, err := est.Estimate(nil, u, p)
			if (errGeneral == nil) != (err == nil) {
				t.Fatalf("%T: error %v, general path %v", est, err, errGeneral)
			}
			if err == nil {
				continue
			}
			if in != nil || err.Error() != errGeneral.Error() {
				t.Errorf("%T: got %v, %q; general path %q", est, in, err, errGeneral)
			}
		}
	}
}
