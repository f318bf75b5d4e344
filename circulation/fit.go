package circulation

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"github.com/wakekit/wakekit/piv"
)

// LambOseenUTheta is the tangential velocity of a Lamb–Oseen vortex of circulation gamma and
// core radius rc at radius r: u_θ = Γ/(2πr)·(1 - exp(-r²/rc²)) (Saffman 1992, Vortex Dynamics,
// §2.4 — r_c² = 4νt). Its maximum, 0.638·Γ/(2π r_c), is at r = 1.1209 r_c.
func LambOseenUTheta(gamma, rc, r float64) float64 {
	if r == 0 {
		return 0
	}
	return gamma / (2 * math.Pi * r) * -math.Expm1(-r*r/(rc*rc))
}

// LambOseenGamma is the circulation of a Lamb–Oseen vortex inside radius r:
// Γ(r) = Γ∞ (1 - exp(-r²/rc²)).
func LambOseenGamma(gamma, rc, r float64) float64 { return gamma * -math.Expm1(-r*r/(rc*rc)) }

// FitOptions configures a Lamb–Oseen fit.
type FitOptions struct {
	// NoBackground fits the vortex alone; by default a uniform background velocity (U, V) is
	// fitted with it, which absorbs the convection of the vortex and the leading part of the
	// velocity induced by other vortices.
	NoBackground bool
	// Strain adds a uniform strain (irrotational and divergence-free) to the background, the
	// leading non-uniform part of the velocity other vortices induce; detection uses it, so
	// that a neighbour does not bias the fitted centre. Ignored with NoBackground.
	Strain bool
	// MaxIterations bounds the optimiser's iterations (0 means 200).
	MaxIterations int
	// MaxNodes, when positive, shrinks the fit radius so that the disc holds about this many
	// nodes, to bound the cost of fits inside detection.
	MaxNodes int
}

// LambOseenFit is a least-squares Lamb–Oseen fit to the velocity vectors near a vortex.
type LambOseenFit struct {
	// Gamma is Γ∞ [m²/s], Rc the core radius r_c [m], X and Y the centre [m], U and V the
	// background velocity [m/s] (zero with NoBackground).
	Gamma, Rc, X, Y, U, V float64
	// Sigma* are one-standard-deviation uncertainties from the Jacobian at the optimum,
	// cov = s²(JᵀJ)⁻¹ with s² the residual variance (e.g. Press et al., Numerical Recipes,
	// §15.5); they assume independent residuals of equal variance.
	SigmaGamma, SigmaRc, SigmaX, SigmaY float64
	// RMS is the root-mean-square velocity residual [m/s] over the 2N components; Nodes the
	// number of nodes fitted.
	RMS   float64
	Nodes int
}

// loModel evaluates the Lamb–Oseen model with background in scaled parameters and, when jac is
// non-nil, its Jacobian. Parameters p: Γ/Γs, rc/L, (xc-x0)/L, (yc-y0)/L, then with a background
// U/Us, V/Us, and with strain A, B [Us/L] of the irrotational, divergence-free linear field
// (A X + B Y, B X - A Y) about (x0, y0); residuals are (model - data)/Us for u then v.
type loModel struct {
	xs, ys, us, vs []float64 // node offsets from (x0, y0) in units of L, velocities in units of Us
	bg, strain     bool
}

func (m *loModel) np() int {
	switch {
	case m.strain:
		return 8
	case m.bg:
		return 6
	}
	return 4
}

// background returns the background velocity at node k and the parameters it uses.
func (m *loModel) background(p []float64, k int) (u, v float64) {
	if m.bg {
		u, v = p[4], p[5]
	}
	if m.strain {
		X, Y := m.xs[k], m.ys[k]
		u += p[6]*X + p[7]*Y
		v += p[7]*X - p[6]*Y
	}
	return u, v
}

