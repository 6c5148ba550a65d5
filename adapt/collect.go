package adapt

import (
	"runtime"
	"runtime/metrics"
)

// Garbage collection between the stages of a large step.
//
// A step drops large arrays at two points: the solve's matrices, multigrid
// hierarchy and Krylov vectors when it returns, and the refined mesh in
// Refine's numbering once it is renumbered. Left to itself, the Go runtime
// collects when the heap reaches twice what was live after the previous
// collection (GOGC = 100), so a step's new arrays are mostly laid out in
// memory that was never used before, and the process's resident set
// reaches about twice the live data. On machines where the kernel hands
// out fresh pages slowly, these first touches cost as much as the
// computation: on the two-core test machine one first touch of a 4 KiB
// page took about 11 µs (1 GiB in 2.8–3.0 s, two runs), and the L-shape
// loop to 1.14e6 DOFs spent 3.1–3.9 s of system time against 11.4 s of
// user time (three runs) with a peak resident set of 1.38–1.58 GB.
//
// So the loop collects right after those two points on meshes with more
// than collectTriangles triangles. On the same loop (three runs each,
// alternated) that gave 8.1–8.6 s of wall time, 2.5–2.7 s of system time
// and a peak of 1.01–1.02 GB, against 9.7–11.3 s, 3.5–3.7 s and 1.37–1.63
// GB without. The loop's own arrays hold no
// pointers, so the collector has little to scan and a collection takes
// about a millisecond; but a collection also scans whatever the calling
// program holds, so the loop collects only while the heap's scannable
// part (runtime/metrics "/gc/scan/heap:bytes") is at most collectScan.
const (
	collectTriangles = 100_000
	collectScan      = 64 << 20
)

// collectGarbage runs a garbage collection if the step's mesh has more than
// collectTriangles triangles and the heap has at most collectScan bytes
// that the collector must scan.
func collectGarbage(triangles int) {
	if triangles <= collectTriangles {
		return
	}
	s := []metrics.Sample{{Name: "/gc/scan/heap:bytes"}}
	metrics.Read(s)
	if s[0].Value.Kind() != metrics.KindUint64 || s[0].Value.Uint64() > collectScan {
		return
	}
	runtime.GC()
}
