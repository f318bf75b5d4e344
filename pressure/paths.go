package pressure

import (
	"github.com/wakekit/wakekit/piv"
)

// integratePaths integrates the gradient (gx, gy) directly along marching paths, without solving
// any Poisson equation: from each of the four grid corners a breadth-first march over the valid
// nodes, once preferring x steps and once y steps, builds a spanning tree of paths; along every
// link the pressure difference is the trapezoidal integral h (G_a + G_b)/2 of the gradient. The
// eight fields, each with its mean removed per connected region, are averaged, so every node is
// reached along eight different paths from four directions (an omnidirectional average in the
// spirit of Liu & Katz 2006, Exp. Fluids 41:227). The level is set afterwards by the caller.
func integratePaths(g piv.Grid, gx, gy []float64, active []bool) []float64 {
	n := g.N()
	label, nc := connected(g, active)
	sum := make([]float64, n)
	p := make([]float64, n)
	seen := make([]bool, n)
	queue := make([]int, 0, n)
	mean := make([]float64, nc)
	count := make([]float64, nc)
	corners := [4][2]int{{0, 0}, {g.NX - 1, 0}, {0, g.NY - 1}, {g.NX - 1, g.NY - 1}}
	const families = 8
	for fam := 0; fam < families; fam++ {
		corner := corners[fam/2]
		xFirst := fam%2 == 0
		for k := range seen {
			seen[k] = false
		}
		// Roots: for every region, its node nearest to the corner (in grid steps).
		roots := make([]int, nc)
		best := make([]int, nc)
		for c := range roots {
			roots[c], best[c] = -1, 1<<62
		}
		for k, l := range label {
			if l < 0 {
				continue
			}
			i, j := k%g.NX, k/g.NX
			d := abs(i-corner[0]) + abs(j-corner[1])
			if d < best[l] {
				best[l], roots[l] = d, k
			}
		}
		queue = queue[:0]
		for _, r := range roots {
			if r >= 0 {
				seen[r] = true
				p[r] = 0
				queue = append(queue, r)
			}
		}
		var steps [4][3]int // di, dj, axis
		if xFirst {
			steps = [4][3]int{{1, 0, 0}, {-1, 0, 0}, {0, 1, 1}, {0, -1, 1}}
		} else {
			steps = [4][3]int{{0, 1, 1}, {0, -1, 1}, {1, 0, 0}, {-1, 0, 0}}
		}
		for h := 0; h < len(queue); h++ {
			k := queue[h]
			i, j := k%g.NX, k/g.NX
			for _, st := range steps {
				a, b := i+st[0], j+st[1]
				if !g.In(a, b) {
					continue
				}
				q := b*g.NX + a
				if !active[q] || seen[q] {
					continue
				}
				seen[q] = true
				if st[2] == 0 {
					p[q] = p[k] + float64(st[0])*g.DX*0.5*(gx[k]+gx[q])
				} else {
					p[q] = p[k] + float64(st[1])*g.DY*0.5*(gy[k]+gy[q])
				}
				queue = append(queue, q)
			}
		}
		for c := range mean {
			mean[c], count[c] = 0, 0
		}
		for k, l := range label {
			if l >= 0 {
				mean[l] += p[k]
				count[l]++
			}
		}
		for k, l := range label {
			if l >= 0 {
				sum[k] += p[k] - mean[l]/count[l]
			}
		}
	}
	for k := range sum {
		sum[k] /= families
	}
	return sum
}

func abs(a int) int {
	if a < 0 {
		return -a
	}
	return a
}
