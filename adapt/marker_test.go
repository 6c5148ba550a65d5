package adapt

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/bits"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
	"testing"
)

// The references below share no code with the package: they sort (a
// stable sort by η² descending keeps ties in index order, which is the
// marking order) and sum with math/big.

// refOrder returns the indices of eta2 in the marking order, by sorting.
func refOrder(eta2 []float64) []int {
	order := make([]int, len(eta2))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(eta2[b], eta2[a]) })
	return order
}

func maskOf(n int, idx []int) []bool {
	m := make([]bool, n)
	for _, i := range idx {
		m[i] = true
	}
	return m
}

// refBound is θ·Σ η_T² as Dorfler defines it (the exact total rounded to
// float64, scaled by 2⁻¹²⁸ on overflow), as an exact big.Float.
func refBound(eta2 []float64, theta float64) (*big.Float, bool) {
	sum := exact()
	for _, v := range eta2 {
		sum.Add(sum, new(big.Float).SetFloat64(v))
	}
	total, _ := sum.Float64()
	if total == 0 {
		return nil, false
	}
	b := new(big.Float)
	if math.IsInf(total, 1) {
		total, _ = new(big.Float).SetMantExp(sum, -128).Float64()
		b.SetFloat64(theta * total)
		return b.SetMantExp(b, 128), true
	}
	return b.SetFloat64(theta * total), true
}

// exact is a big.Float wide enough to add any float64 values without
// rounding (2⁻¹⁰⁷⁴ to 2¹⁰⁵⁵ is under 2200 bits).
func exact() *big.Float { return new(big.Float).SetPrec(4096) }

// refDorfler is the sort-and-prefix Dörfler marking: the shortest prefix
// of the marking order whose exact sum reaches the bound, or all positive
// indicators if none does.
func refDorfler(eta2 []float64, theta float64) []bool {
	bound, ok := refBound(eta2, theta)
	if !ok {
		return make([]bool, len(eta2))
	}
	order := refOrder(eta2)
	npos := 0
	for _, v := range eta2 {
		if v > 0 {
			npos++
		}
	}
	k := npos
	sum := exact()
	for j, i := range order[:npos] {
		sum.Add(sum, big.NewFloat(eta2[i]))
		if sum.Cmp(bound) >= 0 {
			k = j + 1
			break
		}
	}
	return maskOf(len(eta2), order[:k])
}

// dist draws indicators one by one; huge, if set, then puts 1e30 at one
// random place.
type dist struct {
	name string
	elem func(r *rand.Rand) float64
	huge bool
}

func (d dist) draw(r *rand.Rand, n int) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = d.elem(r)
	}
	if d.huge && n > 0 {
		v[r.IntN(n)] = 1e30
	}
	return v
}

var dists = []dist{
	{"uniform", func(r *rand.Rand) float64 { return r.Float64() }, false},
	{"heavy x^-3", func(r *rand.Rand) float64 { return math.Pow(1-r.Float64(), -3) }, false},
	{"adaptive r^-1.5", func(r *rand.Rand) float64 { return math.Pow(1e-6+(1-1e-6)*r.Float64(), -1.5) }, false},
	{"ties 0,1,2,4", func(r *rand.Rand) float64 { return []float64{0, 1, 2, 4}[r.IntN(4)] }, false},
	{"all 0.1", func(*rand.Rand) float64 { return 0.1 }, false},
	{"all 1", func(*rand.Rand) float64 { return 1 }, false},
	{"one huge", func(r *rand.Rand) float64 { return r.Float64() }, true},
	{"zeros", func(*rand.Rand) float64 { return 0 }, false},
	{"sparse", func(r *rand.Rand) float64 { return float64(r.IntN(10)/9) * r.Float64() }, false},
	{"subnormal", func(r *rand.Rand) float64 { return r.Float64() * 1e-310 }, false},
	{"overflowing sum", func(r *rand.Rand) float64 { return (0.5 + r.Float64()) * 1e308 }, false},
}

var thetas = []float64{1e-9, 0.3, 0.5, 0.99, 1}

func sizes(r *rand.Rand) []int {
	s := []int{0, 1, 2, 3, 7, 16, 100, 1000, 2000}
	for range 5 {
		s = append(s, r.IntN(2001))
	}
	return s
}

