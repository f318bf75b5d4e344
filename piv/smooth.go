package piv

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Spatial smoothing of a velocity field, aware of masks. Both filters use only valid vectors
// (normalised convolution, Knutsson & Westin 1993: the weighted sum of the valid values divided
// by the sum of their weights), change only valid nodes, and leave missing and solid nodes as
// they are. No value leaks across a solid edge: a neighbour q contributes to node p only if the
// rectangle spanned by p and q holds no solid node.

// GaussianRadius returns the truncation half-width of the Gaussian kernel of standard
// deviation sigma nodes: ceil(3σ) nodes, which leaves out 0.27% of a continuous Gaussian's mass.
func GaussianRadius(sigma float64) int { return int(math.Ceil(3 * sigma)) }

// GaussianTransfer is the exact transfer function of the discrete, truncated, normalised
// Gaussian kernel used by SmoothGaussian along one grid axis, for a sine of wavenumber κ at
// grid spacing h (kh = κh, radians per node), away from edges and masks:
//
//	H(κh) = Σ_k w_k cos(k κh) / Σ_k w_k,  w_k = exp(−k²/(2σ²)), |k| ≤ GaussianRadius(σ).
//
// For σ ≥ 1 it is within 0.3% of the continuous Gaussian's exp(−σ²(κh)²/2) (the tests check
// this). A sine in x is multiplied by H(κ_x h_x); a general plane wave by H(κ_x h_x)·H(κ_y h_y).
func GaussianTransfer(sigma, kh float64) float64 {
	R := GaussianRadius(sigma)
	num, den := 0.0, 0.0
	for k := -R; k <= R; k++ {
		w := math.Exp(-float64(k*k) / (2 * sigma * sigma))
		num += w * math.Cos(float64(k)*kh)
		den += w
	}
	return num / den
}

// GaussianCutoff returns the effective spatial cut-off of SmoothGaussian: the wavelength, in
// nodes, that the filter halves in amplitude (H = 1/2). For the continuous Gaussian it is
// 2πσ/√(2 ln 2) ≈ 5.34σ nodes; this function solves the discrete transfer function.
func GaussianCutoff(sigma float64) float64 {
	return halfWavelength(func(kh float64) float64 { return GaussianTransfer(sigma, kh) })
}

// halfWavelength finds the wavelength in nodes at which a low-pass transfer function falls to
// 1/2, by bisection on κh in (0, π] (Nyquist). It returns 2 (the Nyquist wavelength) if the
// response never falls to 1/2.
func halfWavelength(H func(kh float64) float64) float64 {
	lo, hi := 1e-6, math.Pi
	if H(hi) > 0.5 {
		return 2
	}
	// The first crossing: scan coarsely, then bisect.
	for kh := lo; kh <= math.Pi; kh += math.Pi / 256 {
		if H(kh) <= 0.5 {
			hi = kh
			break
		}
		lo = kh
	}
	for it := 0; it < 60; it++ {
		m := 0.5 * (lo + hi)
		if H(m) > 0.5 {
			lo = m
		} else {
			hi = m
		}
	}
	return 2 * math.Pi / (0.5 * (lo + hi))
}

