package chem

import (
	"fmt"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
)

// Catalogue is the set of fatty acids the service knows, with lookup by
// canonical ID and by name. Its acids never change after construction and
// it is safe for concurrent use; the only thing that changes is a bounded
// memo of labels already read (see [LabelCacheSize]), which returns exactly
// what reading the label again would.
type Catalogue struct {
	acids  []*FattyAcid
	byID   map[string]*FattyAcid
	byName map[string]*FattyAcid
	// groups lists the entries per "C:D" (and hydroxy flag) shorthand.
	groups map[groupKey][]*FattyAcid
	// chains lists the entries other than hydroxy acids per (carbons,
	// double bonds), branched ones included, in catalogue order.
	chains map[[2]int][]*FattyAcid
	// names[i] are the normalised names of acids[i], for suggestions.
	names [][]string
	// labels memoises successful label readings, keyed by the label as
	// given: a laboratory's exports repeat the same spellings, and reading
	// one costs far more than the chemistry it feeds.
	labels     sync.Map // string → Resolution
	labelCount atomic.Int64
}

// LabelCacheSize bounds the memo of label readings a Catalogue keeps. Past
// it new labels are read every time, so a stream of distinct labels cannot
// grow the memory of a long-running process.
const LabelCacheSize = 8192

func (c *Catalogue) cachedLabel(label string) (Resolution, bool) {
	r, ok := c.labels.Load(label)
	if !ok {
		return Resolution{}, false
	}
	return r.(Resolution), true
}

func (c *Catalogue) rememberLabel(label string, r Resolution) {
	if c.labelCount.Load() >= LabelCacheSize {
		return
	}
	if _, loaded := c.labels.LoadOrStore(label, r); !loaded {
		c.labelCount.Add(1)
	}
}

type groupKey struct {
	carbons, d int
	hydroxy    bool
	branch     Branch
}

// acidDef is one row of the built-in catalogue. bonds uses the canonical
// notation ("c9,c12"); "t" alone marks a lumped trans entry.
type acidDef struct {
	carbons    int
	d          int
	bonds      string
	hydroxy    int
	common     string
	systematic string
	names      []string
	preferred  bool
	branch     Branch
}

