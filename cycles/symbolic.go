package cycles

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// Grammar is the symbolic dynamics of a map: an alphabet of Symbols
// symbols and the words that never occur in an itinerary. No forbidden
// words means complete (full-shift) dynamics.
//
// A grammar of forbidden words of length at most L is a subshift of finite
// type: its admissible bi-infinite itineraries are the walks on the
// de Bruijn-style graph whose states are the admissible words of length
// L−1 and whose edges are the admissible words of length L. With T the 0/1
// matrix of that graph, the number of periodic points of period n
// (fixed points of fⁿ) is tr Tⁿ, the topological zeta function is
// 1/ζ_top(z) = det(1 − zT) = exp(−Σ_n tr Tⁿ zⁿ/n), and the topological
// entropy is ln of T's leading eigenvalue (common practice, no source).
type Grammar struct {
	// Symbols is the size m of the alphabet {0, …, m−1}.
	Symbols int
	// Forbidden are the forbidden words, as symbol values.
	Forbidden [][]byte

	longest int
}

// NewGrammar returns the grammar on m symbols whose forbidden words are
// spelled in the itinerary convention ('0'…'9', 'a'…'z'). It returns an
// error naming the word when a word is empty or uses a symbol outside the
// alphabet.
func NewGrammar(m int, forbidden []string) (*Grammar, error) {
	if m < 1 || m > MaxSymbols {
		return nil, fmt.Errorf("cycles: alphabet of %d symbols, expected 1 to %d", m, MaxSymbols)
	}
	g := &Grammar{Symbols: m}
	for _, w := range forbidden {
		word, err := ParseItinerary(w, m)
		if err != nil {
			return nil, fmt.Errorf("cycles: forbidden word %q: %v", w, err)
		}
		if len(word) == 0 {
			return nil, errors.New("cycles: empty forbidden word")
		}
		g.Forbidden = append(g.Forbidden, word)
		g.longest = max(g.longest, len(word))
	}
	return g, nil
}

// GrammarFromTransitions returns the grammar on len(allowed) symbols in
// which symbol b may follow symbol a when allowed[a][b] is true: its
// forbidden words are the pairs ab that are not allowed.
func GrammarFromTransitions(allowed [][]bool) (*Grammar, error) {
	m := len(allowed)
	var forbidden []string
	for a, row := range allowed {
		if len(row) != m {
			return nil, fmt.Errorf("cycles: transition matrix row %d has %d entries, expected %d", a, len(row), m)
		}
		for b, ok := range row {
			if !ok {
				forbidden = append(forbidden, Itinerary([]byte{byte(a), byte(b)}))
			}
		}
	}
	return NewGrammar(m, forbidden)
}

// ParseItinerary reads an itinerary spelled in the convention of
// Cycle.Itinerary over an alphabet of m symbols.
func ParseItinerary(s string, m int) ([]byte, error) {
	word := make([]byte, len(s))
	for i := range len(s) {
		v := strings.IndexByte(symbolChars, s[i])
		if v < 0 || v >= m {
			return nil, fmt.Errorf("symbol %q at position %d is not one of the %d symbols %s", s[i], i+1, m, symbolChars[:m])
		}
		word[i] = byte(v)
	}
	return word, nil
}

// Complete reports whether the grammar forbids nothing.
func (g *Grammar) Complete() bool { return len(g.Forbidden) == 0 }

// Admissible reports whether the periodic itinerary word word word … of
// period len(word) contains no forbidden word.
func (g *Grammar) Admissible(word []byte) bool {
	n := len(word)
	if n == 0 {
		return true
	}
	for _, f := range g.Forbidden {
		for start := range n {
			match := true
			for k, s := range f {
				if word[(start+k)%n] != s {
					match = false
					break
				}
			}
			if match {
				return false
			}
		}
	}
	return true
}

// containsForbidden reports whether the finite word contains a forbidden
// word (not cyclically).
func (g *Grammar) containsForbidden(word []byte) bool {
	for _, f := range g.Forbidden {
		for start := 0; start+len(f) <= len(word); start++ {
			if string(word[start:start+len(f)]) == string(f) {
				return true
			}
		}
	}
	return false
}

