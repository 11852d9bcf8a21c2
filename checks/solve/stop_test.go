package solve

import (
	"context"
	"errors"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// countdown is a context that turns done after a number of Err calls, so
// a test can stop a solve in the middle of its work without a clock.
type countdown struct {
	context.Context
	left, calls int
}

func (c *countdown) Err() error {
	c.calls++
	if c.left <= 0 {
		return context.DeadlineExceeded
	}
	c.left--
	return nil
}

// hopeless is a circuit no strategy solves (a junction across a petavolt
// supply, as in testdata/bad/solver-no-convergence.cir): without a stop,
// Solve runs plain Newton, every GMIN step and every source step.
func hopeless() *netlist.Circuit {
	b := newBuilder()
	b.V("V1", "a", "0", 1e15)
	b.R("R1", "a", "b", 1e-15)
	b.D("D1", "b", "0", "dx")
	b.model("dx", netlist.Diode, map[string]float64{"IS": 1e-14, "N": 0.01})
	return b.c
}

// TestSolveStops: a done context stops the solve at its next Newton
// iteration, and Solve says why.
func TestSolveStops(t *testing.T) {
	// Without a stop: the whole schedule, many iterations.
	full := &countdown{Context: context.Background(), left: 1 << 30}
	if _, err := Solve(hopeless(), Options{Context: full}); err == nil || errors.Is(err, context.DeadlineExceeded) {
		t.Fatalf("unstopped: %v, want a convergence error", err)
	}
	if full.calls < 100 {
		t.Fatalf("the unstopped solve checked its context %d times; the test needs a long solve", full.calls)
	}
	for _, after := range []int{0, 1, 7, 40} {
		c := &countdown{Context: context.Background(), left: after}
		_, err := Solve(hopeless(), Options{Context: c})
		if !errors.Is(err, context.DeadlineExceeded) {
			t.Errorf("stopped after %d: error %v, want one wrapping context.DeadlineExceeded", after, err)
		}
		// Once done, nothing more is computed: the context is asked once
		// more and the answer kept.
		if c.calls != after+1 {
			t.Errorf("stopped after %d: the context was asked %d times, want %d", after, c.calls, after+1)
		}
	}
	// A solvable circuit with a live context solves as without one.
	b := newBuilder()
	b.V("V1", "a", "0", 5)
	b.R("R1", "a", "0", 1e3)
	r, err := Solve(b.c, Options{Context: context.Background()})
	if err != nil || r.V("a") != 5 {
		t.Fatalf("with a live context: %v, V(a) %v", err, r)
	}
}
