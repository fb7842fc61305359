package chem

// Standard atomic weights, conventional values [IUPAC/CIAAW 2021], g/mol.
const (
	AtomicMassC  = 12.011
	AtomicMassH  = 1.008
	AtomicMassO  = 15.999
	AtomicMassI  = 126.90447
	AtomicMassK  = 39.0983
	AtomicMassNa = 22.98977
)

// Derived molar masses, g/mol, computed from the atomic weights above so that
// a change of convention propagates everywhere.
const (
	// MolarMassI2 is diiodine, the reagent the iodine value is expressed in.
	MolarMassI2 = 2 * AtomicMassI
	// MolarMassKOH is potassium hydroxide, the reagent of the saponification value.
	MolarMassKOH = AtomicMassK + AtomicMassO + AtomicMassH
	// MolarMassH2 is dihydrogen.
	MolarMassH2 = 2 * AtomicMassH
	// MolarMassH2O is water.
	MolarMassH2O = 2*AtomicMassH + AtomicMassO
	// MolarMassGlycerol is propane-1,2,3-triol, C3H8O3.
	MolarMassGlycerol = 3*AtomicMassC + 8*AtomicMassH + 3*AtomicMassO
	// MolarMassCH2 is one methylene increment; a methyl ester is the acid plus CH2.
	MolarMassCH2 = AtomicMassC + 2*AtomicMassH
	// GlycerolBackboneIncrement is what a triacylglycerol weighs beyond its
	// three acids: glycerol minus the three waters of esterification.
	GlycerolBackboneIncrement = MolarMassGlycerol - 3*MolarMassH2O
)

// ZeroCelsiusK is 0 °C in kelvin (exact, SI).
const ZeroCelsiusK = 273.15

// GasConstant is the molar gas constant R, J/(mol·K) [CODATA 2018, exact].
const GasConstant = 8.314462618
