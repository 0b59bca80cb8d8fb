// Package unit parses, checks, converts and prints the units that a nudge model writes in
// square brackets after a number:
//
//	input steel = 0.9 [$/kg]
//	input hours = 90 [min]
//
// Typical unit text: kg, $/kg, $/h, kWh, m^2, m2, kg*m/s^2, $/(kg*h), 1, EUR/kg, %.
//
// A Unit is a scale factor to coherent base units and a Dim (a dimension):
//
//	value_in_base = value_in_unit * Factor
//
// The base units are the seven SI base units (kg, m, s, A, K, mol, cd) and one unit of each
// currency. So 90 min is held as 5400 (seconds), 60 $/h as 60/3600 ($ per second), and
// their product is 90 ($): Convert does the same arithmetic in one call. Simplest picks the
// unit in which a value of a given dimension is shown when no unit was declared.
//
// A compiler that keeps values in base units uses the package three ways:
//
//	on input:    base = x * u.Factor                       90 [min] enters as 5400
//	on output:   Convert(base, Simplest(d), declared)       or Simplest(d) when nothing is declared
//	partials:    Convert(g, Simplest(y.Dim.Div(x.Dim)), y.Div(x))
//
// where g is the partial derivative of output y by input x with both in base units, so that
// d total / d hours is reported in $/h when hours is in h, not in $/s.
//
// # Syntax
//
// Inside the brackets:
//
//	expr     = factor { ("*" | "·" | "/") factor }     left to right: a/b*c means (a/b)*c
//	factor   = primary [ "^" exponent | superscript ]  m^2, s^-2, s^(-2), m², s⁻¹
//	primary  = symbol [digits] | "1" | "(" expr ")"   m2 and m3 mean m^2 and m^3
//	exponent = [ "+" | "-" ] digits | "(" [ "+" | "-" ] digits ")"
//
// Spaces between tokens are ignored, but two symbols need an operator between them ("kg m" is
// an error: write "kg*m"). "⋅" and "×" also multiply. The only number that may stand for a unit
// is 1, as in "1" or "1/s": a count is dimensionless. Exponents are integers in -99..99;
// fractional exponents, and a second exponent without parentheses (m^2^3), are errors.
// Errors are *Error values with a byte offset and a lower-case message that names the
// offending text, and suggest a symbol where one is close: unknown unit "kgg" (did you mean
// kg?).
//
// # Symbols
//
// Symbols come from an explicit table, not from prefixing every unit with every SI prefix: a
// generic rule would read "min" as milli-inch, "Pa" as peta-annum, "ft" as femto-tonne and "cd"
// as centi-day. Only the prefixed forms listed below exist. Symbols are case
// sensitive ("mW" is a milliwatt, "MW" a megawatt).
//
//	symbol  meaning                              factor to base units  source
//	%       percent                              0.01                  SI Brochure 9th ed. (the number 0.01)
//	ppm     parts per million                    1e-6                  common practice
//	each    one item (count)                     1                     common practice
//	ea      one item (count)                     1                     common practice
//	pc      one piece (count)                    1                     common practice
//	unit    one unit (count)                     1                     common practice
//	m       metre                                1 m                   SI Brochure 9th ed. (2019), base unit
//	km      kilometre                            1e3 m                 SI Brochure 9th ed., SI prefix
//	cm      centimetre                           1e-2 m                SI prefix
//	mm      millimetre                           1e-3 m                SI prefix
//	um      micrometre (also µm, μm)             1e-6 m                SI prefix
//	in      inch                                 0.0254 m              international yard and pound agreement, 1959 (exact)
//	ft      foot                                 0.3048 m              1959 agreement (exact)
//	yd      yard                                 0.9144 m              1959 agreement (exact)
//	mi      mile (5280 ft)                       1609.344 m            1959 agreement (exact)
//	kg      kilogram                             1 kg                  SI base unit
//	g       gram                                 1e-3 kg               SI prefix
//	mg      milligram                            1e-6 kg               SI prefix
//	ug      microgram (also µg, μg)              1e-9 kg               SI prefix
//	t       tonne                                1e3 kg                SI Brochure, non-SI unit accepted for use with the SI
//	kt      kilotonne                            1e6 kg                as t, with SI prefix
//	Mt      megatonne                            1e9 kg                as t, with SI prefix
//	lb      pound (avoirdupois)                  0.45359237 kg         1959 agreement (exact)
//	oz      ounce (avoirdupois, lb/16)           0.028349523125 kg     1959 agreement (exact)
//	s       second                               1 s                   SI base unit
//	ms      millisecond                          1e-3 s                SI prefix
//	us      microsecond (also µs, μs)            1e-6 s                SI prefix
//	min     minute                               60 s                  SI Brochure, accepted non-SI unit
//	h       hour                                 3600 s                SI Brochure, accepted non-SI unit
//	hr      hour                                 3600 s                common practice
//	d       day                                  86400 s               SI Brochure, accepted non-SI unit
//	wk      week (7 d)                           604800 s              common practice
//	mo      month (yr/12)                        2629800 s             this package's convention
//	yr      Julian year (365.25 d)               31557600 s            IAU, Julian year
//	A       ampere                               1 A                   SI base unit
//	mA      milliampere                          1e-3 A                SI prefix
//	K       kelvin                               1 K                   SI base unit
//	mol     mole                                 1 mol                 SI base unit
//	kmol    kilomole                             1e3 mol               SI prefix
//	cd      candela                              1 cd                  SI base unit
//	ha      hectare                              1e4 m^2               SI Brochure, accepted non-SI unit
//	ac      acre (43560 ft^2)                    4046.8564224 m^2      1959 agreement (exact)
//	L       litre (also l)                       1e-3 m^3              SI Brochure, accepted non-SI unit
//	mL      millilitre (also ml)                 1e-6 m^3              SI prefix
//	gal     US gallon (231 in^3)                 3.785411784e-3 m^3    NIST SP 811 (2008 ed.), Appendix B (exact)
//	bbl     petroleum barrel (42 US gal)         0.158987294928 m^3    NIST SP 811, Appendix B (exact)
//	J       joule                                1 J = 1 kg*m^2/s^2    SI Brochure, coherent derived unit
//	kJ      kilojoule                            1e3 J                 SI prefix
//	MJ      megajoule                            1e6 J                 SI prefix
//	GJ      gigajoule                            1e9 J                 SI prefix
//	Wh      watt hour                            3600 J                NIST SP 811, Appendix B (exact)
//	kWh     kilowatt hour                        3.6e6 J               NIST SP 811, Appendix B (exact)
//	MWh     megawatt hour                        3.6e9 J               as kWh
//	GWh     gigawatt hour                        3.6e12 J              as kWh
//	BTU     British thermal unit, IT (also Btu)  1055.05585262 J       NIST SP 811, Appendix B (Btu_IT = 2.326 J/g × 453.59237 g, exact)
//	MMBtu   million Btu (fuel pricing)           1.05505585262e9 J     common practice
//	W       watt                                 1 W = 1 kg*m^2/s^3    SI Brochure, coherent derived unit
//	mW      milliwatt                            1e-3 W                SI prefix
//	kW      kilowatt                             1e3 W                 SI prefix
//	MW      megawatt                             1e6 W                 SI prefix
//	GW      gigawatt                             1e9 W                 SI prefix
//	hp      horsepower (550 ft*lbf/s)            745.6998715822702 W   NIST SP 811, Appendix B (exact from the definition)
//	N       newton                               1 N = 1 kg*m/s^2      SI Brochure, coherent derived unit
//	kN      kilonewton                           1e3 N                 SI prefix
//	lbf     pound-force (lb × 9.80665 m/s^2)     4.4482216152605 N     NIST SP 811, Appendix B (exact)
//	Pa      pascal                               1 Pa = 1 kg/(m*s^2)   SI Brochure, coherent derived unit
//	kPa     kilopascal                           1e3 Pa                SI prefix
//	MPa     megapascal                           1e6 Pa                SI prefix
//	bar     bar                                  1e5 Pa                NIST SP 811, Appendix B (exact)
//	mbar    millibar                             1e2 Pa                NIST SP 811, Appendix B (exact)
//	psi     pound-force per square inch          6894.757293168361 Pa  NIST SP 811, Appendix B (lbf/in^2)
//	atm     standard atmosphere                  101325 Pa             NIST SP 811, Appendix B (exact)
//
// The month is one twelfth of the Julian year (30.4375 d), a convention of this package for
// monthly costs; calendar months vary and are not units. Temperature scales with an offset
// (°C, °F) are not units: a unit here only scales. "ton" is rejected as ambiguous (short, long
// or metric); write t for the tonne.
//
// # Currencies
//
// "$" is the model's default currency, whatever it is in the user's country. An ISO 4217 code
// (EUR, GBP, JPY, CHF, USD, ...; the list is in iso4217.go) names another currency, and so do
// the signs € (EUR) and £ (GBP). Three capitals that ISO 4217 does not list are an unknown unit
// ([FTE] is a count, which has no unit, and the message says so). Every currency, "$" and
// "USD" included, is a separate base dimension: nothing here converts one currency into
// another unless the model states a rate (Unit.Exchange), and Convert between two currencies
// fails with a hint to state one.
//
// Thousands and millions of a currency are written as estimators write them: k$, K$, $K, $k,
// kEUR, KEUR, k€ for a thousand; M$, MM$, $MM, MEUR, MMEUR, M€ for a million. "$M" is rejected:
// M stands for a thousand (Roman) in some trades and a million in others, so the message asks
// for M$ or $MM (a million) or k$ (a thousand). Symbols keep the spelling written: 12 [$K]
// is shown as 12 $K.
//
// # Display
//
// String gives a Unit's canonical text, which Parse reads back to an identical Unit: symbols
// keep the spelling the user chose ("$/h" stays "$/h"), "m2" becomes "m^2", numerator first,
// then "/" and the denominator in parentheses when it has more than one symbol. Mul and Div
// merge like symbols ("h" times "$/h" is "$"), but do not convert between different symbols of
// one dimension ("min" times "$/h" is "min*$/h", with factor 1/60 and dimension $).
//
// Simplest returns a coherent unit (Factor 1), so a value held in base units is shown as it
// is: "1" for dimensionless; currencies first ("$" before codes, codes in alphabetical order);
// then N, Pa, J or W when the physical part is exactly one of them or its reciprocal ("J",
// "$/J"), else SI base units in the order kg, m, s, A, K, mol, cd ("kg*m/s", "$/(kg*s)").
// Named units with a factor other than 1 (kWh, h) are never chosen: show a value in a user's
// own unit with Convert.
package unit
