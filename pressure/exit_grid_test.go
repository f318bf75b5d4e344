package pressure

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/wakekit/wakekit/piv"
	"gonum.org/v1/gonum/integrate/quad"
)

// The exit integrals must not depend on where the rows sit relative to the axis: on the axis
// with data on both sides, starting on the axis, cell-centred, offset, or one row reaching
// below the axis. A uniform exit velocity U and pressure p gives Q = πR²U, M = ρπR²U² and
// P = πR²p (slot: 2R per unit depth) exactly, since the rows' cells tile the radius. A
// parabolic profile u = U(1 - r²/R²) is compared with gonum's quadrature of the closed form:
// the cell rule holds u at its row over the cell, and for this quadratic profile its error is
// exactly (h/R)²/2 relative on cell-centred rows of an axisymmetric exit (Σ_j (U/R²)
// ∫_cell (r² − r_j²) r dr = U h²/8 against the flux / 2π = U R²/4); the other layouts must do
// no worse (1% margin for rounding). TestExitProfile measures the order.
func TestExitGridOffsets(t *testing.T) {
	R, U, p0, rho := 0.0125, 0.04, 0.7, 1000.0
	h := R / 8
	for _, axi := range []bool{true, false} {
		area := 2 * R
		if axi {
			area = math.Pi * R * R
		}
		w := func(r float64) float64 {
			if axi {
				return 2 * math.Pi * r
			}
			return 2
		}
		wantPar := quad.Fixed(func(r float64) float64 { u := U * (1 - r*r/(R*R)); return w(r) * u }, 0, R, 20, nil, 0)
		for _, c := range []struct {
			name string
			y0   float64
			ny   int
		}{
			{"row on the axis, both sides", -3 * R, 49},
			{"first row on the axis", 0, 25},
			{"cell-centred rows", h / 2, 24},
			{"one row below the axis", -h, 25},
			{"rows offset by 0.3 spacing", -0.3 * h, 25},
			{"first row 0.8 spacing above the axis", 0.8 * h, 25},
			{"rows from below the axis to the radius only", -2 * h, 11},
		} {
			g := piv.Grid{NX: 4, NY: c.ny, X0: 0, Y0: c.y0, DX: h, DY: h}
			f, par := piv.NewField(g), piv.NewField(g)
			f.Geometry = piv.Geometry{Axisymmetric: axi}
			par.Geometry = f.Geometry
			p, zero := make([]float64, g.N()), make([]float64, g.N())
			for k := range p {
				_, j := g.IJ(k)
				r := g.Y(j)
				f.Set(k, U, 0)
				par.Set(k, U*(1-r*r/(R*R)), 0)
				p[k] = p0
			}
			name := fmt.Sprintf("%s (axisymmetric %v)", c.name, axi)
			ex, err := ExitProfile(f, p, zero, Exit{X: h, Radius: R}, rho, 0)
			if err != nil {
				t.Errorf("%s: %v", name, err)
				continue
			}
			for _, q := range []struct {
				what      string
				got, want float64
			}{{"Q", ex.Q, area * U}, {"M", ex.M, rho * area * U * U}, {"P", ex.P, area * p0}} {
				if math.Abs(q.got/q.want-1) > 1e-12 {
					t.Errorf("%s: %s = %.15g, want %.15g", name, q.what, q.got, q.want)
				}
			}
			ep, err := ExitProfile(par, zero, zero, Exit{X: h, Radius: R}, rho, 0)
			if err != nil {
				t.Fatal(err)
			}
			if e := math.Abs(ep.Q/wantPar - 1); e > 1.01*(h/R)*(h/R)/2 {
				t.Errorf("%s: parabolic Q %.6g, quadrature %.6g (relative %.2g)", name, ep.Q, wantPar, e)
			}
		}
	}
	// Fields that do not reach the radius, or start more than a spacing from the axis, on either
	// side, are refused instead of integrated in part.
	for _, g := range []piv.Grid{
		{NX: 4, NY: 5, X0: 0, Y0: h / 2, DX: h, DY: h},    // stops at 5 h < R
		{NX: 4, NY: 20, X0: 0, Y0: 2 * h, DX: h, DY: h},   // starts 1.5 spacings above the axis
		{NX: 4, NY: 20, X0: 0, Y0: -25 * h, DX: h, DY: h}, // ends 5.5 spacings below the axis
	} {
		f := piv.NewField(g)
		z := make([]float64, g.N())
		if _, err := ExitProfile(f, z, z, Exit{X: h, Radius: R}, rho, 0); err == nil || !strings.Contains(err.Error(), "does not cover the exit") {
			t.Errorf("grid %v: error %v, want a refusal", g, err)
		}
	}
}
