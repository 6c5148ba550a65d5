package estimate

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// equilibratedCases returns the cases of fastCases (noisy interpolants of
// degree deg on the same meshes: r_a ≠ 0, so ρ and the algebraic term are
// exercised; for deg 2 also a mesh with a pinched vertex) and discrete
// solutions of the bound's model problems, on uniform, adaptively graded,
// jiggled and permuted meshes, Kellogg's contrast 161, Dirichlet, Neumann,
// Robin and untagged edges, c > 0.
func equilibratedCases(t *testing.T, deg int) []fastCase {
	t.Helper()
	var cases []fastCase
	rn := rand.New(rand.NewPCG(6, 5))
	for _, c := range fastCases(t) {
		if deg != 1 {
			c.u = noisy(t, c.u.Space.Mesh, deg, rn)
		}
		cases = append(cases, c)
	}
	if deg != 1 {
		// Two triangles touching at a vertex, whose patch is not one fan:
		// the P1 path declines it, the P2 path does not need a fan.
		pinched, _, err := mesh.New(mesh.Arrays{X: []float64{0, 0, 1, 0, 1, 1, -1, 0, -1, -1}, Tri: []int32{0, 1, 2, 0, 3, 4}})
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, fastCase{"pinched vertex", noisy(t, pinched, deg, rn),
			&fem.Problem{F: func(x, y float64) float64 { return 1 + x }, Dirichlet: map[int32]fem.Func{0: nil}}})
	}
	r := rand.New(rand.NewPCG(6, 3))
	for _, bc := range boundCases {
		_, p := bc.prob()
		m, err := bc.mesh()
		if err != nil {
			t.Fatal(err)
		}
		m = refinedAtRandom(t, m, 3, r)
		cases = append(cases, fastCase{bc.name + ", solved", solveTol(t, m, deg, p, 1e-12), p})
	}
	pi := math.Pi
	g := func(x, y float64) float64 { return math.Sin(pi*x) * math.Cos(y) }
	sq, _ := mesh.Rectangle(0, 0, 1, 1, 7, 6)
	jig := jiggled(t, sq, 1.0/7, r)
	p := &fem.Problem{C: 10, F: func(x, y float64) float64 { return math.Exp(x) - y },
		Dirichlet: map[int32]fem.Func{mesh.SideLeft: g, mesh.SideBottom: nil},
		Neumann:   map[int32]fem.Func{mesh.SideRight: g}}
	cases = append(cases, fastCase{"jiggled, c > 0, mixed, solved", solveTol(t, jig, deg, p, 1e-12), p})
	pr := &fem.Problem{F: func(x, y float64) float64 { return math.Exp(x) - y },
		Dirichlet: map[int32]fem.Func{mesh.SideBottom: g},
		Robin: map[int32]fem.RobinData{mesh.SideRight: {Alpha: 2, G: g},
			mesh.SideTop: {AlphaFunc: func(x, y float64) float64 { return 1 + x }, G: g}}}
	cases = append(cases, fastCase{"jiggled, Robin, solved", solveTol(t, jig, deg, pr, 1e-12), pr})
	po := &fem.Problem{F: func(x, y float64) float64 { return math.Exp(x) - y },
		Robin: map[int32]fem.RobinData{mesh.SideRight: {Alpha: 2, G: g}, mesh.SideLeft: {Alpha: 0.5}}}
	cases = append(cases, fastCase{"jiggled, Robin only, solved loosely", solveTol(t, jig, deg, po, 1e-4), po})
	return cases
}

// The P1 path (solveP1) and the P2 path (solveP2) give the flux σ_h and
// the indicators of the general path (solveGeneral) to rounding: each patch
// problem has one minimiser, which both compute. The Friedrichs constant 1
// only serves the problems with ρ ≠ 0 and Neumann edges, and is the same on
// both paths.
func TestEquilibratedFastMatchesGeneral(t *testing.T) {
	t.Parallel()
	for _, deg := range []int{1, 2} {
		t.Run("P"+strconv.Itoa(deg), func(t *testing.T) {
			t.Parallel()
			fastMatchesGeneral(t, deg)
		})
	}
}

