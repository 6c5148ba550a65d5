package scenario

import (
	"bytes"
	"encoding/csv"
	"encoding/xml"
	"errors"
	"fmt"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Files written by Run into the output folder.
const (
	HistoryFile     = "history.csv"
	MeshJSONFile    = "mesh.json"
	MeshVTUFile     = "mesh.vtu"
	MeshPNGFile     = "mesh.png"      // the whole final mesh
	MeshZoomFile    = "mesh-zoom.png" // around the singular point, if the problem has one
	ConvergenceFile = "convergence.svg"
)

// PictureWidth is the default width in pixels of the mesh pictures (flag -picture).
const PictureWidth = 800

func (sc *Scenario) write(o Options, r run, adaptive, uniform []adapt.Step) error {
	u := r.res.Solution
	m := u.Space.Mesh
	eta := r.res.Indicators.Eta(nil)
	errT := make([]float64, len(r.err))
	for i, v := range r.err {
		errT[i] = math.Sqrt(v)
	}
	// A P2 solution numbers its DOFs vertices first, then one per edge in
	// the mesh's edge order (fem.Space), which is the layout of an Edge
	// field: the files then carry u_h whole.
	nv := m.NumVertices()
	d := &mesh.Data{
		Point: map[string][]float64{"u": u.U[:nv]},
		Cell:  map[string][]float64{"eta": eta, "err": errT},
	}
	if u.Space.Degree == 2 {
		d.Edge = map[string][]float64{"u": u.U[nv : nv+m.NumEdges()]}
	}
	path := func(name string) string { return filepath.Join(o.Out, name) }
	if err := adapt.SaveCSV(path(HistoryFile), r.res.Steps); err != nil {
		return err
	}
	if err := mesh.SaveJSON(path(MeshJSONFile), m, d); err != nil {
		return err
	}
	if err := mesh.SaveVTU(path(MeshVTUFile), m, d, nil); err != nil {
		return err
	}
	// A log scale needs positive values: floor η_T at a millionth of the
	// largest (a zero indicator is drawn in the lowest colour).
	floor := slices.Max(eta) * 1e-6
	if floor == 0 {
		floor = 1
	}
	shade := make([]float64, len(eta))
	for i, v := range eta {
		shade[i] = max(v, floor)
	}
	opt := &mesh.PictureOptions{Width: o.Picture, Cell: shade, Log: true, Label: "η_T",
		Title: fmt.Sprintf("%s: final mesh, %d triangles", sc.Name, m.NumTriangles())}
	if err := mesh.SavePNG(path(MeshPNGFile), m, opt); err != nil {
		return err
	}
	if o.Zoom != nil || len(sc.Exact.Singular) > 0 {
		if o.Zoom != nil {
			opt.Center, opt.HalfWidth = [2]float64{o.Zoom[0], o.Zoom[1]}, o.Zoom[2]
			opt.Title = fmt.Sprintf("%s: around (%.3g, %.3g)", sc.Name, o.Zoom[0], o.Zoom[1])
		} else {
			c := sc.Exact.Singular[0]
			opt.Center, opt.HalfWidth = c, zoomHalfWidth(m, c)
			opt.Title = fmt.Sprintf("%s: near the singular point (%.3g, %.3g)", sc.Name, c[0], c[1])
		}
		if err := mesh.SavePNG(path(MeshZoomFile), m, opt); err != nil {
			return err
		}
	}
	return mesh.WriteFile(path(ConvergenceFile), func(w io.Writer) error {
		return sc.convergence(w, o, adaptive, uniform)
	})
}

// zoomHalfWidth returns the half-width of the zoomed picture around c:
// the smallest square around c that holds the centroids of half of the
// triangles, so that the picture shows the refined zone at the scale of
// its own triangles (adaptive meshes grade towards the singular point, and
// on them half of the triangles lie within a small fraction of the domain).
func zoomHalfWidth(m *mesh.Mesh, c [2]float64) float64 {
	d := make([]float64, m.NumTriangles())
	for k := range d {
		t := m.Tri[3*k : 3*k+3]
		x := (m.X[2*t[0]] + m.X[2*t[1]] + m.X[2*t[2]]) / 3
		y := (m.X[2*t[0]+1] + m.X[2*t[1]+1] + m.X[2*t[2]+1]) / 3
		d[k] = max(math.Abs(x-c[0]), math.Abs(y-c[1]))
	}
	slices.Sort(d)
	return d[len(d)/2]
}

// convergence draws error and estimate against DOFs on log-log axes for
// adaptive and uniform refinement, with the reference slopes.
func (sc *Scenario) convergence(w io.Writer, o Options, adaptive, uniform []adapt.Step) error {
	p := plot.New()
	p.Title.Text = fmt.Sprintf("%s, P%d, %s estimator", sc.Name, o.Degree, o.Estimator)
	p.X.Label.Text = "DOFs N"
	p.Y.Label.Text = "energy error and estimate"
	p.X.Scale, p.Y.Scale = plot.LogScale{}, plot.LogScale{}
	p.X.Tick.Marker, p.Y.Tick.Marker = plot.LogTicks{Prec: -1}, plot.LogTicks{Prec: -1}
	p.Legend.Left = true // the curves fall from the top left: the bottom left is free
	series := func(steps []adapt.Step) (e, eta plotter.XYs) {
		for _, s := range steps {
			e = append(e, plotter.XY{X: float64(s.DOFs), Y: s.Error})
			eta = append(eta, plotter.XY{X: float64(s.DOFs), Y: s.Estimate})
		}
		return e, eta
	}
	ae, aeta := series(adaptive)
	ue, ueta := series(uniform)
	add := func(name string, xy plotter.XYs, c int, dashed bool, shape draw.GlyphDrawer) error {
		l, s, err := plotter.NewLinePoints(xy)
		if err != nil {
			return err
		}
		l.Color, s.Color = plotColor(c), plotColor(c)
		s.Shape = shape
		if dashed {
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		}
		p.Add(l, s)
		p.Legend.Add(name, l, s)
		return nil
	}
	for _, c := range []struct {
		name   string
		xy     plotter.XYs
		color  int
		dashed bool
		shape  draw.GlyphDrawer
	}{
		{"adaptive: true error", ae, 0, false, draw.CircleGlyph{}},
		{"adaptive: estimate", aeta, 0, true, draw.BoxGlyph{}},
		{"uniform: true error", ue, 1, false, draw.CircleGlyph{}},
		{"uniform: estimate", ueta, 1, true, draw.BoxGlyph{}},
	} {
		if err := add(c.name, c.xy, c.color, c.dashed, c.shape); err != nil {
			return err
		}
	}
	if n, e := goalErrors(adaptive); len(n) > 0 {
		xy := make(plotter.XYs, len(n))
		for i := range n {
			xy[i] = plotter.XY{X: n[i], Y: e[i]}
		}
		if err := add("adaptive: goal error |J(u) − J(u_h)|", xy, 4, false, draw.TriangleGlyph{}); err != nil {
			return err
		}
		p.Y.Label.Text = "energy error, estimate, goal error"
	}
	// Reference slopes from a common point below the first adaptive error,
	// so that they fan out and their labels stand apart.
	n0, n1 := ae[0].X, max(ae[len(ae)-1].X, ue[len(ue)-1].X)
	for i, s := range sc.Slopes {
		c := 0.4 * ae[0].Y
		xy := plotter.XYs{{X: n0, Y: c}, {X: n1, Y: c * math.Pow(n1/n0, s.Exponent)}}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		l.Color = plotColor(2 + i)
		l.Dashes = []vg.Length{vg.Points(1), vg.Points(2)}
		p.Add(l)
		at := math.Pow(n0, 0.2) * math.Pow(n1, 0.8) // label 80% along the line, in log scale
		lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: at, Y: c * math.Pow(at/n0, s.Exponent)}}, Labels: []string{s.Label}})
		if err != nil {
			return err
		}
		p.Add(lab)
	}
	wt, err := p.WriterTo(6*vg.Inch, 4.5*vg.Inch, "svg")
	if err != nil {
		return err
	}
	_, err = wt.WriteTo(w)
	return err
}

