package report

// methods lists what the analysis rests on, with its references. The report prints it
// as it stands. The bibliographic details (journal, volume, pages) are from memory.
var methods = []item{
	{"Least squares by Levenberg-Marquardt",
		"Every curve (charging, discharge, leakage, the cell's single-diode curve) is fitted by damped Gauss-Newton steps. Standard errors are the square roots of the diagonal of s²(JᵀJ)⁻¹ at the solution. The fitter is checked against the certified values of the NIST Statistical Reference Datasets for nonlinear regression (Misra1a, BoxBOD, Chwirut2, Lanczos3) and for linear regression (Norris).",
		"K. Levenberg, Quarterly of Applied Mathematics 2 (1944) 164-168; D. W. Marquardt, SIAM Journal on Applied Mathematics 11 (1963) 431-441; NIST Statistical Reference Datasets, itl.nist.gov/div898/strd."},
	{"Savitzky-Golay smoothing and derivatives",
		"dV/dt comes from local polynomial fits over a sliding window, which smooth the ADC noise without shifting the edges the way a moving average does.",
		"A. Savitzky and M. J. E. Golay, Analytical Chemistry 36 (1964) 1627-1639."},
	{"Capacitive-load I-V tracing",
		"While the cell charges the storage capacitor, the cell current is I = C dV/dt plus the known drains at that voltage; one charging curve from low voltage traces the cell's I-V curve. Absolute currents need the capacitance; without it, the curve is in volts per second.",
		"Common practice for tracing cells with a capacitor load, no single source."},
	{"Single-diode cell model, explicit by the Lambert W function",
		"I = Iph − I0(exp((V + I Rs)/(n Vt)) − 1) − (V + I Rs)/Rsh, solved for I explicitly with the Lambert W function; W is computed by Halley iteration and checked against published reference values.",
		"A. Jain and A. Kapoor, Solar Energy Materials and Solar Cells 81 (2004) 269-277; R. M. Corless et al., Advances in Computational Mathematics 5 (1996) 329-359."},
	{"Two-branch supercapacitor model",
		"A supercapacitor is modelled, where the profile asks for it, as a fast R-C branch and a slow one, which explains the voltage sag after charging stops (charge redistribution).",
		"L. Zubieta and R. Bonert, IEEE Transactions on Industry Applications 36 (2000) 199-205."},
	{"Event location",
		"Fires and resets are found on the smoothed derivative and refined to the sample; the simulator locates its own trigger crossings on the integrator's steps.",
		""},
	{"Oversampling and decimation",
		"The board averages bursts of ADC readings to gain resolution below one step of the converter, at the cost of bandwidth.",
		"Application note AVR121, Enhancing ADC resolution by oversampling (the maker of the board's microcontroller)."},
	{"Tolerances",
		"The capacitor tolerance letters follow the IEC 60062 marking code (J ±5 %, K ±10 %, M ±20 %, Z −20/+80 %, and so on); aluminium electrolytic leakage is judged against the usual rating of 0.01 CV or 3 µA, whichever is larger, after two minutes at rated voltage.",
		"IEC 60062:2016, Marking codes for resistors and capacitors; the leakage rule as printed in general-purpose aluminium electrolytic datasheets."},
}

// cautions are the safety notes every report ends with.
var cautions = []item{
	{"Charged capacitors keep their charge",
		"A storage capacitor stays charged after the light goes: discharge it through a resistor (not a screwdriver) and check with a meter before you handle the circuit or change parts.", ""},
	{"Polarity",
		"Electrolytic and supercapacitors are polarised. Fitted backwards or run above their rated voltage they heat, vent and can burst; check the stripe and the rating before power goes on, and keep your face away when you first power a new build.", ""},
	{"Short-circuit current of supercapacitors",
		"A supercapacitor can deliver tens of amperes into a short. That melts thin wires and tracks and burns fingers through rings and watch straps; cover its terminals and take metal off your hands.", ""},
	{"Lithium cells",
		"If the circuit stores energy in a lithium cell, charge it only with a proper charger or protection circuit, never short, puncture or heat it, and stop using a swollen one. Follow the cell maker's limits on voltage, current and temperature.", ""},
	{"Soldering",
		"Solder fumes (flux smoke) irritate the lungs: work with ventilation or fume extraction, wash your hands after handling leaded solder, and keep the iron in its stand.", ""},
	{"ADC inputs",
		"The logging board's analogue inputs must stay between its ground and supply rails. Measure through a divider sized for the highest voltage the circuit can reach (the cell's open-circuit voltage, plus margin), and share ground between the board and the circuit only at one point.", ""},
	{"Your local rules come first",
		"Follow the ratings in the part makers' datasheets, and the electrical and waste rules where you live (batteries and capacitors go to proper collection, not the bin).", ""},
}
