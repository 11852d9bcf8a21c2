package units

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// close reports whether a and b agree to 1e-12 relative.
func close(a, b float64) bool {
	if a == b {
		return true
	}
	return math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b))
}

func TestParseValue(t *testing.T) {
	tests := []struct {
		in   string
		want float64
		rkm  bool
	}{
		// Scale factors: Nagel, SPICE2 (UCB/ERL M520, 1975), the user's guide's
		// table of scale factors: T G MEG K MIL M U N P F.
		{"1T", 1e12, false},
		{"2g", 2e9, false},
		{"1MEG", 1e6, false},
		{"1meg", 1e6, false},
		{"4.7k", 4.7e3, false},
		{"4.7K", 4.7e3, false},
		{"1M", 1e-3, false}, // SPICE2: M is milli
		{"10mil", 10 * 25.4e-6, false},
		{"3u", 3e-6, false},
		{"6n", 6e-9, false},
		{"22p", 22e-12, false},
		{"5f", 5e-15, false}, // SPICE2: F is femto
		// Plain decimal and exponent forms (SPICE2 user's guide, number fields).
		{"10", 10, false},
		{"-1.5", -1.5, false},
		{"+.47", 0.47, false},
		{"4.8E-14", 4.8e-14, false},
		{"1e3", 1e3, false},
		{"2.5e+2k", 2.5e5, false},
		{"1e-999", 0, false}, // underflows to zero, still a number
		// Trailing unit letters are ignored (SPICE2 user's guide: letters after
		// a scale factor are ignored).
		{"10kOhm", 1e4, false},
		{"5V", 5, false},
		{"100nF", 100e-9, false},
		{"1.5uA", 1.5e-6, false},
		{"47R", 47, false},
		{" 12V ", 12, false},
		{"2.2µF", 2.2e-6, false}, // micro sign U+00B5, common practice in exports
		{"1μ", 1e-6, false},      // Greek mu U+03BC
		// IEC 60062 RKM codes (the letter is the decimal marker and the
		// multiplier; examples of the standard's form, values from memory).
		{"4k7", 4.7e3, true},
		{"4K7", 4.7e3, true},
		{"2R2", 2.2, true},
		{"R47", 0.47, true},
		{"1M5", 1.5e6, true}, // IEC 60062: M is mega in an RKM code
		{"1m5", 1.5e-3, true},
		{"4u7", 4.7e-6, true},
		{"6n8", 6.8e-9, true},
		{"3p3", 3.3e-12, true},
		{"2F2", 2.2, true},
		{"1G2", 1.2e9, true},
		{"-4k7", -4.7e3, true},
		{"4u7F", 4.7e-6, true},
	}
	for _, tt := range tests {
		got, rkm, err := ParseValue(tt.in)
		if err != nil {
			t.Errorf("ParseValue(%q): %v", tt.in, err)
			continue
		}
		if !close(got, tt.want) || rkm != tt.rkm {
			t.Errorf("ParseValue(%q) = %g, rkm %v; want %g, rkm %v", tt.in, got, rkm, tt.want, tt.rkm)
		}
	}
}

func TestParseErrors(t *testing.T) {
	tests := []struct {
		in, msg string
	}{
		{"", "empty"},
		{"   ", "empty"},
		{"1.2.3k", `"1.2.3k"`},
		{"abc", "not a number"},
		{"NaN", "not a number"},
		{"Inf", "not a number"},
		{"-inf", "not a number"},
		{"1e999", "out of range"},
		{"1e308T", "out of range"},
		{"1e", "exponent"},
		{"1k 2", "unexpected"},
		{"4k7.5", "RKM"},
		{"0x10", "unexpected"},
		{"k7", "not a number"},
		{"-", "not a number"},
		{".", "not a number"},
	}
	for _, tt := range tests {
		_, _, err := ParseValue(tt.in)
		if err == nil {
			t.Errorf("ParseValue(%q): no error", tt.in)
			continue
		}
		if !errors.Is(err, ErrSyntax) {
			t.Errorf("ParseValue(%q): %v does not wrap ErrSyntax", tt.in, err)
		}
		if !strings.Contains(err.Error(), tt.msg) {
			t.Errorf("ParseValue(%q) = %q, want it to mention %q", tt.in, err, tt.msg)
		}
	}
}

func TestParseQuotesLongText(t *testing.T) {
	_, err := Parse(strings.Repeat("x", 500))
	if err == nil || len(err.Error()) > 120 {
		t.Errorf("long bad value: %v", err)
	}
}

