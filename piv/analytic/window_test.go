package analytic

import (
	"math"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// The mean of sin(kx) cos(ky) over a square of side L centred on (x, y) is
// sin(kx) cos(ky) sinc(kL/2)^2 with sinc(s) = sin(s)/s (an elementary integral), so the
// windowed Taylor–Green field is the exact field times that factor. Gauss–Legendre with 8 points
// on a window of a quarter wavelength integrates these entire functions to about 1e-15.
func TestSampleWindowedTaylorGreen(t *testing.T) {
	f := TaylorGreen{U: 0.2, K: 2 * math.Pi / 0.04}
	g := piv.Grid{NX: 17, NY: 13, X0: -0.003, Y0: 0.001, DX: 1e-3, DY: 1.5e-3}
	L := 0.01
	w, err := SampleWindowed(f, g, 0, L, 8)
	if err != nil {
		t.Fatal(err)
	}
	s := f.K * L / 2
	factor := math.Pow(math.Sin(s)/s, 2)
	exact := Sample(f, g, 0)
	for k := range w.U {
		if math.Abs(w.U[k]-factor*exact.U[k]) > 1e-13*f.U || math.Abs(w.V[k]-factor*exact.V[k]) > 1e-13*f.U {
			t.Fatalf("node %d: windowed (%g, %g), exact mean (%g, %g)", k, w.U[k], w.V[k], factor*exact.U[k], factor*exact.V[k])
		}
	}
	if _, err := SampleWindowed(f, g, 0, 0, 8); err == nil {
		t.Error("zero window accepted")
	}
	if _, err := SampleWindowed(f, g, 0, L, 1000); err == nil {
		t.Error("1000 points accepted")
	}
}
