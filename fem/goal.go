package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// Goal is a goal functional J, the quantity an engineer reports (a mean
// temperature, a flux through a wall), affine in u:
//
//	J(u) = J₀(u) + d
//
// with J₀ linear and d a number fixed by the problem's data (zero for the
// means; the source and Neumann terms of Flux).
//
// Load writes the load vector of J₀ on s, dst[i] = J₀(φ_i) for every basis
// function φ_i (resized; a nil dst allocates), which is the right-hand side
// of the dual problem a(v, z) = J₀(v) (see Problem.Goal). Value returns
// J(u_h) = Σ_i J₀(φ_i) U_i + d. Both check the goal against the mesh and
// return an error wrapping ErrGoal for a goal that cannot be used there
// (a weight that integrates to zero, a tag that no boundary edge carries),
// so that a caller can check a goal with Load before any solve.
//
// The ready cases are Mean (a caller's weight), RegionMean, BoxMean, Flux,
// and Functional (a caller's own J₀ given by its load vector).
type Goal interface {
	Load(dst []float64, s *Space, p *Problem) ([]float64, error)
	Value(u *Function, p *Problem) (float64, error)
}

// ExactGoal is a Goal that can also evaluate J(u) for a known exact
// solution, for the true goal error J(u) − J(u_h). Every ready case but
// Functional is one; each states its method and accuracy.
type ExactGoal interface {
	Goal
	ExactValue(s *Space, ex Exact, p *Problem) (float64, error)
}

var (
	_ ExactGoal = Mean{}
	_ ExactGoal = RegionMean{}
	_ ExactGoal = BoxMean{}
	_ ExactGoal = Flux{}
	_ Goal      = Functional{}
)

// Functional is a caller's own linear goal J(u) = J₀(u), given by its load
// vector: L writes J₀(φ_i) for every DOF i of s into dst (resized; a nil
// dst allocates) and returns it. J(u_h) is then Σ_i J₀(φ_i) U_i.
type Functional struct {
	L func(dst []float64, s *Space) ([]float64, error)
}

// Load calls L and checks the length and finiteness of its result.
func (g Functional) Load(dst []float64, s *Space, p *Problem) ([]float64, error) {
	if g.L == nil || s == nil {
		return nil, fmt.Errorf("fem: Functional: nil load or space: %w", ErrArgument)
	}
	b, err := g.L(dst, s)
	if err != nil {
		return nil, fmt.Errorf("fem: Functional: %w", err)
	}
	if len(b) != s.NumDOF() {
		return nil, fmt.Errorf("fem: Functional: load has %d values for %d DOFs: %w", len(b), s.NumDOF(), ErrLength)
	}
	for i, v := range b {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("fem: Functional: load value %d is %g: %w", i, v, ErrNotFinite)
		}
	}
	return b, nil
}

// Value returns Σ_i J₀(φ_i) U_i.
func (g Functional) Value(u *Function, p *Problem) (float64, error) {
	return linearValue(g, u, p)
}

// linearValue returns Σ_i b_i U_i for the load b of g, summed in DOF order.
func linearValue(g Goal, u *Function, p *Problem) (float64, error) {
	if u == nil || u.Space == nil {
		return 0, fmt.Errorf("fem: goal value: nil function: %w", ErrArgument)
	}
	b, err := g.Load(nil, u.Space, p)
	if err != nil {
		return 0, err
	}
	v := 0.0
	for i, bi := range b {
		v += bi * u.U[i]
	}
	return v, nil
}

// Mean is the weighted mean J(u) = ∫_Ω w u / ∫_Ω w for a caller's weight
// W (nil means w = 1, the mean over the domain). Its load ∫ w φ_i / ∫ w
// is integrated by the Dunavant rule of degree 2p + 4 on each triangle
// (exact for w of degree p + 4), the denominator by the rule of degree
// ErrorDegree. A weight whose integral is zero to within 1e-12 ∫|w| gives ErrGoal, a NaN or
// infinite one ErrNotFinite. RegionMean and BoxMean are the exact cases
// of indicator weights.
type Mean struct {
	W Func
}

func (g Mean) w(x, y float64) float64 {
	if g.W == nil {
		return 1
	}
	return g.W(x, y)
}

