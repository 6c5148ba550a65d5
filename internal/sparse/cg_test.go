package sparse

import (
	"errors"
	"math"
	"runtime"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// choleskySolve solves a x = b with the dense Cholesky factorisation of the
// reference library, gonum (mat.Cholesky).
func choleskySolve(t *testing.T, a *CSR, b []float64) []float64 {
	t.Helper()
	d := a.Dense()
	n := a.Rows
	sym := mat.NewSymDense(n, nil)
	for i := range n {
		for j := i; j < n; j++ {
			sym.SetSym(i, j, d.At(i, j))
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(sym) {
		t.Fatal("gonum Cholesky: matrix not positive definite")
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, mat.NewVecDense(n, b)); err != nil {
		t.Fatal(err)
	}
	return x.RawVector().Data
}

func TestCGAgainstCholesky(t *testing.T) {
	rnd := newRand()
	lap := laplacian2D(t, 30, 30)
	spd := randomSPD(t, rnd, 400, 0.01, 0.5)
	if err := spd.Validate(); err != nil {
		t.Fatal(err)
	}
	jl, err := NewJacobi(lap)
	if err != nil {
		t.Fatal(err)
	}
	js, err := NewJacobi(spd)
	if err != nil {
		t.Fatal(err)
	}
	// The solution error is bounded by cond(A) times the relative residual,
	// so solve to 1e-13 to compare solutions at 1e-10.
	const tol = 1e-13
	for _, tc := range []struct {
		name string
		a    *CSR
		pre  Preconditioner
	}{
		{"laplacian/identity", lap, Identity{}},
		{"laplacian/nil", lap, nil},
		{"laplacian/jacobi", lap, jl},
		{"random/identity", spd, &Identity{}},
		{"random/jacobi", spd, js},
	} {
		b := randomVec(rnd, tc.a.Rows)
		want := choleskySolve(t, tc.a, b)
		x := make([]float64, tc.a.Rows)
		res, err := CG(tc.a, b, x, tc.pre, CGSettings{Tol: tol})
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if !res.Converged || res.Iterations == 0 || !(res.Residual < tol) {
			t.Errorf("%s: result %+v", tc.name, res)
		}
		if d := relDiff(x, want); d > 1e-10 {
			t.Errorf("%s: relative difference %g from gonum Cholesky", tc.name, d)
		}
		// The reported residual is the true one.
		ax := make([]float64, len(x))
		tc.a.MulVec(ax, x)
		if r := relDiff(ax, b); math.Abs(r-res.Residual) > 1e-3*res.Residual {
			t.Errorf("%s: Residual %g, true %g", tc.name, res.Residual, r)
		}
		t.Logf("%s: %d iterations, residual %.2e", tc.name, res.Iterations, res.Residual)
	}
}

func TestCGDefaultsAndInitialGuess(t *testing.T) {
	a := laplacian2D(t, 30, 30)
	rnd := newRand()
	b := randomVec(rnd, a.Rows)
	x := make([]float64, a.Rows)
	res, err := CG(a, b, x, nil, CGSettings{})
	if err != nil || !(res.Residual <= DefaultTol) {
		t.Fatalf("default settings: %+v, %v", res, err)
	}
	// Restarting from the solution takes no iterations.
	res2, err := CG(a, b, x, nil, CGSettings{})
	if err != nil || res2.Iterations != 0 || !res2.Converged {
		t.Errorf("from solution: %+v, %v", res2, err)
	}
	// A looser tolerance takes fewer iterations.
	x = make([]float64, a.Rows)
	res3, err := CG(a, b, x, nil, CGSettings{Tol: 1e-4})
	if err != nil || res3.Iterations >= res.Iterations || !(res3.Residual <= 1e-4) {
		t.Errorf("Tol 1e-4: %+v vs default %+v, %v", res3, res, err)
	}
}

func TestCGNotConverged(t *testing.T) {
	a := laplacian2D(t, 30, 30)
	b := randomVec(newRand(), a.Rows)
	x := make([]float64, a.Rows)
	res, err := CG(a, b, x, nil, CGSettings{MaxIter: 5})
	if !errors.Is(err, ErrNotConverged) {
		t.Fatalf("got %v, want ErrNotConverged", err)
	}
	if res.Iterations != 5 || res.Converged || !(res.Residual > 0 && res.Residual < 1) {
		t.Errorf("result %+v", res)
	}
	if firstNonFinite(x) >= 0 {
		t.Error("x not finite")
	}
	t.Log(err)
}

func TestCGBreakdown(t *testing.T) {
	const n = 6
	ti := make([]int32, n)
	tv := make([]float64, n)
	for i := range n {
		ti[i] = int32(i)
		tv[i] = 1
		if i%2 == 1 {
			tv[i] = -1
		}
	}
	a, err := FromTriplets(n, n, ti, ti, tv) // diag(1, -1, 1, -1, ...)
	if err != nil {
		t.Fatal(err)
	}
	b := make([]float64, n)
	for i := range b {
		b[i] = 1
	}
	x := make([]float64, n)
	_, err = CG(a, b, x, nil, CGSettings{})
	if !errors.Is(err, ErrBreakdown) {
		t.Fatalf("indefinite: got %v, want ErrBreakdown", err)
	}
	if firstNonFinite(x) >= 0 {
		t.Error("x not finite after breakdown")
	}
	t.Log(err)

	// A NaN inside the operator shows up as a breakdown, not as NaN in x.
	lap := laplacian2D(t, 5, 5)
	lap.Val[7] = math.NaN()
	x = make([]float64, lap.Rows)
	_, err = CG(lap, randomVec(newRand(), lap.Rows), x, nil, CGSettings{})
	if !errors.Is(err, ErrBreakdown) {
		t.Errorf("NaN in A: got %v, want ErrBreakdown", err)
	}
	if firstNonFinite(x) >= 0 {
		t.Error("x not finite after NaN in A")
	}
}

func TestCGBadInput(t *testing.T) {
	a := laplacian2D(t, 4, 4)
	n := a.Rows
	b := randomVec(newRand(), n)

	bad := append([]float64(nil), b...)
	bad[3] = math.NaN()
	x := make([]float64, n)
	if _, err := CG(a, bad, x, nil, CGSettings{}); !errors.Is(err, ErrNotFinite) {
		t.Errorf("NaN in b: %v", err)
	}
	xb := make([]float64, n)
	xb[0] = math.Inf(1)
	if _, err := CG(a, b, xb, nil, CGSettings{}); !errors.Is(err, ErrNotFinite) {
		t.Errorf("Inf in x: %v", err)
	}
	if _, err := CG(a, b[:n-1], x, nil, CGSettings{}); !errors.Is(err, ErrDims) {
		t.Errorf("short b: %v", err)
	}
	if _, err := CG(a, b, x[:n-1], nil, CGSettings{}); !errors.Is(err, ErrDims) {
		t.Errorf("short x: %v", err)
	}
	rect := &CSR{Rows: 2, Cols: 3, RowPtr: []int32{0, 0, 0}}
	if _, err := CG(rect, b[:2], x[:2], nil, CGSettings{}); !errors.Is(err, ErrDims) {
		t.Errorf("rectangular: %v", err)
	}
	small, err := NewJacobi(laplacian2D(t, 2, 2))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := CG(a, b, x, small, CGSettings{}); !errors.Is(err, ErrDims) {
		t.Errorf("preconditioner size: %v", err)
	}
	for _, s := range []CGSettings{{Tol: -1}, {Tol: 1}, {Tol: math.NaN()}, {MaxIter: -1}} {
		if _, err := CG(a, b, x, nil, s); !errors.Is(err, ErrSettings) {
			t.Errorf("settings %+v: %v", s, err)
		}
	}
}

func TestCGZeroRHS(t *testing.T) {
	a := laplacian2D(t, 4, 4)
	b := make([]float64, a.Rows)
	x := randomVec(newRand(), a.Rows)
	res, err := CG(a, b, x, nil, CGSettings{})
	if err != nil || res.Iterations != 0 || !res.Converged || res.Residual != 0 {
		t.Errorf("b = 0: %+v, %v", res, err)
	}
	for i, v := range x {
		if v != 0 {
			t.Fatalf("x[%d] = %g, want 0", i, v)
		}
	}
}

// TestCGAllocations checks that CG allocates only its work vectors, however
// many iterations it takes.
func TestCGAllocations(t *testing.T) {
	a := laplacian2D(t, 20, 20)
	j, err := NewJacobi(a)
	if err != nil {
		t.Fatal(err)
	}
	b := randomVec(newRand(), a.Rows)
	x := make([]float64, a.Rows)
	for _, tc := range []struct {
		pre     Preconditioner
		vectors float64
	}{{Identity{}, 3}, {j, 4}} {
		iters := 0
		allocs := func(tol float64) float64 {
			return testing.AllocsPerRun(5, func() {
				clear(x)
				res, err := CG(a, b, x, tc.pre, CGSettings{Tol: tol})
				if err != nil {
					t.Fatal(err)
				}
				iters = res.Iterations
			})
		}
		few := allocs(1e-1)
		fewIters := iters
		many := allocs(1e-10)
		if few != tc.vectors || many != tc.vectors || iters <= fewIters {
			t.Errorf("%T: %v allocations for %d iterations, %v for %d; want %v",
				tc.pre, few, fewIters, many, iters, tc.vectors)
		}
	}
}

// TestDotUpdate checks the unrolled kernels against straightforward loops
// for lengths that exercise the tail.
func TestDotUpdate(t *testing.T) {
	rnd := newRand()
	for n := range 11 {
		x, y := randomVec(rnd, n), randomVec(rnd, n)
		var want float64
		for i := range x {
			want += x[i] * y[i]
		}
		if got := dot(x, y); math.Abs(got-want) > 1e-15*float64(n+1) {
			t.Errorf("n=%d: dot = %g, want %g", n, got, want)
		}
		p, q, r := randomVec(rnd, n), randomVec(rnd, n), randomVec(rnd, n)
		wx, wr := append([]float64(nil), x...), append([]float64(nil), r...)
		var wrr float64
		for i := range wx {
			wx[i] += 0.5 * p[i]
			wr[i] -= 0.5 * q[i]
			wrr += wr[i] * wr[i]
		}
		rr := update(x, r, p, q, 0.5)
		if relDiff(x, wx) != 0 || relDiff(r, wr) != 0 || math.Abs(rr-wrr) > 1e-15*float64(n+1) {
			t.Errorf("n=%d: update differs", n)
		}
	}
}

// opOnly hides the *CSR behind the Operator interface, so that CG takes
// its path for general operators.
type opOnly struct{ *CSR }

func (o opOnly) MulVec(dst, x []float64) { o.CSR.MulVec(dst, x) }
func (o opOnly) Dims() (int, int)        { return o.CSR.Dims() }

// TestCGParallelDeterministic checks that CG gives bit-identical iterates
// for GOMAXPROCS 1 (vector operations on one goroutine), 2 and 3, on a
// system large enough (more than vecParallel unknowns) for the vector
// operations to be split, with a CSR operator (fused product) and a
// general one, and that blockDot is the sum of the block products.
func TestCGParallelDeterministic(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	a := laplacian2D(t, 260, 260) // n > 65536: the parallel vector operations
	if a.Rows <= vecParallel {
		t.Fatalf("%d rows, want > %d", a.Rows, vecParallel)
	}
	rnd := newRand()
	b := randomVec(rnd, a.Rows)
	j, err := NewJacobi(a)
	if err != nil {
		t.Fatal(err)
	}
	for _, op := range []Operator{a, opOnly{a}} {
		for _, pre := range []Preconditioner{Identity{}, j} {
			var ref []float64
			var refRes CGResult
			for _, procs := range []int{1, 2, 3} {
				runtime.GOMAXPROCS(procs)
				x := make([]float64, a.Rows)
				res, err := CG(op, b, x, pre, CGSettings{Tol: 1e-6, MaxIter: 60})
				if err != nil && !errors.Is(err, ErrNotConverged) {
					t.Fatal(err)
				}
				if ref == nil {
					ref, refRes = x, res
					continue
				}
				if res != refRes {
					t.Fatalf("%T %T GOMAXPROCS=%d: %+v, want %+v", op, pre, procs, res, refRes)
				}
				for i := range x {
					if math.Float64bits(x[i]) != math.Float64bits(ref[i]) {
						t.Fatalf("%T %T GOMAXPROCS=%d: x[%d] = %v, want %v", op, pre, procs, i, x[i], ref[i])
					}
				}
			}
		}
	}
	// The parallel path allocates per call, not per iteration: 35 more
	// iterations may add at most one allocation, not one or more per
	// iteration. (One extra allocation for 40 iterations was seen in 1 of
	// 30 runs, probably the runtime's own when a goroutine starts; CG's
	// code allocates nothing per iteration.)
	runtime.GOMAXPROCS(2)
	x := make([]float64, a.Rows)
	allocs := func(iters int) float64 {
		return testing.AllocsPerRun(3, func() {
			clear(x)
			CG(a, b, x, j, CGSettings{Tol: 1e-12, MaxIter: iters})
		})
	}
	if few, many := allocs(5), allocs(40); !raceEnabled && (many > few+1 || few > 12) {
		t.Errorf("parallel CG: %v allocations for 5 iterations, %v for 40; want at most one more and ≤ 12", few, many)
	}
	y := randomVec(rnd, a.Rows)
	want := 0.0
	for lo := 0; lo < len(b); lo += vecBlock {
		hi := min(len(b), lo+vecBlock)
		s := 0.0
		for i := lo; i < hi; i++ {
			s += b[i] * y[i]
		}
		want += s
	}
	if got := blockDot(b, y); math.Abs(got-want) > 1e-12*math.Abs(want) {
		t.Errorf("blockDot = %g, want %g", got, want)
	}
}

// With CGSettings.Work, CG gives the same iterates bit for bit (it only
// changes where the vectors live), for the identity and a Jacobi
// preconditioner, on a 2D Laplacian large enough for the parallel vector
// operations; a Work too short is ignored.
func TestCGWork(t *testing.T) {
	a := laplacian2D(t, 260, 260) // n > 65536: the parallel vector operations
	n := a.Rows
	b := randomVec(newRand(), n)
	jac, err := NewJacobi(a)
	if err != nil {
		t.Fatal(err)
	}
	for name, pre := range map[string]Preconditioner{"identity": nil, "jacobi": jac} {
		want := make([]float64, n)
		r0, err := CG(a, b, want, pre, CGSettings{Tol: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []int{4 * n, 4*n - 1} {
			work := make([]float64, w)
			for i := range work {
				work[i] = math.NaN() // values on entry must not matter
			}
			got := make([]float64, n)
			r1, err := CG(a, b, got, pre, CGSettings{Tol: 1e-6, Work: work})
			if err != nil {
				t.Fatal(err)
			}
			if r1.Iterations != r0.Iterations || !slices.Equal(got, want) {
				t.Errorf("%s, work %d: %d iterations, solution equal: %v; without work %d", name, w, r1.Iterations, slices.Equal(got, want), r0.Iterations)
			}
		}
	}
}
