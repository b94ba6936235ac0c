package cycles

import (
	"context"
	"math"
	"slices"
	"sync"

	"gonum.org/v1/gonum/mat"

	"crosspec/dynsys"
)

// ndSearch holds what the search of a map of dimension d ≥ 2 shares
// between its goroutines (read only once built).
type ndSearch struct {
	sys     *dynsys.System
	d       int
	scale   float64   // largest side of the domain
	perms   []float64 // the stabilising matrices C, d×d each
	beta    float64
	maxIter int
}

// signedPermutations returns the d×d matrices with one entry ±1 in each
// row and column: the 2^d·d! stabilising matrices of Schmelcher and
// Diakonos. For d > 3 only the 2^d diagonal ones are used.
func signedPermutations(d int) []float64 {
	var perms [][]int
	if d <= 3 {
		var build func(p []int)
		build = func(p []int) {
			if len(p) == d {
				perms = append(perms, slices.Clone(p))
				return
			}
			for v := range d {
				if !slices.Contains(p, v) {
					build(append(p, v))
				}
			}
		}
		build(nil)
	} else {
		id := make([]int, d)
		for i := range id {
			id[i] = i
		}
		perms = [][]int{id}
	}
	var out []float64
	for signs := range 1 << d {
		for _, p := range perms {
			c := make([]float64, d*d)
			for i, j := range p {
				c[i*d+j] = 1
				if signs>>i&1 == 1 {
					c[i*d+j] = -1
				}
			}
			out = append(out, c...)
		}
	}
	return out
}

// ndWork is one goroutine's scratch space.
type ndWork struct {
	x, y, g, step []float64
	jac, prod     []float64
	tmp, a        []float64
	piv           []int
}

func newNDWork(d int) *ndWork {
	return &ndWork{
		x: make([]float64, d), y: make([]float64, d), g: make([]float64, d), step: make([]float64, d),
		jac: make([]float64, d*d), prod: make([]float64, d*d), tmp: make([]float64, d*d), a: make([]float64, d*d),
		piv: make([]int, d),
	}
}

// iterate writes f^p(x) into w.y and its Jacobian into w.prod; false when
// the orbit leaves every bound (overflow, NaN).
func (s *ndSearch) iterate(w *ndWork, x []float64, p int) bool {
	d := s.d
	copy(w.y, x)
	clear(w.prod)
	for i := range d {
		w.prod[i*d+i] = 1
	}
	for range p {
		s.sys.Jacobian(w.jac, w.y)
		matMul(w.tmp, w.jac, w.prod, d)
		w.prod, w.tmp = w.tmp, w.prod
		s.sys.Map(w.step, w.y)
		copy(w.y, w.step)
		for _, v := range w.y {
			if math.IsNaN(v) || math.Abs(v) > 1e6*s.scale {
				return false
			}
		}
	}
	return true
}

// stabilised runs the Davidchack–Lai iteration for a fixed point of f^p
// from seed with the stabilising matrix C:
//
//	x_{k+1} = x_k + (β‖g_k‖ Cᵀ − G_k)⁻¹ g_k,  g = f^p(x) − x,  G = Df^p − 1,
//
// which far from a fixed point takes short steps along the flow
// dx/dt = C g(x) of Schmelcher and Diakonos (stable at the fixed points
// for which C G has eigenvalues with negative real parts) and near it
// becomes Newton's method. It returns the point when ‖g‖ has dropped below
// 1e-7 of the domain's size, close enough for the multiple-shooting
// polish.
func (s *ndSearch) stabilised(w *ndWork, seed []float64, c []float64, p int) bool {
	d := s.d
	copy(w.x, seed)
	for range s.maxIter {
		if !s.iterate(w, w.x, p) {
			return false
		}
		var norm float64
		for i := range d {
			w.g[i] = w.y[i] - w.x[i]
			norm += w.g[i] * w.g[i]
		}
		norm = math.Sqrt(norm)
		if norm <= 1e-7*s.scale {
			return true
		}
		for i := range d {
			for j := range d {
				w.a[i*d+j] = s.beta*norm*c[j*d+i] - w.prod[i*d+j]
			}
			w.a[i*d+i] += 1
		}
		copy(w.step, w.g)
		if !solveDense(w.a, w.step, w.piv, d) {
			return false
		}
		for i := range d {
			w.x[i] += w.step[i]
		}
	}
	return false
}

