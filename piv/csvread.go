package piv

import (
	"bufio"
	"bytes"
	"errors"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/stat"
)

// FileInfo describes how an input file was read: format, layout and the units found, for
// "wakekit inspect" and for analysis summaries.
type FileInfo struct {
	Path   string
	Format string // "csv" or "plain grid"
	Gzip   bool
	// Delimiter is "comma", "semicolon", "tab" or "spaces".
	Delimiter string
	Header    bool
	// Columns are the header names of the columns used, in the order x, y, u, v[, status].
	Columns []string
	// LengthUnit and VelocityUnit are the units the values were read in ("m", "m/s" when the
	// file and the options name none).
	LengthUnit, VelocityUnit string
	Rows                     int   // data rows (or matrix rows) read
	Bytes                    int64 // bytes read after decompression
}

// Slots of the columns a velocity table needs.
const (
	slotX = iota
	slotY
	slotU
	slotV
	slotStatus
	nSlots
)

var slotNames = [nSlots]string{"x", "y", "u", "v", "status"}

// headerSlot maps a lower-case column name to the slot it fills.
var headerSlot = map[string]int{
	"x": slotX, "xpos": slotX, "x_pos": slotX, "x position": slotX, "position x": slotX,
	"y": slotY, "r": slotY, "ypos": slotY, "y_pos": slotY, "y position": slotY, "position y": slotY,
	"u": slotU, "vx": slotU, "ux": slotU, "u_x": slotU, "v_x": slotU, "velx": slotU, "vel_x": slotU,
	"v": slotV, "vy": slotV, "uy": slotV, "u_y": slotV, "v_y": slotV, "vr": slotV, "ur": slotV, "vely": slotV, "vel_y": slotV,
	"status": slotStatus,
}

// latticeTol is the largest distance of a coordinate from its grid line, as a fraction of the
// spacing. 5% accepts coordinates printed with few decimals (0.01 mm rounding on a 0.3 mm grid
// is 1.7%) while still refusing a grid whose steps differ by more than that.
const latticeTol = 0.05

// maxLine is the longest line a table may have.
const maxLine = 1 << 20

// ReadCSV reads one frame from a CSV table. name is used in messages; sizeHint (the file size,
// or 0 when unknown) lets the reader reserve its columns once. The accepted layouts: delimiter detected from the first line (comma, semicolon, tab or runs of
// spaces), optional header with units in brackets or parentheses, columns found by name or by
// opt.Columns, '#' comment lines, empty or NaN cells for missing vectors, rows in any order.
// Errors are *InputError values naming the file, line and column (the 1-based cell number).
func ReadCSV(r io.Reader, name string, sizeHint int64, opt ReadOptions) (*Field, *FileInfo, error) {
	return readCSV(r, name, sizeHint, 0, opt)
}

// readCSV is ReadCSV with a sampled mean line length [bytes] (0 when unknown) that makes the
// row-count estimate robust to files whose first lines are shorter than the rest.
func readCSV(r io.Reader, name string, sizeHint int64, lineLen float64, opt ReadOptions) (*Field, *FileInfo, error) {
	return newCSVReader(r, name, sizeHint, lineLen, opt).run()
}

func newCSVReader(r io.Reader, name string, sizeHint int64, lineLen float64, opt ReadOptions) *csvReader {
	cr := &csvReader{name: name, opt: opt, br: bufio.NewReaderSize(r, 1<<18), sizeHint: sizeHint, lineLen: lineLen}
	cr.maxNodes = opt.MaxNodes
	if cr.maxNodes <= 0 {
		cr.maxNodes = DefaultMaxNodes
	}
	return cr
}

func (cr *csvReader) run() (*Field, *FileInfo, error) {
	if err := cr.read(); err != nil {
		return nil, nil, err
	}
	f, err := cr.field()
	if err != nil {
		return nil, nil, err
	}
	return f, cr.info(), nil
}

type lineBreak struct{ row, line int }

