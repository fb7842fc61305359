package hardening

// Preset is a documented set of catalyst parameters standing for one
// catalyst under one kind of conditions. Presets are starting points: a
// plant with its own batches should calibrate with [Fit].
type Preset struct {
	// Name is a stable token ("nickel_selective", …).
	Name string
	// Title is a short human-readable name.
	Title string
	// Conditions describes the catalyst and operating conditions the preset
	// stands for.
	Conditions string
	// Catalyst holds the parameter values.
	Catalyst Catalyst
	// Basis says what the values rest on, with the grade of each source
	// ([pub] published, [memory] recalled, not re-verified).
	Basis string
}

// Preset names.
const (
	PresetNickelSelective    = "nickel_selective"
	PresetNickelNonSelective = "nickel_non_selective"
	PresetCopper             = "copper"
	PresetPalladium          = "palladium"
	PresetPlatinum           = "platinum"
)

// Presets returns the built-in catalyst presets, nickel first. The slice is
// a fresh copy on every call.
//
// Only the selective-nickel preset is tuned to published measurements (and
// tested against them). The others place each catalyst where the hardening
// literature puts it relative to nickel, from values recalled as orders of
// magnitude [memory]; they show the direction and rough size of the
// differences and are not predictions for a particular catalyst grade.
func Presets() []Preset {
	return []Preset{
		{
			Name:  PresetNickelSelective,
			Title: "Nickel, selective conditions",
			Conditions: "Supported nickel catalyst under selective conditions: high temperature " +
				"(about 175–200 °C), low hydrogen pressure (about 1 bar gauge), moderate agitation. " +
				"The usual choice for margarine and shortening base stocks; it forms much trans.",
			Catalyst: Catalyst{
				LinolenicSelectivity: 2,
				LinoleicSelectivity:  50,
				TransShare:           0.78,
				IsomerisationRate:    0.9,
				TransCisEquilibrium:  2,
				TransSaturationRate:  0.86,
			},
			Basis: "S_Ln 2 and S_R 50 sit in the ranges recalled for nickel (S_Ln about 2, S_R 30–80 " +
				"under selective conditions) [memory]; K = 2 is the low end of the recalled 2:1–3:1 " +
				"trans:cis equilibrium of internal 18:1 [memory]. With these three fixed, φ, the " +
				"isomerisation rate and the trans saturation rate were fitted (Nelder–Mead least " +
				"squares, each band's residual divided by its half-width, then rounded) to soybean " +
				"oil hardened over nickel at 175 °C and 15 psi H2: trans 18:1 peaks at 46 ± 4 % near " +
				"iodine value 70 ± 6, and at iodine value 40 trans is 30 ± 4 % and stearic acid " +
				"44 ± 4 % [pub: List, Jackson, Eller & Adlof, JAOCS 84:609 (2007)], starting from the " +
				"soy-like check vector of the chem package documentation. The preset gives a trans 18:1 peak of 46.2 % at " +
				"iodine value 68.8, and at iodine value 40 30.0 % trans with 42.1 % stearic acid; it " +
				"forms 0.72 % trans per iodine-value unit up to the peak, inside the 0.5–1.0 recalled " +
				"for nickel [memory]. Stearic acid sits 1.9 points under the band centre because, " +
				"once the dienes are gone, the iodine value itself fixes the monoene share " +
				"(about 46 % at iodine value 40) and so the stearic share for this feed.",
		},
		{
			Name:  PresetNickelNonSelective,
			Title: "Nickel, non-selective conditions",
			Conditions: "Supported nickel catalyst under non-selective conditions: lower temperature " +
				"(about 120–150 °C), higher hydrogen pressure (3–5 bar gauge), strong agitation. " +
				"More saturates and less trans at a given iodine value.",
			Catalyst: Catalyst{
				LinolenicSelectivity: 2,
				LinoleicSelectivity:  7,
				TransShare:           0.4,
				IsomerisationRate:    0.3,
				TransCisEquilibrium:  2,
				TransSaturationRate:  0.86,
			},
			Basis: "S_R 7 is the middle of the 5–10 recalled for nickel under non-selective conditions " +
				"[memory]; higher hydrogen pressure lowers trans formation for every metal [pub: " +
				"comparative Ni/Pd/Pt studies, JAOCS], which the lower φ and isomerisation rate " +
				"express (values chosen, orders of magnitude [memory]). K and the trans saturation " +
				"rate are kept from the selective preset (same metal).",
		},
		{
			Name:  PresetCopper,
			Title: "Copper",
			Conditions: "Copper (copper-chromite type) catalyst, used to lower linolenic acid while " +
				"keeping linoleic acid; it hardly saturates monoenes and forms much trans.",
			Catalyst: Catalyst{
				LinolenicSelectivity: 10,
				LinoleicSelectivity:  100,
				TransShare:           0.7,
				IsomerisationRate:    0.8,
				TransCisEquilibrium:  2,
				TransSaturationRate:  0.86,
			},
			Basis: "S_Ln 10 is inside the 8–15 recalled for copper [memory]; S_R 100 expresses that " +
				"copper barely forms stearic acid [memory, order of magnitude]; the trans parameters " +
				"are set close to selective nickel [memory, order of magnitude].",
		},
		{
			Name:  PresetPalladium,
			Title: "Palladium",
			Conditions: "Supported palladium catalyst: very active at low temperature; the metal " +
				"that forms the most trans isomers.",
			Catalyst: Catalyst{
				LinolenicSelectivity: 2,
				LinoleicSelectivity:  30,
				TransShare:           0.9,
				IsomerisationRate:    2,
				TransCisEquilibrium:  2.5,
				TransSaturationRate:  0.7,
			},
			Basis: "Palladium gives the most trans of the metals [memory]: φ, isomerisation rate and " +
				"K are set above nickel's, trans saturation slower; selectivities are of the order " +
				"recalled for palladium [memory, order of magnitude].",
		},
		{
			Name:  PresetPlatinum,
			Title: "Platinum",
			Conditions: "Supported platinum catalyst: the platinum-group metal that forms the least " +
				"trans and the most saturates.",
			Catalyst: Catalyst{
				LinolenicSelectivity: 1.5,
				LinoleicSelectivity:  3,
				TransShare:           0.15,
				IsomerisationRate:    0.1,
				TransCisEquilibrium:  2,
				TransSaturationRate:  1,
			},
			Basis: "Platinum gives the least trans and more saturates [memory]: low S_R, low φ and " +
				"little isomerisation; values are orders of magnitude [memory].",
		},
	}
}

// PresetByName returns the preset called name.
func PresetByName(name string) (Preset, bool) {
	for _, p := range Presets() {
		if p.Name == name {
			return p, true
		}
	}
	return Preset{}, false
}
