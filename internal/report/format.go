package report

import (
	"math"
	"strconv"
	"strings"
)

// Quantity is a measured value, its uncertainty and its unit, formatted for display.
type Quantity struct {
	// Value is the rounded value, or "not computed" for a value that is not a finite number.
	Value string
	// Uncertainty is the rounded one-standard-deviation uncertainty without sign, or "" when
	// the value has none.
	Uncertainty string
	// Unit is the display unit: the SI unit with a prefix (mN s, mm/s, mm²/s), or with a
	// power-of-ten factor (×10⁻⁶) for units that take no prefix; "" for a pure number.
	Unit string
}

// String joins the parts into one line, e.g. "-25.6 ± 4.4 µN s".
func (q Quantity) String() string {
	s := q.Value
	if q.Uncertainty != "" {
		s += " ± " + q.Uncertainty
		if strings.HasPrefix(q.Unit, "×") {
			s = "(" + s + ")"
		}
	}
	if q.Unit != "" && q.Value != NotComputed {
		if strings.HasPrefix(q.Unit, "×") {
			return s + q.Unit
		}
		s += " " + q.Unit
	}
	return s
}

// NotComputed is the text shown for a figure that could not be computed.
const NotComputed = "not computed"

// Format rounds a value and its one-standard-deviation uncertainty u for display, in a
// display unit chosen for them (see ChooseScale).
//
// The uncertainty is rounded to two significant digits and the value to the same decimal
// place, so the last digit shown is the first uncertain one (JCGM 100:2008, Guide to the
// expression of uncertainty in measurement, §7.2.6: it usually suffices to quote an
// uncertainty to at most two significant digits). A value without uncertainty (u NaN, infinite
// or negative) keeps four significant digits; an uncertainty of exactly zero is shown as "0"
// beside a value of four significant digits. Rounding works on the exact decimal expansion of
// the binary numbers, so 0.0995 (stored as 0.09950000000000000677) becomes 0.10.
func Format(v, u float64, unit string) Quantity {
	return ChooseScale(v, u, unit).Format(v, u)
}

// Scale is a display unit: an SI unit with a prefix or a power-of-ten factor.
type Scale struct {
	// shift is the power of ten the SI value is multiplied by for display.
	shift int
	// Unit is the display unit ("" for a pure number without factor).
	Unit string
}

// Factor returns the number an SI value is multiplied by to be expressed in the scale's unit.
func (s Scale) Factor() float64 { return math.Pow(10, float64(s.shift)) }

// prefixes are the SI prefixes by power of ten (engineering steps).
var prefixes = map[int]string{-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}

// prefixable are the unit symbols that take a prefix in the display.
var prefixable = map[string]bool{"m": true, "N": true, "Pa": true, "s": true, "J": true, "W": true, "Hz": true}

// DisplayUnit writes an SI unit for display: powers as superscripts (m^2/s as m²/s) and the
// pure number "1" as "".
func DisplayUnit(unit string) string {
	unit = strings.TrimSpace(unit)
	if unit == "1" || unit == "-" {
		return ""
	}
	r := strings.NewReplacer("^-1", "⁻¹", "^-2", "⁻²", "^2", "²", "^3", "³", "^4", "⁴")
	return r.Replace(unit)
}

// leadSymbol splits a unit into its first symbol, the power of that symbol and the rest:
// "m^2/s" gives ("m", 2, "/s"), "N s" gives ("N", 1, " s").
func leadSymbol(unit string) (sym string, pow int, rest string) {
	n := 0
	for n < len(unit) && (unit[n] >= 'a' && unit[n] <= 'z' || unit[n] >= 'A' && unit[n] <= 'Z') {
		n++
	}
	sym, rest, pow = unit[:n], unit[n:], 1
	if len(rest) >= 2 && rest[0] == '^' && rest[1] >= '1' && rest[1] <= '9' && (len(rest) == 2 || rest[2] < '0' || rest[2] > '9') {
		pow = int(rest[1] - '0')
		rest = rest[2:]
	}
	return sym, pow, rest
}

// ChooseScale picks the display unit for a value v with uncertainty u (NaN for none) in the
// SI unit unit. A unit whose first symbol takes a prefix (m, N, Pa, s, ...) gets the
// engineering prefix (steps of 1000) that puts the larger of |v| and u between 1 and 1000 in
// that unit (1 and 10^6 for a squared symbol, and so on); seconds get no prefix above 1.
// Other units, and pure numbers, stay as they are between 0.001 and 100000 and otherwise get a
// shared power-of-ten factor in steps of 1000, e.g. ×10⁻⁶.
func ChooseScale(v, u float64, unit string) Scale {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ScaleFor(0, unit)
	}
	m := math.Abs(v)
	if !math.IsNaN(u) && !math.IsInf(u, 0) && u > m {
		m = u
	}
	return ScaleFor(m, unit)
}