// builtinAcids is the reference list. Structures follow IUPAC-IUBMB lipid
// nomenclature; names are the trade's usual trivial names.
var builtinAcids = []acidDef{
	// Saturated, C4–C24 including the odd chains GC profiles report.
	{4, 0, "", 0, "butyric", "butanoic acid", nil, true, Unbranched},
	{6, 0, "", 0, "caproic", "hexanoic acid", nil, true, Unbranched},
	{8, 0, "", 0, "caprylic", "octanoic acid", nil, true, Unbranched},
	{10, 0, "", 0, "capric", "decanoic acid", nil, true, Unbranched},
	{11, 0, "", 0, "undecylic", "undecanoic acid", []string{"undecanoic"}, true, Unbranched},
	{12, 0, "", 0, "lauric", "dodecanoic acid", nil, true, Unbranched},
	{13, 0, "", 0, "tridecylic", "tridecanoic acid", []string{"tridecanoic"}, true, Unbranched},
	{14, 0, "", 0, "myristic", "tetradecanoic acid", nil, true, Unbranched},
	{15, 0, "", 0, "pentadecylic", "pentadecanoic acid", []string{"pentadecanoic"}, true, Unbranched},
	{16, 0, "", 0, "palmitic", "hexadecanoic acid", nil, true, Unbranched},
	{17, 0, "", 0, "margaric", "heptadecanoic acid", []string{"heptadecanoic"}, true, Unbranched},
	{18, 0, "", 0, "stearic", "octadecanoic acid", nil, true, Unbranched},
	{19, 0, "", 0, "nonadecylic", "nonadecanoic acid", []string{"nonadecanoic"}, true, Unbranched},
	{20, 0, "", 0, "arachidic", "icosanoic acid", []string{"eicosanoic"}, true, Unbranched},
	{21, 0, "", 0, "heneicosylic", "henicosanoic acid", []string{"heneicosanoic"}, true, Unbranched},
	{22, 0, "", 0, "behenic", "docosanoic acid", nil, true, Unbranched},
	{23, 0, "", 0, "tricosylic", "tricosanoic acid", []string{"tricosanoic"}, true, Unbranched},
	{24, 0, "", 0, "lignoceric", "tetracosanoic acid", nil, true, Unbranched},
	// Branched saturated acids of ruminant, dairy and fish fats
	// (IUPAC names; iso = ω-1 methyl, anteiso = ω-2 methyl).
	{14, 0, "", 0, "", "12-methyltridecanoic acid", []string{"isomyristic"}, true, Iso},
	{15, 0, "", 0, "", "13-methyltetradecanoic acid", []string{"isopentadecanoic"}, true, Iso},
	{15, 0, "", 0, "", "12-methyltetradecanoic acid", []string{"anteisopentadecanoic"}, true, Anteiso},
	{16, 0, "", 0, "", "14-methylpentadecanoic acid", []string{"isopalmitic"}, true, Iso},
	{17, 0, "", 0, "", "15-methylhexadecanoic acid", []string{"isoheptadecanoic"}, true, Iso},
	{17, 0, "", 0, "", "14-methylhexadecanoic acid", []string{"anteisoheptadecanoic"}, true, Anteiso},

	// Monoenes.
	{10, 1, "c9", 0, "caproleic", "(9Z)-dec-9-enoic acid", nil, true, Unbranched},
	{12, 1, "c9", 0, "lauroleic", "(9Z)-dodec-9-enoic acid", nil, true, Unbranched},
	{14, 1, "c9", 0, "myristoleic", "(9Z)-tetradec-9-enoic acid", nil, true, Unbranched},
	{16, 1, "c7", 0, "hypogeic", "(7Z)-hexadec-7-enoic acid", nil, false, Unbranched},
	{16, 1, "c9", 0, "palmitoleic", "(9Z)-hexadec-9-enoic acid", nil, true, Unbranched},
	{16, 1, "t9", 0, "palmitelaidic", "(9E)-hexadec-9-enoic acid", nil, false, Unbranched},
	{16, 1, "t", 0, "", "trans-hexadecenoic acids, positions not resolved", []string{"trans-palmitoleic"}, false, Unbranched},
	{17, 1, "c10", 0, "", "(10Z)-heptadec-10-enoic acid", []string{"heptadecenoic", "margaroleic"}, true, Unbranched},
	{18, 1, "c6", 0, "petroselinic", "(6Z)-octadec-6-enoic acid", nil, false, Unbranched},
	{18, 1, "c9", 0, "oleic", "(9Z)-octadec-9-enoic acid", nil, true, Unbranched},
	{18, 1, "t6", 0, "petroselaidic", "(6E)-octadec-6-enoic acid", nil, false, Unbranched},
	{18, 1, "t7", 0, "", "(7E)-octadec-7-enoic acid", nil, false, Unbranched},
	{18, 1, "t8", 0, "", "(8E)-octadec-8-enoic acid", nil, false, Unbranched},
	{18, 1, "t9", 0, "elaidic", "(9E)-octadec-9-enoic acid", nil, false, Unbranched},
	{18, 1, "t10", 0, "", "(10E)-octadec-10-enoic acid", nil, false, Unbranched},
	{18, 1, "c11", 0, "cis-vaccenic", "(11Z)-octadec-11-enoic acid", []string{"asclepic"}, false, Unbranched},
	// "Vaccenic" alone is used for both the trans-11 and the cis-11 acid, so
	// only the qualified names are accepted.
	{18, 1, "t11", 0, "trans-vaccenic", "(11E)-octadec-11-enoic acid", nil, false, Unbranched},
	{18, 1, "t", 0, "", "trans-octadecenoic acids, positions not resolved", []string{"trans-oleic", "total trans 18:1"}, false, Unbranched},
	{20, 1, "c9", 0, "gadoleic", "(9Z)-icos-9-enoic acid", nil, false, Unbranched},
	{20, 1, "c11", 0, "gondoic", "(11Z)-icos-11-enoic acid", []string{"eicosenoic"}, true, Unbranched},
	{20, 1, "t", 0, "", "trans-icosenoic acids, positions not resolved", nil, false, Unbranched},
	{22, 1, "c11", 0, "cetoleic", "(11Z)-docos-11-enoic acid", nil, false, Unbranched},
	{22, 1, "c13", 0, "erucic", "(13Z)-docos-13-enoic acid", nil, true, Unbranched},
	{22, 1, "t", 0, "", "trans-docosenoic acids, positions not resolved", nil, false, Unbranched},
	{24, 1, "c15", 0, "nervonic", "(15Z)-tetracos-15-enoic acid", nil, true, Unbranched},
	{18, 1, "c9", 12, "ricinoleic", "(9Z,12R)-12-hydroxyoctadec-9-enoic acid", nil, true, Unbranched},

	// Dienes.
	{16, 2, "c9,c12", 0, "", "(9Z,12Z)-hexadeca-9,12-dienoic acid", []string{"hexadecadienoic"}, true, Unbranched},
	{18, 2, "c9,c12", 0, "linoleic", "(9Z,12Z)-octadeca-9,12-dienoic acid", nil, true, Unbranched},
	{18, 2, "t9,t12", 0, "linoelaidic", "(9E,12E)-octadeca-9,12-dienoic acid", nil, false, Unbranched},
	{18, 2, "c9,t12", 0, "", "(9Z,12E)-octadeca-9,12-dienoic acid", nil, false, Unbranched},
	{18, 2, "t9,c12", 0, "", "(9E,12Z)-octadeca-9,12-dienoic acid", nil, false, Unbranched},
	{18, 2, "c9,t11", 0, "rumenic", "(9Z,11E)-octadeca-9,11-dienoic acid", nil, false, Unbranched},
	{18, 2, "t10,c12", 0, "", "(10E,12Z)-octadeca-10,12-dienoic acid", nil, false, Unbranched},
	{18, 2, "t", 0, "", "trans-octadecadienoic acids, positions not resolved", []string{"trans-linoleic"}, false, Unbranched},
	{20, 2, "c11,c14", 0, "", "(11Z,14Z)-icosa-11,14-dienoic acid", []string{"eicosadienoic"}, true, Unbranched},
	{22, 2, "c13,c16", 0, "", "(13Z,16Z)-docosa-13,16-dienoic acid", []string{"docosadienoic"}, true, Unbranched},

	// Trienes and higher.
	{16, 3, "c6,c9,c12", 0, "", "(6Z,9Z,12Z)-hexadeca-6,9,12-trienoic acid", []string{"hexadecatrienoic"}, true, Unbranched},
	{16, 4, "c6,c9,c12,c15", 0, "", "(6Z,9Z,12Z,15Z)-hexadeca-6,9,12,15-tetraenoic acid", []string{"hexadecatetraenoic"}, true, Unbranched},
	{18, 3, "c6,c9,c12", 0, "gamma-linolenic", "(6Z,9Z,12Z)-octadeca-6,9,12-trienoic acid", []string{"gla"}, false, Unbranched},
	{18, 3, "c9,c12,c15", 0, "alpha-linolenic", "(9Z,12Z,15Z)-octadeca-9,12,15-trienoic acid", []string{"linolenic", "ala"}, true, Unbranched},
	{18, 3, "t", 0, "", "trans-octadecatrienoic acids, positions not resolved", []string{"trans-linolenic"}, false, Unbranched},
	{20, 3, "c8,c11,c14", 0, "dihomo-gamma-linolenic", "(8Z,11Z,14Z)-icosa-8,11,14-trienoic acid", []string{"dgla"}, false, Unbranched},
	{20, 3, "c11,c14,c17", 0, "", "(11Z,14Z,17Z)-icosa-11,14,17-trienoic acid", nil, false, Unbranched},
	{18, 4, "c6,c9,c12,c15", 0, "stearidonic", "(6Z,9Z,12Z,15Z)-octadeca-6,9,12,15-tetraenoic acid", []string{"sda"}, true, Unbranched},
	{20, 4, "c5,c8,c11,c14", 0, "arachidonic", "(5Z,8Z,11Z,14Z)-icosa-5,8,11,14-tetraenoic acid", []string{"ara", "aa"}, true, Unbranched},
	{20, 4, "c8,c11,c14,c17", 0, "", "(8Z,11Z,14Z,17Z)-icosa-8,11,14,17-tetraenoic acid", nil, false, Unbranched},
	{20, 5, "c5,c8,c11,c14,c17", 0, "eicosapentaenoic", "(5Z,8Z,11Z,14Z,17Z)-icosa-5,8,11,14,17-pentaenoic acid", []string{"epa", "timnodonic"}, true, Unbranched},
	{21, 5, "c6,c9,c12,c15,c18", 0, "", "(6Z,9Z,12Z,15Z,18Z)-henicosa-6,9,12,15,18-pentaenoic acid", []string{"heneicosapentaenoic", "hpa"}, true, Unbranched},
	{22, 4, "c7,c10,c13,c16", 0, "adrenic", "(7Z,10Z,13Z,16Z)-docosa-7,10,13,16-tetraenoic acid", nil, true, Unbranched},
	{22, 5, "c4,c7,c10,c13,c16", 0, "osbond", "(4Z,7Z,10Z,13Z,16Z)-docosa-4,7,10,13,16-pentaenoic acid", []string{"dpa n-6"}, false, Unbranched},
	{22, 5, "c7,c10,c13,c16,c19", 0, "clupanodonic", "(7Z,10Z,13Z,16Z,19Z)-docosa-7,10,13,16,19-pentaenoic acid", []string{"dpa n-3"}, false, Unbranched},
	{22, 6, "c4,c7,c10,c13,c16,c19", 0, "docosahexaenoic", "(4Z,7Z,10Z,13Z,16Z,19Z)-docosa-4,7,10,13,16,19-hexaenoic acid", []string{"dha", "cervonic"}, true, Unbranched},
}

