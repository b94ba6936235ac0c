package expr

import (
	"fmt"
	"math"
)

// blockLen is the number of points the batch interpreter carries through
// one instruction: long enough to amortise the dispatch of an instruction,
// short enough that the registers of a typical program stay in L1 cache
// (a register holds blockLen float64s, 2 KiB).
const blockLen = 256

// Operand forms of a batch instruction.
const (
	formVV    uint8 = iota // dst = a op b
	formVC                 // dst = a op c
	formCV                 // dst = c op b
	formAff                // dst = k*a + c (a fused product by and sum with constants)
	formUnary              // dst = op a
)

// instr is one instruction of the batch interpreter: it applies an
// operation to whole registers (columns of blockLen points).
type instr struct {
	code      code
	form      uint8
	fn        uint8
	dst, a, b int32   // registers
	k, c      float64 // constants of the forms VC, CV and Aff
}

// output says where the interpreter finds one formula's values.
type output struct {
	reg      int32 // register, or -1 for a constant formula
	constant float64
}

// batchCode is the compiled batch program: registers 0..d-1 hold the
// variables, the rest temporaries reused as values die.
type batchCode struct {
	d, regs int
	code    []instr
	outputs []output
}

// compileBatch schedules the values reachable from outputs into register
// instructions, fusing a product by a constant into a following sum with a
// constant when the product has no other use.
func compileBatch(g *dag, outputs []int32, d int) batchCode {
	n := len(g.values)
	uses := make([]int, n)
	reachable := make([]bool, n)
	for _, id := range outputs {
		reachable[id] = true
	}
	for id := n - 1; id >= 0; id-- {
		if !reachable[id] {
			continue
		}
		v := g.values[id]
		if v.code == cConst || v.code == cVar {
			continue
		}
		reachable[v.a] = true
		uses[v.a]++
		if !v.code.isUnary() {
			reachable[v.b] = true
			uses[v.b]++
		}
	}
	isOutput := make([]bool, n)
	for _, id := range outputs {
		isOutput[id] = true
	}
	// fusedInto[id] marks a product by a constant that a later affine
	// instruction computes itself.
	fused := make([]bool, n)
	type affine struct {
		src  int32
		k, c float64
	}
	affines := make(map[int32]affine)
	for id := range n {
		v := g.values[id]
		if !reachable[id] || (v.code != cAdd && v.code != cSub) {
			continue
		}
		a, b := g.values[v.a], g.values[v.b]
		var prod int32 = -1
		var c float64
		sign := 1.0
		switch {
		case b.code == cConst: // t + c, t - c
			prod, c = v.a, b.c
			if v.code == cSub {
				c = -c
			}
		case a.code == cConst: // c + t, c - t
			prod, c = v.b, a.c
			if v.code == cSub {
				sign = -1
			}
		}
		if prod < 0 || uses[prod] != 1 || isOutput[prod] {
			continue
		}
		p := g.values[prod]
		if p.code != cMul {
			continue
		}
		pa, pb := g.values[p.a], g.values[p.b]
		switch {
		case pb.code == cConst:
			affines[int32(id)] = affine{p.a, sign * pb.c, c}
		case pa.code == cConst:
			affines[int32(id)] = affine{p.b, sign * pa.c, c}
		default:
			continue
		}
		fused[prod] = true
	}
	// Recount uses now that fused products read their operand through the
	// affine instruction.
	lastUse := make([]int, n)
	for id := range n {
		if !reachable[id] || fused[id] {
			continue
		}
		v := g.values[id]
		if af, ok := affines[int32(id)]; ok {
			lastUse[af.src] = id
			continue
		}
		if v.code == cConst || v.code == cVar {
			continue
		}
		lastUse[v.a] = id
		if !v.code.isUnary() {
			lastUse[v.b] = id
		}
	}
	bc := batchCode{d: d, regs: d}
	reg := make([]int32, n)
	var free []int32
	release := func(id int32, at int) {
		v := g.values[id]
		if v.code == cConst || v.code == cVar || isOutput[id] || lastUse[id] != at {
			return
		}
		free = append(free, reg[id])
	}
	for id := range n {
		v := g.values[id]
		if !reachable[id] || fused[id] {
			continue
		}
		if v.code == cVar {
			reg[id] = int32(v.v)
			continue
		}
		if v.code == cConst {
			continue
		}
		in := instr{code: v.code, fn: v.fn}
		if af, ok := affines[int32(id)]; ok {
			in.form, in.a, in.k, in.c = formAff, reg[af.src], af.k, af.c
			release(af.src, id)
		} else {
			a := g.values[v.a]
			switch {
			case v.code.isUnary():
				in.form, in.a = formUnary, reg[v.a]
			case g.values[v.b].code == cConst:
				in.form, in.a, in.c = formVC, reg[v.a], g.values[v.b].c
			case a.code == cConst:
				in.form, in.b, in.c = formCV, reg[v.b], a.c
			default:
				in.form, in.a, in.b = formVV, reg[v.a], reg[v.b]
			}
			release(v.a, id)
			if !v.code.isUnary() && v.b != v.a {
				release(v.b, id)
			}
		}
		// Elementwise operations may write over an operand that dies
		// here, so dst is allocated after the operands are released.
		if len(free) > 0 {
			reg[id] = free[len(free)-1]
			free = free[:len(free)-1]
		} else {
			reg[id] = int32(bc.regs)
			bc.regs++
		}
		in.dst = reg[id]
		bc.code = append(bc.code, in)
	}
	for _, id := range outputs {
		if v := g.values[id]; v.code == cConst {
			bc.outputs = append(bc.outputs, output{reg: -1, constant: v.c})
		} else {
			bc.outputs = append(bc.outputs, output{reg: reg[id]})
		}
	}
	return bc
}