func TestDorflerReference(t *testing.T) {
	t.Parallel()
	eachDist(t, func(t *testing.T, d dist, r *rand.Rand) {
		for _, n := range sizes(r) {
			eta2 := d.draw(r, n)
			for _, theta := range thetas {
				want := refDorfler(eta2, theta)
				for _, buckets := range []bool{false, true} { // both paths, whatever n
					got, err := Dorfler{Theta: theta}.mark(nil, eta2, buckets)
					if err != nil {
						t.Fatalf("n=%d θ=%g buckets=%v: %v", n, theta, buckets, err)
					}
					if !slices.Equal(got, want) {
						t.Errorf("n=%d θ=%g buckets=%v: marks %d triangles, the reference %d", n, theta, buckets, count(got), count(want))
					}
				}
			}
		}
	})
}

// TestDorflerMinimal checks minimal cardinality against all subsets, for
// n ≤ 10. (That the greedy largest-first prefix is minimal for a sum
// under a cardinality constraint is common practice; this confirms it.)
func TestDorflerMinimal(t *testing.T) {
	t.Parallel()
	eachDist(t, func(t *testing.T, d dist, r *rand.Rand) {
		for n := 1; n <= 10; n++ {
			for range 3 {
				eta2 := d.draw(r, n)
				sums := subsetSums(eta2)
				for _, theta := range thetas {
					checkMinimal(t, eta2, theta, sums)
				}
			}
		}
	})
}

// subsetSums returns the exact sum of eta2 over every subset, by bit mask.
func subsetSums(eta2 []float64) []*big.Float {
	sums := make([]*big.Float, 1<<len(eta2))
	sums[0] = exact()
	for m := 1; m < len(sums); m++ {
		low := bits.TrailingZeros(uint(m))
		sums[m] = exact().Add(sums[m&(m-1)], big.NewFloat(eta2[low]))
	}
	return sums
}

func checkMinimal(t *testing.T, eta2 []float64, theta float64, sums []*big.Float) {
	t.Helper()
	got, err := Dorfler{Theta: theta}.Mark(nil, eta2)
	if err != nil {
		t.Fatal(err)
	}
	bound, ok := refBound(eta2, theta)
	if !ok {
		if count(got) != 0 {
			t.Errorf("%v θ=%g: all zero, marked %d", eta2, theta, count(got))
		}
		return
	}
	best := -1
	for m, s := range sums {
		if c := bits.OnesCount(uint(m)); s.Cmp(bound) >= 0 && (best < 0 || c < best) {
			best = c
		}
	}
	if best < 0 { // rounding: nothing reaches the bound; Dorfler takes all positive
		best = 0
		for _, v := range eta2 {
			if v > 0 {
				best++
			}
		}
	}
	if count(got) != best {
		t.Errorf("%v θ=%g: marked %d, the smallest set that reaches θ·total has %d", eta2, theta, count(got), best)
	}
}

func count(m []bool) int {
	c := 0
	for _, b := range m {
		if b {
			c++
		}
	}
	return c
}

// maskCase is a hand-made input and the mask it must give.
type maskCase struct {
	name  string
	eta2  []float64
	theta float64
	want  []bool
}

func runMaskCases(t *testing.T, marker func(theta float64) Marker, tests []maskCase) {
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			got, err := marker(tt.theta).Mark(nil, tt.eta2)
			if err != nil || got == nil || !slices.Equal(got, tt.want) {
				t.Errorf("Mark(%v) = %v, %v; want %v", tt.eta2, got, err, tt.want)
			}
		})
	}
}

func TestDorflerCases(t *testing.T) {
	t.Parallel()
	// Worked by hand; the rounding cases say how.
	runMaskCases(t, func(theta float64) Marker { return Dorfler{Theta: theta} }, []maskCase{
		{"empty", []float64{}, 0.5, []bool{}},
		{"one", []float64{2}, 1e-9, []bool{true}},
		{"all zero", []float64{0, 0, 0}, 1, []bool{false, false, false}},
		{"negative zero is zero", []float64{math.Copysign(0, -1), 1}, 1, []bool{false, true}},
		{"half of 4+1+3+2", []float64{4, 1, 3, 2}, 0.5, []bool{true, false, true, false}},
		{"exactly 0.7 (0.7·10 rounds to 7)", []float64{4, 1, 3, 2}, 0.7, []bool{true, false, true, false}},
		{"just above 0.7", []float64{4, 1, 3, 2}, 0.7000001, []bool{true, false, true, true}},
		{"ties by index", []float64{1, 1, 1, 1}, 0.5, []bool{true, true, false, false}},
		{"θ=1 never takes zeros", []float64{0, 3, 0, 1}, 1, []bool{false, true, false, true}},
		// 0.1·3 in index order rounds up to 0.30000000000000004, above the
		// exact sum of the three, so no prefix reaches it: all positive.
		{"θ=1 rounded total", []float64{0.1, 0.1, 0.1, 0}, 1, []bool{true, true, true, false}},
		// 1e20 + 1 rounds to 1e20, the bound, which 1e20 alone reaches.
		{"θ=1 absorbed value", []float64{1, 1e20}, 1, []bool{false, true}},
		// 1e20 + 16384 rounds to 1e20 + 16384 (the ulp there): both needed.
		{"θ=1 visible value", []float64{16384, 1e20}, 1, []bool{true, true}},
		// Total in index order: 2⁵³+2 ⊕ 1 = 2⁵³+4 (tie to even), ⊕ 1 = 2⁵³+4.
		// A rounded prefix sum 2⁵³+2 ⊕ 1 reaches it with two triangles; the
		// exact 2⁵³+3 does not, so all three are needed.
		{"exact prefix sums", []float64{0x1p53 + 2, 1, 1}, 1, []bool{true, true, true}},
		{"overflowing total", []float64{1e308, 1e308, 1e308}, 0.5, []bool{true, true, false}},
		{"overflowing total θ=0.3", []float64{1e308, 1e308, 1e308}, 0.3, []bool{true, false, false}},
		{"bound underflows to 0", []float64{5e-324, 5e-324}, 1e-9, []bool{true, false}},
	})
}

