// Package krylov computes a few eigenvalues of largest modulus, and their
// eigenvectors, of a large sparse nonsymmetric real matrix A that is known
// only through its action x ↦ A x (an Operator).
//
// # Method
//
// Eigs implements the Krylov–Schur method of G. W. Stewart, "A Krylov–Schur
// algorithm for large eigenproblems", SIAM J. Matrix Anal. Appl. 23 (2001)
// 601–614, in real arithmetic. It maintains a Krylov decomposition
//
//	A V_p = V_p S_p + v_p bᵀ,
//
// V_{p+1} = [V_p v_p] with orthonormal columns, and alternates two phases:
//
//   - expansion: Arnoldi steps w = A v_j, orthogonalised against the basis by
//     classical Gram–Schmidt applied twice, the second pass delayed by one
//     step (D. Bielich, J. Langou, S. Thomas, K. Świrydowicz, I. Yamazaki
//     and E. G. Boman, Parallel Computing 112 (2022) 102940, from memory):
//     A is applied to the once-orthogonalised vector v'_j, and one sweep
//     over the basis forms both Vᵀv'_j (the second pass of v'_j) and
//     Vᵀ A v'_j; the Arnoldi relation A V = V H + … turns these into the
//     coefficients of A v_j for the final v_j without touching the basis,
//     and a second sweep writes v_j and the once-orthogonalised v'_{j+1}:
//     two sweeps a step instead of three. The last vector of a cycle gets
//     its second pass before the restart. A second pass that cancels more
//     than 1 − 1/√2 of the norm (the criterion of J. W. Daniel,
//     W. B. Gragg, L. Kaufman and G. W. Stewart, Math. Comp. 30 (1976)
//     772–795) shows a vector in the span to working precision (see
//     below). The expansion runs until the basis has m vectors;
//   - contraction: the m×m Rayleigh quotient H = V_mᵀ A V_m is brought to real
//     Schur form H = Q T Qᵀ (LAPACK's Dgehrd, Dorghr, Dhseqr in gonum), the
//     diagonal blocks of largest modulus are moved to the top by orthogonal
//     swaps (Dtrexc, which keeps the 2×2 block of a complex pair whole), and
//     the decomposition is truncated to the p leading Schur vectors,
//     V_p ← V_m Q[:, :p], S_p ← T[:p, :p], bᵀ ← bᵀQ[:, :p].
//
// A Ritz pair (θ, x = V_m Q y), T y = θ y, has the residual
// ‖A x − θ x‖ = |bᵀ y| for ‖y‖ = 1, read off the small problem at no cost. A
// pair is accepted when the residual is at most Tol·‖A‖; by first-order
// perturbation theory its eigenvalue is then accurate to about
// κ·Tol·‖A‖, κ = ‖u‖‖v‖/|uᴴv| the condition number (u, v left and right
// eigenvectors). Eigenvectors are those of the leading block of T (Dtrevc3)
// mapped back by V_m Q.
//
// When an expansion step finds an invariant subspace (the new vector
// vanishes after reorthogonalisation) the decomposition is continued with a
// fresh pseudo-random direction and a zero coupling entry, which keeps
// the Krylov decomposition exact.
//
// The subspace size m doubles every 10 restarts while the wanted pairs
// have not converged, up to Settings.MaxSubspaceSize: slow convergence
// signals crowded moduli near the wanted ones, where a small subspace can
// also settle on an eigenvalue that is not among the largest (its
// implicit filter has roots, the discarded Ritz values, next to the wanted
// eigenvalue).
//
// Problems with n ≤ 2m are solved densely with gonum's mat.Eigen; a
// reducible matrix (its graph of nonzeros not strongly connected) is first
// split into the irreducible diagonal blocks of its block triangular form,
// whose eigenvalues are those of the matrix, each with only its own
// block's conditioning (reducibleEigen).
//
// # Reducible sparse matrices
//
// EigsSparse, for a matrix given by its entries (SparseMatrix), splits a
// reducible matrix the same way before any Krylov iteration: Tarjan's
// algorithm on the pattern (IrreducibleBlocks, linear in the nonzeros:
// 36–41 ms for the 10⁶-row, 2.4·10⁶-nonzero logistic-repeller matrix),
// then Eigs on every diagonal block of more than one row and the
// diagonal entry of every other. A transfer matrix on a whole grid is
// mostly transient cells: the unrestricted 10⁶-cell Ulam matrix of the
// logistic repeller 6x(1 − x) has 998 803 blocks and only 1 198 rows in
// blocks of more than one row, that of the Hénon map (1.4, 0.3) on a
// 1024 × 1024 grid 12 009 of 1 048 576, so the Krylov basis, whose sweeps
// bound the cost, shrinks by the same factor. The eigenvalues are
// unchanged (those of the diagonal blocks), and each has only its own
// block's conditioning. LeadingSparse does the same for the leading
// eigenvalue and its left and right eigenvectors: the leading block's
// pair, carried to the other blocks by back-substitution (Neumann series
// on the diagonal blocks). The Hénon map's density on the unrestricted
// 1024 × 1024 grid took 1.2 s with it (assembly included), 5.1 s before.
//
// # The leading eigenvalue alone
//
// For Wanted = 1 with the default subspace, Eigs first makes power steps
// x ← A x. When the other eigenvalues fill a disc centred at 0, as the
// spurious eigenvalues of an Ulam matrix do, z^t is the best Krylov
// polynomial for separating λ_0 (maximum principle; common practice, no
// source): no Krylov subspace converges in fewer mat-vecs, and a power step
// reads two vectors instead of the whole basis twice. The residual of the
// Rayleigh quotient is computed in the same sweep as the quotient (see
// power.go), only at the steps where the convergence factor measured so far
// predicts that it may be small, and confirmed by an explicit sweep. When
// the factor stays above 0.8 after 16 steps (an eigenvalue close to λ_0 in
// modulus, or a leading complex pair), Krylov–Schur takes over from the
// last iterate.
//
// # Left eigenvectors
//
// Leading runs the solver on A and on Aᵀ (given as a second operator) and
// returns λ_0 with right and left eigenvectors v, u scaled so that
// ⟨u, v⟩ = 1, the normalisation of first-order perturbation theory:
// dλ_0/dβ = ⟨u, (dA/dβ) v⟩ for a family A(β). λ_0 is returned as the
// two-sided Rayleigh quotient ⟨u, A v⟩/⟨u, v⟩.
//
// # Performance and determinism
//
// The basis is one contiguous array of n·(m+1) numbers, column after column.
// The long-vector kernels (the Gram–Schmidt sweeps, the basis rotation
// V_m Q at a restart, done in place) run over fixed blocks of 32768 rows
// spread over the cores, and within a block over sub-blocks that keep the
// vectors being written in cache; partial dot products are kept per block
// and summed in block order. The inner kernels take four basis vectors and
// two target vectors at a time, with AVX2 fused multiply–adds where the
// processor has them (kernels_amd64.s) and otherwise a portable loop doing
// the same exactly rounded operations in the same order (math.FMA). On
// the 2-core reference machine the two fused sweeps of a step read the
// basis at about 26 GB/s, against 13–18 GB/s for the same sweeps built on
// the two-lane loops of gonum's floats, which were limited by arithmetic,
// not by memory. Results are the same bytes whatever GOMAXPROCS is (and
// whichever kernel runs), provided the Operator is itself deterministic.
//
// CSRIndex is the sparse mat-vec of the Ulam matrices and of EigsSparse's
// diagonal blocks: 32-bit indices checked once, rows in pieces of equal
// nonzeros taken in turn by the cores, and on amd64 a row loop in
// assembly that does the Go loop's operations in the same order. On the
// 10⁶-cell logistic-repeller matrix it took 1.14–1.39 ms (median, 2
// cores) where a plain C loop on the same arrays took 1.00 ms in the same
// runs (ulam/scripts/matvec_compare.sh); the Go loop took 2.4 ms.
//
// # Alternatives measured and not kept
//
// For several eigenvalues of 10⁶-cell Ulam matrices the two sweeps per step
// are bound by memory bandwidth, so two ways of reading the basis fewer
// times per new vector were built, tested against mat.Eigen and measured
// (2026-12-02, k = 6 on the logistic-repeller matrix, single-vector path
// 4.5–5.2 s, 179–216 mat-vecs):
//   - s-step expansion (s mat-vecs in a Newton basis of Ritz shifts, the
//     block orthogonalised at once, H recovered as (R B − [H R_a; 0]) T⁻¹):
//     the block sweeps cost 5× less per vector at s = 8, but the round-off
//     carried into H through H R_a forced short blocks and more mat-vecs
//     (276); no time gained.
//   - block Krylov–Schur (block size b = 2…4, block Gram–Schmidt twice
//     with Cholesky QR): a block space of dimension m reaches polynomial
//     degree m/b only, and with the crowded moduli of Ulam spectra the
//     degree is what counts: 1.8–7.9× the mat-vecs (533 at b = 2), 2.4×
//     the time at best.
package krylov
