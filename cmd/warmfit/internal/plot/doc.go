// Package plot draws the figures of warmfit as SVG documents: data
// against fitted curves, error bars, residuals, histograms, series on
// log axes, and lattices coloured by the values on their sites and
// bonds. Every command that writes a figure uses it, so that all of them
// share one look, one set of colour scales and one set of guarantees
// about what reaches the file.
//
// # Overview
//
// A Document is a canvas of a fixed size in pixels, x to the right and
// y down, painted in the order of the calls. On it one places
//
//   - panels (Document.Panel): a plot area with a frame, a grid at the
//     ticks, tick labels, axis labels and a title, linear or logarithmic
//     axes (Axis), and methods that draw in data coordinates: Line,
//     Points, ErrorBars, Band, Bars (histograms), ShadeX and ShadeY
//     (a trusted range, a band of one standard error), HLine and VLine
//     (reference lines with labels), Annotate, and Legend;
//   - stacks of panels sharing one x axis (Document.Stack): a quantity
//     with its residuals below, or several quantities against one
//     temperature;
//   - colour bars (Document.ColorBar) for a ColorMap, which maps data
//     onto one of the two continuous scales, Sequential and Diverging;
//   - lattices (Document.Lattice), scaled into a box and coloured by
//     LatticeLayers, with a LatticeView that tells where each site
//     landed and outlines groups of sites;
//   - text: Heading, Note (wrapped) and Text.
//
// LatticeFigure draws a lattice as a figure of its own, sized to it,
// with numbered sites, as `warmfit lattice --svg` writes it. Lattices
// come as a Geometry: coordinates, NN and NNN bonds, periodic
// translations and sites per cell, filled in by hand for any graph or
// taken from a *lattice.Lattice with LatticeGeometry. 3-D coordinates
// are drawn in oblique projection, and a bond that wraps around a
// periodic boundary is drawn as two stubs pointing across it.
//
// Categorical colours (Category, CategoryMarker) tell apart things that
// have no order; KindMarker gives each kind of Pauli term (XX, Z, ...)
// one colour and marker shape in every figure. CurveStroke,
// ErrorBarStroke, ReferenceStroke, TrustedFill and HistogramStyle are
// the house strokes and fills for the figures the commands compose, so
// that curves, error bars, references and trusted ranges look alike in
// all of them.
//
// # Example
//
//	d := plot.New(640, 420, "susceptibility")
//	top := d.Heading("Susceptibility against temperature", "")
//	ps := d.Stack(plot.Rect{X: 16, Y: top, W: 608, H: 420 - top - 8},
//		plot.Axis{Label: "T / J", Min: 0.3, Max: 6},
//		plot.Row{Title: "χ(T)", Y: plot.Axis{Label: "χ", Min: 0, Max: 0.2}, Weight: 3},
//		plot.Row{Y: plot.Axis{Label: "residual / σ", Min: -3, Max: 3}})
//	ps[0].ShadeX(1.2, 6, plot.TrustedFill())
//	m := plot.CategoryMarker(0)
//	ps[0].ErrorBars(ts, chi, errs, plot.ErrorBarStroke(m.Color))
//	ps[0].Points(ts, chi, m)
//	ps[0].Line(fitT, fitChi, plot.CurveStroke(plot.Category(7)))
//	ps[0].Legend(plot.LegendEntry{Label: "measured", Marker: &m})
//	ps[1].HLine(0, plot.ReferenceStroke(true), "")
//	ps[1].Points(ts, residuals, m)
//	if _, err := d.WriteTo(w); err != nil {
//		return err // names the panel, the method and the value
//	}
//
// # Invariants
//
// No NaN or Inf is ever written. Data are checked where they enter (a
// non-finite value, or a value that is not positive on a log axis, is
// an error naming the panel, the method and the index; such errors wrap
// a sentinel of the package, see the tests), and every number written
// into an attribute is checked again as it is formatted. A Document
// keeps the first error; later calls return without effect on the
// output, and WriteTo then writes nothing and returns the error, so a
// figure is either right or absent.
//
// Output is deterministic: the same calls give the same bytes (no map
// is iterated in drawing order; ids of clip paths and gradients count
// up within a document). Text and attribute values are escaped for XML;
// characters XML cannot carry become U+FFFD. Data drawn on a panel are
// clipped to its plot area, markers to that area grown by a marker's
// size; values far outside the axes are held at a million pixels, which
// changes the visible part of a line by less than 1/1000 pixel.
//
// Panels lay themselves out inside the outer rectangle they are given:
// the plot area is what remains after the title, the tick labels (their
// widths estimated from the advance widths of the widest face of the
// font stack) and the axis labels. A legend is placed, among eight
// places along the plot area's edges, where it hides the least of the
// data drawn before it; call Legend last.
//
// Slices passed to the methods are read during the call and not kept,
// except that a LatticeView keeps the Geometry it drew (do not change
// its slices while using the view). A Document is not safe for
// concurrent use; separate documents are independent, and the colour
// scales, maps and categories are safe for concurrent use.
//
// # What panics
//
// Programming errors panic: a document of non-positive or infinite
// size, slices of different lengths where one value per point is
// needed, a histogram without one more edge than bars, an empty Stack,
// an unknown Scale or Shape, a negative category, a NaN position on a
// colour scale, ColorMap.At on a map with an empty range (NewColorMap
// never makes one), and WriteTo inside an open clip group. Everything
// that depends on data returns an error instead.
//
// # The house style
//
// Figures are set in a humanist sans stack (Fira Sans, Noto Sans,
// DejaVu Sans Condensed, Arial, sans-serif) on a warm off-white paper
// (#fbf9f4), each plot area white. Figure titles are 15 px bold at the
// upper left, with a muted subtitle (#6d665d) below; panel titles are
// 12.5 px bold, left-aligned over their plot area; axis labels 12 px,
// tick labels and legends 10.5 px, notes 11 px. Only the left and bottom
// spines are drawn (0.9 px, #8f887d), with ticks of 4 px pointing out
// and a dotted grid (0.6 px, #dcd6cb) at the ticks. Curves are 1.7 px,
// error bars and reference lines 1 px; error bars have no caps. Markers
// are filled shapes of equal area (circle, square, diamond, two
// triangles, hexagon) outlined in their own colour darkened by 0.24 in
// OKLab lightness. Legends sit in a nearly opaque white box with a grid
// coloured frame. Numbers use the typographic minus and write powers of
// ten with superscripts; a log axis with decades between 0.01 and 1000
// labels them as plain numbers. Reference curves (y = x, a normal
// density, zero lines) are drawn in a dark neutral (#4a4640) that no
// data colour uses.
//
// # The colour scales
//
// The scales were designed for this package in OKLab, the perceptual
// colour space of B. Ottosson, "A perceptual color space for image
// processing" (2020, https://bottosson.github.io/posts/oklab/), and in
// its polar form OKLCh (lightness L, chroma C, hue h in degrees).
// Colours are converted to sRGB with the transfer function of IEC
// 61966-2-1. Each scale is a path given by formulas in OKLCh, evaluated
// at 513 points and interpolated linearly in OKLab between them; where
// a formula asks for more chroma than sRGB holds at that lightness and
// hue, the chroma is held to 85% of the gamut's limit, so every colour
// is inside the gamut with a margin.
//
// Sequential, for magnitudes, runs from pale frost to deep umber:
// lightness falls linearly from 0.95 to 0.27; hue turns linearly from
// 225 degrees (frost, #e1f2f9) through periwinkle (268, #9db6f5), mauve
// (310, #9e67c3) and wine (352, #862b59) to 395 = 35 degrees (umber,
// #42170c); chroma follows an arch from 0.02 to 0.147 just past the
// middle and back to 0.07. Neighbouring colours of 64 equal steps
// differ by ΔE 0.012 to 0.014 in OKLab, so equal steps look equal.
//
// Diverging, for signed values such as pulls and deviations, runs from
// deep cerulean (#174c6d) through a neutral light grey (#f2f2f2) at its
// centre, where zero falls, to deep copper (#69391f). Lightness falls
// linearly from 0.96 at the centre to 0.40 at both ends, so the two
// halves are mirror images in lightness; the cool half turns from hue
// 262 to 240 degrees, the warm half from 78 to 48; chroma rises as
// 0.13 s^0.8 with the distance s from the centre, held within 85% of the
// smaller of the two sides' gamut limits so that the halves mirror in
// chroma too (at most 0.108, ending at 0.078). The sign is carried by a
// blue-against-amber contrast, the one axis of colour that the common
// colour-vision deficiencies keep.
//
// The categorical colours are nine points chosen for this package:
// indigo, ochre, oxblood, lagoon, lichen, heather, cornflower, brick and
// sage, with lightness between 0.40 and 0.78 so that markers show on
// white. Their hues were placed by hand, then their lightness and chroma
// tuned to keep every pair apart for normal vision and under the
// simulated dichromacies. The smallest ΔE between any two of them is
// 0.106 for normal vision, 0.099 under deuteranopia, 0.102 under
// protanopia and 0.095 under tritanopia; between neighbours in the
// order of term kinds (XX, YY, ZZ, X, Y, Z, XY, XZ, YZ) at least 0.105.
// Marker shapes repeat the distinction for grey print.
//
// The tests check these promises on the exact paths and on the 8-bit
// colours written into the files: lightness strictly monotone along
// Sequential and along each half of Diverging, the halves of Diverging
// symmetric, every colour inside the gamut, Sequential strictly ordered
// in relative luminance, in the BT.601 luma of simple grey conversions
// and in lightness as seen under simulated deuteranopia, protanopia and
// tritanopia, and the categorical distances above. The simulations use
// the matrices of G. M. Machado, M. M. Oliveira and L. A. F. Fernandes,
// "A physiologically-based model for simulation of color vision
// deficiency", IEEE TVCG 15(6), 1291-1298 (2009), at severity 1.0 on
// linear sRGB.
package plot
