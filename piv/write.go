package piv

import (
	"encoding/binary"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// Column is an extra scalar written beside the velocities, one value per node (NaN where it is
// undefined).
type Column struct {
	Name   string    // e.g. "omega"; letters, digits and _ - . only
	Unit   string    // e.g. "1/s"; empty for a dimensionless quantity
	Values []float64 // one per node, in grid order
}

func checkColumns(f *Field, extra []Column) error {
	if err := f.Check(); err != nil {
		return err
	}
	for _, c := range extra {
		if c.Name == "" || strings.ContainsAny(c.Name, " ,;\t\n\r\"[]()") {
			return fmt.Errorf("column name %q must be a non-empty word without spaces, delimiters or brackets", c.Name)
		}
		if strings.ContainsAny(c.Unit, ",;\t\n\r\"[]") {
			return fmt.Errorf("column %q: unit %q must not hold delimiters or brackets", c.Name, c.Unit)
		}
		if len(c.Values) != f.Grid.N() {
			return fmt.Errorf("column %q has %d values for %d nodes", c.Name, len(c.Values), f.Grid.N())
		}
	}
	return nil
}

// WriteCSV writes f atomically (WriteFileAtomic) as a comma-separated table, one row per node
// in grid order, with SI units in the header:
//
//	x [m],y [m],u [m/s],v [m/s],status[,NAME [UNIT]...]
//
// Numbers are written in the shortest form that reads back to the same float64 (strconv 'g',
// -1), so a round trip keeps every bit; missing values are written as NaN and the status as
// Status.String ("measured", "replaced:median", ...).
func WriteCSV(path string, f *Field, extra ...Column) error {
	if err := checkColumns(f, extra); err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	return WriteFileAtomic(path, func(w io.Writer) error { return EncodeCSV(w, f, extra...) })
}

// EncodeCSV writes the table of WriteCSV to w.
func EncodeCSV(w io.Writer, f *Field, extra ...Column) error {
	if err := checkColumns(f, extra); err != nil {
		return err
	}
	hdr := []byte("x [m],y [m],u [m/s],v [m/s],status")
	for _, c := range extra {
		hdr = append(hdr, ',')
		hdr = append(hdr, c.Name...)
		if c.Unit != "" {
			hdr = append(hdr, " ["...)
			hdr = append(hdr, c.Unit...)
			hdr = append(hdr, ']')
		}
	}
	hdr = append(hdr, '\n')
	if _, err := w.Write(hdr); err != nil {
		return err
	}
	g := f.Grid
	buf := make([]byte, 0, 1<<16)
	var names [256]string
	for k := range f.Status {
		i, j := g.IJ(k)
		buf = appendNum(buf, g.X(i))
		buf = append(buf, ',')
		buf = appendNum(buf, g.Y(j))
		buf = append(buf, ',')
		buf = appendNum(buf, f.U[k])
		buf = append(buf, ',')
		buf = appendNum(buf, f.V[k])
		buf = append(buf, ',')
		s := f.Status[k]
		if names[s] == "" {
			names[s] = s.String()
		}
		buf = append(buf, names[s]...)
		for _, c := range extra {
			buf = append(buf, ',')
			buf = appendNum(buf, c.Values[k])
		}
		buf = append(buf, '\n')
		if len(buf) > 1<<16-512 {
			if _, err := w.Write(buf); err != nil {
				return err
			}
			buf = buf[:0]
		}
	}
	_, err := w.Write(buf)
	return err
}

func appendNum(b []byte, v float64) []byte {
	if math.IsNaN(v) {
		return append(b, "NaN"...)
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}

// WriteVTK writes f atomically as a legacy VTK file (VTK File Formats, Kitware, "Simple Legacy
// Formats"): DATASET STRUCTURED_POINTS in BINARY (big-endian) encoding, with the velocity as
// VECTORS velocity double (w = 0), the status kind as SCALARS status unsigned_char (0 measured,
// 1 replaced, 2 missing, 3 solid), and each extra column as SCALARS NAME double. The z spacing
// is DX so that viewers show a flat slab. Missing values are NaN.
func WriteVTK(path string, f *Field, extra ...Column) error {
	if err := checkColumns(f, extra); err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	return WriteFileAtomic(path, func(w io.Writer) error { return EncodeVTK(w, f, extra...) })
}

// EncodeVTK writes the file of WriteVTK to w.
func EncodeVTK(w io.Writer, f *Field, extra ...Column) error {
	if err := checkColumns(f, extra); err != nil {
		return err
	}
	g := f.Grid
	n := g.N()
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	head := fmt.Sprintf("# vtk DataFile Version 3.0\nwakekit velocity field, t = %s s, %s\nBINARY\nDATASET STRUCTURED_POINTS\n"+
		"DIMENSIONS %d %d 1\nORIGIN %s %s 0\nSPACING %s %s %s\nPOINT_DATA %d\nVECTORS velocity double\n",
		num(f.Time), f.Geometry, g.NX, g.NY, num(g.X0), num(g.Y0), num(g.DX), num(g.DY), num(g.DX), n)
	if _, err := io.WriteString(w, head); err != nil {
		return err
	}
	buf := make([]byte, 0, 1<<16)
	flush := func(force bool) error {
		if force || len(buf) > 1<<16-64 {
			_, err := w.Write(buf)
			buf = buf[:0]
			return err
		}
		return nil
	}
	for k := 0; k < n; k++ {
		buf = binary.BigEndian.AppendUint64(buf, math.Float64bits(f.U[k]))
		buf = binary.BigEndian.AppendUint64(buf, math.Float64bits(f.V[k]))
		buf = binary.BigEndian.AppendUint64(buf, 0)
		if err := flush(false); err != nil {
			return err
		}
	}
	buf = append(buf, "\nSCALARS status unsigned_char 1\nLOOKUP_TABLE default\n"...)
	for _, s := range f.Status {
		buf = append(buf, byte(s.Kind()))
		if err := flush(false); err != nil {
			return err
		}
	}
	for _, c := range extra {
		buf = append(buf, "\nSCALARS "+c.Name+" double 1\nLOOKUP_TABLE default\n"...)
		for _, v := range c.Values {
			buf = binary.BigEndian.AppendUint64(buf, math.Float64bits(v))
			if err := flush(false); err != nil {
				return err
			}
		}
	}
	buf = append(buf, '\n')
	return flush(true)
}

// WriteJSON writes v atomically as indented JSON followed by a newline. Use JSONFloat for
// numbers that may be NaN or infinite (undefined results); they are written as null.
func WriteJSON(path string, v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return fmt.Errorf("%s: %v", path, err)
	}
	b = append(b, '\n')
	return WriteFileAtomic(path, func(w io.Writer) error { _, err := w.Write(b); return err })
}

// JSONFloat is a float64 that marshals NaN and infinities as JSON null, and finite values in
// the shortest form that reads back to the same float64.
type JSONFloat float64

// MarshalJSON implements json.Marshaler.
func (f JSONFloat) MarshalJSON() ([]byte, error) {
	v := float64(f)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return []byte("null"), nil
	}
	return strconv.AppendFloat(nil, v, 'g', -1, 64), nil
}

// UnmarshalJSON implements json.Unmarshaler; null reads as NaN.
func (f *JSONFloat) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*f = JSONFloat(math.NaN())
		return nil
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return err
	}
	*f = JSONFloat(v)
	return nil
}
