package expr_test

import (
	"fmt"

	"crosspec/dynsys/expr"
)

// The Hénon map and its Jacobian: parse, differentiate, compile, evaluate.
func Example() {
	vars := []string{"x", "y"}
	params := map[string]float64{"a": 1.4, "b": 0.3}
	var maps, jacobian []*expr.Node
	for _, src := range []string{"1 - a*x^2 + y", "b*x"} {
		f, err := expr.Parse(src)
		if err != nil {
			fmt.Println(err)
			return
		}
		maps = append(maps, f)
		for _, v := range vars {
			d := expr.Diff(f, v)
			fmt.Printf("d(%s)/d%s = %s\n", f, v, d)
			jacobian = append(jacobian, d)
		}
	}
	step, err := expr.Compile(maps, vars, params)
	if err != nil {
		fmt.Println(err)
		return
	}
	jac, err := expr.Compile(jacobian, vars, params)
	if err != nil {
		fmt.Println(err)
		return
	}
	x := []float64{0.5, 0.2}
	image, j := make([]float64, 2), make([]float64, 4)
	step.Eval(image, x)
	jac.Eval(j, x)
	fmt.Printf("image %.6g, Jacobian %.6g\n", image, j)

	_, err = expr.Parse("1 - a*(x^2 + y")
	fmt.Println(err)
	// Output:
	// d(1 - a*x^2 + y)/dx = -2*a*x
	// d(1 - a*x^2 + y)/dy = 1
	// d(b*x)/dx = b
	// d(b*x)/dy = 0
	// image [0.85 0.15], Jacobian [-1.4 1 0.3 0]
	// expr: column 15: expected ")" to close "(" opened at column 7, found end of formula
}