// SmoothGaussian smooths the valid vectors of f in place with a Gaussian of standard deviation
// sigma nodes (truncated at GaussianRadius), by normalised convolution. Its amplitude response
// is GaussianTransfer and its effective cut-off GaussianCutoff (≈ 5.34σ nodes). Nodes with no
// solid node in their window use the separable form, which gives the same result as the direct
// sum; nodes near solids use the direct sum with the visibility rule of the package notes.
func SmoothGaussian(f *Field, sigma float64) error {
	if !(sigma > 0) || sigma > 50 {
		return fmt.Errorf("Gaussian smoothing: sigma %g nodes must lie in (0, 50]", sigma)
	}
	if err := f.Check(); err != nil {
		return err
	}
	g := f.Grid
	R := GaussianRadius(sigma)
	w := make([]float64, 2*R+1)
	for k := -R; k <= R; k++ {
		w[k+R] = math.Exp(-float64(k*k) / (2 * sigma * sigma))
	}
	n := g.N()
	// c·u, c·v and c (certainty) summed along x, then along y.
	cu, cv, cc := make([]float64, n), make([]float64, n), make([]float64, n)
	for k := range cu {
		if f.Valid(k) {
			cu[k], cv[k], cc[k] = f.U[k], f.V[k], 1
		}
	}
	xu, xv, xc := make([]float64, n), make([]float64, n), make([]float64, n)
	for j := 0; j < g.NY; j++ {
		row := j * g.NX
		for i := 0; i < g.NX; i++ {
			var su, sv, sc float64
			for d := max(-R, -i); d <= min(R, g.NX-1-i); d++ {
				q := row + i + d
				wd := w[d+R]
				su += wd * cu[q]
				sv += wd * cv[q]
				sc += wd * cc[q]
			}
			xu[row+i], xv[row+i], xc[row+i] = su, sv, sc
		}
	}
	solid := newSolidCount(f)
	outU, outV := append([]float64(nil), f.U...), append([]float64(nil), f.V...)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := j*g.NX + i
			if !f.Valid(k) {
				continue
			}
			var su, sv, sc float64
			if solid.count(i-R, j-R, i+R, j+R) == 0 {
				for d := max(-R, -j); d <= min(R, g.NY-1-j); d++ {
					q := k + d*g.NX
					wd := w[d+R]
					su += wd * xu[q]
					sv += wd * xv[q]
					sc += wd * xc[q]
				}
			} else {
				for dj := max(-R, -j); dj <= min(R, g.NY-1-j); dj++ {
					for di := max(-R, -i); di <= min(R, g.NX-1-i); di++ {
						q := k + dj*g.NX + di
						if cc[q] == 0 || solid.count(i, j, i+di, j+dj) != 0 {
							continue
						}
						wd := w[di+R] * w[dj+R]
						su += wd * cu[q]
						sv += wd * cv[q]
						sc += wd
					}
				}
			}
			outU[k], outV[k] = su/sc, sv/sc
		}
	}
	copy(f.U, outU)
	copy(f.V, outV)
	return nil
}

// solidCount answers "how many solid nodes lie in this rectangle of nodes" in constant time
// from a summed-area table.
type solidCount struct {
	nx, ny int
	s      []int32 // (nx+1)×(ny+1) prefix sums
}

func newSolidCount(f *Field) solidCount {
	g := f.Grid
	sc := solidCount{nx: g.NX, ny: g.NY, s: make([]int32, (g.NX+1)*(g.NY+1))}
	w := g.NX + 1
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			v := int32(0)
			if f.Status[j*g.NX+i].Kind() == Solid {
				v = 1
			}
			sc.s[(j+1)*w+i+1] = v + sc.s[j*w+i+1] + sc.s[(j+1)*w+i] - sc.s[j*w+i]
		}
	}
	return sc
}

// count returns the number of solid nodes with i0..i1 × j0..j1 (corners in any order, clipped
// to the grid).
func (sc solidCount) count(i0, j0, i1, j1 int) int32 {
	if i0 > i1 {
		i0, i1 = i1, i0
	}
	if j0 > j1 {
		j0, j1 = j1, j0
	}
	i0, j0 = max(i0, 0), max(j0, 0)
	i1, j1 = min(i1, sc.nx-1), min(j1, sc.ny-1)
	if i0 > i1 || j0 > j1 {
		return 0
	}
	w := sc.nx + 1
	return sc.s[(j1+1)*w+i1+1] - sc.s[j0*w+i1+1] - sc.s[(j1+1)*w+i0] + sc.s[j0*w+i0]
}

// MaxSavitzkyGolayOrder and MaxSavitzkyGolayHalfWidth bound the 2-D Savitzky–Golay filter.
const (
	MaxSavitzkyGolayOrder     = 4
	MaxSavitzkyGolayHalfWidth = 7
)

// sgTerms lists the monomials x^a y^b of total degree ≤ order.
func sgTerms(order int) [][2]int {
	var t [][2]int
	for d := 0; d <= order; d++ {
		for b := 0; b <= d; b++ {
			t = append(t, [2]int{d - b, b})
		}
	}
	return t
}

func checkSG(half, order int) error {
	if half < 1 || half > MaxSavitzkyGolayHalfWidth {
		return fmt.Errorf("Savitzky–Golay window half-width %d: use 1 to %d (window 3 to %d nodes)", half, MaxSavitzkyGolayHalfWidth, 2*MaxSavitzkyGolayHalfWidth+1)
	}
	if order < 0 || order > MaxSavitzkyGolayOrder || order >= 2*half+1 {
		return fmt.Errorf("Savitzky–Golay order %d: use 0 to %d, below the window width %d", order, MaxSavitzkyGolayOrder, 2*half+1)
	}
	return nil
}

