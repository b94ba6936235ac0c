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

// Operand forms of a batch instruction. The fused forms evaluate, per
// point, the same sequence of rounded operations as the instructions they
// replace (each product is converted to float64 before the sum, so no
// fused multiply-add is introduced).
const (
	formVV       uint8 = iota // dst = a op b
	formVC                    // dst = a op c
	formCV                    // dst = c op b
	formUnary                 // dst = op a
	formAff                   // dst = k*a + c: c ± k*a, k*a ± c
	formAffSq                 // dst = k*(a*a) + c: c ± k*a^2, k*a^2 ± c
	formAffAdd                // dst = (k*a + c) + b
	formAffSqAdd              // dst = (k*(a*a) + c) + b: the Hénon shape 1 - a*x^2 + y
	formCopy                  // dst = a
)

// Kinds of storage an instruction reads or writes. Variables are read
// straight from the caller's row-major points, with a stride, and each
// result is written straight into its column of the caller's rows by the
// instruction computing it, so a block needs no transposition passes.
const (
	inReg uint8 = iota // a register: a column of blockLen temporaries
	inVar              // variable idx of the input rows (stride d)
	inOut              // output idx of the result rows (stride m)
)

// loc is where an operand or result lives.
type loc struct {
	kind uint8
	idx  int32
}

// instr is one instruction of the batch interpreter: it applies an
// operation to whole columns of a block of points.
type instr struct {
	code code
	form uint8
	fn   uint8
	dst  loc
	a, b loc
	k, c float64 // constants of the forms VC, CV and the affine forms
}

// constOut is a formula that folded to a constant: its column of the
// result rows is a fill.
type constOut struct {
	col int
	c   float64
}

// batchCode is the compiled batch program.
type batchCode struct {
	regs   int // temporary registers
	code   []instr
	consts []constOut
	// row, when set, is a whole result row holding the constants (and
	// zeros where instructions write later): short rows with several
	// constants are filled row by row rather than column by column.
	row []float64
}

// affine is k*src + c, or k*src*src + c when square is set: a product by a
// constant (of a square) fused into a following sum with a constant.
type affine struct {
	src    int32
	k, c   float64
	square bool
}

