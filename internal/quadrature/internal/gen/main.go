// Command gen polishes the symmetric triangle quadrature rules of
// D. A. Dunavant, "High degree efficient symmetrical Gaussian quadrature
// rules for the triangle", Int. J. Numer. Methods Eng. 21 (1985) 1129–1148,
// and writes them as Go source for package quadrature.
//
// The published rules are printed to 15 significant digits. Starting from
// those values, gen runs a Gauss–Newton iteration on the moment equations
//
//	Σ_k w_k x_k^i y_k^j = i! j! / (i+j+2)! · 2,   i+j ≤ degree,
//
// (the weights are normalised to sum to 1, hence the factor 2 = 1/area of the
// reference triangle (0,0),(1,0),(0,1)), with x = λ1 and y = λ2, until the
// orbit parameters stop changing in float64, and prints them with full
// float64 precision. Jacobians are computed by complex-step differentiation,
// which is exact to rounding for these polynomial residuals.
//
// Usage (from internal/quadrature, see the go:generate line in triangle.go):
//
//	go run ./internal/gen -o triangle_data.go
package main

import (
	"bytes"
	"flag"
	"fmt"
	"go/format"
	"log"
	"math"
	"math/big"
	"os"
	"strconv"

	"gonum.org/v1/gonum/mat"
)

// Orbit kinds, matching package quadrature.
const (
	kindCentroid = iota // (1/3, 1/3, 1/3)
	kindS21             // (a, b, b), a = 1 - 2b, 3 points
	kindS111            // (a, b, c), a = 1 - b - c, 6 points
)

// seedOrbit is one orbit as published: b and c are the free barycentric
// coordinates (c unused for kindS21, both unused for kindCentroid).
type seedOrbit struct {
	kind int
	b, c float64
	w    float64
}

type seedRule struct {
	degree int
	orbits []seedOrbit
}

// seeds are Dunavant's published values (15 digits). For the (a,b,b) orbits
// b is the repeated coordinate; for (a,b,c) orbits b and c are the two
// smaller coordinates as printed, a = 1 - b - c.
var seeds = []seedRule{
	{1, []seedOrbit{{kindCentroid, 0, 0, 1}}},
	{2, []seedOrbit{{kindS21, 1.0 / 6, 0, 1.0 / 3}}},
	{4, []seedOrbit{
		{kindS21, 0.445948490915965, 0, 0.223381589678011},
		{kindS21, 0.091576213509771, 0, 0.109951743655322},
	}},
	{5, []seedOrbit{
		{kindCentroid, 0, 0, 0.225},
		{kindS21, 0.470142064105115, 0, 0.132394152788506},
		{kindS21, 0.101286507323456, 0, 0.125939180544827},
	}},
	{6, []seedOrbit{
		{kindS21, 0.249286745170910, 0, 0.116786275726379},
		{kindS21, 0.063089014491502, 0, 0.050844906370207},
		{kindS111, 0.310352451033784, 0.053145049844817, 0.082851075618374},
	}},
	{8, []seedOrbit{
		{kindCentroid, 0, 0, 0.144315607677787},
		{kindS21, 0.459292588292723, 0, 0.095091634267285},
		{kindS21, 0.170569307751760, 0, 0.103217370534718},
		{kindS21, 0.050547228317031, 0, 0.032458497623198},
		{kindS111, 0.263112829634638, 0.008394777409958, 0.027230314174435},
	}},
	{9, []seedOrbit{
		{kindCentroid, 0, 0, 0.097135796282799},
		{kindS21, 0.489682519198738, 0, 0.031334700227139},
		{kindS21, 0.437089591492937, 0, 0.077827541004774},
		{kindS21, 0.188203535619033, 0, 0.079647738927210},
		{kindS21, 0.044729513394453, 0, 0.025577675658698},
		{kindS111, 0.221962989160766, 0.036838412054736, 0.043283539377289},
	}},
	{10, []seedOrbit{
		{kindCentroid, 0, 0, 0.090817990382754},
		{kindS21, 0.485577633383657, 0, 0.036725957756467},
		{kindS21, 0.109481575485037, 0, 0.045321059435528},
		{kindS111, 0.307939838764121, 0.141707219414880, 0.072757916845420},
		{kindS111, 0.246672560639903, 0.025003534762686, 0.028327242531057},
		{kindS111, 0.066803251012200, 0.009540815400299, 0.009421666963733},
	}},
}

