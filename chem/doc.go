// Package chem holds the science of lipidsvc: the fatty-acid catalogue, the
// label reader, fatty-acid profiles and the certificate values calculated
// from them (iodine and saponification values, mean molar masses,
// composition sums and nutritional indices). Sub-packages hold the larger
// models: hardening (catalytic hydrogenation) and melting (solid fat
// content and melting points).
//
// The package is pure: value types and deterministic functions that import
// only the standard library and gonum. It knows nothing of HTTP, JSON,
// logging or metrics, so any caller (the HTTP API, a batch tool, a test)
// gets the same numbers and the same checks. Each entry point takes its
// input in the shape of a request ([ProfileInput], [PropertiesInput]),
// reads the labels, applies the rules and defaults, and reports errors
// (*[Error], with a kind and field paths) and warnings at the path of the
// input they concern; [NewProfile] and [PropertiesOf] are the typed engine
// beneath.
//
// # Conventions
//
// A fatty-acid profile from gas chromatography lists acids with
// percentages. Laboratories report FAME area % (AOCS Ce 1h-05, ISO
// 12966-4), which by long practice is read as FAME weight %; a profile may
// also be given as free-acid weight % or mole %. The iodine value (g I2 per
// 100 g) and the saponification value (mg KOH per g) refer to the oil as
// triacylglycerols unless the material is given as free acids or methyl
// esters. Labels follow the trade's shorthand C:D (carbons : double
// bonds), n-x (omega) families counted from the methyl end, bond positions
// counted from the carboxyl end (cis-9, Δ9, 9Z) and the LIPID MAPS form
// FA 18:1(9Z). Geometry and position do not change the iodine value or the
// molar mass; they matter for trans sums, hardening and melting.
//
// # Constants
//
// Molar masses are computed from formulas with the IUPAC/CIAAW 2021
// conventional atomic weights (C 12.011, H 1.008, O 15.999, I 126.90447,
// K 39.0983): I2 253.80894, KOH 56.1053, H2 2.016, H2O 18.015, glycerol
// 92.094 g/mol. A fatty acid is CnH(2n−2d)O2, its methyl ester weighs CH2
// (14.027) more, and a triacylglycerol weighs three acids plus glycerol
// less three waters (38.049). Check values recomputed from these
// [calc]: oleic acid 282.468, methyl oleate 296.495, triolein 885.453,
// tristearin 891.501, tripalmitin 807.339, EPA 302.458, DHA 328.496 g/mol.
//
// # Converting a profile
//
// For weights w_i on the FAME basis and ester molar masses M_i, the moles of
// chain i are proportional to w_i/M_i, and the mole fractions are
// x_i = (w_i/M_i)/Σ(w_j/M_j). The mean acid molar mass is the mole-average
// Σ x_i M_i (harmonic with respect to weight); the mean TAG molar mass is
// three times it plus 38.049. A weight-averaged molar mass is wrong, badly
// so for lauric oils.
//
// # Iodine value
//
// The exact (stoichiometric) iodine value counts the double bonds:
// IV = 100 × M(I2) × (mol C=C per g), for a TAG oil 100 × 253.80894 ×
// 3 Σ x_i d_i / M̄_TAG. The calculated iodine value of AOCS Recommended
// Practice Cd 1c-85 (also the basis of ISO 3961 Annex B) is Σ %FA_i × f_i
// over six acids with the factors 16:1 0.950, 18:1 0.860, 18:2 1.732, 18:3
// 2.616, 20:1 0.785, 22:1 0.723 for triacylglycerols (0.9976, 0.8986,
// 1.810, 2.735, 0.8175, 0.7497 for free acids); each factor is the iodine
// value of the pure simple TAG (or acid) over 100, which the tests
// recompute. Acids outside the six (24:1, 20:5, 22:6, …) are ignored by
// the method and counted by the exact value; the method is not meant for
// fish oils or low-iodine-value materials. Both values are reported, named.
// Pure compounds [calc]: oleic acid 89.85, linoleic acid 181.00,
// α-linolenic acid 273.47, methyl oleate 85.60, triolein 85.99,
// trilinolein 173.17, trilinolenin 261.55.
//
// # Saponification value
//
// One KOH per ester or acid group: SV = 1000 × M(KOH) / (mass per chain),
// for a TAG oil 3 × 56105.3 / M̄_TAG mg KOH/g, as AOCS Cd 3a-94 and ISO 3657
// Annex B compute it from the composition (titration methods, AOCS Cd 3-25
// and ISO 3657, use 56.1 for KOH). Pure TAGs [calc]: tricaprylin 357.59,
// trilaurin 263.40, trimyristin 232.75, tripalmitin 208.48, tristearin
// 188.80, triolein 190.09.
//
// # Composition sums and indices
//
// Saturated, monounsaturated, polyunsaturated and trans sums follow the
// labelling definitions of Regulation (EU) No 1169/2011, Annex I; n-3, n-6
// and n-9 sum the all-cis, methylene-interrupted acids of each family. The
// calculated oxidizability is Cox = (%18:1 + 10.3 %18:2 + 21.6 %18:3)/100
// (Fatemi & Hammond, Lipids 15:379, 1980). The atherogenic and thrombogenic
// indices are those of Ulbricht & Southgate, Lancet 338:985 (1991):
// AI = (12:0 + 4×14:0 + 16:0)/(MUFA + n-6 + n-3) and
// TI = (14:0 + 16:0 + 18:0)/(0.5 MUFA + 0.5 n-6 + 3 n-3 + n-3/n-6), with
// the last term as first published (later papers sometimes drop it).
//
// # Check vectors
//
// The tests use four compositions of our own as check vectors (weight %,
// FAME basis; the expected values are recomputed from first principles,
// testdata/chem/reference.json): soy-like (16:0 10.5, 16:1 0.1, 18:0 4.0,
// 18:1 23.0, 18:2 53.7, 18:3 7.6, 20:0 0.4, 20:1 0.3, 22:0 0.4: mean molar
// masses 278.552 / 292.579 / 873.705 g/mol, exact IV 132.98, AOCS Cd 1c-85
// 133.001, SV 192.65, Cox 7.40, AI 0.124), palm-like (12:0 0.2, 14:0 1.0,
// 16:0 44.0, 16:1 0.2, 18:0 4.5, 18:1 39.2, 18:2 10.1, 18:3 0.3, 20:0 0.4,
// 20:1 0.1: IV 52.26, SV 198.79, AI 0.966), canola-like (exact IV 113.46
// against AOCS 112.943, the difference being its 24:1) and coconut-like
// (SV 255.25; a weight-averaged molar mass would give about 248.6, the
// classic mistake).
package chem
