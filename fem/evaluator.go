package fem

// Evaluator evaluates a Function on one triangle at a time, without
// allocating: Load a triangle, then ask for values and gradients at
// barycentric points. An Evaluator is not safe for concurrent use; give
// each goroutine its own.
type Evaluator struct {
	u    *Function
	k    int
	g    geometry
	coef [6]float64
	phi  [6]float64
	grad [6][2]float64
	dofs [6]int32
}

// NewEvaluator returns an Evaluator of u, with triangle 0 loaded.
func NewEvaluator(u *Function) *Evaluator {
	ev := &Evaluator{u: u}
	ev.Load(0)
	return ev
}

// Load makes triangle k the current triangle.
func (ev *Evaluator) Load(k int) {
	s := ev.u.Space
	ev.k = k
	s.geom(&ev.g, k)
	for i, d := range s.ElementDOFs(ev.dofs[:0], k) {
		ev.coef[i] = ev.u.U[d]
	}
}

// Degree returns the degree of the function's space.
func (ev *Evaluator) Degree() int { return ev.u.Space.Degree }

// Triangle returns the current triangle.
func (ev *Evaluator) Triangle() int { return ev.k }

// Area returns the area of the current triangle.
func (ev *Evaluator) Area() float64 { return ev.g.area }

// Region returns the region of the current triangle.
func (ev *Evaluator) Region() int32 { return ev.g.region }

// Point returns the physical point of barycentric coordinates l.
func (ev *Evaluator) Point(l [3]float64) (x, y float64) { return ev.g.point(l) }

// BaryGrad returns the gradient of the barycentric coordinate λ_i, which is
// constant on the triangle. Its length is 1/height over the edge opposite
// vertex i, and it points from that edge towards vertex i.
func (ev *Evaluator) BaryGrad(i int) (gx, gy float64) { return ev.g.gl[i][0], ev.g.gl[i][1] }

// Eval returns the value and the gradient of the function at barycentric
// point l of the current triangle.
func (ev *Evaluator) Eval(l [3]float64) (v, gx, gy float64) {
	deg, ld := ev.u.Space.Degree, ev.u.Space.LocalDOFs()
	shape(deg, l, ev.phi[:ld])
	shapeGrad(deg, &ev.g, l, ev.grad[:ld])
	for i := range ld {
		v += ev.coef[i] * ev.phi[i]
		gx += ev.coef[i] * ev.grad[i][0]
		gy += ev.coef[i] * ev.grad[i][1]
	}
	return v, gx, gy
}

// Hessian returns the second derivatives (∂xx, ∂xy, ∂yy) of the function on
// the current triangle, which are constant there: zero for degree 1.
func (ev *Evaluator) Hessian() [3]float64 {
	if ev.u.Space.Degree == 1 {
		return [3]float64{}
	}
	var hess [6][3]float64
	shapeHessian(&ev.g, hess[:])
	var h [3]float64
	for i := range 6 {
		for c := range 3 {
			h[c] += ev.coef[i] * hess[i][c]
		}
	}
	return h
}