// multipleShooting polishes the orbit points (n×d, row-major) by Newton's
// method on the whole orbit, R_i = f(x_i) − x_{i+1} (cyclic), whose
// Jacobian has the blocks Df(x_i) on the diagonal and −1 on the cyclic
// superdiagonal; each step solves the nd×nd system by Gaussian elimination
// with partial pivoting. Spreading the orbit's instability over n
// unknowns keeps the steps well conditioned where one shooting over fⁿ
// (condition ~|Λ|) is not. It returns the final max-norm residual and
// whether it reached round-off.
func (s *ndSearch) multipleShooting(points []float64, n int) (float64, bool) {
	d := s.d
	nd := n * d
	a := make([]float64, nd*nd)
	r := make([]float64, nd)
	piv := make([]int, nd)
	jac := make([]float64, d*d)
	fx := make([]float64, d)
	residual := func() float64 {
		var m float64
		for i := range n {
			s.sys.Map(fx, points[i*d:(i+1)*d])
			next := ((i + 1) % n) * d
			for k := range d {
				r[i*d+k] = fx[k] - points[next+k]
				m = math.Max(m, math.Abs(r[i*d+k]))
			}
		}
		if math.IsNaN(m) {
			return math.Inf(1)
		}
		return m
	}
	res := residual()
	floor := 64 * ulpScale(s.scale)
	for range 12 {
		if res <= floor {
			break
		}
		clear(a)
		for i := range n {
			s.sys.Jacobian(jac, points[i*d:(i+1)*d])
			next := (i + 1) % n
			for k := range d {
				for l := range d {
					a[(i*d+k)*nd+i*d+l] += jac[k*d+l]
				}
				a[(i*d+k)*nd+next*d+k] -= 1
			}
		}
		for k := range r {
			r[k] = -r[k]
		}
		if !solveDense(a, r, piv, nd) {
			return res, false
		}
		saved := slices.Clone(points)
		for k := range points {
			points[k] += r[k]
		}
		next := residual()
		if !(next < res) {
			copy(points, saved)
			residual()
			break
		}
		res = next
	}
	return res, res <= 1e-10*s.scale
}

