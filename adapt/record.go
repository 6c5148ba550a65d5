package adapt

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"time"

	"github.com/posteriori-fem/posteriori/mesh"
)

// Step is the record of one step of the loop.
type Step struct {
	Step        int     // step number, from 0
	Triangles   int     // triangles of the step's mesh
	DOFs        int     // dimension of the space, Dirichlet nodes included
	FreeDOFs    int     // DOFs not fixed by Dirichlet conditions
	Estimate    float64 // total estimate η
	Oscillation float64 // total data oscillation
	HasError    bool    // whether Error and Effectivity were measured (an exact solution was given)
	Error       float64 // true energy error
	Effectivity float64 // Estimate / Error
	Marked      int     // triangles marked for refinement (0 at the last step)
	Iterations  int     // solver iterations
	AtFloor     bool    // whether the solve stopped at the rounding floor (fem.SolveStats.AtFloor), not at a tolerance
	Algebraic   float64 // the part of Estimate that accounts for the algebraic error of the solve (estimate.Indicators.Algebraic; 0 if the estimator does not separate it)

	// The goal (Method.Goal): HasGoal reports whether Goal and
	// GoalEstimate were computed, HasGoalError whether GoalError and
	// GoalEffectivity were measured (an exact solution and a fem.ExactGoal).
	HasGoal         bool
	Goal            float64 // J(u_h)
	GoalEstimate    float64 // the estimate of J(u) − J(u_h), signed (estimate.DualWeighted)
	HasGoalError    bool
	GoalError       float64 // J(u) − J(u_h), signed
	GoalEffectivity float64 // GoalEstimate / GoalError

	// EnergyNorm is |||u_h|||, the energy norm of the step's solution
	// (fem.Function.EnergyNorm), against which Settings.RelTol sets η.
	EnergyNorm float64

	SolveTime, EstimateTime, ErrorTime, MarkTime, RefineTime time.Duration
}

// CSVHeader is the header line of the step records in CSV: one column per
// field of Step, times in seconds; error and effectivity are empty when
// they were not measured; at_floor is true or false. The goal fields are
// goal (Goal) and goal_estimate (GoalEstimate), empty without a goal, and
// goal_error (GoalError), empty when it was not measured; HasGoal,
// HasGoalError and GoalEffectivity follow from them when read. The last,
// energy_norm, is EnergyNorm.
var CSVHeader = []string{
	"step", "triangles", "dofs", "free_dofs", "estimate", "oscillation", "error", "effectivity",
	"marked", "iterations", "solve_s", "estimate_s", "error_s", "mark_s", "refine_s", "at_floor",
	"algebraic", "goal", "goal_estimate", "goal_error", "energy_norm",
}

// csvFirstColumns is the number of columns of the first version of the
// records (up to at_floor); ReadCSV reads files with any prefix of
// CSVHeader at least this long, and leaves the later fields zero.
const csvFirstColumns = 16

// WriteCSV writes the records with CSVHeader as the first line. Numbers are
// written in the shortest form that reads back exactly.
func WriteCSV(w io.Writer, steps []Step) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(CSVHeader); err != nil {
		return fmt.Errorf("adapt: WriteCSV: %w", err)
	}
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	sec := func(d time.Duration) string { return f(d.Seconds()) }
	for _, s := range steps {
		e, eff := "", ""
		if s.HasError {
			e, eff = f(s.Error), f(s.Effectivity)
		}
		row := []string{
			strconv.Itoa(s.Step), strconv.Itoa(s.Triangles), strconv.Itoa(s.DOFs), strconv.Itoa(s.FreeDOFs),
			f(s.Estimate), f(s.Oscillation), e, eff, strconv.Itoa(s.Marked), strconv.Itoa(s.Iterations),
			sec(s.SolveTime), sec(s.EstimateTime), sec(s.ErrorTime), sec(s.MarkTime), sec(s.RefineTime),
			strconv.FormatBool(s.AtFloor), f(s.Algebraic), "", "", "", f(s.EnergyNorm),
		}
		if s.HasGoal {
			row[17], row[18] = f(s.Goal), f(s.GoalEstimate)
		}
		if s.HasGoalError {
			row[19] = f(s.GoalError)
		}
		if err := cw.Write(row); err != nil {
			return fmt.Errorf("adapt: WriteCSV: %w", err)
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("adapt: WriteCSV: %w", err)
	}
	return nil
}

// ErrCSV reports a malformed step record file.
var ErrCSV = errors.New("malformed step records")

