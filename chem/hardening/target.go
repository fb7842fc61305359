package hardening

import "fmt"

// DefaultIodineValueBasis: a final iodine value is read on the feed basis
// unless the caller says it was (or will be) measured on the product.
const DefaultIodineValueBasis = FeedBasis

// IodineValueBasis says per what mass a final iodine value is stated. The
// zero value is [FeedBasis].
type IodineValueBasis int

const (
	// FeedBasis states the final iodine value per 100 g of the original feed:
	// the hydrogen demand is then exactly (IV_feed − IV_final) ×
	// HydrogenMolPerTonnePerIodineValue.
	FeedBasis IodineValueBasis = iota
	// ProductBasis states the final iodine value per 100 g of the hardened
	// product, which is heavier than the feed by the hydrogen it took up; it
	// is what a laboratory measures on a sample of the product. With n mol H2
	// taken up per gram of feed,
	//   IV_final = 100·M(I2)·(IV_feed/(100·M(I2)) − n) / (1 + M(H2)·n),
	// so n = (IV_feed − IV_final) / (100·M(I2) + M(H2)·IV_final), slightly
	// less than on the feed basis.
	ProductBasis
)

// String returns "feed" or "product".
func (b IodineValueBasis) String() string {
	switch b {
	case FeedBasis:
		return "feed"
	case ProductBasis:
		return "product"
	default:
		return fmt.Sprintf("IodineValueBasis(%d)", int(b))
	}
}

// TargetKind says how a hardening target is given.
type TargetKind int

const (
	// TargetFinalIodineValue: Target.Value is the final iodine value.
	TargetFinalIodineValue TargetKind = iota + 1
	// TargetIodineValueDrop: Target.Value is the drop in iodine value; the
	// final iodine value is the feed's minus the drop, read on the request's
	// basis like any final iodine value.
	TargetIodineValueDrop
)

// Target is where hardening should stop. Build one with [FinalIodineValue] or
// [IodineValueDrop]; the zero value has no kind and is rejected.
type Target struct {
	Kind TargetKind
	// Value is the final iodine value or the drop, g I2 per 100 g.
	Value float64
}

// FinalIodineValue returns a target of a final iodine value iv.
func FinalIodineValue(iv float64) Target {
	return Target{Kind: TargetFinalIodineValue, Value: iv}
}

// IodineValueDrop returns a target of lowering the iodine value by drop.
func IodineValueDrop(drop float64) Target {
	return Target{Kind: TargetIodineValueDrop, Value: drop}
}

// TargetHydrogenKgPerTonne asks [Forecast] to stop when the oil has taken
// up Target.Value kg of H2 per tonne of feed. [HydrogenDemand] does not
// accept it (it answers the inverse question).
const TargetHydrogenKgPerTonne TargetKind = TargetIodineValueDrop + 1

// HydrogenKgPerTonne returns a target of kg H2 taken up per tonne of feed.
func HydrogenKgPerTonne(kg float64) Target {
	return Target{Kind: TargetHydrogenKgPerTonne, Value: kg}
}

// ParseIodineValueBasis reads a basis by its contract name, "feed" or
// "product"; "" is the default, [DefaultIodineValueBasis].
func ParseIodineValueBasis(s string) (IodineValueBasis, bool) {
	switch s {
	case "":
		return DefaultIodineValueBasis, true
	case "feed":
		return FeedBasis, true
	case "product":
		return ProductBasis, true
	}
	return 0, false
}
