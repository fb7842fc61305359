package hardening

// cautions travel with every hardening answer: the service computes, it
// does not authorise operating a plant.
var cautions = []string{
	"Hydrogen is extremely flammable and forms explosive mixtures with air over a wide range (about 4 to 75 % by volume); purge, inert and leak-test per the plant's procedures.",
	"Hardening runs hot and under pressure and releases heat as it proceeds; the adiabatic rise shows what happens without cooling, not a safe operating temperature.",
	"Nickel catalysts are skin and respiratory sensitisers, and spent catalyst can self-heat in air; handle and store it wet or inerted as local rules require.",
	"These figures are estimates for planning. Operation follows the plant's procedures, local codes and licensed engineering practice.",
}

// Cautions returns the safety cautions every answer about a hardening batch
// (its hydrogen, its heat, its product) must carry.
func Cautions() []string { return append([]string(nil), cautions...) }
