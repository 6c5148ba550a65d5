package quadrature

import (
	"fmt"
	"math"
	"testing"
)

// publishedTol is the agreement required between the stored (polished)
// values and Dunavant's published 15-digit values: a few units in the 15th
// digit.
const publishedTol = 1e-14

// published holds one representative point (λ0, λ1, λ2) and the weight of
// every orbit of each stored rule.
// source: D. A. Dunavant, Int. J. Numer. Methods Eng. 21 (1985) 1129–1148,
// tables of the symmetric rules, 15 significant digits.
var published = map[int][][4]float64{
	1: {{1.0 / 3, 1.0 / 3, 1.0 / 3, 1}},
	2: {{2.0 / 3, 1.0 / 6, 1.0 / 6, 1.0 / 3}},
	4: {
		{0.108103018168070, 0.445948490915965, 0.445948490915965, 0.223381589678011},
		{0.816847572980459, 0.091576213509771, 0.091576213509771, 0.109951743655322},
	},
	5: {
		{1.0 / 3, 1.0 / 3, 1.0 / 3, 0.225},
		{0.059715871789770, 0.470142064105115, 0.470142064105115, 0.132394152788506},
		{0.797426985353087, 0.101286507323456, 0.101286507323456, 0.125939180544827},
	},
	6: {
		{0.501426509658179, 0.249286745170910, 0.249286745170910, 0.116786275726379},
		{0.873821971016996, 0.063089014491502, 0.063089014491502, 0.050844906370207},
		{0.053145049844817, 0.310352451033784, 0.636502499121399, 0.082851075618374},
	},
	8: {
		{1.0 / 3, 1.0 / 3, 1.0 / 3, 0.144315607677787},
		{0.081414823414554, 0.459292588292723, 0.459292588292723, 0.095091634267285},
		{0.658861384496480, 0.170569307751760, 0.170569307751760, 0.103217370534718},
		{0.898905543365938, 0.050547228317031, 0.050547228317031, 0.032458497623198},
		{0.008394777409958, 0.263112829634638, 0.728492392955404, 0.027230314174435},
	},
	9: {
		{1.0 / 3, 1.0 / 3, 1.0 / 3, 0.097135796282799},
		{0.020634961602525, 0.489682519198738, 0.489682519198738, 0.031334700227139},
		{0.125820817014127, 0.437089591492937, 0.437089591492937, 0.077827541004774},
		{0.623592928761935, 0.188203535619033, 0.188203535619033, 0.079647738927210},
		{0.910540973211095, 0.044729513394453, 0.044729513394453, 0.025577675658698},
		{0.036838412054736, 0.221962989160766, 0.741198598784498, 0.043283539377289},
	},
	10: {
		{1.0 / 3, 1.0 / 3, 1.0 / 3, 0.090817990382754},
		{0.028844733232685, 0.485577633383657, 0.485577633383657, 0.036725957756467},
		{0.781036849029926, 0.109481575485037, 0.109481575485037, 0.045321059435528},
		{0.141707219414880, 0.307939838764121, 0.550352941820999, 0.072757916845420},
		{0.025003534762686, 0.246672560639903, 0.728323904597411, 0.028327242531057},
		{0.009540815400299, 0.066803251012200, 0.923655933587500, 0.009421666963733},
	},
}

// TestTrianglePublished checks that every stored rule consists exactly of
// the orbits of Dunavant's published rule, to the printed digits.
func TestTrianglePublished(t *testing.T) {
	t.Parallel()
	for _, r := range triangles() {
		t.Run(fmt.Sprintf("degree%d", r.Degree), func(t *testing.T) {
			t.Parallel()
			orbits, ok := published[r.Degree]
			if !ok {
				t.Fatalf("no published values for degree %d", r.Degree)
			}
			covered := make([]bool, r.Len())
			for _, o := range orbits {
				// Mark every stored point that is a permutation of o.
				found := 0
				for k := range r.Len() {
					if matchesOrbit(r.Bary[3*k:3*k+3], o) {
						found++
						covered[k] = true
						if d := math.Abs(r.W[k] - o[3]); d > publishedTol {
							t.Errorf("orbit %v: point %d has weight %.17g (difference %.3g)", o, k, r.W[k], d)
						}
					}
				}
				if found == 0 {
					t.Errorf("orbit %v not in the stored rule", o)
				}
			}
			for k, c := range covered {
				if !c {
					t.Errorf("stored point %d %v is in no published orbit", k, r.Bary[3*k:3*k+3])
				}
			}
		})
	}
}

// matchesOrbit reports whether l is a permutation of o[:3] within
// publishedTol.
func matchesOrbit(l []float64, o [4]float64) bool {
	perms := [6][3]int{{0, 1, 2}, {0, 2, 1}, {1, 0, 2}, {1, 2, 0}, {2, 0, 1}, {2, 1, 0}}
	for _, p := range perms {
		if math.Abs(l[0]-o[p[0]]) <= publishedTol && math.Abs(l[1]-o[p[1]]) <= publishedTol &&
			math.Abs(l[2]-o[p[2]]) <= publishedTol {
			return true
		}
	}
	return false
}