// floquet returns the multipliers of the cycle whose Jacobians along the
// orbit are jacs (n blocks d×d, Df(x_0) first), sorted by decreasing
// modulus. The product M = J_{n−1}⋯J_0 is never formed: a QR factorisation
// is carried along the orbit, J_j Q_j = Q_{j+1} R_j, and repeated around
// the cycle until Q returns to ±Q_0 (the periodic Schur form): then
// Q_0ᵀ M Q_0 = D Π_j R_j is triangular and Λ_i = D_ii Π_j (R_j)_ii, each a
// product of well-conditioned factors, so multipliers of 10^±30 in one
// cycle keep their relative accuracy (the discrete QR method of Lyapunov
// exponents, common practice). Complex pairs, where Q does not settle, fall
// back to the eigenvalues of M (gonum's mat.Eigen), and are given by their
// modulus.
func floquet(jacs []float64, n, d int) []float64 {
	if d == 1 {
		lambda := 1.0
		for _, j := range jacs[:n] {
			lambda *= j
		}
		return []float64{lambda}
	}
	q := make([]float64, d*d)
	for i := range d {
		q[i*d+i] = 1
	}
	a := make([]float64, d*d)
	r := make([]float64, d*d)
	start := make([]float64, d*d)
	logs := make([]float64, d)
	for range 200 {
		copy(start, q)
		clear(logs)
		for j := range n {
			matMul(a, jacs[j*d*d:(j+1)*d*d], q, d)
			gramSchmidt(q, r, a, d)
			for i := range d {
				logs[i] += math.Log(r[i*d+i])
			}
		}
		out := make([]float64, d)
		settled := true
		for i := range d {
			var dot float64
			for k := range d {
				dot += start[k*d+i] * q[k*d+i]
			}
			if math.Abs(math.Abs(dot)-1) > 1e-13 {
				settled = false
				break
			}
			out[i] = math.Copysign(math.Exp(logs[i]), dot)
		}
		if settled {
			sortByModulus(out)
			return out
		}
	}
	m := make([]float64, d*d)
	tmp := make([]float64, d*d)
	for i := range d {
		m[i*d+i] = 1
	}
	for j := range n {
		matMul(tmp, jacs[j*d*d:(j+1)*d*d], m, d)
		m, tmp = tmp, m
	}
	var eig mat.Eigen
	out := make([]float64, d)
	if eig.Factorize(mat.NewDense(d, d, m), mat.EigenNone) {
		for i, v := range eig.Values(nil) {
			if imag(v) == 0 {
				out[i] = real(v)
			} else {
				out[i] = math.Hypot(real(v), imag(v))
			}
		}
	}
	sortByModulus(out)
	return out
}

func sortByModulus(v []float64) {
	slices.SortStableFunc(v, func(a, b float64) int {
		switch {
		case math.Abs(a) > math.Abs(b):
			return -1
		case math.Abs(a) < math.Abs(b):
			return 1
		}
		return 0
	})
}

// gramSchmidt factors a = q r (d×d, row-major) by modified Gram–Schmidt,
// with r's diagonal positive.
func gramSchmidt(q, r, a []float64, d int) {
	copy(q, a)
	clear(r)
	for j := range d {
		for k := range j {
			var dot float64
			for i := range d {
				dot += q[i*d+k] * q[i*d+j]
			}
			r[k*d+j] = dot
			for i := range d {
				q[i*d+j] -= dot * q[i*d+k]
			}
		}
		var norm float64
		for i := range d {
			norm += q[i*d+j] * q[i*d+j]
		}
		norm = math.Sqrt(norm)
		r[j*d+j] = norm
		if norm > 0 {
			for i := range d {
				q[i*d+j] /= norm
			}
		}
	}
}

// matMul writes a·b into dst (d×d, row-major); dst must not alias.
func matMul(dst, a, b []float64, d int) {
	for i := range d {
		for j := range d {
			var s float64
			for k := range d {
				s += a[i*d+k] * b[k*d+j]
			}
			dst[i*d+j] = s
		}
	}
}

// solveDense solves a x = b in place (b becomes x) by Gaussian elimination
// with partial pivoting; a (n×n, row-major) is overwritten. False when a
// is singular.
func solveDense(a, b []float64, piv []int, n int) bool {
	for k := range n {
		p := k
		for i := k + 1; i < n; i++ {
			if math.Abs(a[i*n+k]) > math.Abs(a[p*n+k]) {
				p = i
			}
		}
		if a[p*n+k] == 0 || math.IsNaN(a[p*n+k]) {
			return false
		}
		piv[k] = p
		if p != k {
			for j := range n {
				a[k*n+j], a[p*n+j] = a[p*n+j], a[k*n+j]
			}
			b[k], b[p] = b[p], b[k]
		}
		inv := 1 / a[k*n+k]
		for i := k + 1; i < n; i++ {
			f := a[i*n+k] * inv
			if f == 0 {
				continue
			}
			for j := k + 1; j < n; j++ {
				a[i*n+j] -= f * a[k*n+j]
			}
			b[i] -= f * b[k]
		}
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		for j := i + 1; j < n; j++ {
			s -= a[i*n+j] * b[j]
		}
		b[i] = s / a[i*n+i]
	}
	return true
}

