package mesh

import (
	"errors"
	"testing"
)

// TagBoundary with the rule of Rectangle's sides gives Rectangle's own
// tags (SideBottom … SideLeft, by the geometry of the unit square: common
// practice) to a mesh built from its arrays without tags.
func TestTagBoundary(t *testing.T) {
	t.Parallel()
	r, err := Rectangle(0, 0, 1, 1, 3, 2)
	if err != nil {
		t.Fatal(err)
	}
	bare, _, err := New(Arrays{X: r.X, Tri: r.Tri})
	if err != nil {
		t.Fatal(err)
	}
	tagged, err := bare.TagBoundary(func(x, y float64) int32 {
		switch {
		case y == 0:
			return SideBottom
		case x == 1:
			return SideRight
		case y == 1:
			return SideTop
		}
		return SideLeft
	})
	if err != nil {
		t.Fatal(err)
	}
	for e := range r.NumEdges() {
		if tagged.EdgeTag[e] != r.EdgeTag[e] {
			t.Errorf("edge %d: tag %d, want %d", e, tagged.EdgeTag[e], r.EdgeTag[e])
		}
		if bare.EdgeTag[e] != Interior && bare.EdgeTag[e] != 0 {
			t.Errorf("edge %d: TagBoundary changed its input", e)
		}
	}
	_, err = bare.TagBoundary(func(x, y float64) int32 { return -2 })
	var ve *ValidationError
	if !errors.Is(err, ErrNegativeTag) || !errors.As(err, &ve) || ve.Edge != 0 {
		t.Errorf("negative tag: %v", err)
	}
	if _, err := bare.TagBoundary(nil); !errors.Is(err, ErrArgument) {
		t.Errorf("nil rule: %v", err)
	}
}
