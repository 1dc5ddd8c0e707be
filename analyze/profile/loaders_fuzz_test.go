package profile_test

import (
	"math"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
)

// The checks of Parse that mirror the circuit model's assumptions use the same numbers.
func TestAssumptionsAgreeWithModel(t *testing.T) {
	for _, c := range []struct {
		name           string
		profile, model float64
	}{
		{"hold diode drop", profile.AssumedHoldDiodeV, model.AssumedDiodeV},
		{"plateau arming share of voc_v", profile.AssumedPlateauArmFraction, model.AssumedArmFraction},
		{"cell ideality", profile.AssumedIdeality, model.AssumedIdeality},
	} {
		if c.profile != c.model {
			t.Errorf("%s: profile %g, model %g", c.name, c.profile, c.model)
		}
	}
}

// loaderSeeds are profiles at and beyond the edges of what Parse accepts.
func loaderSeeds() []string {
	var out []string
	for _, kind := range profile.TemplateKinds {
		out = append(out, profile.Template(kind))
	}
	for _, p := range []string{"../../testdata/profiles/wren.toml", "../../testdata/profiles/fern.toml"} {
		if b, err := os.ReadFile(p); err == nil {
			out = append(out, string(b))
		}
	}
	base := profile.Template("voltage")
	for _, r := range [][2]string{
		{`cap_f = "4700u"`, `cap_f = 1e308`},
		{`cap_f = "4700u"`, `cap_f = 5000`},
		{`hold_f = "2.2u"`, `hold_f = 1e-300`},
		{`hold_f = "2.2u"`, `hold_f = "10p"`},
		{`adc = 1`, `adc = 9`},
		{`bottom_ohm = "1meg"`, `bottom_ohm = 0`},
		{`reference_v = 5.0`, `reference_v = 500`},
		{`top_ohm = "1meg"`, `top_ohm = "1M"`},
		{`on_v = 2.7`, `on_v = 0.5`},
		{`diode_v = 0.2`, `# diode_v`},
		{`series_cells = 5`, `series_cells = 1`},
		{`# shunt_ohm = "50k"`, `shunt_ohm = 234`},
		{`# series_ohm = 20`, `series_ohm = 233`},
		{`# ideality = 1.5`, `ideality = 0.5`},
		{`# temp_k = 298.15`, `temp_k = 200`},
		{`kind = "windowsill"`, "kind = \"constant\"\nirradiance_w_m2 = 4"},
	} {
		out = append(out, strings.Replace(base, r[0], r[1], 1))
	}
	plateau := profile.Template("plateau")
	out = append(out, strings.Replace(plateau, "pulse_s = \"80m\"", "off_v = 2.2", 1))
	return out
}

// FuzzLoaders runs a profile through what every command does with it: Parse (which
// "profile check", analyze, record, report, simulate, whatif, robot and demo all use),
// Derive (check's figures) and model.FromProfile (the circuit simulate, whatif, robot and
// demo build). What Parse accepts, FromProfile must accept; nothing may panic; the
// energies Derive gives are finite.
func FuzzLoaders(f *testing.F) {
	for _, s := range loaderSeeds() {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		p, err := profile.Parse("fuzz.toml", []byte(text))
		if err != nil {
			return
		}
		d := profile.Derive(p)
		for _, x := range []float64{d.StoredAtOnJ, d.EnergyPerPulseJ, d.EnergyMinJ, d.EnergyMaxJ, d.HoldTimeS,
			d.FirstChargeMinS, d.RechargeMinS, d.DrainAtOnA, d.CapMinF, d.CapMaxF} {
			if math.IsInf(x, 0) {
				t.Fatalf("a derived figure is infinite: %+v", d)
			}
		}
		for _, w := range d.Warnings {
			if strings.Contains(w, "NaN") {
				t.Fatalf("warning %q", w)
			}
		}
		if _, _, err := model.FromProfile(p); err != nil {
			t.Fatalf("Parse accepts the profile, model.FromProfile refuses it: %v\n%s", err, text)
		}
	})
}

// The seeds of FuzzLoaders that Parse accepts are accepted by the model too (run as a
// plain test, so that CI checks it without fuzzing).
func TestLoadersAgreeOnSeeds(t *testing.T) {
	accepted := 0
	for i, s := range loaderSeeds() {
		p, err := profile.Parse("seed.toml", []byte(s))
		if err != nil {
			continue
		}
		accepted++
		if _, _, err := model.FromProfile(p); err != nil {
			t.Errorf("seed %d: Parse accepts, FromProfile refuses: %v", i, err)
		}
	}
	if accepted < 8 {
		t.Errorf("only %d seeds accepted", accepted)
	}
}

