package estimate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// Dirichlet lifting quadrature: panels per edge, Gauss–Legendre points per
// panel, and the step of the fourth-order central differences of g_D,
// relative to the edge length (truncation error of order step⁴, rounding
// of order 1e-16/step; common practice, no source).
const (
	liftPanels = 8
	liftPoints = 5
	liftStep   = 1e-3
)

// termCount is the number of per-triangle terms indicators stores: flux²,
// oscillation², Neumann², η_T, Dirichlet², ‖ρ‖²_T, Osc2.
const termCount = 7

// indicators evaluates the terms of the bound on every triangle and fills
// dst.
func (eq *equilibration) indicators(dst *Indicators) (EquilibratedParts, error) {
	m := eq.m
	nt := m.NumTriangles()
	terms := eq.take(termCount * nt)
	panel, err := quadrature.GaussLegendre(liftPoints)
	if err != nil {
		return EquilibratedParts{}, err
	}
	err = parallel.For(nt, 256, func(lo, hi int) error {
		tw := newTermWork(eq, panel)
		for t := lo; t < hi; t++ {
			if err := eq.terms(tw, t, terms[termCount*t:termCount*(t+1)]); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return EquilibratedParts{}, err
	}
	var parts EquilibratedParts
	var rho2, amin = 0.0, math.Inf(1)
	for t := range nt {
		v := terms[termCount*t : termCount*(t+1)]
		parts.Flux += v[0]
		parts.Oscillation += v[1]
		parts.Neumann += v[2]
		parts.Residual += v[3] * v[3]
		parts.Dirichlet += v[4]
		rho2 += v[5]
		_, at := eq.co.AtMin(m.Region[t])
		amin = min(amin, at)
	}
	parts.Flux = math.Sqrt(parts.Flux)
	parts.Oscillation = math.Sqrt(parts.Oscillation)
	parts.Neumann = math.Sqrt(parts.Neumann)
	parts.Residual = math.Sqrt(parts.Residual)
	parts.Dirichlet = math.Sqrt(parts.Dirichlet)
	if rho2-rho2 != 0 {
		return EquilibratedParts{}, fmt.Errorf("estimate: Equilibrated: the algebraic residual ‖ρ‖² = %g is beyond the range of float64 (the data or the solution are too large): %w", rho2, ErrNotFinite)
	}
	var tshare []float64 // the tree bound's shares, when it is the smaller
	if rho2 > 0 {
		best := math.Inf(1)
		if c, ok := eq.algebraicConstant(amin); ok {
			best = c * math.Sqrt(rho2)
		}
		sh := eq.take(nt)
		if et, ok := eq.treeBound(sh); ok && et < best {
			best, tshare = et, sh
		}
		if math.IsInf(best, 1) {
			return EquilibratedParts{}, fmt.Errorf("estimate: Equilibrated: the solution is not the exact discrete solution (‖ρ‖ = %.3g), no triangle path reaches a Dirichlet edge or a Robin edge of constant α > 0, there is no reaction and no Friedrichs constant is known: %w", math.Sqrt(rho2), ErrUnsupported)
		}
		parts.Algebraic = best
	}
	alg, res := parts.Algebraic, parts.Residual
	share := alg*alg + 2*alg*res
	for t := range nt {
		v := terms[termCount*t : termCount*(t+1)]
		e2 := v[3]*v[3] + v[4]
		switch {
		case tshare != nil:
			e2 += share * tshare[t]
		case rho2 > 0:
			e2 += share * (v[5] / rho2) // the ratio first: share·v[5] may overflow
		}
		dst.Eta2[t] = e2
		dst.Osc2[t] = v[6]
	}
	parts.Total = math.Sqrt((res+alg)*(res+alg) + parts.Dirichlet*parts.Dirichlet)
	return parts, nil
}

// algebraicConstant returns C_alg with ‖φ‖ ≤ C_alg |||φ||| on H¹_D, and
// whether one is known.
func (eq *equilibration) algebraicConstant(amin float64) (float64, bool) {
	c, ok := math.Inf(1), false
	if eq.p.C > 0 {
		c, ok = 1/math.Sqrt(eq.p.C), true
	}
	cf := eq.q.Friedrichs
	if cf == 0 && eq.allDirichlet() {
		m := eq.m
		x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for i := range m.NumVertices() {
			x, y := m.Vertex(i)
			x0, x1, y0, y1 = min(x0, x), max(x1, x), min(y0, y), max(y1, y)
		}
		lx, ly := x1-x0, y1-y0
		cf = 1 / (math.Pi * math.Sqrt(1/(lx*lx)+1/(ly*ly)))
	}
	if cf > 0 {
		c, ok = min(c, cf/math.Sqrt(amin)), true
	}
	return c, ok
}

// allDirichlet reports whether every boundary edge is a Dirichlet edge.
func (eq *equilibration) allDirichlet() bool {
	m := eq.m
	for e := range m.NumEdges() {
		if m.IsBoundary(e) && !eq.dirE[e] {
			return false
		}
	}
	return true
}

// termWork is the scratch of one goroutine evaluating the terms.
type termWork struct {
	eq    *equilibration
	el    *fem.RTElement
	ev    *fem.Evaluator
	panel *quadrature.Line
	val   [15][2]float64
	c     [15]float64
	mono  [6]float64
	gram  [3][36]float64 // per degree d: the LU factors of the Gram matrix of the monomials under the rule
	ipiv  [3][6]int
	gdone [3]bool // gram[d] is set
	proj  [6]float64
}

func newTermWork(eq *equilibration, panel *quadrature.Line) *termWork {
	return &termWork{eq: eq, el: eq.rt.NewElement(), ev: fem.NewEvaluator(eq.u), panel: panel}
}

// triangle writes the terms of triangle t into v (see termCount).
func (tw *termWork) triangle(t int, v []float64) error {
	eq := tw.eq
	rule, k := eq.rule, eq.k
	nq := rule.Len()
	tw.el.Load(t)
	tw.ev.Load(t)
	eq.local(t, tw.c[:eq.nloc])
	d := eq.co.At(eq.m.Region[t])
	det := d.XX*d.YY - d.XY*d.XY
	ixx, ixy, iyy := d.YY/det, -d.XY/det, d.XX/det
	area := tw.ev.Area()
	flux2 := 0.0
	for q := range nq {
		l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
		tw.el.Basis(l, tw.val[:])
		_, gx, gy := tw.ev.Eval(l)
		sx, sy := d.Apply(gx, gy)
		for i := range eq.nloc {
			sx += tw.c[i] * tw.val[i][0]
			sy += tw.c[i] * tw.val[i][1]
		}
		flux2 += rule.W[q] * area * (sx*(ixx*sx+ixy*sy) + sy*(ixy*sx+iyy*sy))
	}
	f := eq.fq[t*nq : (t+1)*nq]
	osc := tw.projectionError(f, k, area)
	oscConv := tw.projectionError(f, k-1, area)
	return tw.finish(t, flux2, osc, oscConv, area, v)
}

// finish writes the terms of triangle t into v from ‖a^{−½}(σ_h +
// a∇u_h)‖²_T (flux2), ‖f − Π_p f‖²_T (osc) and ‖f − Π_{p−1} f‖²_T
// (oscConv), adding the boundary terms.
func (tw *termWork) finish(t int, flux2, osc, oscConv, area float64, v []float64) error {
	eq := tw.eq
	m, p := eq.m, eq.p
	d, at := eq.co.AtMin(m.Region[t])
	h := m.Diameter(t)
	mt := h / (math.Pi * math.Sqrt(at))
	if p.C > 0 {
		mt = min(mt, 1/math.Sqrt(p.C))
	}
	neu, err := tw.neumann(t, h, at, area)
	if err != nil {
		return err
	}
	dir := 0.0
	for i := range 3 {
		if e := m.TriEdge[3*t+i]; eq.dirE[e] {
			if tw.ev.Triangle() != t {
				tw.ev.Load(t)
			}
			v, err := tw.lift(t, i, d)
			if err != nil {
				return err
			}
			dir += v
		}
	}
	var r [3]float64
	for i := range 3 {
		r[i] = eq.rtilde[m.Tri[3*t+i]]
	}
	sr := r[0] + r[1] + r[2]
	v[0] = flux2
	v[1] = mt * mt * osc
	v[2] = neu * neu
	v[3] = math.Sqrt(flux2) + mt*math.Sqrt(osc) + neu
	v[4] = dir
	v[5] = area / 12 * (r[0]*r[0] + r[1]*r[1] + r[2]*r[2] + sr*sr)
	v[6] = h * h * oscConv
	return nil
}

// projectionError returns ‖f − Π_d f‖²_T for f at the rule's points, with
// Π_d the L² projection onto P_d(T), computed with the rule.
func (tw *termWork) projectionError(f []float64, d int, area float64) float64 {
	rule := tw.eq.rule
	n := numMono(d)
	gram, ipiv := tw.gram[d][:n*n], tw.ipiv[d][:n]
	g := blas64.General{Rows: n, Cols: n, Stride: n, Data: gram}
	if !tw.gdone[d] {
		// The Gram matrix does not depend on the triangle: factorised once.
		clear(gram)
		for q := range f {
			monomials(rule.Bary[3*q+1], rule.Bary[3*q+2], d, tw.mono[:])
			for i := range n {
				for j := range n {
					gram[i*n+j] += rule.W[q] * tw.mono[i] * tw.mono[j]
				}
			}
		}
		if !lapack64.Getrf(g, ipiv) {
			panic("estimate: singular Gram matrix of monomials") // broken internal invariant
		}
		tw.gdone[d] = true
	}
	clear(tw.proj[:n])
	for q, fv := range f {
		monomials(rule.Bary[3*q+1], rule.Bary[3*q+2], d, tw.mono[:])
		for i := range n {
			tw.proj[i] += rule.W[q] * fv * tw.mono[i]
		}
	}
	lapack64.Getrs(blas.NoTrans, g, blas64.General{Rows: n, Cols: 1, Stride: 1, Data: tw.proj[:n]}, ipiv)
	s := 0.0
	for q, fv := range f {
		monomials(rule.Bary[3*q+1], rule.Bary[3*q+2], d, tw.mono[:])
		pv := 0.0
		for i := range n {
			pv += tw.proj[i] * tw.mono[i]
		}
		s += rule.W[q] * (fv - pv) * (fv - pv)
	}
	return s * area
}

// neumann returns Σ_E C_{T,E} ‖g − Π_p g‖_E over the Neumann edges of
// triangle t with data (g = g_N) and its Robin edges (g = g_R − α u_h).
func (tw *termWork) neumann(t int, h, at, area float64) (float64, error) {
	eq := tw.eq
	m, k, line := eq.m, eq.k, eq.line
	sum := 0.0
	for i := range 3 {
		e := int(m.TriEdge[3*t+i])
		gn, le := eq.neumannEdge(e)
		if gn == nil {
			continue
		}
		var c [3]float64
		for j := range k + 1 {
			c[j] = (eq.neu[(2*e)*(k+1)+j] + eq.neu[(2*e+1)*(k+1)+j]) * float64(2*j+1) / le
		}
		s := 0.0
		for g, tt := range line.X {
			v, err := gn(tt)
			if err != nil {
				return 0, err
			}
			for j := range k + 1 {
				v -= c[j] * quadrature.Legendre01(j, tt)
			}
			s += line.W[g] * le * v * v
		}
		cte := h * math.Sqrt(le/(at*area)*(1/(math.Pi*math.Pi)+1/math.Pi))
		sum += cte * math.Sqrt(s)
	}
	return sum, nil
}

// lift returns |||w_E|||²_T for the Dirichlet edge E opposite local vertex
// i of triangle t (see Equilibrated).
func (tw *termWork) lift(t, i int, d fem.Tensor) (float64, error) {
	eq := tw.eq
	m, p := eq.m, eq.p
	ia, ib := (i+1)%3, (i+2)%3
	A, B := int(m.Tri[3*t+ia]), int(m.Tri[3*t+ib])
	ax, ay := m.Vertex(A)
	bx, by := m.Vertex(B)
	tag := m.EdgeTag[m.TriEdge[3*t+i]]
	gd := p.Dirichlet[tag]
	g := func(s float64) (float64, error) {
		if gd == nil {
			return 0, nil
		}
		x, y := ax+s*(bx-ax), ay+s*(by-ay)
		v := gd(x, y)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("estimate: Equilibrated: boundary tag %d at (%g, %g): Dirichlet data %g: %w", tag, x, y, v, ErrNotFinite)
		}
		return v, nil
	}
	uh := func(s float64) (v, dv float64) {
		var l [3]float64
		l[ia], l[ib] = 1-s, s
		v, gx, gy := tw.ev.Eval(l)
		return v, gx*(bx-ax) + gy*(by-ay)
	}
	gA, err := g(0)
	if err != nil {
		return 0, err
	}
	gB, err := g(1)
	if err != nil {
		return 0, err
	}
	uA, _ := uh(0)
	uB, _ := uh(1)
	dA, dB := gA-uA, gB-uB
	cx, cy := tw.ev.BaryGrad(i)
	axg, ayg := tw.ev.BaryGrad(ia)
	bxg, byg := tw.ev.BaryGrad(ib)
	grad2, val2 := 0.0, 0.0
	for pn := range liftPanels {
		for q, x := range tw.panel.X {
			s := (float64(pn) + x) / liftPanels
			wq := tw.panel.W[q] / liftPanels
			gv, err := g(s)
			if err != nil {
				return 0, err
			}
			var gd [4]float64 // g at s − 2τ, s − τ, s + τ, s + 2τ
			for j, o := range [4]float64{-2, -1, 1, 2} {
				if gd[j], err = g(s + o*liftStep); err != nil {
					return 0, err
				}
			}
			u, du := uh(s)
			del := gv - u - ((1-s)*dA + s*dB)
			ddel := (gd[0]-8*gd[1]+8*gd[2]-gd[3])/(12*liftStep) - du - (dB - dA)
			wx := -del*cx + ddel*((1-s)*bxg-s*axg)
			wy := -del*cy + ddel*((1-s)*byg-s*ayg)
			fx, fy := d.Apply(wx, wy)
			grad2 += wq * (wx*fx + wy*fy)
			val2 += wq * del * del
		}
	}
	area := tw.ev.Area()
	return area*grad2 + p.C*area/2*val2, nil
}
