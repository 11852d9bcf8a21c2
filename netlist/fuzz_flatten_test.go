package netlist

import (
	"fmt"
	"strings"
	"testing"
)

// hierarchyText writes a netlist of subcircuit definitions and instances
// from the grammar
//
//	deck = def{1..6} top
//	def  = .subckt Sk ports(0..3) [params: p=v] body .ends   (sometimes unclosed or nested)
//	body = R | Q | .param | X instance of any Sj (also itself: recursion),
//	       with a port count that is sometimes wrong
//
// so that Flatten meets recursion, port mismatches, missing definitions,
// parameter scopes and deep or wide hierarchies.
func hierarchyText(data []byte) string {
	f := &byteStream{b: data}
	var b strings.Builder
	b.WriteString("Fuzzed hierarchy\n.model QN NPN (IS=1e-14 BF=100)\n")
	ndef := 1 + f.pick(6)
	ports := make([]int, ndef)
	for k := range ports {
		ports[k] = f.pick(4)
	}
	inst := func(indent string, i, nodes int) {
		k := f.pick(ndef + 1) // ndef: an undefined name
		want := nodes
		if k < ndef {
			want = ports[k]
		}
		if f.pick(8) == 0 {
			want++ // a port-count mismatch
		}
		fmt.Fprintf(&b, "%sX%d", indent, i)
		for n := 0; n < want; n++ {
			fmt.Fprintf(&b, " n%d", f.pick(4))
		}
		fmt.Fprintf(&b, " S%d", k)
		if f.pick(3) == 0 {
			fmt.Fprintf(&b, " p={%d*q+1}", f.pick(5))
		}
		b.WriteString("\n")
	}
	for k := 0; k < ndef; k++ {
		fmt.Fprintf(&b, ".subckt S%d", k)
		for n := 0; n < ports[k]; n++ {
			fmt.Fprintf(&b, " p%d", n)
		}
		if f.pick(2) == 0 {
			fmt.Fprintf(&b, " params: p=%d q=2", 1+f.pick(9))
		}
		b.WriteString("\n")
		nbody := 1 + f.pick(5)
		for i := 0; i < nbody; i++ {
			node := func() string {
				if ports[k] > 0 && f.pick(2) == 0 {
					return fmt.Sprintf("p%d", f.pick(ports[k]))
				}
				return fmt.Sprintf("m%d", f.pick(3))
			}
			switch f.pick(5) {
			case 0:
				fmt.Fprintf(&b, "R%d %s %s {p*1k}\n", i, node(), node())
			case 1:
				fmt.Fprintf(&b, "Q%d %s %s %s QN\n", i, node(), node(), node())
			case 2:
				fmt.Fprintf(&b, ".param q={p+%d}\n", f.pick(3))
			default:
				inst("", i, ports[k])
			}
		}
		if f.pick(16) != 0 {
			b.WriteString(".ends\n")
		}
	}
	b.WriteString("V1 n1 0 5\n")
	ntop := 1 + f.pick(4)
	for i := 0; i < ntop; i++ {
		inst("", 100+i, 2)
	}
	b.WriteString(".end\n")
	return b.String()
}

// byteStream reads fuzz bytes as small choices, 0 past the end.
type byteStream struct {
	b []byte
	i int
}

func (f *byteStream) pick(n int) int {
	if f.i >= len(f.b) {
		return 0
	}
	f.i++
	return int(f.b[f.i-1]) % n
}

// FuzzFlatten flattens random subcircuit hierarchies: no panic; every
// diagnostic located in the file; the element limit and the nesting limit
// hold; every flat element has its hierarchical name and chain.
func FuzzFlatten(f *testing.F) {
	f.Add([]byte{})
	f.Add([]byte{3, 2, 1, 0, 0, 1, 4, 0, 0, 0, 3, 3, 1, 2, 3})
	f.Add([]byte("recursive and mismatched"))
	f.Add([]byte{5, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4, 4})
	const maxElements, maxDepth = 3000, 8
	f.Fuzz(func(t *testing.T, data []byte) {
		src := hierarchyText(data)
		opts := &LoadOptions{ReadFile: NoFiles, MaxElements: maxElements, MaxSubcktDepth: maxDepth}
		d, _ := Parse("h.cir", []byte(src), opts)
		c, err := Flatten(d)
		if c == nil {
			t.Fatalf("Flatten returned no circuit\n%s", src)
		}
		if l := AsErrorList(err); l != nil {
			for _, e := range l.List {
				if e.Pos.File != "h.cir" || !e.Pos.IsValid() {
					t.Errorf("unlocated diagnostic %q\n%s", e, src)
				}
			}
		} else if err != nil {
			t.Fatalf("error is not an error list: %v", err)
		}
		if len(c.Elements) > maxElements {
			t.Errorf("%d elements, over the limit %d", len(c.Elements), maxElements)
		}
		for _, e := range c.Elements {
			if len(e.Chain) > maxDepth {
				t.Errorf("%s nested %d deep, over the limit %d", e.Name, len(e.Chain), maxDepth)
			}
			prefix := ""
			for _, in := range e.Chain {
				prefix += in.Name + "."
			}
			if !strings.HasPrefix(e.Name, prefix) || !e.Pos.IsValid() {
				t.Errorf("element %s with chain %v at %v", e.Name, e.Chain, e.Pos)
			}
			for _, n := range e.Nodes {
				if n == "" {
					t.Errorf("element %s has an empty node name", e.Name)
				}
			}
		}
	})
}