func TestMaximum(t *testing.T) {
	t.Parallel()
	runMaskCases(t, func(theta float64) Marker { return Maximum{Theta: theta} }, []maskCase{
		{"empty", nil, 0.5, []bool{}},
		{"θ=0 marks all", []float64{0, 1, 2}, 0, []bool{true, true, true}},
		{"θ=1 marks the ties at the top", []float64{4, 1, 4, 2}, 1, []bool{true, false, true, false}},
		{"η ≥ ½ max η is η² ≥ ¼ max η²", []float64{4, 0.99, 1, 2}, 0.5, []bool{true, false, true, true}},
		{"all zero", []float64{0, 0}, 0, []bool{false, false}},
	})
	// Random inputs against a reference that walks the sorted order and
	// compares η (square roots) where the rounding cannot matter.
	r := rand.New(rand.NewPCG(1, 1))
	for _, d := range dists {
		for _, n := range []int{1, 10, 1000} {
			eta2 := d.draw(r, n)
			for _, theta := range []float64{0, 0.25, 0.5, 0.9, 1} {
				got, err := Maximum{Theta: theta}.Mark(nil, eta2)
				if err != nil {
					t.Fatal(err)
				}
				order := refOrder(eta2)
				top := math.Sqrt(eta2[order[0]])
				want := make([]bool, n)
				for k := 0; top > 0 && k < n; k++ {
					i := order[k]
					e := math.Sqrt(eta2[i])
					if math.Abs(e-theta*top) <= 1e-12*top && theta > 0 {
						want[i] = got[i] // borderline: rounding decides, accept either
						continue
					}
					if e < theta*top {
						break
					}
					want[i] = true
				}
				if !slices.Equal(got, want) {
					t.Errorf("%s n=%d θ=%g: marked %d, want %d", d.name, n, theta, count(got), count(want))
				}
			}
		}
	}
}

func TestFraction(t *testing.T) {
	t.Parallel()
	if got, _ := (Fraction{F: 0.3}).Mark(nil, make([]float64, 10)); count(got) != 3 {
		t.Errorf("F=0.3 N=10 marks %d, want 3", count(got))
	}
	if got, _ := (Fraction{F: 0.07}).Mark(nil, make([]float64, 100)); count(got) != 7 {
		t.Errorf("F=0.07 N=100 (product 7.000000000000001) marks %d, want 7", count(got))
	}
	eachDist(t, func(t *testing.T, d dist, r *rand.Rand) {
		for _, n := range sizes(r) {
			eta2 := d.draw(r, n)
			order := refOrder(eta2)
			for _, pct := range []int{1, 7, 10, 25, 30, 50, 99, 100} {
				f := float64(pct) / 100
				got, err := Fraction{F: f}.Mark(nil, eta2)
				if err != nil {
					t.Fatal(err)
				}
				k := (pct*n + 99) / 100 // ⌈pct·n/100⌉ in integers
				if want := maskOf(n, order[:k]); !slices.Equal(got, want) {
					t.Errorf("n=%d F=%g: marked %d, want the first %d", n, f, count(got), k)
				}
			}
		}
	})
}

// errCase is a marker and input that must fail with want; triangle is
// the index an *IndicatorError must name, or -1 for none.
type errCase struct {
	name     string
	m        Marker
	eta2     []float64
	want     error
	triangle int
}

