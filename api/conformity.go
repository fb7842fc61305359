package api

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"net/http"
	"strconv"

	"github.com/labstack/echo/v4"

	"lipidsvc/chem"
	"lipidsvc/chem/identity"
)

// RangeBody is a range with optional bounds.
type RangeBody struct {
	Min *float64 `json:"min,omitempty"`
	Max *float64 `json:"max,omitempty"`
}

// SpecRowBody is one acid row of a specification.
type SpecRowBody struct {
	Acid string   `json:"acid"`
	Min  *float64 `json:"min,omitempty"`
	Max  *float64 `json:"max,omitempty"`
	ND   bool     `json:"nd,omitempty"`
}

// SpecificationBody is a specification as requests give it and
// GET /v1/reference-oils/{id} returns it.
type SpecificationBody struct {
	ID                  string        `json:"id"`
	Name                string        `json:"name"`
	Kind                string        `json:"kind,omitempty"`
	Standard            string        `json:"standard,omitempty"`
	Edition             string        `json:"edition,omitempty"`
	Table               string        `json:"table,omitempty"`
	Source              string        `json:"source,omitempty"`
	Recalled            bool          `json:"recalled,omitempty"`
	Notes               string        `json:"notes,omitempty"`
	Basis               string        `json:"basis,omitempty"`
	Material            string        `json:"material,omitempty"`
	Acids               []SpecRowBody `json:"acids,omitempty"`
	IodineValue         *RangeBody    `json:"iodine_value,omitempty"`
	SaponificationValue *RangeBody    `json:"saponification_value,omitempty"`
	SlipMeltingPointC   *RangeBody    `json:"slip_melting_point_c,omitempty"`
}

// ReferenceOil is one specification as the service offers it.
type ReferenceOil struct {
	SpecificationBody
	Kind  string `json:"kind"`
	Plant bool   `json:"plant"`
}

// ReferenceOilSummary is one line of GET /v1/reference-oils.
type ReferenceOilSummary struct {
	ID       string `json:"id"`
	Name     string `json:"name"`
	Kind     string `json:"kind"`
	Standard string `json:"standard"`
	Edition  string `json:"edition"`
	Table    string `json:"table"`
	Recalled bool   `json:"recalled"`
	Plant    bool   `json:"plant"`
}

// ReferenceOilList is the answer of GET /v1/reference-oils.
type ReferenceOilList struct {
	Count         int                   `json:"count"`
	ReferenceOils []ReferenceOilSummary `json:"reference_oils"`
}

// SpecificationRef is a specification given by id (a JSON string) or
// inline (an object).
type SpecificationRef struct {
	ID     string
	Inline *SpecificationBody
}

// UnmarshalJSON reads either form; the contract has already checked the
// shape.
func (r *SpecificationRef) UnmarshalJSON(b []byte) error {
	b = bytes.TrimSpace(b)
	if len(b) > 0 && b[0] == '"' {
		return json.Unmarshal(b, &r.ID)
	}
	r.Inline = &SpecificationBody{}
	return json.Unmarshal(b, r.Inline)
}

// ConformityMeasured are measured values sent with a conformity request.
type ConformityMeasured struct {
	IodineValue         *float64 `json:"iodine_value,omitempty"`
	SaponificationValue *float64 `json:"saponification_value,omitempty"`
	SlipMeltingPointC   *float64 `json:"slip_melting_point_c,omitempty"`
}

// ConformityRequest is the body of POST /v1/conformity.
type ConformityRequest struct {
	Profile       *ProfileBody        `json:"profile"`
	Specification *SpecificationRef   `json:"specification"`
	Measured      *ConformityMeasured `json:"measured,omitempty"`
	ClosestCount  *Integer            `json:"closest_count,omitempty"`
}

// RowVerdictBody is one acid row's verdict.
type RowVerdictBody struct {
	Acid    string   `json:"acid"`
	Percent float64  `json:"percent"`
	Min     *float64 `json:"min"`
	Max     *float64 `json:"max"`
	ND      bool     `json:"nd"`
	Verdict string   `json:"verdict"`
	Margin  float64  `json:"margin"`
}

// ValueVerdictBody is a value's verdict.
type ValueVerdictBody struct {
	Value      float64  `json:"value"`
	Measured   bool     `json:"measured"`
	Calculated *float64 `json:"calculated"`
	Min        *float64 `json:"min"`
	Max        *float64 `json:"max"`
	Verdict    string   `json:"verdict"`
	Margin     float64  `json:"margin"`
}

