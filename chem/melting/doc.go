// Package melting predicts how a fat melts from its fatty-acid profile: the
// triacylglycerol (TAG) species it contains, the melting properties of each
// species in the α, β′ and β crystal forms, the solid–liquid equilibrium of
// the mixture, and from that the solid fat content (SFC) curve, the slip
// melting point and the clear point.
//
// Its entry points take a request in its own shape: [Melt] (a profile or a
// TAG list, the model options, optional measurements), [Calibrate] and
// [ResolveModel] (the options alone, for callers that nest them). Beneath
// them are the typed engine: [Prepare] and [PrepareTAGs] build a reusable
// [Fat], [MeltProfile] and [CalibrateProfile] compute from a read profile,
// [Mixture] holds the equilibrium components.
//
// # From fatty acids to triacylglycerols (composition.go, sn2.go)
//
// Full random distribution: P(i,j,k) = x_i x_j x_k (chemically
// interesterified fats). The 1,3-random-2-random
// distribution (Vander Wal 1960; Coleman 1961): sn-2 has its own
// composition b, sn-1 and sn-3 share a = (3x − b)/2, which needs b_i ≤ 3x_i,
// and P(i,j,k) = a_i b_j a_k. Regio-isomers are lumped (sn-1 and sn-3
// equivalent). A species weighs 92.094 + Σ acids − 3 × 18.015 g/mol.
//
// The sn-2 composition, when not measured (pancreatic lipase analysis), is
// estimated by a rule chosen from the composition ([SN2Automatic], the
// default; the chosen rule and the reason are reported). [ClassOf] reads
// the kind of fat from its acids ([FatClass]): milk fat, lauric, hardened,
// palm, cocoa-butter type, lard, tallow or seed oil. The rules: the seed-oil
// rule (seed oils, cocoa-butter-type fats) keeps saturated and C20+ acids
// out of sn-2 and lets the unsaturated C18 acids fill it in proportion to
// their amounts (if they are less than a third of all chains, all of them
// go to sn-2 and the other acids fill the rest); the palm rule lets
// saturated and C20+ acids compete with a selectivity calibrated to a
// published palm-oil sn-2 analysis ([PalmSN2Selectivity]); the lauric rule
// follows the published order of preference for sn-2 in lauric oils
// (unsaturated acids, then lauric acid, then the rest); the lard, tallow
// and milk-fat rules carry each acid's published share at sn-2 over as an
// enrichment factor ([LardSN2], [TallowSN2], [MilkFatSN2]); the hardened
// rule keeps the C18 chains at sn-2, where the feed's unsaturated C18 acids
// were before hardening saturated or isomerised them. Caller-given
// enrichment factors place acids by relative preference. Species below a
// mole-fraction floor are pooled by melting point within their family
// (components.go).
//
// # Pure-TAG properties (correlation.go)
//
// Enthalpy and entropy of fusion are each linear in the total acyl carbon
// number, with terms for the sn-2 and the outer chain-length mismatch, odd
// chains and cis-18:1, trans-18:1, 18:2 and 18:3 chains (a diene with a
// trans bond counts 1.65 trans-18:1 chains, scaled by the free acids'
// melting points; see transDieneEquivalents) — the published
// structure of Wesdorp's correlation (L.H. Wesdorp, thesis, Delft 1990;
// restated in Marangoni & Wesdorp, Structure and Properties of Fat Crystal
// Networks, 2nd ed.), except that cis-18:1 chains at sn-2 and at sn-1/3 have
// separate terms (our extension, on [PolymorphCoefficients]). The
// coefficients are our own fit to testdata/melting/pure_tag_thermo.csv
// (fit_test.go, testdata/melting/fit_coefficients.json; `go generate`
// refits them into coefficients_gen.go); measured values override the
// correlation for the TAGs that have them. Polymorph matters: α < β′ < β in
// melting point; unstabilised SFC of hardened and palm-based fats mostly
// reflects β′, tempered cocoa-butter-type fats the stable β form.
//
// # Solid–liquid equilibrium (sle.go, eutectic.go, solid_solution.go,
// families.go)
//
// An ideal liquid and the ideal solubility of a pure solid (Hildebrand;
// Schröder–van Laar): x_sat(T) = exp[−(ΔH/R)(1/T − 1/T_m)], R =
// 8.314462618 J/(mol·K). Three solid models:
//
//   - multiple pure solid phases (a eutectic system): the liquid fraction L
//     solves Σ min(z_i/L, x_i,sat) = 1, piecewise in L with breakpoints
//     z_i/x_i,sat, so sorting them gives L exactly;
//   - one ideal solid solution: K_i = 1/x_i,sat and the Rachford–Rice
//     equation Σ z_i(K_i − 1)/(1 + β(K_i − 1)) = 0 for the solid fraction β;
//   - the default, partial miscibility: species grouped into families of
//     near-isomorphous TAGs (the same number of cis-unsaturated chains, with
//     trans chains packing as straight ones alongside saturated chains, as
//     the crystal structures of trans TAGs show; total acyl carbons in one
//     6-carbon band), each family an ideal solid solution, the families
//     mutually immiscible (Michelsen's convex formulation of multiphase
//     ideal-solution equilibrium, solved by a joint Newton method with a
//     bracketed nested iteration as fallback).
//
// The SFC is 100 × Σ solid_i M_i / Σ z_i M_i (mass %). The equations are
// checked on a three-TAG case recomputed from first principles [calc]: z =
// {0.05, 0.25, 0.70}, T_m = {339.15, 310.15, 278.15} K, ΔH = {171, 140,
// 100} kJ/mol, equal masses, give solid fractions 0.2960, 0.2685, 0.0493,
// 0.0004 and 0 at 10, 20, 30, 50 and 60 °C in the eutectic model and
// 0.5585, 0.1476 and 0.0020 at 10, 30 and 50 °C as one ideal solid solution.
//
// # Melting results (melt.go, options.go, calibrate.go)
//
// The methods the results stand in for: slip melting point, the
// temperature at which a fat column rises in an open capillary on slow
// heating after 16 h at 4–10 °C (AOCS Cc 3-25, ISO 6321); clear point, where
// the fat becomes completely clear (AOCS Cc 1-25); SFC by pulsed NMR
// (AOCS Cd 16b-93, ISO 8292-1), with a tempering procedure for
// cocoa-butter-type fats. The model reads the slip melting point where its
// SFC falls to a threshold (the trade places it at about 3–5 % SFC, common
// practice, no source; [DefaultSlipThresholdPercent] and its calibration),
// and the clear point where the SFC reaches zero. [Calibrate] fits a
// temperature shift of all melting points and a slip threshold to a fat's
// measured SFC points and/or slip melting point.
//
// Defaults, and the validation that chose them, are on [Options] and in
// testdata/melting/VALIDATION.md. The results are estimates, and every
// answer says how good for its kind of fat ([Uncertainty], from the
// plausibility fixture, testdata/melting/PLAUSIBILITY.md): real fats
// crystallise out of equilibrium, their mixed crystals are not ideal, some
// TAG pairs form compounds, and their measured SFC depends on the tempering
// procedure.
//
// The package is pure: value types and deterministic functions that import
// only the standard library, gonum and lipidsvc/chem. Errors are *chem.Error
// values whose field paths name the request's fields ([MeltingInput]).
package melting
