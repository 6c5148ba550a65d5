package amg

import (
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// randomSparse returns a reproducible rows × cols matrix with about
// density·rows·cols stored entries, some of them explicit zeros.
func randomSparse(rows, cols int, density float64, seed uint64) *sparse.CSR {
	r := rand.New(rand.NewPCG(seed, 3))
	m := &sparse.CSR{Rows: rows, Cols: cols, RowPtr: make([]int32, rows+1)}
	for i := range rows {
		for j := range cols {
			if r.Float64() < density {
				v := 2*r.Float64() - 1
				if r.IntN(10) == 0 {
					v = 0
				}
				m.Col = append(m.Col, int32(j))
				m.Val = append(m.Val, v)
			}
		}
		m.RowPtr[i+1] = int32(len(m.Col))
	}
	return m
}

// denseEqual reports the largest difference between m and d, and fails if
// m is not a valid CSR.
func denseDiff(t *testing.T, m *sparse.CSR, d mat.Matrix) float64 {
	t.Helper()
	if err := m.Validate(); err != nil {
		t.Fatal(err)
	}
	var diff mat.Dense
	diff.Sub(m.Dense(), d)
	return mat.Norm(&diff, math.Inf(1))
}

// TestMul compares mul with gonum's dense product (the reference), and
// transpose with gonum's transpose.
func TestMul(t *testing.T) {
	for s, dims := range [][3]int{{1, 1, 1}, {7, 5, 9}, {40, 60, 30}, {300, 200, 250}} {
		a := randomSparse(dims[0], dims[1], 0.1, uint64(2*s))
		b := randomSparse(dims[1], dims[2], 0.1, uint64(2*s+1))
		c, err := mul(nil, a, b, nil)
		if err != nil {
			t.Fatal(err)
		}
		var want mat.Dense
		want.Mul(a.Dense(), b.Dense())
		if d := denseDiff(t, c, &want); d > 1e-13 {
			t.Errorf("%v: |a·b − gonum| = %g", dims, d)
		}
		if d := denseDiff(t, transpose(nil, a, nil), a.Dense().T()); d != 0 {
			t.Errorf("%v: |aᵀ − gonum| = %g", dims, d)
		}
	}
}

// TestSymmetrize checks that both symmetrisations give (a + aᵀ)/2, with
// gonum's dense arithmetic as the reference, and bit-for-bit symmetric
// results: the in-place one for a structurally symmetric a with rounding
// asymmetry, the general one for a structurally asymmetric a.
func TestSymmetrize(t *testing.T) {
	a := randomSparse(50, 50, 0.1, 5)
	structural := symmetrize(a) // symmetric pattern, values symmetric
	for k := range structural.Val {
		structural.Val[k] *= 1 + 1e-15*float64(k%3) // rounding-size asymmetry
	}
	for name, m := range map[string]*sparse.CSR{"asymmetric pattern": a, "symmetric pattern": structural} {
		var want mat.Dense
		want.Add(m.Dense(), m.Dense().T())
		want.Scale(0.5, &want)
		c := &sparse.CSR{Rows: m.Rows, Cols: m.Cols, RowPtr: m.RowPtr, Col: m.Col, Val: slices.Clone(m.Val)}
		inPlace := symmetrizeInPlace(c)
		if inPlace != (name == "symmetric pattern") {
			t.Errorf("%s: symmetrizeInPlace = %v", name, inPlace)
		}
		if !inPlace {
			c = symmetrize(c)
		}
		if d := denseDiff(t, c, &want); d > 1e-15 {
			t.Errorf("%s: |sym − gonum| = %g", name, d)
		}
		for i := range c.Rows {
			for k := c.RowPtr[i]; k < c.RowPtr[i+1]; k++ {
				if c.Val[k] != c.At(int(c.Col[k]), i) {
					t.Fatalf("%s: not symmetric at (%d,%d)", name, i, c.Col[k])
				}
			}
		}
	}
}

// laplace1D returns the 1D Laplacian tridiag(−1, 2, −1) of n nodes whose
// first and last rows and columns are replaced by identity rows, the
// eliminated entries kept as explicit zeros, as fem.Assemble does for
// Dirichlet nodes.
func laplace1D(n int) *sparse.CSR {
	m := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for j := max(0, i-1); j <= min(n-1, i+1); j++ {
			v := -1.0
			switch {
			case i == j && (i == 0 || i == n-1):
				v = 1
			case i == j:
				v = 2
			case i == 0 || i == n-1 || j == 0 || j == n-1:
				v = 0
			}
			m.Col = append(m.Col, int32(j))
			m.Val = append(m.Val, v)
		}
		m.RowPtr[i+1] = int32(len(m.Col))
	}
	return m
}

