package main

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"
	"unicode/utf8"

	"github.com/posteriori-fem/posteriori/adapt/study"
	"github.com/posteriori-fem/posteriori/examples/internal/scenario"
	"github.com/posteriori-fem/posteriori/fem/known"
)

// readCSV reads a whole CSV file.
func readCSV(t *testing.T, path string) [][]string { return scenario.ReadCSV(t, path) }

// A small study runs, prints an aligned table and writes the three files,
// complete and well-formed.
func TestRunSmall(t *testing.T) {
	dir := t.TempDir()
	var stdout, stderr bytes.Buffer
	args := []string{"-max-dofs", "400", "-problems", "lshape,kellogg", "-out", dir}
	if code := run(&stdout, &stderr, args); code != 0 {
		t.Fatalf("run %v = %d, stderr:\n%s", args, code, stderr.String())
	}
	if stderr.Len() != 0 {
		t.Errorf("stderr: %s", stderr.String())
	}

	// results.csv: the documented header, 2 problems × 5 estimators × 2
	// degrees rows in table order, numbers that parse; the equilibrated
	// bound's effectivity is at least 1 on every step (a theorem: see
	// estimate.Equilibrated).
	rows := readCSV(t, filepath.Join(dir, "results.csv"))
	if !slices.Equal(rows[0], resultsHeader) {
		t.Fatalf("results.csv header %v, want %v", rows[0], resultsHeader)
	}
	if got := strings.Join(rows[0], ","); got != "problem,estimator,p,steps,dofs,effectivity,eff_min,eff_max,error_rate,estimate_rate" {
		t.Errorf("results.csv header %q", got)
	}
	rows = rows[1:]
	if len(rows) != 20 {
		t.Fatalf("results.csv has %d rows, want 20", len(rows))
	}
	i := 0
	for _, pr := range []string{"lshape", "kellogg"} {
		for _, e := range []string{"residual", "averaging", "spr", "equilibrated", "flux"} {
			for _, p := range []string{"1", "2"} {
				r := rows[i]
				i++
				if len(r) != 10 {
					t.Fatalf("results.csv row %d has %d columns, want 10", i, len(r))
				}
				if r[0] != pr || r[1] != e || r[2] != p {
					t.Errorf("results.csv row %d is %v, want %s,%s,%s first", i, r, pr, e, p)
				}
				for j, v := range r[2:5] {
					if n, err := strconv.Atoi(v); err != nil || n <= 0 {
						t.Errorf("results.csv row %d, %s = %q: want a positive integer", i, resultsHeader[2+j], v)
					}
				}
				if d, _ := strconv.Atoi(r[4]); d > 400 {
					t.Errorf("results.csv row %d: %d DOFs, over the budget 400", i, d)
				}
				for j, v := range r[5:] {
					if _, err := strconv.ParseFloat(v, 64); err != nil {
						t.Errorf("results.csv row %d, %s = %q: %v", i, resultsHeader[5+j], v, err)
					}
				}
				lo, _ := strconv.ParseFloat(r[6], 64)
				hi, _ := strconv.ParseFloat(r[7], 64)
				if !(0 < lo && lo <= hi) {
					t.Errorf("results.csv row %d: effectivity range [%g, %g]", i, lo, hi)
				}
				if e == "equilibrated" && lo < 1 {
					t.Errorf("results.csv row %d: the guaranteed bound has effectivity %g < 1", i, lo)
				}
			}
		}
	}

	// steps.csv: the documented header, at least one step per run, and as
	// many steps per run as results.csv says.
	steps := readCSV(t, filepath.Join(dir, "steps.csv"))
	if !slices.Equal(steps[0], stepsHeader) {
		t.Fatalf("steps.csv header %v, want %v", steps[0], stepsHeader)
	}
	if got := strings.Join(steps[0], ","); got != "problem,estimator,p,step,dofs,estimate,error,effectivity" {
		t.Errorf("steps.csv header %q", got)
	}
	if len(steps)-1 < 20 {
		t.Fatalf("steps.csv has %d rows, want at least 20", len(steps)-1)
	}
	count := map[string]int{}
	for k, r := range steps[1:] {
		if len(r) != 8 {
			t.Fatalf("steps.csv row %d has %d columns, want 8", k+1, len(r))
		}
		for j, v := range r[5:] {
			if x, err := strconv.ParseFloat(v, 64); err != nil || !(x > 0) {
				t.Errorf("steps.csv row %d, %s = %q: want a positive number", k+1, stepsHeader[5+j], v)
			}
		}
		if eff, _ := strconv.ParseFloat(r[7], 64); r[1] == "equilibrated" && eff < 1 {
			t.Errorf("steps.csv row %d: the guaranteed bound has effectivity %g < 1", k+1, eff)
		}
		count[strings.Join(r[:3], ",")]++
	}
	for _, r := range rows {
		if n, _ := strconv.Atoi(r[3]); count[strings.Join(r[:3], ",")] != n {
			t.Errorf("%v: %d rows in steps.csv, %d steps in results.csv", r[:3], count[strings.Join(r[:3], ",")], n)
		}
	}

	// effectivity.svg is well-formed XML.
	f, err := os.Open(filepath.Join(dir, "effectivity.svg"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	dec := xml.NewDecoder(f)
	elements := 0
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("effectivity.svg: %v", err)
		}
		if _, ok := tok.(xml.StartElement); ok {
			elements++
		}
	}
	if elements < 10 {
		t.Errorf("effectivity.svg has %d elements", elements)
	}

	// Only the three files, no temporary leftovers.
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	if want := []string{"effectivity.svg", "results.csv", "steps.csv"}; !slices.Equal(names, want) {
		t.Errorf("output folder holds %v, want %v", names, want)
	}

	// The table: a header and 20 rows, columns aligned (all lines equally
	// wide, since the last column is right-aligned).
	var table []string
	for _, l := range strings.Split(stdout.String(), "\n") {
		if strings.HasPrefix(l, "problem ") || strings.HasPrefix(l, "lshape ") || strings.HasPrefix(l, "kellogg ") {
			table = append(table, l)
		}
	}
	if len(table) != 21 {
		t.Fatalf("table has %d lines, want 21:\n%s", len(table), stdout.String())
	}
	for _, l := range table[1:] {
		if utf8.RuneCountInString(l) != utf8.RuneCountInString(table[0]) {
			t.Errorf("table not aligned:\n%s\n%s", table[0], l)
		}
	}
}

