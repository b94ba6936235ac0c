package cycles

// Cycle is one prime cycle of a map: a periodic orbit of least period Len,
// given by one of its points, its Floquet multipliers and the sum of the
// observable along the orbit.
type Cycle struct {
	// Itinerary is the symbol sequence of the orbit starting at Point, one
	// character a symbol ('0'…'9', then 'a'…'z'), in its least rotation
	// (a Lyndon word); empty when the system has no symbolic dynamics.
	Itinerary string
	// Len is the least period n_p.
	Len int
	// Point is one point of the orbit, d coordinates.
	Point []float64
	// Multipliers are the d Floquet multipliers Λ_{p,i}, the eigenvalues of
	// the Jacobian of f^{n_p} along the orbit, sorted by decreasing modulus.
	// For a 1D map Multipliers[0] is Λ_p = Π f'(x_i).
	Multipliers []float64
	// ObservableSum is A_p = Σ_i a(x_i) over the n_p points of the orbit;
	// zero when the system has no observable.
	ObservableSum float64
}
