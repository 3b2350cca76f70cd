package design_test

import (
	"fmt"

	"stagewright/core/design"
)

func ExampleDecode() {
	d, err := design.Decode("#stage=cs&proc=d65&w=20u&l=130n&bias=id&id=250u&rd=4.7k")
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s stage on %s: W = %.4g m, L = %.4g m, ID = %.4g A, RD = %.4g Ω, VDD = %.4g V\n",
		d.Stage, d.Process, d.W, d.L, d.ID, d.RD, d.VDD)
	// Output:
	// cs stage on d65: W = 2e-05 m, L = 1.3e-07 m, ID = 0.00025 A, RD = 4700 Ω, VDD = 1.2 V
}

func ExampleDecode_problems() {
	d, err := design.Decode("w=-3u&stage=sf&load=diode&vdd=1&vin=1.5&ppd=40&ppd=50")
	if fe, ok := err.(*design.FragmentError); ok {
		for _, p := range fe.Problems {
			fmt.Println(p)
		}
	}
	// The design is still usable: bad keys took their defaults.
	fmt.Printf("W = %.4g m, load %s, vin = %.4g V, ppd = %d\n", d.W, d.Load, d.Vin, d.PPD)
	// Output:
	// w=-3u: width must be between 220n and 1m (m)
	// load=diode: load must be one of r, active: a source follower cannot take a diode load
	// vin=1.5: input DC level must be between 0 and vdd = 1 (V)
	// ppd=50: repeated key: the first value (40) is kept
	// W = 1e-05 m, load r, vin = 1 V, ppd = 40
}

func ExampleDesign_Encode() {
	d := design.Default("d180")
	d.Stage = design.CommonGate
	d.VG = 1.1
	d.RSig = 50
	fmt.Println(d.Encode())
	// Output:
	// v=2&stage=cg&pol=n&proc=d180&vdd=1.8&temp=27&w=10u&l=500n&bias=id&id=100u&vin=700m&vg=1.1&load=r&rd=10k&rsig=50&rl=inf&cl=100f&fmin=1&fmax=100G&ppd=40&nlo=1&nhi=100M
}

func ExampleSchema() {
	for _, k := range design.Schema("d65") {
		if k.Key == "l" || k.Key == "vin" {
			fmt.Printf("%s (%s, %s): default %.4g, %.4g … %.4g%s, log %v\n", k.Key, k.Label, k.Unit, k.Default, k.Min, k.Max,
				map[string]string{"": "", "vdd": " (vdd)"}[k.MaxFrom], k.Log)
		}
	}
	// Output:
	// l (length, m): default 2e-07, 6.5e-08 … 1e-05, log true
	// vin (input DC level, V): default 0.5, 0 … 1.2 (vdd), log false
}
