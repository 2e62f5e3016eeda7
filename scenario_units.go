package coilkick

// Units at the edge: ParseQuantity turns text such as "250 mH" into an SI
// value (0.25) after checking that the unit has the expected dimension.
// Inside coilkick every quantity is a plain float64 in SI units.
//
// Accepted syntax (see ParseQuantity for details):
//
//	quantity = number [space] unit
//	number   = decimal floating-point number, Go syntax: [+-] digits [. digits] [e [+-] digits]
//	unit     = product [ "/" factor ] | ("1" | "") "/" factor
//	product  = factor { ("*" | "." | "·" | space) factor }
//	factor   = [prefix] symbol [ exponent ]
//	exponent = "^" [-] digits | digits | "²" | "³"     (mm2 = mm^2 = mm²)
//
// Units are case-sensitive. Products need an explicit separator: "N*s/m",
// "N.s/m", "N·s/m" and "N s/m" are accepted, "Ns/m" is rejected (with a hint),
// because run-together symbols are ambiguous ("ms" is the millisecond).
// At most one "/" is allowed and only one factor may follow it; write
// other denominators with negative exponents ("W*m^-1*K^-1").

import (
	"errors"
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Dim is a physical dimension: the exponents of kg, m, s, A and K, in that
// order. Two quantities can be compared only when their Dims are equal.
type Dim [5]int8

// Named dimensions. Temperature is an absolute temperature (K); the same
// exponent vector also serves temperature differences, which take only K.
var (
	Dimensionless     = Dim{0, 0, 0, 0, 0}
	Mass              = Dim{1, 0, 0, 0, 0}
	Length            = Dim{0, 1, 0, 0, 0}
	Time              = Dim{0, 0, 1, 0, 0}
	Current           = Dim{0, 0, 0, 1, 0}
	Temperature       = Dim{0, 0, 0, 0, 1}
	Area              = Dim{0, 2, 0, 0, 0}
	Velocity          = Dim{0, 1, -1, 0, 0}
	Force             = Dim{1, 1, -2, 0, 0}
	ForcePerLength    = Dim{1, 0, -2, 0, 0}  // spring rate, N/m
	Damping           = Dim{1, 0, -1, 0, 0}  // N·s/m
	Pressure          = Dim{1, -1, -2, 0, 0} // Pa
	Energy            = Dim{1, 2, -2, 0, 0}  // J
	Power             = Dim{1, 2, -3, 0, 0}  // W
	Voltage           = Dim{1, 2, -3, -1, 0} // V
	Resistance        = Dim{1, 2, -3, -2, 0} // Ω
	Inductance        = Dim{1, 2, -2, -2, 0} // H
	Capacitance       = Dim{-1, -2, 4, 2, 0} // F
	FluxLinkage       = Dim{1, 2, -2, -1, 0} // Wb
	PerKelvin         = Dim{0, 0, 0, 0, -1}  // 1/K
	FluxDensity       = Dim{1, 0, -2, -1, 0} // T
	FieldStrength     = Dim{0, -1, 0, 1, 0}  // A/m
	Frequency         = Dim{0, 0, -1, 0, 0}  // Hz
	HeatCapacity      = Dim{1, 2, -2, 0, -1} // J/K
	ThermalResistance = Dim{-1, -2, 3, 0, 1} // K/W
	HeatTransfer      = Dim{1, 0, -3, 0, -1} // W/(m²·K)
)

type dimInfo struct {
	name    string // with its article: "a voltage"
	example string // a quantity of this dimension, as a user would write it
}

var dimInfos = map[Dim]dimInfo{
	Dimensionless:     {"a plain number", "0.3"},
	Mass:              {"a mass", "6 g"},
	Length:            {"a length", "1.2 mm"},
	Time:              {"a time", "200 ms"},
	Current:           {"a current", "2 A"},
	Temperature:       {"a temperature", "20 degC"},
	Area:              {"an area", "1.5 mm2"},
	Velocity:          {"a velocity", "0.05 m/s"},
	Force:             {"a force", "2 N"},
	ForcePerLength:    {"a spring rate (force per length)", "0.8 N/mm"},
	Damping:           {"a damping coefficient (force per velocity)", "0.5 N*s/m"},
	Pressure:          {"a pressure", "3 bar"},
	Energy:            {"an energy", "50 mJ"},
	Power:             {"a power", "10 W"},
	Voltage:           {"a voltage", "24 V"},
	Resistance:        {"a resistance", "48 ohm"},
	Inductance:        {"an inductance", "250 mH"},
	Capacitance:       {"a capacitance", "100 nF"},
	FluxLinkage:       {"a flux linkage", "12 mWb"},
	PerKelvin:         {"a temperature coefficient (per kelvin)", "0.00393 /K"},
	FluxDensity:       {"a flux density", "1.8 T"},
	FieldStrength:     {"a magnetic field strength", "400 A/m"},
	Frequency:         {"a frequency", "20 kHz"},
	HeatCapacity:      {"a heat capacity", "150 J/K"},
	ThermalResistance: {"a thermal resistance", "4 K/W"},
	HeatTransfer:      {"a heat-transfer coefficient", "12 W*m^-2*K^-1"},
}

var baseSymbols = [5]string{"kg", "m", "s", "A", "K"}

// Name is the dimension's name with its article ("a voltage", "an area"),
// or its SI base-unit formula ("kg*m^2*s^-4") when it has no name here.
func (d Dim) Name() string {
	if info, ok := dimInfos[d]; ok {
		return info.name
	}
	return "a quantity in " + d.formula()
}

// Example is a sample quantity of this dimension for messages ("24 V").
func (d Dim) Example() string {
	if info, ok := dimInfos[d]; ok {
		return info.example
	}
	return "1 " + d.formula()
}

// String is the dimension's SI base-unit formula, e.g. "kg*m^2*s^-3*A^-1".
func (d Dim) String() string { return d.formula() }

func (d Dim) formula() string {
	var parts []string
	for i, e := range d {
		switch {
		case e == 0:
		case e == 1:
			parts = append(parts, baseSymbols[i])
		default:
			parts = append(parts, fmt.Sprintf("%s^%d", baseSymbols[i], e))
		}
	}
	if len(parts) == 0 {
		return "1"
	}
	return strings.Join(parts, "*")
}

// unitDef is one unit symbol. The SI value of 1 symbol is mult·10^exp10,
// plus offsetCenti/100 for degC (which may only stand alone).
type unitDef struct {
	dim         Dim
	exp10       int
	mult        float64
	offsetCenti int  // offset in hundredths of the SI unit (degC: 27315)
	prefix      bool // accepts SI prefixes
	absOffset   bool // degC: an absolute temperature with an offset
}

// psiPa is one pound-force per square inch in pascals, from the exact
// definitions 1 lb = 0.45359237 kg, g_n = 9.80665 m/s², 1 in = 0.0254 m:
// 6894.757293168... Pa (NIST SP 811, B.8: 6.894 757 E+03 Pa).
const psiPa = 0.45359237 * 9.80665 / (0.0254 * 0.0254)

// celsiusOffset: t/°C = T/K − 273.15 (SI brochure, 9th ed., 2.3.1).
const celsiusOffsetCenti = 27315

var unitDefs = map[string]unitDef{
	"V":       {dim: Voltage, mult: 1, prefix: true},
	"A":       {dim: Current, mult: 1, prefix: true},
	"ohm":     {dim: Resistance, mult: 1, prefix: true},
	"\u03a9":  {dim: Resistance, mult: 1, prefix: true}, // Ω, Greek capital omega
	"\u2126":  {dim: Resistance, mult: 1, prefix: true}, // Ω, ohm sign
	"H":       {dim: Inductance, mult: 1, prefix: true},
	"F":       {dim: Capacitance, mult: 1, prefix: true},
	"Wb":      {dim: FluxLinkage, mult: 1, prefix: true},
	"T":       {dim: FluxDensity, mult: 1, prefix: true},
	"Hz":      {dim: Frequency, mult: 1, prefix: true},
	"%":       {dim: Dimensionless, mult: 0.01},
	"m":       {dim: Length, mult: 1, prefix: true},
	"g":       {dim: Mass, mult: 1, exp10: -3, prefix: true},
	"s":       {dim: Time, mult: 1, prefix: true},
	"min":     {dim: Time, mult: 60},
	"N":       {dim: Force, mult: 1, prefix: true},
	"Pa":      {dim: Pressure, mult: 1, prefix: true},
	"bar":     {dim: Pressure, mult: 1, exp10: 5, prefix: true}, // 1 bar = 1e5 Pa (ISO 80000-4)
	"psi":     {dim: Pressure, mult: psiPa},
	"J":       {dim: Energy, mult: 1, prefix: true},
	"W":       {dim: Power, mult: 1, prefix: true},
	"K":       {dim: Temperature, mult: 1, prefix: true},
	"degC":    {dim: Temperature, mult: 1, offsetCenti: celsiusOffsetCenti, absOffset: true},
	"\u00b0C": {dim: Temperature, mult: 1, offsetCenti: celsiusOffsetCenti, absOffset: true},
}

// SI prefixes accepted (SI brochure, 9th ed., table 7). "u", "µ" (micro
// sign U+00B5) and "μ" (Greek mu U+03BC) all mean micro.
var prefixes = map[string]int{
	"p": -12, "n": -9, "u": -6, "\u00b5": -6, "\u03bc": -6, "m": -3, "c": -2,
	"k": 3, "M": 6, "G": 9,
}

// lookupUnit finds a symbol, first as written, then as prefix + symbol,
// so that "m" is the metre, "min" the minute, "mm" the millimetre and
// "mohm" the milliohm.
func lookupUnit(sym string) (unitDef, bool) {
	if d, ok := unitDefs[sym]; ok {
		return d, true
	}
	r, size := utf8.DecodeRuneInString(sym)
	if r == utf8.RuneError || size == len(sym) {
		return unitDef{}, false
	}
	p, ok := prefixes[sym[:size]]
	if !ok {
		return unitDef{}, false
	}
	d, ok := unitDefs[sym[size:]]
	if !ok || !d.prefix {
		return unitDef{}, false
	}
	d.exp10 += p
	return d, true
}

// unitValue is a parsed unit expression: 1 unit = mult·10^exp10 SI (degC: + 273.15).
type unitValue struct {
	dim         Dim
	exp10       int
	mult        float64
	offsetCenti int  // offset in hundredths of the SI unit
	absOff      bool // the unit is degC standing alone
}

// MaxQuantityText bounds the text of one quantity (the unit parser's work
// grows with the square of the unit's length; no real unit is this long).
const MaxQuantityText = 80

// ParseQuantity reads a number followed by a unit (the space between them
// is optional) and returns its value in SI units, after checking that the
// unit has dimension dim. For Dimensionless a bare number is accepted;
// for any other dimension a bare number is an error. degC and °C are
// accepted only for an absolute Temperature (adding 273.15); K serves
// absolute temperatures and differences alike ("0.00393 /K"). NaN,
// infinities, values that overflow, and absolute temperatures below 0 K
// are rejected. Errors say what the text is and what was expected, e.g.
//
//	"6 N" is a force; expected a mass, e.g. "6 g"
//
// Supported units: V A ohm Ω H F Wb T m g s N Pa bar J W K (all with the
// prefixes p n u µ m c k M G), and min (60 s), psi, degC, °C (no prefixes).
func ParseQuantity(s string, dim Dim) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, fmt.Errorf("is empty; expected %s, e.g. %q", dim.Name(), dim.Example())
	}
	if len(t) > MaxQuantityText {
		return 0, fmt.Errorf("is %d characters long, more than the %d a quantity may have; expected %s, e.g. %q", len(t), MaxQuantityText, dim.Name(), dim.Example())
	}
	mant, exp, rest, ok := splitNumber(t)
	if !ok {
		if isNonFiniteText(t) {
			return 0, fmt.Errorf("%q is not a finite number; expected %s, e.g. %q", s, dim.Name(), dim.Example())
		}
		return 0, fmt.Errorf("%q is not a quantity: it must start with a number; expected %s, e.g. %q", s, dim.Name(), dim.Example())
	}
	unitText := strings.TrimSpace(rest)
	if unitText == "" {
		if dim == Dimensionless {
			return expecting(dim)(finishQuantity(s, mant, exp, unitValue{mult: 1}, dim))
		}
		return 0, fmt.Errorf("%q has no unit; expected %s, e.g. %q", s, dim.Name(), dim.Example())
	}
	u, err := parseUnit(unitText)
	if err != nil {
		return 0, fmt.Errorf("%q: %v; expected %s, e.g. %q", s, err, dim.Name(), dim.Example())
	}
	if u.dim != dim {
		return 0, fmt.Errorf("%q is %s; expected %s, e.g. %q", s, u.dim.Name(), dim.Name(), dim.Example())
	}
	return expecting(dim)(finishQuantity(s, mant, exp, u, dim))
}

