package circuit

import (
	"math"
	"testing"
)

// NoiseRMS, which works from the sweep's own logarithms, agrees with the
// plain IntegrateRMS on the same sweep (both integrate the same power law
// segment by segment; only rounding of the logs differs: 1e-12).
func TestNoiseRMSMatchesIntegrate(t *testing.T) {
	c, ports := rcCircuit(4.7e3, 2.2e-12)
	op, _ := c.SolveDC(nil, Options{})
	nw, _ := c.Linearize(op, ports, 300)
	var r Response
	r.F = LogSweep(nil, 1, 1e12, 17)
	r.Resize(len(r.F))
	var a Analyzer
	a.Sweep(nw, &r)
	for _, band := range [][2]float64{{1, 1e12}, {3.3, 4.4e6}, {1e7, 2e9}} {
		in, out := r.NoiseRMS(band[0], band[1])
		wantIn := IntegrateRMS(r.F, r.NoiseIn, band[0], band[1])
		wantOut := IntegrateRMS(r.F, r.NoiseOut, band[0], band[1])
		if math.Abs(in-wantIn) > 1e-12*wantIn || math.Abs(out-wantOut) > 1e-12*wantOut {
			t.Errorf("band %v: NoiseRMS %g/%g, IntegrateRMS %g/%g", band, in, out, wantIn, wantOut)
		}
	}
}