func TestErrors(t *testing.T) {
	t.Parallel()
	good := []float64{1, 2, 3, 4, 5}
	bad := func(i int, v float64) []float64 {
		e := slices.Clone(good)
		e[i] = v
		return e
	}
	tests := []errCase{
		{"Dorfler θ=0", Dorfler{Theta: 0}, good, ErrTheta, -1},
		{"Dorfler θ=-0.1", Dorfler{Theta: -0.1}, good, ErrTheta, -1},
		{"Dorfler θ=1.1", Dorfler{Theta: 1.1}, good, ErrTheta, -1},
		{"Dorfler θ=NaN", Dorfler{Theta: math.NaN()}, good, ErrTheta, -1},
		{"Maximum θ=-0.1", Maximum{Theta: -0.1}, good, ErrTheta, -1},
		{"Maximum θ=1.1", Maximum{Theta: 1.1}, good, ErrTheta, -1},
		{"Maximum θ=NaN", Maximum{Theta: math.NaN()}, good, ErrTheta, -1},
		{"Fraction F=0", Fraction{F: 0}, good, ErrTheta, -1},
		{"Fraction F=1.5", Fraction{F: 1.5}, good, ErrTheta, -1},
		{"Fraction F=NaN", Fraction{F: math.NaN()}, good, ErrTheta, -1},
		{"θ checked before indicators", Dorfler{Theta: 2}, bad(1, -1), ErrTheta, -1},
	}
	for _, m := range []Marker{Dorfler{Theta: 0.5}, Maximum{Theta: 0.5}, Fraction{F: 0.5}} {
		for i, v := range []float64{math.NaN(), math.Inf(-1), math.Inf(1), -1} {
			tests = append(tests, errCase{fmt.Sprintf("%T η²[%d]=%v", m, i, v), m, bad(i, v), ErrIndicator, i})
		}
		tests = append(tests, errCase{fmt.Sprintf("%T first bad index", m), m, []float64{1, -1, math.NaN()}, ErrIndicator, 1})
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			dst := []bool{true, false, true, false, true, false, true}
			before := slices.Clone(dst)
			got, err := tt.m.Mark(dst[:5], tt.eta2)
			if !errors.Is(err, tt.want) {
				t.Fatalf("err = %v, want %v", err, tt.want)
			}
			if got != nil {
				t.Errorf("mask = %v on error, want nil", got)
			}
			if !slices.Equal(dst, before) {
				t.Errorf("dst changed on error: %v, was %v", dst, before)
			}
			var ie *IndicatorError
			if errors.As(err, &ie) != (tt.triangle >= 0) {
				t.Fatalf("errors.As(%v, *IndicatorError) disagrees with the case", err)
			}
			if ie != nil && ie.Triangle != tt.triangle {
				t.Errorf("Triangle = %d, want %d", ie.Triangle, tt.triangle)
			}
		})
	}
	for _, c := range []struct {
		v    float64
		want string
	}{
		{-1, "adapt: triangle 17: indicator -1: negative"},
		{math.NaN(), "adapt: triangle 17: indicator NaN: not a number"},
		{math.Inf(1), "adapt: triangle 17: indicator +Inf: infinite"},
	} {
		if msg := (&IndicatorError{Triangle: 17, Value: c.v, Err: ErrIndicator}).Error(); msg != c.want {
			t.Errorf("Error() = %q, want %q", msg, c.want)
		}
	}
}

func TestDstReuse(t *testing.T) {
	t.Parallel()
	eta2 := []float64{4, 1, 3, 2, 0, 0, 5, 1}
	for _, m := range []Marker{Dorfler{Theta: 0.5}, Maximum{Theta: 0.5}, Fraction{F: 0.25}} {
		t.Run(fmt.Sprintf("%T", m), func(t *testing.T) {
			t.Parallel()
			want, _ := m.Mark(nil, eta2)
			buf := make([]bool, 20)
			for i := range buf {
				buf[i] = true
			}
			for _, dst := range [][]bool{buf[:3], buf[:8], buf} { // grow, same, shrink
				got, err := m.Mark(dst, eta2)
				if err != nil || !slices.Equal(got, want) {
					t.Fatalf("Mark(len %d) = %v, %v; want %v", len(dst), got, err, want)
				}
				if &got[0] != &buf[0] {
					t.Errorf("Mark(len %d, cap %d) did not reuse dst", len(dst), cap(dst))
				}
			}
			if got, _ := m.Mark(make([]bool, 2), eta2); !slices.Equal(got, want) {
				t.Errorf("small dst: %v, want %v", got, want)
			}
		})
	}
}

