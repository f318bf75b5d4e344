package stats

import (
	"fmt"
	"math"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"github.com/wakekit/wakekit/piv"
)

// DefaultPODMaxBytes limits the memory the snapshot matrix may take (4 GiB).
const DefaultPODMaxBytes = 4 << 30

// POD collects snapshots for the snapshot proper orthogonal decomposition of Sirovich (1987,
// Q. Appl. Math. 45:561). It holds every snapshot (two values per node), the one statistic
// whose memory must grow with the number of frames; NewPOD checks the total against a limit
// before anything is stored.
type POD struct {
	grid  piv.Grid
	first string
	snaps [][]float64 // per frame: u then v, NaN where invalid
	times []float64
	limit int
}

// NewPOD returns an empty collector on g for at most frames snapshots, refusing when their
// storage would exceed maxBytes (0 means DefaultPODMaxBytes).
func NewPOD(g piv.Grid, frames int, maxBytes int64) (*POD, error) {
	if err := g.Validate(0); err != nil {
		return nil, err
	}
	if maxBytes <= 0 {
		maxBytes = DefaultPODMaxBytes
	}
	if need := float64(frames) * float64(2*g.N()) * 8; need > float64(maxBytes) {
		return nil, fmt.Errorf("modal decomposition of %d frames of %dx%d nodes needs %.3g GB, above the limit of %.3g GB",
			frames, g.NX, g.NY, need/1e9, float64(maxBytes)/1e9)
	}
	return &POD{grid: g, limit: frames, snaps: make([][]float64, 0, frames)}, nil
}

// Add stores the snapshot f.
func (p *POD) Add(f *piv.Field) error {
	first := p.first
	if first == "" {
		first = "the decomposition"
	}
	if err := CheckGrid(p.grid, first, f); err != nil {
		return err
	}
	if len(p.snaps) >= p.limit {
		return fmt.Errorf("%s: more snapshots than the %d announced", f.Name(), p.limit)
	}
	if p.first == "" {
		p.first = f.Name()
	}
	n := p.grid.N()
	s := make([]float64, 2*n)
	nan := math.NaN()
	for k := 0; k < n; k++ {
		if f.Valid(k) {
			s[k], s[n+k] = f.U[k], f.V[k]
		} else {
			s[k], s[n+k] = nan, nan
		}
	}
	p.snaps = append(p.snaps, s)
	p.times = append(p.times, f.Time)
	return nil
}

// Modes is the result of a snapshot POD of N snapshots of fluctuations about their mean.
//
// With X the N×M matrix of fluctuation snapshots (u then v at the M/2 nodes valid in every
// snapshot), C = X·Xᵀ/N the snapshot correlation matrix and C·ψ_k = λ_k·ψ_k its eigenpairs
// (λ descending, ψ of unit length), the spatial modes are φ_k = Xᵀψ_k/√(N λ_k) (orthonormal)
// and the temporal coefficients a_k(t_j) = √(N λ_k)·ψ_k(j) = <x_j, φ_k>, so that
// x_j = Σ_k a_k(t_j) φ_k and λ_k = mean over j of a_k(t_j)². The modal energy λ_k is thus the
// time-averaged Σ over nodes of (u'² + v'²) carried by mode k [m²/s²]; its share of Σλ is the
// mode's share of the fluctuation energy. Nodes are weighted equally (uniform grid; in an
// axisymmetric plane the modes are those of the plane, not of the volume).
type Modes struct {
	Grid     piv.Grid
	Times    []float64   // snapshot times
	Energies []float64   // λ_k for every mode (N values, the last is zero up to round-off)
	U, V     [][]float64 // first modes φ_k on the grid, NaN at nodes not valid in every snapshot
	Coeffs   [][]float64 // a_k(t_j) of the first modes
	MeanU    []float64   // mean of the snapshots (NaN where not valid in every snapshot)
	MeanV    []float64
	Nodes    int // nodes valid in every snapshot, the ones decomposed
}