// params flattens the free parameters of a rule.
func params(r seedRule) []float64 {
	var p []float64
	for _, o := range r.orbits {
		switch o.kind {
		case kindCentroid:
			p = append(p, o.w)
		case kindS21:
			p = append(p, o.b, o.w)
		case kindS111:
			p = append(p, o.b, o.c, o.w)
		}
	}
	return p
}

// unflatten writes parameters back into the orbits of r.
func unflatten(r seedRule, p []float64) seedRule {
	out := seedRule{degree: r.degree, orbits: make([]seedOrbit, len(r.orbits))}
	k := 0
	for i, o := range r.orbits {
		switch o.kind {
		case kindCentroid:
			o.w = p[k]
			k++
		case kindS21:
			o.b, o.w = p[k], p[k+1]
			k += 2
		case kindS111:
			o.b, o.c, o.w = p[k], p[k+1], p[k+2]
			k += 3
		}
		out.orbits[i] = o
	}
	return out
}

// points expands the orbits with complex parameters into (λ0, λ1, λ2, w).
func points(r seedRule, p []complex128) [][4]complex128 {
	var pts [][4]complex128
	k := 0
	for _, o := range r.orbits {
		switch o.kind {
		case kindCentroid:
			t := complex(1.0/3, 0)
			pts = append(pts, [4]complex128{t, t, t, p[k]})
			k++
		case kindS21:
			b, w := p[k], p[k+1]
			a := 1 - 2*b
			pts = append(pts,
				[4]complex128{a, b, b, w},
				[4]complex128{b, a, b, w},
				[4]complex128{b, b, a, w})
			k += 2
		case kindS111:
			b, c, w := p[k], p[k+1], p[k+2]
			a := 1 - b - c
			pts = append(pts,
				[4]complex128{a, b, c, w},
				[4]complex128{a, c, b, w},
				[4]complex128{b, a, c, w},
				[4]complex128{b, c, a, w},
				[4]complex128{c, a, b, w},
				[4]complex128{c, b, a, w})
			k += 3
		}
	}
	return pts
}

// exact returns the normalised moment 2 · i! j! / (i+j+2)! of x^i y^j over the
// reference triangle (classical formula).
func exact(i, j int) float64 {
	v := 2.0
	for k := 1; k <= i; k++ {
		v *= float64(k)
	}
	for k := 1; k <= j; k++ {
		v *= float64(k)
	}
	for k := 1; k <= i+j+2; k++ {
		v /= float64(k)
	}
	return v
}

func powc(z complex128, n int) complex128 {
	r := complex(1, 0)
	for range n {
		r *= z
	}
	return r
}

// realResiduals evaluates residuals with integer powers (no cmplx.Pow
// rounding) in float64.
func realResiduals(deg int, r seedRule, p []float64) []float64 {
	pc := make([]complex128, len(p))
	for i, v := range p {
		pc[i] = complex(v, 0)
	}
	pts := points(r, pc)
	var res []float64
	for d := 0; d <= deg; d++ {
		for i := 0; i <= d; i++ {
			j := d - i
			var s float64
			for _, q := range pts {
				s += real(q[3]) * real(powc(q[1], i)) * real(powc(q[2], j))
			}
			e := exact(i, j)
			res = append(res, (s-e)/e)
		}
	}
	return res
}