// ClosestBody is one closest reference.
type ClosestBody struct {
	ID       string  `json:"id"`
	Name     string  `json:"name"`
	Distance float64 `json:"distance"`
	Conforms bool    `json:"conforms"`
}

// SpecificationUsed names the specification a verdict is against.
type SpecificationUsed struct {
	ID       string `json:"id"`
	Name     string `json:"name"`
	Standard string `json:"standard"`
	Edition  string `json:"edition"`
	Table    string `json:"table"`
	Recalled bool   `json:"recalled"`
	Plant    bool   `json:"plant"`
	Inline   bool   `json:"inline"`
}

// ConformityResponse is the answer of POST /v1/conformity.
type ConformityResponse struct {
	Specification       SpecificationUsed `json:"specification"`
	Verdict             string            `json:"verdict"`
	Acids               []RowVerdictBody  `json:"acids"`
	IodineValue         *ValueVerdictBody `json:"iodine_value"`
	SaponificationValue *ValueVerdictBody `json:"saponification_value"`
	SlipMeltingPointC   *ValueVerdictBody `json:"slip_melting_point_c"`
	Distance            float64           `json:"distance"`
	UnlistedAcids       []string          `json:"unlisted_acids"`
	UnlistedPercent     float64           `json:"unlisted_percent"`
	ClosestReferences   []ClosestBody     `json:"closest_references"`
	Provenance          *Provenance       `json:"provenance,omitempty"`
	Warnings            []WarningBody     `json:"warnings"`
}

// input converts a specification body.
func (b *SpecificationBody) input() *identity.SpecificationInput {
	in := &identity.SpecificationInput{ID: b.ID, Name: b.Name, Kind: b.Kind, Standard: b.Standard, Edition: b.Edition,
		Table: b.Table, Source: b.Source, Recalled: b.Recalled, Notes: b.Notes, Basis: b.Basis, Material: b.Material}
	for _, r := range b.Acids {
		in.Acids = append(in.Acids, identity.RowInput{Acid: r.Acid, Min: r.Min, Max: r.Max, NotDetected: r.ND})
	}
	rng := func(r *RangeBody) *identity.RangeInput {
		if r == nil {
			return nil
		}
		return &identity.RangeInput{Min: r.Min, Max: r.Max}
	}
	in.IodineValue, in.SaponificationValue, in.SlipMeltingPointC = rng(b.IodineValue), rng(b.SaponificationValue), rng(b.SlipMeltingPointC)
	return in
}

func (r *ConformityRequest) input() identity.ConformityInput {
	in := identity.ConformityInput{Profile: r.Profile.input()}
	if s := r.Specification; s != nil {
		in.SpecificationID = s.ID
		if s.Inline != nil {
			in.Specification = s.Inline.input()
		}
	}
	if m := r.Measured; m != nil {
		in.Measured = identity.Measured{IodineValue: m.IodineValue, SaponificationValue: m.SaponificationValue, SlipMeltingPointC: m.SlipMeltingPointC}
	}
	if r.ClosestCount != nil {
		in.ClosestCount = int(*r.ClosestCount)
	}
	return in
}

// bound is a range bound for a response, nil when open.
func bound(v float64) *float64 {
	if math.IsNaN(v) {
		return nil
	}
	return &v
}

func rangeBody(r identity.Range) *RangeBody {
	if r.Open() {
		return nil
	}
	return &RangeBody{Min: bound(r.Min), Max: bound(r.Max)}
}

// fromSpecification is the full body of a specification.
func fromSpecification(s *identity.Specification) ReferenceOil {
	kind := "identity"
	if s.Limits {
		kind = "limits"
	}
	out := ReferenceOil{Kind: kind, Plant: s.Plant, SpecificationBody: SpecificationBody{
		ID: s.ID, Name: s.Name, Standard: s.Standard, Edition: s.Edition, Table: s.Table, Source: s.Source,
		Recalled: s.Recalled, Notes: s.Notes, Basis: s.Basis.String(), Material: s.Material.String(),
		IodineValue: rangeBody(s.IodineValue), SaponificationValue: rangeBody(s.SaponificationValue),
		SlipMeltingPointC: rangeBody(s.SlipMeltingPointC), Acids: []SpecRowBody{},
	}}
	for _, r := range s.Acids {
		row := SpecRowBody{Acid: r.Selector, ND: r.NotDetected}
		if !r.NotDetected {
			row.Min, row.Max = bound(r.Range.Min), bound(r.Range.Max)
		}
		out.Acids = append(out.Acids, row)
	}
	return out
}

