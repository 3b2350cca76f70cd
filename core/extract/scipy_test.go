package extract

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"stagewright/core/chardata"
	"stagewright/core/device"
)

// readSimpleCSV reads testdata/fit/scipy_data.csv (vgs,vds,vbs,id,w,l,temp
// after a comment line) with encoding/csv, independent of chardata's reader.
func readSimpleCSV(t *testing.T, path string) chardata.Table {
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	r := csv.NewReader(strings.NewReader(string(b)))
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	tab := chardata.Table{Pol: device.NMOS}
	for k, rec := range recs[1:] {
		var v [7]float64
		for j := range v {
			if v[j], err = strconv.ParseFloat(rec[j], 64); err != nil {
				t.Fatal(err)
			}
		}
		tab.Points = append(tab.Points, chardata.Point{VGS: v[0], VDS: v[1], VBS: v[2], ID: v[3], W: v[4], L: v[5], TempC: v[6],
			GM: math.NaN(), GDS: math.NaN(), CGG: math.NaN(), Line: k + 3})
	}
	return tab
}

// TestAgreesWithSciPy fits the data of testdata/fit/scipy_fit.py, which
// writes our model's equations again in numpy and fits them with
// scipy.optimize.least_squares (trust-region reflective) from the base's
// values, and compares. Both minimize the same ½·Σ(ln ID residual)² over the
// same points and bounds, and the minimum is interior. Our LM stops when an
// iteration lowers the cost by less than 1e-10 of itself, so the cost may sit
// above the minimum by about that much (tolerance 1e-6 of the cost) and a
// parameter off it by about √1e-10 = 1e-5 relative, times the conditioning
// of the problem; the tolerances, 1e-3 relative and 0.1 mV for thresh,
// leave room for a condition number of 100 and still fail on a wrong model
// equation (a 1 % change of any one term moves the parameters by more).
func TestAgreesWithSciPy(t *testing.T) {
	tab := readSimpleCSV(t, "../../testdata/fit/scipy_data.csv")
	var want struct {
		Points int
		Cost   float64
		Params map[string]float64
	}
	b, err := os.ReadFile("../../testdata/fit/scipy_result.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	base := d180n()
	base.LambdaL, base.ECrit, base.DIBL = 0, 0, 0 // as the script holds them
	o := Options{Pol: device.NMOS, Base: base, TNom: 300.15, Free: []string{"thresh", "mobility", "body", "mobred"}}
	res, err := Fit(tab, o, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Report.Points != want.Points {
		t.Fatalf("%d points above the floor, SciPy used %d", res.Report.Points, want.Points)
	}
	// Our cost at the fitted parameters, computed here from the report's
	// inputs: ½·Σ ln² (ID_model/ID_data).
	pr, _ := prepare(tab)
	ev := newEvaluator(pr, 300.15, !modelUsesDIBL(base, 300.15))
	if err := ev.eval(res.Params, false); err != nil {
		t.Fatal(err)
	}
	cost := 0.0
	for i, p := range pr.pts {
		if p.inFit {
			e := math.Log(ev.id[i] / p.ID)
			cost += e * e / 2
		}
	}
	t.Logf("cost %.6g (SciPy %.6g), %d iterations", cost, want.Cost, res.Iterations)
	if math.Abs(cost-want.Cost) > 1e-6*want.Cost {
		t.Errorf("cost %.6g, SciPy %.6g: more than 1e-6 of the cost apart", cost, want.Cost)
	}
	for _, c := range []struct {
		key      string
		got      float64
		rel, abs float64
	}{
		{"thresh", res.Params.VT0, 0, 1e-4},
		{"mobility", res.Params.U0, 1e-3, 0},
		{"body", res.Params.Gamma, 1e-3, 0},
		{"mobred", res.Params.Theta, 1e-3, 0},
	} {
		w := want.Params[c.key]
		tol := c.abs + c.rel*math.Abs(w)
		if math.Abs(c.got-w) > tol {
			t.Errorf("%s = %.6g, SciPy %.6g (± %.3g)", c.key, c.got, w, tol)
		} else {
			t.Logf("%s = %.6g, SciPy %.6g", c.key, c.got, w)
		}
	}
}
