// Package cycles computes the spectrum of the weighted transfer operator
// of a map, and the averages derived from it, from its prime cycles: cycle
// expansions of spectral determinants and dynamical zeta functions, order
// by order in cycle length.
//
// # Traces and the spectral determinant
//
// A prime cycle p has length n_p, orbit sum A_p (of the observable, or
// ln|Λ_p|) and Floquet multipliers Λ_{p,i}. With the weight e^{βa(x)} the
// trace formula for maps reads
//
//	C_n = tr Lⁿ = Σ_p n_p Σ_{r≥1} δ_{n, r n_p} e^{rβA_p} / Π_i |1 − Λ_{p,i}^r|,
//
// and the spectral determinant is
//
//	det(1 − zL) = exp(−Σ_n C_n zⁿ/n) = 1 − Σ_{n≥1} Q_n zⁿ,
//
// expanded by the Newton (Plemelj–Smithies) recursion
// Q_n = (C_n − Σ_{k<n} C_{n−k} Q_k)/n. The β-derivative goes through the
// same recursion by the product rule: with C'_n = ∂_β C_n (the trace sum
// with an extra factor r A_p),
//
//	n Q'_n = C'_n − Σ_{k<n} (C'_{n−k} Q_k + C_{n−k} Q'_k).
//
// Truncating at length N keeps Q_1…Q_N; the zeros z_k of the truncated
// polynomial give eigenvalue estimates λ_k = 1/z_k. They are computed as
// the eigenvalues of the companion matrix of the reciprocal polynomial
// λ^N F(1/λ) (gonum's mat.Eigen) and polished by Newton's method.
//
// # Dynamical zeta functions
//
// 1/ζ(z) = Π_p (1 − t_p), t_p = z^{n_p} e^{βA_p}/|Λ_p|, Λ_p the product of
// the expanding multipliers, is multiplied out as a polynomial truncated at
// degree N (fundamental terms and curvature corrections). For 1D maps the
// family 1/ζ_k = Π_p (1 − t_p/Λ_p^k), with the sign of Λ_p kept, factors
// the determinant: since |1 − Λ^r| = |Λ|^r (1 − Λ^{−r}) for |Λ| > 1,
// det(1 − zL) = Π_{k≥0} 1/ζ_k.
//
// # The factorized determinant (1D maps)
//
// The Newton coefficients of det(1 − zL) decay like Λ^{−n²/2} but come
// from traces of order one, so each carries an absolute error ≈ ε and the
// floor of the k-th zero grows like ε|z_k|ᴺ (for the doubling map,
// ε·2^{kN}). FactorizedDeterminant expands instead each factor of
// det(1 − zL) = Π_{k≥0} 1/ζ_k on its own, 1/ζ_k = Π_p (1 − t_p/Λ_p^k), and
// takes each eigenvalue from the factor it belongs to.
//
// Which factor: det_k = Π_{j≥k} 1/ζ_j is the spectral determinant of the
// operator L_k with weight w/(|f'| f'^k) (same trace formula with
// 1/(|Λ|^r Λ^{kr}) in place of 1/|Λ|^r, summed as above), an entire
// function, and 1/ζ_k = det_k/det_{k+1}. So 1/ζ_k is meromorphic: its
// zeros are eigenvalues of L_k that L_{k+1} lacks, its poles eigenvalues
// of L_{k+1} that L_k lacks, and the product telescopes to det_0. Its
// truncations converge geometrically inside the disk |z| < R_k bounded by
// its first pole, estimated from the decay of its own coefficients (ratio
// test, R_k = ∞ when they vanish to round-off). A zero of the truncated
// 1/ζ_k is kept as an eigenvalue estimate of L when the series of 1/ζ_k
// and of every earlier factor have converged there, (|z|/R_j)ᴺ ≤ 10⁻²
// for j ≤ k: this drops the zeros that partial sums of a series put near
// their circle of convergence (Jentzsch), and a zero of 1/ζ_k that a
// pole of an earlier factor cancels in the product (a pole of 1/ζ_j lies
// on or beyond its circle). For a map whose spectra of L_k are nested —
// full-branch linear maps, the doubling map, where 1/ζ_k = 1 − zλ_k
// exactly — every eigenvalue is the leading zero of its own factor. For
// other maps an eigenvalue can be a second zero of a factor, or lie
// beyond every circle and be missed: CompareSpectra sets both expansions
// side by side. (For the logistic repeller x → 6x(1 − x), λ_1 is the
// second zero of 1/ζ_0, and λ_2 is missed.)
//
// Conditioning: the order-n coefficient of 1/ζ_k is a sum over products
// π of distinct cycle weights of total length n, of magnitude
// Σ_π |t_π|/|Λ_π|^k, each good to about r_π ε (r_π its roundings), and the
// floor of a zero z is Σ_n floor_n |z|ⁿ/|F'(z)|. At z_k the magnitudes are
// the coefficients of Π_p (1 + x_p), x_p = |t_p|/|Λ_p|^k, at |z_k|; and
// Π_p (1 + x_p) = Π_p (1 − x_p²)/Π_p (1 − x_p), whose denominator is 1/ζ_k
// itself when every Λ_p > 0 and t_p > 0. Its radius of convergence is then
// the leading zero z_k, where its coefficients times |z_k|ⁿ stay of order
// one at every n instead of growing like |z_k|ⁿ: the floor grows only like
// N² ε (n roundings per product, N orders). For the doubling map,
// t_p/Λ_p^k = (z/2^{k+1})^{n_p}, and Π_p (1 + u^{n_p}) = (1 − 2u²)/(1 − 2u)
// has order-n coefficient 2^{n−1}uⁿ = 1/2 at u = 1/2, z = 2^k; with
// F'(z_k) = −2^{−k} every λ_k = 2^{−k} keeps a relative floor ≈ N²ε
// whatever k. Negative multipliers (odd k) make the magnitudes grow like
// (|z_k|/ρ_k)ⁿ, ρ_k the leading zero of Π_p (1 − |t_p|/|Λ_p|^k): still
// geometric with the ratio of one factor's cancellation (2.1 for slopes 3
// and −5, k = 1). A zero that is not the leading one of its factor is no
// better conditioned than in the determinant: its floor grows like
// ε|z/z_lead|ᴺ. Each weight is computed as a power of |Λ_p| (math.Pow,
// binary powering) rather than an exponential of (k+1)ln|Λ_p|, whose
// argument would carry an error ε(k+1)ln|Λ_p|, and the floors count the
// roundings of each product; coefficients at the top of a truncation that
// do not exceed their floors are dropped before its zeros are found.
//
// The leading eigenvalue, and the quantities that differentiate the
// expanded function (mean, Lyapunov exponent, dimension), come from
// 1/ζ_0 alone: its leading zero is λ_0, and the cycle averaging formula
// holds for any function whose zero follows z_0(β), so they equal those
// of DynamicalZeta. The coefficient-decay check runs on the Newton
// determinant of the same cycles, whose coefficients, unlike those of a
// factor, must decay faster than geometrically.
//
// # Quantities
//
// The leading zero z_0 = 1/λ_0 gives the escape rate γ = ln z_0 (β = 0)
// and the pressure P(β) = −ln z_0(β). Averages come from the cycle
// averaging formula ⟨a⟩ = ⟨A⟩/⟨n⟩ with ⟨A⟩ = −∂_β F and ⟨n⟩ = −z∂_z F at
// z_0 (F the truncated determinant or zeta function), which equals dP/dβ
// and, at β = 0, the average over the natural measure of an open system
// too. The Lyapunov exponent of a 1D map is the average of A_p = ln|Λ_p|;
// the dimension of a 1D conformal repeller is the root s of Bowen's
// equation P(−s ln|f'|) = 0, found at each length by Brent's method as the
// root of z_0(s) = 1 with the weight |Λ_p|^{1−s}; the decay rate is
// −ln|λ_1/λ_0|. These formulas are the standard ones of the cycle
// expansion literature (common practice).
//
// # Convergence, round-off and missing cycles
//
// For smooth hyperbolic maps the determinant's coefficients decay faster
// than exponentially (like Λ^{−n²/2}), so the estimates converge faster
// than exponentially in N, until the round-off floor: the coefficients are
// small differences of large terms, and an error ε × (sum of the magnitudes
// of the terms that cancel) in c_n moves a zero z_k by
// Σ_n floor_n |z_k|ⁿ/|F'(z_k)|, which grows like |z_k|ᴺ. Each estimate
// carries this floor; the sequence over N is cut where its changes reach
// the floor or stop decreasing (Status), and the value before the cut is
// reported with an error estimate. Missing cycles leave the determinant's
// zeros in place but add poles, so the coefficients decay only
// geometrically: Diagnostics flags it.
//
// # The cycle search
//
// Search finds every prime cycle up to a length. A 1D map is searched by
// itinerary: every admissible Lyndon word over its laps names at most one
// prime cycle, the fixed point of the composed inverse branches, which
// contract for an expanding map; pruned words are recognised by the
// residual they leave. Maps of dimension d ≥ 2 are searched from seeds by
// the stabilising transformations of P. Schmelcher and F. K. Diakonos,
// Phys. Rev. Lett. 78 (1997) 4733, with the step of R. L. Davidchack and
// Y.-C. Lai, Phys. Rev. E 60 (1999) 6172, and polished by multiple-shooting
// Newton; multipliers come from a QR-accumulated Jacobian product. Every
// length is checked against the counts of the symbolic dynamics (necklace
// numbers, or tr Tⁿ of a grammar of forbidden words) and against the closed
// walks of a box partition's transition graph. The details are in Search's
// documentation. Cycle files (JSON Lines or CSV) are written per length, so
// a search resumes; Verify re-converges and checks cycles read from
// elsewhere.
//
// Lyndon words (Duval's algorithm) and their necklace count name the
// prime cycles of a full shift.
package cycles
