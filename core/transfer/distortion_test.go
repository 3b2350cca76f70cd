package transfer

import (
	"encoding/json"
	"errors"
	"math"
	"sort"
	"strings"
	"testing"

	"stagewright/core/design"
)

// TestDistortionNearSquareLaw: a cs stage in strong inversion with
// mobility reduction, velocity saturation and channel-length modulation
// turned off and a fixed slope factor is a square-law stage, whose
// HD2 = A/(4·Vov) (Razavi; Sansen; from memory) with Vov = 2·ID/gm (the
// square-law relation gm = 2·ID/Vov, Shichman–Hodges). The EKV charge
// relation i = q² + q departs from the square law by a relative amount of
// order 1/√IC (Enz and Vittoz 2006, from memory), exactly 1/(2q+1) for
// HD2 as worked out below, so that is the tolerance, and the departure must
// shrink as IC grows. The EKV law itself gives HD2 in closed form, which
// the DFT must match far tighter.
func TestDistortionNearSquareLaw(t *testing.T) {
	const base = "v=1&stage=cs&l=2u&bias=id&id=200u&load=r&rd=2k&n.theta=0&n.ecrit=0&n.clm=0&n.nfix=1.3"
	var prevErr, prevIC float64
	const k, qe = 1.380649e-23, 1.602176634e-19 // CODATA 2018, exact
	ut := k * 300.15 / qe
	for _, w := range []string{"10u", "6u", "4u"} {
		d := decode(t, base+"&w="+w)
		res := design.Evaluate(d)
		if !res.OK {
			t.Fatalf("w=%s: %+v", w, res.Error)
		}
		vov := 2 / float64(res.OP.GmID)
		ic := float64(res.OP.IC)
		for _, amp := range []float64{0.005, 0.1 * vov} {
			l, err := Distortion(d, amp)
			if err != nil {
				t.Fatal(err)
			}
			want := amp / (4 * vov)
			rel := math.Abs(l.HD2-want) / want
			q := (math.Sqrt(1+4*ic) - 1) / 2
			// The EKV departure from the square law is exactly
			// (q+1)/(q+½) − 1 = 1/(2q+1) (worked out below),
			// which is 1/(2√IC) to leading order; higher harmonics of the
			// larger amplitude add (A/Vov)²/8 at most.
			bound := 1/(2*q+1) + amp*amp/(8*vov*vov) + 1e-4
			if rel > bound {
				t.Errorf("w=%s (IC %.0f) A=%.3g: HD2 %.5g, square law %.5g: %.2g off, beyond 1/(2q+1) = %.2g", w, ic, amp, l.HD2, want, rel, bound)
			}
			// The same stage's long-channel EKV law i = q² + q with
			// VP − VS = UT·(2q + ln q), VP = (VG − VT0)/n, has
			// di/dVP = q/UT and d²i/dVP² = q/(UT²·(2q+1)), so
			// HD2 = |a2|·A/(2|a1|) = A/(4·n·UT·(2q+1)) (Enz & Vittoz 2006;
			// the Taylor form of HD2, common practice). The DFT of the
			// quasi-static transfer differs from that leading term by the
			// amplitude's higher orders, (A/Vov)²/8 (the square of the ratio
			// of consecutive Taylor terms, with room), plus 1e-4 for the
			// transfer solve.
			ekvHD2 := amp / (4 * 1.3 * ut * (2*q + 1))
			t.Logf("w=%s IC %.0f A=%.3g: HD2 %.6g, square law off by %.3g (bound %.3g), EKV off by %.2g", w, ic, amp, l.HD2, rel, bound, math.Abs(l.HD2-ekvHD2)/ekvHD2)
			if rel := math.Abs(l.HD2-ekvHD2) / ekvHD2; rel > amp*amp/(8*vov*vov)+1e-4 {
				t.Errorf("w=%s (IC %.0f) A=%.3g: HD2 %.6g, EKV %.6g: %.2g off", w, ic, amp, l.HD2, ekvHD2, rel)
			}
			if amp == 0.005 {
				if prevIC > 0 && !(ic > prevIC && rel < prevErr) {
					t.Errorf("departure from the square law %.3g at IC %.0f does not shrink from %.3g at IC %.0f", rel, ic, prevErr, prevIC)
				}
				prevErr, prevIC = rel, ic
			}
		}
	}
}

