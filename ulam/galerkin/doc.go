// Package galerkin computes the spectrum of a 1D map's weighted transfer
// operator (L φ)(y) = Σ_{x: f(x)=y} w(x) φ(x)/|f'(x)|, w = exp(β a), from
// higher-order discretizations that resolve the subleading eigenvalues
// which Ulam's piecewise constants (package crosspec/ulam) miss.
//
// # Piecewise polynomials (Cells)
//
// On each of N cells C_j (equal, or graded: Settings.Edges, GradedEdges)
// the basis is the orthonormal Legendre polynomials
// φ_{j,b}(x) = sqrt((2b+1)/h_j) P_b(2(x − c_j)/h_j − 1), b ≤ p, so the mass
// matrix is the identity and the matrix is the Galerkin projection
//
//	K_{(j,b),(i,a)} = ∫_{C_j} w(x) φ_{j,b}(x) φ_{i,a}(f(x)) dx = ⟨φ_{i,a}, L φ_{j,b}⟩,
//
// rows by source cell as in ulam (p = 0 gives ulam's P exactly). The
// integral runs over the exact preimage pieces C_j ∩ f⁻¹(C_i) of each
// monotone lap (target edges mapped back by Brent's method,
// dynsys.System.Preimage), with Gauss–Legendre quadrature of p+8 nodes in x
// on each piece (exact for polynomial maps: degree ≤ 2p+15). This is the
// piecewise-polynomial generalisation of Ulam's method (discontinuous
// Galerkin; common practice, no source). The matrix is stored in CSR
// form; eigenvalues come from crosspec/ulam/krylov (dense for size ≤ 1200).
//
// For p > 0 the matrix is no longer positive. Its spectrum holds, besides
// approximations of L's eigenvalues, eigenvalues of functions with jumps
// at the cell edges: nilpotent blocks when the edges are preimages of the
// domain's ends (dyadic cells for the doubling map), and eigenvalues
// 1/Λ-like where an edge lies on a periodic orbit (the doubling map with
// N = 7; the skew tent's fixed point 2/3 gives −1/2). The leading
// eigenvalue of a positive operator is real and positive: Compute checks
// it (ErrLeading) for every quantity but the eigenvalues. For the small
// subleading eigenvalues of analytic maps, few wide cells of high degree
// (N = 4, p = 14) beat many narrow ones, whose jump modes crowd in.
//
// No filter separates the two kinds; one was built and measured
// (2026-12-02) and not kept. For the density eigenvector u of λ the
// refinement residual ρ = ‖K₂ᵀPu − λPu‖/(|λ|‖u‖), K₂ the matrix on the
// halved cells and P the exact prolongation, equals the share of Lφ that
// N cells do not resolve, (Π_{2N} − Π_N) L φ. It does not tell spurious
// from true: jump modes on an edge that lies on a periodic orbit are true
// eigenfunctions of L on piecewise-smooth functions (the skew tent's −1/2
// at N = 12: ρ = 3e-15); dyadic cells map into coarser cells, so every
// eigenvector of the doubling map has ρ ≈ 0; and for generic maps the
// spurious eigenfunctions are nearly continuous but highly non-normal
// (the invented stirred loop at N = 32, p = 6: −0.0335 has ρ = 5e-5 and
// condition 5e5, and moves 36 % when the cells are halved), while true
// subleading eigenvalues reached ρ = 1e-7. κρ, the predicted relative
// shift, separated the generic cases only by a factor 2.5 (true ≤ 6.6,
// spurious ≥ 16).
//
// Those jump modes can make the smooth eigenvalues ill-conditioned in the
// whole matrix (condition 1.5e7 for 2^(−5) of the doubling map at N = 16,
// p = 5). Where a branch is linear and its ends are cell edges, the
// entries that raise the polynomial degree vanish exactly; the assembly
// keeps them exact zeros (an entry below its own round-off bound is set to
// zero, and a piece narrower than a few ulps of the domain is left out),
// so the matrix is block triangular by degree and the dense solver of
// crosspec/ulam/krylov, which splits a reducible matrix into its
// irreducible diagonal blocks, finds each eigenvalue to within a few ε of
// its own block (the doubling map's 2^(−k), k ≤ 7, to 2e-14 for every
// N ≤ 70 up to size 400). Larger cell matrices are split the same way
// (krylov.EigsSparse, which finds the blocks from the sparsity pattern;
// krylov.LeadingSparse for the leading eigenvectors) and each block solved
// by itself: at N = 512, p = 3 the whole-matrix
// Krylov iteration missed 2^(−3) by 3e-10, the blocks give it to 1e-12.
//
// # Global Chebyshev basis (Chebyshev)
//
// For analytic maps with full branches the transfer operator is
// discretized by collocation at n Chebyshev–Lobatto points y_i of the whole
// domain, A_ik = (L ℓ_k)(y_i) with ℓ_k the Lagrange polynomials (evaluated
// by the barycentric formula), a dense n×n matrix whose eigenvalues
// converge geometrically in n (spectral methods for transfer operators of
// expanding maps: C. Wormell, Numer. Math. 142 (2019) 421–463 (from
// memory)). A acts on density values at the points; its leading right
// eigenvector is the density, normalised by Clenshaw–Curtis quadrature.
// Branches whose image ends inside the domain make L φ non-smooth there
// and lose the geometric convergence; a critical point mapped into the
// domain (f' = 0) is refused. At a lap end f' and the weight are the
// lap's one-sided limits, so a kink between two analytic branches (the
// tent map's 1/2) is no obstacle.
//
// # Laps accumulating at an end (the Gauss map)
//
// The Gauss map's laps [1/(k+1), 1/k] accumulate at 0, and the lap scan
// resolves them only down to a width of 1e-9 of the domain. The laps next
// to an excluded end form a run, ranked r = 0, 1, … from the outermost;
// their natural index n = ν_0 + r, with ν_0 = D/W − 1 from the outermost
// lap's distance D to the accumulation point and width W (exact for
// branches 1/(n + y); the index must grow by one a lap, checked at three
// ranks, else no tail model is used and the excluded mass is reported in
// ExcludedLength). The contribution a(n) of lap n to a matrix row is
// assumed to be n^(−P) G(1/n) with G analytic on [0, 1/ν_0]: P = 2 for a
// bounded weight (true for a simple pole of f, e.g.
// G(t) = ∫ ψ(y) φ(t/(1+yt)) (1+yt)⁻² dy for the Gauss map, whose
// singularities lie at t ≤ −1), P = 2 − 2β for the weight |f'|^β, which
// grows like n^(2β) (the sum diverges for β ≥ 1/2: ErrTailDiverges). G is
// interpolated at the ranks nearest to Chebyshev points of t on
// [0, 1/ν_0], and the interpolant is summed over every n ≥ ν_0 (directly
// to 10⁵ ranks, then by the midpoint Euler–Maclaurin formula with the
// integral in closed form), which gives weights s_m with
// Σ_n a(n) ≈ Σ_m s_m a(n_m): the whole infinite tail from about 20 laps
// (TailNodes). The same sums with ln n inside give weights s'_m for
// Σ_n ln(n) a(n), which the derivative in β of |f'|^β needs:
// ln |f'| = 2 ln n + (analytic in 1/n) on lap n, so the Lyapunov exponent
// of the Gauss map comes out to about 1e-14. Each rule is checked on
// telescoping sums, Σ_{n ≥ ν} [(n+y)^(1−P) − (n+y+1)^(1−P)] = (ν+y)^(1−P)
// and its logarithmic twin, and its node count lowered until the relative
// error is below 1e-13 (TailCheck reports it); the sample laps are
// integrated in the image variable, where narrow laps lose no digits.
// With the Cells basis every lap inside the end cell goes to the model;
// with the Chebyshev basis the first TailStart (64) laps are summed
// exactly. The model needs a system observable analytic in 1/n at the
// accumulation point; one with a singularity there is outside it.
//
// # Quantities
//
// Compute mirrors ulam.Compute (DESIGN.md section 4): eigenvalues;
// escape rate −ln λ_0; pressure ln λ_0(β); mean d ln λ_0/dβ from
// first-order perturbation theory, ⟨u, M' v⟩/(λ_0⟨u, v⟩) with u, v the
// left and right leading eigenvectors (krylov.Leading) and M' the matrix
// of a·w; lyapunov the same with a = ln |f'|; dimension the root s of
// λ_0 = 1 for the weight |f'|^(1−s) (Brent's method; the Jacobian is
// absorbed in the integrals); decay rate −ln |λ_1/λ_0|, with the
// subleading eigenvalue actually resolved.
//
// # Accuracy reached (Gauss map, λ_1 = −0.3036630028987326586, E. Wirsing,
// Acta Arith. 24 (1974) 507–528)
//
//	basis      N   p   size   nonzeros  digits
//	cells      8   1     16        164     2.7
//	cells     32   1     64       1416     3.2
//	cells      8   3     32        656     5.6
//	cells     32   3    128       5664     8.2
//	cells      8   5     48       1476     8.5
//	cells     32   5    192      12744    13.0
//	cells      4   9     40       1300    12.5
//	cells      8   9     80       4100    13.6
//	chebyshev           10        100     5.9
//	chebyshev           20        400    13.7
//	chebyshev           40       1600    15.1
//	chebyshev           80       6400    14.7
//
// (TestGaussDigitsTable prints it.)
package galerkin
