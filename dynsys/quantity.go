package dynsys

import (
	"fmt"
	"strings"
)

// Quantity names a number that both computational paths can estimate
// (DESIGN.md section 4).
type Quantity string

// The quantities of DESIGN.md section 4.
const (
	// Eigenvalues are the k leading eigenvalues of the weighted transfer
	// operator; the reported value is the leading one, λ_0.
	Eigenvalues Quantity = "eigenvalues"
	// EscapeRate is γ = −ln λ_0 at β = 0.
	EscapeRate Quantity = "escape-rate"
	// Pressure is P(β) = ln λ_0(β) for the weight exp(β a(x)).
	Pressure Quantity = "pressure"
	// Mean is the average ⟨a⟩ of the observable over the natural measure,
	// dP/dβ.
	Mean Quantity = "mean"
	// Lyapunov is ⟨ln |f'|⟩ over the natural measure (1D maps).
	Lyapunov Quantity = "lyapunov"
	// Dimension is the root s of P(−s ln |f'|) = 0 (Bowen's equation,
	// 1D conformal repellers).
	Dimension Quantity = "dimension"
	// DecayRate is −ln |λ_1/λ_0| (closed systems).
	DecayRate Quantity = "decay-rate"
)

// Quantities lists every quantity in the order of DESIGN.md section 4.
var Quantities = []Quantity{Eigenvalues, EscapeRate, Pressure, Mean, Lyapunov, Dimension, DecayRate}

// ParseQuantity returns the quantity named s, or an error that lists the
// known names.
func ParseQuantity(s string) (Quantity, error) {
	for _, q := range Quantities {
		if string(q) == s {
			return q, nil
		}
	}
	names := make([]string, len(Quantities))
	for i, q := range Quantities {
		names[i] = string(q)
	}
	return "", fmt.Errorf("unknown quantity %q (known: %s)", s, strings.Join(names, ", "))
}
