package plot

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Ottosson (2020), https://bottosson.github.io/posts/oklab/: the matrix
// M1 from CIE XYZ (D65) to LMS, and the table of XYZ / OKLab pairs given
// there to check implementations (three decimals).
var xyzToLMS = [3][3]float64{
	{0.8189330101, 0.3618667424, -0.1288597137},
	{0.0329845436, 0.9293118715, 0.0361456387},
	{0.0482003018, 0.2643662691, 0.6338517070},
}

func xyzToOKLab(xyz [3]float64) oklab { return lmsToOKLab(mul3(xyzToLMS, xyz)) }

func TestOKLabPublishedTable(t *testing.T) {
	for _, tt := range []struct {
		xyz  [3]float64
		want oklab
	}{
		{[3]float64{0.950, 1.000, 1.089}, oklab{1.000, 0.000, 0.000}},
		{[3]float64{1, 0, 0}, oklab{0.450, 1.236, -0.019}},
		{[3]float64{0, 1, 0}, oklab{0.922, -0.671, 0.263}},
		{[3]float64{0, 0, 1}, oklab{0.153, -1.415, -0.449}},
	} {
		if got := xyzToOKLab(tt.xyz); deltaE(got, tt.want) > 0.002 {
			t.Errorf("XYZ %v: OKLab %+.4f, want %+.3f (Ottosson 2020)", tt.xyz, got, tt.want)
		}
	}
}

// The package converts from linear sRGB with Ottosson's combined matrix;
// going through CIE XYZ with the sRGB primaries of IEC 61966-2-1 and M1
// must give the same point, to the rounding of the published matrices.
func TestOKLabAgreesWithXYZRoute(t *testing.T) {
	srgbToXYZ := [3][3]float64{ // IEC 61966-2-1
		{0.4124, 0.3576, 0.1805},
		{0.2126, 0.7152, 0.0722},
		{0.0193, 0.1192, 0.9505},
	}
	rng := rand.New(rand.NewPCG(1, 1))
	for range 200 {
		rgb := [3]float64{rng.Float64(), rng.Float64(), rng.Float64()}
		direct := linearToOKLab(rgb)
		viaXYZ := xyzToOKLab(mul3(srgbToXYZ, rgb))
		if d := deltaE(direct, viaXYZ); d > 1e-3 {
			t.Errorf("linear sRGB %v: direct %+.5f, through XYZ %+.5f (ΔE %.2g)", rgb, direct, viaXYZ, d)
		}
	}
	white := linearToOKLab([3]float64{1, 1, 1})
	if deltaE(white, oklab{1, 0, 0}) > 1e-4 {
		t.Errorf("white is %+.6f, want L=1, a=b=0 (Ottosson 2020)", white)
	}
}

func TestOKLabRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 3))
	for range 500 {
		c := Color{rng.Float64(), rng.Float64(), rng.Float64()}
		back, ok := c.oklab().color()
		// The published matrices are inverse to about 1e-10; near zero
		// the sRGB encoding's slope of 12.92 lifts that to ~1e-5, well
		// below one 8-bit step (0.004).
		if !ok || math.Abs(back.R-c.R)+math.Abs(back.G-c.G)+math.Abs(back.B-c.B) > 2e-5 {
			t.Errorf("%v -> %v (in gamut %v)", c, back, ok)
		}
		p := c.oklab()
		if q := p.lch().lab(); deltaE(p, q) > 1e-12 {
			t.Errorf("%v: OKLCh round trip moved %v to %v", c, p, q)
		}
	}
}

func TestSRGBTransfer(t *testing.T) {
	for _, tt := range []struct{ encoded, linear float64 }{
		{0, 0},
		{1, 1},
		{0.04045, 0.04045 / 12.92}, // the linear segment's end (IEC 61966-2-1)
		{0.5, 0.21404114},          // ((0.5+0.055)/1.055)^2.4, derived
	} {
		if got := srgbToLinear(tt.encoded); math.Abs(got-tt.linear) > 1e-8 {
			t.Errorf("srgbToLinear(%v) = %v, want %v", tt.encoded, got, tt.linear)
		}
		if got := linearToSRGB(tt.linear); math.Abs(got-tt.encoded) > 1e-6 {
			t.Errorf("linearToSRGB(%v) = %v, want %v", tt.linear, got, tt.encoded)
		}
	}
}

func TestGamutDetection(t *testing.T) {
	for _, tt := range []struct {
		p  oklch
		in bool
	}{
		{oklch{0.5, 0, 0}, true},             // a grey
		{oklch{0.7, 0.05, 150}, true},        // a muted green
		{oklch{0.7, 0.40, 150}, false},       // far too saturated
		{oklch{0.98, 0.10, 250}, false},      // a pale blue of that chroma cannot be that light
		{oklch{0.05, 0.10, 30}, false},       // nor a dark red that dark
		{Color{1, 0, 0}.oklab().lch(), true}, // the sRGB primary itself
	} {
		if _, ok := tt.p.lab().color(); ok != tt.in {
			t.Errorf("OKLCh %+v: in gamut %v, want %v", tt.p, ok, tt.in)
		}
	}
}

func TestHex(t *testing.T) {
	for _, tt := range []struct {
		c    Color
		want string
	}{
		{Color{0, 0, 0}, "#000000"},
		{Color{1, 1, 1}, "#ffffff"},
		{Color{1.2, -0.1, 0.5}, "#ff0080"},
	} {
		if got := tt.c.Hex(); got != tt.want {
			t.Errorf("%v.Hex() = %s, want %s", tt.c, got, tt.want)
		}
	}
	if c := hexColor("#27231f"); c.Hex() != "#27231f" {
		t.Errorf("hexColor round trip gave %s", c.Hex())
	}
}

// deltaE is the Euclidean distance in OKLab, the colour difference
// Ottosson (2020) designed the space for.
func deltaE(p, q oklab) float64 {
	return math.Sqrt((p.L-q.L)*(p.L-q.L) + (p.a-q.a)*(p.a-q.a) + (p.b-q.b)*(p.b-q.b))
}
