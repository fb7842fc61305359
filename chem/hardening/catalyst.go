package hardening

import (
	"fmt"
	"math"
	"strconv"

	"lipidsvc/chem"
)

// Catalyst holds the six dimensionless parameters of the hardening network
// (see the package documentation for the scheme). Every rate is relative to
// k3, the rate constant of cis-monoene saturation (oleic → stearic), so the
// parameters describe selectivity, not activity: catalyst load, hydrogen
// supply and temperature set how fast a batch moves along the path, the
// parameters set which path it follows. Field paths in errors are
// ("catalyst", <name>) with the names given by [Parameter.String].
type Catalyst struct {
	// LinolenicSelectivity is S_Ln = k1/k2, the rate of triene
	// hydrogenation (18:3 → 18:2) over that of dienes (18:2 → 18:1).
	LinolenicSelectivity float64
	// LinoleicSelectivity is S_R = k2/k3, the rate of diene hydrogenation
	// (18:2 → 18:1) over that of cis monoenes (18:1 → 18:0).
	LinoleicSelectivity float64
	// TransShare is φ, the fraction of the monoenes formed from all-cis
	// dienes that leave the catalyst as trans isomers, in [0, 1]. The same
	// share applies to the dienes formed from trienes.
	TransShare float64
	// IsomerisationRate is the rate constant of cis monoene → trans monoene
	// relative to k3, ≥ 0. The reverse reaction runs at
	// IsomerisationRate/TransCisEquilibrium, so that the two pools relax
	// towards trans:cis = TransCisEquilibrium.
	IsomerisationRate float64
	// TransCisEquilibrium is K, the trans:cis ratio of monoenes at
	// geometric equilibrium (about 2:1 to 3:1 for internal 18:1 [memory]).
	TransCisEquilibrium float64
	// TransSaturationRate is ρ, the saturation rate of trans monoenes
	// relative to that of cis monoenes (k3).
	TransSaturationRate float64
}

// Parameter names one of the six catalyst parameters, for fitting and for
// error paths.
type Parameter int

const (
	// ParamLinolenicSelectivity is Catalyst.LinolenicSelectivity.
	ParamLinolenicSelectivity Parameter = iota + 1
	// ParamLinoleicSelectivity is Catalyst.LinoleicSelectivity.
	ParamLinoleicSelectivity
	// ParamTransShare is Catalyst.TransShare.
	ParamTransShare
	// ParamIsomerisationRate is Catalyst.IsomerisationRate.
	ParamIsomerisationRate
	// ParamTransCisEquilibrium is Catalyst.TransCisEquilibrium.
	ParamTransCisEquilibrium
	// ParamTransSaturationRate is Catalyst.TransSaturationRate.
	ParamTransSaturationRate
)

// AllParameters lists the six parameters in their canonical order.
func AllParameters() []Parameter {
	return []Parameter{
		ParamLinolenicSelectivity, ParamLinoleicSelectivity, ParamTransShare,
		ParamIsomerisationRate, ParamTransCisEquilibrium, ParamTransSaturationRate,
	}
}

// String returns the parameter's field name, as used in error paths
// ("linolenic_selectivity", "linoleic_selectivity", "trans_share",
// "isomerisation_rate", "trans_cis_equilibrium", "trans_saturation_rate").
func (p Parameter) String() string {
	switch p {
	case ParamLinolenicSelectivity:
		return "linolenic_selectivity"
	case ParamLinoleicSelectivity:
		return "linoleic_selectivity"
	case ParamTransShare:
		return "trans_share"
	case ParamIsomerisationRate:
		return "isomerisation_rate"
	case ParamTransCisEquilibrium:
		return "trans_cis_equilibrium"
	case ParamTransSaturationRate:
		return "trans_saturation_rate"
	default:
		return "Parameter(" + strconv.Itoa(int(p)) + ")"
	}
}

// ParseParameter reads a parameter field name as returned by String.
func ParseParameter(name string) (Parameter, bool) {
	for _, p := range AllParameters() {
		if p.String() == name {
			return p, true
		}
	}
	return 0, false
}

// Range returns the closed interval of values the model accepts for p.
// The bounds are wide enough for every catalyst the literature describes
// (S_R up to a few hundred for copper, S_Ln up to about 15 [memory]) and
// narrow enough to keep the network numerically well behaved. The
// isomerisation rate and the trans share may be 0 (no trans formed); every
// other parameter must be positive, so that the path always reaches full
// saturation in the limit.
func (p Parameter) Range() (lo, hi float64) {
	switch p {
	case ParamLinolenicSelectivity:
		return 0.1, 100
	case ParamLinoleicSelectivity:
		return 0.1, 1000
	case ParamTransShare:
		return 0, 1
	case ParamIsomerisationRate:
		return 0, 100
	case ParamTransCisEquilibrium:
		return 0.1, 20
	case ParamTransSaturationRate:
		return 0.01, 10
	default:
		return math.NaN(), math.NaN()
	}
}

// Value returns the value of parameter p in c.
func (c Catalyst) Value(p Parameter) float64 {
	switch p {
	case ParamLinolenicSelectivity:
		return c.LinolenicSelectivity
	case ParamLinoleicSelectivity:
		return c.LinoleicSelectivity
	case ParamTransShare:
		return c.TransShare
	case ParamIsomerisationRate:
		return c.IsomerisationRate
	case ParamTransCisEquilibrium:
		return c.TransCisEquilibrium
	case ParamTransSaturationRate:
		return c.TransSaturationRate
	default:
		return math.NaN()
	}
}

// With returns a copy of c with parameter p set to v.
func (c Catalyst) With(p Parameter, v float64) Catalyst {
	switch p {
	case ParamLinolenicSelectivity:
		c.LinolenicSelectivity = v
	case ParamLinoleicSelectivity:
		c.LinoleicSelectivity = v
	case ParamTransShare:
		c.TransShare = v
	case ParamIsomerisationRate:
		c.IsomerisationRate = v
	case ParamTransCisEquilibrium:
		c.TransCisEquilibrium = v
	case ParamTransSaturationRate:
		c.TransSaturationRate = v
	}
	return c
}

// Validate checks every parameter against its [Parameter.Range] and returns
// a chem.KindInvalid *chem.Error listing each offending field under
// ("catalyst", <name>), or nil.
func (c Catalyst) Validate() error {
	var errs chem.FieldErrors
	c.validateInto(&errs, "catalyst")
	return errs.Err("the catalyst parameters have problems")
}

func (c Catalyst) validateInto(errs *chem.FieldErrors, prefix ...any) {
	for _, p := range AllParameters() {
		v := c.Value(p)
		lo, hi := p.Range()
		if !isFinite(v) || v < lo || v > hi {
			path := append(append([]any{}, prefix...), p.String())
			errs.Invalid(fmt.Sprintf("must be a finite number from %g to %g", lo, hi), path...)
		}
	}
}