// Transitions returns the 0/1 matrix T of the grammar's de Bruijn-style
// graph (row-major, states×states) and the number of states: the states are
// the admissible words of length L−1 (L the longest forbidden word, at
// least 2), an edge joins u to v when u's last L−2 symbols are v's first
// and the word of length L they spell is admissible.
func (g *Grammar) Transitions() (t []float64, states int) {
	k := max(g.longest, 2) - 1
	var words [][]byte
	var build func(w []byte)
	build = func(w []byte) {
		if len(w) == k {
			words = append(words, append([]byte(nil), w...))
			return
		}
		for s := range g.Symbols {
			next := append(w, byte(s))
			if !g.containsForbidden(next) {
				build(next)
			}
		}
	}
	build(make([]byte, 0, k))
	states = len(words)
	t = make([]float64, states*states)
	edge := make([]byte, k+1)
	for i, u := range words {
		for j, v := range words {
			if string(u[1:]) != string(v[:k-1]) {
				continue
			}
			copy(edge, u)
			edge[k] = v[k-1]
			if !g.containsForbidden(edge) {
				t[i*states+j] = 1
			}
		}
	}
	return t, states
}

// PeriodicPoints returns tr Tⁿ for n = 1…maxLen at index n−1: the number of
// periodic itineraries of period n (points of fⁿ's fixed set when each
// itinerary has one point). Counts beyond 2⁵³ are not exact.
func (g *Grammar) PeriodicPoints(maxLen int) []float64 {
	t, states := g.Transitions()
	out := make([]float64, maxLen)
	power := make([]float64, len(t))
	copy(power, t)
	next := make([]float64, len(t))
	for n := 1; n <= maxLen; n++ {
		var trace float64
		for i := range states {
			trace += power[i*states+i]
		}
		out[n-1] = trace
		if n == maxLen {
			break
		}
		clear(next)
		for i := range states {
			for k := range states {
				a := power[i*states+k]
				if a == 0 {
					continue
				}
				for j := range states {
					next[i*states+j] += a * t[k*states+j]
				}
			}
		}
		power, next = next, power
	}
	return out
}

// PrimeCounts returns the number of prime cycles of each length n =
// 1…len(points) from the numbers of periodic points per length (index n−1)
// by Möbius inversion, N_n = (1/n) Σ_{d|n} μ(d) points_{n/d}.
func PrimeCounts(points []float64) []float64 {
	out := make([]float64, len(points))
	for n := 1; n <= len(points); n++ {
		var sum float64
		for d := 1; d <= n; d++ {
			if n%d == 0 {
				sum += float64(moebius(d)) * points[n/d-1]
			}
		}
		out[n-1] = math.Round(sum / float64(n))
	}
	return out
}

// TopologicalZeta returns the coefficients c_0 = 1, c_1, … of the
// polynomial 1/ζ_top(z) = det(1 − zT) = Σ_k c_k z^k, computed from the
// traces by the Newton recursion k c_k = −Σ_{i=1}^{k} tr Tⁱ c_{k−i}.
func (g *Grammar) TopologicalZeta() []float64 {
	_, states := g.Transitions()
	traces := g.PeriodicPoints(max(states, 1))
	c := make([]float64, states+1)
	c[0] = 1
	for k := 1; k <= states; k++ {
		var sum float64
		for i := 1; i <= k; i++ {
			sum += traces[i-1] * c[k-i]
		}
		c[k] = math.Round(-sum / float64(k))
	}
	for len(c) > 1 && c[len(c)-1] == 0 {
		c = c[:len(c)-1]
	}
	return c
}

// Entropy returns the topological entropy ln ρ(T), ρ the leading
// eigenvalue of the transition matrix (computed with gonum's mat.Eigen);
// −Inf when no itinerary is admissible.
func (g *Grammar) Entropy() float64 {
	t, states := g.Transitions()
	if states == 0 {
		return math.Inf(-1)
	}
	var eig mat.Eigen
	if !eig.Factorize(mat.NewDense(states, states, t), mat.EigenNone) {
		panic("cycles: eigen-decomposition of the transition matrix failed")
	}
	var rho float64
	for _, v := range eig.Values(nil) {
		rho = math.Max(rho, math.Hypot(real(v), imag(v)))
	}
	return math.Log(rho)
}

// leastRotation returns the index at which the least rotation of word
// starts (Booth's algorithm would do in linear time; words here are short,
// so the quadratic comparison is enough).
func leastRotation(word []byte) int {
	n := len(word)
	best := 0
	for start := 1; start < n; start++ {
		for k := range n {
			a, b := word[(start+k)%n], word[(best+k)%n]
			if a != b {
				if a < b {
					best = start
				}
				break
			}
		}
	}
	return best
}

// primitivePeriod returns the least p dividing len(word) with word equal to
// its rotation by p.
func primitivePeriod(word []byte) int {
	n := len(word)
	for p := 1; p < n; p++ {
		if n%p != 0 {
			continue
		}
		same := true
		for i := p; i < n; i++ {
			if word[i] != word[i-p] {
				same = false
				break
			}
		}
		if same {
			return p
		}
	}
	return n
}
