package estimate

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// The P1 path of FluxRecovery (RT_0, one unknown per edge): the element
// data in closed form, and the matrix, right-hand side, guess and
// indicators from the two sides of each edge, with the values and the
// summation order of the general path (assemble, guess, local), so that
// both give the same bits from the same element data.

// elementsP1 is elements for P1 solutions (RT_0), in closed form. With
// d = 2|T|, e_l = x_l − x_T (x_T the centroid), s_i the sign of edge i
// (opposite vertex i) and |E_i| n_i its global normal times its length,
//
//	φ_i = s_i (x − x_i)/d,
//	A_ij = s_i s_j/(2d) (e_i·a⁻¹e_j + Σ_l e_l·a⁻¹e_l / 12),
//	c_i = −a∇u_h·n_i |E_i|,
//
// from ∫_T (x − x_T)(x − x_T)ᵀ = |T|/12 Σ_l e_l e_lᵀ.
func (pr *projection) elementsP1(dst *Indicators) error {
	m, p := pr.m, pr.p
	var orule *quadrature.Triangle
	if p.HasSource() {
		var err error
		if orule, err = quadrature.ForTriangle(4); err != nil {
			return err
		}
	}
	x, tri, uu := m.X, m.Tri, pr.u.U
	return parallel.For(m.NumTriangles(), 2048, func(lo, hi int) error {
		for t := lo; t < hi; t++ {
			v := tri[3*t : 3*t+3 : 3*t+3]
			d, gx, gy := p1Grad(x, uu, v[0], v[1], v[2])
			a := pr.rtab.At(m.Region[t])
			ai := invTensor(a)
			fx, fy := a.Apply(gx, gy)
			xs, ys := corners(x, v)
			cx, cy := (xs[0]+xs[1]+xs[2])/3, (ys[0]+ys[1]+ys[2])/3
			var ex, ey, s, c [3]float64
			sum := 0.0
			for i := range 3 {
				ex[i], ey[i] = xs[i]-cx, ys[i]-cy
				ax, ay := ai.Apply(ex[i], ey[i])
				sum += ex[i]*ax + ey[i]*ay
				lo, hi := v[(i+1)%3], v[(i+2)%3]
				s[i] = 1
				if lo > hi {
					s[i], lo, hi = -1, hi, lo
				}
				// |E| n_E = (Δy, −Δx) from the low to the high vertex.
				c[i] = -(fx*(x[2*hi+1]-x[2*lo+1]) - fy*(x[2*hi]-x[2*lo]))
			}
			loc := pr.loc[12*t : 12*t+12 : 12*t+12]
			for i := range 3 {
				ax, ay := ai.Apply(ex[i], ey[i])
				for j := i; j < 3; j++ {
					aij := s[i] * s[j] / (2 * d) * (ax*ex[j] + ay*ey[j] + sum/12)
					loc[3*i+j], loc[3*j+i] = aij, aij
				}
			}
			loc[9], loc[10], loc[11] = c[0], c[1], c[2]
			if orule == nil {
				zero(dst.Osc2, t)
				continue
			}
			o, err := osc2P0(p, orule, &xs, &ys, m.Region[t], t, 0.5*d)
			if err != nil {
				return fmt.Errorf("estimate: FluxRecovery: %w", err)
			}
			dst.Osc2[t] = o
		}
		return nil
	})
}

