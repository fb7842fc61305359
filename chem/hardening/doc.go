// Package hardening holds the science of catalytic hydrogenation (hardening)
// of fats and oils.
//
// Each entry point takes a request in its own shape ([HydrogenDemand],
// [Forecast], [Fit]): it reads the profiles, resolves presets and names,
// applies every rule about inputs that exclude each other, fills the
// defaults and reports errors and warnings at the path of the input they
// concern. The typed engine beneath is [HydrogenDemandOf], [ForecastOf],
// [ForecastToSlipMeltingPoint] and [FitOf].
//
// # Hydrogen and heat (demand.go, gas.go, heat.go, target.go)
//
// The hydrogen part answers the planning questions that follow from
// stoichiometry alone: how much hydrogen a drop in iodine value takes, what
// volume that is at a chosen gas reference state, how much gas a plant has
// to supply once purity and losses are allowed for, how much heat the
// reaction gives off and how far that heat would raise the temperature of
// the oil if none were removed.
//
// Stoichiometry: one mole of diiodine (I2) and one mole of dihydrogen (H2)
// each add across one C=C double bond, so the iodine value (grams of I2 per
// 100 g of sample) counts the double bonds, and every iodine-value unit
// removed from one tonne of feed takes 10^4 / M(I2) ≈ 39.40 mol of H2. Gas
// volumes come from the ideal-gas law V = nRT/p with R = chem.GasConstant;
// at the reference states offered, real hydrogen differs from it by less
// than one part in a thousand [memory]. Per tonne and iodine-value unit
// that is 0.07943 kg of H2, 0.8831 m³ at 0 °C and 101.325 kPa, 0.8948 m³ at
// 0 °C and 100 kPa, 0.9316 m³ at 15 °C and 101.325 kPa, 32.96 standard
// cubic feet at 60 °F and 14.696 psia [calc]; the trade's "about 0.9 m³ per
// tonne per unit" agrees (common practice, no source). Worked case [calc]:
// IV 133 → 70 on the feed basis takes 2482.2 mol, 5.004 kg or 55.64 m³
// (0 °C, 101.325 kPa) per tonne, 4.976 kg if the final value is measured on
// the product. Saturating triolein to tristearin takes 6.830 kg per tonne
// and adds 0.683 % to the mass [calc]. Plants add purge and dissolution
// losses and correct for gas purity: both are inputs.
//
// The heat of hydrogenation is nearly constant per double bond
// (calorimetry of Rogers and co-workers, J. Chem. Soc. Faraday Trans. 1
// 74:2868, 1978), about −105 to −125 kJ per mol C=C [memory]; the default
// is the middle, −115, and overridable. The liquid oil's heat capacity
// rises with temperature (liquid trielaidin: cp = 1.327 + 0.002529·T[K]
// J/(g·K), fitted over 320–360 K, the default model); the adiabatic rise
// integrates it. The trade quotes 1.6–1.7 °C per iodine-value unit (common
// practice, no source); it is not a test oracle.
//
// Two iodine-value conventions exist because the oil gains the mass of the
// hydrogen it takes up: a final iodine value can be stated per 100 g of the
// original feed (the feed basis, used by default) or, as a laboratory
// measures it, per 100 g of the heavier product (the product basis). The
// results always carry both, and name the one the headline figures use.
//
// All "per tonne" figures are per tonne (1000 kg) of feed oil.
//
// # Forecast and calibration
//
// The kinetic part (catalyst.go, network.go, trajectory.go, forecast.go,
// presets.go, the fit_*.go files) predicts what a catalyst makes of an oil. [Forecast] takes a feed profile, a target
// (final iodine value, iodine-value drop or hydrogen per tonne) and a
// [Catalyst], and returns the product profile, its trans and saturated
// shares, the hydrogen taken up and a path table; [Presets] lists documented
// catalysts; [Fit] calibrates a catalyst on observed products of plant
// batches.
//
// The model is the consecutive pseudo-first-order scheme 18:3 → 18:2 →
// 18:1 → 18:0 with rate constants k1, k2, k3 (Bailey 1949; Albright 1965),
// written with the selectivities S_Ln = k1/k2 and S_R = k2/k3, plus a
// compact cis/trans network of our own built on the half-hydrogenated
// surface intermediate through which double bonds isomerise (cis → trans,
// positional shifts) during hardening: a share φ of the monoenes formed
// from all-cis dienes (and of the dienes formed from trienes) leaves the
// catalyst as trans; cis monoenes isomerise to trans at rate ι·k3 and back
// at (ι/K)·k3, relaxing towards trans:cis = K; trans monoenes saturate at
// ρ·k3. Rates are relative to k3, so the state is a function of the path
// variable τ = ∫k3 dt (time × activity), and composition against iodine
// value depends on the six ratios only. For a source with t of its d bonds
// trans the product's trans share is k + (1 − k)·φ, where k, the chance that
// a trans bond survives the removal of one bond picked at random, is 0 for
// t = 0, 1 − 1/d for t = 1 and 1 for t ≥ 2 (t/d for dienes); lumped "C:D t"
// entries are taken to carry one trans bond.
//
// Every unsaturated acid of the catalogue is handled:
//   - Monoenes C16, C18, C20, C22 have cis and trans pools. Newly formed
//     trans monoenes go to the lumped entries "16:1 t", "18:1 t", "20:1 t",
//     "22:1 t" (hardening shifts positions, so a single isomer such as
//     elaidic acid would be wrong); a feed's specific trans isomers (elaidic
//     "18:1 t9", vaccenic "18:1 t11", "16:1 t9") keep their identity and
//     relax to their own cis isomer; the lumped pool relaxes to the chain's
//     common cis isomer (oleic for C18). Cis monoenes of other positions
//     (petroselinic, cis-vaccenic) isomerise into the same lumped pool.
//   - Monoenes of chains without a trans entry (10:1, 14:1, 17:1, 24:1)
//     only saturate; a warning says their trans is not tracked.
//   - C18 dienes, all isomers, hydrogenate at k2: the cis product is oleic
//     (standing for every cis 18:1 position isomer), the trans product
//     "18:1 t". Trienes form linoleic acid and the trans diene pool "18:2 t".
//     C20 and C22 dienes behave alike with their own chains.
//   - Polyenes with d ≥ 3 double bonds (18:3, 18:4, 20:3–20:5, 22:4–22:6)
//     lose one double bond at a time, at k1·(d − 1)/2: proportional to the
//     number of bis-allylic methylene groups and equal to k1 for a C18
//     triene. The intermediate is the catalogue acid obtained by deleting
//     one double bond, the one nearest the carboxyl group first (EPA →
//     20:4 n-3 → 20:3 n-3 → 20:2 → 20:1 c11); where the catalogue holds no
//     acid with d − 1 double bonds on that chain (22:3) the step goes to the
//     next level it holds (22:4 → 22:2). The catalogue has no trans entries
//     for C20/C22 polyenes, so trans formed there is counted as cis and the
//     trans figures of marine oils are a lower bound (with a warning).
//     Limits: real marine-oil hardening shifts and isomerises double bonds
//     in ways no catalogue of named acids can express, conjugated dienes
//     hydrogenate faster than linoleic acid, and the (d − 1) rule is a
//     simplification; the forecast is a planning estimate for such oils.
//   - Saturated acids are inert. Hydroxy acids are refused: ricinoleic acid
//     hardens to 12-hydroxystearic acid, which the catalogue does not hold.
//
// The system is linear with constant coefficients in τ, so it is solved
// exactly: x(τ) = exp(Aτ)·x(0), on one small block per chain length, by
// uniformisation (Jensen's method: the rate matrix is a Markov generator,
// so exp(Aτ) is a Poisson-weighted series of powers of a non-negative
// matrix) with binary powers built once per catalyst by squaring and reused
// by every evaluation along the path. Unlike an eigen-decomposition it
// keeps full accuracy where rates coincide or nearly do (every cis monoene
// decays at the same rate, and a diene rate can meet the cis/trans pair's),
// which this network makes common; the tests hold it to gonum's Padé matrix
// exponential and to the closed form of a defective chain. With the trans network off the
// C18 part reduces to the Bateman closed form, which the tests use to check
// the general solver. The iodine value falls strictly along the path, so a
// target is found by the shared bracketed root finder taking Newton steps
// on τ (the derivative dIV/dτ is exact) to 1e-9 iodine-value units. Iodine values
// along the path are those of the oil itself, per 100 g of oil — for the
// product the product basis of [ProductBasis], what a laboratory measures
// and what chem.IodineValue computes from the composition; the hydrogen
// figures are exact for that convention.
//
// When an sn-2 composition is given, the sn-2 and sn-1,3 pools (sn-1,3 =
// (3x − b)/2 in mole terms, Vander Wal 1960; Coleman 1961) are hardened
// with the same τ, since hardening barely moves acids between positions
// [pub: J. Japan Oil Chem. Soc. 20:10 (1971)]. The model being linear, the
// pools recombine exactly to the overall product.
//
// Published check data: soybean oil over nickel at 175 °C and 15 psi H2
// reaches a trans 18:1 peak of about 46 % near IV 70, and at IV about 40
// carries 28–32 % trans and 42–46 % stearic acid (List, Jackson, Eller &
// Adlof, JAOCS 84:609, 2007), which the nickel_selective preset meets. The
// equilibrium trans:cis ratio of internal 18:1 is about 2:1 to 3:1, and
// nickel forms about 0.5–1.0 trans per iodine-value unit lost [memory];
// higher hydrogen pressure lowers trans for every metal (comparative
// Ni/Pd/Pt studies in JAOCS [memory]). Regulatory readings: a fat at or
// below IV 4 counts as fully hydrogenated, not partially (FDA declaratory
// order, 80 FR 34650, 2015); industrial trans fat is limited to 2 g per
// 100 g of fat (Commission Regulation (EU) 2019/649; WHO REPLACE).
//
// The package is pure: value types and deterministic functions, standard
// library and gonum only. Errors are *chem.Error values whose field paths
// name the request's fields ([HydrogenDemandInput], [ForecastInput],
// [FitInput]).
//
// Caution: the results are estimates for planning. Hydrogen is extremely
// flammable and forms explosive mixtures with air over a wide range;
// hardening runs hot and under pressure; nickel catalysts are sensitisers and
// spent catalyst can self-heat. Operation follows the plant's procedures,
// local codes and licensed engineering practice.
package hardening