// total returns ∫_Ω w by the rule of degree ErrorDegree.
func (g Mean) total(s *Space) (float64, error) {
	r, err := quadrature.ForTriangle(ErrorDegree)
	if err != nil {
		return 0, err
	}
	m := s.Mesh
	part, absPart := make([]float64, m.NumTriangles()), make([]float64, m.NumTriangles())
	err = parallel.For(m.NumTriangles(), 1024, func(lo, hi int) error {
		var geo geometry
		for k := lo; k < hi; k++ {
			s.geom(&geo, k)
			v, va := 0.0, 0.0
			for q := range r.Len() {
				x, y := geo.point([3]float64{r.Bary[3*q], r.Bary[3*q+1], r.Bary[3*q+2]})
				w := g.w(x, y)
				if math.IsNaN(w) || math.IsInf(w, 0) {
					return atTriangle(k, x, y, fmt.Errorf("%w: goal weight w = %g", ErrNotFinite, w))
				}
				v += r.W[q] * w
				va += r.W[q] * math.Abs(w)
			}
			part[k], absPart[k] = v*geo.area, va*geo.area
		}
		return nil
	})
	if err != nil {
		return 0, err
	}
	t, abs := 0.0, 0.0
	for k, v := range part {
		t += v
		abs += absPart[k]
	}
	// Zero to within the rounding of the sum: 1e-12 of ∫|w|.
	if math.Abs(t) <= 1e-12*abs || math.IsNaN(t) || math.IsInf(t, 0) {
		return 0, fmt.Errorf("fem: Mean: the weight integrates to %g over the mesh (∫|w| = %g): %w", t, abs, ErrGoal)
	}
	return t, nil
}

// Load writes ∫ w φ_i / ∫ w.
func (g Mean) Load(dst []float64, s *Space, p *Problem) ([]float64, error) {
	if s == nil {
		return nil, fmt.Errorf("fem: Mean: nil space: %w", ErrArgument)
	}
	t, err := g.total(s)
	if err != nil {
		return nil, err
	}
	r, err := quadrature.ForTriangle(2*s.Degree + 4)
	if err != nil {
		return nil, err
	}
	return elementLoads(dst, s, func(geo *geometry, k int, fe []float64) error {
		var phi [6]float64
		for q := range r.Len() {
			l := [3]float64{r.Bary[3*q], r.Bary[3*q+1], r.Bary[3*q+2]}
			x, y := geo.point(l)
			w := g.w(x, y)
			if math.IsNaN(w) || math.IsInf(w, 0) {
				return atTriangle(k, x, y, fmt.Errorf("%w: goal weight w = %g", ErrNotFinite, w))
			}
			shape(s.Degree, l, phi[:])
			c := r.W[q] * geo.area * w / t
			for i := range fe {
				fe[i] += c * phi[i]
			}
		}
		return nil
	})
}

// Value returns Σ_i J₀(φ_i) U_i = ∫ w u_h / ∫ w (with the load's rule).
func (g Mean) Value(u *Function, p *Problem) (float64, error) { return linearValue(g, u, p) }

// ExactValue returns ∫ w u / ∫ w for the exact solution, the numerator by
// the singular-point-aware scheme of Function.Error (see goalIntegral),
// which is accurate for a weight smooth on each triangle.
func (g Mean) ExactValue(s *Space, ex Exact, p *Problem) (float64, error) {
	t, err := g.total(s)
	if err != nil {
		return 0, err
	}
	v, err := goalIntegral(s, ex, p, nil, nil, nil, func(_ *errorIntegrator, x, y float64, _ [3]float64) float64 {
		return g.w(x, y) * ex.U(x, y)
	})
	return v / t, err
}

// RegionMean is the mean of u over the triangles of one region,
// J(u) = ∫_R u / |R|. Its load is exact: |T|/3|R| per vertex for P1; for
// P2 zero at the vertices and |T|/3|R| per edge midpoint. A region that no
// triangle carries gives ErrGoal.
type RegionMean struct {
	Region int32
}

// area returns |R|, or an error wrapping ErrGoal when it is zero.
func (g RegionMean) area(s *Space) (float64, error) {
	a := 0.0
	for k, r := range s.Mesh.Region {
		if r == g.Region {
			a += s.Mesh.Area(k)
		}
	}
	if a == 0 {
		return 0, fmt.Errorf("fem: RegionMean: region %d: no triangle carries it: %w", g.Region, ErrGoal)
	}
	return a, nil
}

// Load writes ∫_R φ_i / |R|.
func (g RegionMean) Load(dst []float64, s *Space, p *Problem) ([]float64, error) {
	if s == nil {
		return nil, fmt.Errorf("fem: RegionMean: nil space: %w", ErrArgument)
	}
	a, err := g.area(s)
	if err != nil {
		return nil, err
	}
	return elementLoads(dst, s, func(geo *geometry, k int, fe []float64) error {
		if geo.region != g.Region {
			return nil
		}
		c := geo.area / (3 * a)
		if s.Degree == 1 {
			fe[0], fe[1], fe[2] = c, c, c
		} else {
			fe[3], fe[4], fe[5] = c, c, c
		}
		return nil
	})
}

// Value returns ∫_R u_h / |R|.
func (g RegionMean) Value(u *Function, p *Problem) (float64, error) { return linearValue(g, u, p) }

