package piv

// ReadOptions says how to read input files: units, pixel scaling, column names, grid layout for
// plain matrices, geometry, frame timing and limits. The zero value reads SI data with columns
// found by name.
type ReadOptions struct {
	// LengthUnit and VelocityUnit apply where the file's header names no unit
	// ("m", "mm", "cm", "px"; "m/s", "mm/s", "cm/s", "px/frame"). Empty means SI.
	LengthUnit   string `json:"length_unit"`
	VelocityUnit string `json:"velocity_unit"`
	// PixelSize [m/px] converts lengths in px; with PulseSeparation [s] it converts px/frame.
	PixelSize       float64 `json:"pixel_size_m"`
	PulseSeparation float64 `json:"pulse_separation_s"`
	// Columns names the columns to use as "x,y,u,v[,status]" (by header name or 1-based number);
	// empty finds them by name.
	Columns string `json:"columns"`
	// PlainGrid says the inputs are plain matrix files, one per velocity component (u, then v),
	// placed on the grid given by X0, Y0, DX, DY.
	PlainGrid bool `json:"plain_grid"`
	// Plain-grid matrix files: origin and spacing (in LengthUnit; DY = 0 means DY = DX) and
	// whether the first row is the top (largest y).
	X0          float64 `json:"plain_x0"`
	Y0          float64 `json:"plain_y0"`
	DX          float64 `json:"plain_dx"`
	DY          float64 `json:"plain_dy"`
	RowsTopDown bool    `json:"rows_top_down"`
	// ImageYDown says the file's y axis points down (image coordinates); y is flipped on reading
	// (y becomes ymin + ymax - y) and v changes sign.
	ImageYDown bool `json:"image_y_down"`
	// Geometry is attached to every frame read.
	Geometry Geometry `json:"geometry"`
	// DT [s] gives frame times k*DT (+T0) when the series has no times of its own.
	DT float64 `json:"dt_s"`
	T0 float64 `json:"t0_s"`
	// MaxNodes limits the grid size before memory is allocated (0 means DefaultMaxNodes).
	MaxNodes int `json:"max_nodes"`
	// MaxFileBytes limits the size of one input file (0 means no limit beyond MaxNodes).
	MaxFileBytes int64 `json:"max_file_bytes"`
}
