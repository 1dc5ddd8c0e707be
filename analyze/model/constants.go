package model

// Physical constants, CODATA 2018 (exact in the SI since 2019); the values are checked
// against testdata/physical_constants_codata2018.csv (NIST listing via scipy).
const (
	Boltzmann        = 1.380649e-23    // J/K
	ElementaryCharge = 1.602176634e-19 // C
)

// ThermalVoltage returns kT/q in volts at temperature tempK (kelvin).
func ThermalVoltage(tempK float64) float64 {
	return Boltzmann * tempK / ElementaryCharge
}

// DefaultTempK is the cell temperature used when Cell.TempK is zero: 25 °C.
const DefaultTempK = 298.15

// RefIrradianceWm2 is the irradiance at which Cell.IphA is given when Cell.RefWm2 is zero
// (the 1000 W/m² of standard test conditions, IEC 60904-3; common practice).
const RefIrradianceWm2 = 1000.0