// Bad flag values exit with status 2, one line on stderr, and write
// nothing.
func TestBadFlags(t *testing.T) {
	for _, args := range [][]string{
		{"-problems", "lshape,circle"},
		{"-problems", ""},
		{"-problems", "slit,slit"},
		{"-estimators", "residual,hierarchical"},
		{"-p", "3"},
		{"-p", "1,2,0"},
		{"-p", "one"},
		{"-theta", "0"},
		{"-theta", "-0.5"},
		{"-theta", "1.01"},
		{"-theta", "NaN"},
		{"-theta", "half"},
		{"-max-dofs", "49"},
		{"-max-dofs", "-5"},
		{"-problems", "lshape", "-plot", "slit"},
		{"-plot", "square"},
		{"-no-such-flag"},
		{"extra"},
	} {
		out := filepath.Join(t.TempDir(), "out")
		var stdout, stderr bytes.Buffer
		code := run(&stdout, &stderr, append(args, "-out", out))
		if code != 2 {
			t.Errorf("%v: status %d, want 2", args, code)
		}
		if msg := stderr.String(); strings.Count(msg, "\n") != 1 || !strings.HasSuffix(msg, "\n") || !strings.HasPrefix(msg, "compare: ") {
			t.Errorf("%v: stderr %q, want one line", args, msg)
		}
		if stdout.Len() != 0 {
			t.Errorf("%v: stdout %q", args, stdout.String())
		}
		if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%v: the output folder was created (%v)", args, err)
		}
	}
}

