package fem

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// rtTol is the arithmetic tolerance of the Raviart–Thomas checks, relative
// to the size of the fields (a few hundred units of rounding; common
// practice, no source).
const rtTol = 1e-12

// randomRT returns a field of s with DOFs uniform in [−1, 1].
func randomRT(s *RTSpace, seed uint64) *RTFunction {
	r := rand.New(rand.NewPCG(seed, 1))
	v := NewRTFunction(s)
	for i := range v.U {
		v.U[i] = 2*r.Float64() - 1
	}
	return v
}

// The divergence theorem on every triangle (Gauss, classical):
//
//	∫_T div v q = −∫_T v·∇q + ∫_∂T v·n q   for q ∈ {1, x, y, x², xy, y²},
//
// and ∫_T div v = Σ_E ±(DOF 0 of E), the fluxes through the edges.
func TestRTDivergenceTheorem(t *testing.T) {
	t.Parallel()
	m := distorted(t, 3)
	tri, _ := quadrature.ForTriangle(8)
	line, _ := quadrature.GaussLegendre(6)
	type poly struct {
		q    func(x, y float64) float64
		grad func(x, y float64) (float64, float64)
	}
	polys := []poly{
		{func(x, y float64) float64 { return 1 }, func(x, y float64) (float64, float64) { return 0, 0 }},
		{func(x, y float64) float64 { return x }, func(x, y float64) (float64, float64) { return 1, 0 }},
		{func(x, y float64) float64 { return y }, func(x, y float64) (float64, float64) { return 0, 1 }},
		{func(x, y float64) float64 { return x * x }, func(x, y float64) (float64, float64) { return 2 * x, 0 }},
		{func(x, y float64) float64 { return x * y }, func(x, y float64) (float64, float64) { return y, x }},
		{func(x, y float64) float64 { return y * y }, func(x, y float64) (float64, float64) { return 0, 2 * y }},
	}
	for k := range 3 {
		s, err := NewRTSpace(m, k)
		if err != nil {
			t.Fatal(err)
		}
		v := randomRT(s, uint64(k+1))
		el := s.NewElement()
		var val [15][2]float64
		var div [15]float64
		for tr := range m.NumTriangles() {
			el.Load(tr)
			area := el.Area()
			flux := 0.0
			for i := range 3 {
				e := int(m.TriEdge[3*tr+i])
				flux += s.Sign(tr, i) * v.U[e*(k+1)]
			}
			for pi, p := range polys {
				lhs, rhs := 0.0, 0.0
				for q := range tri.Len() {
					l := [3]float64{tri.Bary[3*q], tri.Bary[3*q+1], tri.Bary[3*q+2]}
					x, y := el.Point(l)
					el.Basis(l, val[:])
					el.Div(l, div[:])
					var vx, vy, dv float64
					for i, d := range el.DOFs() {
						vx += v.U[d] * val[i][0]
						vy += v.U[d] * val[i][1]
						dv += v.U[d] * div[i]
					}
					gx, gy := p.grad(x, y)
					lhs += tri.W[q] * area * dv * p.q(x, y)
					rhs -= tri.W[q] * area * (vx*gx + vy*gy)
				}
				for i := range 3 {
					a, b := int(m.Tri[3*tr+(i+1)%3]), int(m.Tri[3*tr+(i+2)%3])
					ax, ay := m.Vertex(a)
					bx, by := m.Vertex(b)
					for g, tt := range line.X {
						var l [3]float64
						l[(i+1)%3], l[(i+2)%3] = 1-tt, tt
						el.Basis(l, val[:])
						var vx, vy float64
						for j, d := range el.DOFs() {
							vx += v.U[d] * val[j][0]
							vy += v.U[d] * val[j][1]
						}
						x, y := ax+tt*(bx-ax), ay+tt*(by-ay)
						// |E| n = (b − a) turned clockwise, outward on a counter-clockwise triangle.
						rhs += line.W[g] * (vx*(by-ay) - vy*(bx-ax)) * p.q(x, y)
					}
				}
				if math.Abs(lhs-rhs) > rtTol*(1+math.Abs(lhs)) {
					t.Errorf("RT%d triangle %d q%d: ∫ div v q = %.15g, boundary form %.15g", k, tr, pi, lhs, rhs)
				}
				if pi == 0 && math.Abs(lhs-flux) > rtTol*(1+math.Abs(flux)) {
					t.Errorf("RT%d triangle %d: ∫ div v = %.15g, sum of edge fluxes %.15g", k, tr, lhs, flux)
				}
			}
		}
	}
}

// The normal component is continuous across every interior edge (the
// defining property of RT_k ⊂ H(div); Raviart and Thomas 1977), while the
// tangential component is not.
func TestRTNormalContinuity(t *testing.T) {
	t.Parallel()
	m := distorted(t, 3)
	for k := range 3 {
		s, _ := NewRTSpace(m, k)
		v := randomRT(s, uint64(10+k))
		tangentJump := 0.0
		for e := range m.NumEdges() {
			if m.IsBoundary(e) {
				continue
			}
			nx, ny := s.EdgeNormal(e)
			va, vb := m.Edge[2*e], m.Edge[2*e+1]
			var vals [2][3][2]float64
			for side := range 2 {
				tr := int(m.EdgeTri[2*e+side])
				for pi, tt := range []float64{0.1, 0.5, 0.77} {
					var l [3]float64
					for i := range 3 {
						switch m.Tri[3*tr+i] {
						case va:
							l[i] = 1 - tt
						case vb:
							l[i] = tt
						}
					}
					vx, vy := v.Local(tr, l)
					vals[side][pi] = [2]float64{vx, vy}
				}
			}
			for pi := range 3 {
				a, b := vals[0][pi], vals[1][pi]
				na, nb := a[0]*nx+a[1]*ny, b[0]*nx+b[1]*ny
				if math.Abs(na-nb) > rtTol*(1+math.Abs(na)) {
					t.Errorf("RT%d edge %d point %d: v·n = %.15g and %.15g on the two sides", k, e, pi, na, nb)
				}
				tangentJump = max(tangentJump, math.Abs(a[0]*ny-a[1]*nx-(b[0]*ny-b[1]*nx)))
			}
		}
		if tangentJump < 1e-3 {
			t.Errorf("RT%d: the tangential component of a random field is continuous (jump %g): the check cannot fail", k, tangentJump)
		}
	}
}

