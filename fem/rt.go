package fem

import (
	"fmt"
	"math"
	"sync"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// RTSpace is the Raviart–Thomas space RT_k (k = 0, 1 or 2) on a mesh: the
// vector fields that are, on every triangle, of the form
//
//	v(x) = p(x) + x q(x),   p ∈ P_k², q ∈ P̃_k (homogeneous of degree k),
//
// and whose normal component is continuous across every edge, so that
// RT_k ⊂ H(div). Its divergence is in P_k on every triangle and its normal
// component is in P_k on every edge. The local dimension is (k+1)(k+3):
// 3, 8 and 15.
//
// DOFs (see the package doc, # Conventions, for the orientation):
//
//	edge e, moment j = 0..k:   ∫_E v·n_E L_j ds           (DOF e(k+1) + j)
//	triangle T, moment i:      ∫_T̂ v̂·q̂_i dx̂               (DOF NumEdges·(k+1) + T·k(k+1) + i)
//
// with L_j the Legendre polynomials on the edge parametrised from its low
// to its high vertex (L_0 = 1, L_1 = 2t − 1, L_2 = 6t² − 6t + 1), v̂ the
// contravariant Piola pull-back of v to the reference triangle (0,0),
// (1,0), (0,1) of the triangle's vertices Tri[3T], Tri[3T+1], Tri[3T+2],
//
//	v(x) = J v̂(x̂) / det J,   x = x_0 + J x̂,
//
// and q̂_i running over (m, 0), (0, m) for the monomials m = 1, x̂, ŷ of
// degree ≤ k − 1 (none for k = 0). The local DOFs of a triangle are those of
// its edges TriEdge[3T], TriEdge[3T+1], TriEdge[3T+2] (moments j = 0..k
// each), then its interior DOFs.
//
// The local basis is dual to these DOFs. It is built once per degree on the
// reference triangle, from the raw basis (m, 0), (0, m) for monomials of
// degree ≤ k and x̂ m for monomials of degree k, by inverting the matrix of
// the DOFs of the raw basis (computed exactly), and mapped by the Piola
// transform; a sign ±1 per edge moment makes it global (see Sign).
//
// References:
//   - P.-A. Raviart and J.-M. Thomas, A mixed finite element method for
//     2nd order elliptic problems, in Mathematical Aspects of Finite
//     Element Methods, Lecture Notes in Math. 606, Springer, 1977, 292–315.
//   - D. Boffi, F. Brezzi and M. Fortin, Mixed Finite Element Methods and
//     Applications, Springer, 2013, §2.3.1.
type RTSpace struct {
	Mesh   *mesh.Mesh
	Degree int

	ref *rtReference
}

// NewRTSpace returns RT_k on m for k = 0, 1 or 2.
func NewRTSpace(m *mesh.Mesh, k int) (*RTSpace, error) {
	if m == nil {
		return nil, fmt.Errorf("fem: NewRTSpace: nil mesh: %w", ErrArgument)
	}
	if k < 0 || k > 2 {
		return nil, fmt.Errorf("fem: NewRTSpace: degree %d, want 0, 1 or 2: %w", k, ErrArgument)
	}
	return &RTSpace{Mesh: m, Degree: k, ref: rtRef(k)}, nil
}

// NumDOF returns the dimension of the space.
func (s *RTSpace) NumDOF() int {
	k := s.Degree
	return s.Mesh.NumEdges()*(k+1) + s.Mesh.NumTriangles()*k*(k+1)
}

// LocalDOFs returns the number of DOFs on one triangle, (k+1)(k+3).
func (s *RTSpace) LocalDOFs() int { return s.ref.n }

// EdgeMoments returns the number of DOFs per edge, k + 1.
func (s *RTSpace) EdgeMoments() int { return s.Degree + 1 }

// InteriorDOFs returns the number of interior DOFs per triangle, k(k+1).
func (s *RTSpace) InteriorDOFs() int { return s.Degree * (s.Degree + 1) }

// EdgeNormal returns the unit normal n_E of edge e: its tangent from the
// low vertex Edge[2e] to the high vertex Edge[2e+1], turned clockwise by
// a right angle.
func (s *RTSpace) EdgeNormal(e int) (nx, ny float64) {
	m := s.Mesh
	ax, ay := m.Vertex(int(m.Edge[2*e]))
	bx, by := m.Vertex(int(m.Edge[2*e+1]))
	l := math.Hypot(bx-ax, by-ay)
	return (by - ay) / l, (ax - bx) / l
}

// Sign returns +1 if the global normal n_E of edge i of triangle k (the
// edge opposite local vertex i) points out of k, and −1 if it points in.
func (s *RTSpace) Sign(k, i int) float64 {
	m := s.Mesh
	if m.Tri[3*k+(i+1)%3] < m.Tri[3*k+(i+2)%3] {
		return 1
	}
	return -1
}

// rtReference is the dual basis of RT_k on the reference triangle, as
// coefficients on the monomials x̂^a ŷ^b of degree ≤ k + 1.
type rtReference struct {
	k, n, nm int
	pow      [][2]int  // exponents of monomial m
	coef     []float64 // coef[(l*2+c)*nm+m]: component c of basis function l
	div      []float64 // div[l*nm+m]: divergence of basis function l
	ni       int       // interior moments
	iq       [][2]int  // interior moment i: component iq[i][0], monomial iq[i][1]
}

var rtRefs [3]struct {
	once sync.Once
	ref  *rtReference
}

// rtRef returns the reference basis of RT_k, built once.
func rtRef(k int) *rtReference {
	r := &rtRefs[k]
	r.once.Do(func() { r.ref = buildRTReference(k) })
	return r.ref
}

// refMonoIntegral returns ∫ x̂^a ŷ^b over the reference triangle,
// a! b! / (a + b + 2)!.
func refMonoIntegral(a, b int) float64 {
	f := func(n int) float64 {
		v := 1.0
		for i := 2; i <= n; i++ {
			v *= float64(i)
		}
		return v
	}
	return f(a) * f(b) / f(a+b+2)
}

func buildRTReference(k int) *rtReference {
	d := k + 1
	r := &rtReference{k: k, n: (k + 1) * (k + 3)}
	for deg := 0; deg <= d; deg++ {
		for b := 0; b <= deg; b++ {
			r.pow = append(r.pow, [2]int{deg - b, b})
		}
	}
	r.nm = len(r.pow)
	mono := func(a, b int) int {
		for m, p := range r.pow {
			if p == [2]int{a, b} {
				return m
			}
		}
		panic("fem: monomial out of range") // broken internal invariant
	}
	// Raw basis: (m, 0), (0, m) for deg m ≤ k; (x̂ m, ŷ m) for deg m = k.
	n, nm := r.n, r.nm
	raw := make([]float64, n*2*nm)
	l := 0
	for m, p := range r.pow {
		if p[0]+p[1] > k {
			break
		}
		raw[(l*2+0)*nm+m] = 1
		raw[((l+1)*2+1)*nm+m] = 1
		l += 2
	}
	for _, p := range r.pow {
		if p[0]+p[1] != k {
			continue
		}
		raw[(l*2+0)*nm+mono(p[0]+1, p[1])] = 1
		raw[(l*2+1)*nm+mono(p[0], p[1]+1)] = 1
		l++
	}
	for m, p := range r.pow {
		if p[0]+p[1] <= k-1 {
			r.iq = append(r.iq, [2]int{0, m}, [2]int{1, m})
		}
	}
	r.ni = len(r.iq)
	// DOF matrix V[dof][raw], exact: edges by Gauss–Legendre with k + 2
	// points (the integrand has degree ≤ 2k + 1), interior moments by the
	// closed form of the monomial integrals.
	vx := [3][2]float64{{0, 0}, {1, 0}, {0, 1}}
	gl, err := quadrature.GaussLegendre(k + 2)
	if err != nil {
		panic(err) // k + 2 ≤ 4 points always exist
	}
	v := make([]float64, n*n)
	for rb := range n {
		row := 0
		for i := range 3 {
			p, q := vx[(i+1)%3], vx[(i+2)%3]
			dx, dy := q[0]-p[0], q[1]-p[1]
			for j := range k + 1 {
				s := 0.0
				for g, t := range gl.X {
					x, y := p[0]+t*dx, p[1]+t*dy
					fx, fy := r.eval(raw, rb, x, y)
					s += gl.W[g] * (fx*dy - fy*dx) * quadrature.Legendre01(j, t)
				}
				v[row*n+rb] = s
				row++
			}
		}
		for _, iq := range r.iq {
			c, mq := iq[0], r.pow[iq[1]]
			s := 0.0
			for m, p := range r.pow {
				if a := raw[(rb*2+c)*nm+m]; a != 0 {
					s += a * refMonoIntegral(p[0]+mq[0], p[1]+mq[1])
				}
			}
			v[row*n+rb] = s
			row++
		}
	}
	// Basis l = Σ_r C[r][l] raw_r with V C = I.
	c := make([]float64, n*n)
	for i := range n {
		c[i*n+i] = 1
	}
	ipiv := make([]int, n)
	vm := blas64.General{Rows: n, Cols: n, Stride: n, Data: v}
	if !lapack64.Getrf(vm, ipiv) {
		panic("fem: singular Raviart–Thomas DOF matrix") // broken internal invariant
	}
	lapack64.Getrs(blas.NoTrans, vm, blas64.General{Rows: n, Cols: n, Stride: n, Data: c}, ipiv)
	r.coef = make([]float64, n*2*nm)
	for l := range n {
		for rb := range n {
			a := c[rb*n+l]
			for q := range 2 * nm {
				r.coef[l*2*nm+q] += a * raw[rb*2*nm+q]
			}
		}
	}
	// Divergence on the monomials: ∂x̂ of component 0 plus ∂ŷ of component 1.
	r.div = make([]float64, n*nm)
	for l := range n {
		for m, p := range r.pow {
			if a := r.coef[(l*2+0)*nm+m]; p[0] > 0 {
				r.div[l*nm+mono(p[0]-1, p[1])] += float64(p[0]) * a
			}
			if a := r.coef[(l*2+1)*nm+m]; p[1] > 0 {
				r.div[l*nm+mono(p[0], p[1]-1)] += float64(p[1]) * a
			}
		}
	}
	return r
}

// eval returns the value of vector polynomial l of coefficient array c at
// the reference point (x, y).
func (r *rtReference) eval(c []float64, l int, x, y float64) (fx, fy float64) {
	for m, p := range r.pow {
		v := ipow(x, p[0]) * ipow(y, p[1])
		fx += c[(l*2+0)*r.nm+m] * v
		fy += c[(l*2+1)*r.nm+m] * v
	}
	return fx, fy
}

func ipow(x float64, n int) float64 {
	v := 1.0
	for range n {
		v *= x
	}
	return v
}

// monomials fills mono with x̂^a ŷ^b in the order of r.pow.
func (r *rtReference) monomials(x, y float64, mono []float64) {
	for m, p := range r.pow {
		mono[m] = ipow(x, p[0]) * ipow(y, p[1])
	}
}

// rtInterpLine is the number of Gauss–Legendre points per edge of
// InterpolateRT.
const rtInterpLine = 5

// RTElement evaluates the basis of an RTSpace on one triangle at a time,
// without allocating: Load a triangle, then ask for values and divergences
// at barycentric points. The values are those of the global basis
// functions (signs included) restricted to the triangle, in local DOF
// order. An RTElement is not safe for concurrent use.
type RTElement struct {
	s    *RTSpace
	ref  *rtReference
	k    int
	x0   [2]float64
	jac  [2][2]float64 // jac[r][c] = ∂x_r/∂x̂_c
	det  float64
	sign [15]float64
	dofs [15]int32
	mono [10]float64
}

// NewElement returns an RTElement of s with triangle 0 loaded.
func (s *RTSpace) NewElement() *RTElement {
	el := &RTElement{s: s, ref: s.ref}
	el.Load(0)
	return el
}

// Load makes triangle k the current triangle.
func (el *RTElement) Load(k int) {
	m := el.s.Mesh
	el.k = k
	a, b, c := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
	el.x0 = [2]float64{m.X[2*a], m.X[2*a+1]}
	el.jac = [2][2]float64{
		{m.X[2*b] - m.X[2*a], m.X[2*c] - m.X[2*a]},
		{m.X[2*b+1] - m.X[2*a+1], m.X[2*c+1] - m.X[2*a+1]},
	}
	el.det = el.jac[0][0]*el.jac[1][1] - el.jac[0][1]*el.jac[1][0]
	kk := el.s.Degree
	ne := int32(m.NumEdges())
	p := 0
	for i := range 3 {
		s := el.s.Sign(k, i)
		e := m.TriEdge[3*k+i]
		sj := s
		for j := range kk + 1 {
			el.sign[p] = sj
			el.dofs[p] = e*int32(kk+1) + int32(j)
			sj *= s
			p++
		}
	}
	ni := el.ref.ni
	for i := range ni {
		el.sign[p] = 1
		el.dofs[p] = ne*int32(kk+1) + int32(k*ni+i)
		p++
	}
}

// Triangle returns the current triangle.
func (el *RTElement) Triangle() int { return el.k }

// Area returns the area of the current triangle.
func (el *RTElement) Area() float64 { return 0.5 * el.det }

// DOFs returns the global DOFs of the current triangle in local order. The
// slice is owned by el and changes with Load.
func (el *RTElement) DOFs() []int32 { return el.dofs[:el.ref.n] }

// Signs returns the sign (±1) relating each local DOF to its global DOF:
// the global basis function is the sign times the local one. The slice is
// owned by el.
func (el *RTElement) Signs() []float64 { return el.sign[:el.ref.n] }

// Point returns the physical point of barycentric coordinates l.
func (el *RTElement) Point(l [3]float64) (x, y float64) {
	return el.x0[0] + el.jac[0][0]*l[1] + el.jac[0][1]*l[2], el.x0[1] + el.jac[1][0]*l[1] + el.jac[1][1]*l[2]
}

// Basis fills val[i] with the value of the global basis function of local
// DOF i at barycentric point l.
func (el *RTElement) Basis(l [3]float64, val [][2]float64) {
	r := el.ref
	nm := r.nm
	r.monomials(l[1], l[2], el.mono[:nm])
	for i := range r.n {
		var fx, fy float64
		c := r.coef[i*2*nm : (i+1)*2*nm]
		for m := range nm {
			fx += c[m] * el.mono[m]
			fy += c[nm+m] * el.mono[m]
		}
		s := el.sign[i] / el.det
		val[i] = [2]float64{s * (el.jac[0][0]*fx + el.jac[0][1]*fy), s * (el.jac[1][0]*fx + el.jac[1][1]*fy)}
	}
}

// Div fills div[i] with the divergence of the global basis function of
// local DOF i at barycentric point l.
func (el *RTElement) Div(l [3]float64, div []float64) {
	r := el.ref
	nm := r.nm
	r.monomials(l[1], l[2], el.mono[:nm])
	for i := range r.n {
		d := 0.0
		c := r.div[i*nm : (i+1)*nm]
		for m := range nm {
			d += c[m] * el.mono[m]
		}
		div[i] = el.sign[i] * d / el.det
	}
}

// RTFunction is a discrete vector field of an RTSpace: U holds one
// coefficient per DOF.
type RTFunction struct {
	Space *RTSpace
	U     []float64
}

// NewRTFunction returns the zero field of s.
func NewRTFunction(s *RTSpace) *RTFunction {
	return &RTFunction{Space: s, U: make([]float64, s.NumDOF())}
}

// Local returns the value of v on triangle k at barycentric coordinates l.
func (v *RTFunction) Local(k int, l [3]float64) (vx, vy float64) {
	el := v.Space.NewElement()
	el.Load(k)
	var val [15][2]float64
	el.Basis(l, val[:])
	for i, d := range el.DOFs() {
		vx += v.U[d] * val[i][0]
		vy += v.U[d] * val[i][1]
	}
	return vx, vy
}

// DivLocal returns the divergence of v on triangle k at barycentric
// coordinates l.
func (v *RTFunction) DivLocal(k int, l [3]float64) float64 {
	el := v.Space.NewElement()
	el.Load(k)
	var div [15]float64
	el.Div(l, div[:])
	s := 0.0
	for i, d := range el.DOFs() {
		s += v.U[d] * div[i]
	}
	return s
}

// InterpolateRT returns the Raviart–Thomas interpolant of the vector field
// f in s: the field with the DOFs of f, integrated by the Gauss–Legendre
// rule of rtInterpLine = 5 points (degree 9) on the edges and the Dunavant
// rule of degree 2k + 4 on the triangles (exact for fields of RT_k and for
// polynomial fields of degree ≤ k + 4). It returns an error wrapping
// ErrNotFinite if f is NaN or infinite at a quadrature point. It is linear
// in the size of the mesh.
func InterpolateRT(s *RTSpace, f func(x, y float64) (float64, float64)) (*RTFunction, error) {
	m := s.Mesh
	k := s.Degree
	v := NewRTFunction(s)
	gl, err := quadrature.GaussLegendre(rtInterpLine)
	if err != nil {
		return nil, err
	}
	bad := func(x, y, fx, fy float64) error {
		if math.IsNaN(fx+fy) || math.IsInf(fx+fy, 0) {
			return fmt.Errorf("fem: InterpolateRT: f(%g, %g) = (%g, %g): %w", x, y, fx, fy, ErrNotFinite)
		}
		return nil
	}
	for e := range m.NumEdges() {
		ax, ay := m.Vertex(int(m.Edge[2*e]))
		bx, by := m.Vertex(int(m.Edge[2*e+1]))
		dx, dy := bx-ax, by-ay // |E| n_E = (dy, −dx)
		for g, t := range gl.X {
			x, y := ax+t*dx, ay+t*dy
			fx, fy := f(x, y)
			if err := bad(x, y, fx, fy); err != nil {
				return nil, err
			}
			fn := gl.W[g] * (fx*dy - fy*dx)
			for j := range k + 1 {
				v.U[e*(k+1)+j] += fn * quadrature.Legendre01(j, t)
			}
		}
	}
	if k == 0 {
		return v, nil
	}
	rule, err := quadrature.ForTriangle(2*k + 4)
	if err != nil {
		return nil, err
	}
	el := s.NewElement()
	r := s.ref
	base := m.NumEdges() * (k + 1)
	for t := range m.NumTriangles() {
		el.Load(t)
		// ∫_T̂ v̂·q̂ dx̂ with v̂ = det J⁻¹ f = adj(J) f.
		j := el.jac
		for q := range rule.Len() {
			l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
			x, y := el.Point(l)
			fx, fy := f(x, y)
			if err := bad(x, y, fx, fy); err != nil {
				return nil, err
			}
			hx := j[1][1]*fx - j[0][1]*fy
			hy := -j[1][0]*fx + j[0][0]*fy
			r.monomials(l[1], l[2], el.mono[:r.nm])
			for i, iq := range r.iq {
				c := hx
				if iq[0] == 1 {
					c = hy
				}
				v.U[base+t*r.ni+i] += 0.5 * rule.W[q] * c * el.mono[iq[1]]
			}
		}
	}
	return v, nil
}
