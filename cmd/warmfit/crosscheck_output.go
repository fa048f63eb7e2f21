package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"

	"warmfit/lattice/model"
	"warmfit/validate"
)

// The result files of "warmfit crosscheck": the per-order table (CSV)
// and the whole comparison (JSON). Both carry the verdict, warnings
// included, so that a file read later says what stderr said.

// crosscheckCSVHeader names the columns of the per-order table.
const crosscheckCSVHeader = "order,values,max_diff,rms_diff,max_stderr,whole_patch,agrees,status,judged,bounded,median_estimate_ratio"

// crosscheckCSVMeta is the metadata of the per-order table: the setting,
// the lowest agreeing order and the verdict, warnings included.
func crosscheckCSVMeta(r *validate.CrosscheckResult, how string) *csvMeta {
	meta := &csvMeta{Command: "crosscheck", Contents: "one row per expansion order: the expansion against exact results on the patches"}
	meta.line("warmfit crosscheck: %s at beta = %s, tolerance %s; %s", how, fmtFloat(r.Beta), fmtG3(r.Tol), crosscheckMethods(r))
	meta.line("agree_order: %d (0: none), trusted: %v", r.AgreeOrder, r.Trusted)
	if r.NoisyOrder > 0 {
		meta.line("noisy_order: %d (no disagreement beyond the reference noise from there), vectors_needed: %d", r.NoisyOrder, r.VectorsNeeded)
	}
	for _, v := range r.Verdict {
		if strings.HasPrefix(v, "WARNING") {
			meta.line("%s", v)
		} else {
			meta.line("verdict: %s", v)
		}
	}
	meta.set("patches", how)
	meta.set("beta", r.Beta)
	meta.set("tolerance", r.Tol)
	meta.set("agree_order", r.AgreeOrder)
	meta.set("trusted", r.Trusted)
	meta.set("noisy_order", r.NoisyOrder)
	meta.set("vectors_needed", r.VectorsNeeded)
	meta.set("verdict", r.Verdict)
	return meta
}

// writeCrosscheckCSV writes the per-order table (header first; the
// metadata goes through writeCSVResult).
func writeCrosscheckCSV(w io.Writer, r *validate.CrosscheckResult) error {
	bw := bufio.NewWriter(w)
	fmt.Fprintln(bw, crosscheckCSVHeader)
	for _, oc := range r.Orders {
		fmt.Fprintf(bw, "%d,%d,%s,%s,%s,%v,%v,%s,%d,%d,%s\n", oc.Order, oc.Values,
			fmtExact(oc.MaxDiff), fmtExact(oc.RMSDiff), fmtExact(oc.Noise), oc.Exact, oc.Agrees, oc.Status, oc.Judged, oc.Covered, fmtExact(oc.MedianRatio))
	}
	return bw.Flush()
}

// crosscheckMethods says which exact methods made the references.
func crosscheckMethods(r *validate.CrosscheckResult) string {
	count := map[string]int{}
	for _, p := range r.Patches {
		count[p.Method]++
	}
	var parts []string
	for _, m := range []string{"dense", "typicality"} {
		if c := count[m]; c > 0 {
			name := "dense diagonalisation"
			if m == "typicality" {
				name = "thermal typicality"
			}
			parts = append(parts, fmt.Sprintf("%d by %s", c, name))
		}
	}
	return "exact references: " + strings.Join(parts, ", ")
}

// The JSON document. Truncation estimates the expansion cannot make
// (+Inf) are written as null.
type crosscheckJSON struct {
	Beta       float64 `json:"beta"`
	Tol        float64 `json:"tol"`
	Patches    string  `json:"patches"`
	AgreeOrder int     `json:"agree_order"`
	Trusted    bool    `json:"trusted"`
	// NoisyOrder and VectorsNeeded: see validate.CrosscheckResult.
	NoisyOrder    int                   `json:"noisy_order"`
	VectorsNeeded int                   `json:"vectors_needed"`
	Verdict       []string              `json:"verdict"`
	Warnings      []string              `json:"warnings"`
	Orders        []crosscheckOrderJSON `json:"orders"`
	Patch         []crosscheckPatchJSON `json:"patch_results"`
}

