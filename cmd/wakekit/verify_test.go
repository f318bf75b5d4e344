package main

import (
	"math"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv/analytic"
	"github.com/wakekit/wakekit/vorticity"
)

// The validation suite passes on a clean build, every row, and exits 0.
func TestVerifyDefaultsPass(t *testing.T) {
	code, out, errs := runCapture("verify")
	if code != 0 {
		t.Fatalf("status %d: %s\n%s", code, errs, out)
	}
	if strings.Contains(out, "FAIL") || strings.Count(out, " pass ") != 23 {
		t.Errorf("want 23 passing rows:\n%s", out)
	}
	if !strings.Contains(out, "recommended scheme:") {
		t.Errorf("no recommendation:\n%s", out)
	}
}

func findRow(rows []*verifyRow, quantity, scheme string) *verifyRow {
	for _, r := range rows {
		if r.Quantity == quantity && r.Scheme == scheme {
			return r
		}
	}
	return nil
}

// At spacing = core radius / 2 verify reports the large under-resolution bias of the peak
// vorticity. With the vortex on a node the reported bias must equal a direct computation from
// the analytic velocity at the neighbouring nodes (no vorticity code involved): for the central
// difference (v(h,0) - v(-h,0) - u(0,h) + u(0,-h)) / 2h, which is (r_c/h)^2 (1 - exp(-h^2/r_c^2))
// of the peak, 11.5 % low; for the local-circulation scheme the trapezoidal circulation around
// the square through the 8 neighbours over its area 4h^2 (Raffel et al., PIV: A Practical
// Guide), close to the exact mean of the Gaussian over that square, pi r_c^2 erf(h/r_c)^2 /
// (4h^2) = 0.851 of the peak. At random positions the peak node is off the centre and the bias
// is larger still.
func TestVerifyUnderResolved(t *testing.T) {
	rc := 5e-3
	h := rc / 2
	s := &verifySettings{Spacing: h, Core: rc, Gamma: 0.01, Speed: 0.1, Rho: 1000, Trials: 1, Seed: 3, OnNode: true,
		Schemes: []vorticity.Scheme{vorticity.Central, vorticity.Circulation}}
	if err := s.check(); err != nil {
		t.Fatal(err)
	}
	rows, err := runVerify(s)
	if err != nil {
		t.Fatal(err)
	}
	lo := analytic.LambOseen{Gamma: 0.01, CoreRadius: rc}
	peak := lo.PeakVorticity(0)
	u := func(x, y float64) float64 { u, _ := lo.Velocity(x, y, 0); return u }
	v := func(x, y float64) float64 { _, v := lo.Velocity(x, y, 0); return v }
	central := (v(h, 0)-v(-h, 0)-u(0, h)+u(0, -h))/(2*h)/peak - 1
	if want := rc * rc / (h * h) * (1 - math.Exp(-h*h/(rc*rc))); math.Abs(central+1-want) > 1e-12 {
		t.Fatalf("direct central estimate %.15g of the peak, closed form %.15g", central+1, want)
	}
	// Trapezoidal circulation around the square of the 8 neighbours, counter-clockwise.
	var circ float64
	for k := -1; k < 1; k++ {
		a, b := float64(k)*h, float64(k+1)*h
		circ += h / 2 * (u(a, -h) + u(b, -h)) // bottom, +x
		circ += h / 2 * (v(h, a) + v(h, b))   // right, +y
		circ -= h / 2 * (u(a, h) + u(b, h))   // top, -x
		circ -= h / 2 * (v(-h, a) + v(-h, b)) // left, -y
	}
	local := circ/(4*h*h)/peak - 1
	for _, c := range []struct {
		scheme string
		want   float64
	}{{"central", central}, {"circulation", local}} {
		r := findRow(rows, "peak vorticity", c.scheme)
		if r == nil {
			t.Fatalf("no peak vorticity row for %s", c.scheme)
		}
		// Same arithmetic on the same samples in another order: round-off only.
		if math.Abs(r.Bias-c.want) > 1e-12 {
			t.Errorf("%s: verify reports a peak bias of %.6f %%, direct computation %.6f %%", c.scheme, 100*r.Bias, 100*c.want)
		}
		if !(r.Bias < -0.1 && r.Bias > -0.3) {
			t.Errorf("%s: peak bias %.2f %%, want low by tens of percent", c.scheme, 100*r.Bias)
		}
	}
	// By Stokes the exact line integral around the square equals the exact mean over it; the
	// stencil's two-panel trapezoid rule per edge misses that by its quadrature error, 1.53 % of
	// the peak here (fine midpoint quadrature of the same edges gives 0.85112 against 0.83587),
	// so the two agree within 2 % and no closer.
	if avg := math.Pi * rc * rc * math.Pow(math.Erf(h/rc), 2) / (4 * h * h); math.Abs(local+1-avg) > 0.02 {
		t.Errorf("local-circulation estimate %.4f of the peak, exact square mean %.4f", local+1, avg)
	}
	s.OnNode, s.Trials = false, 20
	rows, err = runVerify(s)
	if err != nil {
		t.Fatal(err)
	}
	if r := findRow(rows, "peak vorticity", "central"); !(r.Bias < central) {
		t.Errorf("at random positions the central peak bias %.2f %% should be below the on-node %.2f %%", 100*r.Bias, 100*central)
	}
	code, out, errs := runCapture("verify", "--spacing", "2.5e-3", "--core-radius", "5e-3")
	if code != 0 || !strings.Contains(out, "peak vorticity") || strings.Contains(out, "FAIL") {
		t.Errorf("verify --spacing 2.5e-3 --core-radius 5e-3: status %d\n%s%s", code, out, errs)
	}
}

