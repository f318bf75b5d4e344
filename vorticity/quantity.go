package vorticity

import (
	"fmt"
	"math"
	"strings"
)

// Quantity names a scalar formed from the velocity-gradient tensor at each node.
type Quantity int

const (
	// QVorticity is dV/dx - dU/dy.
	QVorticity Quantity = iota
	// QDivergence is du/dx + dv/dy (+ v/r in axisymmetric geometry).
	QDivergence
	// QPlanarDivergence is du/dx + dv/dy in any geometry.
	QPlanarDivergence
	// QStrainXX is du/dx.
	QStrainXX
	// QStrainYY is dv/dy.
	QStrainYY
	// QStrainXY is (du/dy + dv/dx)/2.
	QStrainXY
	// QHoopStrain is v/r (zero for planar data).
	QHoopStrain
	// QStrainMagnitude is sqrt(2 S_ij S_ij).
	QStrainMagnitude
	// QCriterion is the Q criterion.
	QCriterion
	// QLambda2 is the lambda2 criterion.
	QLambda2
	// QSwirl is the swirling strength lambda_ci.
	QSwirl
	// QSignedSwirl is lambda_ci with the sign of the vorticity.
	QSignedSwirl
	// QEnstrophy is the enstrophy density w^2/2.
	QEnstrophy
	numQuantities
)

var quantityNames = [numQuantities]string{
	"vorticity", "divergence", "planar-divergence", "strain-xx", "strain-yy", "strain-xy",
	"hoop-strain", "strain", "q", "lambda2", "swirl", "signed-swirl", "enstrophy",
}

var quantityUnits = [numQuantities]string{
	"1/s", "1/s", "1/s", "1/s", "1/s", "1/s", "1/s", "1/s", "1/s^2", "1/s^2", "1/s", "1/s", "1/s^2",
}

// Quantities lists every quantity in the order of their constants.
func Quantities() []Quantity {
	out := make([]Quantity, numQuantities)
	for k := range out {
		out[k] = Quantity(k)
	}
	return out
}

// String returns the quantity's name as ParseQuantity reads it, e.g. "lambda2".
func (q Quantity) String() string {
	if q >= 0 && q < numQuantities {
		return quantityNames[q]
	}
	return fmt.Sprintf("Quantity(%d)", int(q))
}

// Unit returns the SI unit of the quantity ("1/s" or "1/s^2").
func (q Quantity) Unit() string {
	if q >= 0 && q < numQuantities {
		return quantityUnits[q]
	}
	return ""
}

// Signed reports whether the quantity takes both signs in ordinary flows (for plotting with a
// diverging palette).
func (q Quantity) Signed() bool {
	switch q {
	case QStrainMagnitude, QSwirl, QEnstrophy:
		return false
	}
	return true
}

// ParseQuantity reads a quantity name as String writes it; "omega" and "vorticity" are the
// same, as are "lambda-ci" and "swirl".
func ParseQuantity(name string) (Quantity, error) {
	n := strings.ToLower(strings.TrimSpace(name))
	switch n {
	case "omega", "w":
		return QVorticity, nil
	case "lambda-ci", "lambdaci", "lci":
		return QSwirl, nil
	case "strain-magnitude":
		return QStrainMagnitude, nil
	}
	for k, s := range quantityNames {
		if s == n {
			return Quantity(k), nil
		}
	}
	return 0, fmt.Errorf("unknown quantity %q (expected one of %s)", name, strings.Join(quantityNames[:], ", "))
}

// Scalar returns the quantity at every node, NaN where the tensor is.
func (g *Gradient) Scalar(q Quantity) []float64 {
	out := make([]float64, len(g.DUDX))
	g.Into(q, out)
	return out
}

// Into writes the quantity at every node into dst (length Grid.N()), allocating nothing.
func (g *Gradient) Into(q Quantity, dst []float64) {
	if len(dst) != len(g.DUDX) {
		panic(fmt.Sprintf("vorticity.Gradient.Into: dst has length %d for %d nodes", len(dst), len(g.DUDX)))
	}
	nx := g.Grid.NX
	for j := 0; j < g.Grid.NY; j++ {
		g.row(q, j, dst[j*nx:(j+1)*nx])
	}
}