// expecting returns a function that adds what was expected (dim) to an
// error of finishQuantity, as every other error of ParseQuantity says it.
func expecting(dim Dim) func(float64, error) (float64, error) {
	return func(v float64, err error) (float64, error) {
		if err != nil {
			return 0, fmt.Errorf("%v; expected %s, e.g. %q", err, dim.Name(), dim.Example())
		}
		return v, nil
	}
}

// finishQuantity combines the decimal mantissa and exponent with the unit. Powers
// of ten are folded into the decimal exponent before one correctly rounded
// conversion, so "1.2 mm" is exactly the float64 nearest to 0.0012.
func finishQuantity(s, mant string, exp int, u unitValue, dim Dim) (float64, error) {
	e := int64(exp) + int64(u.exp10)
	if e > 100000 || e < -100000 {
		return 0, fmt.Errorf("%q is out of range", s)
	}
	dec := mant + "e" + strconv.FormatInt(e, 10)
	v, err := strconv.ParseFloat(dec, 64)
	if err != nil {
		return 0, fmt.Errorf("%q is out of range", s)
	}
	if v == 0 && strings.ContainsAny(mant, "123456789") {
		return 0, fmt.Errorf("%q is too small to represent (underflow)", s)
	}
	switch {
	case u.absOff:
		// Add the offset in exact decimal arithmetic and round once, so
		// "-40 degC" is the float64 nearest to 233.15.
		r, ok := new(big.Rat).SetString(dec)
		if !ok {
			return 0, fmt.Errorf("%q is out of range", s)
		}
		r.Add(r, big.NewRat(int64(u.offsetCenti), 100))
		v, _ = r.Float64()
	default:
		v *= u.mult
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is out of range", s)
	}
	if dim == Temperature && v < 0 {
		return 0, fmt.Errorf("%q is below absolute zero", s)
	}
	return v, nil
}

