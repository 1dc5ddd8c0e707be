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

// A load-current channel: a 1 Ω shunt in the load's return and an amplifier of gain 20
// put 20 V per ampere on the ADC pin; a 5 V reference then reaches 250 mA.
func ExampleChannel_VoltsPerAmp() {
	text := profile.Template("voltage") + "\n[[channel]]\nnode = \"iload\"\nadc = 2\nshunt_ohm = 1\namp_gain = 20\n"
	p, err := profile.Parse("wren.toml", []byte(text))
	if err != nil {
		fmt.Println(err)
		return
	}
	ch := p.Channels[2]
	f := profile.Derive(p).Channels[2]
	fmt.Println(ch.Node, ch.VoltsPerAmp(), "V/A, ratio", ch.Ratio(), "load", ch.LoadOhm())
	fmt.Println("full scale", units.Format(f.FullScaleA, units.Ampere), "step", units.Format(f.LSBA, units.Ampere))
	// Output:
	// iload 20 V/A, ratio 1 load +Inf
	// full scale 250 mA step 244 µA
}
