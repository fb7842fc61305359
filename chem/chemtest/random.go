// Package chemtest holds helpers for tests of the chem packages: random
// profiles for invariant tests. It is imported only by tests.
package chemtest

import (
	"math"
	"math/rand/v2"

	"lipidsvc/chem"
)

// RandomEntries draws 1 to maxAcids distinct acids of cat with shares spread
// over two decades (as real profiles have major and minor acids), scaled to
// sum to 100 on the FAME weight basis.
func RandomEntries(rng *rand.Rand, cat *chem.Catalogue, maxAcids int) []chem.Entry {
	acids := cat.Acids()
	m := 1 + rng.IntN(maxAcids)
	seen := make(map[string]bool, m)
	entries := make([]chem.Entry, 0, m)
	for len(entries) < m {
		a := acids[rng.IntN(len(acids))]
		if seen[a.ID] {
			continue
		}
		seen[a.ID] = true
		entries = append(entries, chem.Entry{Acid: a.ID, Percent: math.Pow(10, 2*rng.Float64()-1)})
	}
	var sum float64
	for _, e := range entries {
		sum += e.Percent
	}
	for i := range entries {
		// A single acid must not round to 100.00000000000001.
		entries[i].Percent = math.Min(100, entries[i].Percent*100/sum)
	}
	return entries
}
