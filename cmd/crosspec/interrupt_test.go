package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"crosspec/compare"
	"crosspec/cycles"
	"crosspec/dynsys"
)

// countdownContext is cancelled at the (n+1)-th call of Err: a Ctrl-C
// that lands at a known point of a run (each Ulam grid of check asks Err
// twice, before the grid and as whileRunning starts it).
type countdownContext struct {
	context.Context
	left atomic.Int64
	once sync.Once
	done chan struct{}
}

func newCountdown(n int64) *countdownContext {
	c := &countdownContext{Context: context.Background(), done: make(chan struct{})}
	c.left.Store(n)
	return c
}

func (c *countdownContext) Done() <-chan struct{} { return c.done }

func (c *countdownContext) Err() error {
	if c.left.Add(-1) < 0 {
		c.once.Do(func() { close(c.done) })
		return context.Canceled
	}
	return nil
}

// checkOptionsFor is check on the tent map's Lyapunov exponent with the
// Ulam grids 1024…8192 and cycles to length 8, as JSON.
func checkOptionsFor(t *testing.T, s *dynsys.System) checkOptions {
	t.Helper()
	runs, err := parseRuns("1024,2048,4096,8192", "", 1)
	if err != nil {
		t.Fatal(err)
	}
	return checkOptions{
		methods:  map[string]bool{"ulam": true, "cycles": true},
		quantity: dynsys.Lyapunov,
		runs:     runs,
		points:   16,
		eigs:     3,
		tol:      compare.DefaultTolerance,
		expand:   expandOptions{maxLen: 8, function: cycles.SpectralDeterminant},
		format:   formatJSON,
	}
}

// TestCheckInterrupted: Ctrl-C during check keeps what was finished. Cut
// before the third Ulam grid, the report holds the first two and no cycle
// path (it had not started); cut in the cycle search after length 4, it
// holds every grid and the expansion to length 4. Either way the exit code
// is 1 with one line saying where the run was cut, after the report.
func TestCheckInterrupted(t *testing.T) {
	s, err := dynsys.Lookup("tent", nil)
	if err != nil {
		t.Fatal(err)
	}
	type doc struct {
		Interrupted string `json:"interrupted"`
		Ulam        struct {
			Runs []json.RawMessage `json:"runs"`
		} `json:"ulam"`
		Cycles struct {
			Orders []json.RawMessage `json:"orders"`
		} `json:"cycles"`
	}
	for _, c := range []struct {
		name          string
		ctx           context.Context
		stopAfter     int
		where         string
		grids, orders int
	}{
		{"before the third grid", newCountdown(4), 0, "before the Ulam run on 4096 cells", 2, 0},
		{"in the cycle search", context.Background(), 4, "during the cycle search at length 5", 4, 4},
	} {
		opts := checkOptionsFor(t, s)
		opts.expand.stopAfter = c.stopAfter
		var out, errs bytes.Buffer
		e := &env{stdout: &out, stderr: &errs, cmd: "crosspec check"}
		code := runCheckCommand(c.ctx, e, s, opts, []string{"crosspec", "check"})
		if code != exitNumerical || strings.Count(errs.String(), "\n") != 1 || !strings.Contains(errs.String(), "interrupted (Ctrl-C) "+c.where) {
			t.Errorf("%s: exit %d, stderr %q", c.name, code, errs.String())
		}
		var d doc
		if err := json.Unmarshal(out.Bytes(), &d); err != nil {
			t.Fatalf("%s: %v in %q", c.name, err, out.String())
		}
		if d.Interrupted != c.where || len(d.Ulam.Runs) != c.grids || len(d.Cycles.Orders) != c.orders {
			t.Errorf("%s: interrupted %q, %d grids, %d orders; want %q, %d, %d", c.name, d.Interrupted, len(d.Ulam.Runs), len(d.Cycles.Orders), c.where, c.grids, c.orders)
		}
	}

	// Cut before anything finished: no report, the message says so.
	var out, errs bytes.Buffer
	e := &env{stdout: &out, stderr: &errs, cmd: "crosspec check"}
	if code := runCheckCommand(newCountdown(0), e, s, checkOptionsFor(t, s), nil); code != exitNumerical || out.Len() != 0 || !strings.Contains(errs.String(), "before any result") {
		t.Errorf("interrupted at once: exit %d, stdout %q, stderr %q", code, out.String(), errs.String())
	}
}

// TestExpandInterrupted: an expansion whose search Ctrl-C cuts during
// length 4 expands lengths 1–3 only (not the longer lengths without their
// cycles), warns, and exits 1 after its report.
func TestExpandInterrupted(t *testing.T) {
	s, err := dynsys.Lookup("logistic-repeller", nil)
	if err != nil {
		t.Fatal(err)
	}
	var out, errs bytes.Buffer
	e := &env{stdout: &out, stderr: &errs, cmd: "crosspec expand"}
	opts := expandOptions{quantity: dynsys.EscapeRate, maxLen: 8, function: cycles.SpectralDeterminant, eigs: 3, stopAfter: 3}
	res, info, err := runExpansion(context.Background(), e, s, opts)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Orders) != 3 || info.interruptedAt != 4 {
		t.Fatalf("%d orders, interrupted at %d; want 3 orders, interrupted at 4", len(res.Orders), info.interruptedAt)
	}
	if err := writeExpansionReport(&out, s, opts, res, info, formatTable); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(out.String(), "interrupted (Ctrl-C) during length 4") {
		t.Errorf("report without the interruption warning:\n%s", out.String())
	}
	if code := info.exitCode(e); code != exitNumerical || !strings.Contains(errs.String(), "at length 4") {
		t.Errorf("exit %d, stderr %q", code, errs.String())
	}
}

// TestWhileRunning: the work's result when it finishes first; errStopped
// at once, without waiting for it, when the context is cancelled first.
func TestWhileRunning(t *testing.T) {
	v, err := whileRunning(context.Background(), func() (int, error) { return 7, nil })
	if v != 7 || err != nil {
		t.Errorf("finished work: %d, %v", v, err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	release := make(chan struct{})
	defer close(release)
	go func() {
		time.Sleep(10 * time.Millisecond)
		cancel()
	}()
	if _, err := whileRunning(ctx, func() (int, error) {
		<-release // work that outlasts the interruption
		return 0, nil
	}); !errors.Is(err, errStopped) {
		t.Errorf("cancelled context: %v, want errStopped without waiting", err)
	}
	ran := false
	if _, err := whileRunning(ctx, func() (int, error) { ran = true; return 0, nil }); !errors.Is(err, errStopped) || ran {
		t.Errorf("context cancelled before: %v, work ran %v", err, ran)
	}
}
