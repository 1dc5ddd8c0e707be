package units_test

import (
	"flag"
	"fmt"

	"capcycle/analyze/units"
)

func ExampleParse() {
	for _, s := range []string{"4700u", "4700uF", "4.7 mF", "1F"} {
		v, err := units.Parse(s, units.Farad)
		fmt.Println(s, "->", v, err)
	}
	v, _ := units.Parse("1 MΩ", units.Ohm)
	fmt.Println(v)
	v, _ = units.Parse("1M", "") // SPICE: M is milli
	fmt.Println(v)
	_, err := units.Parse("4700x", units.Farad)
	fmt.Println(err)
	// Output:
	// 4700u -> 0.0047 <nil>
	// 4700uF -> 0.0047 <nil>
	// 4.7 mF -> 0.0047 <nil>
	// 1F -> 1 <nil>
	// 1e+06
	// 0.001
	// units: "4700x": unknown suffix or unit: "x" after the number 4700 (want an optional SPICE suffix (f p n u m k meg g t) and then F)
}

func ExampleParsePositive() {
	_, err := units.ParsePositive("-4.7k", units.Ohm)
	fmt.Println(err)
	// Output:
	// units: "-4.7k": value must be greater than zero
}

func ExampleFormat() {
	fmt.Println(units.Format(4.7e-3, units.Farad))
	fmt.Println(units.Format(33.46, units.Ohm))
	fmt.Println(units.Format(1e6, units.Ohm))
	fmt.Println(units.Format(-12e-6, units.Ampere))
	fmt.Println(units.Format(0, units.Volt))
	// Output:
	// 4.70 mF
	// 33.5 Ω
	// 1.00 MΩ
	// -12.0 µA
	// 0 V
}

func ExampleValue() {
	fs := flag.NewFlagSet("record", flag.ContinueOnError)
	c := units.NewValue(4.7e-3, units.Farad, units.Positive)
	fs.Var(c, "cap", "storage capacitance, F")
	if err := fs.Parse([]string{"--cap", "2200u"}); err != nil {
		fmt.Println(err)
	}
	fmt.Println(c.V, c)
	// Output:
	// 0.0022 2.20 mF
}

func ExampleDuration() {
	for _, s := range []float64{0.085, 1.2, 207, 86400} {
		fmt.Println(units.Duration(s))
	}
	// Output:
	// 85.0 ms
	// 1.20 s
	// 3.45 min
	// 24 h
}
