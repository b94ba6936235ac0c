package compare

import (
	"math"
	"strconv"
	"strings"
)

// FormatUncertainty writes value ± err in the parenthesis notation of
// physics papers: the digits of the error in the last places of the value,
// 0.8314023 ± 0.0000004 → "0.8314023(4)". The error keeps two significant
// digits when its leading digit is 1 or 2 and one otherwise (1.2345(12),
// 0.8314(4)), after rounding to nearest (common practice, no source); the
// value is rounded to the last place of the error, the rounding being that of
// the exact binary value (1.2345 is stored just below the tie and rounds to
// 1.234). An error that reaches
// past the decimal point of the value is written with its own decimal point,
// 12.3(1.5); an error of a unit or more with no decimals left is written as
// an integer, 12(3), 12300(300).
//
// Scientific notation is used when the larger of |value| and err is below
// 1e-3 or at least 1e6, with the shared exponent after the parenthesis:
// 1.234(5)e-07. A zero error gives the value in full (shortest
// representation that reads back exactly); a NaN or negative error gives the
// value in full followed by "(?)", an infinite one by "(inf)"; a NaN or
// infinite value is written as strconv writes it.
func FormatUncertainty(value, err float64) string {
	if math.IsNaN(value) || math.IsInf(value, 0) {
		return strconv.FormatFloat(value, 'g', -1, 64)
	}
	full := strconv.FormatFloat(value, 'g', -1, 64)
	switch {
	case err == 0:
		return full
	case math.IsNaN(err) || err < 0:
		return full + "(?)"
	case math.IsInf(err, 1):
		return full + "(inf)"
	}

	// Significant digits of the error and the exponent of its leading
	// digit, after rounding: strconv rounds the decimal digits exactly.
	digits, expo := errorDigits(err, 2)
	if digits[0] != '1' && digits[0] != '2' {
		digits, expo = errorDigits(err, 1)
		if digits[0] == '1' {
			// 9.6 rounded up to 10: a leading 1, so keep two digits.
			digits = "10"
		}
	}
	// The last place of the error is 10^last.
	last := expo - (len(digits) - 1)

	magnitude := math.Max(math.Abs(value), err)
	shared := 0
	if magnitude < 1e-3 || magnitude >= 1e6 {
		shared = int(math.Floor(math.Log10(magnitude)))
		// Guard the floor of log10 against rounding at exact powers of ten.
		if math.Abs(magnitude) >= math.Pow(10, float64(shared+1)) {
			shared++
		}
		last -= shared
		expo -= shared
		value /= math.Pow(10, float64(shared))
	}

	var b strings.Builder
	if last >= 0 {
		// No decimals: round the value to a multiple of 10^last.
		unit := math.Pow(10, float64(last))
		rounded := math.Round(value/unit) * unit
		b.WriteString(strconv.FormatFloat(rounded, 'f', 0, 64))
		b.WriteByte('(')
		b.WriteString(digits)
		b.WriteString(strings.Repeat("0", last))
		b.WriteByte(')')
	} else {
		decimals := -last
		b.WriteString(strconv.FormatFloat(value, 'f', decimals, 64))
		b.WriteByte('(')
		if expo >= 0 {
			// The error reaches past the decimal point: write it with one.
			b.WriteString(insertPoint(digits, len(digits)-decimals))
		} else {
			b.WriteString(digits)
		}
		b.WriteByte(')')
	}
	out := b.String()
	// A value that rounds to zero carries no sign.
	if strings.HasPrefix(out, "-") && strings.Trim(out[1:strings.IndexByte(out, '(')], "0.") == "" {
		out = out[1:]
	}
	if shared != 0 {
		out += "e" + exponent(shared)
	}
	return out
}

// errorDigits returns the first sig significant digits of x > 0, rounded to
// nearest, and the decimal exponent of the leading one.
func errorDigits(x float64, sig int) (string, int) {
	s := strconv.FormatFloat(x, 'e', sig-1, 64) // d.ddde±XX
	mant, exp, _ := strings.Cut(s, "e")
	e, _ := strconv.Atoi(exp)
	return strings.Replace(mant, ".", "", 1), e
}

// insertPoint puts a decimal point after the first at digits of s, padding
// with leading zeros when at ≤ 0.
func insertPoint(s string, at int) string {
	if at <= 0 {
		return "0." + strings.Repeat("0", -at) + s
	}
	if at >= len(s) {
		return s + strings.Repeat("0", at-len(s))
	}
	return s[:at] + "." + s[at:]
}

// exponent writes e as strconv writes exponents: a sign and at least two
// digits.
func exponent(e int) string {
	sign := "+"
	if e < 0 {
		sign, e = "-", -e
	}
	s := strconv.Itoa(e)
	if len(s) < 2 {
		s = "0" + s
	}
	return sign + s
}