// Verify checks the files of a run in dir: the CSV has the documented
// header and one row per step, the JSON arrays match the mesh, the VTU
// file reads back to the same mesh and fields as the JSON file (the
// solution with its edge values for P2), the SVG files are well-formed
// XML, and the mesh pictures are PNG images 200 to 2000 pixels wide and under
// 5 MB. It is used by the examples' tests.
func Verify(dir string) (steps int, err error) {
	f, err := os.Open(filepath.Join(dir, HistoryFile))
	if err != nil {
		return 0, err
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		return 0, fmt.Errorf("%s: %w", HistoryFile, err)
	}
	if len(rows) < 2 || !slices.Equal(rows[0], adapt.CSVHeader) {
		return 0, fmt.Errorf("%s: header %v", HistoryFile, rows[0])
	}
	if _, err := f.Seek(0, 0); err != nil {
		return 0, err
	}
	recs, err := adapt.ReadCSV(f)
	if err != nil {
		return 0, err
	}
	j, err := os.Open(filepath.Join(dir, MeshJSONFile))
	if err != nil {
		return 0, err
	}
	defer j.Close()
	m, d, err := mesh.ReadJSON(j)
	if err != nil {
		return 0, err
	}
	if last := recs[len(recs)-1]; last.Triangles != m.NumTriangles() {
		return 0, fmt.Errorf("%s has %d triangles, the last step %d", MeshJSONFile, m.NumTriangles(), last.Triangles)
	}
	if len(d.Point["u"]) != m.NumVertices() || len(d.Cell["eta"]) != m.NumTriangles() || len(d.Cell["err"]) != m.NumTriangles() {
		return 0, fmt.Errorf("%s: fields u, eta, err of lengths %d, %d, %d", MeshJSONFile, len(d.Point["u"]), len(d.Cell["eta"]), len(d.Cell["err"]))
	}
	if p2 := recs[len(recs)-1].DOFs > m.NumVertices(); p2 != (len(d.Edge["u"]) == m.NumEdges()) {
		return 0, fmt.Errorf("%s: %d edge values of u for %d DOFs on %d vertices and %d edges", MeshJSONFile, len(d.Edge["u"]), recs[len(recs)-1].DOFs, m.NumVertices(), m.NumEdges())
	}
	v, err := os.Open(filepath.Join(dir, MeshVTUFile))
	if err != nil {
		return 0, err
	}
	defer v.Close()
	mv, dv, err := mesh.ReadVTU(v)
	if err != nil {
		return 0, err
	}
	if !sameMesh(m, mv) || !sameData(d, dv) {
		return 0, fmt.Errorf("%s and %s hold different meshes or fields", MeshVTUFile, MeshJSONFile)
	}
	if err := wellFormed(filepath.Join(dir, ConvergenceFile), "", nil); err != nil {
		return 0, err
	}
	for _, name := range []string{MeshPNGFile, MeshZoomFile} {
		if err := checkPNG(filepath.Join(dir, name)); err != nil {
			return 0, err
		}
	}
	return len(recs), nil
}

