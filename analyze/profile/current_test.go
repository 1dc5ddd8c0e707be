package profile

import (
	"math"
	"strings"
	"testing"
)

// wrenWithCurrent is wren.toml with a load-current channel on ADC2: a 1 Ω low-side shunt
// read through an amplifier of gain 20, i.e. 20 V/A at the pin.
func wrenWithCurrent(t *testing.T, extra string) *Profile {
	t.Helper()
	text := loadText(t, wrenPath) + "\n[[channel]]\nnode = \"iload\"\nadc = 2\nshunt_ohm = 1\n" + extra
	p, err := Parse("wren-current.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestCurrentChannel(t *testing.T) {
	p := wrenWithCurrent(t, "amp_gain = 20\n")
	if len(p.Channels) != 3 {
		t.Fatalf("%d channels, want 3", len(p.Channels))
	}
	ch := p.Channels[2]
	if ch.Node != NodeIload || !ch.IsCurrent() || ch.ShuntOhm != 1 || ch.AmpGain != 20 || ch.Gain != 1 {
		t.Fatalf("channel %+v", ch)
	}
	if got := ch.VoltsPerAmp(); got != 20 {
		t.Errorf("VoltsPerAmp = %g, want 20", got)
	}
	if ch.Ratio() != 1 || !math.IsInf(ch.LoadOhm(), 1) {
		t.Errorf("Ratio %g LoadOhm %g, want 1 and +Inf (a shunt in the return loads nothing)", ch.Ratio(), ch.LoadOhm())
	}
	if p.Channels[0].IsCurrent() || p.Channels[0].VoltsPerAmp() != 0 {
		t.Error("the vcap channel reads a current")
	}

	d := Derive(p)
	f := d.Channels[2]
	// Hand arithmetic: 5 V reference / 20 V/A = 250 mA full scale; 10 bits: 250 mA/1024.
	// Wren's stall current: (2.7 V) / (18 Ω armature + 0.4 Ω switch + 1 Ω shunt).
	checks := []struct {
		name      string
		got, want float64
	}{
		{"FullScaleA", f.FullScaleA, 0.25},
		{"LSBA", f.LSBA, 0.25 / 1024},
		{"FullScaleV at the pin", f.FullScaleV, 5},
		{"ExpectedA", f.ExpectedA, 2.7 / 19.4},
		{"ProbeLoadOhm (vcap only)", d.ProbeLoadOhm, 2e6},
	}
	for _, c := range checks {
		if math.Abs(c.got-c.want) > 1e-12*math.Abs(c.want) {
			t.Errorf("%s = %.12g, want %.12g", c.name, c.got, c.want)
		}
	}
	if !math.IsNaN(d.Channels[0].FullScaleA) || !math.IsNaN(d.Channels[0].LSBA) {
		t.Error("a voltage channel has current figures")
	}
	for _, w := range d.Warnings {
		if strings.Contains(w, "iload") {
			t.Errorf("unexpected warning %q", w)
		}
	}
}

func TestCurrentChannelDefaultsAndClipping(t *testing.T) {
	// Without an amplifier the shunt drives the pin directly: 1 V/A, 5 A full scale.
	p := wrenWithCurrent(t, "")
	if ch := p.Channels[2]; ch.AmpGain != 1 || ch.VoltsPerAmp() != 1 {
		t.Errorf("default amplifier gain %g, volts per amp %g; want 1 and 1", ch.AmpGain, ch.VoltsPerAmp())
	}
	if f := Derive(p).Channels[2]; f.FullScaleA != 5 {
		t.Errorf("FullScaleA = %g, want 5", f.FullScaleA)
	}
	// A gain of 200 puts Wren's 139 mA stall current at 27.8 V: far beyond the 25 mA
	// full scale, and the pin is at risk.
	d := Derive(wrenWithCurrent(t, "amp_gain = 200\n"))
	var clip bool
	for _, w := range d.Warnings {
		clip = clip || strings.Contains(w, "channel[2] (iload)") && strings.Contains(w, "readings clip")
	}
	if !clip {
		t.Errorf("warnings %q: want the clipping warning of the current channel", d.Warnings)
	}
}

func TestTemplateCurrentExample(t *testing.T) {
	// The commented-out iload channel of the template parses once uncommented.
	text := Template("voltage")
	i := strings.Index(text, "# [[channel]]\n# node = \"iload\"")
	if i < 0 {
		t.Fatal("the template has no commented iload channel")
	}
	var block, plain []string
	for _, l := range strings.Split(text[i:], "\n") {
		if !strings.HasPrefix(l, "# ") {
			break
		}
		block, plain = append(block, l), append(plain, strings.TrimPrefix(l, "# "))
	}
	text = strings.Replace(text, strings.Join(block, "\n"), strings.Join(plain, "\n"), 1)
	p, err := Parse("template.toml", []byte(text))
	if err != nil {
		t.Fatalf("uncommented template: %v", err)
	}
	var found bool
	for _, ch := range p.Channels {
		found = found || ch.IsCurrent() && ch.VoltsPerAmp() == 20
	}
	if !found {
		t.Errorf("channels %+v: want an iload channel of 20 V/A", p.Channels)
	}
}