func summaryOf(s *identity.Specification) ReferenceOilSummary {
	kind := "identity"
	if s.Limits {
		kind = "limits"
	}
	return ReferenceOilSummary{ID: s.ID, Name: s.Name, Kind: kind, Standard: s.Standard, Edition: s.Edition,
		Table: s.Table, Recalled: s.Recalled, Plant: s.Plant}
}

func handleReferenceOils(lib *identity.Library) echo.HandlerFunc {
	all := lib.All()
	list := ReferenceOilList{Count: len(all), ReferenceOils: make([]ReferenceOilSummary, len(all))}
	for i, s := range all {
		list.ReferenceOils[i] = summaryOf(s)
	}
	return func(c echo.Context) error {
		return respond(c, http.StatusOK, list)
	}
}

func handleReferenceOil(lib *identity.Library) echo.HandlerFunc {
	return func(c echo.Context) error {
		id := c.Param("id")
		s, ok := lib.ByID(id)
		if !ok {
			return NewError(KindNotFound, "no reference oil "+strconv.Quote(id)+"; GET /v1/reference-oils lists them")
		}
		return respond(c, http.StatusOK, fromSpecification(s))
	}
}

func runConformity(cat *chem.Catalogue, lib *identity.Library, rec Recorder) operation {
	return func(ctx context.Context, b []byte) (traced, error) {
		var req ConformityRequest
		if err := decodeBytes(b, &req); err != nil {
			return nil, err
		}
		in := req.input()
		ans, err := identity.Conform(cat, lib, in)
		if err != nil {
			return nil, err
		}
		rec.Calculation("conformity")
		out := fromConformity(ans, in.Specification != nil)
		return &out, nil
	}
}

func fromConformity(a *identity.ConformityAnswer, inline bool) ConformityResponse {
	s := a.Spec
	out := ConformityResponse{
		Specification: SpecificationUsed{ID: s.ID, Name: s.Name, Standard: s.Standard, Edition: s.Edition, Table: s.Table,
			Recalled: s.Recalled, Plant: s.Plant, Inline: inline},
		Verdict:         "does_not_conform",
		Acids:           []RowVerdictBody{},
		Distance:        round(a.Distance, decimalsRow),
		UnlistedAcids:   append([]string{}, a.Unlisted...),
		UnlistedPercent: round(a.UnlistedPercent, decimalsRow),
		Warnings:        toWarnings(a.Warnings),
	}
	if a.Conforms {
		out.Verdict = "conforms"
	}
	for _, r := range a.Rows {
		row := RowVerdictBody{Acid: r.Row.Selector, Percent: round(r.Percent, decimalsRow), ND: r.Row.NotDetected,
			Verdict: r.Verdict.String(), Margin: round(r.Margin, decimalsRow)}
		if math.IsInf(r.Margin, 0) {
			row.Margin = 0
		}
		row.Min, row.Max = bound(r.Row.Range.Min), bound(r.Row.Range.Max)
		out.Acids = append(out.Acids, row)
	}
	value := func(v *identity.ValueResult) *ValueVerdictBody {
		if v == nil {
			return nil
		}
		var calc *float64
		if !math.IsNaN(v.Calculated) {
			c := round(v.Calculated, decimalsValue)
			calc = &c
		}
		return &ValueVerdictBody{Value: round(v.Value, decimalsValue), Measured: v.Measured, Calculated: calc, Min: bound(v.Range.Min),
			Max: bound(v.Range.Max), Verdict: v.Verdict.String(), Margin: round(v.Margin, decimalsValue)}
	}
	out.IodineValue, out.SaponificationValue, out.SlipMeltingPointC = value(a.IodineValue), value(a.SaponificationValue), value(a.SlipMeltingPoint)
	out.ClosestReferences = make([]ClosestBody, len(a.Closest))
	for i, m := range a.Closest {
		out.ClosestReferences[i] = ClosestBody{ID: m.Spec.ID, Name: m.Spec.Name, Distance: round(m.Distance, decimalsRow), Conforms: m.Conforms}
	}
	return out
}
