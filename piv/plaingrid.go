package piv

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
)

// ReadPlainGrid reads one frame from two plain matrix files, one per velocity component: rows
// of numbers separated by spaces, tabs, commas or semicolons, one matrix row per grid row (y),
// one column per grid column (x). The grid comes from opt: origin (X0, Y0) and spacing (DX, DY;
// DY = 0 means DY = DX) in opt.LengthUnit, values in opt.VelocityUnit. The first row is the
// bottom (smallest y) unless opt.RowsTopDown; opt.ImageYDown means the rows run top-down and v
// points down, so v is negated. '#' lines are comments; empty or NaN cells are missing vectors.
func ReadPlainGrid(uPath, vPath string, opt ReadOptions) (*Field, error) {
	f, _, err := ReadPlainGridInfo(uPath, vPath, opt)
	return f, err
}

// ReadPlainGridInfo is ReadPlainGrid that also says how the files were read.
func ReadPlainGridInfo(uPath, vPath string, opt ReadOptions) (*Field, *FileInfo, error) {
	ls, err := LengthScale("", opt)
	if err != nil {
		return nil, nil, Errorf(uPath, 0, 0, "plain grid: %v", err)
	}
	vs, err := VelocityScale("", opt)
	if err != nil {
		return nil, nil, Errorf(uPath, 0, 0, "plain grid: %v", err)
	}
	dx, dy := opt.DX, opt.DY
	if dy == 0 {
		dy = dx
	}
	if !(dx > 0) || !(dy > 0) || math.IsInf(dx, 0) || math.IsInf(dy, 0) {
		return nil, nil, Errorf(uPath, 0, 0, "plain grid: the spacing (%g, %g) must be finite and positive (--grid-spacing)", opt.DX, opt.DY)
	}
	if !isFinite(opt.X0) || !isFinite(opt.Y0) {
		return nil, nil, Errorf(uPath, 0, 0, "plain grid: the origin (%g, %g) must be finite (--grid-origin)", opt.X0, opt.Y0)
	}
	maxNodes := opt.MaxNodes
	if maxNodes <= 0 {
		maxNodes = DefaultMaxNodes
	}
	u, nx, ny, info, err := readMatrix(uPath, opt, maxNodes)
	if err != nil {
		return nil, nil, err
	}
	v, vnx, vny, _, err := readMatrix(vPath, opt, maxNodes)
	if err != nil {
		return nil, nil, err
	}
	if vnx != nx || vny != ny {
		return nil, nil, Errorf(vPath, 0, 0, "matrix is %d columns by %d rows but the u matrix %s is %d by %d", vnx, vny, uPath, nx, ny)
	}
	g := Grid{NX: nx, NY: ny, X0: opt.X0 * ls, Y0: opt.Y0 * ls, DX: dx * ls, DY: dy * ls}
	if err := g.Validate(maxNodes); err != nil {
		return nil, nil, Errorf(uPath, 0, 0, "plain grid: %v", err)
	}
	if opt.RowsTopDown || opt.ImageYDown {
		flipRows(u, nx, ny)
		flipRows(v, nx, ny)
	}
	f := &Field{Grid: g, U: u, V: v, Status: make([]Status, g.N()), Geometry: opt.Geometry, Source: uPath}
	for k := range u {
		u[k] *= vs
		v[k] *= vs
		if opt.ImageYDown {
			v[k] = -v[k]
		}
	}
	f.Normalize()
	info.Path = uPath + " " + vPath
	info.Format = "plain grid"
	info.LengthUnit, info.VelocityUnit = unitOr(opt.LengthUnit, "m"), unitOr(opt.VelocityUnit, "m/s")
	return f, info, nil
}

func unitOr(u, def string) string {
	if strings.TrimSpace(u) == "" {
		return def
	}
	return u
}

func flipRows(a []float64, nx, ny int) {
	for j := 0; j < ny/2; j++ {
		r1, r2 := a[j*nx:(j+1)*nx], a[(ny-1-j)*nx:(ny-j)*nx]
		for i := range r1 {
			r1[i], r2[i] = r2[i], r1[i]
		}
	}
}

// readMatrix reads a plain matrix file into a flat row-major slice (first file row first).
func readMatrix(path string, opt ReadOptions, maxNodes int) (vals []float64, nx, ny int, info *FileInfo, err error) {
	r, size, gz, c, err := openInput(path, opt)
	if err != nil {
		return nil, 0, 0, nil, err
	}
	defer c.Close()
	vals, nx, ny, info, err = parseMatrix(r, path, size, maxNodes)
	if err != nil {
		return nil, 0, 0, nil, err
	}
	info.Gzip = gz
	return vals, nx, ny, info, nil
}

