// Package roots finds where a function of one variable crosses zero inside
// a bracket, the one root finder of the science packages.
//
// The caller gives an interval [Lo, Hi] (Hi may be +Inf) on which the
// function changes sign in a known direction, and the function's value and,
// where it is cheap, its derivative at each point asked for. Each step
// takes the first of these that falls strictly inside the current bracket:
//
//  1. a Newton step, when the derivative is known (quadratic convergence:
//     the hardening path, the solid-solution equilibria);
//  2. a false-position step with the Illinois modification, which halves
//     the retained end's value whenever the same end is kept twice, so that
//     convergence stays superlinear on convex functions and the method
//     still homes in on a step of a function that jumps (Dowell & Jarratt,
//     BIT 11:168, 1971);
//  3. bisection, or, while no upper end is known, a step that at least
//     doubles the distance from the lower end.
//
// Every evaluation narrows the bracket. A Newton step inside the bracket is
// always taken (the callers' functions are monotone and smooth where they
// give a derivative, so Newton converges from either side); a
// false-position step longer than half the step before the last (one that
// is not converging fast enough) is replaced by bisection, so a
// derivative-free search never does much worse than bisection (the
// safeguard of "rtsafe", Press et al., Numerical Recipes, 3rd ed., §9.4). It ends when |f| ≤ FTol, when the step or the bracket falls below
// XTol + RelTol·|x|, or after MaxIter evaluations.
package roots

import (
	"errors"
	"math"
)

// Func returns f(x) and, when known, df/dx (NaN otherwise). An error ends
// the search and is returned as it is.
type Func func(x float64) (f, df float64, err error)

// Problem describes one search.
type Problem struct {
	// F is the function.
	F Func
	// Lo and Hi bracket the root; Hi may be +Inf (no upper end known yet).
	Lo, Hi float64
	// FLo and FHi are f at the ends when known, NaN otherwise (an end is
	// never evaluated just to learn it).
	FLo, FHi float64
	// Increasing says f < 0 below the root and f > 0 above it; otherwise
	// the other way round.
	Increasing bool
	// Start is the first point evaluated, inside the bracket or at one of
	// its ends; NaN starts at the false-position point, the midpoint, or
	// Lo + Step when Hi is +Inf.
	Start float64
	// Step is the least step away from Lo while Hi is +Inf (default 1).
	Step float64
	// FTol, XTol and RelTol are the stopping tolerances (see the package
	// documentation); zero turns each off.
	FTol, XTol, RelTol float64
	// MaxIter caps the evaluations (default 100).
	MaxIter int
	// Check, when set, is called before each evaluation; an error (a
	// cancelled context, say) ends the search.
	Check func() error
}

// Result is where a search ended.
type Result struct {
	// X is the last point evaluated, or the step from it when the step met
	// the tolerance; F is f(X) when X was evaluated.
	X, F float64
	// Lo and Hi are the final bracket.
	Lo, Hi float64
	// Iterations counts the evaluations.
	Iterations int
	// Converged reports that a tolerance was met; false means MaxIter
	// evaluations were spent, or the bracket shrank to adjacent floating-
	// point numbers first (Stalled).
	Converged bool
	// Stalled reports that no step could move x any more: the function
	// steps by more than FTol between neighbouring numbers.
	Stalled bool
}

// ErrNoBracket is returned for a bracket that is empty or not a number.
var ErrNoBracket = errors.New("roots: the bracket is empty")

// Find searches for a root of p.F.
func Find(p Problem) (Result, error) {
	lo, hi, flo, fhi := p.Lo, p.Hi, p.FLo, p.FHi
	if !(lo < hi) || math.IsNaN(lo) || math.IsInf(lo, 0) {
		return Result{}, ErrNoBracket
	}
	maxIter := p.MaxIter
	if maxIter <= 0 {
		maxIter = 100
	}
	step := p.Step
	if !(step > 0) {
		step = 1
	}
	// below reports whether a value belongs to the lower end's side.
	below := func(f float64) bool {
		if p.Increasing {
			return f < 0
		}
		return f > 0
	}
	x := p.Start
	if !(x >= lo && x <= hi) {
		x = next(lo, hi, flo, fhi, step)
	}
	side := 0 // which end was kept last: −1 lo, +1 hi
	// The last two step lengths; a step longer than half the one before
	// the last is not converging fast enough and is replaced by bisection.
	prev, last := hi-lo, hi-lo
	for it := 1; it <= maxIter; it++ {
		if p.Check != nil {
			if err := p.Check(); err != nil {
				return Result{}, err
			}
		}
		fx, dfx, err := p.F(x)
		if err != nil {
			return Result{}, err
		}
		res := Result{X: x, F: fx, Iterations: it}
		if math.Abs(fx) <= p.FTol || fx == 0 {
			res.Lo, res.Hi, res.Converged = lo, hi, true
			return res, nil
		}
		if below(fx) {
			lo, flo = x, fx
			if side == -1 && !math.IsNaN(fhi) {
				fhi /= 2 // Illinois: the upper end was kept twice
			}
			side = -1
		} else {
			hi, fhi = x, fx
			if side == 1 && !math.IsNaN(flo) {
				flo /= 2
			}
			side = 1
		}
		res.Lo, res.Hi = lo, hi
		tol := p.XTol + p.RelTol*math.Abs(x)
		if !math.IsInf(hi, 1) && hi-lo <= tol {
			res.Converged = true
			return res, nil
		}
		cand := math.NaN()
		if !math.IsNaN(dfx) && dfx != 0 {
			cand = x - fx/dfx
			// A Newton step within the tolerance (or below the spacing of
			// floating-point numbers at x) is convergence.
			if math.Abs(cand-x) <= tol || cand == x {
				res.X, res.Converged = math.Min(math.Max(cand, lo), hi), true
				return res, nil
			}
		}
		if !(cand > lo && cand < hi) {
			cand = next(lo, hi, flo, fhi, step)
			// A false-position step that is not converging fast enough
			// gives way to bisection.
			if !math.IsInf(hi, 1) && math.Abs(cand-x) > 0.5*prev {
				cand = 0.5 * (lo + hi)
			}
		}
		prev, last = last, math.Abs(cand-x)
		if math.Abs(cand-x) <= tol {
			res.X, res.Converged = cand, true
			return res, nil
		}
		if cand == x || !(cand > lo && cand < hi) {
			res.Stalled = true
			return res, nil
		}
		x = cand
	}
	return Result{X: x, Lo: lo, Hi: hi, Iterations: maxIter}, nil
}

// next is the derivative-free step: false position where both end values
// are known, bisection where one is not, and a growing step while Hi is
// unbounded.
func next(lo, hi, flo, fhi, step float64) float64 {
	if math.IsInf(hi, 1) {
		return lo + math.Max(math.Abs(lo), step)
	}
	if !math.IsNaN(flo) && !math.IsNaN(fhi) && !math.IsInf(flo, 0) && !math.IsInf(fhi, 0) && fhi != flo {
		if x := hi - fhi*(hi-lo)/(fhi-flo); x > lo && x < hi {
			return x
		}
	}
	return 0.5 * (lo + hi)
}