func TestFormat(t *testing.T) {
	// Prefixes: BIPM, The International System of Units (SI brochure, 9th
	// edition 2019), table of SI prefixes; three significant digits.
	tests := []struct {
		v    float64
		unit string
		want string
	}{
		{1.02e-3, "A", "1.02 mA"},
		{4700, "Ohm", "4.70 kOhm"},
		{0, "V", "0 V"},
		{-1.5, "V", "-1.50 V"},
		{-0.0123, "A", "-12.3 mA"},
		{2.2e-6, "F", "2.20 uF"},
		{1e-15, "F", "1.00 fF"},
		{100e-12, "F", "100 pF"},
		{12, "V", "12.0 V"},
		{999.96, "Ohm", "1.00 kOhm"}, // rounds up into the next prefix
		{999.4, "Ohm", "999 Ohm"},
		{1e6, "Ohm", "1.00 MOhm"},
		{3.3e9, "Hz", "3.30 GHz"},
		{1e12, "Ohm", "1.00 TOhm"},
		{2e-18, "A", "2.00e-18 A"},
		{5e15, "Ohm", "5.00e+15 Ohm"},
		{4700, "", "4.70k"},
		{0.6, "", "600m"},
		{1e-6, "s", "1.00 us"},
		{1e-9, "s", "1.00 ns"},
		{1e-3, "s", "1.00 ms"},
		{math.NaN(), "V", "NaN V"},
		{math.Inf(1), "V", "+Inf V"},
		{math.Inf(-1), "V", "-Inf V"},
	}
	for _, tt := range tests {
		if got := Format(tt.v, tt.unit); got != tt.want {
			t.Errorf("Format(%g, %q) = %q, want %q", tt.v, tt.unit, got, tt.want)
		}
	}
}

func TestFormatDigits(t *testing.T) {
	tests := []struct {
		v      float64
		digits int
		want   string
	}{
		{0.6543, 2, "650 mV"}, // round half to even on the 'e' form: 6.5e-1
		{0.6543, 4, "654.3 mV"},
		{1234, 1, "1 kV"},
		{1234, 0, "1 kV"}, // clamped to one digit
	}
	for _, tt := range tests {
		if got := FormatDigits(tt.v, "V", tt.digits); got != tt.want {
			t.Errorf("FormatDigits(%g, %d) = %q, want %q", tt.v, tt.digits, got, tt.want)
		}
	}
}

// TestRoundTrip checks that Format's output reads back within its precision:
// three significant digits are within 0.5% of the value.
func TestRoundTrip(t *testing.T) {
	for _, v := range []float64{1.234e-14, 4.7e-9, 0.9999, 1, 33.3, 12345, 6.8e11, -2.2e-5} {
		s := Format(v, "")
		back, err := Parse(s)
		if err != nil {
			t.Fatalf("Parse(Format(%g)) = Parse(%q): %v", v, s, err)
		}
		// Format writes "M" for mega, which SPICE reads as milli; only check
		// values without that prefix.
		if strings.HasSuffix(s, "M") {
			continue
		}
		if math.Abs(back-v) > 0.005*math.Abs(v) {
			t.Errorf("Parse(Format(%g)) = %g (%q)", v, back, s)
		}
	}
}

// Dimensionless figures print with three significant digits and no SI
// prefix; temperatures and shares never take a prefix. (Rounding to
// significant digits as in any numerical-methods text; the cases are
// ours.)
func TestNumberAndNoPrefixUnits(t *testing.T) {
	for _, tc := range []struct {
		got, want string
	}{
		{Number(0.0164), "0.0164"}, {Number(16.4e-3), "0.0164"}, {Number(50), "50.0"}, {Number(212.6), "213"},
		{Number(1500), "1500"}, {Number(999.96), "1000"}, {Number(-0.5), "-0.500"}, {Number(1.234e6), "1.23e+06"},
		{Number(3e-5), "3.00e-05"}, {Number(0), "0"}, {Number(1), "1.00"},
		{Format(70.24, "C"), "70.2 C"}, {Format(0.05, "C"), "0.0500 C"}, {Format(12.5, "K"), "12.5 K"},
		{Format(0.5, "%"), "0.500 %"}, {Format(1500, "C"), "1500 C"}, {Format(250, "K/W"), "250 K/W"},
		{Format(4700, ""), "4.70k"}, {Format(1.02e-3, "A"), "1.02 mA"},
	} {
		if tc.got != tc.want {
			t.Errorf("got %q, want %q", tc.got, tc.want)
		}
	}
}

// Read says which letters it took as the scale suffix and which it
// ignored as a unit, so callers can tell the user (SPICE suffix rules:
// M milli, MEG mega, F femto; letters after the suffix ignored).
func TestRead(t *testing.T) {
	for _, tc := range []struct {
		in           string
		want         float64
		suffix, unit string
	}{
		{"1M", 1e-3, "M", ""},
		{"1MEG", 1e6, "MEG", ""},
		{"10kOhm", 1e4, "k", "Ohm"},
		{"4.7x", 4.7, "", "x"},
		{"1F", 1e-15, "F", ""},
		{"100nF", 100e-9, "n", "F"},
		{"5V", 5, "", "V"},
		{"2.2", 2.2, "", ""},
	} {
		r, err := Read(tc.in)
		if err != nil {
			t.Fatalf("Read(%q): %v", tc.in, err)
		}
		if math.Abs(r.Value-tc.want) > 1e-12*math.Abs(tc.want) || r.Suffix != tc.suffix || r.Unit != tc.unit || r.RKM {
			t.Errorf("Read(%q) = %+v, want %g suffix %q unit %q", tc.in, r, tc.want, tc.suffix, tc.unit)
		}
	}
	if r, err := Read("4k7"); err != nil || !r.RKM || r.Suffix != "" || r.Unit != "" {
		t.Errorf("Read(4k7) = %+v, %v; want an RKM code with no suffix or unit", r, err)
	}
}
