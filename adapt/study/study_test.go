package study

import (
	"context"
	"errors"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
)

// Configurations that cannot run are ErrConfig, before any run starts.
func TestRunRejects(t *testing.T) {
	t.Parallel()
	good := Config{Cases: known.Suite()[:1], Estimators: Estimators()[:1], Degrees: []int{1}, Theta: 0.5, MaxDOFs: 100}
	bad := map[string]func(c *Config){
		"no cases":      func(c *Config) { c.Cases = nil },
		"nil estimator": func(c *Config) { c.Estimators = []Estimator{{Name: "x"}} },
		"degree 3":      func(c *Config) { c.Degrees = []int{3} },
		"theta 0":       func(c *Config) { c.Theta = 0 },
		"budget 0":      func(c *Config) { c.MaxDOFs = 0 },
		"no mesh":       func(c *Config) { c.Cases = []known.Case{{Name: "x"}} },
	}
	for name, f := range bad {
		c := good
		f(&c)
		if _, err := Run(context.Background(), c); !errors.Is(err, ErrConfig) {
			t.Errorf("%s: error %v, want ErrConfig", name, err)
		}
	}
	//lint:ignore SA1012 a nil context is the input under test
	if _, err := Run(nil, good); !errors.Is(err, ErrConfig) { //nolint:staticcheck
		t.Errorf("nil context: error %v, want ErrConfig", err)
	}
	sums, err := Run(context.Background(), good)
	if err != nil || len(sums) != 1 || len(sums[0].Steps) < 2 {
		t.Fatalf("good config: %d summaries, error %v", len(sums), err)
	}
}

// failing is an estimator that always fails.
type failing struct{}

var errFail = errors.New("indicator table full")

func (failing) Estimate(*estimate.Indicators, *fem.Function, *fem.Problem) (*estimate.Indicators, error) {
	return nil, errFail
}

// A failing run stops the study with its own error, named by case,
// estimator and degree, not with the cancellation it causes in the runs
// that are still going.
func TestRunFailure(t *testing.T) {
	t.Parallel()
	c := Config{Cases: known.Suite()[1:2], Degrees: []int{1}, Theta: 0.5, MaxDOFs: 20000,
		Estimators: []Estimator{Estimators()[0], {Name: "failing", Est: failing{}}}}
	_, err := Run(context.Background(), c)
	if !errors.Is(err, errFail) || !strings.Contains(err.Error(), "lshape, failing, P1") {
		t.Fatalf("error %v, want the failing run's", err)
	}
}
