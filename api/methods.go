package api

// The published methods each answer's figures follow, for its provenance
// record. They name methods and the literature the packages implement (see
// their documentation); the model parameters themselves are in each
// answer's own fields (catalyst, parameters, assumptions).
const (
	methodExactIV     = "iodine value: stoichiometric, from the composition (IUPAC/CIAAW 2021 atomic weights)"
	methodAOCSIV      = "AOCS Cd 1c-85 (calculated iodine value)"
	methodSV          = "saponification value from the mole-average molar mass (basis of AOCS Cd 3a-94, ISO 3657)"
	methodClasses     = "composition classes: Regulation (EU) No 1169/2011, Annex I"
	methodCox         = "Cox: Fatemi & Hammond, Lipids 15:379 (1980)"
	methodAPE         = "allylic position equivalents: Knothe, JAOCS 79:847 (2002)"
	methodAIandTI     = "atherogenic and thrombogenic indices: Ulbricht & Southgate, Lancet 338:985 (1991)"
	methodNutrition   = "lipid conversion factors: FAO, Food composition data (2003), Annex 5, Table A5.1"
	methodDistance    = "distance to range boxes: root sum of squares outside the ranges, percentage points"
	methodTAG         = "TAG composition: 1,3-random-2-random (Vander Wal 1960; Coleman 1961) or full random distribution"
	methodSLE         = "solid fat content: solid–liquid equilibrium of TAG species (Hildebrand / Schröder–van Laar)"
	methodSlip        = "slip melting point as an SFC threshold (the quantity of AOCS Cc 3-25, ISO 6321)"
	methodNetwork     = "hardening: consecutive-reaction network 18:3 → 18:2 → 18:1 → 18:0 with isomerisation (Bailey 1949; Albright 1965)"
	methodStoich      = "hydrogen demand: one H2 per C=C removed (stoichiometry)"
	methodGaussNewton = "catalyst fit: Gauss–Newton least squares on transformed parameters"
)

func (r *PropertiesResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *PropertiesResponse) methods() []string {
	m := []string{methodExactIV}
	if r.AOCS.Applies {
		m = append(m, methodAOCSIV)
	}
	m = append(m, methodSV, methodClasses, methodCox, methodAPE, methodAIandTI)
	if r.Nutrition != nil {
		m = append(m, methodNutrition)
	}
	return m
}

func (r *ConformityResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *ConformityResponse) methods() []string {
	s := r.Specification
	spec := "specification: " + s.ID
	if s.Standard != "" {
		spec += ", " + s.Standard
		if s.Table != "" {
			spec += ", " + s.Table
		}
	}
	return []string{spec, methodExactIV, methodSV, methodDistance}
}

func (r *MeltingResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *MeltingResponse) methods() []string { return []string{methodTAG, methodSLE, methodSlip} }

func (r *CalibrateResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *CalibrateResponse) methods() []string {
	return []string{methodTAG, methodSLE, methodSlip, "calibration: least squares on the temperature shift and slip threshold"}
}

func (r *ForecastResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *ForecastResponse) methods() []string {
	m := []string{methodNetwork, methodStoich, methodExactIV}
	if r.MeltingTarget != nil {
		m = append(m, methodTAG, methodSLE, methodSlip)
	}
	return m
}

func (r *HydrogenDemandResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *HydrogenDemandResponse) methods() []string {
	return []string{methodStoich, "gas volume: ideal gas at the chosen reference state"}
}

func (r *FitResponse) setProvenance(p *Provenance) { r.Provenance = p }

func (r *FitResponse) methods() []string { return []string{methodNetwork, methodGaussNewton} }