// TestAggregate1D checks the greedy aggregation on the 1D Laplacian with
// Dirichlet ends against the result derived by hand from the three passes:
// node 1 is the first root ({1,2}), then every third node ({3,4,5},
// {6,7,8}, {9,10,11}); node 12, whose neighbour 11 is taken, joins the
// last aggregate in pass 2; the Dirichlet nodes 0 and 13 are isolated.
func TestAggregate1D(t *testing.T) {
	a := laplace1D(14)
	diag := a.Diagonal(nil)
	var conn connections
	strength(&conn, a, diag, DefaultTheta)
	agg, nagg := aggregate(a, conn.strong, new(workspace))
	want := []int32{isolated, 0, 0, 1, 1, 1, 2, 2, 2, 3, 3, 3, 3, isolated}
	if nagg != 4 || !slices.Equal(agg, want) {
		t.Errorf("agg = %v (%d), want %v (4)", agg, nagg, want)
	}
}

// TestCholesky compares the dense factorisation with gonum's Cholesky
// solve on a random SPD matrix, and checks the semi-definite case on the
// singular 1D Neumann Laplacian (null space: the constants): the solution
// of a consistent system satisfies A x = b, and the generalised inverse is
// symmetric.
func TestCholesky(t *testing.T) {
	n := 60
	r := randomSparse(n, n, 0.2, 9)
	var spd mat.SymDense
	spd.SymOuterK(1, r.Dense())
	for i := range n {
		spd.SetSym(i, i, spd.At(i, i)+1)
	}
	a := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for j := range n {
			a.Col = append(a.Col, int32(j))
			a.Val = append(a.Val, spd.At(i, j))
		}
		a.RowPtr[i+1] = int32(len(a.Col))
	}
	c, err := factor(nil, a)
	if err != nil {
		t.Fatal(err)
	}
	b := randomVector(n, 1)
	x := make([]float64, n)
	c.solve(x, b)
	var ch mat.Cholesky
	if !ch.Factorize(&spd) {
		t.Fatal("gonum: not SPD")
	}
	var want mat.VecDense
	if err := ch.SolveVecTo(&want, mat.NewVecDense(n, b)); err != nil {
		t.Fatal(err)
	}
	if e := maxRelDiff(x, want.RawVector().Data); e > 1e-12 {
		t.Errorf("SPD: differs from gonum by %g", e)
	}

	// Singular: the 1D Laplacian with natural boundary conditions.
	m := 40
	l := &sparse.CSR{Rows: m, Cols: m, RowPtr: make([]int32, m+1)}
	for i := range m {
		for j := max(0, i-1); j <= min(m-1, i+1); j++ {
			v := -1.0
			if i == j {
				v = 2
				if i == 0 || i == m-1 {
					v = 1
				}
			}
			l.Col = append(l.Col, int32(j))
			l.Val = append(l.Val, v)
		}
		l.RowPtr[i+1] = int32(len(l.Col))
	}
	c, err = factor(nil, l)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(c.null, true) {
		t.Fatal("singular matrix: no dropped pivot")
	}
	b, y := randomVector(m, 2), randomVector(m, 3)
	for _, v := range [][]float64{b, y} { // make consistent: zero sum
		s := 0.0
		for _, e := range v {
			s += e
		}
		for i := range v {
			v[i] -= s / float64(m)
		}
	}
	gb, gy, res := make([]float64, m), make([]float64, m), make([]float64, m)
	c.solve(gb, b)
	c.solve(gy, y)
	l.MulVec(res, gb)
	if e := maxRelDiff(res, b); e > 1e-12 {
		t.Errorf("singular: |A G b − b| = %g relative", e)
	}
	if d := math.Abs(dot(y, gb)-dot(gy, b)) / math.Sqrt(dot(gb, b)*dot(gy, y)); d > 1e-12 {
		t.Errorf("singular: G not symmetric, %g", d)
	}
}