// NewCatalogue builds the built-in catalogue. It panics only if the built-in
// table itself is inconsistent, which the tests rule out.
func NewCatalogue() *Catalogue {
	c := &Catalogue{
		byID:   make(map[string]*FattyAcid),
		byName: make(map[string]*FattyAcid),
		groups: make(map[groupKey][]*FattyAcid),
		chains: make(map[[2]int][]*FattyAcid),
	}
	for _, def := range builtinAcids {
		a, err := def.build()
		if err != nil {
			panic(err)
		}
		if _, dup := c.byID[strings.ToLower(a.ID)]; dup {
			panic("chem: duplicate catalogue id " + a.ID)
		}
		c.acids = append(c.acids, a)
		c.names = append(c.names, a.allNames())
		c.byID[strings.ToLower(a.ID)] = a
		k := groupKey{a.Carbons, a.DoubleBondCount, a.HydroxyPosition > 0, a.Branch}
		c.groups[k] = append(c.groups[k], a)
		if a.HydroxyPosition == 0 {
			ck := [2]int{a.Carbons, a.DoubleBondCount}
			c.chains[ck] = append(c.chains[ck], a)
		}
		for _, n := range a.allNames() {
			if other, dup := c.byName[n]; dup && other != a {
				panic("chem: name " + n + " names two acids")
			}
			c.byName[n] = a
		}
	}
	return c
}

