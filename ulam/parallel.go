package ulam

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// forEachBlock calls fn(worker, block) for block = 0 … blocks−1 on up to
// GOMAXPROCS goroutines. The blocks are fixed by the caller, independent of
// the number of goroutines, and each writes its own part of the output, so
// the results are the same whatever the core count.
func forEachBlock(blocks int, fn func(worker, block int)) {
	workers := min(runtime.GOMAXPROCS(0), blocks)
	if workers <= 1 {
		for b := range blocks {
			fn(0, b)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				b := int(next.Add(1)) - 1
				if b >= blocks {
					return
				}
				fn(w, b)
			}
		}()
	}
	wg.Wait()
}

// forEachBlockOrdered calls compute(worker, block) for block = 0 … blocks−1
// on up to GOMAXPROCS goroutines, as forEachBlock does, and place(block)
// for every block in increasing order, each after its compute has
// returned, one at a time. No goroutine waits for another's block: the
// one that finishes the block next in line places it, and then every
// block after it that is already computed, while the others go on
// computing. place may therefore rely on the blocks before it having been
// placed, and on nothing else.
func forEachBlockOrdered(blocks int, compute func(worker, block int), place func(block int)) {
	var (
		mu       sync.Mutex
		computed = make([]bool, blocks)
		next     int  // the first block not yet placed
		placing  bool // a goroutine is placing blocks
	)
	finished := func(b int) {
		mu.Lock()
		computed[b] = true
		if placing || b != next {
			mu.Unlock()
			return
		}
		placing = true
		for {
			first := next
			for next < blocks && computed[next] {
				next++
			}
			last := next
			if first == last {
				placing = false
				mu.Unlock()
				return
			}
			mu.Unlock()
			for p := first; p < last; p++ {
				place(p)
			}
			mu.Lock()
		}
	}
	forEachBlock(blocks, func(worker, b int) {
		compute(worker, b)
		finished(b)
	})
}

// parallel runs the functions concurrently on up to GOMAXPROCS goroutines
// and returns when all have returned.
func parallel(fns ...func()) {
	if runtime.GOMAXPROCS(0) <= 1 {
		for _, fn := range fns {
			fn()
		}
		return
	}
	var wg sync.WaitGroup
	for _, fn := range fns[1:] {
		wg.Add(1)
		go func() {
			defer wg.Done()
			fn()
		}()
	}
	fns[0]()
	wg.Wait()
}