// SavitzkyGolayKernel returns the (2h+1)×(2h+1) smoothing kernel of the 2-D Savitzky–Golay
// filter of total polynomial order p (Savitzky & Golay 1964, extended to two dimensions): the
// weights, row-major with di fastest, that give the value at the centre of the least-squares
// polynomial fit over a full window. It is computed with gonum's least-squares solve.
func SavitzkyGolayKernel(half, order int) ([]float64, error) {
	if err := checkSG(half, order); err != nil {
		return nil, err
	}
	terms := sgTerms(order)
	w := 2*half + 1
	A := mat.NewDense(w*w, len(terms), nil)
	for dj := -half; dj <= half; dj++ {
		for di := -half; di <= half; di++ {
			r := (dj+half)*w + di + half
			for c, t := range terms {
				A.Set(r, c, ipow(float64(di)/float64(half), t[0])*ipow(float64(dj)/float64(half), t[1]))
			}
		}
	}
	// The kernel is the first row of the pseudo-inverse (AᵀA)⁻¹Aᵀ: solve A·X = I in the
	// least-squares sense and take X's first row.
	var X mat.Dense
	if err := X.Solve(A, eye(w*w)); err != nil {
		return nil, fmt.Errorf("Savitzky–Golay kernel: %v", err)
	}
	return mat.Row(nil, 0, &X), nil
}

func eye(n int) *mat.Dense {
	m := mat.NewDense(n, n, nil)
	for k := 0; k < n; k++ {
		m.Set(k, k, 1)
	}
	return m
}

func ipow(x float64, n int) float64 {
	p := 1.0
	for ; n > 0; n-- {
		p *= x
	}
	return p
}

// SavitzkyGolayTransfer is the amplitude response of the 2-D Savitzky–Golay filter along the
// x axis for a sine of κh radians per node, away from edges and masks: Σ h(di,dj) cos(di κh)
// (the kernel is symmetric, so the response is real).
func SavitzkyGolayTransfer(kernel []float64, half int, kh float64) float64 {
	w := 2*half + 1
	s := 0.0
	for dj := 0; dj < w; dj++ {
		for di := 0; di < w; di++ {
			s += kernel[dj*w+di] * math.Cos(float64(di-half)*kh)
		}
	}
	return s
}

// SavitzkyGolayCutoff returns the effective cut-off of SmoothSavitzkyGolay along a grid axis:
// the wavelength in nodes whose amplitude the filter halves, found from its exact transfer
// function (2, the Nyquist wavelength, when no resolvable wave is halved). Odd orders behave
// like the even order below them (the kernel is symmetric). Computed values, in nodes:
//
//	window  3×3   5×5   7×7   9×9
//	order 0 4.77  8.17  11.51 14.85
//	order 2 2     3.53  5.23  6.87
//	order 4 –     2     3.13  4.31
func SavitzkyGolayCutoff(half, order int) (float64, error) {
	k, err := SavitzkyGolayKernel(half, order)
	if err != nil {
		return 0, err
	}
	return halfWavelength(func(kh float64) float64 { return SavitzkyGolayTransfer(k, half, kh) }), nil
}

// SmoothSavitzkyGolay smooths the valid vectors of f in place with the 2-D Savitzky–Golay
// filter: at each valid node, a polynomial of total order ≤ order is fitted by least squares to
// the valid, visible vectors in the (2·half+1)² window, and its value at the node replaces the
// vector. It reproduces any polynomial of that order exactly, also near edges, gaps and solids,
// wherever the nodes present determine the fit (a corner window of (order+1)² nodes does). Where a full window is valid the precomputed kernel is used; elsewhere the fit is solved on
// the nodes present (normal equations by Cholesky), falling back to a lower order when they do
// not determine the polynomial. Its effective cut-off is SavitzkyGolayCutoff.
func SmoothSavitzkyGolay(f *Field, half, order int) error {
	kernel, err := SavitzkyGolayKernel(half, order)
	if err != nil {
		return err
	}
	if err := f.Check(); err != nil {
		return err
	}
	g := f.Grid
	solid := newSolidCount(f)
	w := 2*half + 1
	outU, outV := append([]float64(nil), f.U...), append([]float64(nil), f.V...)
	var fit sgFit
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			k := j*g.NX + i
			if !f.Valid(k) {
				continue
			}
			full := i >= half && j >= half && i < g.NX-half && j < g.NY-half && solid.count(i-half, j-half, i+half, j+half) == 0
			if full {
				for dj := -half; dj <= half && full; dj++ {
					for di := -half; di <= half; di++ {
						if !f.Valid(k + dj*g.NX + di) {
							full = false
							break
						}
					}
				}
			}
			if full {
				var su, sv float64
				for dj := -half; dj <= half; dj++ {
					row := k + dj*g.NX
					kr := kernel[(dj+half)*w:]
					for di := -half; di <= half; di++ {
						su += kr[di+half] * f.U[row+di]
						sv += kr[di+half] * f.V[row+di]
					}
				}
				outU[k], outV[k] = su, sv
				continue
			}
			outU[k], outV[k] = fit.at(f, solid, i, j, half, order)
		}
	}
	copy(f.U, outU)
	copy(f.V, outV)
	return nil
}

