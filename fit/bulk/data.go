package bulk

import "fmt"

// Point is one measured value. T is in kelvin and H (mu0 H) in tesla;
// H is zero for chi and C, which are zero-field curves. Value and Stderr
// are in the internal unit of the series' quantity (Quantity.Unit).
type Point struct {
	T, H   float64
	Value  float64
	Stderr float64 // NaN when the series' errors are unknown
	Line   int     // line of the input file, for messages
}

// Series is one measured curve read from one column of one file.
// Points of chi and C are in increasing T; points of M are grouped by T
// (increasing) and in increasing H within each group.
type Series struct {
	Quantity Quantity
	File     string // file name as given, for messages and output
	Column   string // the column header as written
	Unit     string // the unit as written in the header
	Points   []Point
	// StderrUnknown records that the file (or the caller) declared the
	// errors unknown; the fit then estimates one common error for the
	// series from the residual scatter and says so.
	StderrUnknown bool
}

// Label names the series in messages: "chi.csv:chi".
func (s *Series) Label() string { return fmt.Sprintf("%s:%s", s.File, s.Column) }

// TRange returns the lowest and highest temperature of the series.
func (s *Series) TRange() (lo, hi float64) {
	lo, hi = s.Points[0].T, s.Points[0].T
	for _, p := range s.Points {
		lo, hi = min(lo, p.T), max(hi, p.T)
	}
	return lo, hi
}