// TestChebyshevPolynomial checks the Chebyshev smoother against the
// closed form of its error propagation: m steps on A x = 0 map an
// eigenvector v of D⁻¹A with eigenvalue λ to p(λ) v, where
//
//	p(λ) = T_m((θ − λ)/δ) / T_m(θ/δ),
//
// T_m the Chebyshev polynomial of the first kind, θ and δ the centre and
// half-width of the smoothing interval (Saad, Iterative Methods for Sparse
// Linear Systems, 2nd ed., §12.1.1). The matrix is tridiag(−c, 1, −c),
// whose eigenvectors sin(kπ(i+1)/(n+1)) and eigenvalues
// 1 − 2c cos(kπ/(n+1)) are classical; with unit diagonal D⁻¹A = A.
func TestChebyshevPolynomial(t *testing.T) {
	const n, c = 2100, 0.45 // more than maxDense: a smoother-only level
	a := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for j := max(0, i-1); j <= min(n-1, i+1); j++ {
			v := -c
			if i == j {
				v = 1
			}
			a.Col = append(a.Col, int32(j))
			a.Val = append(a.Val, v)
		}
		a.RowPtr[i+1] = int32(len(a.Col))
	}
	cheb := func(m int, x float64) float64 {
		if math.Abs(x) <= 1 {
			return math.Cos(float64(m) * math.Acos(x))
		}
		return math.Copysign(1, x) * math.Cosh(float64(m)*math.Acosh(math.Abs(x))) * math.Pow(math.Copysign(1, x), float64(m-1))
	}
	for _, m := range []int{1, 2, 3, 5} {
		h, err := New(a, Settings{MaxLevels: 1, Smoother: Chebyshev, Smoothing: m})
		if err != nil {
			t.Fatal(err)
		}
		lv := &h.levels[0]
		if lv.chol != nil {
			t.Fatal("level is solved, not smoothed")
		}
		lo, hi := lv.lmax/chebyshevRatio, lv.lmax
		theta, delta := (hi+lo)/2, (hi-lo)/2
		zero := make([]float64, n)
		for _, k := range []int{1, 300, 1000, 1700, 2100} {
			x := make([]float64, n)
			for i := range x {
				x[i] = math.Sin(float64(k) * math.Pi * float64(i+1) / float64(n+1))
			}
			lambda := 1 - 2*c*math.Cos(float64(k)*math.Pi/float64(n+1))
			want := cheb(m, (theta-lambda)/delta) / cheb(m, theta/delta)
			x0 := slices.Clone(x)
			h.post(lv, x, zero)
			for i := range x {
				if math.Abs(x[i]-want*x0[i]) > 1e-12 {
					t.Fatalf("m = %d, k = %d: x[%d] = %g, want %g·%g", m, k, i, x[i], want, x0[i])
				}
			}
		}
	}
}

// randomVector returns a reproducible vector with entries uniform in
// [-1, 1).
func randomVector(n int, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 7))
	v := make([]float64, n)
	for i := range v {
		v[i] = 2*r.Float64() - 1
	}
	return v
}

func dot(x, y []float64) float64 {
	s := 0.0
	for i := range x {
		s += x[i] * y[i]
	}
	return s
}

// maxRelDiff returns max|x − y| / max|y|.
func maxRelDiff(x, y []float64) float64 {
	d, m := 0.0, 0.0
	for i := range x {
		d = max(d, math.Abs(x[i]-y[i]))
		m = max(m, math.Abs(y[i]))
	}
	return d / m
}

// randomRows returns a reproducible rows × cols matrix with about perRow
// stored entries per row at random columns, sorted, with random values.
func randomRows(rows, cols, perRow int, seed uint64) *sparse.CSR {
	r := rand.New(rand.NewPCG(seed, 5))
	m := &sparse.CSR{Rows: rows, Cols: cols, RowPtr: make([]int32, rows+1)}
	for i := range rows {
		row := make([]int32, 0, perRow)
		for range r.IntN(2*perRow + 1) {
			row = append(row, int32(r.IntN(cols)))
		}
		slices.Sort(row)
		row = slices.Compact(row)
		for _, j := range row {
			m.Col = append(m.Col, j)
			m.Val = append(m.Val, 2*r.Float64()-1)
		}
		m.RowPtr[i+1] = int32(len(m.Col))
	}
	return m
}

// TestTransposeParallel checks the parallel transpose against a
// sequential counting sort, bit for bit, for several GOMAXPROCS, on a
// matrix with enough rows to be split.
func TestTransposeParallel(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	a := randomRows(5*setupGrain+17, 3001, 4, 1)
	want := &sparse.CSR{Rows: a.Cols, Cols: a.Rows, RowPtr: make([]int32, a.Cols+1)}
	cols := make([][]int32, a.Cols)
	vals := make([][]float64, a.Cols)
	for i := range a.Rows {
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			j := a.Col[k]
			cols[j] = append(cols[j], int32(i))
			vals[j] = append(vals[j], a.Val[k])
		}
	}
	for j := range a.Cols {
		want.Col = append(want.Col, cols[j]...)
		want.Val = append(want.Val, vals[j]...)
		want.RowPtr[j+1] = int32(len(want.Col))
	}
	for _, procs := range []int{1, 2, 3, 8} {
		runtime.GOMAXPROCS(procs)
		got := transpose(nil, a, nil)
		if err := got.Validate(); err != nil {
			t.Fatalf("GOMAXPROCS=%d: %v", procs, err)
		}
		if !slices.Equal(got.RowPtr, want.RowPtr) || !slices.Equal(got.Col, want.Col) || !slices.Equal(got.Val, want.Val) {
			t.Fatalf("GOMAXPROCS=%d: transpose differs from the sequential one", procs)
		}
	}
}

