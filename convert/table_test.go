package convert

import (
	"strings"
	"testing"
)

func TestReadCurve(t *testing.T) {
	pts, err := ReadCurve("c.csv", []byte("\xef\xbb\xbfstrain, stress\r\n0,0\r\n0.001, 205\r\n"))
	if err != nil {
		t.Fatal(err)
	}
	if len(pts) != 2 || pts[1] != [2]float64{0.001, 205} {
		t.Errorf("got %v", pts)
	}
	bad := []struct{ name, data, want string }{
		{"empty", "", "c.csv: empty file"},
		{"header", "eps,sig\n0,0\n1,1\n", "c.csv:1: header"},
		{"one point", "strain,stress\n0,0\n", "at least 2 points"},
		{"nan", "strain,stress\n0,0\n0.1,NaN\n", "c.csv:3: stress"},
		{"text", "strain,stress\n0,0\nx,1\n", "c.csv:3: strain \"x\""},
		{"short row", "strain,stress\n0,0\n1\n", "c.csv:3: 1 fields"},
	}
	for _, tc := range bad {
		_, err := ReadCurve("c.csv", []byte(tc.data))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
}
