package report

import (
	"math"
	"testing"
)

// Rounding follows JCGM 100:2008 §7.2.6 (uncertainty to two significant digits, value to the
// same decimal place); the expected strings are worked out by hand from the exact binary
// values (e.g. 0.0995 is stored as 0.0995000000000000006661, above the tie, so it rounds up).
func TestFormat(t *testing.T) {
	nan := math.NaN()
	for _, c := range []struct {
		v, u             float64
		unit             string
		value, unc, disp string
	}{
		// Uncertainty carries into a new digit: 0.0995 -> 0.10 (two digits after the carry).
		{1.23456, 0.0995, "1", "1.23", "0.10", ""},
		{1.23456, 0.0994, "1", "1.235", "0.099", ""},
		{0.5, 0.000995, "1", "0.5000", "0.0010", ""},
		// The figures the summary printed before, now rounded to the uncertainty.
		{4.015297, 0.003272, "1", "4.0153", "0.0033", ""},
		{-2.556e-05, 4.41e-06, "N s", "-25.6", "4.4", "µN s"},
		{1003.37, 1.326, "1", "1003.4", "1.3", ""},
		{0.001952, 3.101e-06, "m^2/s", "1952.0", "3.1", "mm²/s"},
		{0.02082, 0.0001564, "m/s", "20.82", "0.16", "mm/s"},
		{0.001513, 0.0003215, "N", "1.51", "0.32", "mN"},
		{2.793, 0.01925, "s", "2.793", "0.019", "s"},
		{0.129, 0.0042, "s", "129.0", "4.2", "ms"},
		// Value much smaller than its uncertainty: rounds to zero, without a sign.
		{1.234e-07, 4.4e-05, "N s", "0", "44", "µN s"},
		{-1.234e-07, 4.4e-05, "N s", "0", "44", "µN s"},
		{-3e-06, 4.4e-05, "N s", "-3", "44", "µN s"},
		// Uncertainty above the units place: the value is rounded to tens.
		{12345.6, 450, "1", "12350", "450", ""},
		{-74.9, 26, "1", "-75", "26", ""},
		{4.9, 26, "1", "5", "26", ""},
		{3.9, 260, "1", "0", "260", ""},
		// No uncertainty: four significant digits.
		{0.0004078, nan, "m/s", "407.8", "", "µm/s"},
		{1000, nan, "kg/m^3", "1000", "", "kg/m³"},
		{2.5e-07, math.Inf(1), "1", "250.0", "", "×10⁻⁹"},
		{-0.012314, -1, "1", "-0.01231", "", ""},
		// Uncertainty exactly zero.
		{4.0153, 0, "1", "4.015", "0", ""},
		{0, 0, "N", "0", "0", "N"},
		// Not computed.
		{nan, 0.1, "N", NotComputed, "", "N"},
		{math.Inf(-1), nan, "m", NotComputed, "", "m"},
		// Units without a prefix get a shared power of ten outside 0.001..100000.
		{3.2e-05, 1.1e-06, "1/s", "32.0", "1.1", "×10⁻⁶ 1/s"},
		{2.5e6, 3e4, "1", "2.500", "0.030", "×10⁶"},
	} {
		q := Format(c.v, c.u, c.unit)
		if q.Value != c.value || q.Uncertainty != c.unc || q.Unit != c.disp {
			t.Errorf("Format(%g, %g, %q) = %q ± %q %q; want %q ± %q %q", c.v, c.u, c.unit, q.Value, q.Uncertainty, q.Unit, c.value, c.unc, c.disp)
		}
	}
}

func TestQuantityString(t *testing.T) {
	for _, c := range []struct {
		q    Quantity
		want string
	}{
		{Format(-2.556e-05, 4.41e-06, "N s"), "-25.6 ± 4.4 µN s"},
		{Format(3.2e-05, 1.1e-06, "1/s"), "(32.0 ± 1.1)×10⁻⁶ 1/s"},
		{Format(4.0153, 0.0033, "1"), "4.0153 ± 0.0033"},
		{Format(math.NaN(), 1, "N"), NotComputed},
	} {
		if got := c.q.String(); got != c.want {
			t.Errorf("%+v: %q, want %q", c.q, got, c.want)
		}
	}
}

// A fixed scale (a table column, a plot axis) expresses every value in the same unit.
func TestScaleFor(t *testing.T) {
	s := ScaleFor(2.1e-3, "N s")
	if s.Unit != "mN s" || s.Factor() != 1000 {
		t.Errorf("scale %+v", s)
	}
	q := s.Format(2.5e-4, 1.2e-5)
	if q.Value != "0.250" || q.Uncertainty != "0.012" || q.Unit != "mN s" {
		t.Errorf("%+v", q)
	}
	if s := ScaleFor(0, "m/s"); s.Unit != "m/s" || s.Factor() != 1 {
		t.Errorf("zero magnitude: %+v", s)
	}
	if s := ScaleFor(0.05, "1"); s.Unit != "" || s.Factor() != 1 {
		t.Errorf("share: %+v", s)
	}
}

func TestShiftDecimal(t *testing.T) {
	for _, c := range []struct {
		s    string
		k    int
		want string
	}{
		{"-0.0000256", 6, "-25.6"}, {"1952", -3, "1.952"}, {"12", -4, "0.0012"}, {"0.50", 2, "50"},
		{"3.1", 3, "3100"}, {"-0.000", 3, "0"}, {"7", 0, "7"},
	} {
		if got := shiftDecimal(c.s, c.k); got != c.want {
			t.Errorf("shiftDecimal(%q, %d) = %q, want %q", c.s, c.k, got, c.want)
		}
	}
}
