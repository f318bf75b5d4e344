package pressure

import (
	"math"
	"runtime"
	"testing"

	"github.com/wakekit/wakekit/piv"
)

// benchProblem is the manufactured gradient on an n×n grid, optionally with a solid disc and
// a missing strip.
func benchProblem(n int, masked bool) (piv.Grid, []float64, []float64) {
	g, _, gx, gy := manufacturedGrid(n, 0)
	if masked {
		for j := 0; j < g.NY; j++ {
			for i := 0; i < g.NX; i++ {
				x, y := g.X(i), g.Y(j)
				if (x-0.5)*(x-0.5)+(y-0.4)*(y-0.4) < 0.02 || (i == 3*n/4 && j > n/5) {
					k := g.Index(i, j)
					gx[k], gy[k] = math.NaN(), math.NaN()
				}
			}
		}
	}
	return g, gx, gy
}

func benchSolve(b *testing.B, n int, masked bool, opt Options) {
	g, gx, gy := benchProblem(n, masked)
	b.ReportAllocs()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	b.ResetTimer()
	cpu0 := cpuSeconds()
	var res *Result
	for it := 0; it < b.N; it++ {
		var err error
		res, err = Integrate(g, piv.Geometry{}, gx, gy, opt)
		if err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	cpu := cpuSeconds() - cpu0
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(g.N()), "ns/node")
	// CPU time (user + system, garbage collector included) per solve: other processes on a
	// shared machine inflate the wall time above but not this figure (0 where not available).
	b.ReportMetric(cpu*1e3/float64(b.N), "cpu-ms/solve")
	b.ReportMetric(cpu*1e9/float64(b.N)/float64(g.N()), "cpu-ns/node")
	// Bytes allocated per node and solve: a constant (memory O(nodes)).
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/float64(g.N()), "B/node")
	b.ReportMetric(float64(res.Iterations), "iterations")
}

// BenchmarkTransform1024 is the direct solver on a full 1024x1024 rectangle (Neumann).
func BenchmarkTransform1024(b *testing.B) { benchSolve(b, 1024, false, Options{Solver: Transform}) }

// BenchmarkTransformDirichlet1024 is the direct solver with prescribed top and bottom edges.
func BenchmarkTransformDirichlet1024(b *testing.B) {
	benchSolve(b, 1024, false, Options{Solver: Transform, Dirichlet: Top | Bottom})
}

// BenchmarkMultigridMasked1024 is multigrid-preconditioned CG to a relative residual of 1e-8
// on a masked 1024x1024 grid.
func BenchmarkMultigridMasked1024(b *testing.B) {
	benchSolve(b, 1024, true, Options{Solver: Multigrid, Tol: 1e-8, Dirichlet: Right | Top})
}

// BenchmarkMultigridMaskedNeumann1024 is the same with Neumann conditions everywhere.
func BenchmarkMultigridMaskedNeumann1024(b *testing.B) {
	benchSolve(b, 1024, true, Options{Solver: Multigrid, Tol: 1e-8})
}

// BenchmarkMultigridMasked256 is the masked problem on 256x256, to show the cost per node
// stays flat as the grid grows.
func BenchmarkMultigridMasked256(b *testing.B) {
	benchSolve(b, 256, true, Options{Solver: Multigrid, Tol: 1e-8, Dirichlet: Right | Top})
}

// BenchmarkPaths1024 is the multi-path integration on the masked grid.
func BenchmarkPaths1024(b *testing.B) { benchSolve(b, 1024, true, Options{Solver: Paths}) }
