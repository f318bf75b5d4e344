package pressure

import (
	"errors"
	"fmt"
	"math"

	"github.com/wakekit/wakekit/piv"
)

// Reference names the model of the pressure on the reference (Dirichlet) edges.
type Reference int

const (
	// Constant prescribes p = p∞ on the reference edges.
	Constant Reference = iota
	// Source prescribes the unsteady Bernoulli pressure of the irrotational far field of a
	// starting jet: the nozzle acts as a point volume source of the measured exit flux Q(t), so
	// the potential is φ = −Q/(4π d) at distance d from the centre of the exit, and
	//
	//	p = p∞ − ρ ∂φ/∂t − ρ|u|²/2 = p∞ + ρ Q̇/(4π d) − ρ|u|²/2
	//
	// with |u| the measured velocity at the edge node and Q̇ the time derivative of the
	// measured exit flux (same time stencil as the acceleration). The edges must lie in
	// irrotational fluid. Axisymmetric geometry only: the planar source potential is
	// logarithmic and fixes no level.
	Source
)

// ParseReference reads "zero" (or "constant") or "source".
func ParseReference(s string) (Reference, error) {
	switch s {
	case "zero", "constant", "":
		return Constant, nil
	case "source":
		return Source, nil
	}
	return 0, fmt.Errorf("unknown reference model %q (expected zero or source)", s)
}

// String returns the model's name.
func (r Reference) String() string {
	if r == Source {
		return "source"
	}
	return "zero"
}

// FrameOptions configures the reconstruction of one frame's pressure.
type FrameOptions struct {
	Accel AccelOptions
	Fluid Fluid
	// Solve configures the integration (solver, Dirichlet edges, level, tolerance).
	Solve Options
	// Reference selects the value model on the Dirichlet edges.
	Reference Reference
	// Exit, when set, gives the nozzle exit for the exit forces and the source model.
	Exit *Exit
	// Solid marks nodes inside it as solid in every frame (the nozzle wall); nil for none.
	Solid piv.Shape
}

// FrameResult is the pressure reconstruction of one frame.
type FrameResult struct {
	Field  *piv.Field // the frame (with the solid mask applied)
	AX, AY []float64  // material acceleration [m/s^2]
	GX, GY []float64  // pressure gradient [Pa/m]
	*Result
	// Exit holds the exit forces when FrameOptions.Exit is set.
	Exit *ExitForces
	// QDot is the rate of change of the exit flux used by the source model [m^3/s^2].
	QDot float64
}

// Nozzle is the wall of a round nozzle (or a planar slot) ending at the exit plane x = X: the
// nodes with x <= X and RIn <= |y − Axis| <= ROut. It implements piv.Shape.
type Nozzle struct {
	X, RIn, ROut, Axis float64
}

// Contains implements piv.Shape.
func (n Nozzle) Contains(x, y float64) bool {
	r := math.Abs(y - n.Axis)
	return x <= n.X && r >= n.RIn && r <= n.ROut
}

// Check verifies that the nozzle wall is well formed and meets the field of grid g: its exit
// plane within the field's x extent (or at most one spacing upstream of it) and its radial
// band overlapping the field's rows on at least one side of the axis.
func (n Nozzle) Check(g piv.Grid) error {
	if !isFinite(n.X) || !isFinite(n.RIn) || !isFinite(n.ROut) || !isFinite(n.Axis) || !(n.RIn >= 0 && n.ROut > n.RIn) {
		return fmt.Errorf("nozzle wall x <= %g m, %g <= r <= %g m: need finite values with 0 <= inner < outer radius", n.X, n.RIn, n.ROut)
	}
	lo, hi := g.Y0, g.YMax()
	band := (n.Axis+n.ROut >= lo && n.Axis+n.RIn <= hi) || (n.Axis-n.RIn >= lo && n.Axis-n.ROut <= hi)
	if n.X < g.X0-g.DX*(1+1e-9) || n.X > g.XMax() || !band {
		return fmt.Errorf("the nozzle (exit plane x = %g m, wall %g..%g m from y = %g m) lies outside the field (x %g..%g m, y %g..%g m)",
			n.X, n.RIn, n.ROut, n.Axis, g.X0, g.XMax(), lo, hi)
	}
	return nil
}

// NodeMask is a solid mask given node by node on a grid (for instance read from a mask file
// whose status column marks the solid nodes). It implements piv.Shape: a point is inside when
// the nearest node of Grid, within half a spacing, is marked.
type NodeMask struct {
	Grid  piv.Grid
	Solid []bool
}

// MaskFromField returns the mask of the Solid nodes of f.
func MaskFromField(f *piv.Field) NodeMask {
	m := NodeMask{Grid: f.Grid, Solid: make([]bool, f.Grid.N())}
	for k, st := range f.Status {
		m.Solid[k] = st.Kind() == piv.Solid
	}
	return m
}

