package chem

import (
	"fmt"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Resolution is the outcome of reading one laboratory label.
type Resolution struct {
	// Acid is the catalogue entry the label names; nil when Unidentified.
	Acid *FattyAcid
	// Unidentified is set for "unidentified", "others" and similar entries
	// that count in the profile's sum but carry no structure.
	Unidentified bool
	// Assumption explains, when non-empty, that the label did not fix the
	// isomer and the common one was taken.
	Assumption string
}

// unidentifiedLabels are the spellings laboratories use for the remainder of
// a chromatogram.
var unidentifiedLabels = map[string]bool{
	"unidentified": true, "unidentified peaks": true, "unknown": true, "unknowns": true,
	"others": true, "other": true, "rest": true, "remainder": true, "not identified": true,
	"n.i.": true, "ni": true, "unid": true, "unid.": true,
}

var (
	// shorthandRe splits "C18:1 n-9" style labels into chain, double bonds
	// and qualifiers. An optional "FA" (LIPID MAPS) or "C" prefix is allowed.
	shorthandRe = regexp.MustCompile(`^(?:fa\s*)?(?:(iso|anteiso|ai|i|a)[-\s]?)?c?\s*(\d{1,2})\s*:\s*(\d{1,2})(.*)$`)
	splitRe     = regexp.MustCompile(`[\s,;/()\[\]]+`)
	omegaRe     = regexp.MustCompile(`^(?:n|w)-?(\d{1,2})(c|t|cis|trans)?$`)
	bondPreRe   = regexp.MustCompile(`^(c|t|cis|trans|z|e)-?(\d{1,2})$`)
	bondPostRe  = regexp.MustCompile(`^(\d{1,2})-?(c|t|z|e|cis|trans)?$`)
	hydroxyRe   = regexp.MustCompile(`^(\d{1,2})?-?oh$`)
)

// labelFolder folds Greek letters, omega and delta signs and typographic
// dashes into the ASCII spellings the parser reads. It is read-only.
var labelFolder = strings.NewReplacer(
	"α", "alpha", "γ", "gamma", "ω-", "n-", "ω", "n-", "Ω", "n-",
	"omega-", "n-", "omega ", "n-", "omega", "n-",
	"-δ", "-", "-Δ", "-", "δ", " ", "Δ", " ", "delta", " ",
	"‐", "-", "‑", "-", "‒", "-", "–", "-", "—", "-", "−", "-",
	"\u00a0", " ", "\t", " ",
)

// labelSpacer joins Greek-letter prefixes to the name they qualify.
var labelSpacer = strings.NewReplacer("alpha ", "alpha-", "gamma ", "gamma-")

// normaliseName folds case, Greek letters and typographic dashes so that
// names and labels compare reliably.
func normaliseName(s string) string {
	s = labelFolder.Replace(strings.ToLower(strings.TrimSpace(s)))
	// A second pass joins what the first produced ("α linolenic" →
	// "alpha linolenic" → "alpha-linolenic").
	s = strings.Join(strings.Fields(s), " ")
	return labelSpacer.Replace(s)
}

// query is what a shorthand label says about an acid.
type query struct {
	carbons, d int
	omega      int
	bonds      []DoubleBond
	geometry   Geometry // overall geometry when given without positions
	hydroxy    bool
	hydroxyPos int
	branch     Branch
	qualified  bool // anything beyond "C:D" was given
}

// Resolve reads one label as laboratories export it: shorthand ("16:0",
// "C18:1n9c", "18:1 ω-9", "18:1 t9", "18:1(9Z)", "FA 18:1(9Z)",
// "18:2 c9,t12"), common or systematic names ("oleic", "EPA",
// "methyl linoleate"), or a catalogue ID. An unknown or ambiguous label is a
// KindInvalid *Error carrying suggestions.
func (c *Catalogue) Resolve(label string) (Resolution, error) {
	return c.resolve(label, true)
}

// resolve is Resolve with the (costlier) search for suggestions optional.
// Successful readings are memoised; failures are not (they are rare in
// steady traffic, and their suggestions depend on suggest).
func (c *Catalogue) resolve(label string, suggest bool) (Resolution, error) {
	if r, ok := c.cachedLabel(label); ok {
		return r, nil
	}
	r, err := c.read(label, suggest)
	if err == nil {
		c.rememberLabel(label, r)
	}
	return r, err
}

// read reads one label without the memo.
func (c *Catalogue) read(label string, suggest bool) (Resolution, error) {
	n := normaliseName(label)
	if n == "" {
		return Resolution{}, Errorf(KindInvalid, "empty fatty-acid label")
	}
	if unidentifiedLabels[n] {
		return Resolution{Unidentified: true}, nil
	}
	if a, ok := c.byID[n]; ok {
		return Resolution{Acid: a}, nil
	}
	if a, ok := c.lookupName(n); ok {
		return Resolution{Acid: a}, nil
	}
	if r, handled, err := c.readExportForm(label, n, suggest); handled {
		return r, err
	}
	m := shorthandRe.FindStringSubmatch(n)
	if m == nil {
		return Resolution{}, c.unknown(label, nil, suggest)
	}
	q := query{branch: branchWord(m[1])}
	q.carbons, _ = strconv.Atoi(m[2])
	q.d, _ = strconv.Atoi(m[3])
	if err := q.parseQualifiers(m[4]); err != nil {
		return Resolution{}, c.unknown(label, &q, suggest)
	}
	return c.match(label, q, suggest)
}

// lookupName tries the name as given and in its ester and "-ate" forms
// ("methyl oleate" → "oleic").
func (c *Catalogue) lookupName(n string) (*FattyAcid, bool) {
	cands := []string{n}
	base := strings.TrimPrefix(strings.TrimPrefix(n, "methyl "), "fame ")
	base = strings.TrimSuffix(strings.TrimSuffix(base, " methyl ester"), " acid")
	cands = append(cands, base)
	if strings.HasSuffix(base, "ate") {
		cands = append(cands, strings.TrimSuffix(base, "ate")+"ic")
	}
	for _, s := range cands {
		if a, ok := c.byName[s]; ok {
			return a, true
		}
	}
	return nil, false
}

func geometryWord(s string) Geometry {
	switch s {
	case "c", "cis", "z":
		return Cis
	case "t", "trans", "e":
		return Trans
	}
	return GeometryUnknown
}

func (q *query) parseQualifiers(rest string) error {
	rest = strings.TrimSpace(rest)
	if rest == "" {
		return nil
	}
	q.qualified = true
	// Glued forms such as "n9c", "c9t12", "9z12z" are split into tokens.
	for _, tok := range splitRe.Split(rest, -1) {
		if tok == "" {
			continue
		}
		if err := q.parseToken(tok); err != nil {
			return err
		}
	}
	sort.Slice(q.bonds, func(i, j int) bool { return q.bonds[i].Position < q.bonds[j].Position })
	return nil
}

// branchWord reads an iso/anteiso prefix or token.
func branchWord(s string) Branch {
	switch s {
	case "i", "iso":
		return Iso
	case "a", "ai", "anteiso":
		return Anteiso
	}
	return Unbranched
}

func (q *query) parseToken(tok string) error {
	switch tok {
	case "iso", "anteiso", "ai":
		if q.branch != Unbranched && q.branch != branchWord(tok) {
			return fmt.Errorf("both iso and anteiso given")
		}
		q.branch = branchWord(tok)
		return nil
	}
	switch {
	case tok == "all-cis" || tok == "all-z" || tok == "cis" || tok == "c" || tok == "z":
		return q.setGeometry(Cis)
	case tok == "trans" || tok == "t" || tok == "e" || tok == "all-trans" || tok == "all-e":
		return q.setGeometry(Trans)
	}
	if m := hydroxyRe.FindStringSubmatch(tok); m != nil {
		q.hydroxy = true
		if m[1] != "" {
			q.hydroxyPos, _ = strconv.Atoi(m[1])
		}
		return nil
	}
	if m := omegaRe.FindStringSubmatch(tok); m != nil {
		omega, _ := strconv.Atoi(m[1])
		// Two families ("C18:1n9/n7") name co-eluting isomers, not one acid.
		if omega == 0 || (q.omega != 0 && q.omega != omega) {
			return fmt.Errorf("more than one n-x family, or n-0")
		}
		q.omega = omega
		if m[2] != "" {
			return q.setGeometry(geometryWord(m[2]))
		}
		return nil
	}
	// "cis-9", "c9", "t11", "9z", "12e", "9" and runs such as "c9t12".
	for tok != "" {
		if m := bondPreRe.FindStringSubmatch(leadingBond(tok, true)); m != nil {
			pos, _ := strconv.Atoi(m[2])
			q.bonds = append(q.bonds, DoubleBond{Position: pos, Geometry: geometryWord(m[1])})
			tok = tok[len(m[0]):]
			continue
		}
		if m := bondPostRe.FindStringSubmatch(leadingBond(tok, false)); m != nil {
			pos, _ := strconv.Atoi(m[1])
			g := geometryWord(m[2])
			if g == GeometryUnknown && len(q.bonds) > 0 {
				// "cis-9,12" is cis-9,cis-12: a bare position in a list
				// takes the geometry written before it.
				g = q.bonds[len(q.bonds)-1].Geometry
			}
			q.bonds = append(q.bonds, DoubleBond{Position: pos, Geometry: g})
			tok = tok[len(m[0]):]
			continue
		}
		return fmt.Errorf("unreadable qualifier %q", tok)
	}
	return nil
}

// leadingBondRe finds one bond at the start of a glued run.
var (
	leadPreRe  = regexp.MustCompile(`^(cis|trans|c|t|z|e)-?\d{1,2}`)
	leadPostRe = regexp.MustCompile(`^\d{1,2}(?:-?(?:cis|trans|c|t|z|e))?`)
)

func leadingBond(tok string, prefixed bool) string {
	if prefixed {
		return leadPreRe.FindString(tok)
	}
	return leadPostRe.FindString(tok)
}

func (q *query) setGeometry(g Geometry) error {
	if q.geometry != GeometryUnknown && q.geometry != g {
		return fmt.Errorf("both cis and trans given")
	}
	q.geometry = g
	return nil
}

// readAs resolves a label that does not fix the isomer to a, saying so
// and why a was taken.
func readAs(label string, a *FattyAcid, why string) Resolution {
	name := a.CommonName
	if name == "" {
		name = a.SystematicName
	}
	return Resolution{Acid: a, Assumption: fmt.Sprintf(
		"label %q does not fix the isomer; read as %s (%s), %s", label, a.ID, name, why)}
}

// match picks the catalogue entry a parsed shorthand label names.
func (c *Catalogue) match(label string, q query, suggest bool) (Resolution, error) {
	group := c.groups[groupKey{q.carbons, q.d, q.hydroxy, q.branch}]
	if len(group) == 0 {
		return Resolution{}, c.unknown(label, &q, suggest)
	}
	if len(q.bonds) > 0 && len(q.bonds) != q.d {
		return Resolution{}, c.unknown(label, &q, suggest)
	}
	// The n-x notation names cis, methylene-interrupted acids
	// (IUPAC-IUBMB): without a geometry or positions it never names a trans
	// or conjugated isomer, even when that is the only one with the n-x.
	nx := q.omega != 0 && q.geometry == GeometryUnknown && len(q.bonds) == 0
	var cands []*FattyAcid
	for _, a := range group {
		if q.matches(a) && (!nx || a.AllCis() && !a.Conjugated()) {
			cands = append(cands, a)
		}
	}
	switch {
	case len(cands) == 1:
		a := cands[0]
		// A label without positions or n-x ("20:2", "22:6") names a
		// structure only because the catalogue holds one isomer of it:
		// say so, as for the bare labels of groups with several.
		if a.DoubleBondCount > 0 && a.LumpedGeometry == GeometryUnknown && len(q.bonds) == 0 && q.omega == 0 && !q.hydroxy {
			return readAs(label, a, "the only one in the catalogue"), nil
		}
		return Resolution{Acid: a}, nil
	case len(cands) == 0:
		return Resolution{}, c.unknown(label, &q, suggest)
	}
	// Several isomers fit. Positions unresolved but trans named: the lumped
	// trans entry is what the laboratory reported.
	if len(q.bonds) == 0 && q.omega == 0 && q.geometry == Trans {
		for _, a := range cands {
			if a.LumpedGeometry == Trans {
				return Resolution{Acid: a}, nil
			}
		}
	}
	// "C18:2n6t" in FAME reference mixtures is the all-trans isomer.
	if q.omega != 0 && q.geometry == Trans && len(q.bonds) == 0 {
		var allTrans []*FattyAcid
		for _, a := range cands {
			if a.allGeometry(Trans) {
				allTrans = append(allTrans, a)
			}
		}
		if len(allTrans) == 1 {
			a := allTrans[0]
			return Resolution{Acid: a, Assumption: fmt.Sprintf(
				"label %q is read as the all-trans isomer %s, as in FAME reference mixtures", label, a.ID)}, nil
		}
	}
	// A bare "C:D" (or "C:D cis") is read as the common isomer, and said so.
	if len(q.bonds) == 0 && q.omega == 0 && q.geometry != Trans {
		for _, a := range cands {
			if a.Preferred {
				return readAs(label, a, "the common one"), nil
			}
		}
	}
	ids := make([]string, len(cands))
	for i, a := range cands {
		ids[i] = a.ID
	}
	e := Errorf(KindInvalid, "fatty-acid label %q is ambiguous: it fits %s", label, strings.Join(ids, ", "))
	e.Suggestions = ids
	return Resolution{}, e
}

func (q *query) matches(a *FattyAcid) bool {
	if q.hydroxyPos != 0 && a.HydroxyPosition != q.hydroxyPos {
		return false
	}
	if len(q.bonds) > 0 {
		if len(a.Bonds) != len(q.bonds) {
			return false
		}
		for i, b := range q.bonds {
			if a.Bonds[i].Position != b.Position {
				return false
			}
			if b.Geometry != GeometryUnknown && a.Bonds[i].Geometry != b.Geometry {
				return false
			}
		}
	}
	if q.omega != 0 && a.OmegaPosition() != q.omega {
		return false
	}
	switch q.geometry {
	case Cis:
		if !a.AllCis() {
			return false
		}
	case Trans:
		if !a.HasTrans() {
			return false
		}
	}
	return true
}

// unknown builds the error for a label that names no catalogue acid, with
// the closest known labels as suggestions.
func (c *Catalogue) unknown(label string, q *query, suggest bool) *Error {
	var sugg []string
	if suggest {
		sugg = c.suggest(normaliseName(label), q)
	}
	msg := fmt.Sprintf("unknown fatty-acid label %q", label)
	if len(sugg) > 0 {
		msg += "; closest known: " + strings.Join(sugg, ", ")
	}
	e := Errorf(KindInvalid, "%s", msg)
	e.Suggestions = sugg
	return e
}

// maxSuggestRunes bounds the edit-distance work for one label.
const maxSuggestRunes = 32

// suggest ranks catalogue IDs and names by closeness to the label: first the
// isomers of the same C:D, then by edit distance.
func (c *Catalogue) suggest(n string, q *query) []string {
	const max = 5
	var out []string
	seen := map[string]bool{}
	add := func(s string) {
		if !seen[s] && len(out) < max {
			seen[s] = true
			out = append(out, s)
		}
	}
	if q != nil {
		for _, hyd := range []bool{q.hydroxy, !q.hydroxy} {
			for _, a := range c.groups[groupKey{q.carbons, q.d, hyd, q.branch}] {
				add(a.ID)
			}
		}
		if len(out) > 0 {
			return out
		}
		// No isomer of that C:D: offer the nearest chains, a double bond
		// weighing like two carbons.
		near := append([]*FattyAcid(nil), c.acids...)
		score := func(a *FattyAcid) int {
			return abs(a.Carbons-q.carbons) + 2*abs(a.DoubleBondCount-q.d)
		}
		sort.SliceStable(near, func(i, j int) bool { return score(near[i]) < score(near[j]) })
		for _, a := range near {
			add(a.ID)
		}
		return out
	}
	type scored struct {
		s    string
		dist int
	}
	var all []scored
	if utf8.RuneCountInString(n) > maxSuggestRunes {
		n = string([]rune(n)[:maxSuggestRunes])
	}
	for i, a := range c.acids {
		best := EditDistance(n, strings.ToLower(a.ID))
		for _, name := range c.names[i] {
			if d := EditDistance(n, name); d < best {
				best = d
			}
		}
		all = append(all, scored{a.ID, best})
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].dist < all[j].dist })
	for _, s := range all {
		if s.dist > utf8.RuneCountInString(n)/2+2 && len(out) >= 3 {
			break
		}
		add(s.s)
	}
	return out
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}

// EditDistance is the Levenshtein distance between two strings, counted
// in runes; the service uses it to suggest known names for misspelt ones.
func EditDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}