// ReadCSV reads records written by WriteCSV, also by earlier versions whose
// header is a prefix of CSVHeader (from step to at_floor at least; the
// fields of the missing columns are zero). Times are rounded to the
// nanosecond. It rejects a wrong header, a wrong number of fields, numbers
// that do not parse, negative counts, NaN or infinite values, and an
// at_floor other than true or false, with an error that names the line and
// column.
func ReadCSV(r io.Reader) ([]Step, error) {
	cr := csv.NewReader(r)
	cr.ReuseRecord = true
	head, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("adapt: ReadCSV: %w: header: %v", ErrCSV, err)
	}
	if len(head) < csvFirstColumns || len(head) > len(CSVHeader) {
		return nil, fmt.Errorf("adapt: ReadCSV: %w: header has %d columns, want %d (or, from an earlier version, %d to %d)", ErrCSV, len(head), len(CSVHeader), csvFirstColumns, len(CSVHeader))
	}
	for i, h := range CSVHeader[:len(head)] {
		if head[i] != h {
			return nil, fmt.Errorf("adapt: ReadCSV: %w: header column %d is %q, want %q", ErrCSV, i+1, head[i], h)
		}
	}
	var steps []Step
	for line := 2; ; line++ {
		row, err := cr.Read()
		if err == io.EOF {
			return steps, nil
		}
		if err != nil {
			return nil, fmt.Errorf("adapt: ReadCSV: %w: %v", ErrCSV, err)
		}
		var s Step
		var bad error
		col := 0
		intAt := func() int {
			col++
			v, err := strconv.Atoi(row[col-1])
			if err == nil && v < 0 {
				err = errors.New("negative")
			}
			if err != nil && bad == nil {
				bad = fmt.Errorf("adapt: ReadCSV: %w: line %d, column %s: %v", ErrCSV, line, CSVHeader[col-1], err)
			}
			return v
		}
		floatAt := func() float64 {
			col++
			v, err := strconv.ParseFloat(row[col-1], 64)
			if err == nil && (math.IsNaN(v) || math.IsInf(v, 0)) {
				err = errors.New("not finite")
			}
			if err != nil && bad == nil {
				bad = fmt.Errorf("adapt: ReadCSV: %w: line %d, column %s: %v", ErrCSV, line, CSVHeader[col-1], err)
			}
			return v
		}
		boolAt := func() bool {
			col++
			v, err := strconv.ParseBool(row[col-1])
			if err == nil && row[col-1] != strconv.FormatBool(v) {
				err = errors.New("want true or false")
			}
			if err != nil && bad == nil {
				bad = fmt.Errorf("adapt: ReadCSV: %w: line %d, column %s: %v", ErrCSV, line, CSVHeader[col-1], err)
			}
			return v
		}
		dur := func() time.Duration { return time.Duration(math.Round(floatAt() * 1e9)) }
		s.Step, s.Triangles, s.DOFs, s.FreeDOFs = intAt(), intAt(), intAt(), intAt()
		s.Estimate, s.Oscillation = floatAt(), floatAt()
		if row[6] == "" && row[7] == "" {
			col += 2
		} else {
			s.HasError = true
			s.Error, s.Effectivity = floatAt(), floatAt()
		}
		s.Marked, s.Iterations = intAt(), intAt()
		s.SolveTime, s.EstimateTime, s.ErrorTime, s.MarkTime, s.RefineTime = dur(), dur(), dur(), dur(), dur()
		s.AtFloor = boolAt()
		if len(row) > csvFirstColumns {
			s.Algebraic = floatAt()
		}
		// The goal columns, each empty when unknown.
		optional := func() (float64, bool) {
			if col >= len(row) || row[col] == "" {
				col++
				return 0, false
			}
			return floatAt(), true
		}
		var okG, okE bool
		s.Goal, okG = optional()
		s.GoalEstimate, okE = optional()
		s.HasGoal = okG || okE
		if s.GoalError, s.HasGoalError = optional(); s.HasGoalError && s.GoalError != 0 {
			s.GoalEffectivity = s.GoalEstimate / s.GoalError
		}
		if col < len(row) {
			s.EnergyNorm = floatAt()
		}
		if bad != nil {
			return nil, bad
		}
		steps = append(steps, s)
	}
}

// SaveCSV writes the records to the file at path as WriteCSV does, through
// a temporary file in the same folder renamed over path only when complete.
func SaveCSV(path string, steps []Step) error {
	return mesh.WriteFile(path, func(w io.Writer) error { return WriteCSV(w, steps) })
}