// ScaleFor picks the display unit for magnitudes around m (as ChooseScale does), for a column
// of a table or the axis of a plot.
func ScaleFor(m float64, unit string) Scale {
	disp := DisplayUnit(unit)
	if !(m > 0) || math.IsInf(m, 0) {
		return Scale{Unit: disp}
	}
	sym, pow, rest := leadSymbol(strings.TrimSpace(unit))
	lg := math.Log10(m)
	if prefixable[sym] {
		e := 3 * int(math.Floor(lg/float64(3*pow)+1e-12))
		e = max(-15, min(9, e))
		if sym == "s" {
			e = min(e, 0)
		}
		return Scale{shift: -e * pow, Unit: DisplayUnit(prefixes[e] + sym + unitPow(pow) + rest)}
	}
	if lg >= -3 && lg < 5 {
		return Scale{Unit: disp}
	}
	e := 3 * int(math.Floor(lg/3+1e-12))
	f := "×10" + superscript(e)
	if disp != "" {
		f += " " + disp
	}
	return Scale{shift: -e, Unit: f}
}

func unitPow(p int) string {
	if p == 1 {
		return ""
	}
	return "^" + strconv.Itoa(p)
}

func superscript(e int) string {
	r := strings.NewReplacer("-", "⁻", "0", "⁰", "1", "¹", "2", "²", "3", "³", "4", "⁴", "5", "⁵", "6", "⁶", "7", "⁷", "8", "⁸", "9", "⁹")
	return r.Replace(strconv.Itoa(e))
}

// Format rounds v and u as the package-level Format does, expressed in this scale.
func (s Scale) Format(v, u float64) Quantity {
	q := Quantity{Unit: s.Unit}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		q.Value = NotComputed
		return q
	}
	switch {
	case u > 0 && !math.IsInf(u, 0):
		place := exponent(u, 2) - 1 // the decimal place of the uncertainty's second digit
		q.Value = s.digits(v, place)
		q.Uncertainty = s.digits(u, place)
	default:
		place := exponent(v, 4) - 3
		if v == 0 {
			place = 0
		}
		q.Value = s.digits(v, place)
		if u == 0 {
			q.Uncertainty = "0"
		}
	}
	return q
}

// digits returns x rounded to the decimal place 10^place (SI) and written in the scale's unit,
// with exactly the decimals down to that place.
func (s Scale) digits(x float64, place int) string {
	out := shiftDecimal(roundTo(x, place), s.shift)
	n := max(0, -(place + s.shift))
	ip, fp, _ := strings.Cut(out, ".")
	if len(fp) > n {
		fp = fp[:n]
	}
	fp += strings.Repeat("0", n-len(fp))
	if n > 0 {
		ip += "." + fp
	}
	return cleanZero(ip)
}

// exponent returns the decimal exponent of x after rounding it to n significant digits
// (0.0995 to two digits is 0.10: exponent -1).
func exponent(x float64, n int) int {
	s := strconv.FormatFloat(x, 'e', n-1, 64)
	e, _ := strconv.Atoi(s[strings.IndexByte(s, 'e')+1:])
	return e
}

// roundTo returns x rounded to the decimal place 10^place as a decimal string, from the
// exact value of the binary number (ties, which only exact binary fractions can hit, go to the
// even digit below the units place and away from zero above it).
func roundTo(x float64, place int) string {
	var s string
	if place < 0 {
		s = strconv.FormatFloat(x, 'f', -place, 64)
	} else {
		// Twenty decimals hold the exact binary value far below the units digit of any
		// double, so rounding the string at a place >= 0 rounds the value itself.
		full := strconv.FormatFloat(math.Abs(x), 'f', 20, 64)
		intPart := full[:strings.IndexByte(full, '.')]
		frac := full[strings.IndexByte(full, '.')+1:]
		for len(intPart) <= place {
			intPart = "0" + intPart
		}
		keep, drop := intPart[:len(intPart)-place], intPart[len(intPart)-place:]+frac
		up := drop != "" && drop[0] >= '5'
		d := []byte(keep)
		if up {
			k := len(d) - 1
			for ; k >= 0 && d[k] == '9'; k-- {
				d[k] = '0'
			}
			if k < 0 {
				d = append([]byte{'1'}, d...)
			} else {
				d[k]++
			}
		}
		s = string(d) + strings.Repeat("0", place)
		s = strings.TrimLeft(s, "0")
		if s == "" {
			s = "0"
		}
		if x < 0 {
			s = "-" + s
		}
	}
	return cleanZero(s)
}

// cleanZero drops the sign of a string that rounds to zero ("-0.00" is "0.00").
func cleanZero(s string) string {
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		return s[1:]
	}
	return s
}

// shiftDecimal multiplies the decimal number in s by 10^k by moving its decimal point, keeping
// every digit it has (so the digits shown stay the rounded ones).
func shiftDecimal(s string, k int) string {
	if k == 0 {
		return s
	}
	sign := ""
	if strings.HasPrefix(s, "-") {
		sign, s = "-", s[1:]
	}
	intPart, frac, _ := strings.Cut(s, ".")
	digits := intPart + frac
	point := len(intPart) + k
	var out string
	switch {
	case point <= 0:
		out = "0." + strings.Repeat("0", -point) + digits
	case point >= len(digits):
		out = digits + strings.Repeat("0", point-len(digits))
	default:
		out = digits[:point] + "." + digits[point:]
	}
	ip, fp, hasFrac := strings.Cut(out, ".")
	ip = strings.TrimLeft(ip, "0")
	if ip == "" {
		ip = "0"
	}
	out = ip
	if hasFrac {
		out += "." + fp
	}
	return cleanZero(sign + out)
}
