package checks

import (
	"context"
	"errors"
	"sync/atomic"
	"testing"

	"github.com/biaslint/biaslint/netlist"
)

// TestAnalyzeStops: a done context stops an analysis, and the cases after
// the stop are not solved; a live one changes nothing.
func TestAnalyzeStops(t *testing.T) {
	c, err := netlist.Read("../rulesets/demo/bench-logger.cir", nil)
	if err != nil {
		t.Fatal(err)
	}
	opt := Options{Scenarios: true, Corners: true, Thermal: true}

	live := opt
	live.Context = context.Background()
	an, err := Analyze(c, live)
	if err != nil {
		t.Fatal(err)
	}
	all := len(an.Cases)
	if all < 20 {
		t.Fatalf("the demo board gives %d cases; the test needs many", all)
	}

	expired, cancel := context.WithCancel(context.Background())
	cancel()
	stopped := opt
	stopped.Context = expired
	if _, err := Analyze(c, stopped); !errors.Is(err, context.Canceled) {
		t.Errorf("with a done context: %v, want an error wrapping context.Canceled", err)
	}

	// Stopped after the third case: the analysis ends with the error and
	// far fewer cases are solved than there are.
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var solved atomic.Int64
	mid := opt
	mid.Context = ctx
	mid.Progress = func(done, total int) {
		solved.Store(int64(done))
		if done == 3 {
			cancel()
		}
	}
	if _, err := Analyze(c, mid); !errors.Is(err, context.Canceled) {
		t.Errorf("stopped midway: %v, want an error wrapping context.Canceled", err)
	}
	t.Logf("%d of %d cases passed through the workers after the stop", solved.Load(), all)
}
