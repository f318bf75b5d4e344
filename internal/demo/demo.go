// Package demo holds the example run built into wakekit: run 07 of the invented 25 mm
// pulsed-jet thruster "TT-25" firing one pulse into the quiescent water of test tank B, seen in
// the meridional plane by a time-resolved velocimetry set-up. The frames are velocity only
// (u, v) with measurement noise, stored as gzip CSV files with a frame index, readable by the
// normal wakekit readers.
package demo

import (
	"embed"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
)

//go:embed data/*.csv data/*.csv.gz
var data embed.FS

// The scenario of the demo run, in SI units.
const (
	// Name names the thruster and run.
	Name = "TT-25 thruster, tank B, run 07"
	// Diameter is the nozzle inner diameter [m].
	Diameter = 0.025
	// LipThickness is the nozzle wall thickness [m]; the outer lip radius is Diameter/2 + LipThickness.
	LipThickness = 0.00125
	// ExitX is the x coordinate of the nozzle exit plane [m].
	ExitX = 0.0
	// AxisY is the y coordinate of the jet axis [m].
	AxisY = 0.0
	// Rho is the water density [kg/m^3].
	Rho = 1000.0
	// Nu is the kinematic viscosity of the water [m^2/s].
	Nu = 1.0e-6
	// Noise is the standard deviation of the measurement noise in each velocity component [m/s].
	Noise = 4e-4
	// Index is the frame index file among the extracted files.
	Index = "frames.csv"
)

// Description is a short account of the run for help texts and reports.
const Description = "Run 07 of the TT-25 pulsed-jet thruster (25 mm nozzle, 1.25 mm square-cut lip) " +
	"firing one smooth trapezoidal pulse of 40 mm/s for 2.78 s (stroke ratio about 4, Reynolds " +
	"number about 1000) into the still water of test tank B. Time-resolved velocimetry in the " +
	"meridional plane, 96 x 40 vectors at 1.5625 mm spacing covering 6 D downstream and 2.5 D " +
	"from the axis, one frame every 0.05 s for 6.75 s."

// Extract writes the demo frames and their index into dir (created if needed) and returns the
// path of the index file, which wakekit reads as a series.
func Extract(dir string) (string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return "", err
	}
	err := fs.WalkDir(data, "data", func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := data.ReadFile(path)
		if err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(dir, filepath.Base(path)), b, 0o644)
	})
	if err != nil {
		return "", fmt.Errorf("writing the demo frames: %w", err)
	}
	return filepath.Join(dir, Index), nil
}

// Frames returns the number of frames in the demo run.
func Frames() int {
	entries, _ := fs.Glob(data, "data/*.csv.gz")
	return len(entries)
}