// compileBatch schedules the values reachable from outputs into
// instructions. It fuses a product by a constant into a following sum with
// a constant (and a square into that product, and the result into a
// following sum) when the fused values have no other use, writes each
// output's value straight into its column of the result rows, and keeps
// the other values in registers, reused as values die.
func compileBatch(g *dag, outputs []int32) batchCode {
	n := len(g.values)
	uses := make([]int, n)
	reachable := make([]bool, n)
	// outCol[id] is the first output column holding value id, or -1.
	outCol := make([]int32, n)
	for id := range outCol {
		outCol[id] = -1
	}
	for k, id := range outputs {
		reachable[id] = true
		if outCol[id] < 0 {
			outCol[id] = int32(k)
		}
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
	// private reports whether value id may be computed inside the one
	// instruction that uses it.
	private := func(id int32) bool { return uses[id] == 1 && outCol[id] < 0 }
	// fused marks values that a later instruction computes itself.
	fused := make([]bool, n)
	affines := make([]*affine, n)
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
		if prod < 0 || !private(prod) {
			continue
		}
		p := g.values[prod]
		if p.code != cMul {
			continue
		}
		// c - k*t is computed as (-k)*t + c: negation is exact and
		// x - y = x + (-y), so the value is the same.
		pa, pb := g.values[p.a], g.values[p.b]
		af := &affine{}
		switch {
		case pb.code == cConst:
			af.src, af.k, af.c = p.a, sign*pb.c, c
		case pa.code == cConst:
			af.src, af.k, af.c = p.b, sign*pa.c, c
		default:
			continue
		}
		fused[prod] = true
		// x^2 and x*x are the same product.
		if s := g.values[af.src]; (s.code == cSquare || s.code == cMul && s.a == s.b) && private(af.src) {
			fused[af.src] = true
			af.src, af.square = s.a, true
		}
		affines[id] = af
	}
	// addAff[id] marks a sum (k*a + c) + b whose left operand is a
	// private affine value.
	addAff := make([]bool, n)
	for id := range n {
		v := g.values[id]
		if !reachable[id] || v.code != cAdd || affines[v.a] == nil || !private(v.a) || g.values[v.b].code == cConst {
			continue
		}
		addAff[id] = true
		fused[v.a] = true
	}
	// operands lists the values an instruction for value id reads.
	operands := func(id int) (a, b int32) {
		v := g.values[id]
		switch {
		case addAff[id]:
			return affines[v.a].src, v.b
		case affines[id] != nil:
			return affines[id].src, -1
		case v.code.isUnary():
			return v.a, -1
		}
		return v.a, v.b
	}
	lastUse := make([]int, n)
	for id := range n {
		v := g.values[id]
		if !reachable[id] || fused[id] || v.code == cConst || v.code == cVar {
			continue
		}
		a, b := operands(id)
		lastUse[a] = id
		if b >= 0 {
			lastUse[b] = id
		}
	}
	var bc batchCode
	where := make([]loc, n)
	var free []int32
	release := func(id int32, at int) {
		if id >= 0 && g.values[id].code != cConst && where[id].kind == inReg && lastUse[id] == at {
			free = append(free, where[id].idx)
		}
	}
	for id := range n {
		v := g.values[id]
		if !reachable[id] || fused[id] || v.code == cConst {
			continue
		}
		if v.code == cVar {
			where[id] = loc{kind: inVar, idx: int32(v.v)}
			continue
		}
		in := instr{code: v.code, fn: v.fn}
		a, b := operands(id)
		switch {
		case addAff[id]:
			af := affines[v.a]
			in.form, in.a, in.b, in.k, in.c = formAffAdd, where[a], where[b], af.k, af.c
			if af.square {
				in.form = formAffSqAdd
			}
		case affines[id] != nil:
			af := affines[id]
			in.form, in.a, in.k, in.c = formAff, where[a], af.k, af.c
			if af.square {
				in.form = formAffSq
			}
		case v.code.isUnary():
			in.form, in.a = formUnary, where[a]
		case g.values[b].code == cConst:
			in.form, in.a, in.c = formVC, where[a], g.values[b].c
		case g.values[a].code == cConst:
			in.form, in.b, in.c = formCV, where[b], g.values[a].c
		default:
			in.form, in.a, in.b = formVV, where[a], where[b]
		}
		release(a, id)
		if b != a {
			release(b, id)
		}
		// Elementwise operations may write over an operand that dies
		// here, so the result's register is chosen after the operands
		// are released.
		switch {
		case outCol[id] >= 0:
			where[id] = loc{kind: inOut, idx: outCol[id]}
		case len(free) > 0:
			where[id] = loc{kind: inReg, idx: free[len(free)-1]}
			free = free[:len(free)-1]
		default:
			where[id] = loc{kind: inReg, idx: int32(bc.regs)}
			bc.regs++
		}
		in.dst = where[id]
		bc.code = append(bc.code, in)
	}
	for k, id := range outputs {
		switch v := g.values[id]; {
		case v.code == cConst:
			bc.consts = append(bc.consts, constOut{col: k, c: v.c})
		case where[id] != (loc{kind: inOut, idx: int32(k)}):
			// A variable, or a value already written to an earlier column.
			bc.code = append(bc.code, instr{form: formCopy, a: where[id], dst: loc{kind: inOut, idx: int32(k)}})
		}
	}
	if m := len(outputs); m >= 2 && m <= 4 && len(bc.consts) >= 2 {
		bc.row = make([]float64, m)
		for _, c := range bc.consts {
			bc.row[c.col] = c.c
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
	store []float64 // the temporary registers, blockLen each
	rows  []float64 // a copy of a block of input rows, when dst is xs
}

// NewBatch returns a Batch for p.
func (p *Program) NewBatch() *Batch {
	return &Batch{p: p, store: make([]float64, p.batch.regs*blockLen), rows: make([]float64, p.d*blockLen)}
}

// EvalBatch evaluates the program at n points: xs holds the points row by
// row (n×d, point i is xs[i*d : i*d+d]) and dst receives the values row by
// row (n×m, dst[i*m+k] is formula k at point i). dst may start at the
// first element of xs when m <= d (dst is xs for a map iterated in
// place); other overlaps of dst and xs are not allowed. It is safe for concurrent use and does not allocate in steady
// state (scratch comes from a pool).
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
	// In place, the results of a block would overwrite variables that
	// later instructions of the block read, so the block is copied first.
	inPlace := len(xs) > 0 && len(dst) > 0 && &xs[0] == &dst[0]
	for lo := 0; lo < n; lo += blockLen {
		hi := min(lo+blockLen, n)
		w := hi - lo
		in, out := xs[lo*d:hi*d], dst[lo*m:hi*m]
		if inPlace {
			in = b.rows[:len(in)]
			copy(in, xs[lo*d:hi*d])
		}
		if bc.row != nil {
			fillRows(out, bc.row)
		} else {
			for _, c := range bc.consts {
				fill(out[c.col:], m, c.c, w)
			}
		}
		for i := range bc.code {
			b.exec(&bc.code[i], in, out, w)
		}
	}
}

// view returns the storage of l for a block of w points, and its stride.
func (b *Batch) view(l loc, in, out []float64, w int) ([]float64, int) {
	switch l.kind {
	case inReg:
		r := int(l.idx) * blockLen
		return b.store[r : r+w], 1
	case inVar:
		return in[l.idx:], b.p.d
	}
	return out[l.idx:], b.p.m
}

// exec runs one instruction over a block of w points. Columns of stride 1
// (registers, and the rows themselves when d or m is 1) take the unrolled
// loops; the others the strided loops.
func (b *Batch) exec(in *instr, rows, out []float64, w int) {
	dst, ds := b.view(in.dst, rows, out, w)
	var a, c []float64
	as, cs := ds, ds // unused operands take the result's stride
	if in.form != formCV {
		a, as = b.view(in.a, rows, out, w)
	}
	switch in.form {
	case formVV, formCV, formAffAdd, formAffSqAdd:
		c, cs = b.view(in.b, rows, out, w)
	}
	if ds == 1 && as == 1 && cs == 1 {
		dst = dst[:w]
		switch in.form {
		case formUnary:
			runUnary(in, dst, a)
		case formAff:
			affineLoop(dst, a, in.k, in.c)
		case formAffSq:
			affineSquareLoop(dst, a, in.k, in.c)
		case formAffAdd:
			affineAddLoop(dst, a, c, in.k, in.c)
		case formAffSqAdd:
			affineSquareAddLoop(dst, a, c, in.k, in.c)
		case formVC:
			runVC(in, dst, a, in.c)
		case formCV:
			runCV(in, dst, in.c, c)
		case formCopy:
			copy(dst, a[:w])
		default:
			runVV(in, dst, a, c)
		}
		return
	}
	dst = dst[:(w-1)*ds+1]
	if as == ds && cs == ds && sameStride(in, dst, a, c, ds, w) {
		return
	}
	switch in.form {
	case formUnary:
		stridedUnary(in, dst, ds, a, as, w)
	case formAff:
		stridedAffine(dst, ds, a, as, w, in.k, in.c)
	case formAffSq:
		stridedAffineSquare(dst, ds, a, as, w, in.k, in.c)
	case formAffAdd:
		stridedAffineAdd(dst, ds, a, as, c, cs, w, in.k, in.c)
	case formAffSqAdd:
		stridedAffineSquareAdd(dst, ds, a, as, c, cs, w, in.k, in.c)
	case formVC:
		stridedVC(in, dst, ds, a, as, w, in.c)
	case formCV:
		stridedCV(in, dst, ds, c, cs, w, in.c)
	case formCopy:
		for j, k := 0, 0; j < len(dst); j, k = j+ds, k+as {
			dst[j] = a[k]
		}
	default:
		stridedVV(in, dst, ds, a, as, c, cs, w)
	}
}

// fill sets w values of stride m in dst to c.
func fill(dst []float64, m int, c float64, w int) {
	if m == 1 {
		dst = dst[:w]
		for i := range dst {
			dst[i] = c
		}
		return
	}
	dst = dst[:(w-1)*m+1]
	for j := 0; j < len(dst); j += m {
		dst[j] = c
	}
}

// sameStride runs the cheap operations whose operands and result have
// the same stride s > 1 (the rows of a map with as many formulas as
// variables), with one index for all of them so that one bounds check per
// point remains. It reports false for the operations it leaves to the
// general strided loops.
func sameStride(in *instr, dst, a, b []float64, s, w int) bool {
	n := (w-1)*s + 1
	dst = dst[:n]
	k, c := in.k, in.c
	switch in.form {
	case formAff:
		a := a[:n]
		for j := 0; j < len(dst); j += s {
			dst[j] = float64(k*a[j]) + c
		}
	case formAffSq:
		a := a[:n]
		for j := 0; j < len(dst); j += s {
			t := a[j]
			dst[j] = float64(k*float64(t*t)) + c
		}
	case formAffAdd:
		a, b := a[:n], b[:n]
		for j := 0; j < len(dst); j += s {
			dst[j] = float64(float64(k*a[j])+c) + b[j]
		}
	case formAffSqAdd:
		a, b := a[:n], b[:n]
		for j := 0; j < len(dst); j += s {
			t := a[j]
			dst[j] = float64(float64(k*float64(t*t))+c) + b[j]
		}
	case formCopy:
		a := a[:n]
		for j := 0; j < len(dst); j += s {
			dst[j] = a[j]
		}
	case formUnary:
		switch in.code {
		case cNeg:
			a := a[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = -a[j]
			}
		case cSquare:
			a := a[:n]
			for j := 0; j < len(dst); j += s {
				t := a[j]
				dst[j] = t * t
			}
		default:
			return false
		}
	case formVC:
		switch in.code {
		case cAdd:
			a := a[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = a[j] + c
			}
		case cSub:
			a := a[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = a[j] - c
			}
		case cMul:
			a := a[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = a[j] * c
			}
		default:
			return false
		}
	case formCV:
		switch in.code {
		case cAdd:
			b := b[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = c + b[j]
			}
		case cSub:
			b := b[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = c - b[j]
			}
		case cMul:
			b := b[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = c * b[j]
			}
		default:
			return false
		}
	case formVV:
		switch in.code {
		case cAdd:
			a, b := a[:n], b[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = a[j] + b[j]
			}
		case cSub:
			a, b := a[:n], b[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = a[j] - b[j]
			}
		case cMul:
			a, b := a[:n], b[:n]
			for j := 0; j < len(dst); j += s {
				dst[j] = a[j] * b[j]
			}
		default:
			return false
		}
	default:
		return false
	}
	return true
}

// fillRows copies row, of length 2, 3 or 4, into every row of dst.
func fillRows(dst, row []float64) {
	switch len(row) {
	case 2:
		r := [2]float64(row)
		for j := 0; j+2 <= len(dst); j += 2 {
			*(*[2]float64)(dst[j:]) = r
		}
	case 3:
		r := [3]float64(row)
		for j := 0; j+3 <= len(dst); j += 3 {
			*(*[3]float64)(dst[j:]) = r
		}
	case 4:
		r := [4]float64(row)
		for j := 0; j+4 <= len(dst); j += 4 {
			*(*[4]float64)(dst[j:]) = r
		}
	default:
		panic("expr: fillRows: row length not 2, 3 or 4")
	}
}

// The strided loops: dst[i*ds] = a[i*as] op b[i*bs] for i < w. They run
// one index per operand, as the strides differ.

func stridedAffine(dst []float64, ds int, a []float64, as, w int, k, c float64) {
	dst = dst[:(w-1)*ds+1]
	for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
		dst[j] = float64(k*a[l]) + c
	}
}

