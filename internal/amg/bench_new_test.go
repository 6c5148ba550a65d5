package amg_test

import (
	"fmt"
	"sync"
	"testing"
	"time"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// newFixtures caches the matrices of BenchmarkNew, which take seconds to
// build at 10⁶ unknowns, across its runs (-count).
var newFixtures struct {
	sync.Mutex
	m map[string]*sparse.CSR
}

// newFixture returns the P1 matrix of BenchmarkNew's case name, building it
// once per process.
func newFixture(b *testing.B, name string, build func() *sparse.CSR) *sparse.CSR {
	newFixtures.Lock()
	defer newFixtures.Unlock()
	if a, ok := newFixtures.m[name]; ok {
		return a
	}
	if newFixtures.m == nil {
		newFixtures.m = map[string]*sparse.CSR{}
	}
	a := build()
	newFixtures.m[name] = a
	return a
}

// BenchmarkNew measures New with the default settings on P1 matrices: the
// Laplacian of the unit square on uniform meshes with about 10⁴, 10⁵ and
// 10⁶ unknowns (a well-ordered matrix), and the L-shape problem on the
// graded mesh of TestIterationsBounded with about 9·10⁵ unknowns, whose
// bisection-numbered vertices put many entries far from the diagonal. It
// reports
//
//	ns/row      time of New per unknown
//	New/SpMV    time of New in units of one product with the matrix
//	            (the parallel MulVec, timed in the same run, half before
//	            and half after the loop)
//	B/op        bytes allocated by New
//
// and, with Reuse, the same for Hierarchy.Reset of a hierarchy that was
// last built for the same matrix. Run with
//
//	go test -run XXX -bench New -count 6 ./internal/amg
func BenchmarkNew(b *testing.B) {
	type fixture struct {
		name  string
		build func() *sparse.CSR
	}
	var cases []fixture
	for _, n := range []int{1e4, 1e5, 1e6} {
		cases = append(cases, fixture{fmt.Sprintf("square/n=%.0e", float64(n)), func() *sparse.CSR {
			return csr(assemble(b, square, baseMesh(b, square, uniformFor(square, 1, n)), 1).A)
		}})
	}
	cases = append(cases, fixture{"graded/n=9e5", func() *sparse.CSR {
		f := family{lshape, true, 1}
		return csr(assemble(b, f.d, familyMesh(b, f, 3), f.deg).A)
	}})
	for _, c := range cases {
		for _, reuse := range []bool{false, true} {
			name := c.name
			if reuse {
				name += "/Reuse"
			}
			b.Run(name, func(b *testing.B) {
				a := newFixture(b, c.name, c.build)
				h, err := amg.New(a, amg.Settings{})
				if err != nil {
					b.Fatal(err)
				}
				spmv := spmvTime(a)
				b.ReportAllocs()
				for b.Loop() {
					if reuse {
						err = h.Reset(a, amg.Settings{})
					} else {
						h, err = amg.New(a, amg.Settings{})
					}
					if err != nil {
						b.Fatal(err)
					}
				}
				reportNew(b, a, spmv+spmvTime(a))
				sinkLevels = h.Levels()
			})
		}
	}
}

// sinkLevels keeps the benchmarks' results alive.
var sinkLevels int

// spmvTime returns half the time of one parallel product with a (so that
// the sum of a call before and a call after a loop is one product).
func spmvTime(a *sparse.CSR) time.Duration {
	x, y := make([]float64, a.Rows), make([]float64, a.Rows)
	for i := range x {
		x[i] = 1
	}
	a.MulVec(y, x) // warm
	t0 := time.Now()
	for range 20 {
		a.MulVec(y, x)
	}
	return time.Since(t0) / 40
}

// reportNew reports ns/row and New/SpMV for a benchmark of New on a.
func reportNew(b *testing.B, a *sparse.CSR, spmv time.Duration) {
	per := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	b.ReportMetric(per/float64(a.Rows), "ns/row")
	b.ReportMetric(per/float64(spmv.Nanoseconds()), "New/SpMV")
}