type csvReader struct {
	name     string
	opt      ReadOptions
	br       *bufio.Reader
	sizeHint int64
	lineLen  float64 // sampled mean line length, 0 when unknown
	generic  bool    // never take the fused number path (tests compare both paths)
	maxNodes int

	line      int   // current line number
	bytesRead int64 // bytes of the lines consumed
	long      []byte

	delim     byte // ',', ';', '\t', or ' ' for runs of spaces
	header    bool
	ncell     int
	slotOf    []int8 // slot of each cell, -1 when unused
	cellOf    [nSlots]int
	colName   [nSlots]string
	unitOf    [nSlots]string
	lenScale  float64
	velScale  float64
	hasStatus bool

	// lines maps rows to file lines: row r is on line lines[b].line + r - lines[b].row for the
	// last break b with lines[b].row <= r.
	lines []lineBreak

	x, y, u, v []float64
	st         []Status
	stText     []byte // last status text seen, and its value, to skip re-parsing
	stVal      Status
	rows       int
}

func (c *csvReader) errf(line, col int, format string, args ...any) error {
	return Errorf(c.name, line, col, format, args...)
}

// nextLine returns the next line without its end-of-line bytes, or io.EOF.
func (c *csvReader) nextLine() ([]byte, error) {
	b, err := c.br.ReadSlice('\n')
	if errors.Is(err, bufio.ErrBufferFull) {
		c.long = append(c.long[:0], b...)
		for errors.Is(err, bufio.ErrBufferFull) {
			if len(c.long) > maxLine {
				return nil, c.errf(c.line+1, 0, "line is longer than %d bytes; this is not a velocity table", maxLine)
			}
			b, err = c.br.ReadSlice('\n')
			c.long = append(c.long, b...)
		}
		b = c.long
	}
	if err != nil && !errors.Is(err, io.EOF) {
		var ie *InputError
		if errors.As(err, &ie) {
			return nil, err
		}
		return nil, c.errf(c.line+1, 0, "cannot read the data: %v", err)
	}
	if len(b) == 0 && err != nil {
		return nil, io.EOF
	}
	c.line++
	c.bytesRead += int64(len(b))
	if n := len(b); n > 0 && b[n-1] == '\n' {
		b = b[:n-1]
	}
	if n := len(b); n > 0 && b[n-1] == '\r' {
		b = b[:n-1]
	}
	return b, nil
}

func isBlank(b []byte) bool {
	for _, c := range b {
		if c != ' ' && c != '\t' {
			return false
		}
	}
	return true
}

func trimSpace(b []byte) []byte {
	for len(b) > 0 && (b[0] == ' ' || b[0] == '\t') {
		b = b[1:]
	}
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t') {
		b = b[:len(b)-1]
	}
	return b
}

// isComment reports whether a line is blank or a '#' comment.
func isComment(b []byte) bool {
	b = trimSpace(b)
	return len(b) == 0 || b[0] == '#'
}

// cell returns the cell starting at pos, the position after its delimiter, and whether more
// cells follow.
func (c *csvReader) cell(line []byte, pos int) (cell []byte, next int, more bool) {
	if c.delim == ' ' {
		for pos < len(line) && (line[pos] == ' ' || line[pos] == '\t') {
			pos++
		}
		end := pos
		for end < len(line) && line[end] != ' ' && line[end] != '\t' {
			end++
		}
		next = end
		for next < len(line) && (line[next] == ' ' || line[next] == '\t') {
			next++
		}
		return line[pos:end], next, next < len(line)
	}
	rest := line[pos:]
	k := bytes.IndexByte(rest, c.delim)
	if k < 0 {
		return trimCell(rest), len(line), false
	}
	return trimCell(rest[:k]), pos + k + 1, true
}

func trimCell(b []byte) []byte {
	b = trimSpace(b)
	if len(b) >= 2 && b[0] == '"' && b[len(b)-1] == '"' {
		b = trimSpace(b[1 : len(b)-1])
	}
	return b
}

