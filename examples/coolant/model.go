package main

import (
	"errors"
	"fmt"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// mm is a millimetre in metres.
const mm = 1e-3

// domain builds the mesher's description of the part from the data at
// the top of main.go, in metres: the straight segments as given, then
// each channel as four quarter arcs of its circle (segments that follow
// the curve, so that refinement puts new vertices on the circle) around a
// hole point at its centre.
func domain() *mesh.Domain {
	d := &mesh.Domain{}
	for _, v := range points {
		d.Points = append(d.Points, v*mm)
	}
	for _, s := range segments {
		d.Segments = append(d.Segments, s.A, s.B)
		d.Tags = append(d.Tags, s.Tag)
		d.SegCurve = append(d.SegCurve, -1)
	}
	for i, c := range channels {
		first := int32(len(d.Points) / 2)
		for q := range 4 {
			// The quarter points, exact so that they lie on the circle.
			cos, sin := [4]float64{1, 0, -1, 0}[q], [4]float64{0, 1, 0, -1}[q]
			d.Points = append(d.Points, (c.X+c.R*cos)*mm, (c.Y+c.R*sin)*mm)
			d.Segments = append(d.Segments, first+int32(q), first+int32((q+1)%4))
			d.Tags = append(d.Tags, tagChannel)
			d.SegCurve = append(d.SegCurve, int32(i))
		}
		d.Curves = append(d.Curves, mesh.Circle{X: c.X * mm, Y: c.Y * mm, R: c.R * mm})
		d.Holes = append(d.Holes, c.X*mm, c.Y*mm)
	}
	for _, s := range seeds {
		d.Seeds = append(d.Seeds, s.X*mm, s.Y*mm)
		d.SeedRegion = append(d.SeedRegion, s.Region)
	}
	return d
}

// initialMesh triangulates the part with edges no longer than initialSize.
func initialMesh() (*mesh.Mesh, error) {
	m, _, err := mesh.Triangulate(domain(), mesh.Options{H: initialSize * mm})
	var de *mesh.DomainError
	if errors.Is(err, mesh.ErrDetached) && errors.As(err, &de) && de.Segment >= len(segments) {
		// The segments after the straight ones are the channels' quarter arcs.
		i := (de.Segment - len(segments)) / 4
		return nil, fmt.Errorf("channel %d at (%g, %g) mm: its wall bounds no part of the body: is it outside? (%w)", i, channels[i].X, channels[i].Y, err)
	}
	if err != nil {
		return nil, err
	}
	for k := range m.NumTriangles() {
		if _, ok := materials[m.Region[k]]; !ok {
			return nil, fmt.Errorf("triangle %d at (%.3g, %.3g) mm has region %d, which no material has: give each material a seed",
				k, centroid(m, k)[0]/mm, centroid(m, k)[1]/mm, m.Region[k])
		}
	}
	return m, nil
}

func centroid(m *mesh.Mesh, k int) [2]float64 {
	var c [2]float64
	for i := range 3 {
		v := m.Tri[3*k+i]
		c[0] += m.X[2*v] / 3
		c[1] += m.X[2*v+1] / 3
	}
	return c
}

// problem returns the conduction problem of the part:
//
//	−∇·(k ∇T) = q                 in each material,
//	T = baseTemperature           on tagBase,
//	k∇T·n = 0                     on tagInsulated,
//	k∇T·n + h_c T = h_c T_c       on tagChannel.
func problem() *fem.Problem {
	a := make(map[int32]fem.Tensor, len(materials))
	for r, mat := range materials {
		a[r] = fem.Scalar(mat.K)
	}
	tb, gc := float64(baseTemperature), float64(heatTransfer*coolantTemperature)
	return &fem.Problem{
		A:         a,
		FRegion:   func(x, y float64, region int32) float64 { return materials[region].Q },
		Dirichlet: map[int32]fem.Func{tagBase: func(x, y float64) float64 { return tb }},
		Neumann:   map[int32]fem.Func{tagInsulated: nil},
		Robin: map[int32]fem.RobinData{tagChannel: {
			Alpha: heatTransfer,
			G:     func(x, y float64) float64 { return gc },
		}},
	}
}

// goal is one reported quantity: a goal functional J and the factor
// applied to J before printing (−1 turns the flux into the part into the
// heat into the coolant).
type goal struct {
	Name  string
	Unit  string
	J     fem.Goal
	Scale float64
}

// goals are the two reported quantities.
func goals() []goal {
	return []goal{
		{Name: "T_insert", Unit: "°C", J: fem.RegionMean{Region: regionInsert}, Scale: 1},
		{Name: "Q_channel", Unit: "W/m", J: fem.Flux{Tag: tagChannel}, Scale: -1},
	}
}

// estimateGoal returns the dual weighted residual estimate of J(u) − J(u_h)
// for u with the dual solution z.
func estimateGoal(g fem.Goal, u, z *fem.Function, p *fem.Problem) (float64, error) {
	in, err := estimate.DualWeighted{Goal: g}.Estimate(nil, u, z, p)
	if err != nil {
		return 0, err
	}
	return in.Total(), nil
}

// goalValue is a goal's value on one step and the estimate of its error,
// both scaled by the goal's Scale.
type goalValue struct {
	Value, Estimate float64
}

// evaluate solves the dual problems of gs on the space of u, which solves
// p, and returns each goal's value and dual weighted residual estimate. It
// assembles the system once and shares its matrix and multigrid
// preconditioner between the dual solves.
func evaluate(u *fem.Function, p *fem.Problem, gs []goal) ([]goalValue, error) {
	sys, err := fem.Assemble(u.Space, p)
	if err != nil {
		return nil, err
	}
	ps, err := sys.Prepare(fem.Multigrid)
	if err != nil {
		return nil, err
	}
	out := make([]goalValue, len(gs))
	for i, g := range gs {
		ds, err := ps.Dual(g.J)
		if err != nil {
			return nil, err
		}
		z, _, err := ds.Solve(fem.SolveSettings{})
		if err != nil {
			return nil, fmt.Errorf("%s: dual solve: %w", g.Name, err)
		}
		in, err := estimateGoal(g.J, u, z, p)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", g.Name, err)
		}
		v, err := g.J.Value(u, p)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", g.Name, err)
		}
		out[i] = goalValue{Value: g.Scale * v, Estimate: g.Scale * in}
	}
	return out, nil
}

// heatedArea returns the area of the mesh's triangles whose material has a
// source, and the total source ∫q over them.
func heatedArea(m *mesh.Mesh) (area, total float64) {
	for k := range m.NumTriangles() {
		if q := materials[m.Region[k]].Q; q != 0 {
			area += m.Area(k)
			total += q * m.Area(k)
		}
	}
	return area, total
}
