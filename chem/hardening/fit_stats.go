package hardening

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"lipidsvc/chem"
)

// ParameterEstimate is one fitted (or held) parameter.
type ParameterEstimate struct {
	Parameter Parameter
	Value     float64
	// Free reports whether the parameter was fitted.
	Free bool
	// StandardError is the asymptotic standard error of a free parameter,
	// from the Gauss–Newton covariance s²(JᵀJ)⁻¹ with the residual variance
	// s² on the degrees of freedom left; nil when the parameter was held,
	// the data leave no degrees of freedom or the parameter is not
	// identifiable from them (singular JᵀJ). It is a linearised figure:
	// read it as an order of magnitude, not as an exact interval.
	StandardError *float64
}

// GroupResidual compares one acid group of one observation. Acids are
// grouped by chain length, number of double bonds and geometry, because
// laboratories resolve positional isomers differently and the model lumps
// them ("18:1 trans" holds elaidic, vaccenic and the lumped "18:1 t").
type GroupResidual struct {
	// Group names the group: "18:0", "18:1 cis", "18:1 trans".
	Group       string
	Carbons     int
	DoubleBonds int
	Trans       bool
	// Observed, Predicted and Residual (observed − predicted) are
	// percentages in the feed's basis. A group a laboratory did not report
	// counts as 0 observed.
	Observed, Predicted, Residual float64
}

// ObservationFit is the fit at one observation.
type ObservationFit struct {
	// IodineValue is the observation's iodine value.
	IodineValue float64
	// PathVariable is τ at that iodine value under the fitted catalyst.
	PathVariable float64
	// Residuals lists every group, in the same order for every observation.
	Residuals []GroupResidual
	// RMSPercentagePoints is the root mean square of this observation's
	// residuals.
	RMSPercentagePoints float64
}

// FitResult is the answer of [Fit].
type FitResult struct {
	// Catalyst is the fitted catalyst, ready for ForecastRequest.Catalyst.
	Catalyst Catalyst
	// Parameters lists all six parameters in canonical order.
	Parameters []ParameterEstimate
	// Observations compares each observation with the fitted model.
	Observations []ObservationFit
	// RMSPercentagePoints is the root mean square of all residuals,
	// percentage points.
	RMSPercentagePoints float64
	// RSquared is 1 − Σ residual² / Σ_g Σ_j (observed_jg − mean_g)², the
	// means taken per acid group over the observations: the share of the
	// change along the hardening path that the model explains. (Against one
	// mean of all groups it would also count the differences between
	// groups, which any model reproduces, and read high.) It is NaN when
	// no group changes between observations (a single observation, or
	// identical ones).
	RSquared float64
	// Iterations is the number of Gauss–Newton iterations.
	Iterations int
	// Evaluations is the number of model evaluations (one forecast per
	// observation each), including those for derivatives.
	Evaluations int
	// Warnings say which parameters were held and why.
	Warnings []chem.Warning
}

// result assembles the answer at the optimum theta.
func (f *fitter) result(req FitRequest, theta []float64, iterations int, warnings []chem.Warning) (*FitResult, error) {
	c := f.catalyst(theta)
	pred, taus, err := f.predict(c)
	if err != nil {
		return nil, err
	}
	out := &FitResult{Catalyst: c, Iterations: iterations, Warnings: warnings}
	var ss, n float64
	groupMean := make([]float64, len(f.groups))
	for j := range f.obsIV {
		of := ObservationFit{IodineValue: f.obsIV[j], PathVariable: taus[j]}
		var so float64
		for g, key := range f.groups {
			r := f.observed[j][g] - pred[j][g]
			of.Residuals = append(of.Residuals, GroupResidual{
				Group: key.String(), Carbons: key.carbons, DoubleBonds: key.d, Trans: key.trans,
				Observed: f.observed[j][g], Predicted: pred[j][g], Residual: r,
			})
			so += r * r
			groupMean[g] += f.observed[j][g] / float64(len(f.obsIV))
			n++
		}
		of.RMSPercentagePoints = math.Sqrt(so / float64(len(f.groups)))
		ss += so
		out.Observations = append(out.Observations, of)
	}
	var tot float64
	for j := range f.obsIV {
		for g := range f.groups {
			d := f.observed[j][g] - groupMean[g]
			tot += d * d
		}
	}
	out.RMSPercentagePoints = math.Sqrt(ss / n)
	out.RSquared = math.NaN()
	if tot > 0 {
		out.RSquared = 1 - ss/tot
	}

	// Groups that are zero in every observation and prediction (products
	// of acids the feed does not hold) carry no data.
	active := 0
	for g := range f.groups {
		for j := range f.obsIV {
			if f.observed[j][g] != 0 || pred[j][g] != 0 {
				active++
				break
			}
		}
	}
	se := f.standardErrors(theta, ss, active)
	freeIndex := map[Parameter]int{}
	for i, t := range f.free {
		freeIndex[t.p] = i
	}
	for _, p := range AllParameters() {
		est := ParameterEstimate{Parameter: p, Value: c.Value(p)}
		if i, ok := freeIndex[p]; ok {
			est.Free = true
			if thetaAtBound(theta[i]) {
				// A parameter pinned at its bound is not determined by the
				// data; its linearised standard error would mislead.
				out.Warnings = append(out.Warnings, chem.Warning{Code: chem.WarnMethodScope,
					Message: fmt.Sprintf("%s ended at the bound of its range (%g); the data do not determine it — "+
						"add observations along the path or hold it", p, est.Value),
					Path: []any{"free_parameters"}})
			} else if se != nil && isFinite(se[i]) {
				v := se[i]
				if f.free[i].log {
					v *= est.Value // SE(p) ≈ p·SE(ln p)
				}
				est.StandardError = &v
			}
		}
		out.Parameters = append(out.Parameters, est)
	}
	out.Evaluations = f.evals
	return out, nil
}

// standardErrors returns the standard errors of ln p (log parameters) or p
// (the trans share), from s²(JₙᵀJₙ)⁻¹ with Jₙ the Jacobian in those natural
// coordinates and s² = Σr²/(data − free), data counting activeGroups − 1
// values per observation; nil when they are undefined.
func (f *fitter) standardErrors(theta []float64, ss float64, activeGroups int) []float64 {
	data := len(f.obsIV) * (activeGroups - 1)
	dof := data - len(f.free)
	if dof <= 0 {
		return nil
	}
	j := f.jacobian(theta)
	if j == nil {
		return nil
	}
	rows, cols := j.Dims()
	jn := mat.NewDense(rows, cols, nil)
	for k, t := range f.free {
		scale := 1 / t.dNaturalDTheta(theta[k])
		for i := 0; i < rows; i++ {
			jn.Set(i, k, j.At(i, k)*scale)
		}
	}
	var jtj mat.SymDense
	jtj.SymOuterK(1, jn.T())
	var chol mat.Cholesky
	// A condition number beyond 1e12 means some combination of the
	// parameters is not determined by the data.
	if ok := chol.Factorize(&jtj); !ok || chol.Cond() > 1e12 {
		return nil
	}
	var cov mat.SymDense
	if err := chol.InverseTo(&cov); err != nil {
		return nil
	}
	s2 := ss / float64(dof)
	out := make([]float64, cols)
	for k := range out {
		out[k] = math.Sqrt(s2 * cov.At(k, k))
	}
	return out
}

func equalSlices(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
