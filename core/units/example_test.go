package units_test

import (
	"fmt"

	"stagewright/core/units"
)

func Example() {
	rd, err := units.Parse("4.7k")
	if err != nil {
		fmt.Println(err)
		return
	}
	cl, _ := units.Parse("180f")
	fmt.Println(rd, units.Exact(rd), units.Engineering(rd, 4, "Ω"))
	fmt.Println(cl, units.Exact(cl), units.Engineering(cl, 4, "F"))

	_, err = units.Parse("10uF")
	fmt.Println(err)
	// Output:
	// 4700 4.7k 4.700 kΩ
	// 1.8e-13 180f 180.0 fF
	// "10uF": unit "F" after the prefix: units are not written (write "10u")
}