// orbitND is one periodic orbit of a d-dimensional map: n points.
type orbitND struct {
	n      int
	points []float64
}

// forwardOrbit returns x, f(x), …, f^{n−1}(x) (n×d).
func forwardOrbit(sys *dynsys.System, x []float64, n int) []float64 {
	d := sys.Dim()
	out := make([]float64, n*d)
	copy(out, x)
	for i := 1; i < n; i++ {
		sys.Map(out[i*d:(i+1)*d], out[(i-1)*d:i*d])
	}
	return out
}

// orbitPeriodND returns the least k dividing n with x_k = x_0 within tol
// (max norm).
func orbitPeriodND(points []float64, n, d int, tol float64) int {
	for k := 1; k < n; k++ {
		if n%k != 0 {
			continue
		}
		same := true
		for i := range d {
			if math.Abs(points[k*d+i]-points[i]) > tol {
				same = false
				break
			}
		}
		if same {
			return k
		}
	}
	return n
}

// canonicalStart returns the index of the orbit point that names the
// cycle: the start of the least rotation of the itinerary when the system
// has symbols, else the lexicographically smallest point.
func canonicalStart(points []float64, labels []byte, n, d int) int {
	if labels != nil {
		return leastRotation(labels)
	}
	best := 0
	for i := 1; i < n; i++ {
		if slices.Compare(points[i*d:(i+1)*d], points[best*d:(best+1)*d]) < 0 {
			best = i
		}
	}
	return best
}

// makeCycleND builds the Cycle of a polished orbit: itinerary (when the
// system has symbols), the canonical point, the multipliers and the
// observable sum. ok is false when a symbol is out of range.
func makeCycleND(sys *dynsys.System, points []float64, n int) (Cycle, bool) {
	d := sys.Dim()
	var labels []byte
	if sys.HasSymbols() {
		labels = make([]byte, n)
		for i := range n {
			v := sys.Symbol(points[i*d : (i+1)*d])
			if v < 0 || v >= MaxSymbols {
				return Cycle{}, false
			}
			labels[i] = byte(v)
		}
	}
	r := canonicalStart(points, labels, n, d)
	jacs := make([]float64, n*d*d)
	c := Cycle{Len: n, Point: slices.Clone(points[r*d : (r+1)*d])}
	word := make([]byte, 0, n)
	for k := range n {
		i := (r + k) % n
		sys.Jacobian(jacs[k*d*d:(k+1)*d*d], points[i*d:(i+1)*d])
		if labels != nil {
			word = append(word, labels[i])
		}
		c.ObservableSum += sys.Observable(points[i*d : (i+1)*d])
	}
	if labels != nil {
		c.Itinerary = Itinerary(word)
	}
	c.Multipliers = floquet(jacs, n, d)
	return c, true
}

// orbitIndex finds orbits already seen by any of their points: points are
// filed under their first coordinate rounded to a grid of cell tol.
type orbitIndex struct {
	tol    float64
	d      int
	cells  map[int64][]int
	orbits []orbitND
}

func newOrbitIndex(d int, tol float64) *orbitIndex {
	return &orbitIndex{tol: tol, d: d, cells: map[int64][]int{}}
}

func (ix *orbitIndex) key(x float64) int64 { return int64(math.Floor(x / ix.tol)) }

// find returns the index of a stored orbit with a point within tol of x.
func (ix *orbitIndex) find(x []float64) int {
	k := ix.key(x[0])
	for kk := k - 1; kk <= k+1; kk++ {
		for _, o := range ix.cells[kk] {
			orb := ix.orbits[o]
			for i := range orb.n {
				p := orb.points[i*ix.d : (i+1)*ix.d]
				close := true
				for j := range ix.d {
					if math.Abs(p[j]-x[j]) > ix.tol {
						close = false
						break
					}
				}
				if close {
					return o
				}
			}
		}
	}
	return -1
}