// A Batch evaluates a Program over many points with scratch registers of
// its own. A Batch must not be used by two goroutines at once; give each
// goroutine its own (they are cheap: a few KiB), or use
// Program.EvalBatch, which draws one from a pool.
type Batch struct {
	p     *Program
	store []float64   // backing of the temporary registers
	regs  [][]float64 // register views for the current block
}

// NewBatch returns a Batch for p.
func (p *Program) NewBatch() *Batch {
	bc := &p.batch
	b := &Batch{p: p, store: make([]float64, bc.regs*blockLen), regs: make([][]float64, bc.regs)}
	return b
}

// EvalBatch evaluates the program at n points: xs holds the points row by
// row (n×d, point i is xs[i*d : i*d+d]) and dst receives the values row by
// row (n×m, dst[i*m+k] is formula k at point i). It is safe for concurrent
// use and does not allocate in steady state (scratch comes from a pool).
func (p *Program) EvalBatch(dst, xs []float64) {
	b := p.pool.Get().(*Batch)
	b.Eval(dst, xs)
	p.pool.Put(b)
}

// Eval is Program.EvalBatch with this Batch's scratch: xs is n×d and dst
// n×m, both row-major. It does not allocate.
func (b *Batch) Eval(dst, xs []float64) {
	bc := &b.p.batch
	d, m := b.p.d, b.p.m
	if d == 0 {
		panic("expr: EvalBatch: program has no variables")
	}
	if len(xs)%d != 0 || len(dst) != len(xs)/d*m {
		panic(fmt.Sprintf("expr: EvalBatch: len(xs) = %d, len(dst) = %d, want multiples n×%d and n×%d", len(xs), len(dst), d, m))
	}
	n := len(xs) / d
	for lo := 0; lo < n; lo += blockLen {
		hi := min(lo+blockLen, n)
		w := hi - lo
		for r := range b.regs {
			b.regs[r] = b.store[r*blockLen : r*blockLen+w]
		}
		b.gather(xs[lo*d:hi*d], w, d)
		run(b.regs, bc.code)
		b.scatter(dst[lo*m:hi*m], w, m)
	}
}

// gather transposes a block of w row-major points into the variable
// registers. One variable needs no copy: the register views xs itself.
// The loops run two indices so that the compiler can drop bounds checks.
func (b *Batch) gather(xs []float64, w, d int) {
	switch d {
	case 1:
		b.regs[0] = xs[:w]
	case 2:
		x0, x1 := b.regs[0][:w], b.regs[1][:w]
		x1 = x1[:len(x0)]
		i := 0
		for ; i+2 <= len(x0); i += 2 {
			rows, c0, c1 := xs[2*i:2*i+4:2*i+4], x0[i:i+2:i+2], x1[i:i+2:i+2]
			c0[0], c1[0], c0[1], c1[1] = rows[0], rows[1], rows[2], rows[3]
		}
		for ; i < len(x0); i++ {
			x0[i], x1[i] = xs[2*i], xs[2*i+1]
		}
	default:
		for k := range d {
			col := b.regs[k][:w]
			for i, j := 0, k; i < len(col) && j < len(xs); i, j = i+1, j+d {
				col[i] = xs[j]
			}
		}
	}
}

// scatter writes the output registers of a block into row-major dst.
func (b *Batch) scatter(dst []float64, w, m int) {
	outs := b.p.batch.outputs
	if m == 2 && outs[0].reg >= 0 && outs[1].reg >= 0 {
		y0, y1 := b.regs[outs[0].reg][:w], b.regs[outs[1].reg][:w]
		y1 = y1[:len(y0)]
		i := 0
		for ; i+2 <= len(y0); i += 2 {
			rows, c0, c1 := dst[2*i:2*i+4:2*i+4], y0[i:i+2:i+2], y1[i:i+2:i+2]
			rows[0], rows[1], rows[2], rows[3] = c0[0], c1[0], c0[1], c1[1]
		}
		for ; i < len(y0); i++ {
			dst[2*i], dst[2*i+1] = y0[i], y1[i]
		}
		return
	}
	for k, out := range outs {
		if out.reg < 0 {
			for j := k; j < len(dst); j += m {
				dst[j] = out.constant
			}
			continue
		}
		y := b.regs[out.reg][:w]
		if m == 1 {
			copy(dst, y)
			continue
		}
		for i, j := 0, k; i < len(y) && j < len(dst); i, j = i+1, j+m {
			dst[j] = y[i]
		}
	}
}

