package ulam

import (
	"math"
	"testing"

	"crosspec/dynsys"
)

// TestEdgePreimages checks the coarse-to-fine continuation of
// edgePreimages against Brent's method (System.Preimage) on the edges of
// grids of several sizes met by the laps of catalog maps: smooth laps
// (logistic repeller, Gauss map, stirred loop), a lap reaching a critical
// point (logistic map at 4, where the inverse branch has a square-root
// singularity and the safeguard must send steps to the bracketed solver)
// and linear laps (Cantor map, where the cubic is exact). Both give the
// root to full precision, so they agree within 4 ulps; near a critical
// point the root is determined only to √ε and the residual is compared
// instead, as in TestPreimagesFullPrecision.
func TestEdgePreimages(t *testing.T) {
	for _, name := range []string{"logistic-repeller", "logistic4", "gauss", "cantor", "stirred-loop"} {
		s := open(t, name)
		ls, err := s.Laps(&dynsys.LapSettings{MinWidth: 1e-3})
		if err != nil {
			t.Fatal(err)
		}
		sv := newSolver1D(s)
		for _, cells := range []int{300, 2187, 100003} {
			g := NewGrid(s.Lo, s.Hi, []int{cells})
			checked := 0
			for _, l := range ls.Laps {
				u0, f0, u1, f1, ok := clipToDomain(s, l, s.Lo[0], s.Hi[0])
				if !ok {
					continue
				}
				jFirst, jLast := g.firstEdgeAbove(min(f0, f1)), g.lastEdgeBelow(max(f0, f1))
				var ys []float64
				for j := jFirst; j <= jLast; j++ {
					ys = append(ys, g.Edge(0, j))
				}
				if !l.Increasing {
					for a, b := 0, len(ys)-1; a < b; a, b = a+1, b-1 {
						ys[a], ys[b] = ys[b], ys[a]
					}
				}
				got := make([]float64, len(ys))
				sv.edgePreimages(got, ys, u0, u1, f0, f1, l)
				for k, y := range ys {
					want, ok := s.Preimage(l, y)
					if !ok {
						t.Fatalf("%s: no preimage of %g", name, y)
					}
					ulp := math.Nextafter(math.Abs(want), math.Inf(1)) - math.Abs(want)
					if math.Abs(got[k]-want) > 4*ulp && math.Abs(s.F(got[k])-y) > 4*eps*max(1, math.Abs(y)) {
						t.Errorf("%s, %d cells: lap %+v: preimage of %.17g: %.17g, Brent %.17g", name, cells, l, y, got[k], want)
						break
					}
				}
				checked += len(ys)
			}
			if checked == 0 {
				t.Errorf("%s, %d cells: no targets checked", name, cells)
			}
			t.Logf("%s, %d cells: %d coarse steps kept, %d bracketed", name, cells, sv.accepted, sv.rejected)
			if cells > 10000 && sv.accepted <= sv.rejected {
				// The fine grid must exercise the continuation itself.
				t.Errorf("%s, %d cells: only %d of %d coarse steps kept", name, cells, sv.accepted, sv.accepted+sv.rejected)
			}
			sv.accepted, sv.rejected = 0, 0
		}
	}
}
