package mesh

import (
	"math"
	"os"
	"path/filepath"
	"testing"
)

// A failed save leaves the previous file as it was and no temporary file.
func TestSaveAtomic(t *testing.T) {
	t.Parallel()
	m, _ := Rectangle(0, 0, 1, 1, 2, 2)
	dir := t.TempDir()
	for _, tc := range []struct {
		name string
		save func(path string, bad bool) error
	}{
		{"json", func(path string, bad bool) error {
			d := &Data{Cell: map[string][]float64{"eta": make([]float64, m.NumTriangles())}}
			if bad {
				d.Cell["eta"][3] = math.NaN()
			}
			return SaveJSON(path, m, d)
		}},
		{"vtu", func(path string, bad bool) error {
			d := &Data{Point: map[string][]float64{"u": make([]float64, m.NumVertices())}}
			if bad {
				d.Point["u"] = d.Point["u"][:2]
			}
			return SaveVTU(path, m, d, nil)
		}},
		{"svg", func(path string, bad bool) error {
			c := make([]float64, m.NumTriangles())
			for i := range c {
				c[i] = 1
			}
			if bad {
				c[0] = -1
			}
			return SaveSVG(path, m, &SVGOptions{Cell: c, Log: true})
		}},
		{"png", func(path string, bad bool) error {
			opt := &PictureOptions{Width: 300}
			if bad {
				opt.HalfWidth = math.NaN()
			}
			return SavePNG(path, m, opt)
		}},
	} {
		path := filepath.Join(dir, "m."+tc.name)
		if err := tc.save(path, false); err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		good, _ := os.ReadFile(path)
		err := tc.save(path, true)
		if err == nil {
			t.Fatalf("%s: bad data saved", tc.name)
		}
		if now, _ := os.ReadFile(path); string(now) != string(good) {
			t.Errorf("%s: the good file changed after a failed save", tc.name)
		}
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 4 {
		names := []string{}
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("folder holds %v, want the four files only", names)
	}
}
