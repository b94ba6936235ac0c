package krylov

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
)

// Operator is a real linear map A on R^n given by its action on vectors.
type Operator interface {
	// Dim returns n.
	Dim() int
	// Apply sets dst = A x. dst and x have length Dim and do not overlap;
	// dst is overwritten, whatever it holds on entry.
	Apply(dst, x []float64)
}

// Settings controls Eigs. The zero value, or a nil *Settings, means the
// defaults given beside each field.
type Settings struct {
	// Wanted is the number k of eigenvalues of largest modulus to compute.
	// Default 1.
	Wanted int

	// SubspaceSize is the largest dimension m of the Krylov subspace; each
	// restart keeps about half of it. It must be at least Wanted+3.
	// Default DefaultSubspaceSize(Wanted).
	//
	// When Wanted is 1 and SubspaceSize is left at 0, Eigs first makes
	// power steps x ← A x/‖A x‖, which cost one mat-vec and one sweep over
	// two vectors each, and continues by Krylov–Schur from the last
	// iterate when their convergence factor, measured over a few steps,
	// exceeds 0.8 (an eigenvalue close in modulus to the leading one, or a
	// leading complex pair). Setting SubspaceSize skips the power steps.
	SubspaceSize int

	// MaxSubspaceSize is the size up to which the subspace doubles, every
	// 10 restarts, while the wanted pairs have not converged: slow
	// convergence means crowded moduli near the wanted ones, where a small
	// subspace also risks settling on an eigenvalue that is not among the
	// largest (seen with m = 6 on random matrices). Default
	// max(SubspaceSize, 2·DefaultSubspaceSize(Wanted)), and never above
	// (Dim−1)/2; set it equal to SubspaceSize for a fixed size. While the
	// subspace grows, the old and the new basis coexist briefly.
	MaxSubspaceSize int

	// Tol is the relative residual at which a Ritz pair (λ, x), ‖x‖ = 1,
	// counts as converged: ‖A x − λ x‖ ≤ Tol·‖A‖. Default 1e-12.
	// The error of λ is then about Tol·‖A‖ times the condition number
	// of λ (‖u‖‖v‖/|uᴴv| for left and right eigenvectors u, v).
	Tol float64

	// MaxRestarts is the number of restarts after which Eigs gives up with
	// Status IterationLimit. Default 1000.
	MaxRestarts int

	// Norm is an estimate of ‖A‖₂ used in the convergence test. Default 0:
	// Eigs uses the largest ‖A v‖ over the unit basis vectors v it has
	// applied A to (a lower bound of ‖A‖₂, so the test errs on the strict
	// side).
	Norm float64

	// Start is the starting vector, of length Dim. Default nil: a fixed
	// pseudo-random vector with entries in [0.5, 1.5) (positive, as suits
	// the Perron vector of a nonnegative matrix, and with components along
	// every eigenvector).
	Start []float64

	// Vectors asks for the eigenvectors. Default false.
	Vectors bool

	// Dense asks for a dense eigen-decomposition (n applications of the
	// operator, O(n³) time and O(n²) memory) instead of the Krylov
	// iteration. Default false; Eigs switches to it by itself when
	// Dim ≤ 2·SubspaceSize.
	Dense bool
}

// DefaultSubspaceSize returns the default Settings.SubspaceSize for k
// wanted eigenvalues, max(2k+1, 20); the subspace may grow to twice that
// (Settings.MaxSubspaceSize).
//
// For k = 1 the default also selects the power steps that come first (see
// Settings.SubspaceSize): on the 10⁶-cell logistic-repeller Ulam matrix
// they converged in 26 mat-vecs, Krylov–Schur with m = 6 and 20 in 34 and
// 30 mat-vecs at several times the cost of the mat-vecs in Gram–Schmidt
// sweeps.
func DefaultSubspaceSize(k int) int {
	return max(2*k+1, 20)
}

// Status says how an eigen-solve ended.
type Status int

const (
	// Converged: every wanted Ritz pair met the tolerance.
	Converged Status = iota + 1
	// IterationLimit: MaxRestarts restarts were made before all wanted
	// Ritz pairs met the tolerance.
	IterationLimit
)

