package convert

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestEngineeringToTrue checks the conversion against a hand-worked example.
// Definitions: ASTM E8/E8M (engineering values) and Dieter, Mechanical
// Metallurgy, 3rd ed., 1986, ch. 8 (eps = ln(1 + e), sigma = s (1 + e));
// both from memory. The arithmetic, by hand:
//
//	row 1: e = 0,     s = 0       -> eps = 0,                            sigma = 0
//	row 2: e = 0.002, s = 250 MPa -> eps = ln 1.002
//	                                     = 0.002 - 0.002^2/2 + 0.002^3/3 - ...
//	                                     = 0.002 - 0.000002 + 0.0000000027
//	                                     = 0.0019980027,                  sigma = 250 x 1.002 = 250.5 MPa
//	row 3: e = 0.10,  s = 400 MPa -> eps = ln 1.1 = 0.0953102 (tables: ln 1.1 = 0.09531018),
//	                                                                     sigma = 400 x 1.1 = 440 MPa
//	row 4: e = 0.25,  s = 480 MPa -> eps = ln 1.25 = ln 5 - 2 ln 2 = 1.6094379 - 1.3862944 = 0.2231435,
//	                                                                     sigma = 480 x 1.25 = 600 MPa
//
// Tolerance 1e-6 relative: the hand values carry 7 or 8 significant digits.
func TestEngineeringToTrue(t *testing.T) {
	eng := [][2]float64{{0, 0}, {0.002, 250}, {0.10, 400}, {0.25, 480}}
	want := [][2]float64{{0, 0}, {0.0019980027, 250.5}, {0.0953102, 440}, {0.2231435, 600}}
	got, err := EngineeringToTrue("t.csv", eng)
	if err != nil {
		t.Fatal(err)
	}
	for i := range want {
		for j := 0; j < 2; j++ {
			if !near(got[i][j], want[i][j], 1e-6) {
				t.Errorf("row %d col %d: got %.10g, want %.10g (hand-worked)", i+1, j, got[i][j], want[i][j])
			}
		}
	}
	// Round trip: TrueToEngineering inverts it to round-off (1e-14 relative,
	// a few ulps of log1p/expm1).
	back, err := TrueToEngineering("t.csv", got)
	if err != nil {
		t.Fatal(err)
	}
	for i := range eng {
		for j := 0; j < 2; j++ {
			if !near(back[i][j], eng[i][j], 1e-14) {
				t.Errorf("round trip row %d col %d: got %.17g, want %.17g", i+1, j, back[i][j], eng[i][j])
			}
		}
	}
}

func near(a, b, rel float64) bool {
	if b == 0 {
		return math.Abs(a) <= rel
	}
	return math.Abs(a-b) <= rel*math.Abs(b)
}

// TestEngineeringToTrueRefuses: data past the maximum engineering stress
// (necking, Considere; Dieter 1986 ch. 8, from memory) and impossible
// strains get an error naming the row.
func TestEngineeringToTrueRefuses(t *testing.T) {
	cases := []struct {
		name  string
		pts   [][2]float64
		want  string
		neck  bool
		valid bool
	}{
		{"past necking", [][2]float64{{0, 0}, {0.002, 250}, {0.1, 400}, {0.2, 420}, {0.25, 410}}, "data row 5 (strain 0.25, stress 410)", true, false},
		{"nan", [][2]float64{{0, 0}, {0.002, math.NaN()}}, "data row 2: stress NaN", false, false},
		{"strain below -1", [][2]float64{{0, 0}, {-1, -5}}, "data row 2: engineering strain -1", false, false},
		// A reversal ends the first loading branch: unloading is not necking.
		{"cyclic", [][2]float64{{0, 0}, {0.004, 300}, {0.002, -100}, {-0.004, -320}, {0.004, 330}}, "", false, true},
		// A plateau at the maximum is still uniform (dF = 0 is the onset).
		{"plateau", [][2]float64{{0, 0}, {0.1, 400}, {0.12, 400}}, "", false, true},
	}
	for _, tc := range cases {
		_, err := EngineeringToTrue("t.csv", tc.pts)
		if tc.valid {
			if err != nil {
				t.Errorf("%s: unexpected error %v", tc.name, err)
			}
			continue
		}
		if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "t.csv: ") {
			t.Errorf("%s: error %v, want it to start with the file and contain %q", tc.name, err, tc.want)
		}
		if tc.neck != errors.Is(err, ErrPastNecking) {
			t.Errorf("%s: errors.Is(err, ErrPastNecking) = %v, want %v", tc.name, !tc.neck, tc.neck)
		}
	}
}

// TestPlasticStrain: eps_p = eps - sigma/E (additive split; Lubliner 1990,
// section 3.2, from memory). By hand: E = 200000 MPa, (0.001, 200) is
// elastic (0.001 - 0.001 = 0); (0.01, 400): 0.01 - 0.002 = 0.008; unloaded
// to (0.006, -400): 0.006 + 0.002 = 0.008 (unloading keeps eps_p).
func TestPlasticStrain(t *testing.T) {
	got := PlasticStrain([][2]float64{{0.001, 200}, {0.01, 400}, {0.006, -400}}, 200000)
	for i, w := range []float64{0, 0.008, 0.008} {
		if math.Abs(got[i]-w) > 1e-15 {
			t.Errorf("row %d: got %g, want %g", i+1, got[i], w)
		}
	}
}

// TestResample: linear interpolation, by hand: between (0, 0) and (0.001,
// 200) the midpoint 0.0005 has 100; between (0.001, 200) and (0.011, 300),
// 0.006 is halfway: 250. Recorded points come back exactly.
func TestResample(t *testing.T) {
	pts := [][2]float64{{0, 0}, {0.001, 200}, {0.011, 300}}
	got, err := Resample("r.csv", pts, []float64{0.0005, 0.006, 0.011, 0, 0.001})
	if err != nil {
		t.Fatal(err)
	}
	want := [][2]float64{{0.0005, 100}, {0.006, 250}, {0.011, 300}, {0, 0}, {0.001, 200}}
	for i := range want {
		if math.Abs(got[i][1]-want[i][1]) > 1e-12 || got[i][0] != want[i][0] {
			t.Errorf("point %d: got %v, want %v", i, got[i], want[i])
		}
	}
	u := UniformStrains(0, 0.011, 12)
	if len(u) != 12 || u[0] != 0 || u[11] != 0.011 || math.Abs(u[1]-0.001) > 1e-15 {
		t.Errorf("UniformStrains: %v", u)
	}
	bad := []struct {
		name string
		pts  [][2]float64
		at   []float64
		want string
	}{
		{"unsorted", [][2]float64{{0, 0}, {0.002, 1}, {0.001, 2}}, []float64{0.001}, "data row 3: strain 0.001 does not exceed"},
		{"repeated", [][2]float64{{0, 0}, {0, 1}}, []float64{0}, "data row 2"},
		{"one point", [][2]float64{{0, 0}}, []float64{0}, "at least 2 points, found 1"},
		{"nan", [][2]float64{{0, 0}, {math.NaN(), 1}}, []float64{0}, "data row 2: strain NaN"},
		{"outside", pts, []float64{0.02}, "outside the recorded range"},
	}
	for _, tc := range bad {
		_, err := Resample("r.csv", tc.pts, tc.at)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
}
