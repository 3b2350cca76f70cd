package transfer_test

import (
	"fmt"

	"stagewright/core/transfer"
)

// A square-law common-source stage (invented values: k = 2 mA/V²,
// Vov = 0.2 V, RD = 10 kΩ) driven with 20 mV: HD2 = A/(4·Vov) = 2.5 %.
func ExampleHarmonics() {
	vout := func(x float64) float64 { v := 0.2 + x; return 1.8 - 10e3*0.5*2e-3*v*v }
	sp, err := transfer.Harmonics(vout, 0.02)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("HD2 %.4g (%.4g dBc), HD3 below -200 dBc: %v\n", sp.HD2, transfer.DBc(sp.HD2), transfer.DBc(sp.HD3) < -200)
	// Output: HD2 0.025 (-32.04 dBc), HD3 below -200 dBc: true
}