// gfun returns g(s) = (1 - exp(-s/a²))/s and its derivatives dg/ds and dg/da (in units of L).
func gfun(s, a float64) (g, gs, ga float64) {
	a2 := a * a
	z := s / a2
	e := math.Exp(-z)
	ga = -2 * e / (a2 * a)
	if z < 1e-3 {
		// Series of (1 - e^-z)/z and (z e^-z + e^-z - 1)/z² to avoid cancellation.
		g = (1 - z/2 + z*z/6 - z*z*z/24) / a2
		gs = (-0.5 + z/3 - z*z/8 + z*z*z/30) / (a2 * a2)
		return g, gs, ga
	}
	// For z >= 1e-3, e - 1 loses at most 13 bits to cancellation, harmless here.
	g = (1 - e) / s
	gs = (z*e + e - 1) / (s * s)
	return g, gs, ga
}

// residuals fills r (length 2N) and, if jac != nil, the 2N x np Jacobian.
func (m *loModel) residuals(p, r []float64, jac *mat.Dense) {
	// With Γ in units of Γs and velocities in units of Us = Γs/(2πL), c = Γ/(2π) becomes p[0].
	c, a, xc, yc := p[0], p[1], p[2], p[3]
	n := len(m.xs)
	for k := 0; k < n; k++ {
		ub, vb := m.background(p, k)
		dx, dy := m.xs[k]-xc, m.ys[k]-yc
		s := dx*dx + dy*dy
		g, gs, ga := gfun(s, a)
		r[k] = ub - c*dy*g - m.us[k]
		r[n+k] = vb + c*dx*g - m.vs[k]
		if jac == nil {
			continue
		}
		jac.Set(k, 0, -dy*g)
		jac.Set(n+k, 0, dx*g)
		jac.Set(k, 1, -c*dy*ga)
		jac.Set(n+k, 1, c*dx*ga)
		jac.Set(k, 2, 2*c*dx*dy*gs)
		jac.Set(n+k, 2, -c*g-2*c*dx*dx*gs)
		jac.Set(k, 3, c*g+2*c*dy*dy*gs)
		jac.Set(n+k, 3, -2*c*dx*dy*gs)
		if m.bg {
			jac.Set(k, 4, 1)
			jac.Set(n+k, 4, 0)
			jac.Set(k, 5, 0)
			jac.Set(n+k, 5, 1)
		}
		if m.strain {
			X, Y := m.xs[k], m.ys[k]
			jac.Set(k, 6, X)
			jac.Set(n+k, 6, -Y)
			jac.Set(k, 7, Y)
			jac.Set(n+k, 7, X)
		}
	}
}

// sumSquares returns the sum of squared residuals at p and, if grad != nil, its gradient
// 2Jᵀr, without storing the Jacobian (the optimiser's inner loop).
func (m *loModel) sumSquares(p, grad []float64) float64 {
	c, a, xc, yc := p[0], p[1], p[2], p[3]
	var f, g0, g1, g2, g3, g4, g5, g6, g7 float64
	for k := range m.xs {
		ub, vb := m.background(p, k)
		dx, dy := m.xs[k]-xc, m.ys[k]-yc
		s := dx*dx + dy*dy
		g, gs, ga := gfun(s, a)
		ru := ub - c*dy*g - m.us[k]
		rv := vb + c*dx*g - m.vs[k]
		f += ru*ru + rv*rv
		if grad == nil {
			continue
		}
		g0 += -dy*g*ru + dx*g*rv
		g1 += c * ga * (-dy*ru + dx*rv)
		g2 += 2*c*dx*dy*gs*ru + (-c*g-2*c*dx*dx*gs)*rv
		g3 += (c*g+2*c*dy*dy*gs)*ru - 2*c*dx*dy*gs*rv
		g4 += ru
		g5 += rv
		X, Y := m.xs[k], m.ys[k]
		g6 += X*ru - Y*rv
		g7 += Y*ru + X*rv
	}
	if grad != nil {
		grad[0], grad[1], grad[2], grad[3] = 2*g0, 2*g1, 2*g2, 2*g3
		if m.bg {
			grad[4], grad[5] = 2*g4, 2*g5
		}
		if m.strain {
			grad[6], grad[7] = 2*g6, 2*g7
		}
	}
	return f
}

// maxFitNodes bounds the nodes of one fit (memory for the Jacobian).
const maxFitNodes = 200_000