// splitNumber splits t into a decimal mantissa (sign, digits, point),
// its decimal exponent and the rest. ok is false when t has no number.
func splitNumber(t string) (mant string, exp int, rest string, ok bool) {
	i := 0
	if i < len(t) && (t[i] == '+' || t[i] == '-') {
		i++
	}
	i, digits := skipDigits(t, i)
	if i < len(t) && t[i] == '.' {
		var frac int
		i, frac = skipDigits(t, i+1)
		digits += frac
	}
	if digits == 0 {
		return "", 0, "", false
	}
	mant = t[:i]
	exp, i = splitExponent(t, i)
	return mant, exp, t[i:], true
}

// skipDigits returns the index after the ASCII digits of t from i on, and
// how many there are.
func skipDigits(t string, i int) (end, n int) {
	end = i
	for end < len(t) && isASCIIDigit(t[end]) {
		end++
	}
	return end, end - i
}

// splitExponent reads an exponent at t[i:]: "e" or "E", an optional sign
// and at least one digit. It returns the exponent and the index after it,
// or 0 and i when there is none. An exponent beyond ±100000 comes back as
// 1000000, out of range, for finishQuantity to report.
func splitExponent(t string, i int) (exp, end int) {
	if i >= len(t) || (t[i] != 'e' && t[i] != 'E') {
		return 0, i
	}
	j := i + 1
	if j < len(t) && (t[j] == '+' || t[j] == '-') {
		j++
	}
	k, n := skipDigits(t, j)
	if n == 0 {
		return 0, i
	}
	exp, err := strconv.Atoi(t[i+1 : k])
	if err != nil || exp > 100000 || exp < -100000 {
		exp = 1000000
	}
	return exp, k
}