func stridedAffineSquare(dst []float64, ds int, a []float64, as, w int, k, c float64) {
	dst = dst[:(w-1)*ds+1]
	for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
		t := a[l]
		dst[j] = float64(k*float64(t*t)) + c
	}
}

func stridedAffineAdd(dst []float64, ds int, a []float64, as int, b []float64, bs, w int, k, c float64) {
	dst = dst[:(w-1)*ds+1]
	for j, l, o := 0, 0, 0; j < len(dst); j, l, o = j+ds, l+as, o+bs {
		dst[j] = float64(float64(k*a[l])+c) + b[o]
	}
}

func stridedAffineSquareAdd(dst []float64, ds int, a []float64, as int, b []float64, bs, w int, k, c float64) {
	dst = dst[:(w-1)*ds+1]
	for j, l, o := 0, 0, 0; j < len(dst); j, l, o = j+ds, l+as, o+bs {
		t := a[l]
		dst[j] = float64(float64(k*float64(t*t))+c) + b[o]
	}
}

func stridedUnary(in *instr, dst []float64, ds int, a []float64, as, w int) {
	dst = dst[:(w-1)*ds+1]
	switch in.code {
	case cNeg:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = -a[l]
		}
	case cSquare:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = a[l] * a[l]
		}
	case cCube:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			t := a[l]
			dst[j] = float64(t*t) * t
		}
	case cFunc:
		f := unary[in.fn].f
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = f(a[l])
		}
	default:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = apply(in.code, 0, a[l], 0)
		}
	}
}