// FitLambOseen fits a Lamb–Oseen vortex (Γ∞, r_c, centre, and by default a uniform background
// velocity) to the valid velocity vectors of f within rmax of the starting centre (x0, y0), by
// minimising the sum of squared velocity residuals with gonum's BFGS method and the exact
// gradient. The starting Γ and r_c come from the binned tangential velocity about (x0, y0).
// A fit whose centre leaves the fit radius or whose core radius exceeds twice the fit radius
// is an error, with NaN in every fitted value.
func FitLambOseen(f *piv.Field, x0, y0, rmax float64, opt FitOptions) (LambOseenFit, error) {
	if opt.MaxNodes > 0 {
		if r := math.Sqrt(float64(opt.MaxNodes) * f.Grid.DX * f.Grid.DY / math.Pi); r < rmax {
			rmax = r
		}
	}
	nodes := nodesWithin(f, x0, y0, rmax)
	return fitNodes(f, nodes, x0, y0, rmax, opt)
}

// nodesWithin lists the valid nodes of f within r of (x, y).
func nodesWithin(f *piv.Field, x, y, r float64) []int {
	g := f.Grid
	fa, fb := g.Frac(x-r, y-r)
	fc, fd := g.Frac(x+r, y+r)
	i0, j0 := max(0, int(math.Ceil(fa))), max(0, int(math.Ceil(fb)))
	i1, j1 := min(g.NX-1, int(math.Floor(fc))), min(g.NY-1, int(math.Floor(fd)))
	var out []int
	for j := j0; j <= j1; j++ {
		dy := g.Y(j) - y
		for i := i0; i <= i1; i++ {
			dx := g.X(i) - x
			k := g.Index(i, j)
			if dx*dx+dy*dy <= r*r && f.Valid(k) {
				out = append(out, k)
			}
		}
	}
	return out
}