var keyLine = regexp.MustCompile(`(?m)^(?:# )?([a-z_0-9]+) = [^\n]*$`)

// FuzzLoaderValues sets one key of a template (commented-out keys included) to any
// number, two at a time: random text rarely lands on the numbers that break a
// computation, this walks them. What Parse accepts, FromProfile must accept.
func FuzzLoaderValues(f *testing.F) {
	f.Add(uint8(0), uint16(3), 1e308, uint16(20), 1e-300)
	f.Add(uint8(1), uint16(5), 0.5, uint16(9), 4.0)
	f.Add(uint8(2), uint16(7), 1e-9, uint16(30), 100.0)
	f.Fuzz(func(t *testing.T, kind uint8, k1 uint16, v1 float64, k2 uint16, v2 float64) {
		text := profile.Template(profile.TemplateKinds[int(kind)%len(profile.TemplateKinds)])
		for _, kv := range []struct {
			k uint16
			v float64
		}{{k1, v1}, {k2, v2}} {
			locs := keyLine.FindAllStringSubmatchIndex(text, -1)
			m := locs[int(kv.k)%len(locs)]
			name := text[m[2]:m[3]]
			text = text[:m[0]] + name + " = " + strconv.FormatFloat(kv.v, 'g', -1, 64) + text[m[1]:]
		}
		p, err := profile.Parse("fuzz.toml", []byte(text))
		if err != nil {
			return
		}
		profile.Derive(p)
		if _, _, err := model.FromProfile(p); err != nil {
			t.Fatalf("Parse accepts the profile, model.FromProfile refuses it: %v\n%s", err, text)
		}
	})
}

// Derive's figures for a constant light agree with the circuit model's cell: the same
// open-circuit voltage and current at on_v without a series resistance, and no less with
// one (Derive leaves it out, so its figures are upper bounds).
func TestLightFiguresAgreeWithModel(t *testing.T) {
	constant := func(s, g string) string {
		i := strings.Index(s, "[light]")
		return s[:i] + "[light]\nkind = \"constant\"\nirradiance_w_m2 = " + g + "\n"
	}
	wren, _ := os.ReadFile("../../testdata/profiles/wren.toml")
	fern, _ := os.ReadFile("../../testdata/profiles/fern.toml")
	cases := []struct{ name, text string }{
		{"Wren at 300 W/m²", constant(string(wren), "300")},
		{"Wren at 4 W/m²", constant(string(wren), "4")},
		{"Fern at 40 W/m²", constant(string(fern), "40")},
		{"Fern at 4 W/m²", constant(string(fern), "4")},
		{"Fern without a shunt at 4 W/m²", constant(strings.Replace(string(fern), "shunt_ohm", "# shunt_ohm", 1), "4")},
		{"Wren with a series resistance", constant(strings.Replace(string(wren), "series_cells = 5", "series_cells = 5\nseries_ohm = 20", 1), "300")},
		{"Wren with a saturation current", constant(strings.Replace(string(wren), "series_cells = 5", "series_cells = 5\nsaturation_a = \"1n\"", 1), "300")},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			p, err := profile.Parse("light.toml", []byte(tc.text))
			if err != nil {
				t.Fatal(err)
			}
			d := profile.Derive(p)
			c, _, err := model.FromProfile(p)
			if err != nil {
				t.Fatal(err)
			}
			g := p.Light.IrradianceWm2
			voc, cur := c.Cell.OpenCircuitV(g), math.Max(0, c.Cell.Current(p.Trigger.OnV, g))
			if p.Cell.SeriesOhm == 0 {
				if math.Abs(d.LightVocV-voc) > 1e-6 || math.Abs(d.LightCellA-cur) > 1e-9+1e-6*cur {
					t.Errorf("Derive: Voc %.6g V, %.6g A at on_v; model: %.6g V, %.6g A", d.LightVocV, d.LightCellA, voc, cur)
				}
			} else if d.LightVocV < voc-1e-6 || d.LightCellA < cur-1e-9 {
				t.Errorf("Derive: Voc %.6g V, %.6g A at on_v, below the model's %.6g V, %.6g A", d.LightVocV, d.LightCellA, voc, cur)
			}
			t.Logf("Voc %.4g V (model %.4g), %.4g A at on_v (model %.4g); drains %.4g A", d.LightVocV, voc, d.LightCellA, cur, d.DrainAtOnA)
		})
	}
}
