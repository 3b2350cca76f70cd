package design

import (
	"strings"
	"testing"
)

// devices lists every transistor of the circuit once, in circuit order,
// with the role the stage gives it and its polarity (complementary to M1
// for a cs/cg load, the same for a follower's sink); the first entry's
// operating point is op's (without the stage's power), the second's is
// load_op, and the JSON writes the array with those members first.
func TestDevicesListEveryTransistor(t *testing.T) {
	other := map[string]string{"n": "p", "p": "n"}
	for _, frag := range supplyCases() {
		t.Run(frag, func(t *testing.T) {
			d := mustDecode(t, frag)
			r := Evaluate(d)
			if !r.OK {
				t.Fatalf("not evaluated: %v", r.Error)
			}
			want := []struct{ name, role, pol string }{{"M1", "input", d.Pol}}
			switch {
			case d.Load == "r":
			case d.Stage == "sf":
				want = append(want, struct{ name, role, pol string }{"M2", "sink", d.Pol})
			default:
				want = append(want, struct{ name, role, pol string }{"M2", "load", other[d.Pol]})
			}
			if len(r.Devices) != len(want) {
				t.Fatalf("%d devices, want %d", len(r.Devices), len(want))
			}
			for i, w := range want {
				g := r.Devices[i]
				if g.Name != w.name || g.Role != w.role || g.Pol != w.pol {
					t.Errorf("device %d is %s/%s/%s, want %s/%s/%s", i, g.Name, g.Role, g.Pol, w.name, w.role, w.pol)
				}
				if g.Power != nil {
					t.Errorf("device %s carries the stage's power", g.Name)
				}
				// Every stage here biases its devices on: an n device's VGS is
				// positive, a p's negative, so a polarity written the wrong
				// way round shows.
				if (g.Pol == "n") != (g.VGS > 0) {
					t.Errorf("%s: vgs %g V does not match polarity %s", g.Name, float64(g.VGS), g.Pol)
				}
			}
			op := *r.OP
			op.Power = nil
			if r.Devices[0].DeviceOP != op {
				t.Errorf("devices[0] differs from op")
			}
			if (len(want) == 2) != (r.LoadOP != nil) {
				t.Fatalf("load_op present %v with %d devices", r.LoadOP != nil, len(want))
			}
			if r.LoadOP != nil && r.Devices[1].DeviceOP != *r.LoadOP {
				t.Errorf("devices[1] differs from load_op")
			}
			js := string(r.JSON())
			if !strings.Contains(js, `"devices":[{"name":"M1","role":"input","pol":"`+d.Pol+`","id":`) {
				t.Errorf("JSON has no devices array opening with M1: %.200s", js[strings.Index(js, `"load_op"`)+1:])
			}
		})
	}
}
