package eseries_test

import (
	"fmt"

	"capcycle/analyze/eseries"
)

func ExampleSeries_Nearest() {
	e12, _ := eseries.Get("E12")
	v, diff := e12.Nearest(5.9e-6) // a computed hold capacitance
	fmt.Printf("%.1f uF (%+.0f %%)\n", v*1e6, diff*100)
	// Output: 5.6 uF (-5 %)
}