// TestDistortionSmallAmplitude: at 1 mV the DFT and the Taylor estimate
// agree (higher-order terms are of relative order (A/Vov)² ≈ 10⁻⁵, the
// differences' error 10⁻⁴; 1 % leaves room), a1 is the linearized gain
// (Richardson error O(h⁴)), and HD2 grows in proportion to A (common
// practice: HD2 ≈ |a2|·A/(2|a1|)) to 0.5 % between 1 and 2 mV.
func TestDistortionSmallAmplitude(t *testing.T) {
	for _, c := range testDesigns {
		d := decode(t, c.frag)
		g := float64(design.Evaluate(d).Midband.Gain)
		if math.Abs(g) > 30 {
			continue // the active loads: 1 mV is already a large signal
		}
		t.Run(c.name, func(t *testing.T) {
			l1, err := Distortion(d, 1e-3)
			if err != nil {
				t.Fatal(err)
			}
			l2, err := Distortion(d, 2e-3)
			if err != nil {
				t.Fatal(err)
			}
			if !l1.SmallSignalOK {
				t.Errorf("1 mV flagged as beyond small signal: %+v", l1)
			}
			if math.Abs(l1.HD2-l1.TaylorHD2) > 0.01*l1.HD2 {
				t.Errorf("HD2: DFT %.6g, Taylor %.6g", l1.HD2, l1.TaylorHD2)
			}
			if math.Abs(l1.A1-g) > 1e-5*math.Abs(g) {
				t.Errorf("a1 %.8g, linearized gain %.8g", l1.A1, g)
			}
			if r := l2.HD2 / l1.HD2; math.Abs(r-2) > 0.01 {
				t.Errorf("HD2 at 2 mV / HD2 at 1 mV = %.5g, want 2", r)
			}
			if l1.HD2dB >= 0 || math.Abs(l1.HD2dB-20*math.Log10(l1.HD2)) > 1e-9 {
				t.Errorf("HD2 %.4g is %.4g dBc", l1.HD2, l1.HD2dB)
			}
		})
	}
}

// TestDistortionLargeAmplitude: an amplitude that drives the stage out of
// saturation is flagged, and THD ≥ HD2, HD3.
func TestDistortionLargeAmplitude(t *testing.T) {
	for _, c := range []struct {
		frag string
		amp  float64
	}{
		{"v=1&stage=cs&load=active", 10e-3},       // gain 117: the output clips
		{"v=1&stage=cg", 50e-3},                   // the input leaves the saturated range
		{"v=1&stage=cs&bias=gmid&gmid=15", 50e-3}, // moderate inversion, into triode
	} {
		l, err := Distortion(decode(t, c.frag), c.amp)
		if err != nil {
			t.Fatal(err)
		}
		if l.SmallSignalOK {
			t.Errorf("%s at %g V: not flagged (DFT HD2 %.4g HD3 %.4g, Taylor %.4g %.4g)", c.frag, c.amp, l.HD2, l.HD3, l.TaylorHD2, l.TaylorHD3)
		}
		if l.THD < l.HD2 || l.THD < l.HD3 {
			t.Errorf("%s: THD %.4g below HD2 %.4g or HD3 %.4g", c.frag, l.THD, l.HD2, l.HD3)
		}
	}
}

func TestDistortionErrors(t *testing.T) {
	good := decode(t, testDesigns[0].frag)
	for _, c := range []struct {
		name string
		d    design.Design
		amp  float64
		key  string
	}{
		{"zero", good, 0, "amp"},
		{"negative", good, -1e-3, "amp"},
		{"NaN", good, math.NaN(), "amp"},
		{"above the supply", good, 2, "amp"},
		{"no operating point", decode(t, "v=1&stage=cs&bias=id&id=10m&load=r&rd=10k"), 1e-3, "rd"},
	} {
		_, err := Distortion(c.d, c.amp)
		var e *Error
		if !errors.As(err, &e) || e.Key != c.key || e.Message == "" {
			t.Errorf("%s: error %v, want one naming %q", c.name, err, c.key)
		}
	}
}

// TestJSONShapes: the keys the page and the CLI rely on, and nothing
// non-finite.
func TestJSONShapes(t *testing.T) {
	d := decode(t, testDesigns[0].frag)
	tr, err := Curve(d, 21)
	if err != nil {
		t.Fatal(err)
	}
	l, err := Distortion(d, DefaultAmp)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		v    any
		keys string
	}{
		{tr, "gain headroom_hi headroom_lo in_hi in_lo limit_hi limit_lo limit_out_hi limit_out_lo op_index out_hi out_lo out_op region1 region2 runs swing swing_sym vin vout"},
		{l, "amp hd2 hd2_db hd3 hd3_db small_signal_ok taylor_hd2 taylor_hd3 thd thd_db"},
	} {
		b, err := json.Marshal(c.v)
		if err != nil {
			t.Fatal(err)
		}
		var m map[string]any
		if err := json.Unmarshal(b, &m); err != nil {
			t.Fatal(err)
		}
		var keys []string
		for k, v := range m {
			keys = append(keys, k)
			if v == nil {
				t.Errorf("%s is null", k)
			}
		}
		sort.Strings(keys)
		if got := strings.Join(keys, " "); got != c.keys {
			t.Errorf("keys %q, want %q", got, c.keys)
		}
	}
}