// checkPNG reads a mesh picture whole and checks its width and size.
func checkPNG(path string) error {
	b, err := os.ReadFile(path)
	if err != nil {
		return err
	}
	if len(b) >= 5e6 { // the bound of the pictures: mesh.WritePNG's doc
		return fmt.Errorf("%s: %d bytes", path, len(b))
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if w := img.Bounds().Dx(); w < 200 || w > 2000 {
		return fmt.Errorf("%s: %d pixels wide, want 200 to 2000", path, w)
	}
	return nil
}

// wellFormed reads an XML file to its end; if elem is not empty, the first
// element of that name is decoded into v (which must then be found).
func wellFormed(path, elem string, v any) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	dec := xml.NewDecoder(f)
	found := elem == ""
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		if se, ok := tok.(xml.StartElement); ok && !found && se.Name.Local == elem {
			if err := dec.DecodeElement(v, &se); err != nil {
				return fmt.Errorf("%s: %w", path, err)
			}
			found = true
		}
	}
	if !found {
		return fmt.Errorf("%s: no %s element", path, elem)
	}
	return nil
}

// sameMesh reports whether a and b have the same vertices, triangles,
// regions and boundary tags.
func sameMesh(a, b *mesh.Mesh) bool {
	if !slices.Equal(a.X, b.X) || !slices.Equal(a.Tri, b.Tri) || !slices.Equal(a.Region, b.Region) {
		return false
	}
	ab, at := a.BoundaryEdges()
	bb, bt := b.BoundaryEdges()
	return slices.Equal(ab, bb) && slices.Equal(at, bt)
}

// sameData reports whether a and b hold the same fields, bit for bit, on
// meshes that sameMesh finds equal (and so number their edges alike).
func sameData(a, b *mesh.Data) bool {
	same := func(x, y map[string][]float64) bool {
		if len(x) != len(y) {
			return false
		}
		for name, v := range x {
			w, ok := y[name]
			if !ok || len(v) != len(w) {
				return false
			}
			for i := range v {
				if math.Float64bits(v[i]) != math.Float64bits(w[i]) {
					return false
				}
			}
		}
		return true
	}
	return same(a.Point, b.Point) && same(a.Cell, b.Cell) && same(a.Edge, b.Edge)
}
