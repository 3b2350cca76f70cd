package device_test

import (
	"fmt"

	"stagewright/core/device"
)

// An n-channel device of the invented d180 demo process, 10 µm / 1 µm, at
// 27 °C, biased at VGS = 0.6 V, VDS = 0.9 V.
func Example() {
	pr, _ := device.Builtin("d180")
	d, err := device.New(device.NMOS, pr.N, pr.TNom, 10e-6, 1e-6, 300.15)
	if err != nil {
		fmt.Println(err)
		return
	}
	r := d.Report(0.9, 0.6, 0, 0) // vd, vg, vs, vb in V
	fmt.Printf("ID = %.4g A, gm/ID = %.4g S/A, IC = %.4g\n", r.ID, r.GmID, r.IC)
	fmt.Printf("%v, %v inversion, VDsat = %.4g V\n", r.Region, r.Inversion, r.VDsat)
	fmt.Printf("Cgs = %.4g F, fT = %.4g Hz\n", r.CGS, r.FT)
	// Output:
	// ID = 2.54e-05 A, gm/ID = 10.1 S/A, IC = 6.174
	// saturation, moderate inversion, VDsat = 0.209 V
	// Cgs = 4.86e-14 F, fT = 7.413e+08 Hz
}

// The square-law hand model of the same device at the same current, for
// comparison with the full model.
func ExampleDevice_SquareLawAt() {
	pr, _ := device.Builtin("d180")
	d, _ := device.New(device.NMOS, pr.N, pr.TNom, 10e-6, 1e-6, 300.15)
	s := d.SquareLawAt(24.36e-6, 0)
	fmt.Printf("Vov = %.4g V, gm = %.4g S, ro = %.4g Ω\n", s.Vov, s.GM, s.RO)
	// Output:
	// Vov = 0.1389 V, gm = 0.0003509 S, ro = 1.368e+06 Ω
}

// A p-channel device hangs from the supply: its current flows out of the
// drain (negative Current().ID); the Report gives the current in the device's
// own sense and the terminal voltages signed.
func ExampleDevice_Current() {
	pr, _ := device.Builtin("d65")
	d, _ := device.New(device.PMOS, pr.P, pr.TNom, 4e-6, 0.2e-6, 300.15)
	e := d.Current(0.4, 0.6, 1.2, 1.2) // VSG = 0.6 V, VSD = 0.8 V
	fmt.Printf("ID = %.4g A, gm = %.4g S, gds = %.4g S\n", e.ID, e.GM, e.GDS)
	r := d.Report(0.4, 0.6, 1.2, 1.2)
	fmt.Printf("report: ID = %.4g A, VGS = %.4g V, VTH = %.4g V, %v\n", r.ID, r.VGS, r.VTH, r.Region)
	// Output:
	// ID = -7.44e-05 A, gm = 0.0004799 S, gds = 1.112e-05 S
	// report: ID = 7.44e-05 A, VGS = -0.6 V, VTH = -0.324 V, saturation
}