// -h, -help and --help print the usage with every flag, the problems and
// the estimators on stdout and exit with status 0, writing nothing.
func TestHelp(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	var stdout, stderr bytes.Buffer
	if code := run(&stdout, &stderr, []string{"-h", "-out", out}); code != 0 {
		t.Errorf("-h: status %d, want 0", code)
	}
	if !strings.Contains(stdout.String(), "kellogg") || !strings.Contains(stdout.String(), "equilibrated") {
		t.Errorf("-h: usage %q", stdout.String())
	}
	if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("-h: the output folder was created (%v)", err)
	}
	scenario.CheckHelp(t, func(args []string, o, e io.Writer) int { return run(o, e, args) },
		"theta", "max-dofs", "problems", "estimators", "p", "plot", "out")
}

// Adaptive P1 with the residual estimator recovers the optimal rate 1/2
// on the L-shaped domain (Stevenson, Found. Comput. Math. 7 (2007)
// 245–269), where uniform refinement gives 1/3. It takes well under a
// second, so it also runs under -short.
func TestLShapeRate(t *testing.T) {
	start := time.Now()
	var lshape known.Case
	for _, p := range known.Suite() {
		if p.Name == "lshape" {
			lshape = p
		}
	}
	sums, err := study.Run(context.Background(), study.Config{Cases: []known.Case{lshape},
		Estimators: study.Estimators()[:1], Degrees: []int{1}, Theta: 0.5, MaxDOFs: 5000})
	if err != nil {
		t.Fatal(err)
	}
	s := sums[0]
	t.Logf("%d steps to %d DOFs in %v: error rate %.3f, estimate rate %.3f, effectivity %.3f",
		len(s.Steps), s.DOFs(), time.Since(start).Round(time.Millisecond), s.ErrorRate, s.EstimateRate, s.Effectivity)
	if s.Estimator.Name != "residual" {
		t.Fatalf("estimator %s, want residual", s.Estimator.Name)
	}
	if !(s.ErrorRate > 0.4) {
		t.Errorf("error rate %.3f, want above 0.4", s.ErrorRate)
	}
	if s.DOFs() > 5000 || s.DOFs() < 2500 {
		t.Errorf("%d DOFs at the end, want the budget 5000 nearly reached", s.DOFs())
	}
}

// The study's numbers do not depend on how many runs go in parallel.
func TestStudyDeterministic(t *testing.T) {
	c, _, _, err := parseArgs(io.Discard, []string{"-max-dofs", "400", "-problems", "lshape,peak", "-estimators", "residual,equilibrated,flux"})
	if err != nil {
		t.Fatal(err)
	}
	var got [2][]study.Summary
	for k, procs := range []int{1, 3} {
		old := runtime.GOMAXPROCS(procs)
		got[k], err = study.Run(context.Background(), c)
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
	}
	for i := range got[0] {
		a, b := got[0][i], got[1][i]
		if a.Case.Name != b.Case.Name || a.Estimator.Name != b.Estimator.Name || a.Degree != b.Degree {
			t.Fatalf("run %d: %s %s P%d and %s %s P%d", i, a.Case.Name, a.Estimator.Name, a.Degree, b.Case.Name, b.Estimator.Name, b.Degree)
		}
		if len(a.Steps) != len(b.Steps) {
			t.Fatalf("%s %s P%d: %d and %d steps", a.Case.Name, a.Estimator.Name, a.Degree, len(a.Steps), len(b.Steps))
		}
		for j := range a.Steps {
			sa, sb := a.Steps[j], b.Steps[j]
			if sa.DOFs != sb.DOFs || sa.Estimate != sb.Estimate || sa.Error != sb.Error {
				t.Errorf("%s %s P%d step %d: (%d, %g, %g) and (%d, %g, %g)", a.Case.Name, a.Estimator.Name, a.Degree, j,
					sa.DOFs, sa.Estimate, sa.Error, sb.DOFs, sb.Estimate, sb.Error)
			}
		}
	}
}