// run executes code over one block of registers.
func run(regs [][]float64, code []instr) {
	for i := range code {
		in := &code[i]
		dst := regs[in.dst]
		switch in.form {
		case formUnary:
			runUnary(in, dst, regs[in.a])
		case formAff:
			affineLoop(dst, regs[in.a], in.k, in.c)
		case formVC:
			runVC(in, dst, regs[in.a], in.c)
		case formCV:
			runCV(in, dst, in.c, regs[in.b])
		default:
			runVV(in, dst, regs[in.a], regs[in.b])
		}
	}
}

func affineLoop(dst, a []float64, k, c float64) {
	a = a[:len(dst)]
	i := 0
	for ; i+4 <= len(dst); i += 4 {
		s, d := a[i:i+4:i+4], dst[i:i+4:i+4]
		d[0] = float64(k*s[0]) + c
		d[1] = float64(k*s[1]) + c
		d[2] = float64(k*s[2]) + c
		d[3] = float64(k*s[3]) + c
	}
	for ; i < len(dst); i++ {
		dst[i] = float64(k*a[i]) + c
	}
}

func runUnary(in *instr, dst, a []float64) {
	a = a[:len(dst)]
	switch in.code {
	case cNeg:
		for i := range dst {
			dst[i] = -a[i]
		}
	case cSquare:
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, d := a[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = s[0] * s[0]
			d[1] = s[1] * s[1]
			d[2] = s[2] * s[2]
			d[3] = s[3] * s[3]
		}
		for ; i < len(dst); i++ {
			dst[i] = a[i] * a[i]
		}
	case cCube:
		for i := range dst {
			dst[i] = float64(a[i]*a[i]) * a[i]
		}
	case cRecip:
		for i := range dst {
			dst[i] = 1 / a[i]
		}
	case cAbs:
		for i := range dst {
			dst[i] = math.Abs(a[i])
		}
	case cSqrt:
		for i := range dst {
			dst[i] = math.Sqrt(a[i])
		}
	case cFloor:
		for i := range dst {
			dst[i] = math.Floor(a[i])
		}
	default:
		f := unary[in.fn].f
		for i := range dst {
			dst[i] = f(a[i])
		}
	}
}

func runVC(in *instr, dst, a []float64, c float64) {
	a = a[:len(dst)]
	switch in.code {
	case cAdd:
		for i := range dst {
			dst[i] = a[i] + c
		}
	case cSub:
		for i := range dst {
			dst[i] = a[i] - c
		}
	case cMul:
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, d := a[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = s[0] * c
			d[1] = s[1] * c
			d[2] = s[2] * c
			d[3] = s[3] * c
		}
		for ; i < len(dst); i++ {
			dst[i] = a[i] * c
		}
	case cDiv:
		for i := range dst {
			dst[i] = a[i] / c
		}
	case cLess:
		for i := range dst {
			dst[i] = boolValue(a[i] < c)
		}
	case cGreaterEq:
		for i := range dst {
			dst[i] = boolValue(a[i] >= c)
		}
	default:
		for i := range dst {
			dst[i] = apply(in.code, 0, a[i], c)
		}
	}
}

func runCV(in *instr, dst []float64, c float64, b []float64) {
	b = b[:len(dst)]
	switch in.code {
	case cMul:
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, d := b[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = c * s[0]
			d[1] = c * s[1]
			d[2] = c * s[2]
			d[3] = c * s[3]
		}
		for ; i < len(dst); i++ {
			dst[i] = c * b[i]
		}
	case cAdd:
		for i := range dst {
			dst[i] = c + b[i]
		}
	case cSub:
		for i := range dst {
			dst[i] = c - b[i]
		}
	case cDiv:
		for i := range dst {
			dst[i] = c / b[i]
		}
	default:
		for i := range dst {
			dst[i] = apply(in.code, 0, c, b[i])
		}
	}
}

func runVV(in *instr, dst, a, b []float64) {
	a, b = a[:len(dst)], b[:len(dst)]
	switch in.code {
	case cAdd:
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, t, d := a[i:i+4:i+4], b[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = s[0] + t[0]
			d[1] = s[1] + t[1]
			d[2] = s[2] + t[2]
			d[3] = s[3] + t[3]
		}
		for ; i < len(dst); i++ {
			dst[i] = a[i] + b[i]
		}
	case cSub:
		for i := range dst {
			dst[i] = a[i] - b[i]
		}
	case cMul:
		for i := range dst {
			dst[i] = a[i] * b[i]
		}
	case cDiv:
		for i := range dst {
			dst[i] = a[i] / b[i]
		}
	default:
		for i := range dst {
			dst[i] = apply(in.code, 0, a[i], b[i])
		}
	}
}