func (d acidDef) build() (*FattyAcid, error) {
	a := &FattyAcid{
		Carbons:         d.carbons,
		DoubleBondCount: d.d,
		HydroxyPosition: d.hydroxy,
		CommonName:      d.common,
		SystematicName:  d.systematic,
		Preferred:       d.preferred,
		Branch:          d.branch,
	}
	switch {
	case d.bonds == "t":
		a.LumpedGeometry = Trans
	case d.bonds != "":
		for _, part := range strings.Split(d.bonds, ",") {
			g := Cis
			if part[0] == 't' {
				g = Trans
			}
			pos, err := strconv.Atoi(part[1:])
			if err != nil {
				return nil, fmt.Errorf("chem: bad bond %q in catalogue", part)
			}
			a.Bonds = append(a.Bonds, DoubleBond{Position: pos, Geometry: g})
		}
		if len(a.Bonds) != d.d {
			return nil, fmt.Errorf("chem: %d:%d lists %d bonds", d.carbons, d.d, len(a.Bonds))
		}
	case d.d > 0:
		return nil, fmt.Errorf("chem: %d:%d has no bonds", d.carbons, d.d)
	}
	a.ID = canonicalID(a.Carbons, a.DoubleBondCount, a.Bonds, a.LumpedGeometry, a.HydroxyPosition, a.Branch)
	for _, n := range d.names {
		a.Names = append(a.Names, strings.ToLower(n))
	}
	return a, nil
}

