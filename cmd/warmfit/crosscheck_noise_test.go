package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// crosscheckNoiseModel writes a 14-site XXZ chain at beta 0.5: too big
// for dense references (default --dense-qubits 11), so crosscheck uses
// thermal typicality, cheap at this size.
func crosscheckNoiseModel(t *testing.T) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "chain14.json")
	if code, _, stderr := runCmd("model", "--lattice", "chain:14", "--preset", "xxz", "--set", "Jxy=0.4,Jz=0.3,hz=0.2",
		"--disorder", "0.1", "--seed", "3", "--beta", "0.5", "-o", path); code != 0 {
		t.Fatalf("model: exit %d: %s", code, stderr)
	}
	return path
}

// recheckOrders recomputes every order's agreement, status and judged /
// bounded counts from the per-value numbers of the JSON output, by the
// rules help crosscheck states: a value agrees when |diff| <= tol + 2
// stderr; a miss lies beyond the noise when |diff| > tol + z stderr, z the
// Bonferroni two-sided 5% point of Student t with vectors-1 degrees of
// freedom over the order's values (jackknife errors, Efron & Tibshirani,
// An Introduction to the Bootstrap, ch. 11, from memory); a value is
// judged when its truncation estimate e is finite and 2 stderr < e, and
// bounded when |diff| <= e + 2 stderr. It returns the number of values
// with a finite estimate that were left unjudged for noise.
func recheckOrders(t *testing.T, doc crosscheckJSON, vectors int) (leftOut int) {
	t.Helper()
	tdist := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(vectors - 1)}
	for _, oc := range doc.Orders {
		z := tdist.Quantile(1 - 0.05/(2*float64(oc.Values)))
		miss, beyond, judged, bounded := 0, 0, 0, 0
		for _, p := range doc.Patch {
			if p.Orders < oc.Order || len(p.Sites) <= oc.Order {
				continue
			}
			for _, v := range p.Values {
				d := math.Abs(v.Expansion[oc.Order-1] - v.Exact)
				if d > doc.Tol+2*v.Stderr {
					miss++
					if d > doc.Tol+z*v.Stderr {
						beyond++
					}
				}
				if e := v.Estimate[oc.Order-1]; e != nil {
					if 2*v.Stderr < *e {
						judged++
						if d <= *e+2*v.Stderr {
							bounded++
						}
					} else {
						leftOut++
					}
				}
			}
		}
		want := "agrees"
		switch {
		case beyond > 0:
			want = "disagrees"
		case miss > 0:
			want = "noisy"
		}
		if oc.Agrees != (miss == 0) || oc.Status != want || oc.Unresolved+oc.Beyond != miss || oc.Beyond != beyond {
			t.Errorf("order %d: agrees %v status %s (%d unresolved, %d beyond); recomputed %d misses, %d beyond: %s",
				oc.Order, oc.Agrees, oc.Status, oc.Unresolved, oc.Beyond, miss, beyond, want)
		}
		if oc.Judged != judged || oc.Bounded != bounded {
			t.Errorf("order %d: judged %d bounded %d; recomputed %d, %d", oc.Order, oc.Judged, oc.Bounded, judged, bounded)
		}
	}
	return leftOut
}