func parseMatrix(r io.Reader, path string, size int64, maxNodes int) (vals []float64, nx, ny int, info *FileInfo, err error) {
	cr := &csvReader{name: path, br: bufio.NewReaderSize(r, 1<<16)}
	if head, _ := cr.br.Peek(512); strings.IndexByte(string(head), 0) >= 0 {
		return nil, 0, 0, nil, cr.errf(0, 0, "holds binary data, not a matrix of numbers")
	}
	for {
		b, err := cr.nextLine()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, 0, 0, nil, err
		}
		if isComment(b) {
			continue
		}
		if ny == 0 {
			cr.delim = detectDelim(b)
		}
		if cr.delim == ' ' {
			b = trimSpace(b)
		}
		pos, k := 0, 0
		for {
			cell, next, more := cr.cell(b, pos)
			k++
			if len(vals) >= maxNodes {
				return nil, 0, 0, nil, cr.errf(cr.line, k, "matrix has more than %d values, the limit of grid nodes (--max-nodes)", maxNodes)
			}
			f, ok := parseFast(cell)
			if !ok {
				switch {
				case len(cell) == 0 || isNaNText(cell):
					f = math.NaN()
				default:
					if f, ok = cr.parseCell(cell); !ok {
						return nil, 0, 0, nil, cr.errf(cr.line, k, "cannot read %q as a number", clip(cell))
					}
					if math.IsInf(f, 0) || math.IsNaN(f) {
						return nil, 0, 0, nil, cr.errf(cr.line, k, "value %q is not finite; write NaN or leave the cell empty for a missing vector", clip(cell))
					}
				}
			}
			if vals == nil && size > 0 {
				vals = make([]float64, 0, min(int(size/2)+1, maxNodes, 1<<20))
			}
			vals = append(vals, f)
			if !more {
				break
			}
			pos = next
		}
		if ny == 0 {
			nx = k
		} else if k != nx {
			return nil, 0, 0, nil, cr.errf(cr.line, min(k, nx), "row has %d values but the first row has %d", k, nx)
		}
		ny++
	}
	if ny == 0 {
		return nil, 0, 0, nil, cr.errf(0, 0, "empty file: no matrix rows")
	}
	if nx < 2 || ny < 2 {
		return nil, 0, 0, nil, cr.errf(0, 0, "matrix of %d columns by %d rows; a grid needs at least 2 by 2", nx, ny)
	}
	return vals, nx, ny, &FileInfo{Delimiter: delimName(cr.delim), Rows: ny, Bytes: cr.bytesRead}, nil
}

// OpenPlainSeries opens a series of plain-grid frames from two arguments, the u source and the
// v source, each a file or a glob; the two must give the same number of files, paired in
// natural order. Times are k*opt.DT + opt.T0.
func OpenPlainSeries(args []string, opt ReadOptions) (*Series, error) {
	opt.PlainGrid = true
	return OpenSeries(args, opt)
}

func openPlainSeries(args []string, opt ReadOptions) ([]string, []float64, *gridCheckLoader, error) {
	if len(args) != 2 {
		return nil, nil, nil, fmt.Errorf("plain grids need two inputs, the u matrix file(s) and the v matrix file(s); got %d", len(args))
	}
	var lists [2][]string
	for c, a := range args {
		if st, err := os.Stat(a); err == nil && !st.IsDir() {
			lists[c] = []string{a}
			continue
		} else if err == nil {
			return nil, nil, nil, Errorf(a, 0, 0, "is a folder; give the matrix files as a glob such as %q", a+"/u_*.txt")
		}
		fs, _, err := expandArg(a)
		if err != nil {
			return nil, nil, nil, err
		}
		lists[c] = fs
	}
	if len(lists[0]) != len(lists[1]) {
		return nil, nil, nil, fmt.Errorf("%d u files (%s) but %d v files (%s); they must pair up", len(lists[0]), args[0], len(lists[1]), args[1])
	}
	times, err := seriesTimes(len(lists[0]), opt)
	if err != nil {
		return nil, nil, nil, err
	}
	uf, vf := lists[0], lists[1]
	l := &gridCheckLoader{
		read: func(k int) (*Field, *FileInfo, error) { return ReadPlainGridInfo(uf[k], vf[k], opt) },
		name: func(k int) string { return uf[k] }}
	return uf, times, l, nil
}
