package main

import (
	"fmt"
	"io"
	"math/rand/v2"
	"strings"

	"warmfit/cluster"
	"warmfit/fit"
	"warmfit/lattice/model"
	"warmfit/validate"
)

// The demo's measurements: synthetic data of the whole array (step 2)
// and exact snapshots of the patch (step 4), made as "warmfit sample"
// makes them, so that the commands in the report write the same data.

// demoData is how the array's data were made.
type demoData struct {
	Order  int    // expansion order of the expectation values
	Reason string // why the order policy stopped there
}

// Step 2: binomial data of the whole array from the expansion of the
// truth, at the order the one order policy chooses for the data
// tolerance.
func (d *demoRun) stepMeasure() error {
	sc, m := &d.sc, d.device
	bases, _, err := fit.SchemeBases("covering", sc.numSites(), m.Terms, sc.Seed)
	if err != nil {
		return err
	}
	d.bases = bases
	d.say("%d product bases cover every term (%s); %d shots each, %d in all",
		len(bases), describeBases(bases), sc.Shots, sc.Shots*int64(len(bases)))
	exp, err := cluster.NewExpansion(m.Lattice, m.Terms)
	if err != nil {
		return err
	}
	bar := newProgressBar(d.env, "expanding")
	res, choice, err := exp.ChooseOrder(modelCoeffs(m), sc.Beta, sc.dataTol(), cluster.NewOrderPolicy(m.Lattice, m.Terms), cluster.Options{Progress: bar.Update})
	bar.Done()
	if err != nil {
		return err
	}
	d.data = &demoData{Order: choice.Order, Reason: choice.Reason}
	t, err := fit.SyntheticTable(m.Terms, res.Expect[choice.Order-1], bases, sc.Shots, sc.Seed)
	if err != nil {
		return fmt.Errorf("the expansion of the truth at order %d: %w", choice.Order, err)
	}
	t.Comments = append(t.Comments, fmt.Sprintf("expectations from the linked-cluster expansion at order %d, beta %s", choice.Order, fmtFloat(sc.Beta)))
	d.record(2, fmt.Sprintf("binomial synthetic data from the expansion's expectations at the order the order policy chose for a truncation error of %s (cross-term correlations ignored)", fmtG3(sc.dataTol())),
		"sample", "--model", "truth.json", "--shots", fmt.Sprint(sc.Shots), "--bases", "covering",
		"--generator", "binomial", "--order", fmt.Sprint(choice.Order), "--seed", fmt.Sprint(sc.Seed), "-o", "data.csv")
	d.say("binomial generator: expectations from the order-%d expansion of the truth (%s); each term drawn on its own (cross-term correlations are ignored)",
		choice.Order, choice.Reason)
	meta := tableMeta("sample", "expectation table: one row per model term, with the shots it got", t.Comments)
	t.Comments = nil
	meta.set("model", "truth.json")
	meta.set("generator", "binomial")
	meta.set("order", choice.Order)
	meta.set("beta", sc.Beta)
	meta.set("seed", sc.Seed)
	return d.writeCSV("data.csv", meta, func(w io.Writer) error { return fit.WriteTable(w, t) })
}

// sampleExact draws exact Gibbs-state snapshots of m in the bases and
// writes them as a snapshot file.
func (d *demoRun) sampleExact(m *model.Model, bases []string, name string) error {
	s, err := validate.NewSampler(m.Lattice.NumSites(), m.Terms, m.Beta)
	if err != nil {
		return err
	}
	// The stream "warmfit sample --generator exact --seed S" draws from.
	rng := rand.New(rand.NewPCG(d.sc.Seed, 0x5a3e))
	counts := make([][]validate.Count, len(bases))
	for i, b := range bases {
		if counts[i], err = s.Sample(b, int(d.sc.Shots), rng); err != nil {
			return err
		}
	}
	meta := &csvMeta{Command: "sample", Contents: "snapshot file: one row per basis and outcome seen, with its count"}
	meta.line("warmfit sample: exact Gibbs-state snapshots of %d qubits, beta %s, %d bases x %d shots, seed %d", m.Lattice.NumSites(), fmtFloat(m.Beta), len(bases), d.sc.Shots, d.sc.Seed)
	meta.set("generator", "exact")
	meta.set("beta", m.Beta)
	meta.set("bases", bases)
	meta.set("shots_per_basis", d.sc.Shots)
	meta.set("seed", d.sc.Seed)
	return d.writeCSV(name, meta, func(w io.Writer) error {
		sw := fit.NewSnapshotWriter(w, m.Lattice.NumSites())
		for i, b := range bases {
			for _, c := range counts[i] {
				if err := sw.Write(b, c.Outcome, int64(c.Count)); err != nil {
					return err
				}
			}
		}
		return sw.Flush()
	})
}

// describeBases names bases that measure every qubit in one letter.
func describeBases(bases []string) string {
	var names []string
	for _, b := range bases {
		if strings.Count(b, b[:1]) == len(b) {
			names = append(names, "all "+b[:1])
		} else {
			names = append(names, "mixed")
		}
	}
	return strings.Join(names, ", ")
}
