package adapt

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"maps"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// cellMesh builds a mesh from unit cells of side h: cell (i, j, region)
// covers [i h, (i+1) h] × [j h, (j+1) h] and is cut along its diagonal from
// lower left to upper right, each right angle being the newest vertex (as
// mesh.Rectangle does). Boundary edges for which tag(x0, y0, x1, y1)
// returns a positive tag carry it.
func cellMesh(t testing.TB, h float64, cells [][3]int, tag func(x0, y0, x1, y1 float64) int32) *mesh.Mesh {
	t.Helper()
	id := map[[2]int]int32{}
	var x []float64
	vertex := func(i, j int) int32 {
		k := [2]int{i, j}
		if v, ok := id[k]; ok {
			return v
		}
		id[k] = int32(len(x) / 2)
		x = append(x, float64(i)*h, float64(j)*h)
		return id[k]
	}
	var tri, region []int32
	count := map[[2]int32]int{}
	edge := func(a, b int32) {
		count[[2]int32{min(a, b), max(a, b)}]++
	}
	for _, c := range cells {
		ll, lr := vertex(c[0], c[1]), vertex(c[0]+1, c[1])
		ur, ul := vertex(c[0]+1, c[1]+1), vertex(c[0], c[1]+1)
		tri = append(tri, lr, ur, ll, ul, ll, ur)
		region = append(region, int32(c[2]), int32(c[2]))
		edge(ll, lr)
		edge(lr, ur)
		edge(ur, ul)
		edge(ul, ll)
	}
	var bnd, btag []int32
	for _, e := range slices.SortedFunc(maps.Keys(count), func(a, b [2]int32) int {
		return cmp.Or(cmp.Compare(a[0], b[0]), cmp.Compare(a[1], b[1]))
	}) {
		if count[e] != 1 {
			continue
		}
		if g := tag(x[2*e[0]], x[2*e[0]+1], x[2*e[1]], x[2*e[1]+1]); g > 0 {
			bnd, btag = append(bnd, e[0], e[1]), append(btag, g)
		}
	}
	m, _, err := mesh.New(mesh.Arrays{X: x, Tri: tri, Region: region, Bnd: bnd, BndTag: btag})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// finProblem is a T-shaped fin of our own: a flange of 21 × 1 cells of
// 1 cm (conductivity 1, region 1) on a stem of 1 × 4 cells below its
// middle cell (conductivity 50, region 0), a unit heat source in the stem,
// the temperature held at 0 at both ends of the flange (tag 1) and the
// other sides insulated.
func finProblem(t testing.TB) (*mesh.Mesh, *fem.Problem) {
	const flange, stem = 21, 4
	h := 0.01 // a variable, so that the ends are computed as cellMesh computes the vertices
	var cells [][3]int
	for i := range flange {
		cells = append(cells, [3]int{i, stem, 1})
	}
	for j := range stem {
		cells = append(cells, [3]int{flange / 2, j, 0})
	}
	ends := func(x0, y0, x1, y1 float64) int32 {
		if x0 == x1 && (x0 == 0 || x0 == float64(flange)*h) {
			return 1
		}
		return 0
	}
	m := cellMesh(t, h, cells, ends)
	ends1 := 0
	_, tags := m.BoundaryEdges()
	for _, g := range tags {
		if g == 1 {
			ends1++
		}
	}
	if ends1 != 2 {
		t.Fatalf("fin: %d edges carry tag 1, want the 2 ends", ends1)
	}
	return m, &fem.Problem{
		A: map[int32]fem.Tensor{0: fem.Scalar(50), 1: fem.Scalar(1)},
		F: func(x, y float64) float64 {
			if y < float64(stem)*h {
				return 1
			}
			return 0
		},
		Dirichlet: map[int32]fem.Func{1: nil},
	}
}

// The failing case of issue 12: the fin with P2, SPR recovery and
// everything else at its default runs to the DOF budget (5e4 DOFs, 3e4
// under -short, 1e4 under the race detector). With full solves
// (AlgebraicFraction < 0) the solves meet the rounding floor above the
// default Tol, where the former solver aborted the loop (at step 40 with
// "stagnated after 18 iterations at relative residual 1.12e-10"), and end
// there with Step.AtFloor; with the default nested iteration they stop
// earlier. A solve from zero with fem's defaults on the final mesh ends
// too. The estimate decreases at the optimal adaptive P2 rate N^{-1}
// (Cascón, Kreuzer, Nochetto and Siebert 2008; the fit must reach 0.9, our
// band).
func TestFinDefaults(t *testing.T) {
	t.Parallel()
	maxDOFs := 50000
	switch {
	case raceEnabled:
		maxDOFs = 10000 // below the floor: this checks the goroutines, not the numbers
	case testing.Short():
		maxDOFs = 30000
	}
	for _, tc := range []struct {
		name string
		frac float64
	}{{"nested (default)", 0}, {"full solves", -1}} {
		m, p := finProblem(t)
		res, err := Run(context.Background(), Problem{Mesh: m, Degree: 2, Data: p},
			Settings{MaxDOFs: maxDOFs, AlgebraicFraction: tc.frac},
			Method{Estimator: estimate.Recovery{Method: estimate.SPR}})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if res.Status != DOFLimit {
			t.Errorf("%s: status %v, want %v", tc.name, res.Status, DOFLimit)
		}
		var floors, its, maxIts int
		for _, s := range res.Steps {
			if s.AtFloor {
				floors++
			}
			its += s.Iterations
			maxIts = max(maxIts, s.Iterations)
		}
		last := res.Steps[len(res.Steps)-1]
		var n, eta []float64
		for _, s := range res.Steps[len(res.Steps)/2:] {
			n, eta = append(n, float64(s.DOFs)), append(eta, s.Estimate)
		}
		rate, _, err := estimate.FitRate(n, eta)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: %d steps to %d DOFs, η = %.4g, estimate rate %.3f; %d iterations in all, at most %d per step; %d solves at the floor",
			tc.name, len(res.Steps), last.DOFs, last.Estimate, rate, its, maxIts, floors)
		if rate < 0.9 {
			t.Errorf("%s: estimate rate %.3f, want at least 0.9", tc.name, rate)
		}
		if tc.frac < 0 && floors == 0 && !raceEnabled {
			t.Errorf("%s: no solve met the rounding floor; the case no longer tests it", tc.name)
		}
		if tc.frac < 0 {
			s, _ := fem.NewSpace(res.Mesh, 2)
			q, _ := res.Mesh.Quality()
			_, st, err := fem.Solve(s, p)
			if err != nil {
				t.Errorf("fem.Solve from zero: %v", err)
			}
			t.Logf("fem.Solve from zero on the final mesh (%d DOFs, smallest triangle %.2g): %d iterations, relative residual %.3g, at floor %v, floor %.3g",
				s.NumDOF(), q.HMin, st.Iterations, st.Residual, st.AtFloor, st.Floor)
		}
	}
}

