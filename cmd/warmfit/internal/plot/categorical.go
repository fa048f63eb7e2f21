package plot

// The categorical colours of the house style, for things that are told
// apart rather than ordered: the kinds of Pauli terms, the orders of an
// expansion, the methods of a comparison. Each is given in OKLCh
// (lightness, chroma, hue in degrees) and was chosen for this package:
// hues spread around the circle in an order of our own, then lightness
// and chroma tuned so that every pair stays apart for normal vision and
// under simulated deuteranopia, protanopia and tritanopia (see the
// package documentation for the numbers and colour_test.go for the
// check).
var categoryLCh = [...]oklch{
	{0.52, 0.190, 277}, // indigo
	{0.63, 0.136, 69},  // ochre
	{0.40, 0.129, 36},  // oxblood
	{0.67, 0.105, 212}, // lagoon
	{0.78, 0.089, 123}, // lichen
	{0.51, 0.077, 333}, // heather
	{0.78, 0.105, 252}, // cornflower
	{0.52, 0.162, 31},  // brick
	{0.60, 0.060, 163}, // sage
}

// NumCategories is the number of distinct categorical colours.
const NumCategories = len(categoryLCh)

// Category returns the i-th categorical colour, cycling after
// NumCategories. It panics if i is negative.
func Category(i int) Color {
	if i < 0 {
		panic("plot: negative category")
	}
	c, _ := categoryLCh[i%NumCategories].lab().color()
	return c
}

// categoryShapes pairs each category with a marker shape, so that points
// stay apart where colours do not (in grey print, say).
var categoryShapes = [...]Shape{Circle, Square, Diamond, TriangleUp, TriangleDown, Hexagon}

// CategoryMarker returns the marker of the i-th category: its colour
// and a shape of its own among the first six.
func CategoryMarker(i int) MarkerStyle {
	return MarkerStyle{Shape: categoryShapes[i%len(categoryShapes)], Color: Category(i)}
}

// termKinds fixes the category of each kind of Pauli term, so that XX
// has one colour and shape in every figure.
var termKinds = []string{"XX", "YY", "ZZ", "X", "Y", "Z", "XY", "XZ", "YZ"}

// KindMarker returns the marker of a kind of Pauli term, named by its
// letters ("XX", "Z", ...; "YX" counts as "XY"). Other kinds share the
// house ink and a circle.
func KindMarker(kind string) MarkerStyle {
	if len(kind) == 2 && kind[0] > kind[1] {
		kind = string([]byte{kind[1], kind[0]})
	}
	for i, k := range termKinds {
		if k == kind {
			return CategoryMarker(i)
		}
	}
	return MarkerStyle{Shape: Circle, Color: inkColor}
}
