package piv

import (
	"math"
	"strconv"
)

// Number parsing for the readers. A hand-written fast path is used because strconv has no
// ParseFloat for byte slices: decimals of at most 15 significant digits and a power of ten up
// to 1e22 are converted exactly with one correctly rounded multiplication or division (Clinger
// 1990, "How to read floating point numbers accurately", PLDI), the same fast path strconv takes
// internally. Everything else goes to strconv.ParseFloat, whose string conversion the compiler
// keeps on the stack for short cells, so neither path allocates.

// pow10 holds the powers of ten that are exact in float64.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11,
	1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseFast parses a plain decimal number ([+-]digits[.digits][e[+-]digits]) exactly when it
// can; ok is false when the text is not such a number or the fast path cannot guarantee the
// correctly rounded result.
func parseFast(b []byte) (f float64, ok bool) {
	f, used, ok := parsePrefix(b)
	return f, ok && used == len(b)
}

// parsePrefix parses the plain decimal number at the start of b as parseFast does, returning
// how many bytes it used; ok is false when b does not start with such a number or the fast path
// cannot guarantee the correctly rounded result.
func parsePrefix(b []byte) (f float64, used int, ok bool) {
	n := len(b)
	i := 0
	neg := false
	if n > 0 && (b[0] == '-' || b[0] == '+') {
		neg = b[0] == '-'
		i = 1
	}
	// Integer digits. Leading zeros are skipped; the count of significant digits nd decides
	// whether the mantissa m is exact (at most 15 digits; more may wrap m, but then the fast
	// path is refused anyway).
	var m uint64
	nd, exp := 0, 0
	start := i
	for ; i < n && b[i] == '0'; i++ {
	}
	for ; i < n; i++ {
		d := b[i] - '0'
		if d > 9 {
			break
		}
		m = m*10 + uint64(d)
		nd++
	}
	digits := i > start
	if i < n && b[i] == '.' {
		i++
		fs := i
		if m == 0 {
			for ; i < n && b[i] == '0'; i++ {
			}
			exp = fs - i
		}
		fd := i
		for ; i < n; i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			m = m*10 + uint64(d)
		}
		nd += i - fd
		exp -= i - fd
		digits = digits || i > fs
	}
	if !digits || nd > 15 {
		return 0, 0, false
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		eneg := false
		if i < n && (b[i] == '-' || b[i] == '+') {
			eneg = b[i] == '-'
			i++
		}
		e, es := 0, i
		for ; i < n; i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			if e < 10000 {
				e = e*10 + int(d)
			}
		}
		if i == es {
			return 0, 0, false
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	if m == 0 {
		if neg {
			return math.Copysign(0, -1), i, true
		}
		return 0, i, true
	}
	if exp < -22 || exp > 22 {
		return 0, 0, false
	}
	f = float64(m)
	if exp < 0 {
		f /= pow10[-exp]
	} else {
		f *= pow10[exp]
	}
	if neg {
		f = -f
	}
	return f, i, true
}

// parseNumber parses one cell. It returns ok = false for text that is not a number; numbers
// beyond the float64 range are not numbers here either.
func parseNumber(b []byte) (float64, bool) {
	if f, ok := parseFast(b); ok {
		return f, true
	}
	if len(b) > 64 {
		return 0, false
	}
	f, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return 0, false
	}
	return f, true
}

// isNaNText reports whether a cell spells NaN (any case), the missing-vector marker.
func isNaNText(b []byte) bool {
	if len(b) == 4 && (b[0] == '+' || b[0] == '-') {
		b = b[1:]
	}
	return len(b) == 3 && (b[0]|0x20) == 'n' && (b[1]|0x20) == 'a' && (b[2]|0x20) == 'n'
}
