package vorticity

// sweepRows visits the nodes of an nx×ny grid row by row for stencils of half-width h, the
// skeleton every derivative pass shares: nodes within h of an edge go one by one to
// edge(k, i, j) (k = j·nx + i), and the interior span [lo, hi) of each row goes to
// interior(lo, hi, row, j) as a whole, so that the pass can run its fast stencil over it
// without edge tests. A row's nodes are handed out in order. Either function returning false
// stops the sweep, and sweepRows then returns false.
func sweepRows(nx, ny, h int, edge func(k, i, j int) bool, interior func(lo, hi, row, j int) bool) bool {
	for j := 0; j < ny; j++ {
		row := j * nx
		if j < h || j >= ny-h || nx <= 2*h {
			for i := 0; i < nx; i++ {
				if !edge(row+i, i, j) {
					return false
				}
			}
			continue
		}
		for i := 0; i < h; i++ {
			if !edge(row+i, i, j) {
				return false
			}
		}
		if !interior(row+h, row+nx-h, row, j) {
			return false
		}
		for i := nx - h; i < nx; i++ {
			if !edge(row+i, i, j) {
				return false
			}
		}
	}
	return true
}