func isASCIIDigit(c byte) bool { return '0' <= c && c <= '9' }

func isNonFiniteText(t string) bool {
	l := strings.ToLower(strings.TrimLeft(t, "+-"))
	return strings.HasPrefix(l, "nan") || strings.HasPrefix(l, "inf") || strings.HasPrefix(l, ".nan") || strings.HasPrefix(l, ".inf")
}

// unitExprParser reads a unit expression (see the grammar at the top of this file).
type unitExprParser struct {
	s   string
	pos int
}

func (p *unitExprParser) peek() rune {
	if p.pos >= len(p.s) {
		return 0
	}
	r, _ := utf8.DecodeRuneInString(p.s[p.pos:])
	return r
}

func (p *unitExprParser) next() rune {
	r, size := utf8.DecodeRuneInString(p.s[p.pos:])
	p.pos += size
	return r
}

func (p *unitExprParser) skipSpace() bool {
	skipped := false
	for p.pos < len(p.s) && unicode.IsSpace(p.peek()) {
		p.next()
		skipped = true
	}
	return skipped
}

func isUnitLetter(r rune) bool { return unicode.IsLetter(r) || r == '°' || r == '%' }

func isUnitProductOp(r rune) bool { return r == '*' || r == '.' || r == '·' || r == '⋅' }

