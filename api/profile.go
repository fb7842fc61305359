package api

import (
	"lipidsvc/chem"
)

// ProfileBody is the profile shape every endpoint accepts, as the field
// "profile".
type ProfileBody struct {
	Basis                  string      `json:"basis,omitempty"`
	SumTolerancePercent    *float64    `json:"sum_tolerance_percent,omitempty"`
	MaxUnidentifiedPercent *float64    `json:"max_unidentified_percent,omitempty"`
	Acids                  []EntryBody `json:"acids"`
}

// EntryBody is one line of a profile.
type EntryBody struct {
	Acid    string  `json:"acid"`
	Percent float64 `json:"percent"`
}

// WarningBody is one entry of a response's warnings list.
type WarningBody struct {
	Code    string `json:"code"`
	Message string `json:"message"`
	Pointer string `json:"pointer,omitempty"`
}

// input copies a profile into the science's request shape; nil stays nil
// (the science refuses a missing profile where it is required).
func (b *ProfileBody) input() *chem.ProfileInput {
	if b == nil {
		return nil
	}
	in := &chem.ProfileInput{Basis: b.Basis, SumTolerancePercent: b.SumTolerancePercent, MaxUnidentifiedPercent: b.MaxUnidentifiedPercent, Acids: make([]chem.Entry, len(b.Acids))}
	for i, e := range b.Acids {
		in.Acids[i] = chem.Entry(e)
	}
	return in
}

// toWarnings converts the science's warnings, whose paths already name the
// request's fields. It never returns nil: the contract's warnings is a list.
func toWarnings(ws []chem.Warning) []WarningBody {
	out := make([]WarningBody, len(ws))
	for i, w := range ws {
		out[i] = WarningBody{Code: w.Code, Message: w.Message, Pointer: Pointer(w.Path...)}
	}
	return out
}

// ProfileOut is a composition in the profile shape.
type ProfileOut struct {
	Basis string      `json:"basis"`
	Acids []EntryBody `json:"acids"`
}

func profileOut(p *chem.Profile) ProfileOut {
	out := ProfileOut{Basis: p.Basis.String(), Acids: make([]EntryBody, len(p.Components))}
	for i, c := range p.Components {
		out.Acids[i] = EntryBody{Acid: c.Acid.ID, Percent: c.Percent}
	}
	return out
}

// intPtr copies an optional request integer.
func intPtr(n *Integer) *int {
	if n == nil {
		return nil
	}
	v := int(*n)
	return &v
}
