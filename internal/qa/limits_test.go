package qa

import (
	"context"
	"errors"
	"math/rand/v2"
	"testing"
)

// The options that size the work are bounded, each refused by its JSON name.
func TestOptionsCheckBoundsWork(t *testing.T) {
	for _, tc := range []struct {
		o    Options
		name string
	}{
		{Options{MaxDepthShift: 10000, ShiftStep: 1e-8}, "shift_step"},
		{Options{ShiftStep: 1e-7}, "shift_step"}, // default max_depth_shift 3
		{Options{MaxDepthShift: 1e300, ShiftStep: 1e-300}, "shift_step"},
		{Options{Neighbours: MaxNeighbours + 1}, "neighbours"},
		{Options{PickWindow: MaxPickWindow * 2}, "pick_window"},
		{Options{ShiftStep: -1}, "shift_step"},
		{Options{Reference: "moon"}, "reference"},
	} {
		err := tc.o.Check()
		var oe *OptionError
		if !errors.As(err, &oe) || oe.Option != tc.name {
			t.Errorf("%+v: error %v, want one naming %s", tc.o, err, tc.name)
		}
	}
	for _, o := range []Options{{}, DefaultOptions(), {MaxDepthShift: 100, ShiftStep: 0.01}, {Neighbours: MaxNeighbours, PickWindow: MaxPickWindow}} {
		if err := o.Check(); err != nil {
			t.Errorf("%+v refused: %v", o, err)
		}
	}
}

// The depth-shift search stops when its context is done, however many
// shifts it was asked to try (2e12 here, hours of work).
func TestShiftSearchHonoursContext(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	picks := []pickItem{{depth: 1}}
	if s := estimateShift(ctx, picks, nil, 1e4, 1e-8, 0.3); s != 0 {
		t.Errorf("cancelled search returned shift %v", s)
	}
	r := rand.New(rand.NewPCG(31, 32))
	var in Input
	synthHole{id: "CTX", az: 70, dip: -60, flatten: 1, depth: 300, runLen: 3, perRun: 6}.build(t, r, &in)
	rep, err := RunContext(ctx, in, Options{})
	if !errors.Is(err, context.Canceled) || len(rep.Holes) != 0 {
		t.Errorf("RunContext on a done context: %v, %d holes", err, len(rep.Holes))
	}
	if rep, err := RunContext(context.Background(), in, Options{}); err != nil || len(rep.Holes) != 1 {
		t.Errorf("RunContext: %v, %d holes", err, len(rep.Holes))
	}
}