// TestColour checks the greedy colouring on a random symmetric pattern:
// every row has one colour, the rows of a colour are ascending and no
// stored entry joins two rows of the same colour; and a forward
// multicolour Gauss–Seidel sweep from zero leaves the rows of the last
// colour with a zero residual (up to rounding), as Gauss–Seidel does for
// the last row of its order.
func TestColour(t *testing.T) {
	n := 3000
	a := randomRows(n, n, 3, 2)
	a = symmetrize(a)
	// Make it diagonally dominant with a stored diagonal.
	d := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if int(a.Col[k]) != i {
				d.Col = append(d.Col, a.Col[k])
				d.Val = append(d.Val, -math.Abs(a.Val[k]))
			}
		}
		d.Col = append(d.Col, int32(i))
		d.Val = append(d.Val, 10)
		lo := int(d.RowPtr[i])
		sortPairs(d.Col[lo:], d.Val[lo:], nil)
		d.RowPtr[i+1] = int32(len(d.Col))
	}
	a = d
	lv := level{a: a}
	if err := newLevel(&lv, new(workspace), 0); err != nil {
		t.Fatal(err)
	}
	var c colouring
	colour(&c, a, lv.invDiag)
	nc := c.colours()
	col := make([]int, n)
	for i := range col {
		col[i] = -1
	}
	maxRow := 0
	for q := range nc {
		rows := c.rows[c.ptr[q]:c.ptr[q+1]]
		if !slices.IsSorted(rows) {
			t.Fatalf("colour %d: rows not ascending", q)
		}
		for _, i := range rows {
			if col[i] >= 0 {
				t.Fatalf("row %d has colours %d and %d", i, col[i], q)
			}
			col[i] = q
		}
	}
	for i := range n {
		if col[i] < 0 {
			t.Fatalf("row %d has no colour", i)
		}
		maxRow = max(maxRow, int(a.RowPtr[i+1]-a.RowPtr[i])-1)
		for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
			if j := int(a.Col[k]); j != i && col[j] == col[i] {
				t.Fatalf("rows %d and %d are joined and have colour %d", i, j, col[i])
			}
		}
	}
	if nc < 2 || nc > maxRow+1 {
		t.Errorf("%d colours, want 2..%d", nc, maxRow+1)
	}
	// The colour-ordered copy holds the entries of the rows of a, sorted
	// by the colour of their column, then by column, with the diagonal
	// entry at diag[q].
	for q, i := range c.rows {
		cs, vs := c.m.Col[c.m.RowPtr[q]:c.m.RowPtr[q+1]], c.m.Val[c.m.RowPtr[q]:c.m.RowPtr[q+1]]
		for u := range cs {
			if k := a.Index(int(i), int(cs[u])); k < 0 || a.Val[k] != vs[u] {
				t.Fatalf("row %d of the copy: entry %d is not in row %d", q, cs[u], i)
			}
			if u > 0 && (col[cs[u-1]] > col[cs[u]] || col[cs[u-1]] == col[cs[u]] && cs[u-1] >= cs[u]) {
				t.Fatalf("row %d of the copy is not sorted by colour, then column", q)
			}
		}
		if len(cs) != int(a.RowPtr[i+1]-a.RowPtr[i]) || c.m.Col[c.diag[q]] != i || c.inv[q] != lv.invDiag[i] {
			t.Fatalf("row %d of the copy: length, diagonal or 1/a_ii wrong", q)
		}
	}
	// A forward sweep from zero and its residual, against the sweep over
	// full rows and the full residual.
	b := randomVector(n, 3)
	x, y := make([]float64, n), make([]float64, n)
	for q := range nc {
		mode := sweepZero
		if q == 0 {
			mode = sweepFirst
		}
		k := colourKernel{c: &c, lo: int(c.ptr[q]), hi: int(c.ptr[q+1]), x: x, b: b, mode: mode}
		k.rows(0, k.hi-k.lo)
		k = colourKernel{c: &c, lo: int(c.ptr[q]), hi: int(c.ptr[q+1]), x: y, b: b, mode: sweepFull}
		k.rows(0, k.hi-k.lo)
	}
	if e := maxRelDiff(x, y); e > 1e-14 {
		t.Errorf("sweep from zero differs from the full sweep by %g", e)
	}
	r, ru := make([]float64, n), make([]float64, n)
	(&residualKernel{a: a, x: x, b: b, r: r}).rows(0, n)
	(&colourResidualKernel{c: &c, x: x, r: ru}).rows(0, n)
	if e := maxRelDiff(ru, r); e > 1e-13 {
		t.Errorf("residual of the upper parts differs from the full one by %g", e)
	}
	for _, i := range c.rows[c.ptr[nc-1]:] {
		if math.Abs(r[i]) > 1e-13 || ru[i] != 0 {
			t.Fatalf("row %d of the last colour: residual %g (%g) after the forward sweep", i, r[i], ru[i])
		}
	}
}

