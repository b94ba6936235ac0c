package compare

import (
	"math"
	"testing"
)

// Parenthesis notation as used in physics papers (common practice, no
// source): one significant digit in the error, two when it starts with 1 or 2.
func TestFormatUncertainty(t *testing.T) {
	for _, tc := range []struct {
		value, err float64
		want       string
	}{
		{0.8314023, 0.0000004, "0.8314023(4)"},
		{1.2345, 0.0012, "1.2345(12)"},
		{1.2345, 0.0029, "1.2345(29)"},
		{1.2346, 0.0031, "1.235(3)"},
		{1.2345, 0.0031, "1.234(3)"},    // the binary 1.2345 lies below the tie
		{1.2345, 0.00096, "1.2345(10)"}, // 9.6 rounds to 10: leading 1, two digits
		{1.2345, 0.000296, "1.2345(3)"}, // 2.96 rounds to 3.0: leading 3, one digit
		{1.2345, 0.000196, "1.23450(20)"},
		{0.5, 0.0299, "0.50(3)"},
		{-0.8314023, 0.0000004, "-0.8314023(4)"},
		{12.3, 1.5, "12.3(1.5)"},
		{12.3, 3, "12(3)"},
		{12.3, 2.4, "12.3(2.4)"},
		{12345, 300, "12300(300)"},
		{12345, 25, "12345(25)"},
		{1.234e-7, 5e-10, "1.234(5)e-07"},
		{-1.234e-7, 1.2e-9, "-1.234(12)e-07"},
		{6.02214076e23, 1.2e16, "6.02214076(12)e+23"},
		{1.5e7, 3e6, "1.5(3)e+07"},
		{0.001, 0.5, "0.0(5)"},
		{-0.01, 0.5, "0.0(5)"},
		{0, 0.003, "0.000(3)"},
		{0.8314023, 0, "0.8314023"},
		{0.8314023, math.NaN(), "0.8314023(?)"},
		{0.8314023, -1, "0.8314023(?)"},
		{0.8314023, math.Inf(1), "0.8314023(inf)"},
		{math.NaN(), 0.1, "NaN"},
		{math.Inf(-1), 0.1, "-Inf"},
	} {
		if got := FormatUncertainty(tc.value, tc.err); got != tc.want {
			t.Errorf("FormatUncertainty(%v, %v) = %q, want %q", tc.value, tc.err, got, tc.want)
		}
	}
}