// jacobian by complex step: ∂r/∂p_k = Im r(p + i h e_k) / h.
func jacobian(deg int, r seedRule, p []float64) *mat.Dense {
	const h = 1e-30
	n := len(p)
	var J *mat.Dense
	for k := 0; k < n; k++ {
		pc := make([]complex128, n)
		for i, v := range p {
			pc[i] = complex(v, 0)
		}
		pc[k] += complex(0, h)
		col := complexStepResiduals(deg, r, pc)
		if J == nil {
			J = mat.NewDense(len(col), n, nil)
		}
		for i, v := range col {
			J.Set(i, k, imag(v)/h)
		}
	}
	return J
}

func complexStepResiduals(deg int, r seedRule, p []complex128) []complex128 {
	pts := points(r, p)
	var res []complex128
	for d := 0; d <= deg; d++ {
		for i := 0; i <= d; i++ {
			j := d - i
			var s complex128
			for _, q := range pts {
				s += q[3] * powc(q[1], i) * powc(q[2], j)
			}
			e := exact(i, j)
			res = append(res, (s-complex(e, 0))/complex(e, 0))
		}
	}
	return res
}

func maxAbs(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// prec is the working precision (bits) of the residual evaluation.
const prec = 256

// bigResiduals evaluates the relative moment residuals in prec-bit
// arithmetic for high-precision parameters p.
func bigResiduals(r seedRule, p []*big.Float) []float64 {
	nf := func(v float64) *big.Float { return new(big.Float).SetPrec(prec).SetFloat64(v) }
	one := nf(1)
	third := new(big.Float).SetPrec(prec).Quo(one, nf(3))
	type pt struct{ x, y, w *big.Float }
	var pts []pt
	k := 0
	for _, o := range r.orbits {
		switch o.kind {
		case kindCentroid:
			pts = append(pts, pt{third, third, p[k]})
			k++
		case kindS21:
			b, w := p[k], p[k+1]
			a := new(big.Float).SetPrec(prec).Sub(one, new(big.Float).SetPrec(prec).Mul(nf(2), b))
			// x = λ1, y = λ2 for the permutations (a,b,b), (b,a,b), (b,b,a).
			pts = append(pts, pt{b, b, w}, pt{a, b, w}, pt{b, a, w})
			k += 2
		case kindS111:
			b, c, w := p[k], p[k+1], p[k+2]
			a := new(big.Float).SetPrec(prec).Sub(one, b)
			a.Sub(a, c)
			pts = append(pts, pt{b, c, w}, pt{c, b, w}, pt{a, c, w}, pt{c, a, w}, pt{a, b, w}, pt{b, a, w})
			k += 3
		}
	}
	var res []float64
	for d := 0; d <= r.degree; d++ {
		for i := 0; i <= d; i++ {
			j := d - i
			s := nf(0)
			for _, q := range pts {
				t := new(big.Float).SetPrec(prec).Set(q.w)
				for range i {
					t.Mul(t, q.x)
				}
				for range j {
					t.Mul(t, q.y)
				}
				s.Add(s, t)
			}
			e := nf(2)
			for m := 1; m <= i; m++ {
				e.Mul(e, nf(float64(m)))
			}
			for m := 1; m <= j; m++ {
				e.Mul(e, nf(float64(m)))
			}
			for m := 1; m <= i+j+2; m++ {
				e.Quo(e, nf(float64(m)))
			}
			s.Sub(s, e)
			s.Quo(s, e)
			v, _ := s.Float64()
			res = append(res, v)
		}
	}
	return res
}

// polish runs Gauss–Newton on the moment equations: residuals in prec-bit
// arithmetic, Jacobian in float64 (complex step), parameters accumulated in
// prec-bit arithmetic and rounded to float64 at the end.
func polish(r seedRule) (seedRule, float64, float64, []float64) {
	p0 := params(r)
	pb := make([]*big.Float, len(p0))
	for i, v := range p0 {
		pb[i] = new(big.Float).SetPrec(prec).SetFloat64(v)
	}
	before := maxAbs(realResiduals(r.degree, r, p0))
	for range 100 {
		res := bigResiduals(r, pb)
		if maxAbs(res) < 1e-40 {
			break
		}
		p := make([]float64, len(pb))
		for i := range pb {
			p[i], _ = pb[i].Float64()
		}
		J := jacobian(r.degree, r, p)
		rhs := mat.NewVecDense(len(res), nil)
		for i, v := range res {
			rhs.SetVec(i, -v)
		}
		var dp mat.VecDense
		if err := dp.SolveVec(J, rhs); err != nil {
			log.Fatalf("degree %d: least squares: %v", r.degree, err)
		}
		for i := range pb {
			pb[i].Add(pb[i], new(big.Float).SetPrec(prec).SetFloat64(dp.AtVec(i)))
		}
	}
	if m := maxAbs(bigResiduals(r, pb)); m > 1e-30 {
		log.Fatalf("degree %d: Gauss–Newton did not converge (residual %g)", r.degree, m)
	}
	p := make([]float64, len(pb))
	delta := make([]float64, len(pb))
	for i := range pb {
		p[i], _ = pb[i].Float64()
		delta[i] = p[i] - p0[i]
	}
	after := maxAbs(realResiduals(r.degree, r, p))
	return unflatten(r, p), before, after, delta
}

func ff(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func main() {
	out := flag.String("o", "", "output file (default stdout)")
	flag.Parse()

	var buf bytes.Buffer
	buf.WriteString(`// Code generated by "go run ./internal/gen"; DO NOT EDIT.

package quadrature

// dunavantRules are the symmetric triangle rules of D. A. Dunavant,
// "High degree efficient symmetrical Gaussian quadrature rules for the
// triangle", Int. J. Numer. Methods Eng. 21 (1985) 1129–1148, without the
// degree 3 and degree 7 rules (negative weights). The values were polished
// from Dunavant's published 15-digit values by a Gauss–Newton iteration on
// the moment equations (see internal/gen) and are printed with full float64
// precision. Each orbit lists (λ0, λ1, λ2, w); λ0 was computed as 1 - λ1 - λ2.
var dunavantRules = []orbitRule{
`)
	for _, s := range seeds {
		r, before, after, delta := polish(s)
		fmt.Fprintf(os.Stderr, "degree %2d: max rel moment residual (float64) seed %.3g -> polished %.3g; Δparam %.3g\n",
			s.degree, before, after, delta)
		fmt.Fprintf(&buf, "\t{degree: %d, orbits: []orbit{\n", r.degree)
		for _, o := range r.orbits {
			switch o.kind {
			case kindCentroid:
				fmt.Fprintf(&buf, "\t\t{kind: centroid, bary: [3]float64{1.0 / 3, 1.0 / 3, 1.0 / 3}, w: %s},\n", ff(o.w))
			case kindS21:
				a := 1 - 2*o.b
				fmt.Fprintf(&buf, "\t\t{kind: s21, bary: [3]float64{%s, %s, %s}, w: %s},\n", ff(a), ff(o.b), ff(o.b), ff(o.w))
			case kindS111:
				a := 1 - o.b - o.c
				fmt.Fprintf(&buf, "\t\t{kind: s111, bary: [3]float64{%s, %s, %s}, w: %s},\n", ff(a), ff(o.b), ff(o.c), ff(o.w))
			}
		}
		buf.WriteString("\t}},\n")
	}
	buf.WriteString("}\n")
	src, err := format.Source(buf.Bytes())
	if err != nil {
		log.Fatalf("format: %v\n%s", err, buf.Bytes())
	}
	if *out == "" {
		os.Stdout.Write(src)
		return
	}
	if err := os.WriteFile(*out, src, 0o644); err != nil {
		log.Fatal(err)
	}
}