func (ix *orbitIndex) add(o orbitND) {
	id := len(ix.orbits)
	ix.orbits = append(ix.orbits, o)
	for i := range o.n {
		k := ix.key(o.points[i*ix.d])
		if cell := ix.cells[k]; len(cell) == 0 || cell[len(cell)-1] != id {
			ix.cells[k] = append(cell, id)
		}
	}
}

// searchND searches a map of dimension d ≥ 2 from seeds.
func searchND(ctx context.Context, sys *dynsys.System, cfg *searchConfig, res *SearchResult) error {
	d := sys.Dim()
	s := &ndSearch{sys: sys, d: d, perms: signedPermutations(d), beta: cfg.Beta, maxIter: cfg.MaxIter}
	for i := range d {
		s.scale = math.Max(s.scale, sys.Hi[i]-sys.Lo[i])
	}
	seedGraph, baseSeeds := ndBaseSeeds(sys, cfg)
	res.Stats.SeedCells = len(seedGraph.core)
	var walker *symbolWalks
	if sys.HasSymbols() {
		m, g, err := ndAlphabet(sys, baseSeeds)
		if err != nil {
			return err
		}
		res.Symbols, res.Grammar = m, g
		walker = newSymbolWalks(seedGraph, sys)
		if cfg.Shards > 0 {
			cfg.part = newShardSelector(cfg.Shard, cfg.Shards, m)
		}
	} else if cfg.Shards > 0 {
		cfg.part = newShardSelector(cfg.Shard, cfg.Shards, 0)
	}
	if cfg.part != nil {
		// A shard keeps every K-th base seed; the seeds from the orbits
		// of the previous lengths are its own finds, all of them (see
		// MergeShards for why the union of the shards then equals the
		// whole search).
		var kept []float64
		for i := range len(baseSeeds) / d {
			if cfg.part.holdsSeed(i) {
				kept = append(kept, baseSeeds[i*d:(i+1)*d]...)
			}
		}
		baseSeeds = kept
	}

	// The orbits of each length, regenerated from the cycles' points by
	// forward iteration, so that a resumed search seeds exactly as an
	// uninterrupted one.
	orbits := map[int][]float64{}
	res.Cycles = append(res.Cycles, cfg.Known...)
	for _, c := range cfg.Known {
		orbits[c.Len] = append(orbits[c.Len], forwardOrbit(sys, c.Point, c.Len)...)
	}
	tolSame := 1e-7 * s.scale
	seedLengths := 2
	nperm := len(s.perms) / (d * d)
	for n := cfg.startLen; n <= cfg.MaxLen; n++ {
		var wordSeeds []orbitND
		if walker != nil {
			wordSeeds = symbolSeeds(ctx, s, walker, res.Grammar, n, cfg.Workers, cfg.part)
		}
		seeds := slices.Clone(baseSeeds)
		for k := max(1, n-seedLengths); k < n; k++ {
			seeds = append(seeds, orbits[k]...)
		}
		nseeds := len(seeds) / d
		const chunk = 16
		chunks := (nseeds + chunk - 1) / chunk
		results := make([][]orbitND, chunks)
		var mu sync.Mutex
		doneChunks := 0
		splitWork(chunks, cfg.Workers, func(ci int) {
			if ctx.Err() != nil {
				return
			}
			w := newNDWork(d)
			var out []orbitND
			local := newOrbitIndex(d, tolSame)
			for si := ci * chunk; si < min((ci+1)*chunk, nseeds); si++ {
				seed := seeds[si*d : (si+1)*d]
				for pi := range nperm {
					if !s.stabilised(w, seed, s.perms[pi*d*d:(pi+1)*d*d], n) {
						continue
					}
					if local.find(w.x) >= 0 {
						continue
					}
					pts := forwardOrbit(sys, w.x, n)
					if _, ok := s.multipleShooting(pts, n); !ok {
						continue
					}
					o := orbitND{n: n, points: pts}
					local.add(o)
					out = append(out, o)
				}
			}
			results[ci] = out
			if cfg.Progress != nil {
				mu.Lock()
				doneChunks++
				cfg.Progress(n, float64(doneChunks)/float64(chunks))
				mu.Unlock()
			}
		})
		res.Stats.Candidates += nseeds * nperm
		if ctx.Err() != nil {
			res.Status = SearchInterrupted
			return nil
		}
		index := newOrbitIndex(d, tolSame)
		var found []Cycle
		for _, chunkOut := range append([][]orbitND{wordSeeds}, results...) {
			for _, o := range chunkOut {
				if !snapInside(sys, o.points, n, boundaryTol*s.scale) || orbitPeriodND(o.points, n, d, tolSame) < n {
					continue
				}
				if index.find(o.points[:d]) >= 0 {
					res.Stats.Duplicates++
					continue
				}
				c, ok := makeCycleND(sys, o.points, n)
				if !ok {
					continue
				}
				index.add(o)
				found = append(found, c)
			}
		}
		slices.SortStableFunc(found, compareFound)
		for _, c := range found {
			orbits[n] = append(orbits[n], forwardOrbit(sys, c.Point, n)...)
		}
		if err := cfg.lengthDone(res, n, found); err != nil {
			return err
		}
	}
	return nil
}

