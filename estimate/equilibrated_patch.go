package estimate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"

	"github.com/posteriori-fem/posteriori/fem"
)

// patchWork is the scratch of one goroutine solving patch problems.
type patchWork struct {
	eq   *equilibration
	el   *fem.RTElement
	ev   *fem.Evaluator
	edge []int32   // the patch's edges at the vertex
	ebas []int     // first system index of each edge's moments, −1 if prescribed
	efix []float64 // prescribed moments, k+1 per edge
	kkt  []float64
	rhs  []float64
	ipiv []int
	sys  []int // system index of each local DOF of the current triangle: ≥ 0 free, −1 prescribed, −2 absent
	fix  []float64
	mloc [15 * 15]float64
	bloc [6 * 15]float64
	floc [15]float64
	gloc [6]float64
	val  [15][2]float64
	div  [15]float64
	mono [6]float64
}

func newPatchWork(eq *equilibration) *patchWork {
	return &patchWork{eq: eq, el: eq.rt.NewElement(), ev: fem.NewEvaluator(eq.u)}
}

// numMono returns the number of monomials of degree ≤ d in two variables.
func numMono(d int) int { return (d + 1) * (d + 2) / 2 }

// monomials fills mono with the monomials of degree ≤ d of (x, y), in the
// order 1, x, y, x², xy, y².
func monomials(x, y float64, d int, mono []float64) {
	mono[0] = 1
	if d >= 1 {
		mono[1], mono[2] = x, y
	}
	if d >= 2 {
		mono[3], mono[4], mono[5] = x*x, x*y, y*y
	}
}

// solve solves the patch problem of vertex a and writes σ_a into the
// vertex slots of its triangles.
func (w *patchWork) solve(a int) error {
	eq := w.eq
	k := eq.k
	tris := eq.vtri[eq.vstart[a]:eq.vstart[a+1]]
	nm := numMono(k)
	ni := k * (k + 1)
	nflux := w.gather(a, tris)
	ibase := nflux
	nflux += len(tris) * ni
	drop := 0
	if eq.free[a] {
		drop = 1 // the constant multiplier of the first triangle: its equation follows from the others
	}
	n := nflux + len(tris)*nm - drop
	w.kkt = resize(w.kkt, n*n)
	w.rhs = resize(w.rhs, n)
	clear(w.kkt)
	clear(w.rhs)
	if cap(w.ipiv) < n {
		w.ipiv = make([]int, n)
	}
	nloc := eq.nloc
	if cap(w.sys) < nloc {
		w.sys = make([]int, nloc)
		w.fix = make([]float64, nloc)
	}
	sys, fix := w.sys[:nloc], w.fix[:nloc]
	for pt, t := range tris {
		ia := w.local(int(t), a, pt, ibase, sys, fix)
		w.element(int(t), a, ia)
		for i := range nloc {
			if sys[i] < 0 {
				continue
			}
			I := sys[i]
			w.rhs[I] += w.floc[i]
			for j := range nloc {
				mij := w.mloc[min(i, j)*nloc+max(i, j)]
				switch {
				case sys[j] >= 0:
					w.kkt[I*n+sys[j]] += mij
				case sys[j] == -1:
					w.rhs[I] -= mij * fix[j]
				}
			}
		}
		for q := range nm {
			if pt == 0 && q == 0 && drop == 1 {
				continue
			}
			J := nflux + pt*nm + q - drop
			w.rhs[J] += w.gloc[q]
			for i := range nloc {
				b := w.bloc[q*nloc+i]
				switch {
				case sys[i] >= 0:
					w.kkt[J*n+sys[i]] += b
					w.kkt[sys[i]*n+J] += b
				case sys[i] == -1:
					w.rhs[J] -= b * fix[i]
				}
			}
		}
	}
	g := blas64.General{Rows: n, Cols: n, Stride: n, Data: w.kkt}
	if !lapack64.Getrf(g, w.ipiv[:n]) {
		return fmt.Errorf("estimate: Equilibrated: the patch problem of vertex %d is singular: %w", a, ErrNotFinite)
	}
	lapack64.Getrs(blas.NoTrans, g, blas64.General{Rows: n, Cols: 1, Stride: 1, Data: w.rhs}, w.ipiv[:n])
	for pt, t := range tris {
		ia := w.local(int(t), a, pt, ibase, sys, fix)
		out := eq.sig[(3*int(t)+ia)*nloc : (3*int(t)+ia+1)*nloc]
		for i := range nloc {
			switch {
			case sys[i] >= 0:
				out[i] = w.rhs[sys[i]]
			case sys[i] == -1:
				out[i] = fix[i]
			default:
				out[i] = 0
			}
		}
	}
	for _, v := range w.rhs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("estimate: Equilibrated: the patch problem of vertex %d: %w", a, ErrNotFinite)
		}
	}
	return nil
}

