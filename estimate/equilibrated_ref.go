package estimate

import (
	"math"
	"sync"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// rt1Reference holds the reference-element matrices of RT_1 that the P1
// fast path of Equilibrated uses, in the local DOF order and orientation
// of fem.RTSpace (edge i from local vertex i+1 to i+2 with the outward
// normal, moments j = 0, 1, then the two interior moments), without the
// global signs. With the contravariant Piola map v = J v̂ / det J of a
// triangle with Jacobian J (det J > 0) and constant diffusion a, the
// weighted mass matrix and the divergence moments are
//
//	(a⁻¹ φ_i, φ_j)_T = (G₀₀ M̂₀₀ + G₁₁ M̂₁₁ + G₀₁ M̂₀₁)_{ij} / det J,   G = Jᵀ a⁻¹ J,
//	(div φ_i, q)_T  = ∫_T̂ div̂ φ̂_i q̂ dx̂,
//
// with M̂_kl the moments ∫_T̂ φ̂_{i,k} φ̂_{j,l} dx̂ (M̂₀₁ symmetrised); the
// divergence moments do not depend on T. The local DOFs of the curl
// (∂_y ζ, −∂_x ζ) of a P2 function ζ do not depend on T either (curl_x ζ =
// J curl̂ ζ̂ / det J), nor do those of λ_i w for a constant vector w once
// w is replaced by ŵ = adj(J) w.
//
// The tables are computed once, on the one-triangle mesh (0,0), (1,0),
// (0,1), with fem's RT_1 basis and interpolant: exactly, up to rounding,
// since the rules used are exact for these polynomials.
type rt1Reference struct {
	mass   [3][8][8]float64 // M̂₀₀, M̂₁₁, M̂₀₁ + M̂₁₀
	packed [3][36]float64   // mass[kl][i][j] for i ≤ j, row by row, off-diagonal entries doubled
	div    [3][8]float64    // ∫_T̂ div̂ φ̂_i q̂_m for q̂ = 1, x̂, ŷ
	binv   [2][2]float64    // inverse of div[1:3][6:8], the interior DOFs' block
	lam    [3][2][8]float64 // DOFs of λ_i e_k, e_k the unit vectors
	lamSum [2][8]float64    // DOFs of e_k: Σ_i lam[i][k]
	// For the patch of local vertex ia: the DOFs of the curls of the P2
	// basis functions of the vertex ia and of the midpoints of the edges
	// ia+1 and ia+2 (the edges through the vertex), as columns.
	curl [3][8][3]float64
	// The tables of the patch of local vertex ia restricted to its active
	// DOFs, those not on the edge opposite ia.
	act [3]rt1Active
}

// rt1Active holds the tables of rt1Reference for one local vertex ia,
// restricted to the six DOFs that do not vanish in its patch: the moments
// j = 0, 1 of the edges ia+1 and ia+2, then the two interior DOFs.
type rt1Active struct {
	dof  [6]int
	div  [2][4]float64    // div[1:3] at the edge DOFs
	lam  [2][6]float64    // lam[ia]
	curl [6][3]float64    // curl[ia]
	kref [3][3][3]float64 // curl[ia]ᵀ mass[kl] curl[ia]
	pref [3][3][6]float64 // curl[ia]ᵀ mass[kl]
}

var rt1Ref = sync.OnceValue(buildRT1Reference)

func buildRT1Reference() *rt1Reference {
	r := &rt1Reference{}
	m, _, err := mesh.New(mesh.Arrays{X: []float64{0, 0, 1, 0, 0, 1}, Tri: []int32{0, 1, 2}})
	if err != nil {
		panic(err) // a fixed, valid mesh
	}
	s, err := fem.NewRTSpace(m, 1)
	if err != nil {
		panic(err)
	}
	el := s.NewElement()
	sign, dofs := el.Signs(), el.DOFs()
	rule, err := quadrature.ForTriangle(6)
	if err != nil {
		panic(err)
	}
	var val [8][2]float64
	var dv [8]float64
	for q := range rule.Len() {
		l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
		el.Basis(l, val[:])
		el.Div(l, dv[:])
		w := 0.5 * rule.W[q]
		mono := [3]float64{1, l[1], l[2]}
		for i := range 8 {
			vi := [2]float64{sign[i] * val[i][0], sign[i] * val[i][1]}
			for j := range 8 {
				vj := [2]float64{sign[j] * val[j][0], sign[j] * val[j][1]}
				r.mass[0][i][j] += w * vi[0] * vj[0]
				r.mass[1][i][j] += w * vi[1] * vj[1]
				r.mass[2][i][j] += w * (vi[0]*vj[1] + vi[1]*vj[0])
			}
			for mm := range 3 {
				r.div[mm][i] += w * sign[i] * dv[i] * mono[mm]
			}
		}
	}
	for kl := range 3 {
		p := 0
		for i := range 8 {
			for j := i; j < 8; j++ {
				r.packed[kl][p] = r.mass[kl][i][j]
				if j > i {
					r.packed[kl][p] *= 2
				}
				p++
			}
		}
	}
	det := r.div[1][6]*r.div[2][7] - r.div[1][7]*r.div[2][6]
	if !(math.Abs(det) > 1e-3) {
		panic("estimate: singular interior divergence block of RT_1") // broken invariant
	}
	r.binv = [2][2]float64{{r.div[2][7] / det, -r.div[1][7] / det}, {-r.div[2][6] / det, r.div[1][6] / det}}
	local := func(f func(x, y float64) (float64, float64)) [8]float64 {
		v, err := fem.InterpolateRT(s, f)
		if err != nil {
			panic(err)
		}
		var c [8]float64
		for i, d := range dofs {
			c[i] = sign[i] * v.U[d]
		}
		return c
	}
	// Barycentric coordinates of the reference triangle and their gradients.
	bary := func(x, y float64) [3]float64 { return [3]float64{1 - x - y, x, y} }
	grad := [3][2]float64{{-1, -1}, {1, 0}, {0, 1}}
	for i := range 3 {
		for k := range 2 {
			r.lam[i][k] = local(func(x, y float64) (float64, float64) {
				v := bary(x, y)[i]
				if k == 0 {
					return v, 0
				}
				return 0, v
			})
			// λ_i vanishes on the edge opposite vertex i.
			r.lam[i][k][2*i], r.lam[i][k][2*i+1] = 0, 0
		}
	}
	for k := range 2 {
		for j := range 8 {
			r.lamSum[k][j] = r.lam[0][k][j] + r.lam[1][k][j] + r.lam[2][k][j]
		}
	}
	// curl ζ = (∂_y ζ, −∂_x ζ) of the P2 basis functions.
	vertexCurl := func(i int) [8]float64 {
		return local(func(x, y float64) (float64, float64) {
			c := 4*bary(x, y)[i] - 1 // ∇(λ_i(2λ_i − 1)) = (4λ_i − 1)∇λ_i
			return c * grad[i][1], -c * grad[i][0]
		})
	}
	midCurl := func(i int) [8]float64 {
		j, l := (i+1)%3, (i+2)%3
		return local(func(x, y float64) (float64, float64) {
			b := bary(x, y) // ∇(4λ_jλ_l) = 4(λ_l∇λ_j + λ_j∇λ_l)
			gx := 4 * (b[l]*grad[j][0] + b[j]*grad[l][0])
			gy := 4 * (b[l]*grad[j][1] + b[j]*grad[l][1])
			return gy, -gx
		})
	}
	for ia := range 3 {
		cols := [3][8]float64{vertexCurl(ia), midCurl((ia + 1) % 3), midCurl((ia + 2) % 3)}
		for c := range cols {
			// The three functions vanish on the edge opposite the vertex.
			cols[c][2*ia], cols[c][2*ia+1] = 0, 0
		}
		for i := range 8 {
			for c := range 3 {
				r.curl[ia][i][c] = cols[c][i]
			}
		}
		ra := &r.act[ia]
		i1, i2 := (ia+1)%3, (ia+2)%3
		ra.dof = [6]int{2 * i1, 2*i1 + 1, 2 * i2, 2*i2 + 1, 6, 7}
		for j, i := range ra.dof {
			if j < 4 {
				ra.div[0][j], ra.div[1][j] = r.div[1][i], r.div[2][i]
			}
			ra.lam[0][j], ra.lam[1][j] = r.lam[ia][0][i], r.lam[ia][1][i]
			ra.curl[j] = r.curl[ia][i]
		}
		for kl := range 3 {
			for c := range 3 {
				var p [8]float64
				for j := range 8 {
					for i := range 8 {
						p[j] += cols[c][i] * r.mass[kl][i][j]
					}
				}
				for j, i := range ra.dof {
					ra.pref[kl][c][j] = p[i]
				}
				for d := range 3 {
					s := 0.0
					for j := range 8 {
						s += p[j] * cols[d][j]
					}
					ra.kref[kl][c][d] = s
				}
			}
		}
	}
	return r
}