// The area circulation is linear in the velocities, so with the same seed doubling the noise
// doubles its scatter exactly (to round-off), and without noise on a node the scatter is zero.
func TestVerifyNoiseScatter(t *testing.T) {
	base := verifySettings{Spacing: 1e-3, Core: 5e-3, Gamma: 0.01, Speed: 0.1, Rho: 1000, Trials: 6, Seed: 5, OnNode: true,
		Schemes: []vorticity.Scheme{vorticity.Central}}
	var scatter [3]float64
	for k, sigma := range []float64{0, 0.002, 0.004} {
		s := base
		s.Noise.Sigma = sigma
		if err := s.check(); err != nil {
			t.Fatal(err)
		}
		rows, err := runVerify(&s)
		if err != nil {
			t.Fatal(err)
		}
		scatter[k] = findRow(rows, "circulation, area integral r=3r_c", "central").Scatter
	}
	if scatter[0] != 0 || !(scatter[1] > 0) || math.Abs(scatter[2]/scatter[1]-2) > 1e-9 {
		t.Errorf("area-circulation scatter %v at noise 0, 2, 4 mm/s: want 0, s, 2s", scatter)
	}
}

func TestVerifyBadUsage(t *testing.T) {
	for _, args := range [][]string{
		{"file.csv"}, {"--spacing", "0"}, {"--spacing", "-1e-3"}, {"--spacing", "0.02"}, {"--spacing", "1e-6"},
		{"--scheme", "bogus"}, {"--scheme", ","}, {"--trials", "-1"}, {"--noise", "-1"}, {"--window", "2"},
		{"--core-radius", "NaN"}, {"--gamma", "0"}, {"--rho", "0"}, {"--window-size", "-1"},
		{"--window-size", "1e-3", "--window", "3"},
	} {
		code, _, errs := runCapture(append([]string{"verify"}, args...)...)
		if code != 2 || errs == "" {
			t.Errorf("verify %v: status %d, stderr %q; want 2 and a message", args, code, errs)
		}
	}
}

// A top-hat interrogation window of side L convolves the vorticity with a box, which adds its
// variance L^2/12 per axis to the Gaussian core's r_c^2/2 (variances add under convolution),
// so the fitted core radius must grow to r_c sqrt(1 + L^2/(6 r_c^2)). The filtered core is not
// exactly Gaussian: the box's fourth cumulant -L^4/120 against the core's (r_c^2/2)^2 gives
// about 8.5e-4 at L = 0.4 r_c, which bounds the difference (0.1 percentage point).
func TestVerifyWindowWidensCore(t *testing.T) {
	rc, L := 5e-3, 2e-3
	s := &verifySettings{Spacing: 1e-3, Core: rc, Gamma: 0.01, Speed: 0.1, Rho: 1000, Trials: 2, Seed: 1, WindowSize: L,
		Schemes: []vorticity.Scheme{vorticity.Central}}
	if err := s.check(); err != nil {
		t.Fatal(err)
	}
	rows, err := runVerify(s)
	if err != nil {
		t.Fatal(err)
	}
	want := math.Sqrt(1+L*L/(6*rc*rc)) - 1
	if r := findRow(rows, "core radius, Lamb–Oseen fit", ""); math.Abs(r.Bias-want) > 1e-3 {
		t.Errorf("core radius bias %.4f %% with a %g m window, want %.4f %%", 100*r.Bias, L, 100*want)
	}
}
