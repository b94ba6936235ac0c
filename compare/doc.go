// Package compare turns the sequences of estimates of the two computational
// paths of crosspec into values with error bars, and compares them: the Ulam
// estimates v_N on partitions of N cells (N typically doubling), and the
// cycle-expansion estimates v_n truncated at cycle length n = 1, 2, …. It
// works on plain sequences of numbers and knows nothing of how they were
// computed.
//
// # Ulam sequences (Ulam)
//
// Plain Ulam estimates converge algebraically in the cell size h = 1/N,
// error ≈ C h^p, in 1D roughly like log N / N. For each three consecutive
// points the local order p solves
//
//	(v_{i+1} − v_i) / (v_{i+2} − v_{i+1}) = (h_i^p − h_{i+1}^p) / (h_{i+1}^p − h_{i+2}^p),
//
// which is r^p for a constant refinement ratio r; it is undefined when the
// two differences have opposite signs. When the last local orders (up to
// SpreadPoints − 1 of them) are defined, lie in [MinOrder, MaxOrder] and
// within OrderTolerance of each other, the order is stable and each triple
// gives the Richardson value R = v_{i+2} + (v_{i+2} − v_{i+1}) h_{i+2}^p /
// (h_{i+1}^p − h_{i+2}^p) (L. F. Richardson, Phil. Trans. R. Soc. A 210
// (1911) 307–357). The value is the last R and the error SpreadFactor times
// the spread max_j |R_j − R_last| of the Richardson values; Richardson is
// kept only if the R_j spread less than the raw estimates they come from.
//
// Otherwise the status is Irregular: plain Ulam errors change sign and size
// erratically with N (N·error varying by two orders of magnitude between
// neighbouring N), so no fitted rate is trusted. The value is the last
// estimate and the error
//
//	Error = SpreadFactor · max_{i in last K} |v_i − v_last|,   K = SpreadPoints,
//
// the reported order being the least-squares slope of ln|v_{i+1} − v_i|
// against ln N (gonum stat.LinearRegression).
//
// # Cycle sequences (Cycles)
//
// Cycle expansions of smooth hyperbolic maps converge faster than
// exponentially, successive differences d_n = v_{n+1} − v_n ≈ exp(−a n²);
// others geometrically. A parabola (concave) or a line is fitted to ln|d_n|
// over the last FitPoints differences; the future differences are
// predicted from it, with the sign pattern of the last ratios d_{n+1}/d_n
// (monotone or alternating; irregular signs give status Irregular, a
// value without tail and TailFactor times the predicted sum of |d| as the
// error), and their sum, the tail, is added to the last
// estimate. The fit is back-tested: fitted on the windows ending one and two
// steps earlier, it predicts the next ln|d|; the larger miss δ is the
// uncertainty of the predicted decay. The error is TailFactor times the
// change of the tail when every predicted term decays δ more slowly per
// step, |T(δ) − T(0)| with T(δ) = Σ_k d̂_k e^{kδ}. For a geometric sequence
// the fit is exact and the tail d q/(1 − q) is Aitken's Δ² extrapolation
// (A. C. Aitken, Proc. R. Soc. Edinburgh 46 (1926) 289–305, from memory).
// A slowed trend that diverges, or rises above the last difference before
// it falls, predicts no tail: the status is then Irregular with the spread
// of the last estimates as the error. With Settings.NonMonotone (cycle
// expansions of maps of dimension d ≥ 2, whose steps may grow before they
// shrink) the error is at least TailFactor times the last difference.
//
// CyclesWithFloors takes the round-off floor of every estimate as well, as
// the expansion computes it from the rounding of its coefficients. The
// noise of a zero z of the truncated determinant grows like ε|z|^n, so the
// estimates of a zero far out (a subleading eigenvalue: the decay rate of
// the logistic repeller 6x(1 − x), |z| ≈ 15, reaches its floor of 3.4e-9
// at length 7 and is off by 3e-4 at length 12) converge, then drift with
// the noise: the sequence ends at the first estimate that agrees with the
// one before within their floors, which is reported with an error of at
// least those floors and the predicted tail (the bound the expansion's own
// at-floor estimate uses). The cycles path of check uses it, and
// GalerkinWithFloors does the same for the global Chebyshev basis, whose
// subleading eigenvalues carry floors of their own condition numbers.
//
// Galerkin applies the same model to a higher-order discretization over a
// sequence of sizes, on the index of the size (such bases converge at least
// geometrically in it); its reasons name the causes of a stall that fit it
// (spurious eigenvalues of the basis, a quadrature or tail-model floor).
//
// # Stagnation
//
// Detected in this order, and reported in Status and Reason:
//   - RoundOffFloor: every difference from some point on is at most
//     RoundOff·max|v| (for Ulam at least 2·SolverTol·max|v|, the noise of
//     the eigen-solves' stopping test, and two such differences are needed,
//     a single small one being usually an erratic crossing). The value is the mean of the
//     estimates on the floor, the error SpreadFactor times their range (at
//     least four units of round-off).
//   - too few points (TooFewPoints) below MinPoints estimates.
//   - for cycles (and Galerkin), a stall: over the last StallWindow differences the larger
//     one of the second half is at least StallRatio per step of the larger one
//     of the first half. Alternating signs make it Oscillating (value the
//     midpoint of the last two, error SpreadFactor times half the swing);
//     differences ten times larger before the window make it a Plateau
//     (missing cycles; the error is never below the plateau's level, the
//     largest recent difference); otherwise NotConverging. A last difference
//     not a decade below the largest is NotConverging too.
//
// # Calibration
//
// The error bar is meant to contain the truth, |Value − truth| ≤ Error, and to
// be at most MaxOverstatement = 100 times the true error, the true error being
// floored at TrueErrorFloor = 100 ε |truth| where an extrapolation is exact to
// round-off. SpreadPoints = 4 and SpreadFactor = 2 were chosen on erratic
// synthetic Ulam sequences v_N = L + s_N C a_N / N^q (random signs s_N,
// amplitudes a_N = 1 + 0.9 sin(kN), log-uniform over two decades, or
// (1 + 0.9 sin(kN)) ln N; q = 1/2 and 1; N = 2^10 … 2^14, 2^17, 2^20), where
// they cover the truth in 99.8% of 3600 sequences with a median bar 13 times
// the true error; K = 3 covers only 98%, K = 5 costs a median factor 23. The
// price of erratic errors: 11% of these bars exceed 100 times the true error,
// because the last error is by chance far below the typical one, which no
// rule built on the estimates alone can see.
// TailFactor = 3 was chosen on synthetic cycle sequences (exp(−a n² + b n),
// sums of two geometric terms, and super-exponential decay modulated by
// 1 + 0.3 sin(kn)), where the Converged estimates cover the truth in 98–100%
// of the cases with median bars 7 to 16 times the true error (1%, 6% and 18%
// of the bars over 100 times, the last for beating geometric terms). The tests
// print these tables. Calibrate measures the same coverage on systems with
// known answers.
//
// # Comparison and advice
//
// Compare combines the two error bars in quadrature, e = sqrt(e_u² + e_c²),
// and calls the paths in agreement when |v_u − v_c| ≤ 2e, in disagreement
// when it exceeds 5e, inconclusive in between. Advise turns the fitted
// convergence into a recommended cycle length and partition size for a
// tolerance. FormatUncertainty writes value and error in the parenthesis
// notation of papers, 0.8314023(4).
package compare