// parseUnit parses a unit expression and returns its SI scale and dimension.
func parseUnit(text string) (unitValue, error) {
	p := &unitExprParser{s: text}
	u := unitValue{mult: 1}
	var err error
	switch {
	case p.peek() == '/':
		// "/K": empty numerator
	case p.peek() == '1' && strings.HasPrefix(strings.TrimLeft(p.s[1:], " "), "/"):
		p.next() // "1/K"
		p.skipSpace()
	default:
		u, err = p.product()
		if err != nil {
			return unitValue{}, err
		}
	}
	if p.peek() == '/' {
		p.next()
		p.skipSpace()
		d, err := p.factor()
		if err != nil {
			return unitValue{}, err
		}
		p.skipSpace()
		if p.pos < len(p.s) {
			if p.peek() == '/' {
				return unitValue{}, errors.New(`unit has more than one "/"; use negative exponents, e.g. "W*m^-1*K^-1"`)
			}
			return unitValue{}, fmt.Errorf(`only one unit may follow "/" (found %q after it); use negative exponents, e.g. "W*m^-1*K^-1"`, p.s[p.pos:])
		}
		if d.absOff {
			return unitValue{}, errors.New(`degC can only stand alone, for an absolute temperature; for a temperature coefficient write "/K"`)
		}
		u, err = combineUnits(u, d, -1)
		if err != nil {
			return unitValue{}, err
		}
	}
	if p.pos < len(p.s) {
		return unitValue{}, fmt.Errorf("unexpected %q in unit", p.s[p.pos:])
	}
	return u, nil
}

// product reads factor {separator factor}.
func (p *unitExprParser) product() (unitValue, error) {
	first, err := p.factor()
	if err != nil {
		return unitValue{}, err
	}
	u := first
	n := 1
	for {
		spaced := p.skipSpace()
		r := p.peek()
		switch {
		case r == 0 || r == '/':
			if n > 1 && first.absOff {
				return unitValue{}, errors.New(`degC can only stand alone, for an absolute temperature; in a compound unit use K`)
			}
			return u, nil
		case isUnitProductOp(r):
			p.next()
			p.skipSpace()
		case spaced && isUnitLetter(r):
			// a space between two units is a product (SI brochure 5.4.6)
		case r == ',':
			return unitValue{}, errors.New(`unexpected "," (write the decimal point as ".")`)
		default:
			return unitValue{}, fmt.Errorf("unexpected %q in unit", p.s[p.pos:])
		}
		f, err := p.factor()
		if err != nil {
			return unitValue{}, err
		}
		if f.absOff || first.absOff {
			return unitValue{}, errors.New(`degC can only stand alone, for an absolute temperature; in a compound unit use K`)
		}
		if u, err = combineUnits(u, f, 1); err != nil {
			return unitValue{}, err
		}
		n++
	}
}