// Contains implements piv.Shape.
func (m NodeMask) Contains(x, y float64) bool {
	fi, fj := m.Grid.Frac(x, y)
	i, j := int(math.Round(fi)), int(math.Round(fj))
	if !m.Grid.In(i, j) || math.Abs(fi-float64(i)) > 0.5+1e-9 || math.Abs(fj-float64(j)) > 0.5+1e-9 {
		return false
	}
	return m.Solid[m.Grid.Index(i, j)]
}

// maskedFrames applies a solid shape to every frame read through it (on a copy).
type maskedFrames struct {
	Frames
	solid piv.Shape
}

func (m maskedFrames) Frame(k int) (*piv.Field, error) {
	f, err := m.Frames.Frame(k)
	if err != nil {
		return nil, err
	}
	c := f.Clone()
	c.MaskSolid(m.solid)
	return c, nil
}

// Reconstruct computes the pressure of frame k of fr: material acceleration, pressure gradient
// from the momentum balance, integration with the chosen solver and boundary model, and the
// exit forces when an exit is given. It reads only the frames the acceleration method needs
// around k, so it runs as a stage of the frame pipeline.
func Reconstruct(fr Frames, k int, opt FrameOptions) (*FrameResult, error) {
	if err := opt.Fluid.Validate(); err != nil {
		return nil, err
	}
	if opt.Solid != nil {
		if n, ok := opt.Solid.(Nozzle); ok {
			f, err := fr.Frame(k)
			if err != nil {
				return nil, err
			}
			if err := n.Check(f.Grid); err != nil {
				return nil, fmt.Errorf("%s: %w", f.Name(), err)
			}
		}
		fr = maskedFrames{fr, opt.Solid}
	}
	f, ax, ay, err := Acceleration(fr, k, opt.Accel)
	if err != nil {
		return nil, err
	}
	if opt.Exit != nil {
		if err := opt.Exit.Check(f.Grid); err != nil {
			return nil, fmt.Errorf("%s: %w", f.Name(), err)
		}
	}
	gx, gy := Gradient(f, ax, ay, opt.Fluid, opt.Accel.Scheme)
	so := opt.Solve
	out := &FrameResult{Field: f, AX: ax, AY: ay, GX: gx, GY: gy}
	if opt.Reference == Source {
		if opt.Exit == nil {
			return nil, errors.New("the source reference model needs the nozzle exit (plane, radius)")
		}
		if !f.Geometry.Axisymmetric {
			return nil, errors.New("the source reference model needs axisymmetric geometry (--axisymmetric)")
		}
		if so.Dirichlet == 0 {
			return nil, errors.New("the source reference model needs reference edges (for instance right,top)")
		}
		qdot, err := exitFluxRate(fr, k, f, *opt.Exit, opt.Accel)
		if err != nil {
			return nil, err
		}
		out.QDot = qdot
		so.Boundary = SourceBoundary(f, *opt.Exit, qdot, opt.Fluid.Rho, so.PInf)
	}
	res, err := Integrate(f.Grid, f.Geometry, gx, gy, so)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", f.Name(), err)
	}
	out.Result = res
	if opt.Exit != nil {
		ef, err := ExitProfile(f, res.P, gx, *opt.Exit, opt.Fluid.Rho, so.PInf)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", f.Name(), err)
		}
		out.Exit = ef
	}
	return out, nil
}

// SourceBoundary returns the far-field pressure of the Source reference model at the nodes of
// f: p∞ + ρ Q̇/(4π d) − ρ|u|²/2, with d the distance from the centre of the exit (e.X on the
// axis) in the meridional plane, Q̇ the rate of change of the source strength [m^3/s^2] and u
// the measured velocity at the node.
func SourceBoundary(f *piv.Field, e Exit, qdot, rho, pInf float64) func(i, j int) float64 {
	g := f.Grid
	return func(i, j int) float64 {
		q := g.Index(i, j)
		d := math.Hypot(g.X(i)-e.X, g.Y(j)-e.Axis)
		u, v := f.U[q], f.V[q]
		return pInf + rho*qdot/(4*math.Pi*d) - rho*(u*u+v*v)/2
	}
}

// exitFluxRate returns dQ/dt at frame k from the exit fluxes of the frames of the time stencil
// (the rest state has Q = 0). For the steady method it is zero.
func exitFluxRate(fr Frames, k int, f *piv.Field, e Exit, opt AccelOptions) (float64, error) {
	if opt.Method == Steady || fr.Len() < 2 && !opt.Rest {
		return 0, nil
	}
	idx, w, err := timeStencil(fr, k, opt)
	if err != nil {
		return 0, err
	}
	sum := 0.0
	for a, m := range idx {
		if m < 0 {
			continue
		}
		fm := f
		if m != k {
			if fm, err = frameAt(fr, m, f); err != nil {
				return 0, err
			}
		}
		q, err := ExitFlux(fm, e)
		if err != nil {
			return 0, err
		}
		sum += w[a] * q
	}
	return sum, nil
}
