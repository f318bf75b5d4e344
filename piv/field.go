package piv

import (
	"fmt"
	"math"
	"strings"
)

// Status is the state of one node of a Field. The low two bits are the kind (Measured,
// Replaced, Missing or Solid); higher bits record which validation tests rejected the
// original vector, so a replaced or missing node can say why.
type Status uint8

// Status kinds.
const (
	// Measured is a vector as it came from the measurement.
	Measured Status = 0
	// Replaced is a vector filled in by wakekit after the original was rejected or absent.
	Replaced Status = 1
	// Missing is a node without a vector; its velocities are NaN.
	Missing Status = 2
	// Solid is a node inside a solid body (nozzle wall, model); its velocities are NaN and it is
	// never validated or filled.
	Solid Status = 3
)

// Rejection reasons, set above the kind bits by the validation tests.
const (
	// RejectedMedian marks a vector rejected by the normalized median test.
	RejectedMedian Status = 1 << 2
	// RejectedRange marks a vector rejected by the global range (velocity limit) filter.
	RejectedRange Status = 1 << 3
	// RejectedStd marks a vector rejected by the local standard-deviation filter.
	RejectedStd Status = 1 << 4
)

const kindMask Status = 3

// Kind returns the status kind without rejection bits.
func (s Status) Kind() Status { return s & kindMask }

// WithKind returns s with its kind replaced by k, keeping the rejection bits.
func (s Status) WithKind(k Status) Status { return s&^kindMask | k.Kind() }

// Valid reports whether the node carries a usable vector (measured or replaced).
func (s Status) Valid() bool { k := s.Kind(); return k == Measured || k == Replaced }

// String returns the status as written in output files: "measured", "replaced", "missing" or
// "solid", followed by rejection reasons after colons, e.g. "replaced:median".
func (s Status) String() string {
	var b strings.Builder
	switch s.Kind() {
	case Measured:
		b.WriteString("measured")
	case Replaced:
		b.WriteString("replaced")
	case Missing:
		b.WriteString("missing")
	default:
		b.WriteString("solid")
	}
	if s&RejectedMedian != 0 {
		b.WriteString(":median")
	}
	if s&RejectedRange != 0 {
		b.WriteString(":range")
	}
	if s&RejectedStd != 0 {
		b.WriteString(":std")
	}
	return b.String()
}

// ParseStatus reads a status as written by Status.String, or as the integer kind 0..3.
func ParseStatus(text string) (Status, error) {
	parts := strings.Split(strings.ToLower(strings.TrimSpace(text)), ":")
	var s Status
	switch parts[0] {
	case "measured", "0", "valid", "ok":
		s = Measured
	case "replaced", "1", "filled":
		s = Replaced
	case "missing", "2", "", "nan":
		s = Missing
	case "solid", "3", "masked":
		s = Solid
	default:
		return 0, fmt.Errorf("unknown status %q (expected measured, replaced, missing or solid)", text)
	}
	for _, p := range parts[1:] {
		switch p {
		case "median":
			s |= RejectedMedian
		case "range":
			s |= RejectedRange
		case "std":
			s |= RejectedStd
		default:
			return 0, fmt.Errorf("unknown rejection reason %q in status %q", p, text)
		}
	}
	return s, nil
}

// Geometry says how a field's plane is to be read: planar, or the meridional plane of an
// axisymmetric flow about the line y = AxisY, with x axial and r = y - AxisY radial.
type Geometry struct {
	Axisymmetric bool    `json:"axisymmetric"`
	AxisY        float64 `json:"axis_y_m"`
}

// R returns the radial coordinate of a point at height y (y itself for planar geometry,
// y - AxisY for axisymmetric geometry).
func (g Geometry) R(y float64) float64 {
	if g.Axisymmetric {
		return y - g.AxisY
	}
	return y
}

// String describes the geometry.
func (g Geometry) String() string {
	if g.Axisymmetric {
		return fmt.Sprintf("axisymmetric about y = %.6g m", g.AxisY)
	}
	return "planar"
}

// Field is one frame of planar velocity data on a Grid. U and V are the x and y (axial and
// radial) components in m/s; Status holds one entry per node. Nodes that are not valid carry
// NaN in U and V (Normalize enforces this).
type Field struct {
	Grid     Grid
	U, V     []float64
	Status   []Status
	Time     float64 // frame time [s]
	Geometry Geometry
	Source   string // file the frame was read from, for messages; empty for synthetic data
}

// NewField returns a field on g with all nodes Missing (NaN velocities).
func NewField(g Grid) *Field {
	n := g.N()
	f := &Field{Grid: g, U: NaNs(n), V: NaNs(n), Status: make([]Status, n)}
	for k := range f.Status {
		f.Status[k] = Missing
	}
	return f
}

// Set stores a measured vector at node k.
func (f *Field) Set(k int, u, v float64) {
	f.U[k], f.V[k], f.Status[k] = u, v, Measured
}

// Valid reports whether node k carries a usable vector.
func (f *Field) Valid(k int) bool {
	return f.Status[k].Valid() && !math.IsNaN(f.U[k]) && !math.IsNaN(f.V[k])
}

// ValidIJ reports whether node (i, j) exists and carries a usable vector.
func (f *Field) ValidIJ(i, j int) bool {
	return f.Grid.In(i, j) && f.Valid(f.Grid.Index(i, j))
}

// Normalize makes status and values agree: non-finite vectors at non-solid nodes become
// Missing, and nodes that are Missing or Solid get NaN velocities.
func (f *Field) Normalize() {
	nan := math.NaN()
	for k, s := range f.Status {
		if s.Valid() && (!isFinite(f.U[k]) || !isFinite(f.V[k])) {
			f.Status[k] = s.WithKind(Missing)
		}
		if !f.Status[k].Valid() {
			f.U[k], f.V[k] = nan, nan
		}
	}
}

// ValidShare returns the fraction of nodes that carry a usable vector.
func (f *Field) ValidShare() float64 {
	n := 0
	for k := range f.Status {
		if f.Valid(k) {
			n++
		}
	}
	return float64(n) / float64(len(f.Status))
}

// Clone returns a deep copy of f.
func (f *Field) Clone() *Field {
	c := *f
	c.U = append([]float64(nil), f.U...)
	c.V = append([]float64(nil), f.V...)
	c.Status = append([]Status(nil), f.Status...)
	return &c
}

// Check verifies that the slices match the grid, for fields built by hand.
func (f *Field) Check() error {
	n := f.Grid.N()
	if len(f.U) != n || len(f.V) != n || len(f.Status) != n {
		return fmt.Errorf("field slices (%d, %d, %d) do not match the %dx%d grid",
			len(f.U), len(f.V), len(f.Status), f.Grid.NX, f.Grid.NY)
	}
	return f.Grid.Validate(0)
}

// Name returns the field's source file, or "frame at t = T s" for synthetic data.
func (f *Field) Name() string {
	if f.Source != "" {
		return f.Source
	}
	return fmt.Sprintf("frame at t = %g s", f.Time)
}

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