// IntoAll writes several quantities, dst[m] receiving qs[m], row by row, so that the tensor
// is read from memory once for all of them.
func (g *Gradient) IntoAll(qs []Quantity, dst [][]float64) {
	if len(qs) != len(dst) {
		panic("vorticity.Gradient.IntoAll: quantities and destinations differ in number")
	}
	for _, d := range dst {
		if len(d) != len(g.DUDX) {
			panic(fmt.Sprintf("vorticity.Gradient.IntoAll: dst has length %d for %d nodes", len(d), len(g.DUDX)))
		}
	}
	nx := g.Grid.NX
	for j := 0; j < g.Grid.NY; j++ {
		for m, q := range qs {
			g.row(q, j, dst[m][j*nx:(j+1)*nx])
		}
	}
}

// row writes quantity q for row j into out.
func (g *Gradient) row(q Quantity, j int, out []float64) {
	nx := g.Grid.NX
	lo := j * nx
	a, b, c, d := g.DUDX[lo:lo+nx], g.DUDY[lo:lo+nx], g.DVDX[lo:lo+nx], g.DVDY[lo:lo+nx]
	v := g.V[lo : lo+nx]
	// The hoop strain of this row is v * rinv, or dv/dr on the axis; planar rows have none.
	axi, onAxis, rinv := g.Geometry.Axisymmetric, false, 0.0
	if axi {
		r := g.Grid.Y(j) - g.Geometry.AxisY
		if math.Abs(r) <= 1e-6*g.Grid.DY {
			onAxis = true
		} else {
			rinv = 1 / r
		}
	}
	hoop := func(i int) float64 {
		switch {
		case !axi:
			// Zero, but NaN where the tensor is, so the hoop strain never outlives the data.
			return 0 * a[i]
		case onAxis:
			return d[i]
		}
		return v[i] * rinv
	}
	switch q {
	case QVorticity:
		for i := range out {
			out[i] = c[i] - b[i]
		}
	case QDivergence:
		if !axi {
			for i := range out {
				out[i] = a[i] + d[i]
			}
			return
		}
		for i := range out {
			out[i] = a[i] + d[i] + hoop(i)
		}
	case QPlanarDivergence:
		for i := range out {
			out[i] = a[i] + d[i]
		}
	case QStrainXX:
		copy(out, a)
	case QStrainYY:
		copy(out, d)
	case QStrainXY:
		for i := range out {
			out[i] = (b[i] + c[i]) / 2
		}
	case QHoopStrain:
		for i := range out {
			out[i] = hoop(i) + 0*a[i]
		}
	case QStrainMagnitude:
		for i := range out {
			s, h := (b[i]+c[i])/2, hoop(i)
			out[i] = math.Sqrt(2 * (a[i]*a[i] + d[i]*d[i] + 2*s*s + h*h))
		}
	case QCriterion:
		if !axi {
			for i := range out {
				out[i] = q2(a[i], b[i], c[i], d[i], 0)
			}
			return
		}
		for i := range out {
			out[i] = q2(a[i], b[i], c[i], d[i], hoop(i))
		}
	case QLambda2:
		if !axi {
			// lambda2 with a zero third eigenvalue, written out so the loop needs no call.
			for i := range out {
				s, w := (b[i]+c[i])/2, (b[i]-c[i])/2
				m11 := a[i]*a[i] + s*s - w*w
				m22 := s*s + d[i]*d[i] - w*w
				m12 := s * (a[i] + d[i])
				mean, e := (m11+m22)/2, (m11-m22)/2
				rad := math.Sqrt(e*e + m12*m12)
				out[i] = max(mean-rad, min(mean+rad, 0))
			}
			return
		}
		for i := range out {
			out[i] = lambda2(a[i], b[i], c[i], d[i], hoop(i))
		}
	case QSwirl, QSignedSwirl:
		signed := q == QSignedSwirl
		for i := range out {
			out[i] = swirl(a[i], b[i], c[i], d[i], signed)
		}
	case QEnstrophy:
		for i := range out {
			w := c[i] - b[i]
			out[i] = w * w / 2
		}
	default:
		panic(fmt.Sprintf("vorticity.Gradient: unknown quantity %d", int(q)))
	}
}
