package blend

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"

	"lipidsvc/chem"
)

// The linear programmes of the optimiser: solving with the simplex method
// and explaining infeasibility by an irreducible set of constraints.

// solveLP minimises cost·w subject to the rows, Σ w = 1 and w ≥ 0.
func solveLP(cost []float64, rows []lpRow, n int) ([]float64, error) {
	return solveRows(cost, rows, n, true)
}

// solveWith minimises obj·x subject to the rows and x ≥ 0.
func solveWith(obj []float64, rows []lpRow, n int) ([]float64, error) {
	return solveRows(obj, rows, n, false)
}

// solveRows builds the standard form (a slack per row, rows with a
// negative right-hand side negated, optionally Σ x = 1) and runs the
// simplex method.
func solveRows(cost []float64, rows []lpRow, n int, sumToOne bool) ([]float64, error) {
	var live []lpRow
	for _, r := range rows {
		zero := true
		for _, v := range r.g {
			if math.Abs(v) > 1e-14 {
				zero = false
				break
			}
		}
		if zero {
			if r.h < -1e-12 {
				return nil, lp.ErrInfeasible
			}
			continue // 0 ≤ h always holds
		}
		live = append(live, r)
	}
	m := len(live)
	extra := 0
	if sumToOne {
		extra = 1
	}
	cols := n + m
	A := mat.NewDense(m+extra, cols, nil)
	b := make([]float64, m+extra)
	for i, r := range live {
		sign := 1.0
		if r.h < 0 {
			sign = -1
		}
		for k, v := range r.g {
			A.Set(i, k, sign*v)
		}
		A.Set(i, n+i, sign)
		b[i] = sign * r.h
	}
	if sumToOne {
		for k := 0; k < n; k++ {
			A.Set(m, k, 1)
		}
		b[m] = 1
	}
	if m+extra == 0 {
		return make([]float64, n), nil
	}
	c := make([]float64, cols)
	copy(c, cost)
	// A variable in no row is free to be 0; give it a zero column guard.
	for k := 0; k < n; k++ {
		nonzero := false
		for i := 0; i < m+extra; i++ {
			if A.At(i, k) != 0 {
				nonzero = true
				break
			}
		}
		if !nonzero {
			return nil, fmt.Errorf("variable %d appears in no constraint", k)
		}
	}
	_, x, err := lp.Simplex(c, A, b, 1e-10, nil)
	if err != nil {
		return nil, err
	}
	return x[:n:n], nil
}

// infeasible explains an infeasible programme by the deletion filter.
func infeasible(cost []float64, rows []lpRow, n int) error {
	set := append([]lpRow(nil), rows...)
	for i := 0; i < len(set); {
		trial := append(append([]lpRow(nil), set[:i]...), set[i+1:]...)
		if _, err := solveLP(cost, trial, n); errors.Is(err, lp.ErrInfeasible) {
			set = trial
			continue
		}
		i++
	}
	var names []string
	e := chem.Errorf(chem.KindOutOfDomain, "")
	for _, r := range set {
		names = append(names, r.name)
		e.Fields = append(e.Fields, chem.FieldError{Path: r.path, Reason: "in conflict: " + r.name})
	}
	if len(set) == 0 {
		e.Message = "no blend of the candidates sums to 1 within their shares"
	} else {
		e.Message = "no blend of the candidates meets these constraints together: " + strings.Join(names, "; ")
	}
	return e
}
