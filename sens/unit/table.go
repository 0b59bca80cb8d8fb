package unit

// This file is the unit table. The package documentation (doc.go) lists the same rows; a test
// checks that every symbol here appears there.

// entry is one unit symbol: value_in_base = value_in_unit * factor.
type entry struct {
	sym     string
	factor  float64
	dim     Dim
	meaning string
	source  string
}

// Sources named in the table.
const (
	srcBase    = "SI Brochure 9th ed. (2019), base unit"
	srcPrefix  = "SI Brochure 9th ed., SI prefix"
	srcDerived = "SI Brochure 9th ed., coherent derived unit with a special name"
	srcNonSI   = "SI Brochure 9th ed., non-SI unit accepted for use with the SI"
	src1959    = "international yard and pound agreement, 1959 (exact)"
	srcNIST    = "NIST SP 811 (2008 ed.), Appendix B"
	srcCommon  = "common practice"
)

// Exact definitions that other rows build on.
const (
	inch     = 0.0254     // m, 1959 agreement
	foot     = 0.3048     // m, 1959 agreement
	pound    = 0.45359237 // kg, 1959 agreement
	gn       = 9.80665    // m/s^2, standard acceleration of gravity (CGPM 1901)
	julianYr = 365.25 * 86400
	usGallon = 231 * inch * inch * inch // m^3, 231 cubic inches
	btuIT    = 1055.05585262            // J, International Table Btu: 2.326 J/g × 453.59237 g
	poundF   = pound * gn               // N
)

var (
	dimOne         = Dim{}
	dimLength      = baseDim(bLength)
	dimMass        = baseDim(bMass)
	dimTime        = baseDim(bTime)
	dimCurrent     = baseDim(bCurrent)
	dimTemperature = baseDim(bTemperature)
	dimAmount      = baseDim(bAmount)
	dimLuminosity  = baseDim(bLuminosity)
	dimArea        = dimLength.Mul(dimLength)
	dimVolume      = dimArea.Mul(dimLength)
	dimForce       = dimMass.Mul(dimLength).Div(dimTime).Div(dimTime)
	dimPressure    = dimForce.Div(dimArea)
	dimEnergy      = dimForce.Mul(dimLength)
	dimPower       = dimEnergy.Div(dimTime)
)

