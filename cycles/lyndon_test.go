package cycles

import (
	"slices"
	"testing"
)

func TestLyndonCounts(t *testing.T) {
	// The number of Lyndon words of each length equals the necklace
	// formula: necklace (Möbius) counting, C. Moreau 1872 (common
	// practice). Exact integers, no tolerance.
	for _, m := range []int{2, 3} {
		const maxLen = 16
		got := make([]int, maxLen+1)
		var prev []byte
		for w := range LyndonWords(m, maxLen) {
			got[len(w)]++
			if prev != nil && slices.Compare(prev, w) >= 0 {
				t.Fatalf("m=%d: %v after %v is not in lexicographic order", m, w, prev)
			}
			if len(w) <= 10 && !isLyndon(w) {
				t.Fatalf("m=%d: %v is not a Lyndon word", m, w)
			}
			prev = append(prev[:0], w...)
		}
		for n := 1; n <= maxLen; n++ {
			want, ok := LyndonCount(m, n)
			if !ok {
				t.Fatalf("LyndonCount(%d, %d) overflowed", m, n)
			}
			if got[n] != want {
				t.Errorf("m=%d n=%d: %d words, necklace formula %d", m, n, got[n], want)
			}
		}
	}
}

func TestLyndonSmall(t *testing.T) {
	// The binary Lyndon words of length ≤ 4, listed by hand
	// (common practice, no source).
	want := []string{"0", "0001", "001", "0011", "01", "011", "0111", "1"}
	var got []string
	for w := range LyndonWords(2, 4) {
		got = append(got, Itinerary(w))
	}
	if !slices.Equal(got, want) {
		t.Errorf("got %v, want %v", got, want)
	}
	// Prime cycle counts of the binary shift 2, 1, 2, 3, 6, 9 (common
	// practice, no source) and of a large alphabet where m^n overflows.
	for n, want := range []int{2, 1, 2, 3, 6, 9} {
		if c, _ := LyndonCount(2, n+1); c != want {
			t.Errorf("LyndonCount(2, %d) = %d, want %d", n+1, c, want)
		}
	}
	if _, ok := LyndonCount(36, 20); ok {
		t.Errorf("LyndonCount(36, 20) should overflow")
	}
	// Early exit from the iterator.
	count := 0
	for range LyndonWords(3, 10) {
		count++
		if count == 5 {
			break
		}
	}
	if count != 5 {
		t.Errorf("break after 5 words: %d", count)
	}
}

// isLyndon reports whether w is strictly smaller than each proper rotation.
func isLyndon(w []byte) bool {
	for i := 1; i < len(w); i++ {
		rot := append(slices.Clone(w[i:]), w[:i]...)
		if slices.Compare(w, rot) >= 0 {
			return false
		}
	}
	return true
}
