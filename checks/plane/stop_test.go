package plane

import (
	"context"
	"strings"
	"testing"

	"github.com/biaslint/biaslint/checks"
)

// A done context stops the load-line solves: the plane comes back without
// a load line, saying why, and AllContext makes no more planes.
func TestPlaneStops(t *testing.T) {
	c := circuit(t, "stage\nV1 vcc 0 12\nR1 vcc b 82k\nR2 b 0 15k\nRC vcc c 4.7k\nRE e 0 1k\nQ1 c b e N\n"+models)
	an, err := checks.Analyze(c, checks.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if pl, err := Of(an, "Q1"); err != nil || pl.Load == nil {
		t.Fatalf("live: %v, load line %v", err, pl.Load)
	}
	done, cancel := context.WithCancel(context.Background())
	cancel()
	pl, err := OfContext(done, an, "Q1")
	if err != nil || pl.Load != nil || !strings.Contains(pl.LoadNote, "context canceled") {
		t.Errorf("stopped: %v, load line %v, note %q", err, pl.Load, pl.LoadNote)
	}
	if n := len(AllContext(done, an)); n != 0 {
		t.Errorf("AllContext with a done context made %d planes", n)
	}
}