func stridedVC(in *instr, dst []float64, ds int, a []float64, as, w int, c float64) {
	dst = dst[:(w-1)*ds+1]
	switch in.code {
	case cAdd:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = a[l] + c
		}
	case cSub:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = a[l] - c
		}
	case cMul:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = a[l] * c
		}
	case cDiv:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = a[l] / c
		}
	default:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+as {
			dst[j] = apply(in.code, 0, a[l], c)
		}
	}
}

func stridedCV(in *instr, dst []float64, ds int, b []float64, bs, w int, c float64) {
	dst = dst[:(w-1)*ds+1]
	switch in.code {
	case cAdd:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+bs {
			dst[j] = c + b[l]
		}
	case cSub:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+bs {
			dst[j] = c - b[l]
		}
	case cMul:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+bs {
			dst[j] = c * b[l]
		}
	case cDiv:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+bs {
			dst[j] = c / b[l]
		}
	default:
		for j, l := 0, 0; j < len(dst); j, l = j+ds, l+bs {
			dst[j] = apply(in.code, 0, c, b[l])
		}
	}
}

func stridedVV(in *instr, dst []float64, ds int, a []float64, as int, b []float64, bs, w int) {
	dst = dst[:(w-1)*ds+1]
	switch in.code {
	case cAdd:
		for j, l, o := 0, 0, 0; j < len(dst); j, l, o = j+ds, l+as, o+bs {
			dst[j] = a[l] + b[o]
		}
	case cSub:
		for j, l, o := 0, 0, 0; j < len(dst); j, l, o = j+ds, l+as, o+bs {
			dst[j] = a[l] - b[o]
		}
	case cMul:
		for j, l, o := 0, 0, 0; j < len(dst); j, l, o = j+ds, l+as, o+bs {
			dst[j] = a[l] * b[o]
		}
	case cDiv:
		for j, l, o := 0, 0, 0; j < len(dst); j, l, o = j+ds, l+as, o+bs {
			dst[j] = a[l] / b[o]
		}
	default:
		for j, l, o := 0, 0, 0; j < len(dst); j, l, o = j+ds, l+as, o+bs {
			dst[j] = apply(in.code, 0, a[l], b[o])
		}
	}
}