type crosscheckOrderJSON struct {
	Order      int     `json:"order"`
	Values     int     `json:"values"`
	MaxDiff    float64 `json:"max_diff"`
	RMSDiff    float64 `json:"rms_diff"`
	MaxStderr  float64 `json:"max_stderr"`
	WholePatch bool    `json:"whole_patch"`
	Agrees     bool    `json:"agrees"`
	// Status is agrees, noisy or disagrees; Unresolved and Beyond count
	// the values that miss within and beyond the reference noise.
	Status     string `json:"status"`
	Unresolved int    `json:"unresolved"`
	Beyond     int    `json:"beyond_noise"`
	Judged     int    `json:"judged"`
	Bounded    int    `json:"bounded"`
	// MedianRatio is the median of the truncation estimate over the true
	// difference (0: none judged).
	MedianRatio float64 `json:"median_estimate_ratio"`
	// WorstPatch and WorstTerm locate the largest difference.
	WorstPatch int    `json:"worst_patch"`
	WorstTerm  string `json:"worst_term"`
}

type crosscheckPatchJSON struct {
	Sites  []int                 `json:"sites"`
	Method string                `json:"method"`
	Orders int                   `json:"orders"`
	Values []crosscheckValueJSON `json:"values"`
}

type crosscheckValueJSON struct {
	// Term is the term's key in the model file (its sites numbered as
	// there, not as in the patch).
	Term      string     `json:"term"`
	Exact     float64    `json:"exact"`
	Stderr    float64    `json:"stderr"`
	Expansion []float64  `json:"expansion"` // [order-1]
	Estimate  []*float64 `json:"trunc_estimate"`
}

func writeCrosscheckJSON(w io.Writer, m *model.Model, r *validate.CrosscheckResult, how string) error {
	doc := crosscheckJSON{Beta: r.Beta, Tol: r.Tol, Patches: how, AgreeOrder: r.AgreeOrder, Trusted: r.Trusted,
		NoisyOrder: r.NoisyOrder, VectorsNeeded: r.VectorsNeeded, Verdict: r.Verdict, Warnings: []string{}}
	for _, v := range r.Verdict {
		if strings.HasPrefix(v, "WARNING") {
			doc.Warnings = append(doc.Warnings, v)
		}
	}
	for _, oc := range r.Orders {
		oj := crosscheckOrderJSON{Order: oc.Order, Values: oc.Values, MaxDiff: oc.MaxDiff, RMSDiff: oc.RMSDiff,
			MaxStderr: oc.Noise, WholePatch: oc.Exact, Agrees: oc.Agrees, Status: oc.Status, Unresolved: oc.Unresolved, Beyond: oc.Beyond, Judged: oc.Judged, Bounded: oc.Covered, MedianRatio: oc.MedianRatio, WorstPatch: oc.WorstPatch}
		if oc.WorstPatch >= 0 {
			p := &r.Patches[oc.WorstPatch]
			oj.WorstTerm = m.Terms[p.Patch.Parent[oc.WorstTerm]].Key()
		}
		doc.Orders = append(doc.Orders, oj)
	}
	for pi := range r.Patches {
		p := &r.Patches[pi]
		pj := crosscheckPatchJSON{Sites: p.Patch.Sites, Method: p.Method, Orders: p.Orders}
		for i, ex := range p.Exact {
			v := crosscheckValueJSON{Term: m.Terms[p.Patch.Parent[i]].Key(), Exact: ex.Value, Stderr: ex.Stderr}
			for o := 1; o <= p.Orders; o++ {
				v.Expansion = append(v.Expansion, p.Expansion[o-1][i])
				var e *float64
				if est := p.Estimate[o-1][i]; !math.IsInf(est, 0) && !math.IsNaN(est) {
					e = &est
				}
				v.Estimate = append(v.Estimate, e)
			}
			pj.Values = append(pj.Values, v)
		}
		doc.Patch = append(doc.Patch, pj)
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(doc)
}