// Cumulative returns the cumulative energy fractions Σ_{i≤k} λ_i / Σ λ.
func (m *Modes) Cumulative() []float64 {
	total := floats.Sum(m.Energies)
	c := make([]float64, len(m.Energies))
	s := 0.0
	for k, e := range m.Energies {
		s += e
		c[k] = s / total
	}
	return c
}

// Share returns mode k's share of the fluctuation energy, λ_k / Σ λ (0 when there is none).
func (m *Modes) Share(k int) float64 {
	total := floats.Sum(m.Energies)
	if total == 0 {
		return 0
	}
	return m.Energies[k] / total
}

// Field returns mode k as a field (unit-norm mode shape; nodes outside the decomposition are
// Missing).
func (m *Modes) Field(k int) *piv.Field {
	f := piv.NewField(m.Grid)
	for q := range f.U {
		if !math.IsNaN(m.U[k][q]) {
			f.Set(q, m.U[k][q], m.V[k][q])
		}
	}
	return f
}

// ScaledField returns mode k scaled to velocity: √λ_k·φ_k [m/s], the RMS velocity the mode
// contributes at each node. With UnitCoeffs it splits each fluctuation snapshot as
// x_j = Σ_k UnitCoeffs(k)[j]·ScaledField(k).
func (m *Modes) ScaledField(k int) *piv.Field {
	f := m.Field(k)
	s := math.Sqrt(m.Energies[k])
	for q := range f.U {
		f.U[q] *= s
		f.V[q] *= s
	}
	return f
}

// UnitCoeffs returns the temporal coefficients of mode k divided by √λ_k: dimensionless, with
// a mean square of one.
func (m *Modes) UnitCoeffs(k int) []float64 {
	s := math.Sqrt(m.Energies[k])
	c := make([]float64, len(m.Coeffs[k]))
	for j, a := range m.Coeffs[k] {
		c[j] = a / s
	}
	return c
}

// CheckModes reports whether nModes modes can be computed from a series of frames: at least
// one, and at most frames − 1 (removing the mean leaves frames − 1 independent snapshots).
func CheckModes(nModes, frames int) error {
	if nModes < 1 {
		return fmt.Errorf("number of modes %d must be at least 1", nModes)
	}
	if nModes > frames-1 {
		return fmt.Errorf("%d modes requested from %d frames: at most %d (the frames minus one, since the mean is removed)",
			nModes, frames, frames-1)
	}
	return nil
}

