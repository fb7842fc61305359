// Package hardening holds the science of catalytic hydrogenation (hardening)
// of fats and oils.
//
// The hydrogen part (hydrogen.go) answers the planning questions that follow
// from stoichiometry alone: how much hydrogen a drop in iodine value takes,
// what volume that is at a chosen gas reference state, how much gas a plant
// has to supply once purity and losses are allowed for, how much heat the
// reaction gives off and how far that heat would raise the temperature of the
// oil if none were removed. Its entry point is [HydrogenDemand]; build its
// input with [NewHydrogenRequest], which fills the documented defaults.
//
// Stoichiometry: one mole of diiodine (I2) and one mole of dihydrogen (H2)
// each add across one C=C double bond, so the iodine value (grams of I2 per
// 100 g of sample) counts the double bonds, and every iodine-value unit
// removed from one tonne of feed takes 10^4 / M(I2) ≈ 39.40 mol of H2. Gas
// volumes come from the ideal-gas law V = nRT/p with R = chem.GasConstant;
// at the reference states offered, real hydrogen differs from it by less
// than one part in a thousand [memory].
//
// Two iodine-value conventions exist because the oil gains the mass of the
// hydrogen it takes up: a final iodine value can be stated per 100 g of the
// original feed (the feed basis, used by default) or, as a laboratory
// measures it, per 100 g of the heavier product (the product basis). The
// results always carry both, and name the one the headline figures use.
//
// All "per tonne" figures are per tonne (1000 kg) of feed oil.
//
// The package is pure: value types and deterministic functions, standard
// library only. Errors are *chem.Error values whose field paths use the
// names listed on [HydrogenRequest].
//
// Caution: the results are estimates for planning. Hydrogen is extremely
// flammable and forms explosive mixtures with air over a wide range;
// hardening runs hot and under pressure; nickel catalysts are sensitisers and
// spent catalyst can self-heat. Operation follows the plant's procedures,
// local codes and licensed engineering practice.
package hardening
