// Package ulam computes the leading spectrum of a map's weighted transfer
// operator from Ulam's coarse-grained transfer matrix (S. Ulam, A
// Collection of Mathematical Problems, Interscience, 1960 (from memory)):
// one of crosspec's two independent paths (DESIGN.md sections 3 and 4).
//
// # The matrix
//
// The domain box is cut into a uniform Grid of N cells B_i, and
//
//	P_ij = (1/m(B_i)) ∫_{B_i ∩ f⁻¹(B_j)} w(x) dx,   w(x) = exp(β a(x)).
//
// Rows are source cells: P_ij is the weighted fraction of cell i that f
// sends into cell j, so the rows of a closed unweighted system sum to 1. The
// transfer operator acting on densities (cell masses ρ_i) is Pᵀ: ρ ← Pᵀρ;
// its leading eigenvector, the left eigenvector u of P, is the
// (conditionally) invariant measure. P acts on functions of the cells; its
// leading right eigenvector v is constant for a closed system. For a
// family P(β), first-order perturbation theory gives
//
//	dλ_0/dβ = ⟨u, P' v⟩/⟨u, v⟩,   P'_ij = (1/m(B_i)) ∫_{B_i ∩ f⁻¹(B_j)} a w,
//
// and the average of a over the natural measure is d ln λ_0/dβ.
//
// A 1D map is assembled exactly: on each monotone lap the preimages of the
// cell edges are found to full double precision (every thirty-second by a
// batched safeguarded secant iteration from inverse quadratic
// interpolation of samples; those in between by a cubic continuation from
// them and one Newton step with the cubic's slope, a coarse step whose
// corrections are too large for the step to have converged going back to
// the secant iteration; both checked against Brent's method) and each piece
// B_i ∩ f⁻¹(B_j) enters with its exact length, or with Gauss–Legendre
// quadrature of w. Laps narrower than a cell (the Gauss map near 0) are
// integrated in the image variable: Σ_l ∫ w(x_l(y)) |x_l'(y)| dy over each
// target cell, with the integrand interpolated at Chebyshev nodes. The laps
// narrower than the lap scan's tolerance are left out; their length is
// reported (Matrix.ExcludedLength), and in a closed system their mass,
// with the integrals of w and a·w over them, is given the distribution of
// the rest of their cell, or of the nearest resolved cell for a cell they
// cover.
//
// A map of dimension 2 is assembled from piecewise-affine images: each cell
// is cut into two triangles, the map replaced on each by the affine map
// through the images of its corners, and the image triangle clipped against
// the grid, so the entries are exact for piecewise-affine maps and have
// errors of order h in the cell width h for smooth ones; triangles on which
// the map bends by more than a quarter of a cell (a jump) are cut into four
// first, up to eight times (a row across a jump is then off by at most
// 2^−7 of its mass, and such rows are a fraction of order h of all). With
// Settings.Points > 0, and in d ≥ 3, a map is assembled from a tensor grid
// of test points per cell (the midpoint rule for the same integral), their
// images located by index arithmetic: faster, but each entry then carries a
// counting error of order 1/q for q points a side that does not shrink with
// the cells, so escape rates of open maps stop converging. Images leaving
// the box escape.
//
// Both assemblies run in parallel over fixed blocks of cells and write each
// block's entries into its own slot, so the matrix is the same whatever the
// number of cores. The CSR arrays are built sorted and duplicate-free and
// wrapped by github.com/james-bowman/sparse.NewCSR (its COO conversion
// mishandles duplicates); the mat-vec runs over a compact int32 copy of the
// index arrays (12 bytes a nonzero), made at the first Apply, in one row
// block per core balanced by nonzeros.
//
// # Restriction
//
// The matrix keeps the cells that carry the dynamics (Restriction). For an
// open system: the cells on a cycle of the cell graph (its nontrivial
// strongly connected components, R. Tarjan, SIAM J. Comput. 1 (1972)
// 146–160); in the block-triangular form of P by components the others are
// zero diagonal entries, so every nonzero eigenvalue is kept exactly. For a
// closed system: the final classes, the cells of the attractor, without the
// transient ones.
//
// # Quantities
//
// Compute turns the spectrum into the quantities of DESIGN.md section 4:
// eigenvalues; escape rate −ln λ_0; pressure ln λ_0(β); mean
// d ln λ_0/dβ; Lyapunov exponent, the mean of a = ln |f'|; dimension, the
// root s of λ_0 = 1 for the weight |f'|^(1−s) (the Jacobian is absorbed by
// the change of variables), by Brent's method; decay rate −ln |λ_1/λ_0|.
// The eigenvalues come from the Krylov–Schur solver of package
// crosspec/ulam/krylov, through krylov.EigsSparse: a matrix that is still
// reducible (RestrictNone, or several classes kept) is split into its
// irreducible diagonal blocks and each solved alone, so an unrestricted
// matrix costs little more than the restricted one. The leading left and
// right eigenvectors (density, mean, Lyapunov exponent) come from
// krylov.LeadingSparse the same way: the leading block's own vectors,
// carried to the blocks that lead to it (right) and that it leads to
// (left) by back-substitution.
//
// Plain Ulam converges slowly: roughly like h log(1/h) for smooth densities,
// like h^(1/2) where the density has inverse-square-root singularities (the
// logistic map at 4), and it does not resolve the subleading spectrum of
// smooth maps. Its estimates are meant to be extrapolated in the cell size.
package ulam