// table lists every unit symbol except "$" and currency codes, which follow rules (see doc.go).
var table = []entry{
	// Dimensionless.
	{"%", 0.01, dimOne, "percent", "SI Brochure 9th ed. (the number 0.01)"},
	{"ppm", 1e-6, dimOne, "parts per million", srcCommon},
	{"each", 1, dimOne, "one item (count)", srcCommon},
	{"ea", 1, dimOne, "one item (count)", srcCommon},
	{"pc", 1, dimOne, "one piece (count)", srcCommon},
	{"unit", 1, dimOne, "one unit (count)", srcCommon},

	// Length.
	{"m", 1, dimLength, "metre", srcBase},
	{"km", 1e3, dimLength, "kilometre", srcPrefix},
	{"cm", 1e-2, dimLength, "centimetre", srcPrefix},
	{"mm", 1e-3, dimLength, "millimetre", srcPrefix},
	{"um", 1e-6, dimLength, "micrometre", srcPrefix},
	{"µm", 1e-6, dimLength, "micrometre (micro sign)", srcPrefix},
	{"μm", 1e-6, dimLength, "micrometre (Greek mu)", srcPrefix},
	{"in", inch, dimLength, "inch", src1959},
	{"ft", foot, dimLength, "foot", src1959},
	{"yd", 0.9144, dimLength, "yard", src1959},
	{"mi", 1609.344, dimLength, "mile (5280 ft)", src1959},

	// Mass.
	{"kg", 1, dimMass, "kilogram", srcBase},
	{"g", 1e-3, dimMass, "gram", srcPrefix},
	{"mg", 1e-6, dimMass, "milligram", srcPrefix},
	{"ug", 1e-9, dimMass, "microgram", srcPrefix},
	{"µg", 1e-9, dimMass, "microgram (micro sign)", srcPrefix},
	{"μg", 1e-9, dimMass, "microgram (Greek mu)", srcPrefix},
	{"t", 1e3, dimMass, "tonne", srcNonSI},
	{"kt", 1e6, dimMass, "kilotonne", srcNonSI + ", with prefix"},
	{"Mt", 1e9, dimMass, "megatonne", srcNonSI + ", with prefix"},
	{"lb", pound, dimMass, "pound (avoirdupois)", src1959},
	{"oz", pound / 16, dimMass, "ounce (avoirdupois, lb/16)", src1959},

	// Time.
	{"s", 1, dimTime, "second", srcBase},
	{"ms", 1e-3, dimTime, "millisecond", srcPrefix},
	{"us", 1e-6, dimTime, "microsecond", srcPrefix},
	{"µs", 1e-6, dimTime, "microsecond (micro sign)", srcPrefix},
	{"μs", 1e-6, dimTime, "microsecond (Greek mu)", srcPrefix},
	{"min", 60, dimTime, "minute", srcNonSI},
	{"h", 3600, dimTime, "hour", srcNonSI},
	{"hr", 3600, dimTime, "hour", srcCommon},
	{"d", 86400, dimTime, "day", srcNonSI},
	{"wk", 7 * 86400, dimTime, "week (7 d)", srcCommon},
	{"mo", julianYr / 12, dimTime, "month (yr/12)", "this package's convention"},
	{"yr", julianYr, dimTime, "Julian year (365.25 d)", "IAU, Julian year"},

	// Other SI base dimensions.
	{"A", 1, dimCurrent, "ampere", srcBase},
	{"mA", 1e-3, dimCurrent, "milliampere", srcPrefix},
	{"K", 1, dimTemperature, "kelvin", srcBase},
	{"mol", 1, dimAmount, "mole", srcBase},
	{"kmol", 1e3, dimAmount, "kilomole", srcPrefix},
	{"cd", 1, dimLuminosity, "candela", srcBase},

	// Area.
	{"ha", 1e4, dimArea, "hectare", srcNonSI},
	{"ac", 43560 * foot * foot, dimArea, "acre (43560 ft^2, international foot)", src1959},

	// Volume.
	{"L", 1e-3, dimVolume, "litre", srcNonSI},
	{"l", 1e-3, dimVolume, "litre", srcNonSI},
	{"mL", 1e-6, dimVolume, "millilitre", srcPrefix},
	{"ml", 1e-6, dimVolume, "millilitre", srcPrefix},
	{"gal", usGallon, dimVolume, "US gallon (231 in^3)", srcNIST},
	{"bbl", 42 * usGallon, dimVolume, "petroleum barrel (42 US gal)", srcNIST},

	// Energy.
	{"J", 1, dimEnergy, "joule", srcDerived},
	{"kJ", 1e3, dimEnergy, "kilojoule", srcPrefix},
	{"MJ", 1e6, dimEnergy, "megajoule", srcPrefix},
	{"GJ", 1e9, dimEnergy, "gigajoule", srcPrefix},
	{"Wh", 3600, dimEnergy, "watt hour", srcNIST},
	{"kWh", 3.6e6, dimEnergy, "kilowatt hour", srcNIST},
	{"MWh", 3.6e9, dimEnergy, "megawatt hour", srcNIST},
	{"GWh", 3.6e12, dimEnergy, "gigawatt hour", srcNIST},
	{"BTU", btuIT, dimEnergy, "British thermal unit (International Table)", srcNIST},
	{"Btu", btuIT, dimEnergy, "British thermal unit (International Table)", srcNIST},
	{"MMBtu", 1e6 * btuIT, dimEnergy, "million Btu (fuel pricing)", srcCommon},

	// Power.
	{"W", 1, dimPower, "watt", srcDerived},
	{"mW", 1e-3, dimPower, "milliwatt", srcPrefix},
	{"kW", 1e3, dimPower, "kilowatt", srcPrefix},
	{"MW", 1e6, dimPower, "megawatt", srcPrefix},
	{"GW", 1e9, dimPower, "gigawatt", srcPrefix},
	{"hp", 550 * foot * poundF, dimPower, "mechanical horsepower (550 ft*lbf/s)", srcNIST},

	// Force.
	{"N", 1, dimForce, "newton", srcDerived},
	{"kN", 1e3, dimForce, "kilonewton", srcPrefix},
	{"lbf", poundF, dimForce, "pound-force (lb × 9.80665 m/s^2)", srcNIST},

	// Pressure.
	{"Pa", 1, dimPressure, "pascal", srcDerived},
	{"kPa", 1e3, dimPressure, "kilopascal", srcPrefix},
	{"MPa", 1e6, dimPressure, "megapascal", srcPrefix},
	{"bar", 1e5, dimPressure, "bar", srcNIST},
	{"mbar", 1e2, dimPressure, "millibar", srcNIST},
	{"psi", poundF / (inch * inch), dimPressure, "pound-force per square inch", srcNIST},
	{"atm", 101325, dimPressure, "standard atmosphere", srcNIST},
}

// bySymbol indexes table.
var bySymbol = func() map[string]entry {
	m := make(map[string]entry, len(table))
	for _, e := range table {
		if _, dup := m[e.sym]; dup {
			panic("unit: duplicate table symbol " + e.sym)
		}
		m[e.sym] = e
	}
	return m
}()

// Symbols lists the unit symbols of the table in table order, for completion and help text.
// "$" and currency codes are not listed: see Currency.
func Symbols() []string {
	s := make([]string, len(table))
	for i, e := range table {
		s[i] = e.sym
	}
	return s
}
