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