// splitAll splits a line into all its cells (for the header and the first line).
func (c *csvReader) splitAll(line []byte) []string {
	var cells []string
	if c.delim == ' ' {
		line = trimSpace(line)
	}
	pos := 0
	for {
		cell, next, more := c.cell(line, pos)
		cells = append(cells, string(cell))
		if !more {
			break
		}
		pos = next
	}
	if c.delim == ' ' {
		// "x [mm]" split at the space: join unit groups to the name before them.
		var joined []string
		for _, s := range cells {
			if len(joined) > 0 && s != "" && (s[0] == '[' || s[0] == '(' || s[0] == '{') {
				joined[len(joined)-1] += " " + s
				continue
			}
			joined = append(joined, s)
		}
		cells = joined
	}
	return cells
}

func detectDelim(line []byte) byte {
	switch {
	case bytes.IndexByte(line, '\t') >= 0 && bytes.IndexByte(trimSpace(line), '\t') >= 0:
		return '\t'
	case bytes.IndexByte(line, ';') >= 0:
		return ';'
	case bytes.IndexByte(line, ',') >= 0:
		return ','
	}
	return ' '
}

func delimName(d byte) string {
	switch d {
	case ',':
		return "comma"
	case ';':
		return "semicolon"
	case '\t':
		return "tab"
	}
	return "spaces"
}

func (c *csvReader) read() error {
	head, _ := c.br.Peek(512)
	if bytes.HasPrefix(head, []byte{0xff, 0xfe}) || bytes.HasPrefix(head, []byte{0xfe, 0xff}) {
		return c.errf(0, 0, "is UTF-16 text; save the table as UTF-8 (or plain ASCII) CSV")
	}
	if bytes.IndexByte(head, 0) >= 0 {
		return c.errf(0, 0, "holds binary data, not a text table of velocities")
	}
	var first []byte
	for {
		b, err := c.nextLine()
		if err == io.EOF {
			return c.errf(0, 0, "empty file: no header and no data rows")
		}
		if err != nil {
			return err
		}
		if c.line == 1 {
			b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf"))
		}
		if !isComment(b) {
			first = b
			break
		}
	}
	c.delim = detectDelim(first)
	cells := c.splitAll(first)
	c.header = false
	for _, s := range cells {
		if s == "" || isNaNText([]byte(s)) {
			continue
		}
		if _, ok := c.parseCell([]byte(s)); !ok {
			c.header = true
			break
		}
	}
	if err := c.layout(cells); err != nil {
		return err
	}
	if !c.header {
		c.lines = append(c.lines, lineBreak{0, c.line})
		if err := c.row(first); err != nil {
			return err
		}
	}
	for {
		b, err := c.nextLine()
		if err == io.EOF {
			break
		}
		if err != nil {
			return err
		}
		if isComment(b) {
			continue
		}
		if c.rows == 0 || c.lines[len(c.lines)-1].line+c.rows-c.lines[len(c.lines)-1].row != c.line {
			c.lines = append(c.lines, lineBreak{c.rows, c.line})
		}
		if err := c.row(b); err != nil {
			return err
		}
	}
	if c.rows == 0 {
		return c.errf(0, 0, "has a header but no data rows")
	}
	return nil
}