// Typicality references with 8 vectors at a tolerance far below their
// noise: order 1 disagrees beyond the noise, the converged orders miss
// only within it, and the verdict says "inconclusive" (not "do not
// trust"), with the number of vectors that brings 2 standard errors
// below the tolerance and the flag that sets them. The truncation
// estimates are judged only where the reference noise is below them, so
// the noisy references do not call them optimistic.
func TestCrosscheckTypicalityTooNoisy(t *testing.T) {
	modelPath := crosscheckNoiseModel(t)
	svg := filepath.Join(t.TempDir(), "cc.svg")
	const vectors = 8
	code, out, stderr := runCmd("crosscheck", "--model", modelPath, "--order", "6", "--vectors", fmt.Sprint(vectors),
		"--seed", "2", "--tol", "1e-4", "--format", "json", "--svg", svg)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	doc := crosscheckDoc(t, out)
	if doc.Patch[0].Method != "typicality" || len(doc.Orders) != 6 {
		t.Fatalf("method %s, %d orders", doc.Patch[0].Method, len(doc.Orders))
	}
	if leftOut := recheckOrders(t, doc, vectors); leftOut == 0 {
		t.Error("no truncation estimate was left unjudged for noise: the test does not exercise the rule")
	}
	if doc.Orders[0].Status != "disagrees" || doc.Orders[5].Status != "noisy" {
		t.Errorf("statuses %s at order 1, %s at order 6; want disagrees, noisy", doc.Orders[0].Status, doc.Orders[5].Status)
	}
	if doc.Trusted || doc.AgreeOrder != 0 || doc.NoisyOrder < 2 {
		t.Errorf("trusted %v agree_order %d noisy_order %d", doc.Trusted, doc.AgreeOrder, doc.NoisyOrder)
	}
	// Errors fall as 1/sqrt(vectors): N vectors bring 2 sigma to tol when
	// N = vectors (2 sigma / tol)^2, rounded up to two digits.
	sigma := 0.0
	for _, v := range doc.Patch[0].Values {
		sigma = math.Max(sigma, v.Stderr)
	}
	exact := vectors * math.Pow(2*sigma/doc.Tol, 2)
	if n := float64(doc.VectorsNeeded); n < exact || n > 1.1*exact {
		t.Errorf("vectors_needed %d, want %.0f rounded up to two digits", doc.VectorsNeeded, exact)
	}
	verdict := strings.Join(doc.Verdict, "\n")
	if !strings.HasPrefix(verdict, "WARNING: inconclusive") || !strings.Contains(verdict, fmt.Sprintf("--vectors %d", doc.VectorsNeeded)) ||
		strings.Contains(verdict, "NOT agree") || strings.Contains(verdict, "optimistic") {
		t.Errorf("verdict:\n%s", verdict)
	}
	if !strings.Contains(stderr, "WARNING: inconclusive") {
		t.Errorf("stderr has no inconclusive warning:\n%s", stderr)
	}
	fig, err := os.ReadFile(svg)
	if err != nil || !strings.Contains(string(fig), "tolerance (--tol") || !strings.Contains(string(fig), "would resolve it") {
		t.Errorf("figure lacks the tolerance legend or the note (%v)", err)
	}
}

// The same references at a tolerance above their noise: the converged
// orders agree and the verdict is "trusted"; far too cold, the expansion
// disagrees by more than the noise explains and the verdict says so.
func TestCrosscheckTypicalityAgreesAndDisagrees(t *testing.T) {
	modelPath := crosscheckNoiseModel(t)
	const vectors = 8
	for _, c := range []struct {
		args   []string
		prefix string
		status string // of the last order
	}{
		{[]string{"--tol", "0.2", "--order", "6"}, "trusted:", "agrees"},
		{[]string{"--beta", "3", "--order", "3"}, "WARNING: at beta = 3 the expansion does NOT agree", "disagrees"},
	} {
		args := append([]string{"crosscheck", "--model", modelPath, "--vectors", fmt.Sprint(vectors), "--seed", "2", "--format", "json"}, c.args...)
		code, out, stderr := runCmd(args...)
		if code != exitOK {
			t.Fatalf("%v: exit %d: %s", c.args, code, stderr)
		}
		doc := crosscheckDoc(t, out)
		recheckOrders(t, doc, vectors)
		if !strings.HasPrefix(doc.Verdict[0], c.prefix) || doc.Orders[len(doc.Orders)-1].Status != c.status || doc.NoisyOrder != 0 {
			t.Errorf("%v: last status %s, noisy_order %d, verdict %q", c.args, doc.Orders[len(doc.Orders)-1].Status, doc.NoisyOrder, doc.Verdict)
		}
		if c.status == "disagrees" && !strings.Contains(doc.Verdict[0], "by more than the references' noise explains") {
			t.Errorf("the disagreement does not say it lies beyond the noise: %q", doc.Verdict[0])
		}
	}
}
