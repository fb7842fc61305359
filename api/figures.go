package api

import "math"

// Reporting precision of the figures, in decimals. A certificate and a
// LIMS field hold a figure to the precision its method prints, not
// seventeen significant digits; fewer digits are also less to encode and
// send. The figures are rounded half away from zero, once, from the exact
// value (a limit is compared with the exact value, not the rounded one).
//
//   - Iodine and saponification values, and their per-acid contributions:
//     0.01. The calculated-value methods (AOCS Cd 1c-85, AOCS Cd 3a-94)
//     print two decimals; a certificate that prints one, as the titration
//     methods (AOCS Cd 1d-92, ISO 3961, ISO 3657) do, rounds the
//     two-decimal figure once more, which never differs from rounding the
//     exact value by more than the last printed digit's half.
//   - Composition sums (saturated, mono-, polyunsaturated, trans, other
//     unsaturated, n-3, n-6, n-9 and the unidentified share): 0.1 percent,
//     as certificates and nutrition declarations give them.
//   - Ratios (n-6/n-3, P/S), the calculated oxidizability and the share
//     outside its definition: 0.01.
//   - Mean molar masses: 0.001 g/mol, the precision the atomic weights
//     they are computed from carry.
//   - The atherogenic and thrombogenic indices and the mean number of
//     double bonds per chain: 0.001 (they are read around 0.1–2).
//   - A profile's own lines (percent, mole percent, FAME weight percent):
//     1e-7 percentage points, which is full precision for any laboratory
//     figure and lets a client recombine pools or convert bases exactly.
//   - Conformity: an acid's share, its margin and a distance to a range
//     box to 0.01 percentage point (ND is 0.05 %, so rows need the second
//     decimal).
//   - Nutrition-label figures: grams per 100 g of fat or of food to 0.01 g
//     (a declaration rounds them to 0.1 g or to its own rule), EPA + DHA to
//     0.1 mg/g, the conversion factor to 0.0001.
//   - Melting: temperatures (slip melting point, clear point, a species'
//     melting point) to 0.1 °C and solid fat contents to 0.1 point, the
//     resolution of the methods they stand for (AOCS Cc 3-25, AOCS Cd
//     16b-93); their errors against measurements likewise; a species' share
//     to 0.01 %. The temperatures of a curve are echoed as requested. A
//     calibration keeps full precision: it is an input to later requests.
//   - Blends: mass fractions to 1e-6, costs to 0.01, constraint values and
//     margins to 0.01.
//   - Hardening paths: trans and saturated shares to 0.1 percent, like the
//     certificate sums.
const (
	decimalsValue     = 2
	decimalsMolarMass = 3
	decimalsSum       = 1
	decimalsRatio     = 2
	decimalsIndex     = 3
	decimalsLine      = 7
	decimalsRow       = 2
	decimalsGrams     = 2
	decimalsMgPerG    = 1
	decimalsFactor    = 4
	decimalsMelting   = 1
	decimalsShare     = 6
)

var pow10 = [...]float64{1, 10, 100, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8}

// round rounds v to d decimals; non-finite values pass unchanged (the
// encoder refuses them).
func round(v float64, d int) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	p := pow10[d]
	r := math.Round(v*p) / p
	if r == 0 {
		return 0 // never "-0"
	}
	return r
}

// roundPtr rounds an optional figure.
func roundPtr(v *float64, d int) *float64 {
	if v == nil {
		return nil
	}
	r := round(*v, d)
	return &r
}
