package profile

import (
	"errors"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"capcycle/analyze/units"
)

func loadText(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

const wrenPath = "../../testdata/profiles/wren.toml"

func TestLoadWren(t *testing.T) {
	p, err := Load(wrenPath)
	if err != nil {
		t.Fatal(err)
	}
	// The values written in wren.toml, in SI units.
	checks := []struct {
		name      string
		got, want float64
	}{
		{"CapF", p.Storage.CapF, 4.7e-3},
		{"RatedV", p.Storage.RatedV, 6.3},
		{"LeakA", p.Storage.LeakA, 3e-6},
		{"OnV", p.Trigger.OnV, 2.7},
		{"OffV", p.Trigger.OffV, 1.6},
		{"QuiescentA", p.Trigger.QuiescentA, 1e-6},
		{"HoldF", p.Trigger.HoldF, 2.2e-6},
		{"OnOhm", p.Switch.OnOhm, 0.4},
		{"ArmatureH", p.Load.ArmatureH, 250e-6},
		{"BackEMFVs", p.Load.BackEMFVs, 0.8e-3},
		{"InertiaKgM2", p.Load.InertiaKgM2, 50e-9},
		{"IscA", p.Cell.IscA, 18e-3},
		{"RefWm2 default", p.Cell.RefWm2, 1000},
		{"TempK default", p.Cell.TempK, 298.15},
		{"ReferenceV", p.ADC.ReferenceV, 5},
		{"TopOhm", p.Channels[0].TopOhm, 1e6},
		{"Gain default", p.Channels[1].Gain, 1},
		{"LatitudeDeg", p.Light.LatitudeDeg, 48.1},
	}
	for _, c := range checks {
		if c.got != c.want {
			t.Errorf("%s = %g, want %g", c.name, c.got, c.want)
		}
	}
	if p.Name != "Wren" || p.Storage.Kind != Electrolytic || p.Storage.Tolerance.Code != "M" ||
		p.Trigger.Kind != Voltage || p.Trigger.Release != ReleaseHold || p.Load.Kind != Motor ||
		p.Cell.SeriesCells != 5 || p.ADC.Bits != 10 || len(p.Channels) != 2 || p.Channels[1].Node != NodeVcell ||
		p.Light.Kind != Windowsill || p.Light.Date != "2026-06-21" || p.Light.CloudSeed != 3 || p.Calibration != nil {
		t.Errorf("unexpected profile: %+v", p)
	}
}

func TestLoadFern(t *testing.T) {
	p, err := Load("../../testdata/profiles/fern.toml")
	if err != nil {
		t.Fatal(err)
	}
	if p.Storage.Kind != Supercapacitor || p.Storage.CapF != 0.47 || p.Storage.BranchF != 0.05 ||
		p.Storage.BranchOhm != 2200 || p.Trigger.Release != ReleaseFixed || p.Trigger.OffV != 3.2 ||
		p.Load.Kind != Resistor || p.Load.Ohm != 47 || p.Switch.DropV != 0.2 || p.Light.AzimuthDeg != 0 {
		t.Errorf("unexpected profile: %+v", p)
	}
	d := Derive(p)
	if !math.IsNaN(d.LeakLimitA) {
		t.Errorf("supercapacitor leak limit %g, want NaN (no rule)", d.LeakLimitA)
	}
}

// TestDeriveWren checks the derived figures of wren.toml against hand arithmetic.
func TestDeriveWren(t *testing.T) {
	p, err := Load(wrenPath)
	if err != nil {
		t.Fatal(err)
	}
	d := Derive(p)
	const c, on, off = 4.7e-3, 2.7, 1.6
	checks := []struct {
		name      string
		got, want float64
	}{
		{"ProbeRatio", d.ProbeRatio, 0.5},
		{"ProbeLoadOhm", d.ProbeLoadOhm, 2e6},
		{"ProbeLoadA", d.ProbeLoadA, on / 2e6},
		{"ProbeTauS", d.ProbeTauS, c * 2e6},
		{"EnergyPerPulseJ", d.EnergyPerPulseJ, 0.5 * c * (on*on - off*off)}, // 11.1 mJ
		{"EnergyMinJ", d.EnergyMinJ, 0.5 * 0.8 * c * (on*on - off*off)},     // M: -20 %
		{"EnergyMaxJ", d.EnergyMaxJ, 0.5 * 1.2 * c * (on*on - off*off)},     // M: +20 %
		{"StoredAtOnJ", d.StoredAtOnJ, 0.5 * c * on * on},
		// 0.01 · 4700 µF · 6.3 V = 296.1 µA, above the 3 µA floor.
		{"LeakLimitA", d.LeakLimitA, 296.1e-6},
		{"HoldTimeS", d.HoldTimeS, 2.2e-6 * 0.05 / 1e-6},
		{"FirstChargeMinS", d.FirstChargeMinS, c * on / 18e-3},
		{"RechargeMinS", d.RechargeMinS, c * (on - off) / 18e-3},
		{"DrainAtOnA", d.DrainAtOnA, on/2e6 + 1e-6 + 3e-6},
		{"ch0 FullScaleV", d.Channels[0].FullScaleV, 10},
		{"ch0 LSBV", d.Channels[0].LSBV, 5.0 / 1024 / 0.5},
		{"ch0 SourceOhm", d.Channels[0].SourceOhm, 0.5e6},
		{"ch1 ExpectedV", d.Channels[1].ExpectedV, 4.2},
	}
	for _, ck := range checks {
		if math.Abs(ck.got-ck.want) > 1e-12*math.Abs(ck.want) {
			t.Errorf("%s = %.12g, want %.12g", ck.name, ck.got, ck.want)
		}
	}
	if got := units.Format(d.EnergyPerPulseJ, units.Joule); got != "11.1 mJ" {
		t.Errorf("energy per pulse prints as %q", got)
	}
	var probeWarn, pinWarn bool
	for _, w := range d.Warnings {
		probeWarn = probeWarn || strings.Contains(w, "probe draws")
		pinWarn = pinWarn || strings.Contains(w, "(e.g. 100 nF) from the pin to ground and declare it with pin_f")
	}
	if !probeWarn || !pinWarn {
		t.Errorf("warnings %q: want the probe-load and the pin-impedance warnings", d.Warnings)
	}
}

func TestTemplates(t *testing.T) {
	for _, kind := range TemplateKinds {
		text := Template(kind)
		if text == "" {
			t.Fatalf("no template for %q", kind)
		}
		p, err := Parse(kind+".toml", []byte(text))
		if err != nil {
			t.Errorf("template %q does not parse: %v", kind, err)
			continue
		}
		if string(p.Trigger.Kind) != kind {
			t.Errorf("template %q has trigger kind %q", kind, p.Trigger.Kind)
		}
		Derive(p)
	}
	if Template("sunrise") != "" {
		t.Error("unknown kind gave a template")
	}
}

// wrenTrigger is the text of wren.toml from its [trigger] header on.
var wrenTrigger = func() string {
	b, err := os.ReadFile(wrenPath)
	if err != nil {
		panic(err)
	}
	return string(b)[strings.Index(string(b), "[trigger]"):]
}()

// badProfiles edit wren.toml into something wrong. The edit marks the line the error must
// point at with "§" at its start (removed before parsing).
var badProfiles = []struct {
	name string
	old  string // text of wren.toml to replace ("" = append new to the end)
	new  string
	key  string // expected Error.Key
	err  error  // expected sentinel
	msg  string // a piece of the message
}{
	{"unknown key", `rated_v = 6.3`, "rated_v = 6.3\n§ratedv = 6.3", "storage.ratedv", ErrUnknownKey, `did you mean "rated_v"`},
	{"key in wrong case", `cap_f = "4700u"`, `§Cap_F = "4700u"`, "storage.Cap_F", ErrUnknownKey, "unknown key"},
	{"unknown table", "", "\n§[battery]\nvolts = 3", "battery", ErrUnknownKey, "the tables are"},
	{"negative capacitance", `cap_f = "4700u"`, `§cap_f = "-4700u"`, "storage.cap_f", ErrValue, "greater than zero"},
	{"zero capacitance", `cap_f = "4700u"`, `§cap_f = 0`, "storage.cap_f", ErrValue, "more than zero"},
	{"capacitance in volts", `cap_f = "4700u"`, `§cap_f = "4.7V"`, "storage.cap_f", ErrValue, "but F was expected"},
	{"capacitance garbled", `cap_f = "4700u"`, `§cap_f = "47.00.u"`, "storage.cap_f", ErrValue, "capacitance in F"},
	{"capacitance NaN", `cap_f = "4700u"`, `§cap_f = nan`, "storage.cap_f", ErrValue, "not a finite number"},
	{"missing capacitance", `cap_f = "4700u"`, `# no capacitance`, "storage.cap_f", ErrMissing, "required"},
	{"bad tolerance letter", `tolerance = "M"`, `§tolerance = "X"`, "storage.tolerance", ErrValue, "not an IEC 60062 tolerance letter"},
	{"picofarad tolerance letter", `tolerance = "M"`, `§tolerance = "B"`, "storage.tolerance", ErrValue, "below 10 pF"},
	{"rated voltage below on_v", `rated_v = 6.3`, `§rated_v = 2.5`, "storage.rated_v", ErrValue, "below the trigger's on_v"},
	{"off_v at on_v", `off_v = 1.6 `, `§off_v = 2.7 `, "trigger.off_v", ErrValue, "must be below on_v"},
	{"off_v above on_v", `off_v = 1.6 `, `§off_v = "3V" `, "trigger.off_v", ErrValue, "must be below on_v"},
	{"unknown trigger kind", `kind = "voltage"`, `§kind = "light"`, "trigger.kind", ErrValue, `"voltage", "timer", "plateau"`},
	{"hold release without hold capacitor", `hold_f = "2.2u"`, `# none`, "trigger.hold_f", ErrMissing, "capacitance"},
	{"hold key on a fixed release", "release = \"hold\"" + strings.SplitN(strings.SplitN(wrenTrigger, "release = \"hold\"", 2)[1], "hold_f", 2)[0] + "hold_f",
		"release = \"fixed\"" + strings.SplitN(strings.SplitN(wrenTrigger, "release = \"hold\"", 2)[1], "hold_f", 2)[0] + "§hold_f",
		"trigger.hold_f", ErrValue, "does not apply"},
	{"trigger kind is a number", `kind = "voltage"`, `§kind = 3`, "trigger.kind", ErrType, "not a string"},
	{"on_v is a boolean", `on_v = 2.7`, `§on_v = true`, "trigger.on_v", ErrType, "not a number"},
	{"accuracy 100 %", `accuracy_pct = 1.5`, `§accuracy_pct = 100`, "trigger.accuracy_pct", ErrValue, "below 100"},
	{"switch with both", `on_ohm = 0.4`, "on_ohm = 0.4\n§drop_v = 0.2", "switch.drop_v", ErrValue, "not both"},
	{"motor with a resistor value", `kind = "motor"`, "kind = \"motor\"\n§ohm = 33", "load.ohm", ErrValue, "armature_ohm"},
	{"fractional cell count", `series_cells = 5`, `§series_cells = 2.5`, "cell.series_cells", ErrValue, "whole number"},
	{"unknown ADC reference", `reference = "avcc"`, `§reference = "vcc"`, "adc.reference", ErrValue, `"avcc", "internal"`},
	{"ADC bits out of range", `bits = 10`, `§bits = 40`, "adc.bits", ErrValue, "from 1 to 24"},
	{"two channels on one input", `adc = 1`, `§adc = 0`, "channel[1].adc", ErrValue, "already used by channel[0]"},
	{"no vcap channel", "node = \"vcap\"", "§node = \"vhold\"", "channel[0].node", ErrMissing, `node = "vcap"`},
	{"negative divider", "adc = 1\ntop_ohm = \"1meg\"", "adc = 1\n§top_ohm = \"-1meg\"", "channel[1].top_ohm", ErrValue, "negative value"},
	{"latitude beyond the pole", `latitude_deg = 48.1`, `§latitude_deg = 98.1`, "light.latitude_deg", ErrValue, "-90 to 90"},
	{"bad date", `date = 2026-06-21`, `§date = "21.06.2026"`, "light.date", ErrValue, "YYYY-MM-DD"},
	{"TOML syntax", `rated_v = 6.3`, `§rated_v = = 6.3`, "storage.rated_v", ErrSyntax, "expected value"},
	{"leakage at a voltage above rating", `leak_v = 2.7`, `§leak_v = 7`, "storage.leak_v", ErrValue, "above the rated voltage"},
	// A load-current channel: a shunt, never a divider (appended as a third channel).
	{"iload without shunt_ohm", "", "\n§[[channel]]\nnode = \"iload\"\nadc = 2\namp_gain = 20",
		"channel[2].shunt_ohm", ErrMissing, "current-sense shunt"},
	{"iload with a zero shunt", "", "\n[[channel]]\nnode = \"iload\"\nadc = 2\n§shunt_ohm = 0",
		"channel[2].shunt_ohm", ErrValue, "more than zero"},
	{"iload with a negative shunt", "", "\n[[channel]]\nnode = \"iload\"\nadc = 2\n§shunt_ohm = \"-1\"",
		"channel[2].shunt_ohm", ErrValue, "greater than zero"},
	{"iload with a top resistor", "", "\n[[channel]]\nnode = \"iload\"\nadc = 2\nshunt_ohm = 1\n§top_ohm = \"10k\"",
		"channel[2].top_ohm", ErrValue, "not a divider"},
	{"iload with a bottom resistor", "", "\n[[channel]]\nnode = \"iload\"\nadc = 2\n§bottom_ohm = \"10k\"\nshunt_ohm = 1",
		"channel[2].bottom_ohm", ErrValue, "not a divider"},
	{"iload with a zero amplifier gain", "", "\n[[channel]]\nnode = \"iload\"\nadc = 2\nshunt_ohm = 1\n§amp_gain = 0",
		"channel[2].amp_gain", ErrValue, "more than zero"},
	{"iload with a shunt in milliamperes", "", "\n[[channel]]\nnode = \"iload\"\nadc = 2\n§shunt_ohm = \"100mA\"",
		"channel[2].shunt_ohm", ErrValue, "Ω"},
	{"shunt on a voltage channel", "adc = 1\ntop_ohm", "adc = 1\n§shunt_ohm = 1\ntop_ohm", "channel[1].shunt_ohm", ErrValue, `node = "iload"`},
	{"amplifier gain on a voltage channel", "adc = 1\ntop_ohm", "adc = 1\n§amp_gain = 20\ntop_ohm", "channel[1].amp_gain", ErrValue, `node = "iload"`},
	{"two iload channels", "", "\n[[channel]]\nnode = \"iload\"\nadc = 2\nshunt_ohm = 1\n[[channel]]\n§node = \"iload\"\nadc = 3\nshunt_ohm = 1",
		"channel[3].node", ErrValue, "already read by channel[2]"},
	{"branch on an electrolytic", `leak_v = 2.7`, "leak_v = 2.7\n§branch_ohm = 100\nbranch_f = 1", "storage.branch_ohm", ErrValue, "supercapacitor"},
	// Values no command could compute with: refused by Parse, so that "profile check"
	// passes only what every command accepts.
	{"capacitance of 1e308 F", `cap_f = "4700u"`, `§cap_f = 1e308`, "storage.cap_f", ErrValue, "above the plausible range 1.00 nF to 5.00 kF"},
	{"hold capacitance of 1e-300 F", `hold_f = "2.2u"`, `§hold_f = 1e-300`, "trigger.hold_f", ErrValue, "below the plausible range 10.0 pF to 1.00 F"},
	{"ADC input 9", `adc = 1`, `§adc = 9`, "channel[1].adc", ErrValue, "from 0 to 3"},
	{"vcap not on ADC0", "adc = 0\ntop_ohm", "§adc = 2\ntop_ohm", "channel[0].adc", ErrValue, "recorder writes ADC0 as vcap_v"},
	{"bottom resistor of zero", "adc = 1\ntop_ohm = \"1meg\"\nbottom_ohm = \"1meg\"", "adc = 1\ntop_ohm = \"1meg\"\n§bottom_ohm = 0",
		"channel[1].bottom_ohm", ErrValue, "would short the pin"},
	{"reference of 500 V", `reference_v = 5.0`, `§reference_v = 500`, "adc.reference_v", ErrValue, "above the plausible range 500 mV to 6.00 V"},
	{"internal reference at 5 V", "reference = \"avcc\"\nreference_v = 5.0", "reference = \"internal\"\n§reference_v = 5.0", "adc.reference_v", ErrValue, "band-gap"},
	{"top resistor of 1 milliohm", "adc = 0\ntop_ohm = \"1meg\"", "adc = 0\n§top_ohm = \"1M\"", "channel[0].top_ohm", ErrValue, `write "1meg" for mega`},
	{"series resistor of 10 milliohm", "adc = 0\ntop_ohm = \"1meg\"", "adc = 0\n§series_ohm = \"10m\"\ntop_ohm = \"1meg\"", "channel[0].series_ohm", ErrValue, "below the plausible range"},
	{"pin capacitor of 1 F", "adc = 0\ntop_ohm = \"1meg\"", "adc = 0\n§pin_f = 1\ntop_ohm = \"1meg\"", "channel[0].pin_f", ErrValue, "above the plausible range"},
	{"3.2 V per cell", "voc_v = 4.2", "§voc_v = 16", "cell.voc_v", ErrValue, "give series_cells"},
	{"cell shunt below Voc/Isc", `series_cells = 5`, "series_cells = 5\n§shunt_ohm = 100", "cell.shunt_ohm", ErrValue, "voc_v/isc_a = 233 Ω"},
	{"cell series resistance above Voc/Isc", `series_cells = 5`, "series_cells = 5\n§series_ohm = 500", "cell.series_ohm", ErrValue, "below voc_v/isc_a"},
	{"hysteresis past the assumed diode drop", "hysteresis_v = 0.05      # supervisor's own hysteresis\ndiode_v = 0.2", "§hysteresis_v = 2.45\n# no diode_v", "trigger.hysteresis_v", ErrValue, "300 mV assumed"},
	{"light of 5000 W/m²", "kind = \"windowsill\"\ndate = 2026-06-21\nlatitude_deg = 48.1\nwindow_azimuth_deg = 180 # the window faces south\nwindow_tilt_deg = 90\ndiffuse_fraction = 0.25\ncloud_seed = 3",
		"kind = \"constant\"\n§irradiance_w_m2 = 5000", "light.irradiance_w_m2", ErrValue, "above the plausible range"},
	{"supply temperature in Celsius", `series_cells = 5`, "series_cells = 5\n§temp_k = 25", "cell.temp_k", ErrValue, "below the plausible range"},
}

func TestBadProfiles(t *testing.T) {
	base := loadText(t, wrenPath)
	for _, tt := range badProfiles {
		t.Run(tt.name, func(t *testing.T) {
			var text string
			if tt.old == "" {
				text = base + tt.new + "\n"
			} else {
				if !strings.Contains(base, tt.old) {
					t.Fatalf("wren.toml has no %q", tt.old)
				}
				text = strings.Replace(base, tt.old, tt.new, 1)
			}
			line := 0
			lines := strings.Split(text, "\n")
			for i, l := range lines {
				if strings.HasPrefix(l, "§") {
					line = i + 1
					lines[i] = strings.TrimPrefix(l, "§")
				}
			}
			if line == 0 { // no marker: the key's table header
				table := tt.key[:strings.IndexAny(tt.key, ".")]
				for i, l := range lines {
					if l == "["+table+"]" {
						line = i + 1
						break
					}
				}
			}
			_, err := Parse("bad.toml", []byte(strings.Join(lines, "\n")))
			if err == nil {
				t.Fatal("no error")
			}
			var pe *Error
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a *profile.Error", err)
			}
			if pe.File != "bad.toml" || pe.Line != line || pe.Key != tt.key {
				t.Errorf("error at %s:%d key %q, want bad.toml:%d key %q (%v)", pe.File, pe.Line, pe.Key, line, tt.key, err)
			}
			if !errors.Is(err, tt.err) {
				t.Errorf("error %v is not %v", err, tt.err)
			}
			msg := err.Error()
			if want := "bad.toml:" + itoa(line) + ": "; !strings.HasPrefix(msg, want) {
				t.Errorf("message %q does not start with %q", msg, want)
			}
			if !strings.Contains(msg, tt.msg) {
				t.Errorf("message %q does not contain %q", msg, tt.msg)
			}
		})
	}
}

