package piv

import (
	"fmt"
	"strings"
)

// Unit conversions applied once, when a file is read: every value inside wakekit is SI.

// LengthScale returns the factor that converts a length in unit to metres. Known units are m,
// mm, cm, um (also µm and micron) and px; px needs opt.PixelSize [m/px]. An empty unit means
// opt.LengthUnit, and an empty opt.LengthUnit means metres.
func LengthScale(unit string, opt ReadOptions) (float64, error) {
	u := normUnit(unit)
	if u == "" {
		u = normUnit(opt.LengthUnit)
	}
	switch u {
	case "", "m", "meter", "meters", "metre", "metres":
		return 1, nil
	case "mm":
		return 1e-3, nil
	case "cm":
		return 1e-2, nil
	case "um", "µm", "μm", "micron", "microns":
		return 1e-6, nil
	case "px", "pix", "pixel", "pixels":
		if !(opt.PixelSize > 0) || !isFinite(opt.PixelSize) {
			return 0, fmt.Errorf("lengths in px need a pixel size (--pixel-size, m/px)")
		}
		return opt.PixelSize, nil
	}
	return 0, fmt.Errorf("unknown length unit %q (expected m, mm, cm, um or px)", unit)
}

// VelocityScale returns the factor that converts a velocity in unit to m/s. Known units are
// m/s, mm/s, cm/s, um/s and px/frame (pixels per pulse pair); px/frame needs opt.PixelSize
// [m/px] and opt.PulseSeparation [s]. An empty unit means opt.VelocityUnit, and an empty
// opt.VelocityUnit means m/s.
func VelocityScale(unit string, opt ReadOptions) (float64, error) {
	u := normUnit(unit)
	if u == "" {
		u = normUnit(opt.VelocityUnit)
	}
	switch u {
	case "", "m/s", "ms-1", "ms^-1":
		return 1, nil
	case "mm/s", "mms-1":
		return 1e-3, nil
	case "cm/s", "cms-1":
		return 1e-2, nil
	case "um/s", "µm/s", "μm/s":
		return 1e-6, nil
	case "px/frame", "px", "pix/frame", "pixel/frame", "pixels/frame", "px/pair", "px/dt":
		if !(opt.PixelSize > 0) || !isFinite(opt.PixelSize) {
			return 0, fmt.Errorf("velocities in px/frame need a pixel size (--pixel-size, m/px) and a pulse separation (--pulse-separation, s)")
		}
		if !(opt.PulseSeparation > 0) || !isFinite(opt.PulseSeparation) {
			return 0, fmt.Errorf("velocities in px/frame need a pulse separation (--pulse-separation, s)")
		}
		return opt.PixelSize / opt.PulseSeparation, nil
	}
	return 0, fmt.Errorf("unknown velocity unit %q (expected m/s, mm/s, cm/s or px/frame)", unit)
}

// TimeScale returns the factor that converts a time in unit to seconds: s, ms, us (µs) or ns.
// An empty unit means seconds.
func TimeScale(unit string) (float64, error) {
	switch normUnit(unit) {
	case "", "s", "sec", "second", "seconds":
		return 1, nil
	case "ms":
		return 1e-3, nil
	case "us", "µs", "μs":
		return 1e-6, nil
	case "ns":
		return 1e-9, nil
	}
	return 0, fmt.Errorf("unknown time unit %q (expected s, ms, us or ns)", unit)
}

func normUnit(u string) string {
	u = strings.ToLower(strings.TrimSpace(u))
	return strings.ReplaceAll(u, " ", "")
}

// SplitHeader splits a column header into its name and unit: "x [mm]" and "x (mm)" give
// ("x", "mm"); "x_mm" and "u_m/s" give the unit after the last underscore when it is a known
// length, velocity or time unit; a header without a unit gives ("name", "").
func SplitHeader(cell string) (name, unit string) {
	c := strings.TrimSpace(cell)
	c = strings.Trim(c, `"'`)
	c = strings.TrimSpace(c)
	for _, br := range [][2]byte{{'[', ']'}, {'(', ')'}, {'{', '}'}} {
		if n := len(c); n > 0 && c[n-1] == br[1] {
			if a := strings.LastIndexByte(c, br[0]); a >= 0 {
				return strings.TrimSpace(c[:a]), strings.TrimSpace(c[a+1 : n-1])
			}
		}
	}
	if a := strings.LastIndexByte(c, '_'); a > 0 && knownUnit(c[a+1:]) {
		return c[:a], c[a+1:]
	}
	return c, ""
}

// knownUnit reports whether u names a length, velocity or time unit (without needing pixel
// scaling to be set).
func knownUnit(u string) bool {
	probe := ReadOptions{PixelSize: 1, PulseSeparation: 1}
	if normUnit(u) == "" {
		return false
	}
	if _, err := LengthScale(u, probe); err == nil {
		return true
	}
	if _, err := VelocityScale(u, probe); err == nil {
		return true
	}
	_, err := TimeScale(u)
	return err == nil
}
