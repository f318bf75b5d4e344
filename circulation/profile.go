package circulation

import (
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// ProfileOptions configures a radial profile.
type ProfileOptions struct {
	// DR is the radial step [m] (0 means half the smaller grid spacing).
	DR float64
	// Spacing is the sampling spacing along each circle (0 means DefaultSpacing).
	Spacing float64
	// Line configures the line integral on each circle.
	Line LineOptions
}

// Profile holds azimuthal averages on circles about a centre, one entry per radius.
type Profile struct {
	X, Y float64 // centre [m]
	// R is the circle radius [m]; Gamma the circulation on the circle [m²/s]; UTheta and UR the
	// azimuthal means of the tangential (counter-clockwise positive) and radial (outward
	// positive) velocity [m/s] over the points with data; BadShare the share of the circle next
	// to non-measured nodes. Entries refused by the quality limit are NaN.
	R, Gamma, UTheta, UR, BadShare []float64
	// Warning says where the profile was cut short because a circle left the field.
	Warning string
}

// RadialProfile computes Γ(r), <u_θ>(r) and <u_r>(r) on circles about (x, y) from the first
// radial step out to rmax. Γ is the line integral of each circle (see Line for its error);
// <u_θ> and <u_r> are trapezoidal means over the circle. Circles that would leave the field end
// the profile with a Warning; it is an error when not even the first fits.
func RadialProfile(f *piv.Field, x, y, rmax float64, opt ProfileOptions) (Profile, error) {
	g := f.Grid
	p := Profile{X: x, Y: y}
	if !(rmax > 0) || math.IsInf(rmax, 0) {
		return p, fmt.Errorf("%s: profile radius %g must be positive and finite", f.Name(), rmax)
	}
	dr := opt.DR
	if dr <= 0 {
		dr = math.Min(g.DX, g.DY) / 2
	}
	nr := int(math.Floor(rmax/dr + 1e-9))
	if nr < 1 {
		return p, fmt.Errorf("%s: profile radius %g is below the radial step %g", f.Name(), rmax, dr)
	}
	if nr > 100_000 {
		return p, fmt.Errorf("%s: profile of %d radii is over the limit of 100000", f.Name(), nr)
	}
	lo := opt.Line
	lo.NaNOnBad = true
	for a := 1; a <= nr; a++ {
		r := float64(a) * dr
		if !g.Contains(x-r, y-r) || !g.Contains(x+r, y+r) {
			if a == 1 {
				return p, fmt.Errorf("%s: the first profile circle (radius %.6g m about (%.6g, %.6g) m) leaves the field (x %.6g..%.6g m, y %.6g..%.6g m)",
					f.Name(), r, x, y, g.X0, g.XMax(), g.Y0, g.YMax())
			}
			p.Warning = fmt.Sprintf("profile stops at r = %.6g m: larger circles leave the field", p.R[len(p.R)-1])
			break
		}
		c, err := CircleSampled(g, piv.Circle{X: x, Y: y, R: r}, opt.Spacing)
		if err != nil {
			return p, err
		}
		lr, err := Line(f, c, lo)
		if err != nil {
			return p, err
		}
		ut, ur := math.NaN(), math.NaN()
		if lr.Warning == "" {
			ut = lr.Gamma / (2 * math.Pi * r)
			ur = radialMean(f, c, x, y, opt.Line.Interp)
		}
		p.R = append(p.R, r)
		p.Gamma = append(p.Gamma, lr.Gamma)
		p.UTheta = append(p.UTheta, ut)
		p.UR = append(p.UR, ur)
		p.BadShare = append(p.BadShare, lr.BadShare)
	}
	return p, nil
}

// radialMean is the mean outward velocity over the points of circle c that have data.
func radialMean(f *piv.Field, c *Contour, x, y float64, m piv.Interp) float64 {
	var s float64
	n := 0
	for k := range c.X {
		u, v, _, ok := sampleStatus(f, c.X[k], c.Y[k], m)
		if !ok {
			continue
		}
		dx, dy := c.X[k]-x, c.Y[k]-y
		s += (u*dx + v*dy) / math.Hypot(dx, dy)
		n++
	}
	if n == 0 {
		return math.NaN()
	}
	return s / float64(n)
}