// layout finds the cells of x, y, u, v and status and the units.
func (c *csvReader) layout(cells []string) error {
	c.ncell = len(cells)
	for s := range c.cellOf {
		c.cellOf[s] = -1
	}
	names := make([]string, len(cells))
	units := make([]string, len(cells))
	for k, s := range cells {
		names[k], units[k] = SplitHeader(s)
	}
	hline := 0
	if c.header {
		hline = c.line
	}
	if c.opt.Columns != "" {
		items := strings.Split(c.opt.Columns, ",")
		if len(items) < 4 || len(items) > 5 {
			return c.errf(0, 0, "--columns %q must name 4 or 5 columns: x,y,u,v[,status]", c.opt.Columns)
		}
		for s, it := range items {
			it = strings.TrimSpace(it)
			if n, err := strconv.Atoi(it); err == nil {
				if n < 1 || n > len(cells) {
					return c.errf(hline, 0, "--columns: column %d does not exist; the first line has %d columns", n, len(cells))
				}
				c.cellOf[s] = n - 1
				continue
			}
			if !c.header {
				return c.errf(0, 0, "--columns names column %q but the file has no header; give column numbers", it)
			}
			found := -1
			for k := range cells {
				if strings.EqualFold(strings.TrimSpace(cells[k]), it) || strings.EqualFold(names[k], it) {
					found = k
					break
				}
			}
			if found < 0 {
				return c.errf(hline, 0, "--columns: no column named %q (the header has %s)", it, quoteList(cells))
			}
			c.cellOf[s] = found
		}
	} else if c.header {
		// Exact names first ("u", "vx"), then the last word of longer names ("velocity u").
		for k, n := range names {
			s, ok := headerSlot[strings.ToLower(n)]
			if ok && c.cellOf[s] < 0 {
				c.cellOf[s] = k
			}
		}
		for k, n := range names {
			w := strings.Fields(strings.ToLower(n))
			if len(w) < 2 {
				continue
			}
			s, ok := headerSlot[w[len(w)-1]]
			if ok && c.cellOf[s] < 0 && !slices.Contains(c.cellOf[:], k) {
				c.cellOf[s] = k
			}
		}
		for s := slotX; s <= slotV; s++ {
			if c.cellOf[s] < 0 {
				return c.errf(hline, 0, "no column for %s in the header (found %s); name the columns x, y, u, v or use --columns", slotNames[s], quoteList(cells))
			}
		}
	} else {
		if len(cells) < 4 {
			return c.errf(c.line, 0, "has %d columns and no header; expected at least x, y, u, v", len(cells))
		}
		for s := slotX; s <= slotV; s++ {
			c.cellOf[s] = s
		}
	}
	c.slotOf = make([]int8, len(cells))
	for k := range c.slotOf {
		c.slotOf[k] = -1
	}
	for s, k := range c.cellOf {
		if k >= 0 {
			if c.slotOf[k] >= 0 {
				return c.errf(hline, k+1, "column %d is given for both %s and %s", k+1, slotNames[c.slotOf[k]], slotNames[s])
			}
			c.slotOf[k] = int8(s)
			if c.header {
				c.colName[s] = strings.TrimSpace(cells[k])
				c.unitOf[s] = units[k]
			} else {
				c.colName[s] = slotNames[s]
			}
		}
	}
	c.hasStatus = c.cellOf[slotStatus] >= 0
	var err error
	if c.lenScale, err = LengthScale(c.unitOf[slotX], c.opt); err != nil {
		return c.errf(hline, c.cellOf[slotX]+1, "column %q: %v", c.colName[slotX], err)
	}
	ys, err := LengthScale(c.unitOf[slotY], c.opt)
	if err != nil {
		return c.errf(hline, c.cellOf[slotY]+1, "column %q: %v", c.colName[slotY], err)
	}
	if ys != c.lenScale {
		return c.errf(hline, c.cellOf[slotY]+1, "column %q is in %s but %q is in %s; x and y must share a unit",
			c.colName[slotY], c.lengthUnit(slotY), c.colName[slotX], c.lengthUnit(slotX))
	}
	if c.velScale, err = VelocityScale(c.unitOf[slotU], c.opt); err != nil {
		return c.errf(hline, c.cellOf[slotU]+1, "column %q: %v", c.colName[slotU], err)
	}
	vs, err := VelocityScale(c.unitOf[slotV], c.opt)
	if err != nil {
		return c.errf(hline, c.cellOf[slotV]+1, "column %q: %v", c.colName[slotV], err)
	}
	if vs != c.velScale {
		return c.errf(hline, c.cellOf[slotV]+1, "column %q is in %s but %q is in %s; u and v must share a unit",
			c.colName[slotV], c.velocityUnit(slotV), c.colName[slotU], c.velocityUnit(slotU))
	}
	return nil
}

func (c *csvReader) lengthUnit(s int) string {
	switch {
	case c.unitOf[s] != "":
		return c.unitOf[s]
	case c.opt.LengthUnit != "":
		return c.opt.LengthUnit
	}
	return "m"
}

func (c *csvReader) velocityUnit(s int) string {
	switch {
	case c.unitOf[s] != "":
		return c.unitOf[s]
	case c.opt.VelocityUnit != "":
		return c.opt.VelocityUnit
	}
	return "m/s"
}