// The unit-stride loops, unrolled where the operation is cheap.

func affineSquareLoop(dst, a []float64, k, c float64) {
	a = a[:len(dst)]
	i := 0
	for ; i+4 <= len(dst); i += 4 {
		s, d := a[i:i+4:i+4], dst[i:i+4:i+4]
		d[0] = float64(k*float64(s[0]*s[0])) + c
		d[1] = float64(k*float64(s[1]*s[1])) + c
		d[2] = float64(k*float64(s[2]*s[2])) + c
		d[3] = float64(k*float64(s[3]*s[3])) + c
	}
	for ; i < len(dst); i++ {
		dst[i] = float64(k*float64(a[i]*a[i])) + c
	}
}

func affineAddLoop(dst, a, b []float64, k, c float64) {
	a, b = a[:len(dst)], b[:len(dst)]
	i := 0
	for ; i+4 <= len(dst); i += 4 {
		s, t, d := a[i:i+4:i+4], b[i:i+4:i+4], dst[i:i+4:i+4]
		d[0] = float64(float64(k*s[0])+c) + t[0]
		d[1] = float64(float64(k*s[1])+c) + t[1]
		d[2] = float64(float64(k*s[2])+c) + t[2]
		d[3] = float64(float64(k*s[3])+c) + t[3]
	}
	for ; i < len(dst); i++ {
		dst[i] = float64(float64(k*a[i])+c) + b[i]
	}
}

