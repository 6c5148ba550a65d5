package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"path/filepath"
	"slices"
	"strconv"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/mesh"
)

// The files of a run.
const (
	historyFile     = "history.csv"     // the loop's records (adapt.WriteCSV)
	goalsFile       = "goals.csv"       // the goals and their estimates per step
	vtuFile         = "mesh.vtu"        // final mesh, temperature T (point), indicators eta (cell)
	meshPNGFile     = "mesh.png"        // final mesh coloured by η_T
	zoomPNGFile     = "mesh-zoom.png"   // the same around the re-entrant corner of the insert
	temperatureFile = "temperature.png" // final mesh coloured by the temperature
)

// zoomCorner is the point (index into points) the zoomed picture is
// centred on, and zoomHalfWidth its half-width in mm.
const (
	zoomCorner    = 9
	zoomHalfWidth = 2
)

// goalsHeader is the first line of goals.csv.
var goalsHeader = []string{"step", "dofs", "T_insert", "T_insert_est", "Q_channel", "Q_channel_est"}

// write writes the files of res into dir.
func write(dir string, res *outcome) error {
	path := func(name string) string { return filepath.Join(dir, name) }
	if err := adapt.SaveCSV(path(historyFile), res.Res.Steps); err != nil {
		return err
	}
	if err := mesh.WriteFile(path(goalsFile), func(w io.Writer) error { return writeGoals(w, res) }); err != nil {
		return err
	}
	u := res.Res.Solution
	m := u.Space.Mesh
	nv := m.NumVertices()
	eta := res.Res.Indicators.Eta(nil)
	d := &mesh.Data{
		Point: map[string][]float64{"T": u.U[:nv]},
		Cell:  map[string][]float64{"eta": eta},
	}
	if u.Space.Degree == 2 { // a P2 field: vertex values, then one per edge in edge order
		d.Edge = map[string][]float64{"T": u.U[nv : nv+m.NumEdges()]}
	}
	if err := mesh.SaveVTU(path(vtuFile), m, d, nil); err != nil {
		return err
	}
	// A log scale needs positive values: floor η_T at a millionth of the
	// largest.
	floor := slices.Max(eta) * 1e-6
	if floor == 0 {
		floor = 1
	}
	shade := make([]float64, len(eta))
	for i, v := range eta {
		shade[i] = max(v, floor)
	}
	opt := &mesh.PictureOptions{Cell: shade, Log: true, Label: "η_T",
		Title: fmt.Sprintf("coolant: final mesh, %d triangles", m.NumTriangles())}
	if err := mesh.SavePNG(path(meshPNGFile), m, opt); err != nil {
		return err
	}
	opt.Center = [2]float64{points[2*zoomCorner] * mm, points[2*zoomCorner+1] * mm}
	opt.HalfWidth = zoomHalfWidth * mm
	opt.Title = fmt.Sprintf("coolant: around the corner of the insert at (%g, %g) mm", points[2*zoomCorner], points[2*zoomCorner+1])
	if err := mesh.SavePNG(path(zoomPNGFile), m, opt); err != nil {
		return err
	}
	temp := make([]float64, m.NumTriangles())
	for k := range temp {
		temp[k] = u.Local(k, [3]float64{1.0 / 3, 1.0 / 3, 1.0 / 3})
	}
	return mesh.SavePNG(path(temperatureFile), m, &mesh.PictureOptions{Cell: temp, Label: "T (°C)",
		Title: "coolant: temperature", EdgePixels: -1})
}

// writeGoals writes goals.csv.
func writeGoals(w io.Writer, res *outcome) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(goalsHeader); err != nil {
		return err
	}
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i, s := range res.Res.Steps {
		g := res.Goals[i]
		if err := cw.Write([]string{strconv.Itoa(s.Step), strconv.Itoa(s.DOFs),
			f(g[0].Value), f(g[0].Estimate), f(g[1].Value), f(g[1].Estimate)}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