func fastMatchesGeneral(t *testing.T, deg int) {
	const (
		tol   = 1e-10 // rounding of the patch solves, relative
		floor = 1e-14 // rounding, relative to the largest η_T²
	)
	reused := &Indicators{}
	for _, c := range equilibratedCases(t, deg) {
		fast, general := Equilibrated{Friedrichs: 1}, Equilibrated{Friedrichs: 1, generalOnly: true}
		eq, err := fast.equilibrate(c.u, c.p, nil)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if eq.tdat == nil {
			t.Fatalf("%s: the P%d path was not taken", c.name, deg)
		}
		sf, err := fast.Flux(c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		sg, err := general.Flux(c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		scale, worst, at := 0.0, 0.0, -1
		for i, v := range sg.U {
			scale = max(scale, math.Abs(v))
			if d := math.Abs(sf.U[i] - v); d > worst {
				worst, at = d, i
			}
		}
		if worst > tol*scale {
			t.Errorf("%s: flux DOF %d: %.17g, general path %.17g (max |σ| %.3g)", c.name, at, sf.U[at], sg.U[at], scale)
		}
		in, parts, err := fast.EstimateParts(nil, c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		want, wparts, err := general.EstimateParts(nil, c.u, c.p)
		if err != nil {
			t.Fatal(err)
		}
		// Per triangle: relative tol, with a floor of floor times the largest
		// η_T² for the smallest indicators, whose flux term is the
		// difference of σ_h and −a∇u_h and carries the rounding of patches
		// shared with large ones (the general path, on the same Kellogg
		// solution with its mesh renumbered, moves such η_T² by 1e-9
		// relative, measured).
		emax := 0.0
		for k := range want.Eta2 {
			emax = max(emax, want.Eta2[k])
		}
		for k := range want.Eta2 {
			for _, v := range [][2]float64{{in.Eta2[k], want.Eta2[k]}, {in.Osc2[k], want.Osc2[k]}} {
				if d := math.Abs(v[0] - v[1]); d > tol*math.Abs(v[1])+floor*emax {
					t.Errorf("%s: triangle %d: %.17g, general path %.17g", c.name, k, v[0], v[1])
				}
			}
		}
		// The parts, relative to the bound: the algebraic part of a solved
		// u_h is itself rounding.
		pf := [...]float64{parts.Flux, parts.Oscillation, parts.Neumann, parts.Residual, parts.Algebraic, parts.Dirichlet, parts.Total}
		pg := [...]float64{wparts.Flux, wparts.Oscillation, wparts.Neumann, wparts.Residual, wparts.Algebraic, wparts.Dirichlet, wparts.Total}
		for i := range pf {
			if math.Abs(pf[i]-pg[i]) > tol*wparts.Total {
				t.Errorf("%s: parts %+v, general path %+v", c.name, parts, wparts)
				break
			}
		}
		// dst from the previous case (another mesh and problem): its scratch
		// holds the arrays of that case.
		if reused, err = fast.Estimate(reused, c.u, c.p); err != nil {
			t.Fatal(err)
		}
		if err := agree(reused, in, 0); err != nil {
			t.Errorf("%s: with a reused dst: %v", c.name, err)
		}
		if testing.Verbose() {
			t.Logf("%s (%d triangles): flux %.2g of max |σ|; %v", c.name, len(in.Eta2), worst/scale, agree(in, want, -1))
		}
	}
}

// A mesh where two triangles touch at one vertex (whose patch is not one
// fan) takes the general path whole: the indicators are those of the
// general path, bit for bit.
func TestEquilibratedFastDeclines(t *testing.T) {
	t.Parallel()
	m, _, err := mesh.New(mesh.Arrays{X: []float64{0, 0, 1, 0, 1, 1, -1, 0, -1, -1}, Tri: []int32{0, 1, 2, 0, 3, 4}})
	if err != nil {
		t.Fatal(err)
	}
	s, _ := fem.NewSpace(m, 1)
	u, _ := fem.Interpolate(s, func(x, y float64) float64 { return x*x + y })
	p := &fem.Problem{F: func(x, y float64) float64 { return 1 + x }, Dirichlet: map[int32]fem.Func{0: nil}}
	eq, err := Equilibrated{}.equilibrate(u, p, nil)
	if err != nil {
		t.Fatal(err)
	}
	if eq.tdat != nil && eq.fq == nil {
		t.Fatal("the P1 path did not decline the pinched vertex")
	}
	got, err := Equilibrated{}.Estimate(nil, u, p)
	if err != nil {
		t.Fatal(err)
	}
	want, err := Equilibrated{generalOnly: true}.Estimate(nil, u, p)
	if err != nil {
		t.Fatal(err)
	}
	if err := agree(got, want, 0); err != nil {
		t.Error(err)
	}
}
