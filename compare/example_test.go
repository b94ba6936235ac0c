package compare_test

import (
	"fmt"
	"math"

	"crosspec/compare"
)

// Two paths estimating the same number: Ulam converging like 1/N, a cycle
// expansion converging like exp(−0.2 n²).
func ExampleCompare() {
	const limit = 0.8314023
	var cells []int
	var ulamValues []float64
	for n := 1024; n <= 1<<20; n *= 2 {
		cells = append(cells, n)
		ulamValues = append(ulamValues, limit+0.7/float64(n))
	}
	var orders []int
	var cycleValues []float64
	for n := 1; n <= 10; n++ {
		orders = append(orders, n)
		cycleValues = append(cycleValues, limit+0.5*math.Exp(-0.2*float64(n*n)))
	}
	u := compare.Ulam(cells, ulamValues, nil)
	c := compare.Cycles(orders, cycleValues, nil)
	cmp := compare.Compare(u, c)
	fmt.Printf("ulam   %.6g (%v, order %.3g)\n", u.Value, u.Status, u.Order)
	fmt.Printf("cycles %.6g (%v)\n", c.Value, c.Status)
	fmt.Println(cmp.Verdict)
	// Output:
	// ulam   0.831402 (converged, order 1)
	// cycles 0.831402 (converged)
	// agree
}

func ExampleFormatUncertainty() {
	fmt.Println(compare.FormatUncertainty(0.8314023, 4e-7))
	fmt.Println(compare.FormatUncertainty(1.2345, 0.0012))
	fmt.Println(compare.FormatUncertainty(1.234e-7, 5e-10))
	// Output:
	// 0.8314023(4)
	// 1.2345(12)
	// 1.234(5)e-07
}
