package api

import (
	"lipidsvc/chem"
)

// ProfileBody is the profile shape every endpoint accepts, as the field
// "profile".
type ProfileBody struct {
	Basis               string      `json:"basis,omitempty"`
	SumTolerancePercent *float64    `json:"sum_tolerance_percent,omitempty"`
	Acids               []EntryBody `json:"acids"`
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

var basisNames = map[string]chem.Basis{
	"":                    chem.BasisFAMEWeight,
	"fame_weight_percent": chem.BasisFAMEWeight,
	"acid_weight_percent": chem.BasisAcidWeight,
	"mole_percent":        chem.BasisMole,
}

// toChemProfile converts and checks a profile sitting at the JSON pointer
// given by path (for example "profile").
func toChemProfile(cat *chem.Catalogue, b *ProfileBody, path ...any) (*chem.Profile, error) {
	if b == nil {
		return nil, NewError(KindMalformed, "the profile is missing", FieldError{Pointer: Pointer(path...), Reason: "required"})
	}
	basis, err := enumValue(basisNames, b.Basis, Pointer(append(path, "basis")...),
		"must be fame_weight_percent, acid_weight_percent or mole_percent")
	if err != nil {
		return nil, err
	}
	tol := chem.DefaultSumTolerance
	if b.SumTolerancePercent != nil {
		tol = *b.SumTolerancePercent
	}
	entries := make([]chem.Entry, len(b.Acids))
	for i, e := range b.Acids {
		entries[i] = chem.Entry{Label: e.Acid, Percent: e.Percent}
	}
	p, err := chem.NewProfile(cat, basis, entries, tol)
	if err != nil {
		return nil, withPrefix(err, path...)
	}
	return p, nil
}

// toWarnings converts chem warnings; those with a path point into the
// request under prefix.
func toWarnings(ws []chem.Warning, prefix ...any) []WarningBody {
	out := make([]WarningBody, 0, len(ws))
	for _, w := range ws {
		wb := WarningBody{Code: w.Code, Message: w.Message}
		if len(w.Path) > 0 {
			wb.Pointer = Pointer(append(append([]any{}, prefix...), w.Path...)...)
		}
		out = append(out, wb)
	}
	return out
}