// jittered returns m with its vertices moved by up to frac times the
// smallest triangle diameter in each coordinate (only the vertices off the
// boundary if interior is set), the triangles given regions by region
// (called with each centroid and the triangle's region in m), and its
// boundary tags kept.
func jittered(t testing.TB, m *mesh.Mesh, rnd *rand.Rand, frac float64, interior bool, region func(x, y float64, r int32) int32) *mesh.Mesh {
	t.Helper()
	q0, err := m.Quality()
	if err != nil {
		t.Fatal(err)
	}
	h := q0.HMin
	x := slices.Clone(m.X)
	bv := m.BoundaryVertices()
	for i := range m.NumVertices() {
		if interior && bv[i] {
			continue
		}
		x[2*i] += frac * h * (2*rnd.Float64() - 1)
		x[2*i+1] += frac * h * (2*rnd.Float64() - 1)
	}
	reg := make([]int32, m.NumTriangles())
	for k := range reg {
		var cx, cy float64
		for _, v := range m.Tri[3*k : 3*k+3] {
			cx += m.X[2*v] / 3
			cy += m.X[2*v+1] / 3
		}
		reg[k] = region(cx, cy, m.Region[k])
	}
	ab, tag := m.BoundaryEdges()
	out, _, err := mesh.New(mesh.Arrays{X: x, Tri: m.Tri, Region: reg, Bnd: ab, BndTag: tag})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// gradedAt refines m at its vertex nearest to (px, py), bisecting every
// triangle that holds the vertex, until the smallest triangle diameter is
// at most hmin, and returns the mesh and the number of rounds.
func gradedAt(t testing.TB, m *mesh.Mesh, px, py, hmin float64) (*mesh.Mesh, int) {
	t.Helper()
	near, dist := 0, math.Inf(1)
	for i := range m.NumVertices() {
		x, y := m.Vertex(i)
		if d := math.Hypot(x-px, y-py); d < dist {
			near, dist = i, d
		}
	}
	px, py = m.Vertex(near)
	rounds := 0
	for ; quality(t, m).HMin > hmin; rounds++ {
		marks := make([]bool, m.NumTriangles())
		any := false
		for k := range marks {
			for _, v := range m.Tri[3*k : 3*k+3] {
				if x, y := m.Vertex(int(v)); x == px && y == py {
					marks[k], any = true, true
				}
			}
		}
		if !any {
			t.Fatalf("no triangle at (%g, %g)", px, py)
		}
		var err error
		if m, _, err = m.Refine(marks); err != nil {
			t.Fatal(err)
		}
	}
	return m, rounds
}

// The stress set: every combination of four domains from the generators
// (the unit square, the L-shape, the slit square, the four quadrants, 4
// cells per unit length), each with its vertices jittered at random (the
// polygon too, except for the slit) and refined at random; a mesh as built
// or graded at a vertex down to h = 1e-10 (60 to 63 bisection rounds);
// diffusion contrasts 1, 1e4 and 1e8 between two regions split at a random
// line (checkerboard for the quadrants); P1 and P2; and the residual,
// averaging and SPR estimators: 4 × 2 × 3 × 2 × 3 = 144 runs of the loop
// with the default solver, alternately with the default nested iteration
// and with full solves, for 8 steps or 4000 DOFs (final meshes of 144 to
// 3797 DOFs); under -short every fourth combination, 36 runs, for 6 steps
// or 3000 DOFs; under the race detector every eighth. Each run must
// finish; a failure is reported, and must at least be located
// (*StepError). All 144 finish.
func TestStressDefaults(t *testing.T) {
	t.Parallel()
	maxDOFs, maxSteps := 4000, 8
	if testing.Short() {
		maxDOFs, maxSteps = 3000, 6
	}
	rnd := rand.New(rand.NewPCG(12, 1))
	type domain struct {
		name     string
		mesh     func() (*mesh.Mesh, error)
		interior bool    // jitter only the vertices off the boundary
		px, py   float64 // grading point
	}
	domains := []domain{
		{"square", func() (*mesh.Mesh, error) { return mesh.Rectangle(0, 0, 1, 1, 8, 8) }, false, 0.3, 0.7},
		{"L-shape", func() (*mesh.Mesh, error) { return mesh.LShape(4) }, false, 0, 0},
		{"slit", func() (*mesh.Mesh, error) { return mesh.Slit(4) }, true, 0, 0},
		{"quadrants", func() (*mesh.Mesh, error) { return mesh.Quadrants(4) }, false, 0.1, -0.2},
	}
	estimators := []struct {
		name string
		est  estimate.Estimator
	}{
		{"residual", estimate.Residual{}},
		{"averaging", estimate.Recovery{Method: estimate.Averaging}},
		{"SPR", estimate.Recovery{Method: estimate.SPR}},
	}
	runs, finished, floors := 0, 0, 0
	minRounds, maxRounds := math.MaxInt, 0
	combination := 0
	for _, d := range domains {
		for _, graded := range []bool{false, true} {
			for _, contrast := range []float64{1, 1e4, 1e8} {
				m0, err := d.mesh()
				if err != nil {
					t.Fatal(err)
				}
				cut := 0.6*rnd.Float64() - 0.3
				if d.name == "square" {
					cut += 0.5
				}
				m := jittered(t, m0, rnd, 0.15, d.interior, func(x, y float64, r int32) int32 {
					switch {
					case d.name == "quadrants":
						return r % 2 // 1 and 3 against 2 and 4
					case x+0.3*y < cut:
						return 1
					}
					return 0
				})
				marks := make([]bool, m.NumTriangles())
				for k := range marks {
					marks[k] = rnd.Float64() < 0.3
				}
				if m, _, err = m.Refine(marks); err != nil {
					t.Fatal(err)
				}
				if graded {
					var rounds int
					m, rounds = gradedAt(t, m, d.px, d.py, 1e-10)
					minRounds, maxRounds = min(minRounds, rounds), max(maxRounds, rounds)
				}
				_, tags := m.BoundaryEdges()
				p := &fem.Problem{
					A:         map[int32]fem.Tensor{0: fem.Scalar(1), 1: fem.Scalar(contrast)},
					F:         func(x, y float64) float64 { return 1 + x*y },
					Dirichlet: map[int32]fem.Func{},
				}
				for _, g := range slices.Compact(slices.Sorted(slices.Values(tags))) {
					p.Dirichlet[g] = func(x, y float64) float64 { return x - y }
				}
				for deg := 1; deg <= 2; deg++ {
					for _, e := range estimators {
						combination++
						if (testing.Short() && combination%4 != 0) || (raceEnabled && combination%8 != 0) {
							continue
						}
						runs++
						name := fmt.Sprintf("%s graded=%v contrast=%g P%d %s", d.name, graded, contrast, deg, e.name)
						frac := 0.0 // nested iteration, the default
						if runs%2 == 1 {
							frac = -1 // full solves, to Tol or the floor
						}
						res, err := Run(context.Background(), Problem{Mesh: m, Degree: deg, Data: p},
							Settings{MaxDOFs: maxDOFs, MaxSteps: maxSteps, AlgebraicFraction: frac}, Method{Estimator: e.est})
						var se *StepError
						switch {
						case err == nil:
							finished++
							if testing.Verbose() {
								last := res.Steps[len(res.Steps)-1]
								mi := 0
								for _, s := range res.Steps {
									mi = max(mi, s.Iterations)
								}
								q, _ := res.Mesh.Quality()
								t.Logf("%s, fraction %g: %d steps to %d DOFs (smallest triangle %.2g), at most %d iterations", name, frac, len(res.Steps), last.DOFs, q.HMin, mi)
							}
							for _, s := range res.Steps {
								if s.AtFloor {
									floors++
								}
							}
						case errors.As(err, &se):
							t.Logf("%s: located error: %v", name, err)
							if res != nil && res.Mesh != nil {
								q, _ := res.Mesh.Quality()
								t.Logf("%s: last good mesh: %d triangles, smallest %.3g, smallest area %.3g", name, res.Mesh.NumTriangles(), q.HMin, q.AreaMin)
							}
						default:
							t.Errorf("%s: error without a location: %v", name, err)
						}
					}
				}
			}
		}
	}
	t.Logf("%d runs, %d finished, %d solves at the floor; %d to %d bisection rounds to h = 1e-10", runs, finished, floors, minRounds, maxRounds)
	if finished != runs {
		t.Errorf("%d of %d runs failed (located)", runs-finished, runs)
	}
}

// targetSpy is a TargetSolver that records the energy tolerances it is
// given and reports the floor at its second call.
type targetSpy struct {
	FEMSolver
	tols *[]float64
}

func (s targetSpy) SolveTo(sp *fem.Space, p *fem.Problem, guess []float64, energyTol float64) ([]float64, fem.SolveStats, error) {
	*s.tols = append(*s.tols, energyTol)
	u, st, err := s.FEMSolver.SolveTo(sp, p, guess, energyTol)
	st.AtFloor = len(*s.tols) == 2
	return u, st, err
}

// The loop hands a TargetSolver 0 at the first step and
// DefaultAlgebraicFraction (or the given fraction) times the previous
// estimate after it, 0 throughout when the fraction is negative, and copies
// the solver's AtFloor into the step record.
func TestTargetSolverTolerances(t *testing.T) {
	t.Parallel()
	m, p := finProblem(t)
	for _, frac := range []float64{0, 0.25, -1} {
		var tols []float64
		res, err := Run(context.Background(), Problem{Mesh: m, Degree: 1, Data: p}, Settings{MaxSteps: 4, AlgebraicFraction: frac},
			Method{Solver: targetSpy{tols: &tols}})
		if err != nil {
			t.Fatal(err)
		}
		want := frac
		if frac == 0 {
			want = DefaultAlgebraicFraction
		}
		for i, tol := range tols {
			w := 0.0
			if i > 0 && want > 0 {
				w = want * res.Steps[i-1].Estimate
			}
			if tol != w {
				t.Errorf("fraction %g, step %d: energy tolerance %g, want %g", frac, i, tol, w)
			}
			if res.Steps[i].AtFloor != (i == 1) {
				t.Errorf("fraction %g, step %d: AtFloor %v", frac, i, res.Steps[i].AtFloor)
			}
		}
		if len(tols) != 4 {
			t.Errorf("fraction %g: %d solves, want 4", frac, len(tols))
		}
	}
}

// quality returns m's quality figures, failing the test on an error.
func quality(t testing.TB, m *mesh.Mesh) mesh.Quality {
	t.Helper()
	q, err := m.Quality()
	if err != nil {
		t.Fatal(err)
	}
	return q
}
