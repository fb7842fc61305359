// Package melting predicts how a fat melts from its fatty-acid profile: the
// triacylglycerol (TAG) species it contains, the melting properties of each
// species in the α, β′ and β crystal forms, the solid–liquid equilibrium of
// the mixture, and from that the solid fat content (SFC) curve, the slip
// melting point and the clear point.
//
// The chain of models, each documented where it is implemented:
//
//  1. Composition ([TAGComposition], composition.go): the profile's acids are
//     placed on glycerol by full random distribution or by the
//     1,3-random-2-random rule (Vander Wal 1960; Coleman 1961), with the sn-2
//     composition measured, supplied as a separate pool, or estimated by a
//     documented rule ([SN2SeedOil], [SN2Palm], [SN2Enrichment]).
//     Regio-isomers are lumped: sn-1 and sn-3 are taken as equivalent.
//     Species below a mole-fraction floor are pooled by melting point.
//  2. Pure-TAG properties ([PureTAGProperties], properties.go): enthalpy and
//     entropy of fusion each linear in the total acyl carbon number, with
//     terms for the sn-2 and the outer chain-length mismatch, odd chains and
//     cis-18:1, trans-18:1, 18:2 and 18:3 chains — the published structure
//     of Wesdorp's correlation (L.H. Wesdorp, thesis, Delft 1990; restated
//     in Marangoni & Wesdorp, Structure and Properties of Fat Crystal
//     Networks, 2nd ed.), except that cis-18:1 chains at sn-2 and at sn-1/3
//     have separate terms (our extension, documented on
//     [PolymorphCoefficients]).
//     The coefficients are our own fit to testdata/melting/pure_tag_thermo.csv
//     (see fit_test.go and testdata/melting/fit_coefficients.json); measured
//     values override the correlation for the TAGs that have them.
//  3. Solid–liquid equilibrium (sle.go, families.go): an ideal liquid and
//     ideal solubility of each solid (Hildebrand / Schröder–van Laar), with
//     one of three solid models: multiple pure solid phases (a eutectic
//     system, solved exactly), one ideal solid solution (Rachford–Rice), or
//     — the default — partial miscibility: species grouped into families of
//     near-isomorphous TAGs (same unsaturation, total acyl carbons in one
//     6-carbon band), each family an ideal solid solution, the families
//     mutually immiscible (Michelsen's convex formulation of multiphase
//     ideal-solution equilibrium, solved by a joint Newton method with a
//     bracketed nested iteration as fallback).
//  4. Melting results ([Melt], melt.go): the SFC curve, the slip melting
//     point found by root finding on the monotone SFC(T), the clear point,
//     SFC at 37 °C, the main species, and warnings. [SlipMeltingPoint] is the
//     cheap entry point for root finders such as a hardening-to-target
//     search; [Prepare] gives a reusable [Fat] for repeated queries.
//  5. Calibration ([Calibrate], calibrate.go): a temperature shift of all
//     melting points and a slip threshold fitted to a fat's measured SFC
//     points (AOCS Cd 16b-93, ISO 8292-1) and/or slip melting point
//     (AOCS Cc 3-25, ISO 6321), returned as a value [Melt] accepts.
//
// Defaults, and the validation that chose them, are on [DefaultOptions] and
// in testdata/melting/VALIDATION.md. The results are estimates: real fats
// crystallise out of equilibrium, their mixed crystals are not ideal, some
// TAG pairs form compounds, and their measured SFC depends on the tempering
// procedure.
//
// The package is pure: value types and deterministic functions that import
// only the standard library, gonum and lipidsvc/chem. Errors are *chem.Error
// values; field paths use the snake_case names given on [Options].
package melting