func itoa(n int) string { return strconv.Itoa(n) }

func TestMissingTable(t *testing.T) {
	text := strings.Replace(loadText(t, wrenPath), "[cell]", "[cells]", 1)
	_, err := Parse("x.toml", []byte(text))
	var pe *Error
	if !errors.As(err, &pe) || pe.Key != "cells" || !errors.Is(err, ErrUnknownKey) {
		t.Fatalf("got %v", err)
	}
	text = strings.Replace(loadText(t, wrenPath), "[cell]\nvoc_v = 4.2              # 5-cell amorphous panel, label values at 1000 W/m²\nisc_a = \"18m\"\nseries_cells = 5\n", "", 1)
	_, err = Parse("x.toml", []byte(text))
	if !errors.As(err, &pe) || pe.Key != "cell" || !errors.Is(err, ErrMissing) || pe.Line != 0 {
		t.Fatalf("got %v", err)
	}
	if err.Error() != "x.toml: cell: table [cell] is missing" {
		t.Errorf("message %q", err)
	}
}

func TestDefaultName(t *testing.T) {
	text := strings.Replace(loadText(t, wrenPath), `name = "Wren"`, "", 1)
	p, err := Parse("/some/where/sill-rover.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	if p.Name != "sill-rover" {
		t.Errorf("name %q", p.Name)
	}
}

// TestFirstProblemInFileOrder: with mistakes in two tables, the one nearer the top of the
// file is reported, whatever order the tables are converted in.
func TestFirstProblemInFileOrder(t *testing.T) {
	text := loadText(t, wrenPath)
	text = strings.Replace(text, `reference = "avcc"`, `reference = "vcc"`, 1)
	text = strings.Replace(text, `kind = "motor"`, `kind = "solenoid"`, 1)
	_, err := Parse("two.toml", []byte(text))
	var pe *Error
	if !errors.As(err, &pe) || pe.Key != "load.kind" {
		t.Fatalf("got %v, want the load.kind error (it comes before adc.reference)", err)
	}
}