func (s Status) String() string {
	switch s {
	case Converged:
		return "converged"
	case IterationLimit:
		return "iteration limit"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Stats counts the work of an eigen-solve.
type Stats struct {
	Restarts int // restarts of the Krylov–Schur iteration
	MatVecs  int // applications of the operator, residual checks included

	// Reorthogonalizations counts second Gram–Schmidt passes, made when
	// the first pass cancelled more than 1 − 1/√2 of a vector's norm
	// (the criterion of Daniel, Gragg, Kaufman and Stewart).
	Reorthogonalizations int

	// Breakdowns counts invariant subspaces met during the expansion; each
	// is continued with a fresh pseudo-random vector orthogonal to the
	// basis.
	Breakdowns int

	// PowerSteps counts the power steps made before Krylov–Schur (see
	// Settings.SubspaceSize); each is one of the MatVecs.
	PowerSteps int

	// Subspace is the subspace size at the end (see
	// Settings.MaxSubspaceSize); 0 if only power steps were made.
	Subspace int
}

// Result is the outcome of Eigs.
type Result struct {
	// Values holds the eigenvalues of largest modulus, sorted by
	// decreasing modulus (ties by decreasing real part), a complex
	// conjugate pair adjacent with the positive imaginary part first. It
	// has Wanted entries, or Wanted+1 when the Wanted-th value is the first
	// of a pair, so that a pair is never split.
	Values []complex128

	// Vectors holds the eigenvectors when Settings.Vectors is set, in
	// LAPACK's real layout: for a real Values[i], Vectors[i] is its real
	// eigenvector; for a pair Values[i], Values[i+1] = conj(Values[i]) with
	// imag(Values[i]) > 0, the eigenvector of Values[i] is
	// Vectors[i] + i·Vectors[i+1] and that of Values[i+1] its conjugate.
	// Use VectorTo for a complex vector. Each eigenvector has unit
	// 2-norm, and its first entry of largest modulus is real and positive.
	Vectors [][]float64

	// Residuals holds the relative residual ‖A x − λ x‖/(‖A‖ ‖x‖) of each
	// value: computed from the returned vector when Settings.Vectors is
	// set, else the Krylov–Schur estimate (equal in exact arithmetic).
	Residuals []float64

	// Norm is the estimate of ‖A‖₂ the residuals are relative to.
	Norm float64

	Stats  Stats
	Status Status
}

// VectorTo writes the eigenvector of Values[i] into dst, allocating it if
// dst is nil, and returns it. It panics if the Result holds no vectors.
func (r *Result) VectorTo(dst []complex128, i int) []complex128 {
	if r.Vectors == nil {
		panic("krylov: result holds no eigenvectors")
	}
	n := len(r.Vectors[i])
	if dst == nil {
		dst = make([]complex128, n)
	}
	if len(dst) != n {
		panic(fmt.Sprintf("krylov: destination length %d, want %d", len(dst), n))
	}
	switch im := imag(r.Values[i]); {
	case im == 0:
		for j, x := range r.Vectors[i] {
			dst[j] = complex(x, 0)
		}
	case im > 0:
		re, imv := r.Vectors[i], r.Vectors[i+1]
		for j := range dst {
			dst[j] = complex(re[j], imv[j])
		}
	default:
		re, imv := r.Vectors[i-1], r.Vectors[i]
		for j := range dst {
			dst[j] = complex(re[j], -imv[j])
		}
	}
	return dst
}

// ErrNotConverged is matched (errors.Is) by the error Eigs returns when it
// stops at the restart limit.
var ErrNotConverged = errors.New("krylov: not converged")

// NotConvergedError reports the residuals reached when the restart limit
// stopped the iteration. The Result returned with it holds the current
// approximations.
type NotConvergedError struct {
	Restarts  int
	Tol       float64
	Residuals []float64
}

func (e *NotConvergedError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "krylov: not converged after %d restarts (tolerance %.3g); relative residuals", e.Restarts, e.Tol)
	for _, r := range e.Residuals {
		fmt.Fprintf(&b, " %.3g", r)
	}
	return b.String()
}

// Is makes errors.Is(err, ErrNotConverged) true.
func (e *NotConvergedError) Is(target error) bool { return target == ErrNotConverged }

// settings holds validated Settings with the defaults filled in.
type settings struct {
	n, k, m     int
	maxM        int
	tol         float64
	maxRestarts int
	norm        float64
	start       []float64
	vectors     bool
	dense       bool
	power       bool // begin with power steps
}

func validate(op Operator, s *Settings) (settings, error) {
	var in Settings
	if s != nil {
		in = *s
	}
	n := op.Dim()
	if n < 1 {
		return settings{}, fmt.Errorf("krylov: operator dimension %d", n)
	}
	c := settings{
		n:           n,
		k:           in.Wanted,
		m:           in.SubspaceSize,
		tol:         in.Tol,
		maxRestarts: in.MaxRestarts,
		norm:        in.Norm,
		start:       in.Start,
		vectors:     in.Vectors,
		dense:       in.Dense,
	}
	switch {
	case c.k < 0:
		return c, fmt.Errorf("krylov: negative number of wanted eigenvalues %d", c.k)
	case c.k > n:
		return c, fmt.Errorf("krylov: %d eigenvalues wanted of a %d×%d operator", c.k, n, n)
	case c.m < 0:
		return c, fmt.Errorf("krylov: negative subspace size %d", c.m)
	case c.tol < 0 || math.IsNaN(c.tol):
		return c, fmt.Errorf("krylov: invalid tolerance %v", c.tol)
	case c.maxRestarts < 0:
		return c, fmt.Errorf("krylov: negative restart limit %d", c.maxRestarts)
	case c.norm < 0 || math.IsNaN(c.norm) || math.IsInf(c.norm, 0):
		return c, fmt.Errorf("krylov: invalid operator norm %v", c.norm)
	}
	if c.start != nil && len(c.start) != n {
		panic(fmt.Sprintf("krylov: start vector length %d, want %d", len(c.start), n))
	}
	if c.k == 0 {
		c.k = 1
	}
	if c.m == 0 {
		c.power = c.k == 1
		c.m = DefaultSubspaceSize(c.k)
	} else if c.m < c.k+3 && !c.dense && n > 2*c.m {
		return c, fmt.Errorf("krylov: subspace size %d too small for %d wanted eigenvalues (need %d)", c.m, c.k, c.k+3)
	}
	switch {
	case in.MaxSubspaceSize < 0:
		return c, fmt.Errorf("krylov: negative maximal subspace size %d", in.MaxSubspaceSize)
	case in.MaxSubspaceSize == 0:
		c.maxM = max(c.m, 2*DefaultSubspaceSize(c.k))
	default:
		c.maxM = max(c.m, in.MaxSubspaceSize)
	}
	// The subspace never exceeds half the dimension (above it the problem
	// is solved densely).
	c.maxM = max(c.m, min(c.maxM, (n-1)/2))
	if c.tol == 0 {
		c.tol = 1e-12
	}
	if c.maxRestarts == 0 {
		c.maxRestarts = 1000
	}
	if n <= 2*c.m {
		c.dense = true
	}
	return c, nil
}

// Eigs computes the eigenvalues of largest modulus of op, and optionally
// their eigenvectors, by the Krylov–Schur method. It returns an error
// for invalid settings, for a non-finite vector from the operator, or, with
// the Result reached and Status IterationLimit, a *NotConvergedError
// matching ErrNotConverged when the restart limit is hit.
func Eigs(op Operator, s *Settings) (Result, error) {
	c, err := validate(op, s)
	if err != nil {
		return Result{}, err
	}
	if c.dense {
		return eigsDense(op, c)
	}
	return newSolver(op, c).run()
}

// solver is the state of a Krylov–Schur iteration: the decomposition
//
//	A V_j = V_j H_j + v_j h_jᵀ,   j ≤ m,
//
// with V_{j+1} = [v_0 … v_j] orthonormal, stored as basis columns, and the
// Rayleigh quotient H_j with the extra row h_jᵀ stored as rows 0…j of the
// (m+1)×m row-major matrix h.
type solver struct {
	op    Operator
	c     settings
	n, m  int
	basis *basis
	h     []float64 // (m+1)×m row-major
	norm  float64   // estimate of ‖A‖₂
	stats Stats

	proj, reproj []float64 // Gram–Schmidt coefficients, length m+2
}

func newSolver(op Operator, c settings) *solver {
	return &solver{
		op:     op,
		c:      c,
		n:      c.n,
		m:      c.m,
		h:      make([]float64, (c.m+1)*c.m),
		norm:   c.norm,
		proj:   make([]float64, c.m+2),
		reproj: make([]float64, c.m+2),
	}
}

// dgks is η = 1/√2 of the Daniel–Gragg–Kaufman–Stewart criterion: a second
// Gram–Schmidt pass is made when the first leaves less than η of the norm.
const dgks = 0.7071067811865476

var errNonFinite = errors.New("krylov: the operator produced a non-finite vector")

// step applies the operator to v_j, orthogonalises the result against
// v_0…v_j by classical Gram–Schmidt, and stores the normalised result as
// v_{j+1} and the coefficients as column j of h.
//
// The first pass computes h = Vᵀw and ‖w‖² together. When the norm left
// after the projection, estimated as ‖w‖² − ‖h‖² (Pythagoras), is at least
// η² ‖w‖², the update and the normalisation w ← (w − V h)/‖w − V h‖ share a
// second and last sweep: with so little cancellation the estimate has a
// relative error of a few ε (A. Smoktunowicz, J. L. Barlow and J. Langou,
// Numer. Math. 105 (2006) 299–313, analyse classical Gram–Schmidt with this
// norm; from memory). Otherwise a second projection follows, by the
// criterion of J. W. Daniel, W. B. Gragg, L. Kaufman and G. W. Stewart,
// Math. Comp. 30 (1976) 772–795 (η = 1/√2); it shares a sweep with the
// first update (row blocks are updated, then projected while in cache), and
// the second update shares one with the normalisation: three sweeps over
// the basis in all.
func (s *solver) step(j int) error {
	w := s.basis.col(j + 1)
	s.op.Apply(w, s.basis.col(j))
	s.stats.MatVecs++
	q := j + 1
	norm0 := s.basis.project(s.proj, q, w)
	if math.IsNaN(norm0) || math.IsInf(norm0, 0) {
		return errNonFinite
	}
	if s.c.norm == 0 {
		s.norm = max(s.norm, math.Sqrt(norm0))
	}
	var projected float64
	for _, x := range s.proj[:q] {
		projected += x * x
	}
	var beta float64
	if estimate := norm0 - projected; estimate > dgks*dgks*norm0 {
		beta = math.Sqrt(estimate)
		s.basis.subtract(w, s.proj, q, 1/beta)
	} else {
		// The update and the second projection share a sweep, and the
		// second update the normalisation.
		s.stats.Reorthogonalizations++
		norm1 := s.basis.subtractProject(w, s.proj, q, s.reproj)
		var reprojected float64
		for l := range q {
			s.proj[l] += s.reproj[l]
			reprojected += s.reproj[l] * s.reproj[l]
		}
		if estimate := norm1 - reprojected; estimate > dgks*dgks*norm1 {
			beta = math.Sqrt(estimate)
			s.basis.subtract(w, s.reproj, q, 1/beta)
		} else {
			// w lies in span(V) to working precision: an invariant
			// subspace. Continue with a fresh direction and no coupling.
			s.stats.Breakdowns++
			if err := s.freshDirection(w, q); err != nil {
				return err
			}
			beta = 0
		}
	}
	for l := range q {
		s.h[l*s.m+j] = s.proj[l]
	}
	s.h[q*s.m+j] = beta
	return nil
}

// freshDirection overwrites w with a unit pseudo-random vector orthogonal to
// the first q basis vectors.
func (s *solver) freshDirection(w []float64, q int) error {
	// Own scratch: s.proj holds the coefficients of A v_j.
	first := make([]float64, q+1)
	second := make([]float64, q+1)
	for attempt := range 3 {
		fillRandom(w, uint64(1000+s.stats.Breakdowns*3+attempt))
		norm0 := s.basis.project(first, q, w)
		norm1 := s.basis.subtract(w, first, q, 1)
		s.basis.project(second, q, w)
		norm := s.basis.subtract(w, second, q, 1)
		if norm > dgks*dgks*norm1 && norm1 > 1e-8*norm0 {
			scale(1/math.Sqrt(norm), w)
			return nil
		}
	}
	return errors.New("krylov: cannot extend the Krylov basis (subspace size close to the dimension)")
}

// fillRandom fills x with pseudo-random numbers in [0.5, 1.5), drawn from
// a PCG stream per row block so the vector is the same whatever the number
// of goroutines.
func fillRandom(x []float64, seed uint64) {
	forBlocks(len(x), func(_, blk, lo, hi int) {
		rng := rand.New(rand.NewPCG(seed, uint64(blk)))
		for i := lo; i < hi; i++ {
			x[i] = 0.5 + rng.Float64()
		}
	})
}

func (s *solver) run() (Result, error) {
	// The power steps need two vectors, not the whole basis.
	var v0, spare []float64
	if s.c.power {
		v0, spare = make([]float64, s.n), make([]float64, s.n)
	} else {
		s.basis = newBasis(s.n, s.m+1)
		v0 = s.basis.col(0)
	}
	if s.c.start != nil {
		copy(v0, s.c.start)
	} else {
		fillRandom(v0, 1)
	}
	norm0 := dot(v0, v0)
	if norm0 == 0 || math.IsNaN(norm0) || math.IsInf(norm0, 0) {
		return Result{}, errors.New("krylov: start vector is zero or not finite")
	}
	scale(1/math.Sqrt(norm0), v0)
	if s.c.power {
		state, err := s.power(v0, spare)
		if err != nil {
			return Result{}, err
		}
		if state.converged {
			return s.finishPower(state), nil
		}
		s.basis = newBasis(s.n, s.m+1)
		copy(s.basis.col(0), state.vector)
	}

	m, k := s.m, s.c.k
	schur := newSchurForm(m)
	lastRow := make([]float64, m) // h_mᵀ Q: the coupling row of the Schur form
	kept := 0
	for {
		for j := kept; j < m; j++ {
			if err := s.step(j); err != nil {
				return Result{}, err
			}
		}
		if err := schur.factor(s.h, m); err != nil {
			return Result{}, err
		}
		schur.sortTop(m)
		for c := range m {
			var sum float64
			for l := range m {
				sum += s.h[m*m+l] * schur.q[l*m+c]
			}
			lastRow[c] = sum
		}
		for i := 0; i < m; i += schur.blockSize(i) {
			if s.c.norm == 0 {
				s.norm = max(s.norm, cmplxAbs(schur.eigenvalue(i)))
			}
		}
		kk := wantedSpan(schur, k)
		y := schur.ritzVectors(kk)
		estimates := ritzResiduals(y, kk, lastRow, schur)
		converged := 0
		for _, r := range estimates {
			if r <= s.c.tol*s.norm {
				converged++
			}
		}
		s.stats.Subspace = m
		if converged == kk || s.stats.Restarts >= s.c.maxRestarts {
			return s.finish(schur, y, kk, estimates)
		}

		kept = keepSize(schur, kk, converged, m)
		s.basis.rotate(m, kept, schur.q, m)
		copy(s.basis.col(kept), s.basis.col(m))
		clear(s.h)
		for i := range kept {
			copy(s.h[i*m:i*m+kept], schur.t[i*m:i*m+kept])
		}
		copy(s.h[kept*m:kept*m+kept], lastRow[:kept])
		s.stats.Restarts++
		if s.stats.Restarts%growthRestarts == 0 && m < s.c.maxM {
			s.grow(min(2*m, s.c.maxM), kept)
			m = s.m
			schur = newSchurForm(m)
			lastRow = make([]float64, m)
		}
	}
}

// growthRestarts is the number of restarts after which the subspace
// doubles, up to Settings.MaxSubspaceSize.
const growthRestarts = 10

// grow enlarges the subspace to size m after a restart that kept the
// first kept basis vectors (and the residual vector after them) and the
// (kept+1)×kept Rayleigh quotient with its coupling row.
func (s *solver) grow(m, kept int) {
	old, oldM := s.basis, s.m
	s.basis = newBasis(s.n, m+1)
	copy(s.basis.v, old.v[:(kept+1)*s.n])
	h := make([]float64, (m+1)*m)
	for i := range kept + 1 {
		copy(h[i*m:i*m+kept], s.h[i*oldM:i*oldM+kept])
	}
	s.h, s.m = h, m
	s.proj, s.reproj = make([]float64, m+2), make([]float64, m+2)
}

// wantedSpan returns the number of leading rows of T holding the k wanted
// eigenvalues: k, or k+1 if row k−1 starts a 2×2 block.
func wantedSpan(f *schurForm, k int) int {
	i := 0
	for i < k {
		i += f.blockSize(i)
	}
	return i
}

// keepSize returns the number p of Schur vectors kept at a restart: half of
// the unconverged part of the subspace on top of the converged pairs (the
// rule of the SLEPc library's Krylov–Schur solver), at least one more than
// the wanted ones, at most m−2, moved by one so as not to split a 2×2
// block.
func keepSize(f *schurForm, kk, converged, m int) int {
	p := converged + max(1, (m-converged)/2)
	p = min(max(p, kk+1), m-2)
	if f.blockSize(p-1) == 2 {
		// A 2×2 block starts at row p−1: p would split it.
		if p+1 <= m-1 {
			p++
		} else {
			p--
		}
	}
	return p
}

// ritzResiduals returns ‖A x − θ x‖ for the Ritz pairs of the leading kk
// rows of T: with A (V Q) = (V Q) T + v_m bᵀ, b the coupling row, the
// Ritz vector x = V Q [y; 0] of T y = θ y has residual v_m (bᵀy), whose
// norm is |bᵀy|/‖y‖.
func ritzResiduals(y []float64, kk int, coupling []float64, f *schurForm) []float64 {
	res := make([]float64, kk)
	for c := 0; c < kk; {
		if f.blockSize(c) == 1 {
			var by, yy float64
			for i := range kk {
				by += coupling[i] * y[i*kk+c]
				yy += y[i*kk+c] * y[i*kk+c]
			}
			res[c] = math.Abs(by) / math.Sqrt(yy)
			c++
			continue
		}
		var byRe, byIm, yy float64
		for i := range kk {
			re, im := y[i*kk+c], y[i*kk+c+1]
			byRe += coupling[i] * re
			byIm += coupling[i] * im
			yy += re*re + im*im
		}
		r := math.Hypot(byRe, byIm) / math.Sqrt(yy)
		res[c], res[c+1] = r, r
		c += 2
	}
	return res
}

// finishPower assembles the Result of a power phase that converged.
func (s *solver) finishPower(state powerState) Result {
	norm := s.norm
	if norm == 0 {
		norm = 1
	}
	res := Result{
		Values:    []complex128{complex(state.value, 0)},
		Residuals: []float64{state.residual / norm},
		Norm:      s.norm,
		Stats:     s.stats,
		Status:    Converged,
	}
	if s.c.vectors {
		// The vector is the solver's own, of unit norm.
		res.Vectors = [][]float64{state.vector}
		normalizeVectors(res.Values, res.Vectors)
	}
	return res
}

// finish assembles the Result from the Schur form of the last cycle.
func (s *solver) finish(f *schurForm, y []float64, kk int, estimates []float64) (Result, error) {
	m := s.m
	res := Result{
		Values:    make([]complex128, kk),
		Residuals: make([]float64, kk),
		Norm:      s.norm,
		Status:    Converged,
	}
	for i := 0; i < kk; i += f.blockSize(i) {
		v := f.eigenvalue(i)
		res.Values[i] = v
		if f.blockSize(i) == 2 {
			res.Values[i+1] = complex(real(v), -imag(v))
		}
	}
	norm := s.norm
	if norm == 0 {
		norm = 1 // the zero operator: residuals are absolute
	}
	for i, r := range estimates {
		res.Residuals[i] = r / norm
		if r > s.c.tol*s.norm {
			res.Status = IterationLimit
		}
	}
	if s.c.vectors {
		// Z = Q[:, :kk] Y, then X = V Z.
		z := make([]float64, m*kk)
		for l := range m {
			for c := range kk {
				var sum float64
				for i := range kk {
					sum += f.q[l*m+i] * y[i*kk+c]
				}
				z[l*kk+c] = sum
			}
		}
		n := s.n
		store := make([]float64, n*kk)
		s.basis.multiplyTo(store, n, m, kk, z, kk)
		res.Vectors = make([][]float64, kk)
		for i := range kk {
			res.Vectors[i] = store[i*n : (i+1)*n : (i+1)*n]
		}
		normalizeVectors(res.Values, res.Vectors)
		s.stats.MatVecs += residualsTo(res.Residuals, s.op, res.Values, res.Vectors, norm)
	}
	res.Stats = s.stats
	sortResult(&res)
	if res.Status != Converged {
		return res, &NotConvergedError{Restarts: s.stats.Restarts, Tol: s.c.tol, Residuals: res.Residuals}
	}
	return res, nil
}