// TestPowerRho checks the power-method estimate on the 1D Laplacian
// tridiag(−1, 2, −1), whose D⁻¹A has the largest eigenvalue
// 1 + cos(π/(n+1)): the estimate is a lower bound that approaches it, and
// it is bit-identical for several GOMAXPROCS (the matrix has enough rows
// for the blocks to be split over goroutines).
func TestPowerRho(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	n := 4*setupGrain + 5
	a := &sparse.CSR{Rows: n, Cols: n, RowPtr: make([]int32, n+1)}
	for i := range n {
		for j := max(0, i-1); j <= min(n-1, i+1); j++ {
			v := -1.0
			if i == j {
				v = 2
			}
			a.Col = append(a.Col, int32(j))
			a.Val = append(a.Val, v)
		}
		a.RowPtr[i+1] = int32(len(a.Col))
	}
	diag, inv := make([]float64, n), make([]float64, n)
	for i := range diag {
		diag[i], inv[i] = 2, 0.5
	}
	lmax := 1 + math.Cos(math.Pi/float64(n+1))
	var ref float64
	for _, procs := range []int{1, 2, 3} {
		runtime.GOMAXPROCS(procs)
		rho := powerRho(nil, a, a.Val, diag, inv, 40)
		if procs == 1 {
			ref = rho
			if !(rho <= lmax && rho > 0.99*lmax) {
				t.Fatalf("estimate %.6f, want in (0.99, 1]·%.6f", rho, lmax)
			}
			continue
		}
		if math.Float64bits(rho) != math.Float64bits(ref) {
			t.Fatalf("GOMAXPROCS=%d: estimate %v, want %v (GOMAXPROCS=1)", procs, rho, ref)
		}
	}
}

// TestValid checks that the parallel check agrees with CSR.Validate on a
// valid matrix and on corruptions of each rule, placed in the last rows
// so that they fall in another range than the first (the matrix has
// enough rows to be split).
func TestValid(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(3))
	base := laplace1D(4*setupGrain + 3)
	n := base.Rows
	last := int(base.RowPtr[n-1]) // first entry of the last row
	corrupt := map[string]func(a *sparse.CSR){
		"valid":            func(a *sparse.CSR) {},
		"NaN":              func(a *sparse.CSR) { a.Val[last] = math.NaN() },
		"Inf":              func(a *sparse.CSR) { a.Val[last+1] = math.Inf(1) },
		"column too large": func(a *sparse.CSR) { a.Col[last+1] = int32(n) },
		"column negative":  func(a *sparse.CSR) { a.Col[last] = -1 },
		"not ascending":    func(a *sparse.CSR) { a.Col[last], a.Col[last+1] = a.Col[last+1], a.Col[last] },
		"RowPtr decreases": func(a *sparse.CSR) { a.RowPtr[n-1] = a.RowPtr[n-2] - 1 },
		"RowPtr end":       func(a *sparse.CSR) { a.RowPtr[n]-- },
		"lengths":          func(a *sparse.CSR) { a.Val = a.Val[:len(a.Val)-1] },
		"RowPtr length":    func(a *sparse.CSR) { a.RowPtr = a.RowPtr[:n] },
	}
	for name, f := range corrupt {
		a := &sparse.CSR{Rows: n, Cols: n, RowPtr: slices.Clone(base.RowPtr), Col: slices.Clone(base.Col), Val: slices.Clone(base.Val)}
		f(a)
		if got, want := valid(a), a.Validate() == nil; got != want || got != (name == "valid") {
			t.Errorf("%s: valid = %v, Validate ok = %v", name, got, want)
		}
	}
}
