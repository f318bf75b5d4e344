package piv

import (
	"bufio"
	"bytes"
	"io"
	"os"
	"strconv"
	"strings"
)

// Limits of a polygon file, checked before memory is allocated for it.
const (
	// MaxPolygonFileBytes is the largest polygon file read (16 MiB).
	MaxPolygonFileBytes = 16 << 20
	// MaxPolygonVertices is the largest number of vertices in one polygon file.
	MaxPolygonVertices = 1_000_000
)

// ReadPolygons reads the polygons of a text file: solid masks (nozzle walls, models) or the
// contours of circulation regions. The layout follows the CSV input conventions: one vertex
// per row as x, y (comma, semicolon, tab or spaces between them), "#" comments, an optional
// header naming the columns x and y with units in brackets ("x [mm]"), and an optional third
// column named polygon, shape or id that tells polygons apart. Without that column, a blank
// line ends one polygon and starts the next. Lengths without a unit are in opt.LengthUnit
// (metres when empty; px needs opt.PixelSize). Each polygon needs at least 3 vertices and a
// non-zero area. Errors name the file, line and column.
func ReadPolygons(path string, opt ReadOptions) ([]Polygon, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	MarkInput(path)
	st, err := f.Stat()
	if err != nil {
		return nil, err
	}
	if st.Size() > MaxPolygonFileBytes {
		return nil, Errorf(path, 0, 0, "polygon file of %d bytes is larger than the limit of %d bytes", st.Size(), MaxPolygonFileBytes)
	}
	return ParsePolygons(io.LimitReader(f, MaxPolygonFileBytes+1), path, opt)
}

// ParsePolygons reads polygons from r as ReadPolygons does; name is used in error messages.
func ParsePolygons(r io.Reader, name string, opt ReadOptions) ([]Polygon, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), 1<<20)
	var (
		polys      []Polygon
		cur        Polygon
		curID      string
		curLine    int
		line       int
		haveHeader bool
		xCol, yCol = 0, 1
		idCol      = -1
		xScale     = 1.0
		yScale     = 1.0
		vertices   int
		sawData    bool
	)
	flush := func() error {
		if len(cur.X) == 0 {
			return nil
		}
		if err := cur.Validate(); err != nil {
			return Errorf(name, curLine, 0, "polygon starting here: %v", err)
		}
		polys = append(polys, cur)
		cur = Polygon{}
		return nil
	}
	for sc.Scan() {
		line++
		text := sc.Bytes()
		if c := bytes.IndexByte(text, '#'); c >= 0 {
			text = text[:c]
		}
		trimmed := strings.TrimSpace(string(text))
		if trimmed == "" {
			if idCol < 0 && len(cur.X) > 0 {
				if err := flush(); err != nil {
					return nil, err
				}
			}
			continue
		}
		cells := splitCells(trimmed)
		if !haveHeader && !sawData && !allNumeric(cells) {
			// The first row with a cell that is not a number is the header: find the columns
			// by name.
			haveHeader = true
			xCol, yCol = -1, -1
			for c, cell := range cells {
				n, unit := SplitHeader(cell)
				switch strings.ToLower(n) {
				case "x":
					xCol = c
					s, err := LengthScale(unit, opt)
					if err != nil {
						return nil, Errorf(name, line, c+1, "column %q: %v", cell, err)
					}
					xScale = s
				case "y", "r":
					yCol = c
					s, err := LengthScale(unit, opt)
					if err != nil {
						return nil, Errorf(name, line, c+1, "column %q: %v", cell, err)
					}
					yScale = s
				case "polygon", "shape", "id":
					idCol = c
				}
			}
			if xCol < 0 || yCol < 0 {
				return nil, Errorf(name, line, 0, "header %q names no x and y columns", trimmed)
			}
			continue
		}
		if !haveHeader && !sawData {
			s, err := LengthScale("", opt)
			if err != nil {
				return nil, Errorf(name, line, 0, "%v", err)
			}
			xScale, yScale = s, s
		}
		sawData = true
		need := max(xCol, yCol, idCol) + 1
		if len(cells) < need {
			return nil, Errorf(name, line, len(cells)+1, "expected %d values on the line, found %d", need, len(cells))
		}
		x, err := strconv.ParseFloat(cells[xCol], 64)
		if err != nil || !isFinite(x) {
			return nil, Errorf(name, line, xCol+1, "x: cannot read %q as a finite number", cells[xCol])
		}
		y, err := strconv.ParseFloat(cells[yCol], 64)
		if err != nil || !isFinite(y) {
			return nil, Errorf(name, line, yCol+1, "y: cannot read %q as a finite number", cells[yCol])
		}
		if idCol >= 0 && cells[idCol] != curID {
			if err := flush(); err != nil {
				return nil, err
			}
			curID = cells[idCol]
		}
		if vertices++; vertices > MaxPolygonVertices {
			return nil, Errorf(name, line, 0, "more than the limit of %d vertices", MaxPolygonVertices)
		}
		if len(cur.X) == 0 {
			curLine = line
		}
		cur.X = append(cur.X, x*xScale)
		cur.Y = append(cur.Y, y*yScale)
	}
	if err := sc.Err(); err != nil {
		return nil, Errorf(name, line+1, 0, "%v", err)
	}
	if err := flush(); err != nil {
		return nil, err
	}
	if len(polys) == 0 {
		return nil, Errorf(name, 0, 0, "no polygon vertices found (expected rows of x, y)")
	}
	return polys, nil
}

// splitCells splits a line at commas, semicolons, tabs or runs of spaces.
func splitCells(s string) []string {
	f := strings.FieldsFunc(s, func(r rune) bool { return r == ',' || r == ';' || r == '\t' })
	if len(f) <= 1 {
		f = strings.Fields(s)
	}
	for k := range f {
		f[k] = strings.TrimSpace(f[k])
	}
	if len(f) == 0 {
		return []string{""}
	}
	return f
}

func allNumeric(cells []string) bool {
	for _, c := range cells {
		if _, err := strconv.ParseFloat(c, 64); err != nil {
			return false
		}
	}
	return true
}
