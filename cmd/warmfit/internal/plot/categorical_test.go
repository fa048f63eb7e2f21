package plot

import (
	"math"
	"testing"
)

// Thresholds for the categorical colours, in OKLab ΔE (Ottosson 2020
// scales the space so that L runs from 0 to 1; a just-noticeable
// difference is about 0.02, common practice): every pair apart by at
// least minPairDelta for every vision, neighbours in the kind order by
// at least minNeighbourDelta.
const (
	minPairDelta      = 0.09
	minNeighbourDelta = 0.10
)

func TestCategoriesDistinct(t *testing.T) {
	for _, v := range allVisions {
		worst, worstPair := math.Inf(1), [2]int{}
		for i := range NumCategories {
			for j := i + 1; j < NumCategories; j++ {
				d := deltaE(v.seen(Category(i)), v.seen(Category(j)))
				if d < worst {
					worst, worstPair = d, [2]int{i, j}
				}
				if d < minPairDelta {
					t.Errorf("%v: categories %d and %d (%s, %s) differ by ΔE %.3f", v, i, j, Category(i), Category(j), d)
				}
				if j == i+1 && d < minNeighbourDelta {
					t.Errorf("%v: neighbours %d and %d differ by ΔE %.3f", v, i, j, d)
				}
			}
		}
		t.Logf("%v: smallest ΔE %.3f, categories %v", v, worst, worstPair)
	}
}

// Markers sit on white: each colour must be in the gamut as designed and
// dark enough to show.
func TestCategoriesShowOnPaper(t *testing.T) {
	for i, p := range categoryLCh {
		if _, ok := p.lab().color(); !ok {
			t.Errorf("category %d: %+v is outside the sRGB gamut", i, p)
		}
		if p.L > 0.8 {
			t.Errorf("category %d: lightness %.2f is too pale for markers on white", i, p.L)
		}
	}
}

func TestKindMarker(t *testing.T) {
	if KindMarker("YX") != KindMarker("XY") {
		t.Error("YX and XY should look alike")
	}
	seen := map[Color]string{}
	for _, k := range termKinds {
		m := KindMarker(k)
		if other, dup := seen[m.Color]; dup {
			t.Errorf("%s and %s share the colour %s", k, other, m.Color)
		}
		seen[m.Color] = k
	}
	if KindMarker("XXZ").Color != inkColor {
		t.Error("unknown kinds should be drawn in ink")
	}
	if KindMarker("XX").Shape == KindMarker("YY").Shape {
		t.Error("XX and YY share a shape")
	}
}
