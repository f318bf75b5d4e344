package circulation

import (
	"fmt"
	"math"
	"strings"

	"github.com/wakekit/wakekit/piv"
	"github.com/wakekit/wakekit/vorticity"
)

// Criterion names a vortex-identification criterion.
type Criterion int

const (
	// Gamma2 marks nodes where |Γ2| exceeds the threshold (default 2/π; Graftieaux, Michard &
	// Grosjean 2001); the sign of Γ2 gives the sense of rotation.
	Gamma2 Criterion = iota
	// Q marks nodes where Q exceeds the threshold (default 0; Hunt, Wray & Moin 1988).
	Q
	// Lambda2 marks nodes where λ2 is below minus the threshold (default 0; Jeong & Hussain 1995).
	Lambda2
	// Swirl marks nodes where the swirling strength λ_ci exceeds the threshold (default 0;
	// Zhou et al. 1999).
	Swirl
)

// ParseCriterion reads "gamma2", "q", "lambda2" or "swirl".
func ParseCriterion(name string) (Criterion, error) {
	switch strings.ToLower(strings.TrimSpace(name)) {
	case "gamma2", "γ2":
		return Gamma2, nil
	case "q":
		return Q, nil
	case "lambda2", "λ2":
		return Lambda2, nil
	case "swirl", "lambda-ci", "lci":
		return Swirl, nil
	}
	return 0, fmt.Errorf("unknown criterion %q (expected gamma2, q, lambda2 or swirl)", name)
}

// String returns the criterion's name as ParseCriterion reads it.
func (c Criterion) String() string {
	switch c {
	case Q:
		return "q"
	case Lambda2:
		return "lambda2"
	case Swirl:
		return "swirl"
	}
	return "gamma2"
}

// DefaultThreshold returns the criterion's default threshold: 2/π for Γ2 (the value above
// which rotation dominates strain, Graftieaux et al. 2001), 0 for the others.
func (c Criterion) DefaultThreshold() float64 {
	if c == Gamma2 {
		return 2 / math.Pi
	}
	return 0
}

// DefaultGammaRadius is the half-width in nodes of the Γ2 neighbourhood (a 5x5 square; common
// practice).
const DefaultGammaRadius = 2

// CriterionField computes the criterion field of f (NaN where undefined) and its vorticity with
// the given difference scheme; gammaRadius is the Γ2 half-width in nodes (0 means
// DefaultGammaRadius).
func CriterionField(f *piv.Field, c Criterion, scheme vorticity.Scheme, gammaRadius int) (crit, omega []float64) {
	gr := vorticity.NewGradient(f, scheme)
	omega = gr.Vorticity()
	switch c {
	case Q:
		crit = gr.Q()
	case Lambda2:
		crit = gr.Lambda2()
	case Swirl:
		crit = gr.Swirl(false)
	default:
		if gammaRadius <= 0 {
			gammaRadius = DefaultGammaRadius
		}
		crit = vorticity.Gamma2(f, gammaRadius)
	}
	return crit, omega
}

// DetectOptions configures vortex detection.
type DetectOptions struct {
	// Threshold of the criterion, used when SetThreshold is true (so that 0 can be asked for
	// explicitly); otherwise the criterion's DefaultThreshold applies.
	Threshold    float64
	SetThreshold bool
	// MinNodes is the smallest core kept (0 means 5 nodes).
	MinNodes int
	// NoFit skips the Lamb–Oseen fit of each core (CoreRadius is then NaN).
	NoFit bool
	// FitRadius is the fit radius as a multiple of the core's equivalent radius (0 means 2);
	// it is never less than 3 grid spacings.
	FitRadius float64
}

// Core is one detected vortex core in a frame.
type Core struct {
	// Sign is +1 for counter-clockwise rotation, -1 for clockwise.
	Sign int
	// Nodes are the grid indices of the core's nodes.
	Nodes []int
	// Area [m²] is the node count times the cell area; EqRadius = sqrt(Area/π) [m].
	Area, EqRadius float64
	// X, Y is the vorticity-weighted centroid [m] (weights sign·ω, negative parts left out).
	X, Y float64
	// PeakX, PeakY and PeakOmega locate and give the vorticity of largest magnitude in the
	// core's sense of rotation [m, m, 1/s].
	PeakX, PeakY, PeakOmega float64
	// Gamma is the area-integral circulation of the core's nodes [m²/s], MeanOmega = Gamma/Area.
	Gamma, MeanOmega float64
	// MissingShare is the share of nodes without vorticity (left out of the sums).
	MissingShare float64
	// CoreRadius is the Lamb–Oseen core radius r_c fitted to the velocity about the centroid
	// [m] (NaN when not fitted or when the fit fails); Fit holds the whole fit.
	CoreRadius float64
	Fit        *LambOseenFit
}

