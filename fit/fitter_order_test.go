package fit_test

import (
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"warmfit/fit"
)

// fakeClock is an injected clock that advances by step at every reading:
// a machine as fast or as slow as the test wants, whatever the load.
type fakeClock struct {
	mu   sync.Mutex
	now  time.Time
	step time.Duration
}

func (c *fakeClock) read() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.now = c.now.Add(c.step)
	return c.now
}

// The automatic order of a fit is decided in machine-independent work
// units (issue 10, "Reproducible order choice"): a clock a million times
// slower gives the same order and the same coefficients as long as the
// wall-clock budget does not bind; when it binds, the result says that
// its order depends on the machine. (Common practice: a reproducible
// decision must not read the clock.)
func TestFitOrderIndependentOfClock(t *testing.T) {
	lat, terms := randomModel(t, "square:3x3", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 12)
	beta := scaleToBeta(terms, 0.3)
	_, vals := exactData(t, lat.NumSites(), terms, beta)
	data := gaussianData(vals, 1e-4, 6)
	run := func(step, budget time.Duration, maxWork float64) *fit.Result {
		t.Helper()
		clock := &fakeClock{now: time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC), step: step}
		var log []string
		res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: data, Beta: beta},
			fit.Options{Budget: budget, MaxFitWork: maxWork, Clock: clock.read, Log: func(format string, args ...any) {
				if !strings.Contains(format, "iteration") {
					log = append(log, format)
				}
			}})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("step %v, budget %v, work limit %.3g: order %d (orders %v), by budget %v, notes %q, warnings %q",
			step, budget, maxWork, res.Order, res.Truncation.Orders, res.StoppedByBudget, res.Notes, res.Warnings)
		return res
	}
	const longBudget = 100000 * time.Hour
	for _, maxWork := range []float64{3e6, 1e8} {
		fast := run(time.Microsecond, longBudget, maxWork)
		slow := run(time.Hour, longBudget, maxWork)
		if fast.StoppedByBudget || slow.StoppedByBudget {
			t.Fatalf("work limit %.3g: stopped by a budget that cannot bind", maxWork)
		}
		if fast.Order != slow.Order || !slices.Equal(fast.Truncation.Orders, slow.Truncation.Orders) || !slices.Equal(fast.Theta, slow.Theta) {
			t.Errorf("work limit %.3g: fast clock order %d (%v), slow clock order %d (%v)", maxWork, fast.Order, fast.Truncation.Orders, slow.Order, slow.Truncation.Orders)
		}
		if fast.Truncation.OK {
			continue
		}
		byWork := false
		for _, n := range fast.Notes {
			byWork = byWork || strings.Contains(n, "by the work limit")
		}
		if !byWork {
			t.Errorf("work limit %.3g: the rise stopped at order %d short of the target, and no note says the work limit stopped it: %q", maxWork, fast.Order, fast.Notes)
		}
	}
	// The guard: at an hour per clock reading the default 60 s budget
	// binds after the first order, and the result says so.
	guarded := run(time.Hour, 0, 0)
	if !guarded.StoppedByBudget {
		t.Fatalf("the 60 s budget did not stop a clock of an hour per reading: order %d", guarded.Order)
	}
	found := false
	for _, w := range guarded.Warnings {
		found = found || strings.Contains(w, "machine-dependent") && strings.Contains(w, "raise --budget")
	}
	if !found {
		t.Errorf("no warning that the budget's stop depends on the machine: %q", guarded.Warnings)
	}
	rep := fit.NewReport(guarded, fit.OrderAuto, fit.KindTable, "", 1e-3)
	if !rep.OrderByBudget {
		t.Error("the report does not record the budget's stop")
	}
}

// The guard's other stop: an order past the first that is still running
// when the budget runs out is abandoned, the answer is the order below,
// and the result says the stop depends on the machine. The clock jumps an
// hour once the second order has taken its first Newton step.
func TestFitBudgetAbandonsOrder(t *testing.T) {
	lat, terms := randomModel(t, "square:3x3", "xxz", map[string]float64{"Jxy": 1, "Jz": 0.7, "hz": 0.5, "hx": 0.4}, 0, 12)
	beta := scaleToBeta(terms, 0.3)
	_, vals := exactData(t, lat.NumSites(), terms, beta)
	clock := &fakeClock{now: time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC), step: time.Microsecond}
	res, err := fit.Fit(&fit.Problem{Lattice: lat, Terms: template(terms), Data: gaussianData(vals, 1e-4, 6), Beta: beta},
		fit.Options{StartOrder: 2, Clock: clock.read, Log: func(format string, args ...any) {
			if strings.HasPrefix(format, "order %d, iteration") && args[0] == 3 {
				clock.mu.Lock()
				clock.step = time.Hour
				clock.mu.Unlock()
			}
		}})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("order %d, by budget %v, warnings %q", res.Order, res.StoppedByBudget, res.Warnings)
	if res.Order != 2 || !res.StoppedByBudget {
		t.Fatalf("order %d, stopped by budget %v: want order 2 with the budget's stop", res.Order, res.StoppedByBudget)
	}
	found := false
	for _, w := range res.Warnings {
		found = found || strings.Contains(w, "stopped at order 2 by the 60 s budget") && strings.Contains(w, "order 3, within the work limit, was abandoned") && strings.Contains(w, "machine-dependent")
	}
	if !found {
		t.Errorf("no warning that order 3 was abandoned by the budget: %q", res.Warnings)
	}
}
