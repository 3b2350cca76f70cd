package variation_test

import (
	"fmt"

	"stagewright/core/design"
	"stagewright/core/variation"
)

// A bias-vin common-source stage (a demo design): the spread of its drain
// current and the yield of a gain target.
func ExampleMonteCarlo() {
	d, _ := design.Decode("v=1&stage=cs&pol=n&bias=vin&vin=0.7&load=r&rd=5k&w=10u&l=0.5u")
	r, err := variation.MonteCarlo(d, 2000, 1, &variation.Targets{MinGain: 3.9})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("ID = %.4g µA ± %.2g µA, no operating point %d, yield of |gain| ≥ 3.9: %.3f\n",
		1e6*float64(r.ID.Mean), 1e6*float64(r.ID.SD), r.Failed, float64(r.Yield))
	// Output: ID = 114.9 µA ± 12 µA, no operating point 0, yield of |gain| ≥ 3.9: 0.505
}

// The typical corner of a demo design at the three temperatures and the
// nominal supply: at this low overdrive the falling threshold wins over the
// falling mobility, so the current rises with temperature.
func ExampleCorners() {
	d, _ := design.Decode("v=1&stage=cs&pol=n&bias=vin&vin=0.7&load=r&rd=5k")
	rows, _ := variation.Corners(d)
	for _, r := range rows[:9] {
		if r.VDD == 1.8 {
			fmt.Printf("%s %4g °C  ID %.4g µA  gain %.4g\n", r.Corner, float64(r.Temp), 1e6*float64(r.ID), float64(r.Gain))
		}
	}
	// Output:
	// tt  -40 °C  ID 93.7 µA  gain -4.377
	// tt   27 °C  ID 114.4 µA  gain -3.906
	// tt  125 °C  ID 136.8 µA  gain -3.324
}
