package fem

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// smooth is u = e^x sin(πy) on the unit square with a = 1, c = 1:
// f = −Δu + u = (π² − 1 + 1) e^x sin(πy) = π² e^x sin(πy).
func smooth() (Exact, *Problem) {
	u := func(x, y float64) float64 { return math.Exp(x) * math.Sin(math.Pi*y) }
	ex := Exact{
		U: u,
		Grad: func(x, y float64) (float64, float64) {
			return math.Exp(x) * math.Sin(math.Pi*y), math.Pi * math.Exp(x) * math.Cos(math.Pi*y)
		},
	}
	p := &Problem{
		C: 1,
		F: func(x, y float64) float64 { return math.Pi * math.Pi * u(x, y) },
		Dirichlet: map[int32]Func{
			mesh.SideBottom: u, mesh.SideRight: u, mesh.SideTop: u,
		},
		// Left side: a∇u·n = −u_x = −u.
		Neumann: map[int32]Func{mesh.SideLeft: func(x, y float64) float64 { return -u(x, y) }},
	}
	return ex, p
}

// rate returns the convergence rate in h between two levels h and h/2.
func rate(coarse, fine float64) float64 { return math.Log2(coarse / fine) }

// Uniform refinement on a smooth solution gives the a priori rates: H¹
// error O(h^p) (Céa's lemma) and L² error O(h^{p+1}) (Aubin–Nitsche).
func TestAPrioriRates(t *testing.T) {
	t.Parallel()
	for _, deg := range []int{1, 2} {
		ex, p := smooth()
		m, err := mesh.Rectangle(0, 0, 1, 1, 2, 2)
		if err != nil {
			t.Fatal(err)
		}
		var h1, l2 []float64
		for level := range 6 {
			if level > 0 {
				if m, _, err = m.RefineUniform(); err != nil {
					t.Fatal(err)
				}
			}
			s, _ := NewSpace(m, deg)
			u, _, err := Solve(s, p)
			if err != nil {
				t.Fatal(err)
			}
			_, e, err := u.Error(nil, ex, p)
			if err != nil {
				t.Fatal(err)
			}
			h1 = append(h1, e.H1)
			l2 = append(l2, e.L2)
		}
		n := len(h1)
		for i := n - 3; i < n; i++ {
			rh1, rl2 := rate(h1[i-1], h1[i]), rate(l2[i-1], l2[i])
			if math.Abs(rh1-float64(deg)) > 0.1 || math.Abs(rl2-float64(deg+1)) > 0.1 {
				t.Errorf("P%d level %d: H1 rate %.3f (want %d), L2 rate %.3f (want %d)", deg, i, rh1, deg, rl2, deg+1)
			}
		}
		t.Logf("P%d: H1 %v, L2 %v", deg, h1, l2)
	}
}

// Variable diffusion through AFunc: a = 1 + x, u = sin(πx) sin(πy), so
// −∇·(a∇u) = 2π²(1 + x) u − π cos(πx) sin(πy) (closed form). The energy
// error must decay at the a priori rate p.
func TestAFuncRates(t *testing.T) {
	t.Parallel()
	u := func(x, y float64) float64 { return math.Sin(math.Pi*x) * math.Sin(math.Pi*y) }
	ex := Exact{U: u, Grad: func(x, y float64) (float64, float64) {
		return math.Pi * math.Cos(math.Pi*x) * math.Sin(math.Pi*y), math.Pi * math.Sin(math.Pi*x) * math.Cos(math.Pi*y)
	}}
	p := &Problem{
		AFunc: func(x, y float64, _ int32) Tensor { return Scalar(1 + x) },
		F: func(x, y float64) float64 {
			return 2*math.Pi*math.Pi*(1+x)*u(x, y) - math.Pi*math.Cos(math.Pi*x)*math.Sin(math.Pi*y)
		},
		Dirichlet: map[int32]Func{mesh.SideBottom: nil, mesh.SideRight: nil, mesh.SideTop: nil, mesh.SideLeft: nil},
	}
	for _, deg := range []int{1, 2} {
		var en []float64
		for _, n := range []int{8, 16, 32} {
			m, _ := mesh.Rectangle(0, 0, 1, 1, n, n)
			s, _ := NewSpace(m, deg)
			uh, _, err := Solve(s, p)
			if err != nil {
				t.Fatal(err)
			}
			_, e, err := uh.Error(nil, ex, p)
			if err != nil {
				t.Fatal(err)
			}
			en = append(en, e.Energy)
		}
		for i := 1; i < len(en); i++ {
			if r := rate(en[i-1], en[i]); math.Abs(r-float64(deg)) > 0.1 {
				t.Errorf("P%d: energy rate %.3f, want %d (Céa's lemma)", deg, r, deg)
			}
		}
	}
}

// A constant AFunc gives the same system as the same tensor per region.
func TestAFuncMatchesRegions(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Quadrants(3)
	ts := map[int32]Tensor{1: Scalar(161), 2: Scalar(1), 3: {XX: 5, XY: 1, YY: 2}, 4: Scalar(1)}
	for _, deg := range []int{1, 2} {
		s, _ := NewSpace(m, deg)
		pa := &Problem{A: ts, Dirichlet: map[int32]Func{mesh.SideLeft: nil}}
		pf := &Problem{AFunc: func(x, y float64, r int32) Tensor { return ts[r] }, Dirichlet: pa.Dirichlet}
		sa, err := Assemble(s, pa)
		if err != nil {
			t.Fatal(err)
		}
		sf, err := Assemble(s, pf)
		if err != nil {
			t.Fatal(err)
		}
		for i := range sa.A.Val {
			if math.Abs(sa.A.Val[i]-sf.A.Val[i]) > arithTol*161 {
				t.Fatalf("P%d: entry %d: %g vs %g", deg, i, sa.A.Val[i], sf.A.Val[i])
			}
		}
	}
}
