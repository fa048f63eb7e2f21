package model

import (
	"bytes"
	"io"
	"testing"

	"warmfit/lattice"
)

// benchModelFile writes the all2local template on an open side x side
// square lattice: 9 terms per bond and 3 per site.
func benchModelFile(b *testing.B, side int) ([]byte, *Model) {
	b.Helper()
	l, err := lattice.Build(lattice.Spec{Kind: "square", Size: []int{side, side}})
	if err != nil {
		b.Fatal(err)
	}
	terms, err := Preset(l, "all2local", map[string]float64{"ZZ": 1, "X": 0.5})
	if err != nil {
		b.Fatal(err)
	}
	AddDisorder(terms, 0.1, 1)
	m := &Model{Lattice: l, Beta: 0.5, Terms: terms}
	var buf bytes.Buffer
	if err := Write(&buf, m); err != nil {
		b.Fatal(err)
	}
	return buf.Bytes(), m
}

func BenchmarkParseModel100x100All2Local(b *testing.B) {
	doc, m := benchModelFile(b, 100)
	b.SetBytes(int64(len(doc)))
	b.ReportMetric(float64(len(m.Terms)), "terms")
	for b.Loop() {
		if _, err := Parse(bytes.NewReader(doc), "bench.json"); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkWriteModel100x100All2Local(b *testing.B) {
	doc, m := benchModelFile(b, 100)
	b.SetBytes(int64(len(doc)))
	for b.Loop() {
		if err := Write(io.Discard, m); err != nil {
			b.Fatal(err)
		}
	}
}