// factor reads [prefix]symbol[exponent].
func (p *unitExprParser) factor() (unitValue, error) {
	start := p.pos
	for p.pos < len(p.s) && isUnitLetter(p.peek()) {
		p.next()
	}
	sym := p.s[start:p.pos]
	if sym == "" {
		if p.pos >= len(p.s) {
			return unitValue{}, errors.New("unit is missing")
		}
		if p.peek() == ',' {
			return unitValue{}, errors.New(`unexpected "," (write the decimal point as ".")`)
		}
		return unitValue{}, fmt.Errorf("unexpected %q in unit", p.s[p.pos:])
	}
	def, ok := lookupUnit(sym)
	if !ok {
		return unitValue{}, unknownUnitError(sym)
	}
	e, err := p.exponent()
	if err != nil {
		return unitValue{}, err
	}
	if p.pos < len(p.s) && isUnitLetter(p.peek()) {
		return unitValue{}, fmt.Errorf(`write products with "*", e.g. %q`, p.s[start:p.pos]+"*"+p.s[p.pos:])
	}
	u := unitValue{dim: def.dim, exp10: def.exp10, mult: def.mult, offsetCenti: def.offsetCenti, absOff: def.absOffset}
	if def.absOffset && e != 1 {
		return unitValue{}, errors.New("degC cannot take an exponent")
	}
	if e != 1 {
		return combineUnits(unitValue{mult: 1}, u, e)
	}
	return u, nil
}

// exponent reads "^n", "^-n", "n", "²" or "³" after a symbol; 1 when none.
func (p *unitExprParser) exponent() (int, error) {
	r := p.peek()
	switch {
	case r == '²':
		p.next()
		return 2, nil
	case r == '³':
		p.next()
		return 3, nil
	case r == '^' || (r >= '0' && r <= '9'):
		if r == '^' {
			p.next()
		}
		neg := false
		if c := p.peek(); c == '-' || c == '+' {
			neg = c == '-'
			p.next()
		}
		start := p.pos
		for p.pos < len(p.s) && isASCIIDigit(p.s[p.pos]) {
			p.pos++
		}
		if p.pos == start {
			return 0, errors.New(`"^" must be followed by a whole number, e.g. "mm^2"`)
		}
		n, err := strconv.Atoi(p.s[start:p.pos])
		if err != nil || n == 0 || n > 9 {
			return 0, fmt.Errorf("unit exponent %q must be between 1 and 9", p.s[start:p.pos])
		}
		if neg {
			n = -n
		}
		return n, nil
	}
	return 1, nil
}

// combineUnits returns a·b^e.
func combineUnits(a, b unitValue, e int) (unitValue, error) {
	out := unitValue{mult: a.mult * math.Pow(b.mult, float64(e)), exp10: a.exp10 + e*b.exp10}
	for i := range out.dim {
		n := int(a.dim[i]) + e*int(b.dim[i])
		if n > 30 || n < -30 {
			return unitValue{}, errors.New("unit is too complex")
		}
		out.dim[i] = int8(n)
	}
	return out, nil
}

func unknownUnitError(sym string) error {
	// Run-together products such as "Ns" or "Nm": suggest the separator.
	for i := range sym {
		if i == 0 {
			continue
		}
		if _, ok := lookupUnit(sym[:i]); ok {
			if _, ok := lookupUnit(sym[i:]); ok {
				return fmt.Errorf(`unknown unit %q (for a product write %q)`, sym, sym[:i]+"*"+sym[i:])
			}
		}
	}
	if sym == "h" {
		return fmt.Errorf(`unknown unit %q (hours are not supported, H is the henry; write "min" or "s")`, sym)
	}
	if l := strings.ToLower(sym); l != sym {
		if _, ok := lookupUnit(l); ok {
			return fmt.Errorf("unknown unit %q (units are case-sensitive: did you mean %q?)", sym, l)
		}
	}
	return fmt.Errorf("unknown unit %q", sym)
}
