package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// Function is a discrete function of a Space: U holds one coefficient per
// DOF, the function's value at the DOF's node.
type Function struct {
	Space *Space
	U     []float64
}

// NewFunction returns the zero function of s.
func NewFunction(s *Space) *Function {
	return &Function{Space: s, U: make([]float64, s.NumDOF())}
}

// Interpolate returns the nodal interpolant of f in s: the function whose
// value at every vertex (and, for degree 2, every edge midpoint) is f's. It
// returns an error wrapping ErrNotFinite if f is NaN or infinite at a node.
func Interpolate(s *Space, f Func) (*Function, error) {
	u := NewFunction(s)
	for i := range u.U {
		x, y := s.DOFPoint(i)
		v := f(x, y)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("fem: Interpolate: f(%g, %g) = %g: %w", x, y, v, ErrNotFinite)
		}
		u.U[i] = v
	}
	return u, nil
}

// Local returns the value of u on triangle k at barycentric coordinates l.
func (u *Function) Local(k int, l [3]float64) float64 {
	var phi [6]float64
	var dofs [6]int32
	s := u.Space
	shape(s.Degree, l, phi[:])
	v := 0.0
	for i, d := range s.ElementDOFs(dofs[:0], k) {
		v += u.U[d] * phi[i]
	}
	return v
}

// GradLocal returns the gradient of u on triangle k at barycentric
// coordinates l (constant on the triangle for degree 1).
func (u *Function) GradLocal(k int, l [3]float64) (gx, gy float64) {
	var g geometry
	var grad [6][2]float64
	var dofs [6]int32
	s := u.Space
	s.geom(&g, k)
	shapeGrad(s.Degree, &g, l, grad[:])
	for i, d := range s.ElementDOFs(dofs[:0], k) {
		gx += u.U[d] * grad[i][0]
		gy += u.U[d] * grad[i][1]
	}
	return gx, gy
}

// Hessian returns the second derivatives (∂xx, ∂xy, ∂yy) of u on triangle
// k, which are constant there: zero for degree 1.
func (u *Function) Hessian(k int) [3]float64 {
	ev := Evaluator{u: u}
	ev.Load(k)
	return ev.Hessian()
}

// At returns u(x, y). It returns an error wrapping ErrOutside if the point
// is not in the mesh. The first call builds a point locator for the mesh.
func (u *Function) At(x, y float64) (float64, error) {
	k, l, ok := u.Space.locator().Locate(x, y)
	if !ok {
		return 0, fmt.Errorf("fem: (%g, %g): %w", x, y, ErrOutside)
	}
	return u.Local(k, l), nil
}

// GradAt returns ∇u(x, y), taken from one triangle containing the point
// where the gradient jumps.
func (u *Function) GradAt(x, y float64) (gx, gy float64, err error) {
	k, l, ok := u.Space.locator().Locate(x, y)
	if !ok {
		return 0, 0, fmt.Errorf("fem: (%g, %g): %w", x, y, ErrOutside)
	}
	gx, gy = u.GradLocal(k, l)
	return gx, gy, nil
}

// Integral returns the integral of u over the mesh (exact).
func (u *Function) Integral() float64 {
	r, _ := quadrature.ForTriangle(u.Space.Degree)
	sum := 0.0
	for k := range u.Space.Mesh.NumTriangles() {
		a := u.Space.Mesh.Area(k)
		for q := range r.Len() {
			sum += a * r.W[q] * u.Local(k, [3]float64{r.Bary[3*q], r.Bary[3*q+1], r.Bary[3*q+2]})
		}
	}
	return sum
}

// EdgeValue returns the value of u at the point (1 − t) A + t B of edge e,
// A = Edge[2e] and B = Edge[2e+1], from the DOFs of the edge alone (the
// trace of u on an edge is a polynomial of the space's degree in t).
func (u *Function) EdgeValue(e int, t float64) float64 {
	var buf [3]float64
	phi := edgeShape(u.Space.Degree, t, buf[:0])
	m := u.Space.Mesh
	v := u.U[m.Edge[2*e]]*phi[0] + u.U[m.Edge[2*e+1]]*phi[1]
	if u.Space.Degree == 2 {
		v += u.U[m.NumVertices()+e] * phi[2]
	}
	return v
}
