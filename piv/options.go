package piv

// ReadOptions says how to read input files: units, pixel scaling, column names, grid layout for
// plain matrices, geometry, frame timing and limits. The zero value reads SI data with columns
// found by name.
type ReadOptions struct {
	// LengthUnit and VelocityUnit apply where the file's header names no unit
	// ("m", "mm", "cm", "px"; "m/s", "mm/s", "cm/s", "px/frame"). Empty means SI.
	LengthUnit, VelocityUnit string
	// PixelSize [m/px] converts lengths in px; with PulseSeparation [s] it converts px/frame.
	PixelSize, PulseSeparation float64
	// Columns names the columns to use as "x,y,u,v[,status]" (by header name or 1-based number);
	// empty finds them by name.
	Columns string
	// PlainGrid says the inputs are plain matrix files, one per velocity component (u, then v),
	// placed on the grid given by X0, Y0, DX, DY.
	PlainGrid bool
	// Plain-grid matrix files: origin and spacing (in LengthUnit; DY = 0 means DY = DX) and
	// whether the first row is the top (largest y).
	X0, Y0, DX, DY float64
	RowsTopDown    bool
	// ImageYDown says the file's y axis points down (image coordinates); y is flipped on reading
	// (y becomes ymin + ymax - y) and v changes sign.
	ImageYDown bool
	// Geometry is attached to every frame read.
	Geometry Geometry
	// DT [s] gives frame times k*DT (+T0) when the series has no times of its own.
	DT, T0 float64
	// MaxNodes limits the grid size before memory is allocated (0 means DefaultMaxNodes).
	MaxNodes int
	// MaxFileBytes limits the size of one input file (0 means no limit beyond MaxNodes).
	MaxFileBytes int64
}
