package solve

import (
	"fmt"
	"testing"
)

// stagesCircuit builds k divider-biased common-emitter stages on one
// supply (3k + 2 unknowns).
func stagesCircuit(k int) *builder {
	b := newBuilder()
	npnModel(b, nil)
	b.V("VCC", "vcc", "0", 12)
	for i := 0; i < k; i++ {
		n := func(s string) string { return fmt.Sprintf("%s%d", s, i) }
		b.R(n("R1_"), "vcc", n("b"), 47e3)
		b.R(n("R2_"), n("b"), "0", 10e3)
		b.R(n("RC"), "vcc", n("c"), 4.7e3)
		b.R(n("RE"), n("e"), "0", 1e3)
		b.Q(n("Q"), n("c"), n("b"), n("e"), "qn")
	}
	return b
}

// BenchmarkLinear solves boards of 1 to 16 stages with the dense and the
// sparse LU (the sparse one wins from the smallest, so it is the default).
func BenchmarkLinear(b *testing.B) {
	for _, k := range []int{1, 2, 4, 6, 8, 12, 16} {
		s, err := Prepare(stagesCircuit(k).c)
		if err != nil {
			b.Fatal(err)
		}
		for _, kind := range []string{"dense", "sparse"} {
			b.Run(fmt.Sprintf("n%d/%s", s.Size(), kind), func(b *testing.B) {
				var lin LinearSolver = NewDenseLU()
				if kind == "sparse" {
					lin = NewSparseLU()
				}
				for i := 0; i < b.N; i++ {
					if _, err := s.Solve(Options{Linear: lin}); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
