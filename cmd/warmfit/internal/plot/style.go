package plot

// The house style: one set of fonts, sizes, weights and inks for every
// figure, so that a reader knows a warmfit figure at a glance. The
// package documentation describes it; change it here and nowhere else.

// fontFamily prefers humanist sans faces that are common on scientific
// desktops, then the condensed DejaVu face that most Linux systems ship.
// Text widths are estimated for the widest of them (see textWidth), so
// layouts hold with any of the fallbacks.
const fontFamily = "Fira Sans, Noto Sans, DejaVu Sans Condensed, Arial, sans-serif"

// Font sizes in pixels.
const (
	sizeFigureTitle = 15
	sizePanelTitle  = 12.5
	sizeAxisLabel   = 12
	sizeTick        = 10.5
	sizeLegend      = 10.5
	sizeNote        = 11
	sizeSiteNumber  = 12
)

// Line weights in pixels.
const (
	weightData  = 1.7 // curves
	weightThin  = 1.0 // error bars, reference lines
	weightAxis  = 0.9 // spines and ticks
	weightGrid  = 0.6
	weightFrame = 0.8 // legend box, colour bar edge
)

// Inks and grounds.
var (
	inkColor   = hexColor("#27231f") // text, spines: a warm near-black
	mutedColor = hexColor("#6d665d") // notes, secondary text
	gridColor  = hexColor("#dcd6cb")
	frameColor = hexColor("#8f887d")
	paperColor = hexColor("#fbf9f4") // figure background, a warm off-white
	plotColor  = hexColor("#ffffff") // inside a panel
	// refColor draws reference curves and lines (y = x, a normal
	// density, zero lines): a dark neutral that no data colour uses.
	refColor = hexColor("#4a4640")
)

// gridDash is the dash pattern of grid lines: short dots that stay light.
var gridDash = []float64{1.2, 2.8}

// Layout measures in pixels.
const (
	tickLength    = 4
	tickGap       = 3   // between a tick mark and its label
	labelGap      = 6   // between tick labels and the axis label
	titleGap      = 7   // between a panel title's baseline and the plot area
	markerRadius  = 3.4 // default marker size
	markerOutline = 0.7
	outlineShade  = -0.24 // OKLab lightness change from a fill to its outline
	legendPad     = 6
	legendInset   = 6 // between a legend and the plot area's edge
	legendSample  = 24
	lineHeight    = 1.35 // in font sizes
)

// The house strokes and fills, for the figures the commands compose:
// use these rather than widths and colours of their own, so that every
// figure draws curves, error bars, references and trusted ranges alike.

// CurveStroke is a data or model curve in colour c.
func CurveStroke(c Color) Stroke { return Stroke{Color: c, Width: weightData} }

// ErrorBarStroke is an error bar in colour c, a little transparent so
// that dense bars do not hide their markers.
func ErrorBarStroke(c Color) Stroke { return Stroke{Color: c, Width: weightThin, Alpha: 0.7} }

// ReferenceStroke is a reference in the dark neutral no data colour
// uses: dashed and thin for a line the data should follow (y = x, zero),
// solid at the weight of a curve for a curve they should fill (a normal
// density).
func ReferenceStroke(dashed bool) Stroke {
	if dashed {
		return Stroke{Color: refColor, Width: weightThin, Dash: []float64{6, 4}}
	}
	return Stroke{Color: refColor, Width: weightData}
}

// TrustedFill shades the range of a variable where a method is trusted
// (Panel.ShadeX): the pale cool side of the diverging scale.
func TrustedFill() Fill { return Fill{Color: Diverging.At(0.42), Alpha: 0.5} }

// HistogramStyle is the fill and outline of histogram bars.
func HistogramStyle() (Fill, Stroke) {
	c := Sequential.At(0.3)
	return Fill{Color: c}, Stroke{Color: c.shade(-0.2), Width: weightFrame}
}