func quoteList(cells []string) string {
	q := make([]string, len(cells))
	for k, s := range cells {
		q[k] = strconv.Quote(s)
	}
	return strings.Join(q, ", ")
}

// estimateRows is the number of rows after which the row count of the file is estimated from
// its size.
const estimateRows = 1024

// reserve makes room for the columns, estimating the row count from the file size once a few
// rows have been read.
func (c *csvReader) reserve() error {
	if c.rows >= c.maxNodes {
		return c.errf(c.line, 0, "has more than %d data rows, the limit of grid nodes (--max-nodes)", c.maxNodes)
	}
	want := 2*cap(c.x) + 64
	if c.rows >= estimateRows && c.sizeHint > c.bytesRead {
		// Rows still to come from the bytes still to come at the mean line length so far, with
		// a margin for lines that grow longer (coordinates gaining digits); a second estimate,
		// needed only when the first proved short, takes a wider margin.
		margin := 1.08
		if c.rows > estimateRows {
			margin = 1.25
		}
		per := float64(c.bytesRead) / float64(c.line)
		if c.lineLen > 0 {
			per = c.lineLen
		}
		// A data line holds at least one byte and a delimiter per cell, which bounds the
		// reservation to a few times the file size whatever the samples say.
		per = math.Max(per, float64(2*c.ncell))
		est := c.rows + int(margin*float64(c.sizeHint-c.bytesRead)/per) + 64
		if est > c.rows {
			want = est
		}
	}
	if want > c.maxNodes {
		want = c.maxNodes
	}
	grow := func(s []float64) []float64 { return slices.Grow(s, want-len(s)) }
	c.x, c.y, c.u, c.v = grow(c.x), grow(c.y), grow(c.u), grow(c.v)
	if c.hasStatus {
		c.st = slices.Grow(c.st, want-len(c.st))
	}
	return nil
}

// row parses one data line.
func (c *csvReader) row(line []byte) error {
	if c.rows == cap(c.x) || (c.rows == estimateRows && c.sizeHint > 0) {
		if err := c.reserve(); err != nil {
			return err
		}
	}
	if c.delim == ' ' {
		line = trimSpace(line)
	}
	var val [4]float64
	st := Measured
	pos, k := 0, 0
	delim := c.delim
	for {
		// Fused fast path: a plain number that ends right at the delimiter (or the line end)
		// is parsed in the same scan that finds the cell's end.
		if delim != ' ' && !c.generic && k < len(c.slotOf) {
			if s := c.slotOf[k]; s >= 0 && s != slotStatus {
				if f, used, ok := parsePrefix(line[pos:]); ok {
					end := pos + used
					if end == len(line) || line[end] == delim {
						if s == slotX || s == slotY {
							f *= c.lenScale
						} else {
							f *= c.velScale
						}
						val[s] = f
						k++
						if end == len(line) {
							break
						}
						pos = end + 1
						continue
					}
				}
			}
		}
		cell, next, more := c.cell(line, pos)
		if k < len(c.slotOf) {
			if s := c.slotOf[k]; s >= 0 {
				if s == slotStatus {
					var err error
					if st, err = c.status(cell); err != nil {
						return c.errf(c.line, k+1, "column %q: %v", c.colName[s], err)
					}
				} else {
					f, err := c.number(cell, int(s), k)
					if err != nil {
						return err
					}
					val[s] = f
				}
			}
		} else if len(cell) > 0 {
			return c.errf(c.line, k+1, "row has more than the %d columns of the first line", c.ncell)
		}
		k++
		if !more {
			break
		}
		pos = next
	}
	if k < c.ncell {
		return c.errf(c.line, k, "row has %d columns but the first line has %d", k, c.ncell)
	}
	c.x = append(c.x, val[slotX])
	c.y = append(c.y, val[slotY])
	c.u = append(c.u, val[slotU])
	c.v = append(c.v, val[slotV])
	if c.hasStatus {
		c.st = append(c.st, st)
	}
	c.rows++
	return nil
}