// assembleP1 is assemble followed by guess, for RT_0: the row of a free
// edge e holds e and the free edges of its triangles other than e (at most
// five entries), and its guess comes from the same two sides. It writes,
// for each edge e, 3t + i for its triangles t = EdgeTri[2e] and
// EdgeTri[2e+1], with i the local index of e in t, into sides[2e] and
// sides[2e+1] (−1 for the missing side of a boundary edge).
func (pr *projection) assembleP1(rowPtr, cols []int32, vals []float64, sides []int32) {
	m, n := pr.m, pr.n
	triEdge, fixed := m.TriEdge, pr.fixed
	_ = parallel.For(n, 4096, func(lo, hi int) error {
		for r := lo; r < hi; r++ {
			for s := range 2 {
				t := int(m.EdgeTri[2*r+s])
				sides[2*r+s] = -1
				if t >= 0 {
					sides[2*r+s] = int32(3*t + localEdge(m, t, r))
				}
			}
			c := int32(1)
			if fixed[r] == 0 {
				for _, sd := range sides[2*r : 2*r+2] {
					if sd < 0 {
						continue
					}
					t, l := sd/3, sd%3
					for j := range int32(3) {
						if j != l && fixed[triEdge[3*t+j]] == 0 {
							c++
						}
					}
				}
			}
			rowPtr[r+1] = c
		}
		return nil
	})
	rowPtr[0] = 0
	for r := range n {
		rowPtr[r+1] += rowPtr[r]
	}
	nnz := int(rowPtr[n])
	cols, vals = cols[:nnz], vals[:nnz]
	_ = parallel.For(n, 4096, func(lo, hi int) error {
		var row [5]entry
		for r := lo; r < hi; r++ {
			o := int(rowPtr[r])
			if fixed[r] != 0 {
				sd := sides[2*r]
				d := pr.loc[12*(sd/3)+4*(sd%3)]
				cols[o], vals[o] = int32(r), d
				pr.b[r] = d * pr.x[r]
				pr.diag[r] = d
				continue
			}
			// The entries and the right-hand side in the order of rowOf: the
			// triangles in the order of EdgeTri, their DOFs in local order.
			// The guess as in guess: the coefficients c of the sides
			// weighted by their diagonal entries w.
			nr, diag, rhs := 1, 0.0, 0.0
			var w, c [2]float64
			for s, sd := range sides[2*r : 2*r+2] {
				if sd < 0 {
					continue
				}
				t, l := sd/3, sd%3
				loc := pr.loc[12*t : 12*t+12 : 12*t+12]
				w[s], c[s] = loc[4*l], loc[9+l]
				for j := range int32(3) {
					v := loc[3*l+j]
					rhs += v * loc[9+j]
					if j == l {
						diag += v
						continue
					}
					c := triEdge[3*t+j]
					if fixed[c] != 0 {
						rhs -= v * pr.x[c]
						continue
					}
					row[nr] = entry{c, v}
					nr++
				}
			}
			row[0] = entry{int32(r), diag}
			// Insertion sort of at most five entries (distinct columns):
			// a generic sort took over a third of this pass (a CPU profile at 1e6
			// triangles).
			for i := 1; i < nr; i++ {
				en, j := row[i], i
				for ; j > 0 && row[j-1].col > en.col; j-- {
					row[j] = row[j-1]
				}
				row[j] = en
			}
			for i, en := range row[:nr] {
				cols[o+i], vals[o+i] = en.col, en.val
			}
			pr.b[r] = rhs
			pr.diag[r] = diag
			if sides[2*r+1] < 0 {
				pr.x[r] = c[0]
			} else {
				pr.x[r] = (w[0]*c[0] + w[1]*c[1]) / (w[0] + w[1])
			}
		}
		return nil
	})
	pr.a = &sparse.CSR{Rows: n, Cols: n, RowPtr: rowPtr, Col: cols, Val: vals}
}

// localP1 is local for RT_0.
func (pr *projection) localP1(eta2 []float64) {
	triEdge := pr.m.TriEdge
	_ = parallel.For(pr.m.NumTriangles(), 2048, func(lo, hi int) error {
		for t := lo; t < hi; t++ {
			loc := pr.loc[12*t : 12*t+12 : 12*t+12]
			e := triEdge[3*t : 3*t+3 : 3*t+3]
			d0, d1, d2 := pr.x[e[0]]-loc[9], pr.x[e[1]]-loc[10], pr.x[e[2]]-loc[11]
			s := 0.0
			s += d0 * (loc[0]*d0 + loc[1]*d1 + loc[2]*d2)
			s += d1 * (loc[3]*d0 + loc[4]*d1 + loc[5]*d2)
			s += d2 * (loc[6]*d0 + loc[7]*d1 + loc[8]*d2)
			eta2[t] = s
		}
		return nil
	})
}