// ndBaseSeeds returns the seed partition's graph and the base seeds of a
// map with d ≥ 2: the centers of its recurrent cells, then a coarse grid
// of GridSeeds points per axis (n×d, concatenated).
func ndBaseSeeds(sys *dynsys.System, cfg *searchConfig) (*boxGraph, []float64) {
	d := sys.Dim()
	seedGraph := newBoxGraph(sys, cfg.SeedCells, 0, nil)
	var baseSeeds []float64
	x := make([]float64, d)
	for _, c := range seedGraph.core {
		seedGraph.center(x, c)
		baseSeeds = append(baseSeeds, x...)
	}
	grid := cfg.GridSeeds
	total := 1
	for range d {
		total *= grid
	}
	for p := range total {
		q := p
		for i := range d {
			k := q % grid
			q /= grid
			x[i] = sys.Lo[i] + (float64(k)+0.5)/float64(grid)*(sys.Hi[i]-sys.Lo[i])
		}
		baseSeeds = append(baseSeeds, x...)
	}
	return seedGraph, baseSeeds
}

// ndAlphabet returns the alphabet size of a map with d ≥ 2 and a symbols
// formula, one more than the largest region index met at the base seeds
// (at least 2), and the system's grammar over it.
func ndAlphabet(sys *dynsys.System, baseSeeds []float64) (int, *Grammar, error) {
	d := sys.Dim()
	m := 2
	for i := 0; i < len(baseSeeds); i += d {
		m = max(m, sys.Symbol(baseSeeds[i:i+d])+1)
	}
	m = min(m, MaxSymbols)
	g, err := NewGrammar(m, sys.Forbidden)
	return m, g, err
}

// boundaryTol is how far outside the box, relative to its size, a cycle
// point may come out of Newton's iteration and still lie on the box.
const boundaryTol = 1e-12

// snapInside reports whether the n points lie in the box of sys, putting
// a coordinate that is outside by at most tol onto the box's face. A cycle
// on a face (the fixed point (5/6, 0) of the product of x → 6x(1−x) and
// y → 5y(1−y)) comes out of Newton's iteration on either side of it, by
// rounding: from outside, 1e-18 below y = 0, it was lost.
func snapInside(sys *dynsys.System, points []float64, n int, tol float64) bool {
	d := sys.Dim()
	for i := range n {
		for k := range d {
			v := &points[i*d+k]
			switch {
			case *v < sys.Lo[k] && sys.Lo[k]-*v <= tol:
				*v = sys.Lo[k]
			case *v > sys.Hi[k] && *v-sys.Hi[k] <= tol:
				*v = sys.Hi[k]
			}
		}
		if !sys.Inside(points[i*d : (i+1)*d]) {
			return false
		}
	}
	return true
}

