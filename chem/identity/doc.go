// Package identity checks a fatty-acid profile against identity ranges: the
// ranges a standard sets for a named oil (the Codex Standard for Named
// Vegetable Oils, CXS 210, and for olive oils, CXS 33), a plant's own
// specifications, or composition limits such as those of EN 14214 for
// fatty-acid methyl esters.
//
// A specification is a list of rows, each the sum of the acids a selector
// names ("C18:1" is every straight-chain isomer of that chain, as the
// standards' GLC tables count it; "C18:1 trans", "trans", "double bonds >=
// 4" select subgroups) in percent of the identified acids, with a range;
// "ND", not detected, is at most 0.05 % as the Codex standards define it.
// The standards' GLC area percentages are read as FAME weight percent, the
// usual approximation for flame-ionisation detection. Optional ranges of
// the Wijs iodine value, the saponification value and the slip melting
// point are checked against measured values when they are sent, and the
// iodine and saponification values otherwise against the values
// calculated from the composition (said so in a warning).
//
// [Check] gives each row's verdict (within, below, above) with its margin,
// and an overall verdict. [Closest] ranks specifications by distance: the
// root sum of squares of how far each row lies outside its range, in
// percentage points, so a profile inside a box is at 0 and a mislabelled or
// blended lot lies away from every box. The distance counts composition
// only; the verdict counts the values too.
//
// The embedded reference catalogue ([References], data in references.go)
// records for every specification its standard, edition, table and where
// the numbers were read, and marks ranges recalled rather than read. A
// plant's own specifications come in as [SpecificationInput] values (the
// service reads them from a file). [Conform] is the request-shaped entry
// point.
//
// The package is pure: value types and deterministic functions that import
// only the standard library and lipidsvc/chem.
package identity
