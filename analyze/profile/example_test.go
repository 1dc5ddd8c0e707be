package profile_test

import (
	"fmt"

	"capcycle/analyze/profile"
	"capcycle/analyze/units"
)

func ExampleParse() {
	p, err := profile.Parse("wren.toml", []byte(profile.Template("voltage")))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(p.Name, p.Storage.CapF, p.Trigger.OnV, p.Channels[0].TopOhm)

	_, err = profile.Parse("bad.toml", []byte("[storage]\nkind = \"electrolytic\"\ncap_f = \"-4700u\"\n"))
	fmt.Println(err)
	// Output:
	// Wren 0.0047 2.7 1e+06
	// bad.toml:3: storage.cap_f: "-4700u": value must be greater than zero; want a capacitance in F, e.g. "4700u"
}

func ExampleDerive() {
	p, _ := profile.Parse("wren.toml", []byte(profile.Template("voltage")))
	d := profile.Derive(p)
	fmt.Println("divider ratio", d.ProbeRatio)
	fmt.Println("probe load", units.Format(d.ProbeLoadA, units.Ampere), "at", units.Format(d.ProbeAtV, units.Volt))
	fmt.Println("energy per pulse", units.Format(d.EnergyPerPulseJ, units.Joule))
	fmt.Println("leakage limit", units.Format(d.LeakLimitA, units.Ampere))
	fmt.Println("hold time", units.Format(d.HoldTimeS, units.Second))
	// Output:
	// divider ratio 0.5
	// probe load 1.35 µA at 2.70 V
	// energy per pulse 11.1 mJ
	// leakage limit 296 µA
	// hold time 110 ms
}
