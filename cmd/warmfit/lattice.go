package main

import (
	"errors"
	"fmt"
	"io"
	"sort"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"warmfit/cmd/warmfit/internal/plot"
	"warmfit/lattice"
)

// latticeOptions holds the flags of "warmfit lattice"; Flags resets them
// on every invocation.
var latticeOptions struct {
	lattice     string
	shells      int
	clusters    int
	format      outputFormat
	svg         string
	out         string
	maxClusters int64
	budget      time.Duration
	csv         csvFlags
	flags       *pflag.FlagSet // to tell an explicit --clusters 0 from none
}

func init() {
	register(&command{
		Name:  "lattice",
		Short: "describe a lattice, count its connected clusters, draw it",
		Usage: "warmfit lattice --lattice SPEC [--shells 2] [--clusters L] [--format text|json] [--svg FILE]",
		Long: `The lattice named by --lattice is built and described: kind, size,
boundary, number of sites, nearest-neighbour (NN) and next-nearest-neighbour
(NNN) bonds, the coordination numbers of the interaction graph and its
connected components.

SPEC is KIND:SIZE[:BOUNDARY] with KIND one of chain, ladder, square,
triangular, honeycomb, kagome, cubic; SIZE counts unit cells per axis
(12, 4x4, 3x3x3); BOUNDARY is open (default) or periodic. A JSON file
holding a custom graph {"kind": "graph", "sites": [[x, y], ...],
"bonds": [[i, j], ...]} (or a model file) may be given instead. Sites are
numbered x fastest, then y, then z; site = b + nb*cell in a cell of nb
sites.

--shells 2 adds the NNN bonds to the interaction graph (J1-J2 models); for
a custom graph the NNN pairs are those at graph distance 2.

--clusters L prints, as CSV "size,count", the number of connected site
clusters (connected induced subgraphs of the interaction graph) of each size
1..L, the clusters a linked-cluster expansion of order L sums over. The
count is refused beforehand when its estimate exceeds --max-clusters.
Like every CSV of warmfit, it comes with a JSON sidecar FILE.meta.json beside
-o FILE (the lattice and the bound); --csv-comments puts that in '#' lines
instead, --meta M.json writes the sidecar anywhere.

--format json prints the lattice object (as in model files) with its site
coordinates and bonds. --svg FILE draws the lattice with numbered sites, NN
bonds solid and NNN bonds dashed.`,
		Example: `# describe a 4x4 open square lattice and draw it
warmfit lattice --lattice square:4x4 --svg square.svg

# connected clusters of up to 8 sites on a 20x20 square lattice (CSV)
warmfit lattice --lattice square:20x20 --clusters 8

# J1-J2 interaction graph of a periodic triangular lattice, as JSON
warmfit lattice --lattice triangular:6x6:periodic --shells 2 --format json

# a custom graph from a file
warmfit lattice --lattice testdata/graphs/house.json --clusters 5`,
		Flags: func(fs *pflag.FlagSet) {
			o := &latticeOptions
			o.flags = fs
			fs.StringVar(&o.lattice, "lattice", "", latticeFlagUsage)
			fs.IntVar(&o.shells, "shells", 0, "neighbour shells in the interaction graph, 1 or 2 (default: the lattice's own)")
			fs.IntVar(&o.clusters, "clusters", 0, "print the number of connected clusters of each size 1..`L` as CSV")
			fs.StringVar((*string)(&o.format), "format", string(formatText), "output format of the description: text or json")
			fs.StringVar(&o.svg, "svg", "", "draw the lattice into `FILE` (SVG)")
			addOutputFlag(fs, &o.out, "the output")
			fs.Int64Var(&o.maxClusters, "max-clusters", 1e11, "refuse --clusters when the estimated count exceeds this (0: no limit)")
			addBudgetFlag(fs, &o.budget)
			addCSVFlags(fs, &o.csv)
		},
		Run: runLattice,
	})
}