// gather lists the edges of the patch of vertex a at a (w.edge), with the
// first system index of the moments of each free edge (w.ebas, −1 if
// prescribed) and the prescribed moments (w.efix), and returns the number
// of free edge moments.
func (w *patchWork) gather(a int, tris []int32) int {
	eq := w.eq
	m, k := eq.m, eq.k
	// The edges at a: free unless a Neumann (or natural) boundary edge.
	w.edge, w.ebas, w.efix = w.edge[:0], w.ebas[:0], w.efix[:0]
	nflux := 0
	for _, t := range tris {
		ia := localVertex(m, int(t), int32(a))
		for i := range 3 {
			e := m.TriEdge[3*int(t)+i]
			if i == ia || indexOf(w.edge, e) >= 0 {
				continue
			}
			w.edge = append(w.edge, e)
			if m.IsBoundary(int(e)) && !eq.dirE[e] {
				w.ebas = append(w.ebas, -1)
				end := 0
				if m.Edge[2*e+1] == int32(a) {
					end = 1
				}
				s := eq.rt.Sign(int(t), i) // n_E·n_out
				for j := range k + 1 {
					w.efix = append(w.efix, -s*eq.neu[(2*int(e)+end)*(k+1)+j])
				}
				continue
			}
			w.ebas = append(w.ebas, nflux)
			nflux += k + 1
			for range k + 1 {
				w.efix = append(w.efix, 0)
			}
		}
	}
	return nflux
}

// local fills, for triangle t at position pt of the patch of a, the system
// index of each local RT DOF (−1 prescribed, with its value in fix; −2
// absent: the edge opposite a) and returns the local index of a.
func (w *patchWork) local(t, a, pt, ibase int, sys []int, fix []float64) int {
	eq := w.eq
	m, k := eq.m, eq.k
	ia := localVertex(m, t, int32(a))
	ni := k * (k + 1)
	for i := range 3 {
		if i == ia {
			for j := range k + 1 {
				sys[i*(k+1)+j] = -2
			}
			continue
		}
		pe := indexOf(w.edge, m.TriEdge[3*t+i])
		for j := range k + 1 {
			if w.ebas[pe] < 0 {
				sys[i*(k+1)+j] = -1
				fix[i*(k+1)+j] = w.efix[pe*(k+1)+j]
			} else {
				sys[i*(k+1)+j] = w.ebas[pe] + j
			}
		}
	}
	for i := range ni {
		sys[3*(k+1)+i] = ibase + pt*ni + i
	}
	return ia
}

// element computes on triangle t, for the hat function of its local
// vertex ia (vertex a): the weighted mass matrix (a⁻¹ψ_i, ψ_j) (upper
// triangle, in mloc), the divergence matrix (div ψ_i, q_m) (bloc), the
// load −(ψ_a ∇u_h, ψ_i) (floc) and (g_a − ρ_a, q_m) (gloc), with q_m the
// monomials of the reference coordinates.
func (w *patchWork) element(t, a, ia int) {
	eq := w.eq
	p, rule := eq.p, eq.rule
	nloc, k := eq.nloc, eq.k
	nm := numMono(k)
	w.el.Load(t)
	w.ev.Load(t)
	clear(w.mloc[:nloc*nloc])
	clear(w.bloc[:nm*nloc])
	clear(w.floc[:nloc])
	clear(w.gloc[:nm])
	d := eq.co.At(eq.m.Region[t])
	det := d.XX*d.YY - d.XY*d.XY
	ixx, ixy, iyy := d.YY/det, -d.XY/det, d.XX/det
	bx, by := w.ev.BaryGrad(ia)
	area := w.ev.Area()
	nq := rule.Len()
	rt := eq.rtilde[a]
	for q := range nq {
		l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
		wq := rule.W[q] * area
		w.el.Basis(l, w.val[:])
		w.el.Div(l, w.div[:])
		v, gx, gy := w.ev.Eval(l)
		fx, fy := d.Apply(gx, gy)
		psi := l[ia]
		g := psi*(eq.fq[t*nq+q]-p.C*v) - (fx*bx + fy*by) - rt*psi
		monomials(l[1], l[2], k, w.mono[:])
		for i := range nloc {
			vi := w.val[i]
			ax, ay := wq*(ixx*vi[0]+ixy*vi[1]), wq*(ixy*vi[0]+iyy*vi[1])
			row := w.mloc[i*nloc : (i+1)*nloc]
			for j := i; j < nloc; j++ {
				row[j] += ax*w.val[j][0] + ay*w.val[j][1]
			}
			w.floc[i] -= wq * psi * (gx*vi[0] + gy*vi[1])
			dv := wq * w.div[i]
			for mm := range nm {
				w.bloc[mm*nloc+i] += dv * w.mono[mm]
			}
		}
		for mm := range nm {
			w.gloc[mm] += wq * g * w.mono[mm]
		}
	}
}

func indexOf(s []int32, v int32) int {
	for i, x := range s {
		if x == v {
			return i
		}
	}
	return -1
}