// number parses the cell of slot s in cell number k.
func (c *csvReader) number(cell []byte, s, k int) (float64, error) {
	f, ok := parseFast(cell)
	if !ok {
		switch {
		case len(cell) == 0 || isNaNText(cell):
			if s == slotX || s == slotY {
				return 0, c.errf(c.line, k+1, "column %q: the coordinate is missing (%q)", c.colName[s], cell)
			}
			return math.NaN(), nil
		default:
			f, ok = c.parseCell(cell)
		}
		if !ok {
			return 0, c.errf(c.line, k+1, "column %q: cannot read %q as a number", c.colName[s], clip(cell))
		}
		if math.IsInf(f, 0) || math.IsNaN(f) {
			if s == slotX || s == slotY {
				return 0, c.errf(c.line, k+1, "column %q: coordinate %q is not a finite number", c.colName[s], clip(cell))
			}
			return 0, c.errf(c.line, k+1, "column %q: velocity %q is not finite; write NaN or leave the cell empty for a missing vector", c.colName[s], clip(cell))
		}
	}
	if s == slotX || s == slotY {
		return f * c.lenScale, nil
	}
	return f * c.velScale, nil
}

// parseCell parses a number cell; in semicolon-separated tables it also reads a decimal
// comma ("1,5"), common in spreadsheets of many locales.
func (c *csvReader) parseCell(cell []byte) (float64, bool) {
	if f, ok := parseNumber(cell); ok {
		return f, true
	}
	if c.delim == ';' && len(cell) <= 64 && bytes.Count(cell, []byte(",")) == 1 && bytes.IndexByte(cell, '.') < 0 {
		var buf [64]byte
		d := buf[:len(cell)]
		copy(d, cell)
		d[bytes.IndexByte(d, ',')] = '.'
		return parseNumber(d)
	}
	return 0, false
}

func clip(b []byte) string {
	if len(b) > 40 {
		return string(b[:40]) + "..."
	}
	return string(b)
}

func (c *csvReader) status(cell []byte) (Status, error) {
	if c.stText != nil && bytes.Equal(cell, c.stText) {
		return c.stVal, nil
	}
	s, err := ParseStatus(string(cell))
	if err != nil {
		return 0, err
	}
	c.stText = append(c.stText[:0], cell...)
	c.stVal = s
	return s, nil
}

// lineOf returns the file line of data row r.
func (c *csvReader) lineOf(r int) int {
	b := lastBreak(c.lines, r)
	return c.lines[b].line + r - c.lines[b].row
}