// Detect finds vortex cores in f: the 4-connected regions of nodes where the criterion field
// crit (from CriterionField) passes the threshold and the sense of rotation is the same (the
// sign of Γ2 for the Γ2 criterion, of the vorticity otherwise), with at least MinNodes nodes.
// For each it computes the statistics of Core from the vorticity omega and, unless NoFit, a
// Lamb–Oseen fit to the velocity within FitRadius equivalent radii of the centroid. Cores are
// returned in order of decreasing |Γ|.
func Detect(f *piv.Field, c Criterion, crit, omega []float64, opt DetectOptions) ([]Core, error) {
	g := f.Grid
	n := g.N()
	if len(crit) != n || len(omega) != n {
		return nil, fmt.Errorf("%s: criterion (%d) and vorticity (%d) do not match the grid of %d nodes", f.Name(), len(crit), len(omega), n)
	}
	thr := opt.Threshold
	if !opt.SetThreshold || math.IsNaN(thr) {
		thr = c.DefaultThreshold()
	}
	minNodes := opt.MinNodes
	if minNodes <= 0 {
		minNodes = 5
	}
	// sgn[k]: +1 or -1 where the criterion holds, 0 elsewhere.
	sgn := make([]int8, n)
	for k := 0; k < n; k++ {
		v := crit[k]
		var s int8
		switch c {
		case Gamma2:
			if v > thr {
				s = 1
			} else if v < -thr {
				s = -1
			}
		case Lambda2:
			if v < -thr {
				s = signOf(omega[k])
			}
		default:
			if v > thr {
				s = signOf(omega[k])
			}
		}
		sgn[k] = s
	}
	label := make([]int32, n)
	queue := make([]int32, 0, 256)
	var cores []Core
	next := int32(0)
	nx := g.NX
	for k0 := 0; k0 < n; k0++ {
		if sgn[k0] == 0 || label[k0] != 0 {
			continue
		}
		next++
		s := sgn[k0]
		queue = append(queue[:0], int32(k0))
		label[k0] = next
		for h := 0; h < len(queue); h++ {
			k := int(queue[h])
			i := k % nx
			if i > 0 && sgn[k-1] == s && label[k-1] == 0 {
				label[k-1] = next
				queue = append(queue, int32(k-1))
			}
			if i < nx-1 && sgn[k+1] == s && label[k+1] == 0 {
				label[k+1] = next
				queue = append(queue, int32(k+1))
			}
			if k >= nx && sgn[k-nx] == s && label[k-nx] == 0 {
				label[k-nx] = next
				queue = append(queue, int32(k-nx))
			}
			if k+nx < n && sgn[k+nx] == s && label[k+nx] == 0 {
				label[k+nx] = next
				queue = append(queue, int32(k+nx))
			}
		}
		if len(queue) < minNodes {
			continue
		}
		nodes := make([]int, len(queue))
		for a, k := range queue {
			nodes[a] = int(k)
		}
		cores = append(cores, coreStats(f, omega, nodes, int(s)))
	}
	if !opt.NoFit {
		fr := opt.FitRadius
		if fr <= 0 {
			fr = 2
		}
		for a := range cores {
			co := &cores[a]
			co.CoreRadius = math.NaN()
			if math.IsNaN(co.X) {
				continue
			}
			r := math.Max(fr*co.EqRadius, 3*math.Max(g.DX, g.DY))
			fit, err := FitLambOseen(f, co.X, co.Y, r, FitOptions{MaxNodes: maxDetectFitNodes, Strain: true})
			if err == nil && fit.Gamma*float64(co.Sign) > 0 && fit.Rc < r {
				co.CoreRadius = fit.Rc
				co.Fit = &fit
			}
		}
	} else {
		for a := range cores {
			cores[a].CoreRadius = math.NaN()
		}
	}
	sortCores(cores)
	return cores, nil
}

// maxDetectFitNodes bounds the nodes of each core's Lamb–Oseen fit during detection: with
// 300 nodes (600 velocity components) for 4 to 6 parameters the statistical error of r_c is
// well below the spread of r_c along a track, and detection stays fast on large frames.
const maxDetectFitNodes = 300

// Centre returns the best estimate of the core's centre: the fitted Lamb–Oseen centre when
// the fit succeeded (sub-grid precision), otherwise the vorticity-weighted centroid.
func (c *Core) Centre() (x, y float64) {
	if c.Fit != nil {
		return c.Fit.X, c.Fit.Y
	}
	return c.X, c.Y
}

func signOf(w float64) int8 {
	switch {
	case w > 0:
		return 1
	case w < 0:
		return -1
	}
	return 0
}

// coreStats fills the statistics of a core from its nodes.
func coreStats(f *piv.Field, omega []float64, nodes []int, sign int) Core {
	g := f.Grid
	cell := g.DX * g.DY
	co := Core{Sign: sign, Nodes: nodes, PeakOmega: math.NaN(), PeakX: math.NaN(), PeakY: math.NaN()}
	var sw, swx, swy, sum float64
	miss := 0
	best := -1.0
	for _, k := range nodes {
		w := omega[k]
		if math.IsNaN(w) {
			miss++
			continue
		}
		i, j := k%g.NX, k/g.NX
		x, y := g.X0+float64(i)*g.DX, g.Y0+float64(j)*g.DY
		sum += w
		if ws := w * float64(sign); ws > 0 {
			sw += ws
			swx += ws * x
			swy += ws * y
			if ws > best {
				best, co.PeakOmega, co.PeakX, co.PeakY = ws, w, x, y
			}
		}
	}
	co.Area = float64(len(nodes)) * cell
	co.EqRadius = math.Sqrt(co.Area / math.Pi)
	co.MissingShare = float64(miss) / float64(len(nodes))
	co.Gamma = sum * cell
	co.MeanOmega = co.Gamma / co.Area
	co.X, co.Y = math.NaN(), math.NaN()
	if sw > 0 {
		co.X, co.Y = swx/sw, swy/sw
	}
	return co
}

// sortCores orders cores by decreasing |Γ| (insertion sort: a frame holds few cores).
func sortCores(c []Core) {
	for a := 1; a < len(c); a++ {
		for b := a; b > 0 && math.Abs(c[b].Gamma) > math.Abs(c[b-1].Gamma); b-- {
			c[b], c[b-1] = c[b-1], c[b]
		}
	}
}