// sgFit is the scratch space of one local Savitzky–Golay fit (at most 15 terms); it is reused
// from node to node so that the fit allocates nothing.
type sgFit struct {
	ata [15 * 15]float64
	bu  [15]float64
	bv  [15]float64
	phi [15]float64
}

// at fits the valid, visible vectors around (i, j) and returns the fitted value at the node,
// lowering the order until the normal equations are well determined (order 0, the mean of the
// node and its visible valid neighbours, always is).
func (s *sgFit) at(f *Field, solid solidCount, i, j, half, order int) (float64, float64) {
	g := f.Grid
	sc := 1 / float64(half) // coordinates in window half-widths keep the normal matrix well scaled
	for p := order; p >= 0; p-- {
		terms := sgTerms(p)
		n := len(terms)
		for a := range s.ata[:n*n] {
			s.ata[a] = 0
		}
		for a := 0; a < n; a++ {
			s.bu[a], s.bv[a] = 0, 0
		}
		count := 0
		for dj := max(-half, -j); dj <= min(half, g.NY-1-j); dj++ {
			for di := max(-half, -i); di <= min(half, g.NX-1-i); di++ {
				q := (j+dj)*g.NX + i + di
				if !f.Valid(q) || solid.count(i, j, i+di, j+dj) != 0 {
					continue
				}
				count++
				for a, t := range terms {
					s.phi[a] = ipow(float64(di)*sc, t[0]) * ipow(float64(dj)*sc, t[1])
				}
				for a := 0; a < n; a++ {
					s.bu[a] += s.phi[a] * f.U[q]
					s.bv[a] += s.phi[a] * f.V[q]
					for b := 0; b <= a; b++ {
						s.ata[a*n+b] += s.phi[a] * s.phi[b]
					}
				}
			}
		}
		if count < n {
			continue
		}
		if u, v, ok := s.solve(n); ok {
			return u, v
		}
	}
	return f.U[g.Index(i, j)], f.V[g.Index(i, j)]
}

// solve factors the lower triangle of the n×n normal matrix by Cholesky and returns the first
// coefficient of both right-hand sides; it reports false when the matrix is numerically
// singular (a pivot below 1e-10 of the largest diagonal entry).
func (s *sgFit) solve(n int) (float64, float64, bool) {
	L := s.ata[:n*n]
	dmax := 0.0
	for a := 0; a < n; a++ {
		dmax = math.Max(dmax, L[a*n+a])
	}
	for a := 0; a < n; a++ {
		for b := 0; b <= a; b++ {
			sum := L[a*n+b]
			for c := 0; c < b; c++ {
				sum -= L[a*n+c] * L[b*n+c]
			}
			if a == b {
				if sum <= 1e-10*dmax {
					return 0, 0, false
				}
				L[a*n+a] = math.Sqrt(sum)
			} else {
				L[a*n+b] = sum / L[b*n+b]
			}
		}
	}
	sub := func(rhs []float64) float64 {
		for a := 0; a < n; a++ { // forward: L y = b
			sum := rhs[a]
			for c := 0; c < a; c++ {
				sum -= L[a*n+c] * rhs[c]
			}
			rhs[a] = sum / L[a*n+a]
		}
		for a := n - 1; a >= 0; a-- { // back: Lᵀ x = y
			sum := rhs[a]
			for c := a + 1; c < n; c++ {
				sum -= L[c*n+a] * rhs[c]
			}
			rhs[a] = sum / L[a*n+a]
		}
		return rhs[0]
	}
	return sub(s.bu[:n]), sub(s.bv[:n]), true
}
