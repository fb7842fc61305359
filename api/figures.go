package api

import "math"

// Reporting precision of the certificate figures, in decimals. A
// certificate and a LIMS field hold a figure to the precision its method
// prints, not seventeen significant digits; fewer digits are also less to
// encode and send. The figures are rounded half away from zero.
//
//   - Iodine and saponification values, and their per-acid contributions:
//     0.01 (the calculated-value methods AOCS Cd 1c-85 and AOCS Cd 3a-94
//     print two decimals).
//   - Mean molar masses: 0.001 g/mol, the precision the atomic weights
//     they are computed from carry.
//   - Composition sums and ratios and the calculated oxidizability: 0.01.
//   - The atherogenic and thrombogenic indices and the mean number of
//     double bonds per chain: 0.001 (they are read around 0.1–2).
//   - A profile's own lines (percent, mole percent, FAME weight percent):
//     1e-7 percentage points, which is full precision for any laboratory
//     figure and lets a client recombine pools or convert bases exactly.
//   - Melting: temperatures (slip melting point, clear point, a species'
//     melting point) to 0.1 °C and solid fat contents to 0.1 point, the
//     resolution of the methods they stand for (AOCS Cc 3-25, AOCS Cd
//     16b-93); their errors against measurements likewise; a species' share
//     to 0.01 %. The temperatures of a curve are echoed as requested. A
//     calibration keeps full precision: it is an input to later requests.
const (
	decimalsValue     = 2
	decimalsMolarMass = 3
	decimalsSum       = 2
	decimalsIndex     = 3
	decimalsLine      = 7
	decimalsMelting   = 1
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