func fitNodes(f *piv.Field, nodes []int, x0, y0, rmax float64, opt FitOptions) (LambOseenFit, error) {
	res := LambOseenFit{Gamma: math.NaN(), Rc: math.NaN(), X: math.NaN(), Y: math.NaN()}
	g := f.Grid
	if !(rmax > 0) || math.IsInf(rmax, 0) {
		return res, fmt.Errorf("%s: fit radius %g must be positive and finite", f.Name(), rmax)
	}
	m := &loModel{bg: !opt.NoBackground, strain: opt.Strain && !opt.NoBackground}
	if len(nodes) < 3*m.np() {
		return res, fmt.Errorf("%s: only %d valid nodes within %.6g m of (%.6g, %.6g) m; a Lamb–Oseen fit needs at least %d",
			f.Name(), len(nodes), rmax, x0, y0, 3*m.np())
	}
	if len(nodes) > maxFitNodes {
		return res, fmt.Errorf("%s: %d nodes within the fit radius is over the limit of %d", f.Name(), len(nodes), maxFitNodes)
	}
	// Starting values: mean velocity as background, and the tangential velocity binned by radius.
	var mu, mv float64
	for _, k := range nodes {
		mu += f.U[k]
		mv += f.V[k]
	}
	mu /= float64(len(nodes))
	mv /= float64(len(nodes))
	if !m.bg {
		mu, mv = 0, 0
	}
	h := math.Min(g.DX, g.DY)
	nb := max(2, int(math.Ceil(rmax/h)))
	sum := make([]float64, nb)
	cnt := make([]int, nb)
	for _, k := range nodes {
		i, j := g.IJ(k)
		dx, dy := g.X(i)-x0, g.Y(j)-y0
		r := math.Hypot(dx, dy)
		if r == 0 {
			continue
		}
		b := min(nb-1, int(r/h))
		sum[b] += (-(f.U[k]-mu)*dy + (f.V[k]-mv)*dx) / r
		cnt[b]++
	}
	best, bestR, gamma0 := 0.0, math.NaN(), math.NaN()
	for b := 0; b < nb; b++ {
		if cnt[b] == 0 {
			continue
		}
		ut := sum[b] / float64(cnt[b])
		rb := (float64(b) + 0.5) * h
		gamma0 = 2 * math.Pi * rb * ut
		if math.Abs(ut) > best {
			best, bestR = math.Abs(ut), rb
		}
	}
	if !(best > 0) || math.IsNaN(gamma0) || gamma0 == 0 {
		return res, fmt.Errorf("%s: no rotation about (%.6g, %.6g) m to fit", f.Name(), x0, y0)
	}
	L := math.Max(bestR/1.1209, h)
	gs := math.Abs(gamma0)
	us := gs / (2 * math.Pi * L)
	n := len(nodes)
	m.xs, m.ys, m.us, m.vs = make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for a, k := range nodes {
		i, j := g.IJ(k)
		m.xs[a], m.ys[a] = (g.X(i)-x0)/L, (g.Y(j)-y0)/L
		m.us[a], m.vs[a] = f.U[k]/us, f.V[k]/us
	}
	np := m.np()
	p0 := make([]float64, np)
	p0[0], p0[1] = gamma0/gs, 1
	if m.bg {
		p0[4], p0[5] = mu/us, mv/us
	}
	r := make([]float64, 2*n)
	jac := mat.NewDense(2*n, np, nil)
	problem := optimize.Problem{
		Func: func(p []float64) float64 { return m.sumSquares(p, nil) },
		Grad: func(grad, p []float64) { m.sumSquares(p, grad) },
	}
	iters := opt.MaxIterations
	if iters <= 0 {
		iters = 200
	}
	// Near the optimum the gradient is about 2JᵀJ·δp with JᵀJ of order 2n in the scaled
	// parameters, so this threshold stops when the parameters are settled to about 1e-9 of
	// their scale, far below any data error.
	settings := &optimize.Settings{GradientThreshold: 1e-9 * float64(2*n), MajorIterations: iters,
		Converger: &optimize.FunctionConverge{Absolute: 1e-30, Relative: 1e-12, Iterations: 5}}
	out, err := optimize.Minimize(problem, p0, settings, &optimize.BFGS{})
	if out == nil {
		return res, fmt.Errorf("%s: Lamb–Oseen fit failed: %v", f.Name(), err)
	}
	// A line-search stop near the optimum still leaves a usable location; the checks below
	// reject a result that is not a vortex.
	p := out.X
	m.residuals(p, r, jac)
	ssr := 0.0
	for _, v := range r {
		ssr += v * v
	}
	res.Gamma = p[0] * gs
	res.Rc = math.Abs(p[1]) * L
	res.X, res.Y = x0+p[2]*L, y0+p[3]*L
	if m.bg {
		res.U, res.V = p[4]*us, p[5]*us
	}
	res.RMS = math.Sqrt(ssr/float64(2*n)) * us
	res.Nodes = n
	if !(res.Rc > 0) || !(res.Rc < 2*rmax) || math.IsNaN(res.Gamma) || math.Hypot(p[2], p[3])*L > rmax {
		nan := math.NaN()
		res = LambOseenFit{Gamma: nan, Rc: nan, X: nan, Y: nan, U: nan, V: nan, SigmaGamma: nan, SigmaRc: nan,
			SigmaX: nan, SigmaY: nan, RMS: res.RMS, Nodes: n}
		return res, fmt.Errorf("%s: Lamb–Oseen fit about (%.6g, %.6g) m did not converge to a vortex inside the fit radius", f.Name(), x0, y0)
	}
	// Covariance in scaled parameters: s²(JᵀJ)⁻¹.
	var jtj mat.SymDense
	jtj.SymOuterK(1, jac.T())
	var chol mat.Cholesky
	res.SigmaGamma, res.SigmaRc, res.SigmaX, res.SigmaY = math.NaN(), math.NaN(), math.NaN(), math.NaN()
	if chol.Factorize(&jtj) {
		var cov mat.SymDense
		if chol.InverseTo(&cov) == nil {
			s2 := ssr / float64(2*n-np)
			res.SigmaGamma = math.Sqrt(s2*cov.At(0, 0)) * gs
			res.SigmaRc = math.Sqrt(s2*cov.At(1, 1)) * L
			res.SigmaX = math.Sqrt(s2*cov.At(2, 2)) * L
			res.SigmaY = math.Sqrt(s2*cov.At(3, 3)) * L
		}
	}
	return res, nil
}
