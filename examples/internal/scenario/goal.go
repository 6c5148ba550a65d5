package scenario

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/fem"
)

// parseGoal reads the -goal flag: "box:X0,Y0,X1,Y1" (the mean over the box),
// "region:TAG" (the mean over a region) or "flux:TAG" (the flux through the
// boundary edges of a tag); "" is no goal.
func parseGoal(v string) (fem.Goal, error) {
	if v == "" {
		return nil, nil
	}
	kind, arg, ok := strings.Cut(v, ":")
	if !ok {
		return nil, fmt.Errorf("-goal %q: want box:X0,Y0,X1,Y1, region:TAG or flux:TAG", v)
	}
	tag := func() (int32, error) {
		t, err := strconv.ParseInt(arg, 10, 32)
		if err != nil {
			return 0, fmt.Errorf("-goal %q: tag %q is not an integer", v, arg)
		}
		return int32(t), nil
	}
	switch kind {
	case "box":
		parts := strings.Split(arg, ",")
		if len(parts) != 4 {
			return nil, fmt.Errorf("-goal %q: want four numbers X0,Y0,X1,Y1", v)
		}
		var c [4]float64
		for i, s := range parts {
			f, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
			if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
				return nil, fmt.Errorf("-goal %q: %q is not a finite number", v, s)
			}
			c[i] = f
		}
		if !(c[2] > c[0] && c[3] > c[1]) {
			return nil, fmt.Errorf("-goal %q: want X1 > X0 and Y1 > Y0", v)
		}
		return fem.BoxMean{X0: c[0], Y0: c[1], X1: c[2], Y1: c[3]}, nil
	case "region":
		t, err := tag()
		return fem.RegionMean{Region: t}, err
	case "flux":
		t, err := tag()
		return fem.Flux{Tag: t}, err
	}
	return nil, fmt.Errorf("-goal %q: want box:X0,Y0,X1,Y1, region:TAG or flux:TAG", v)
}

// goalHeader and goalRow are the goal columns of the printed table.
func goalHeader() string {
	return fmt.Sprintf(" %12s %11s %11s %7s", "goal J(u_h)", "goal est.", "goal error", "g.eff.")
}

func goalRow(s adapt.Step) string {
	return fmt.Sprintf(" %12.6e %11.4e %11.4e %7.3f", s.Goal, s.GoalEstimate, s.GoalError, s.GoalEffectivity)
}

// goalErrors returns |J(u) − J(u_h)| against DOFs for the steps that
// measured it.
func goalErrors(steps []adapt.Step) (n, e []float64) {
	for _, s := range steps {
		if s.HasGoalError && s.GoalError != 0 {
			n = append(n, float64(s.DOFs))
			e = append(e, math.Abs(s.GoalError))
		}
	}
	return n, e
}