// Interpolation reproduces the fields of RT_k: p + x q with p ∈ P_k² and q
// homogeneous of degree k (the definition, Raviart and Thomas 1977), values
// and divergence, and does not reproduce a field of P_{k+1}² outside it.
func TestRTReproduces(t *testing.T) {
	t.Parallel()
	m := distorted(t, 2)
	r := rand.New(rand.NewPCG(3, 3))
	for k := range 3 {
		s, _ := NewRTSpace(m, k)
		// p: random coefficients on 1, x, y, x², xy, y² up to degree k;
		// q: on x^k, x^{k−1}y, ..., y^k.
		var pc [2][6]float64
		var qc [3]float64
		for c := range 2 {
			for i := range (k + 1) * (k + 2) / 2 {
				pc[c][i] = 2*r.Float64() - 1
			}
		}
		for i := range k + 1 {
			qc[i] = 2*r.Float64() - 1
		}
		mono := func(x, y float64) [6]float64 { return [6]float64{1, x, y, x * x, x * y, y * y} }
		hom := func(x, y float64) float64 { // q(x, y), homogeneous of degree k
			v := 0.0
			for i := range k + 1 {
				v += qc[i] * math.Pow(x, float64(k-i)) * math.Pow(y, float64(i))
			}
			return v
		}
		field := func(x, y float64) (float64, float64) {
			mm := mono(x, y)
			var fx, fy float64
			for i := range 6 {
				fx += pc[0][i] * mm[i]
				fy += pc[1][i] * mm[i]
			}
			q := hom(x, y)
			return fx + x*q, fy + y*q
		}
		// div(p + x q) = div p + 2q + x·∇q = div p + (k + 2) q (Euler).
		divField := func(x, y float64) float64 {
			d := pc[0][1] + pc[1][2] + 2*pc[0][3]*x + pc[0][4]*y + pc[1][4]*x + 2*pc[1][5]*y
			return d + float64(k+2)*hom(x, y)
		}
		v, err := InterpolateRT(s, field)
		if err != nil {
			t.Fatal(err)
		}
		worst, worstDiv := 0.0, 0.0
		for tr := range m.NumTriangles() {
			for _, l := range [][3]float64{{0.2, 0.3, 0.5}, {0.6, 0.1, 0.3}, {1, 0, 0}, {0, 0.5, 0.5}} {
				vx, vy := v.Local(tr, l)
				el := s.NewElement()
				el.Load(tr)
				x, y := el.Point(l)
				fx, fy := field(x, y)
				worst = max(worst, math.Hypot(vx-fx, vy-fy))
				worstDiv = max(worstDiv, math.Abs(v.DivLocal(tr, l)-divField(x, y)))
			}
		}
		if worst > rtTol || worstDiv > 10*rtTol {
			t.Errorf("RT%d: interpolant differs from the field by %g, divergence by %g", k, worst, worstDiv)
		}
		// A field of P_{k+1}² outside RT_k: y^{k+1} e_x.
		out, _ := InterpolateRT(s, func(x, y float64) (float64, float64) { return math.Pow(y, float64(k+1)), 0 })
		diff := 0.0
		for tr := range m.NumTriangles() {
			el := s.NewElement()
			el.Load(tr)
			_, y := el.Point([3]float64{0.2, 0.3, 0.5})
			vx, _ := out.Local(tr, [3]float64{0.2, 0.3, 0.5})
			diff = max(diff, math.Abs(vx-math.Pow(y, float64(k+1))))
		}
		if diff < 1e-4 {
			t.Errorf("RT%d reproduces y^%d e_x (difference %g), which is not in the space", k, k+1, diff)
		}
	}
}

// The DOF counts: RT_k has (k+1)(k+3) local DOFs (Raviart and Thomas 1977)
// and, globally, k+1 per edge and k(k+1) per triangle.
func TestRTCounts(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 3, 2)
	for k, want := range []int{3, 8, 15} {
		s, _ := NewRTSpace(m, k)
		if s.LocalDOFs() != want {
			t.Errorf("RT%d: %d local DOFs, want %d", k, s.LocalDOFs(), want)
		}
		if got := s.NumDOF(); got != m.NumEdges()*(k+1)+m.NumTriangles()*k*(k+1) {
			t.Errorf("RT%d: NumDOF = %d", k, got)
		}
	}
}

func TestRTBadInput(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 2, 2)
	if _, err := NewRTSpace(nil, 0); !errors.Is(err, ErrArgument) {
		t.Errorf("nil mesh: %v", err)
	}
	for _, k := range []int{-1, 3} {
		if _, err := NewRTSpace(m, k); !errors.Is(err, ErrArgument) {
			t.Errorf("degree %d: %v", k, err)
		}
	}
	s, _ := NewRTSpace(m, 1)
	if _, err := InterpolateRT(s, func(x, y float64) (float64, float64) { return math.NaN(), 0 }); !errors.Is(err, ErrNotFinite) {
		t.Errorf("NaN field: %v", err)
	}
}