// symbolWalks seeds multiple shooting from the itineraries of a system
// with symbols: for the word w it looks for closed walks c_0 → … → c_{n−1}
// → c_0 in the recurrent part of the seed partition's graph whose cells
// carry the symbols of w (the symbol of a cell's center) and returns the
// cells' centers as pseudo-orbits, at most limit of them. A hyperbolic set
// has a true orbit shadowing each pseudo-orbit whose jumps are small
// (the shadowing lemma of Anosov and Bowen, common practice), which Newton's
// method on the whole orbit finds.
type symbolWalks struct {
	g       *boxGraph
	adj     [][]int32 // core-indexed
	symbol  []int     // core-indexed
	byStart [][]int32
}

func newSymbolWalks(g *boxGraph, sys *dynsys.System) *symbolWalks {
	d := sys.Dim()
	w := &symbolWalks{g: g}
	index := make(map[int]int32, len(g.core))
	for k, c := range g.core {
		index[c] = int32(k)
	}
	x := make([]float64, d)
	w.adj = make([][]int32, len(g.core))
	w.symbol = make([]int, len(g.core))
	for k, c := range g.core {
		g.center(x, c)
		w.symbol[k] = sys.Symbol(x)
		for _, t := range g.edges[c] {
			if j, ok := index[int(t)]; ok {
				w.adj[k] = append(w.adj[k], j)
			}
		}
	}
	return w
}

// walks returns up to limit pseudo-orbits (n×d each, concatenated) for
// word, visiting at most budget walk prefixes.
func (w *symbolWalks) walks(word []byte, limit, budget int) [][]float64 {
	n := len(word)
	path := make([]int32, n)
	var out [][]float64
	visited := 0
	var extend func(i int) bool
	extend = func(i int) bool {
		if visited++; visited > budget || len(out) >= limit {
			return false
		}
		if i == n {
			if slices.Contains(w.adj[path[n-1]], path[0]) {
				d := w.g.sys.Dim()
				pts := make([]float64, n*d)
				for k, c := range path {
					w.g.center(pts[k*d:(k+1)*d], w.g.core[c])
				}
				out = append(out, pts)
			}
			return true
		}
		for _, next := range w.adj[path[i-1]] {
			if w.symbol[next] != int(word[i]) {
				continue
			}
			path[i] = next
			if !extend(i + 1) {
				return false
			}
		}
		return true
	}
	for k := range w.adj {
		if w.symbol[k] != int(word[0]) {
			continue
		}
		path[0] = int32(k)
		if !extend(1) {
			break
		}
	}
	return out
}

// symbolSeeds polishes, for every admissible Lyndon word of length n, the
// pseudo-orbits of its closed walks until one converges; the orbits come
// back in word order. A shard (part not nil) polishes only its own words.
func symbolSeeds(ctx context.Context, s *ndSearch, walker *symbolWalks, g *Grammar, n, workers int, part *shardSelector) []orbitND {
	var words [][]byte
	for w := range LyndonWords(g.Symbols, n) {
		if len(w) == n && g.Admissible(w) && part.holdsWord(w) {
			words = append(words, slices.Clone(w))
		}
	}
	out := make([]orbitND, len(words))
	splitWork(len(words), workers, func(i int) {
		if ctx.Err() != nil {
			return
		}
		for _, pts := range walker.walks(words[i], 8, 20000) {
			if _, ok := s.multipleShooting(pts, n); ok {
				out[i] = orbitND{n: n, points: pts}
				return
			}
		}
	})
	var kept []orbitND
	for _, o := range out {
		if o.n > 0 {
			kept = append(kept, o)
		}
	}
	return kept
}
