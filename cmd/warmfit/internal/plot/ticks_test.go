package plot

import (
	"math"
	"slices"
	"testing"
)

// Nice steps of 1, 2, 2.5 and 5 times a power of ten (common practice).
func TestNiceStep(t *testing.T) {
	for _, tt := range []struct {
		span    float64
		target  int
		integer bool
		want    float64
	}{
		{10, 5, false, 2},
		{1, 4, false, 0.25},
		{7, 3, false, 2.5},
		{0.003, 3, false, 0.001},
		{3, 6, true, 1},
		{7, 3, true, 5},
		{0, 5, false, 1},
		{math.Inf(1), 5, false, 1},
	} {
		if got := niceStep(tt.span, tt.target, tt.integer); math.Abs(got-tt.want) > 1e-12*tt.want {
			t.Errorf("niceStep(%v, %d, %v) = %v, want %v", tt.span, tt.target, tt.integer, got, tt.want)
		}
	}
}

func TestExportedNiceStep(t *testing.T) {
	if got := NiceStep(8, 16); got != 0.5 {
		t.Errorf("NiceStep(8, 16) = %v, want 0.5", got)
	}
	if got := NiceStep(1.7, 6); got != 0.5 {
		t.Errorf("NiceStep(1.7, 6) = %v, want 0.5", got)
	}
}

func TestLinearTicksAndWiden(t *testing.T) {
	if got := linearTicks(-0.3, 0.61, 0.2); !slices.Equal(got, []float64{-0.2, 0, 0.2, 0.4, 0.6}) {
		t.Errorf("ticks %v", got)
	}
	for _, tt := range []struct{ lo, hi, wlo, whi float64 }{
		{0.13, 0.87, 0, 1},
		{-0.47, 1.16, -0.5, 1.5},
		{5, 5, 4.5, 5.5},
		{0, 0, -1, 1},
	} {
		lo, hi := widen(tt.lo, tt.hi, 4, false)
		if math.Abs(lo-tt.wlo) > 1e-12 || math.Abs(hi-tt.whi) > 1e-12 {
			t.Errorf("widen(%v, %v) = [%v, %v], want [%v, %v]", tt.lo, tt.hi, lo, hi, tt.wlo, tt.whi)
		}
	}
	if n := len(linearTicks(0, 1e9, 1e-3)); n != maxTicks {
		t.Errorf("%d ticks, want the bound %d", n, maxTicks)
	}
}

func TestLogTicks(t *testing.T) {
	major, minor, decades := logTicks(1, 1000)
	if !decades || !slices.Equal(major, []float64{1, 10, 100, 1000}) || len(minor) != 24 {
		t.Errorf("[1, 1000]: major %v, %d minor", major, len(minor))
	}
	major, minor, _ = logTicks(1e-9, 1)
	if len(major) != 5 || major[len(major)-1] != 1 || len(minor) != 5 {
		t.Errorf("[1e-9, 1]: major %v, minor %v; want every second decade labelled, up to 1", major, minor)
	}
	if major, _, decades = logTicks(2, 8); decades || len(major) < 2 {
		t.Errorf("[2, 8]: %v, decades %v; want linear ticks inside one decade", major, decades)
	}
	if lo, hi := widenLog(0.003, 42); lo != 0.001 || hi != 100 {
		t.Errorf("widenLog = [%v, %v]", lo, hi)
	}
}

func TestTickLabels(t *testing.T) {
	for _, tt := range []struct {
		ticks []float64
		step  float64
		want  []string
	}{
		{[]float64{0, 0.25, 0.5}, 0.25, []string{"0", "0.25", "0.50"}},
		{[]float64{-1, 0, 1}, 1, []string{"−1", "0", "1"}},
		{[]float64{0, 50000, 100000}, 50000, []string{"0", "5×10^4", "10^5"}},
		{[]float64{1e-5, 2.5e-5, 5e-5}, 2.5e-5, []string{"10^−5", "2.5×10^−5", "5×10^−5"}},
		{[]float64{-2e-5, 0, 2e-5}, 2e-5, []string{"−2×10^−5", "0", "2×10^−5"}},
		{[]float64{-1e-5}, 1e-5, []string{"−10^−5"}},
	} {
		for i, l := range tickLabels(tt.ticks, tt.step) {
			if got := l.String(); got != tt.want[i] {
				t.Errorf("label of %v (step %v): %q, want %q", tt.ticks[i], tt.step, got, tt.want[i])
			}
		}
	}
	for k, want := range map[int]string{-2: "0.01", 0: "1", 3: "1000"} {
		if got := decadeLabel(k, true).String(); got != want {
			t.Errorf("decade %d: %q, want %q", k, got, want)
		}
	}
	if got := decadeLabel(-7, false).String(); got != "10^−7" {
		t.Errorf("decade -7: %q", got)
	}
}