// ExactValue returns ∫_R u / |R| by the scheme of Function.Error (see
// goalIntegral).
func (g RegionMean) ExactValue(s *Space, ex Exact, p *Problem) (float64, error) {
	a, err := g.area(s)
	if err != nil {
		return 0, err
	}
	v, err := goalIntegral(s, ex, p, func(k int) bool { return s.Mesh.Region[k] == g.Region }, nil, nil,
		func(_ *errorIntegrator, x, y float64, _ [3]float64) float64 { return ex.U(x, y) })
	return v / a, err
}

// elementLoads writes into dst (resized, cleared) the sum over triangles of
// the element loads that each fills into fe (cleared, length 3p). The
// triangles are split over GOMAXPROCS goroutines; each DOF's entries are
// added in triangle order, so the result does not depend on GOMAXPROCS.
func elementLoads(dst []float64, s *Space, each func(g *geometry, k int, fe []float64) error) ([]float64, error) {
	m := s.Mesh
	nt, ld := m.NumTriangles(), s.LocalDOFs()
	loc := make([]float64, ld*nt)
	err := parallel.For(nt, 1024, func(lo, hi int) error {
		var geo geometry
		for k := lo; k < hi; k++ {
			s.geom(&geo, k)
			if err := each(&geo, k, loc[ld*k:ld*(k+1)]); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	dst = resize(dst, s.NumDOF())
	clear(dst)
	var dofs [6]int32
	for k := range nt {
		for i, d := range s.ElementDOFs(dofs[:0], k) {
			dst[d] += loc[ld*k+i]
		}
	}
	return dst, nil
}

// addGoalLoad adds the load of p.Goal to b.
func addGoalLoad(s *Space, p *Problem, b []float64) error {
	g, err := p.Goal.Load(nil, s, p)
	if err != nil {
		return err
	}
	if len(g) != len(b) {
		return fmt.Errorf("fem: goal load has %d values for %d DOFs: %w", len(g), len(b), ErrLength)
	}
	for i, v := range g {
		b[i] += v
	}
	return nil
}

// Dual returns the dual problem of p for the goal g,
//
//	a(v, z) = J₀(v) for every v with v = 0 on the Dirichlet edges,
//
// as a Problem: p's diffusion, reaction and boundary tags, homogeneous
// Dirichlet data on p's Dirichlet tags, p's Robin α with g_R = 0 on its
// Robin tags, no source, no Neumann data, and g's load (Problem.Goal). The
// bilinear form is symmetric, so its matrix is that of p; any solver of p
// solves it, and System.Dual builds its system from p's without
// assembling the matrix again.
func Dual(p *Problem, g Goal) *Problem {
	d := &Problem{A: p.A, AFunc: p.AFunc, C: p.C, PureNeumann: p.PureNeumann, Goal: g}
	if len(p.Dirichlet) > 0 {
		d.Dirichlet = make(map[int32]Func, len(p.Dirichlet))
		for tag := range p.Dirichlet {
			d.Dirichlet[tag] = nil
		}
	}
	if len(p.Robin) > 0 {
		d.Robin = make(map[int32]RobinData, len(p.Robin))
		for tag, r := range p.Robin {
			d.Robin[tag] = RobinData{Alpha: r.Alpha, AlphaFunc: r.AlphaFunc}
		}
	}
	return d
}

// Dual returns the system of the dual problem Dual(sys.Problem, g) on
// sys.Space, as Assemble would build it, without assembling the matrix
// again: the bilinear form is symmetric and the Dirichlet DOFs are the
// same, so A is sys.A (shared, not copied), and B is g's load with zeros
// at the Dirichlet DOFs (the dual's Dirichlet data are homogeneous), shifted
// to zero mean for a pure Neumann problem. Its cost is that of g.Load.
func (sys *System) Dual(g Goal) (*System, error) {
	if g == nil {
		return nil, fmt.Errorf("fem: Dual: nil goal: %w", ErrArgument)
	}
	dp := Dual(sys.Problem, g)
	b, err := g.Load(nil, sys.Space, dp)
	if err != nil {
		return nil, err
	}
	if len(b) != sys.Space.NumDOF() {
		return nil, fmt.Errorf("fem: goal load has %d values for %d DOFs: %w", len(b), sys.Space.NumDOF(), ErrLength)
	}
	for _, d := range sys.Dirichlet {
		b[d] = 0
	}
	if dp.pureNeumann() {
		mean := 0.0
		for _, v := range b {
			mean += v
		}
		mean /= float64(len(b))
		for i := range b {
			b[i] -= mean
		}
	}
	return &System{Space: sys.Space, Problem: dp, A: sys.A, B: b, Dirichlet: sys.Dirichlet}, nil
}

// Dual returns the prepared system of the dual problem of g (see
// System.Dual), which shares the matrix and the preconditioner of ps.
func (ps *Prepared) Dual(g Goal) (*Prepared, error) {
	d, err := ps.System.Dual(g)
	if err != nil {
		return nil, err
	}
	return &Prepared{System: d, pre: ps.pre}, nil
}