// allNames lists the normalised names under which the acid can be found.
func (a *FattyAcid) allNames() []string {
	var out []string
	add := func(s string) {
		if s != "" {
			out = append(out, normaliseName(s))
		}
	}
	add(a.CommonName)
	if a.CommonName != "" && a.Carbons >= 4 {
		// Trivial names take the trade's "-ic" form; accept "oleic acid" too.
		add(a.CommonName + " acid")
	}
	add(a.SystematicName)
	add(strings.TrimSuffix(a.SystematicName, " acid"))
	for _, n := range a.Names {
		add(n)
	}
	for _, n := range a.locantNames() {
		add(n)
	}
	return out
}

// systematicStemRe splits an IUPAC name such as
// "(9Z,12Z)-octadeca-9,12-dienoic acid" into the chain stem "octadeca" and
// the ending "dienoic".
var systematicStemRe = regexp.MustCompile(`^\([^)]*\)-([a-z]+)-[\d,]+-([a-z]+) acid$`)

// locantNames are the older systematic spellings laboratories and FAME
// standard lists use, with cis/trans locants: "cis-9-octadecenoic",
// "cis,cis-9,12-octadecadienoic" and "cis-9,cis-12-octadecadienoic" (and
// "eicos…" beside the current "icos…"). Only for acids whose bonds are all
// resolved and that carry no hydroxy group.
func (a *FattyAcid) locantNames() []string {
	if len(a.Bonds) == 0 || a.HydroxyPosition != 0 {
		return nil
	}
	m := systematicStemRe.FindStringSubmatch(a.SystematicName)
	if m == nil {
		return nil
	}
	stems := []string{m[1] + m[2]}
	if strings.HasPrefix(m[1], "icos") {
		stems = append(stems, "e"+m[1]+m[2])
	}
	geo := make([]string, len(a.Bonds))
	pos := make([]string, len(a.Bonds))
	pairs := make([]string, len(a.Bonds))
	for i, b := range a.Bonds {
		geo[i] = "cis"
		if b.Geometry == Trans {
			geo[i] = "trans"
		}
		pos[i] = strconv.Itoa(b.Position)
		pairs[i] = geo[i] + "-" + pos[i]
	}
	var out []string
	for _, stem := range stems {
		out = append(out, strings.Join(geo, ",")+"-"+strings.Join(pos, ",")+"-"+stem)
		if len(a.Bonds) > 1 {
			out = append(out, strings.Join(pairs, ",")+"-"+stem)
		}
	}
	return out
}

// Acids returns the catalogue entries ordered by number of double bonds,
// then chain length. The slice is a copy; the entries are shared and must not be
// modified.
func (c *Catalogue) Acids() []*FattyAcid {
	out := make([]*FattyAcid, len(c.acids))
	copy(out, c.acids)
	sort.SliceStable(out, func(i, j int) bool {
		if out[i].DoubleBondCount != out[j].DoubleBondCount {
			return out[i].DoubleBondCount < out[j].DoubleBondCount
		}
		return out[i].Carbons < out[j].Carbons
	})
	return out
}

// Chains returns the entries with the given number of carbons and double
// bonds, hydroxy acids left out and branched ones included, in catalogue
// order (the order of Acids within one C:D). The slice is shared and must
// not be modified.
func (c *Catalogue) Chains(carbons, doubleBonds int) []*FattyAcid {
	return c.chains[[2]int{carbons, doubleBonds}]
}

// ByID returns the acid with the given canonical ID (case-insensitive).
func (c *Catalogue) ByID(id string) (*FattyAcid, bool) {
	a, ok := c.byID[strings.ToLower(strings.TrimSpace(id))]
	return a, ok
}

// Len is the number of acids in the catalogue.
func (c *Catalogue) Len() int { return len(c.acids) }