// lastBreak returns the last break at or before row r.
func lastBreak(lines []lineBreak, r int) int {
	lo, hi := 0, len(lines)-1
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if lines[mid].row <= r {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return lo
}

func (c *csvReader) info() *FileInfo {
	cols := []string{}
	for s := range nSlots {
		if c.cellOf[s] >= 0 {
			cols = append(cols, c.colName[s])
		}
	}
	return &FileInfo{
		Path: c.name, Format: "csv", Delimiter: delimName(c.delim), Header: c.header, Columns: cols,
		LengthUnit: c.lengthUnit(slotX), VelocityUnit: c.velocityUnit(slotU),
		Rows: c.rows, Bytes: c.bytesRead,
	}
}

// field infers the grid from the coordinates and places the rows on it.
func (c *csvReader) field() (*Field, error) {
	if c.opt.ImageYDown {
		lo, hi := minMax(c.y)
		for r := range c.y {
			c.y[r] = (lo + hi) - c.y[r]
			c.v[r] = -c.v[r]
		}
	}
	x0, dx, nx, err := c.axis(c.x, slotX)
	if err != nil {
		return nil, err
	}
	y0, dy, ny, err := c.axis(c.y, slotY)
	if err != nil {
		return nil, err
	}
	g := Grid{NX: nx, NY: ny, X0: x0, Y0: y0, DX: dx, DY: dy}
	if err := g.Validate(c.maxNodes); err != nil {
		return nil, c.errf(0, 0, "%v (the coordinates span x %g..%g m, y %g..%g m)", err, x0, g.XMax(), y0, g.YMax())
	}
	n := g.N()
	const unseen Status = 0xff
	status := make([]Status, n)
	for k := range status {
		status[k] = unseen
	}
	ix, iy := 1/dx, 1/dy
	inOrder := c.rows == n
	// After the grid is known the x column is reused to hold each row's node index (exact in
	// float64), so that placing the rows needs no further coordinates.
	for r := 0; r < c.rows; r++ {
		i := int(math.Round((c.x[r] - x0) * ix))
		j := int(math.Round((c.y[r] - y0) * iy))
		k := j*nx + i
		if status[k] != unseen {
			return nil, c.duplicate(r, k, g)
		}
		s := Measured
		if c.hasStatus {
			s = c.st[r]
		}
		status[k] = s
		c.x[r] = float64(k)
		inOrder = inOrder && k == r
	}
	f := &Field{Grid: g, Status: status, Geometry: c.opt.Geometry, Source: c.name}
	switch {
	case inOrder:
		f.U, f.V = c.u, c.v
	case c.rows == n:
		// Every node once, in another order (y fastest, shuffled): permute the columns in
		// place, cycle by cycle, so that no second pair of arrays is needed.
		idx, u, v := c.x, c.u, c.v
		for r := 0; r < n; r++ {
			for int(idx[r]) != r {
				k := int(idx[r])
				u[r], u[k] = u[k], u[r]
				v[r], v[k] = v[k], v[r]
				idx[r], idx[k] = idx[k], idx[r]
			}
		}
		f.U, f.V = u, v
	default:
		c.y, c.st = nil, nil // let the collector take them before U and V are allocated
		f.U, f.V = NaNs(n), NaNs(n)
		for r := 0; r < c.rows; r++ {
			k := int(c.x[r])
			f.U[k], f.V[k] = c.u[r], c.v[r]
		}
		for k := range status {
			if status[k] == unseen {
				status[k] = Missing
			}
		}
	}
	c.x, c.u, c.v = nil, nil, nil
	f.Normalize()
	return f, nil
}

// duplicate reports that row r falls on node k, already taken by an earlier row.
func (c *csvReader) duplicate(r, k int, g Grid) error {
	first := 0
	for q := 0; q < r; q++ {
		if c.x[q] == float64(k) {
			first = q
			break
		}
	}
	i, j := g.IJ(k)
	return c.errf(c.lineOf(r), c.cellOf[slotX]+1, "duplicate point: x = %g m, y = %g m is also on line %d",
		g.X(i), g.Y(j), c.lineOf(first))
}

// axis infers a uniform lattice from one coordinate column: origin, spacing and node count.
// The spacing comes from the smallest step between distinct coordinates; every coordinate must
// lie within latticeTol of a lattice line.
func (c *csvReader) axis(vals []float64, s int) (x0, h float64, n int, err error) {
	name := slotNames[s]
	lo, hi := minMax(vals)
	if !(hi > lo) {
		return 0, 0, 0, c.errf(0, 0, "all %d points have %s = %g m; a grid needs at least two distinct values of %s",
			len(vals), name, lo, name)
	}
	span := hi - lo
	// Fast path: the smallest step between consecutive rows is the spacing in every common row
	// order (x fastest, y fastest, or shuffled with at least one neighbouring pair).
	step := math.Inf(1)
	for r := 1; r < len(vals); r++ {
		if d := math.Abs(vals[r] - vals[r-1]); d > 0 && d < step {
			step = d
		}
	}
	if step < 1e-9*math.Max(math.Abs(lo), math.Abs(hi)) {
		return 0, 0, 0, c.errf(0, 0, "the %s coordinates (%g..%g m) differ by as little as %g m, too fine a step to resolve at their magnitude; is this a velocity table?",
			name, lo, hi, step)
	}
	if cells := span / step; cells <= float64(c.maxNodes) {
		m := int(math.Round(cells))
		h = span / float64(m)
		if c.onLattice(vals, lo, h) < 0 {
			x0, h = fitLattice(vals, lo, h)
			return x0, h, m + 1, nil
		}
	}
	return c.axisSlow(vals, s, lo, hi)
}

// onLattice returns the first row whose coordinate is off the lattice lo + i*h, or -1.
func (c *csvReader) onLattice(vals []float64, lo, h float64) int {
	inv := 1 / h
	for r, v := range vals {
		f := (v - lo) * inv
		if math.Abs(f-math.Round(f)) > latticeTol {
			return r
		}
	}
	return -1
}

// axisSlow infers the lattice from the sorted distinct coordinates, counting the steps between
// neighbours so that coordinates printed with few decimals still give the right node count, and
// names the coordinates and lines that break the lattice.
func (c *csvReader) axisSlow(vals []float64, s int, lo, hi float64) (x0, h float64, n int, err error) {
	name := slotNames[s]
	d := slices.Clone(vals)
	slices.Sort(d)
	d = slices.Compact(d)
	minGap, at := math.Inf(1), 0
	for k := 1; k < len(d); k++ {
		if g := d[k] - d[k-1]; g < minGap {
			minGap, at = g, k
		}
	}
	line := func(v float64) int {
		for r, w := range vals {
			if w == v {
				return c.lineOf(r)
			}
		}
		return 0
	}
	idx := 0
	ids := make([]float64, len(d))
	for k := 1; k < len(d); k++ {
		q := (d[k] - d[k-1]) / minGap
		if math.Abs(q-math.Round(q)) > 0.2 {
			return 0, 0, 0, c.errf(line(d[k]), c.cellOf[s]+1,
				"%s spacing is not uniform: the step from %s = %g m (line %d) to %g m is %g m, not a whole multiple of the smallest step %g m (from %g m on line %d to %g m on line %d)",
				name, name, d[k-1], line(d[k-1]), d[k], d[k]-d[k-1], minGap, d[at-1], line(d[at-1]), d[at], line(d[at]))
		}
		idx += int(math.Round(q))
		ids[k] = float64(idx)
		if idx > c.maxNodes {
			return 0, 0, 0, c.errf(0, 0, "the %s coordinates (%g..%g m with steps of %g m) imply more than %d grid lines, the limit of grid nodes",
				name, lo, hi, minGap, c.maxNodes)
		}
	}
	h = (hi - lo) / float64(idx)
	if c.onLattice(vals, lo, h) >= 0 {
		// Blame the coordinate farthest from the least-squares lattice through all of them
		// (gonum's linear regression), not merely the first one outside the tolerance.
		a, hh := stat.LinearRegression(ids, d, nil, false)
		worst, dev := 0, -1.0
		for k := range d {
			if e := math.Abs(d[k] - (a + hh*ids[k])); e > dev {
				worst, dev = k, e
			}
		}
		return 0, 0, 0, c.errf(line(d[worst]), c.cellOf[s]+1,
			"point off the grid: %s = %g m lies %.2f spacings from the nearest line of the best-fitting grid (spacing %.6g m from %.6g m)",
			name, d[worst], dev/hh, hh, a)
	}
	x0, h = fitLattice(vals, lo, h)
	return x0, h, idx + 1, nil
}

// fitLattice refines the spacing of a lattice lo + i*h that every coordinate is known to lie
// near, by a least-squares fit of x - lo = i*h over all rows (origin kept at the smallest
// coordinate, as the file prints it), so that coordinates printed with few digits give the
// spacing far better than the extreme coordinates alone. Coordinates already on the lattice
// to round-off keep it exactly.
func fitLattice(vals []float64, lo, h float64) (x0, hFit float64) {
	inv := 1 / h
	var sii, six, worst float64
	for _, v := range vals {
		d := v - lo
		i := math.Round(d * inv)
		sii += i * i
		six += i * d
		worst = math.Max(worst, math.Abs(d-i*h))
	}
	if worst <= 1e-9*h || !(sii > 0) {
		return lo, h
	}
	hFit = six / sii
	if !(math.Abs(hFit-h) < latticeTol*h) {
		return lo, h
	}
	return lo, hFit
}

func minMax(v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		if x < lo {
			lo = x
		}
		if x > hi {
			hi = x
		}
	}
	return lo, hi
}