func affineSquareAddLoop(dst, a, b []float64, k, c float64) {
	a, b = a[:len(dst)], b[:len(dst)]
	i := 0
	for ; i+4 <= len(dst); i += 4 {
		s, t, d := a[i:i+4:i+4], b[i:i+4:i+4], dst[i:i+4:i+4]
		d[0] = float64(float64(k*float64(s[0]*s[0]))+c) + t[0]
		d[1] = float64(float64(k*float64(s[1]*s[1]))+c) + t[1]
		d[2] = float64(float64(k*float64(s[2]*s[2]))+c) + t[2]
		d[3] = float64(float64(k*float64(s[3]*s[3]))+c) + t[3]
	}
	for ; i < len(dst); i++ {
		dst[i] = float64(float64(k*float64(a[i]*a[i]))+c) + b[i]
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
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, d := a[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = s[0] + c
			d[1] = s[1] + c
			d[2] = s[2] + c
			d[3] = s[3] + c
		}
		for ; i < len(dst); i++ {
			dst[i] = a[i] + c
		}
	case cSub:
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, d := a[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = s[0] - c
			d[1] = s[1] - c
			d[2] = s[2] - c
			d[3] = s[3] - c
		}
		for ; i < len(dst); i++ {
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
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			t, d := b[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = c + t[0]
			d[1] = c + t[1]
			d[2] = c + t[2]
			d[3] = c + t[3]
		}
		for ; i < len(dst); i++ {
			dst[i] = c + b[i]
		}
	case cSub:
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			t, d := b[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = c - t[0]
			d[1] = c - t[1]
			d[2] = c - t[2]
			d[3] = c - t[3]
		}
		for ; i < len(dst); i++ {
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
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, t, d := a[i:i+4:i+4], b[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = s[0] - t[0]
			d[1] = s[1] - t[1]
			d[2] = s[2] - t[2]
			d[3] = s[3] - t[3]
		}
		for ; i < len(dst); i++ {
			dst[i] = a[i] - b[i]
		}
	case cMul:
		i := 0
		for ; i+4 <= len(dst); i += 4 {
			s, t, d := a[i:i+4:i+4], b[i:i+4:i+4], dst[i:i+4:i+4]
			d[0] = s[0] * t[0]
			d[1] = s[1] * t[1]
			d[2] = s[2] * t[2]
			d[3] = s[3] * t[3]
		}
		for ; i < len(dst); i++ {
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
