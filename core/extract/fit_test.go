package extract

import (
	"math"
	"math/rand/v2"
	"testing"

	"stagewright/core/chardata"
	"stagewright/core/device"
)

// grid is a characterization plan: every VGS × VDS × VBS at each length.
type grid struct {
	vgs, vds, vbs, ls []float64
	w, tempC          float64
}

func span(lo, hi, step float64) []float64 {
	var v []float64
	for x := lo; x <= hi+step/2; x += step {
		v = append(v, math.Round(x*1e6)/1e6)
	}
	return v
}

func defaultGrid() grid {
	return grid{
		vgs: span(0.05, 1.8, 0.05),
		vds: []float64{0.05, 0.1, 0.2, 0.4, 0.7, 1.0, 1.3, 1.6, 1.8},
		vbs: []float64{0, -0.5, -1},
		ls:  []float64{180e-9, 500e-9, 2e-6},
		w:   5e-6, tempC: 27,
	}
}

// table makes a table from id(vgs, vds, vbs, l) with seeded multiplicative
// Gaussian noise of relative size noise.
func (g grid) table(id func(vgs, vds, vbs, l float64) float64, noise float64, seed uint64) chardata.Table {
	rng := rand.New(rand.NewPCG(seed, 1))
	var t chardata.Table
	t.Pol = device.NMOS
	line := 2
	for _, l := range g.ls {
		for _, vb := range g.vbs {
			for _, vd := range g.vds {
				for _, vg := range g.vgs {
					i := id(vg, vd, vb, l) * (1 + noise*rng.NormFloat64())
					t.Points = append(t.Points, chardata.Point{VGS: vg, VDS: vd, VBS: vb, ID: i, W: g.w, L: l, TempC: g.tempC,
						GM: math.NaN(), GDS: math.NaN(), CGG: math.NaN(), Line: line})
					line++
				}
			}
		}
	}
	return t
}

// ourModel is the drain current of device.Current at the contract's DIBL
// form (applied here when the model does not apply it itself).
func ourModel(t testing.TB, p device.Params, w, tempC float64) func(vgs, vds, vbs, l float64) float64 {
	native := modelUsesDIBL(p, 300.15)
	devs := map[float64]device.Device{}
	return func(vgs, vds, vbs, l float64) float64 {
		d, ok := devs[l]
		if !ok {
			var err error
			d, err = device.New(device.NMOS, p, 300.15, w, l, tempC+273.15)
			if err != nil {
				t.Fatal(err)
			}
			devs[l] = d
		}
		vg := vgs
		if !native {
			vg += p.DIBL / l * math.Abs(vds)
		}
		return d.Current(vds, vg, 0, vbs).ID
	}
}

func d180n() device.Params {
	pr, _ := device.Builtin("d180")
	return pr.N
}

// TestRoundTrip fits data made by our own model with known parameters and
// 1 % seeded noise (a 1 % spread of current is typical of a careful
// measurement, from memory) and checks that each parameter comes back.
// Tolerances: with ~3000 points of 1 % noise the statistical error of a
// well-determined parameter is far below 1 %, so the bounds are set by how
// strongly the data pin each one: VT0 to 10 mV (a 1 % current error is
// n·U_T·0.01 ≈ 0.3 mV in weak inversion, and VT0 trades against γ and 2φF);
// µ0 to 5 %; γ to 10 %; θ, E_c, λ·L and DIBL to 25 %, since each acts only
// at one end of the bias range and trades against another (θ against E_c,
// λ against DIBL).
func TestRoundTrip(t *testing.T) {
	truth := d180n()
	truth.VT0, truth.U0, truth.Gamma = 0.48, 0.027, 0.52
	truth.Theta, truth.ECrit, truth.LambdaL, truth.DIBL = 0.3, 5e6, 0.03e-6, 12e-9
	g := defaultGrid()
	tab := g.table(ourModel(t, truth, g.w, g.tempC), 0.01, 7)
	o := Options{Pol: device.NMOS, Base: d180n(), TNom: 300.15, GDSWeight: DefaultGDSWeight}
	res, err := Fit(tab, o, nil)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("iterations %d, ID rms %.2f %%, start %+v", res.Iterations, res.Report.IDRMSPct, res.Start)
	for _, c := range []struct {
		name      string
		got, want float64
		rel, abs  float64
	}{
		{"thresh", res.Params.VT0, truth.VT0, 0, 0.010},
		{"mobility", res.Params.U0, truth.U0, 0.05, 0},
		{"body", res.Params.Gamma, truth.Gamma, 0.10, 0},
		{"surface", res.Params.Phi, truth.Phi, 0.10, 0},
		{"mobred", res.Params.Theta, truth.Theta, 0.25, 0},
		{"velsat", res.Params.ECrit, truth.ECrit, 0.25, 0},
		{"lenmod", res.Params.LambdaL, truth.LambdaL, 0.25, 0},
		{"dibl", res.Params.DIBL, truth.DIBL, 0.25, 0},
	} {
		tol := c.abs + c.rel*math.Abs(c.want)
		if math.Abs(c.got-c.want) > tol {
			t.Errorf("%s = %.4g, want %.4g ± %.3g", c.name, c.got, c.want, tol)
		} else {
			t.Logf("%s = %.4g (truth %.4g)", c.name, c.got, c.want)
		}
	}
	// The residual must be the noise: 1 % rms, so between 0.8 and 1.3 %.
	if r := res.Report.IDRMSPct; r < 0.8 || r > 1.3 {
		t.Errorf("ID rms error %.3f %%, want the 1 %% noise (0.8 … 1.3)", r)
	}
}