// TestDeterminism is not parallel: it sets GOMAXPROCS.
func TestDeterminism(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	r := rand.New(rand.NewPCG(1, 1))
	eta2 := dists[3].draw(r, 5000) // ties: the order rests on indices
	var masks [][]bool
	for _, procs := range []int{1, 2, 1} {
		runtime.GOMAXPROCS(procs)
		m, err := Dorfler{Theta: 0.5}.Mark(nil, eta2)
		if err != nil {
			t.Fatal(err)
		}
		masks = append(masks, m)
	}
	for _, m := range masks[1:] {
		if !slices.Equal(m, masks[0]) {
			t.Fatal("Dorfler marks differ between GOMAXPROCS 1 and 2")
		}
	}
}

func TestConcurrent(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(1, 1))
	eta2 := dists[1].draw(r, 3000)
	markers := []Marker{Dorfler{Theta: 0.5}, Maximum{Theta: 0.5}, Fraction{F: 0.1}}
	want := make([][]bool, len(markers))
	for i, m := range markers {
		want[i], _ = m.Mark(nil, eta2)
	}
	var wg sync.WaitGroup
	for g := range 8 {
		wg.Go(func() {
			var dst []bool
			for rep := range 20 {
				i := (g + rep) % len(markers)
				var err error
				dst, err = markers[i].Mark(dst, eta2)
				if err != nil || !slices.Equal(dst, want[i]) {
					t.Errorf("goroutine %d: %T differs", g, markers[i])
					return
				}
			}
		})
	}
	wg.Wait()
}

func TestExactSum(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(1, 1))
	for _, shift := range []uint{0, 128} {
		var a exactSum
		want := exact()
		for range 3000 {
			// Any non-negative finite float64, subnormals included.
			v := math.Float64frombits(r.Uint64() >> 1)
			if !valid(v) {
				v = math.MaxFloat64
			}
			a.addScaled(v, shift)
			want.Add(want, new(big.Float).SetMantExp(big.NewFloat(v), int(shift)))
		}
		a.normalize()
		got := new(big.Int)
		for i := len(a) - 1; i >= 0; i-- {
			got.Lsh(got, 32).Add(got, new(big.Int).SetUint64(a[i]))
		}
		w, acc := want.SetMantExp(want, 1074).Int(nil)
		if acc != big.Exact || got.Cmp(w) != 0 {
			t.Errorf("shift %d: exact sum %v, want %v (%v)", shift, got, w, acc)
		}
	}
}

// TestDorflerLarge runs the bucket passes on several goroutines (above
// 2·2¹⁶ indicators): the marks equal the sort-and-prefix reference
// whatever GOMAXPROCS is, and a bad value is reported at its lowest index.
// It is not parallel: it sets GOMAXPROCS.
func TestDorflerLarge(t *testing.T) {
	if testing.Short() {
		t.Skip("big-float reference on 200,003 indicators")
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	r := rand.New(rand.NewPCG(7, 7))
	const n = 200003
	for _, d := range []dist{dists[1], dists[2], dists[3], dists[9], dists[10]} {
		eta2 := d.draw(r, n)
		for _, theta := range []float64{0.5, 0.99} {
			want := refDorfler(eta2, theta)
			for _, procs := range []int{1, 2, 3} {
				runtime.GOMAXPROCS(procs)
				got, err := Dorfler{Theta: theta}.Mark(nil, eta2)
				if err != nil {
					t.Fatal(err)
				}
				if !slices.Equal(got, want) {
					t.Errorf("%s θ=%g GOMAXPROCS=%d: marks %d triangles, the reference %d", d.name, theta, procs, count(got), count(want))
				}
			}
		}
	}
	eta2 := dists[0].draw(r, n)
	eta2[150000], eta2[190000], eta2[199999] = math.NaN(), -1, math.Inf(1)
	for _, procs := range []int{1, 2, 3} {
		runtime.GOMAXPROCS(procs)
		_, err := Dorfler{Theta: 0.5}.Mark(nil, eta2)
		var ie *IndicatorError
		if !errors.As(err, &ie) || ie.Triangle != 150000 {
			t.Errorf("GOMAXPROCS=%d: %v, want ErrIndicator at 150000", procs, err)
		}
	}
}

// eachDist runs f as a parallel subtest for each distribution of dists,
// with a generator seeded alike for each.
func eachDist(t *testing.T, f func(t *testing.T, d dist, r *rand.Rand)) {
	t.Helper()
	for _, d := range dists {
		t.Run(d.name, func(t *testing.T) {
			t.Parallel()
			f(t, d, rand.New(rand.NewPCG(1, 1)))
		})
	}
}