// Decompose computes the first nModes modes. It needs at least two snapshots, at least one
// node valid in every snapshot, and 1 ≤ nModes ≤ N − 1 (removing the mean leaves N − 1
// independent snapshots). It reuses the stored snapshots as scratch: call it once.
func (p *POD) Decompose(nModes int) (*Modes, error) {
	N := len(p.snaps)
	if N < 2 {
		return nil, fmt.Errorf("modal decomposition needs at least two frames, got %d", N)
	}
	if err := CheckModes(nModes, N); err != nil {
		return nil, err
	}
	n := p.grid.N()
	// Nodes valid in every snapshot.
	keep := make([]int, 0, n)
	for k := 0; k < n; k++ {
		all := true
		for _, s := range p.snaps {
			if math.IsNaN(s[k]) {
				all = false
				break
			}
		}
		if all {
			keep = append(keep, k)
		}
	}
	if len(keep) == 0 {
		return nil, fmt.Errorf("no node is valid in all %d frames; fill the gaps first (wakekit clean)", N)
	}
	M := 2 * len(keep)
	mean := make([]float64, M)
	for _, s := range p.snaps {
		for a, k := range keep {
			mean[a] += s[k]
			mean[len(keep)+a] += s[n+k]
		}
	}
	floats.Scale(1/float64(N), mean)
	// Compact each snapshot in place to its fluctuation at the kept nodes (the compacted
	// prefix never overtakes the entries still to be read: position a ≤ keep[a]).
	for _, s := range p.snaps {
		for a, k := range keep {
			s[a] = s[k] - mean[a]
		}
		for a, k := range keep {
			s[len(keep)+a] = s[n+k] - mean[len(keep)+a]
		}
	}
	rows := make([][]float64, N)
	for j, s := range p.snaps {
		rows[j] = s[:M]
	}
	C := correlation(rows)
	var eig mat.EigenSym
	if !eig.Factorize(C, true) {
		return nil, fmt.Errorf("eigen-decomposition of the %dx%d snapshot correlation matrix failed", N, N)
	}
	vals := eig.Values(nil) // ascending
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	m := &Modes{Grid: p.grid, Times: append([]float64(nil), p.times...), Energies: make([]float64, N),
		MeanU: piv.NaNs(n), MeanV: piv.NaNs(n), Nodes: len(keep)}
	for a, k := range keep {
		m.MeanU[k], m.MeanV[k] = mean[a], mean[len(keep)+a]
	}
	for r := 0; r < N; r++ {
		m.Energies[r] = math.Max(vals[N-1-r], 0) // negative values are round-off
	}
	psi := make([]float64, N)
	phi := make([]float64, M)
	for r := 0; r < nModes; r++ {
		col := N - 1 - r
		mat.Col(psi, col, &vecs)
		lam := m.Energies[r]
		if !(lam > 0) {
			return nil, fmt.Errorf("mode %d carries no energy: the %d frames hold only %d independent fluctuations", r+1, N, r)
		}
		for a := range phi {
			phi[a] = 0
		}
		for j, x := range rows {
			floats.AddScaled(phi, psi[j], x)
		}
		norm := math.Sqrt(float64(N) * lam)
		floats.Scale(1/norm, phi)
		// Sign convention: the largest entry of each mode is positive.
		if phi[floats.MaxIdx(absAll(phi))] < 0 {
			floats.Scale(-1, phi)
			floats.Scale(-1, psi)
		}
		u, v := piv.NaNs(n), piv.NaNs(n)
		for a, k := range keep {
			u[k], v[k] = phi[a], phi[len(keep)+a]
		}
		coef := make([]float64, N)
		for j := range coef {
			coef[j] = norm * psi[j]
		}
		m.U = append(m.U, u)
		m.V = append(m.V, v)
		m.Coeffs = append(m.Coeffs, coef)
	}
	p.snaps = nil
	return m, nil
}

func absAll(x []float64) []float64 {
	a := make([]float64, len(x))
	for k, v := range x {
		a[k] = math.Abs(v)
	}
	return a
}

// correlation returns C_ij = <x_i, x_j>/N. The dot products are blocked for the cache: the
// columns are taken in chunks and the rows in tiles, so that a tile of rows stays in cache
// while the tiles below it stream past; tiles of rows (frames) are spread over the cores.
func correlation(rows [][]float64) *mat.SymDense {
	N := len(rows)
	M := len(rows[0])
	const tile, chunk = 16, 1024
	acc := make([][]float64, N) // acc[i][j] for j ≤ i
	for i := range acc {
		acc[i] = make([]float64, i+1)
	}
	jobs := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < runtime.GOMAXPROCS(0); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i0 := range jobs {
				i1 := min(i0+tile, N)
				for c0 := 0; c0 < M; c0 += chunk {
					c1 := min(c0+chunk, M)
					for i := i0; i < i1; i++ {
						ri := rows[i][c0:c1]
						a := acc[i]
						for j := 0; j <= i; j++ {
							a[j] += floats.Dot(ri, rows[j][c0:c1])
						}
					}
				}
			}
		}()
	}
	// Larger tiles (more pairs) first, for a balanced finish.
	for i0 := (N - 1) / tile * tile; i0 >= 0; i0 -= tile {
		jobs <- i0
	}
	close(jobs)
	wg.Wait()
	C := mat.NewSymDense(N, nil)
	for i, a := range acc {
		for j, v := range a {
			C.SetSym(i, j, v/float64(N))
		}
	}
	return C
}
