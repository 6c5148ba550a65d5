package mesh

import (
	"encoding/binary"
	"errors"
	"math"
	"testing"
)

// arraysFrom decodes fuzz bytes into mesh arrays: a vertex count, then
// coordinates as small integers (so that degenerate and duplicate points
// are common), triangle indices and boundary edges.
func arraysFrom(data []byte) Arrays {
	var a Arrays
	if len(data) < 3 {
		return a
	}
	nv, nt, nb := int(data[0]%16), int(data[1]%24), int(data[2]%6)
	data = data[3:]
	next := (*fuzzBytes)(&data).next
	for range nv {
		a.X = append(a.X, float64(int8(next()))/8, float64(int8(next()))/8)
	}
	for range 3 * nt {
		a.Tri = append(a.Tri, int32(int8(next())))
	}
	for range nb {
		a.Bnd = append(a.Bnd, int32(int8(next())), int32(int8(next())))
		a.BndTag = append(a.BndTag, int32(int8(next())))
	}
	if next()%7 == 0 && nv > 0 {
		a.X[next()%byte(2*nv)] = math.NaN()
	}
	return a
}

// FuzzNew builds meshes from arbitrary arrays: New must never panic, must
// return a *ValidationError on failure, and on success give a mesh whose
// topology is consistent, whose triangles are counter-clockwise with
// positive area, and that refines to a conforming mesh.
func FuzzNew(f *testing.F) {
	f.Add([]byte{4, 2, 0, 0, 0, 8, 0, 8, 8, 0, 8, 1, 2, 0, 3, 0, 2})
	f.Add([]byte{4, 2, 1, 0, 0, 8, 0, 8, 8, 0, 8, 1, 0, 2, 3, 0, 2, 0, 1, 5})
	f.Add([]byte{3, 1, 0, 0, 0, 8, 0, 16, 0, 0, 1, 2})
	f.Add([]byte{5, 3, 0, 0, 0, 8, 0, 4, 8, 4, 248, 4, 16, 0, 1, 2, 1, 0, 3, 0, 1, 4})
	f.Fuzz(func(t *testing.T, data []byte) {
		a := arraysFrom(data)
		m, re, err := New(a)
		if err != nil {
			var ve *ValidationError
			if m != nil || !errors.As(err, &ve) {
				t.Fatalf("New = %v, %v: want nil and a *ValidationError", m, err)
			}
			return
		}
		if len(re) > m.NumTriangles() {
			t.Fatalf("%d reoriented of %d", len(re), m.NumTriangles())
		}
		checkTopology(t, m)
		for k := range m.NumTriangles() {
			if !(m.Area(k) > 0) {
				t.Fatalf("triangle %d has area %g", k, m.Area(k))
			}
		}
		all := make([]bool, m.NumTriangles())
		for k := range all {
			all[k] = true
		}
		f, p, err := m.Refine(all)
		if err != nil {
			t.Fatal(err)
		}
		checkTopology(t, f)
		checkParents(t, m, f, p, all)
	})
}

// FuzzRefine refines a generated mesh with marks drawn from the fuzz
// bytes, several rounds, and checks conformity after each.
func FuzzRefine(f *testing.F) {
	f.Add(uint8(0), []byte{1, 2, 3, 4, 5, 6, 7, 8})
	f.Add(uint8(2), []byte{255, 0, 17, 3, 99})
	f.Add(uint8(3), []byte{0, 0, 0, 0, 1})
	f.Fuzz(func(t *testing.T, which uint8, marks []byte) {
		g := generators[int(which)%len(generators)]
		m, err := g.gen()
		if err != nil {
			t.Fatal(err)
		}
		for round := 0; len(marks) >= 4 && round < 8; round++ {
			seed := binary.LittleEndian.Uint32(marks)
			marks = marks[4:]
			mk := make([]bool, m.NumTriangles())
			for k := range mk {
				seed = seed*1664525 + 1013904223 // a linear congruential generator (common practice)
				mk[k] = seed>>28 == 0
			}
			fine, p, err := m.Refine(mk)
			if err != nil {
				t.Fatal(err)
			}
			checkConforming(t, fine)
			checkParents(t, m, fine, p, mk)
			m = fine
		}
		if _, _, err := m.Refine(make([]bool, m.NumTriangles()+1)); !errors.Is(err, ErrLength) {
			t.Fatalf("marks of the wrong length: %v", err)
		}
	})
}