func runLattice(env *runEnv, args []string) error {
	o := &latticeOptions
	if len(args) > 0 {
		return usagef("unexpected argument %q (flags only)", args[0])
	}
	if o.lattice == "" {
		return usagef("--lattice is required (for example --lattice square:4x4)")
	}
	if o.shells != 0 && o.shells != 1 && o.shells != 2 {
		return usagef("--shells %d: want 1 or 2", o.shells)
	}
	if o.clusters < 0 || (o.clusters == 0 && o.flags.Changed("clusters")) {
		return usagef("--clusters %d: the cluster size bound must be at least 1", o.clusters)
	}
	if _, err := parseChoice("--format", string(o.format), formatText, formatJSON); err != nil {
		return err
	}
	if o.clusters > 0 && o.format == formatJSON {
		return usagef("--clusters prints CSV and does not combine with --format json")
	}
	if o.clusters == 0 {
		if err := o.csv.misuse("the lattice description; they go with --clusters"); err != nil {
			return err
		}
	}
	if o.maxClusters < 0 {
		return usagef("--max-clusters %d: want a count >= 0", o.maxClusters)
	}
	if err := checkBudgetFlag(o.budget); err != nil {
		return err
	}
	if err := checkOutputs(withCSV("-o", o.out, o.csv, outputFile{"--svg", o.svg}), o.lattice); err != nil {
		return err
	}
	l, err := openLattice(o.lattice, o.shells)
	if err != nil {
		return err
	}
	if comps := l.Components(); len(comps) > 1 {
		fmt.Fprintf(env.Stderr, "warmfit lattice: note: %s has %d disconnected components; no cluster joins two of them\n",
			o.lattice, len(comps))
	}
	// Refusals come before any file is written.
	if o.clusters > 0 {
		est, _ := l.EstimateClusters(o.clusters)
		if o.maxClusters > 0 && est > o.maxClusters {
			return usagef("%s has about %.3g connected clusters of up to %d sites, more than --max-clusters %d; lower --clusters or raise --max-clusters",
				l.Spec, float64(est), o.clusters, o.maxClusters)
		}
		e := workEstimate{
			What:     fmt.Sprintf("counting about %.3g connected clusters of up to %d sites on %s", float64(est), o.clusters, l.Spec),
			Duration: seconds(float64(est) * countSecondsPerCluster),
			Flag:     "--clusters",
		}
		if err := admit(env.Stderr, "lattice", e, o.budget); err != nil {
			return err
		}
	}
	if o.svg != "" {
		if err := writeFileAtomic(o.svg, func(w io.Writer) error { _, err := plot.LatticeFigure(plot.LatticeGeometry(l)).WriteTo(w); return err }); err != nil {
			return err
		}
	}
	switch {
	case o.clusters > 0:
		counts := l.CountClusters(o.clusters)
		meta := &csvMeta{Command: "lattice", Contents: "one row per cluster size: the number of connected site clusters of that size"}
		meta.line("warmfit lattice: connected clusters of %s (%d sites) up to %d sites", l.Spec, l.NumSites(), o.clusters)
		meta.set("lattice", o.lattice)
		meta.set("sites", l.NumSites())
		meta.set("max_size", o.clusters)
		meta.set("shells", l.Spec.Shells)
		return writeCSVResult(env, o.out, o.csv, meta, func(w io.Writer) error { return writeClusterCSV(w, counts) })
	case o.format == formatJSON:
		return writeOutput(env, o.out, l.WriteJSON)
	default:
		return writeOutput(env, o.out, func(w io.Writer) error { return writeLatticeSummary(w, o.lattice, l) })
	}
}

// openLattice opens a specification or file and applies --shells (0
// keeps the lattice's own). Mistakes in a specification are usage errors;
// an unreadable or invalid file is a failure.
func openLattice(specOrPath string, shells int) (*lattice.Lattice, error) {
	l, err := lattice.Open(specOrPath)
	if err == nil && shells != 0 {
		l, err = l.WithShells(shells)
	}
	if err != nil {
		var se *lattice.SpecError
		if errors.As(err, &se) {
			return nil, usagef("--lattice: %v", err)
		}
		return nil, err
	}
	return l, nil
}

// writeClusterCSV writes the size,count table of the file-format contract.
func writeClusterCSV(w io.Writer, counts []int64) error {
	if _, err := fmt.Fprintln(w, "size,count"); err != nil {
		return err
	}
	for k, c := range counts {
		if _, err := fmt.Fprintf(w, "%d,%d\n", k+1, c); err != nil {
			return err
		}
	}
	return nil
}

// writeLatticeSummary writes the human description of a lattice.
func writeLatticeSummary(w io.Writer, name string, l *lattice.Lattice) error {
	var b strings.Builder
	s := l.Spec
	if s.Kind == "graph" {
		fmt.Fprintf(&b, "lattice      custom graph from %s\n", name)
	} else {
		fmt.Fprintf(&b, "lattice      %s\n", s)
		fmt.Fprintf(&b, "kind         %s, %s unit cells, %s boundary\n", s.Kind, joinSize(s.Size), s.Boundary)
	}
	fmt.Fprintf(&b, "sites        %d (%d-D coordinates)\n", l.NumSites(), l.Dim())
	fmt.Fprintf(&b, "NN bonds     %d\n", len(l.NN))
	nnnNote := "not interacting; --shells 2 adds them"
	if s.Shells == 2 {
		nnnNote = "in the interaction graph"
	}
	if s.Kind == "graph" {
		nnnNote = "pairs at graph distance 2, " + nnnNote
	}
	fmt.Fprintf(&b, "NNN bonds    %d (%s)\n", len(l.NNN), nnnNote)
	fmt.Fprintf(&b, "interaction  %d bonds, coordination %s\n", len(l.InteractionBonds()), coordinationHistogram(l))
	comps := l.Components()
	if len(comps) == 1 {
		b.WriteString("components   1 (connected)\n")
	} else {
		sizes := make([]string, len(comps))
		for k, c := range comps {
			sizes[k] = fmt.Sprint(len(c))
		}
		fmt.Fprintf(&b, "components   %d, of %s sites (clusters never join two)\n", len(comps), strings.Join(sizes, ", "))
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func joinSize(size []int) string {
	parts := make([]string, len(size))
	for k, n := range size {
		parts[k] = fmt.Sprint(n)
	}
	return strings.Join(parts, "x")
}

// coordinationHistogram lists "degree: sites" pairs, e.g. "2: 4, 3: 8, 4: 4".
func coordinationHistogram(l *lattice.Lattice) string {
	hist := map[int]int{}
	for i := 0; i < l.NumSites(); i++ {
		hist[len(l.Neighbors(i))]++
	}
	degrees := make([]int, 0, len(hist))
	for d := range hist {
		degrees = append(degrees, d)
	}
	sort.Ints(degrees)
	parts := make([]string, len(degrees))
	for k, d := range degrees {
		site := "sites"
		if hist[d] == 1 {
			site = "site"
		}
		parts[k] = fmt.Sprintf("%d on %d %s", d, hist[d], site)
	}
	return strings.Join(parts, ", ")
}
