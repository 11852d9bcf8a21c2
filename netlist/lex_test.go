package netlist

import (
	"fmt"
	"strings"
	"testing"
)

func TestTokenize(t *testing.T) {
	tests := []struct {
		in   string
		want string // tokens joined by '|'
		err  string
	}{
		{"R1 a b 1k", "R1|a|b|1k", ""},
		{"R1 a b 1k ; load", "R1|a|b|1k", ""},
		{"R1 a b 1k $ x=10 y=20", "R1|a|b|1k", ""},
		{"R1 a$b c 1k$", "R1|a$b|c|1k", ""},
		{"IS = 4.8E-14", "IS|=|4.8E-14", ""},
		{"NPN(IS=1e-14, BF=100)", "NPN|(|IS|=|1e-14|BF|=|100|)", ""},
		{"R1 a b {2 * rload}", "R1|a|b|{2 * rload}", ""},
		{"R1 a b {max({x}, 1)}", "R1|a|b|{max({x}, 1)}", ""},
		{"R1 a b 'r/2'", "R1|a|b|{r/2}", ""},
		{`.include "lib dir/parts.inc"`, `.include|"lib dir/parts.inc"`, ""},
		{"R1 Net-(R1-Pad2) /A/+5V 1", "R1|Net-(R1-Pad2)|/A/+5V|1", ""},
		{"V1 a 0 sin(0 1)", "V1|a|0|sin|(|0|1|)", ""},
		{"R1\ta\tb\t1k", "R1|a|b|1k", ""},
		{"R1 a b {1+2", "R1|a|b", "unclosed '{'"},
		{`.inc "x`, ".inc", "unclosed \""},
		{"R1 a } 1", "R1|a|1", "'}' without '{'"},
	}
	for _, tt := range tests {
		var errs ErrorList
		var got []string
		for _, tok := range tokenize(tt.in, "t", 1, 1, &errs) {
			got = append(got, tok.String())
		}
		if g := strings.Join(got, "|"); g != tt.want {
			t.Errorf("tokenize(%q) = %s, want %s", tt.in, g, tt.want)
		}
		e := errs.Err()
		if (e != nil) != (tt.err != "") || (e != nil && !strings.Contains(e.Error(), tt.err)) {
			t.Errorf("tokenize(%q): error %v, want %q", tt.in, e, tt.err)
		}
	}
}

func TestTokenColumns(t *testing.T) {
	var errs ErrorList
	var cols []int
	for _, tok := range tokenize("Q1  c\tb e", "f.cir", 7, 3, &errs) {
		cols = append(cols, tok.pos.Col)
	}
	// Columns are 1-based bytes; the line part starts at column 3.
	if got := fmt.Sprint(cols); got != "[3 7 9 11]" {
		t.Errorf("columns %s, want [3 7 9 11]", got)
	}
}
