package chem

import (
	"fmt"
	"regexp"
	"strings"
)

// The lines chromatography software exports besides plain acid labels:
// numbered and summed unknown peaks, peaks named by retention time,
// annotated labels ("C20:5 n-3 (EPA)"), "FAME" prefixes, co-eluting trans
// isomers, and summary lines that repeat other lines' sums.

var (
	// unknownPeakRe: "unknown", "unk", "unknown 1", "unknown peak #3",
	// "unidentified peaks", "n.i. 2", "others", "rest", with "sum of",
	// "total" or "(sum)" around them.
	unknownPeakRe = regexp.MustCompile(`^(?:(?:sum|total)(?: of)? )?` +
		`(?:unknowns?|unk\.?|unidentified|unid\.?|not identified|n\.\s?i\.?|ni|others?|other peaks|rest|remainder)` +
		`(?: peaks?)?(?: ?(?:#|no\.?)? ?\d{1,3})?(?: ?\((?:sum|total)\))?$`)
	// retentionRe: a peak named only by its retention time, "RT 23.45",
	// "rt=23.45 min", "peak at 23.45 min", "23.45 min".
	retentionRe = regexp.MustCompile(`^(?:(?:rt|r\.t\.|peak(?: at)?)\s*[=:]?\s*\d{1,3}(?:[.,]\d{1,4})?\s*(?:min|mins|minutes)?|\d{1,3}(?:[.,]\d{1,4})?\s*(?:min|mins|minutes))$`)
	// summaryRe: lines that sum other lines (total trans, SFA, MUFA, PUFA,
	// n-3, …); counting them would count their acids twice.
	summaryRe = regexp.MustCompile(`^(?:(?:sum|total|sum of|total of)\s+)?` +
		`(?:trans(?: fatty acids| fat| isomers)?|tfa|sfa|mufa|pufa|saturated|saturates|monounsaturated|monounsaturates|` +
		`polyunsaturated|polyunsaturates|n-3|n-6|n-9|omega-3|omega-6|omega-9|n-3 pufa|n-6 pufa)` +
		`(?:\s+(?:sum|total))?(?: ?\((?:sum|total)\))?$`)
	// annotationRe splits a trailing parenthesised annotation off a label.
	annotationRe = regexp.MustCompile(`^(.*\S)\s*\(([^()]+)\)$`)
	// coelutingTransRe: a trans range of one chain, "18:1 t6-t8", "18:1
	// trans 6-8", "c18:1 t6/t8".
	coelutingTransRe = regexp.MustCompile(`^(?:fa\s*)?c?\s*(\d{1,2})\s*:\s*1\s*(?:trans[- ]?|t-?)(\d{1,2})\s*(?:-|to|/)\s*t?(\d{1,2})(?:\s*trans)?$`)
)

// exportPrefixes are prefixes GC exports put before the acid.
var exportPrefixes = []string{"fame ", "fame: ", "methyl ester of "}

// annotationMarkers are parenthesised words that only say the line is a
// sum of isomers of the acid named before them.
var annotationMarkers = map[string]bool{"total": true, "sum": true, "sum of isomers": true, "all isomers": true, "isomers": true}

// readAsNames are names that stand for a group of isomers of which one is
// the usual reading, with the reason.
var readAsNames = map[string]struct{ id, why string }{
	"cla":                      {"18:2 c9,t11", "the main conjugated linoleic acid of ruminant fats"},
	"conjugated linoleic":      {"18:2 c9,t11", "the main conjugated linoleic acid of ruminant fats"},
	"conjugated linoleic acid": {"18:2 c9,t11", "the main conjugated linoleic acid of ruminant fats"},
}

// readExportForm reads the special forms above; handled is false when n is
// none of them and the ordinary reading applies. n is the normalised label.
func (c *Catalogue) readExportForm(label, n string, suggest bool) (r Resolution, handled bool, err error) {
	if unknownPeakRe.MatchString(n) || retentionRe.MatchString(n) {
		return Resolution{Unidentified: true}, true, nil
	}
	if summaryRe.MatchString(n) {
		if strings.Contains(n, "trans") || strings.Contains(n, "tfa") {
			return Resolution{}, true, Errorf(KindInvalid, "%q is a summary line (a sum of other lines), not a peak; "+
				"list the trans peaks by chain instead (18:1 t, 18:2 t, 18:3 t) and leave the total out: "+
				"the service reports total trans itself", label).withSuggestions("18:1 t", "18:2 t", "18:3 t")
		}
		return Resolution{}, true, Errorf(KindInvalid, "%q is a summary line (a sum of other lines), not a peak; "+
			"leave it out: the service computes the saturated, mono-, polyunsaturated and n-x sums itself", label)
	}
	if ra, ok := readAsNames[n]; ok {
		a := c.byID[strings.ToLower(ra.id)]
		return readAs(label, a, ra.why), true, nil
	}
	for _, p := range exportPrefixes {
		if rest, ok := strings.CutPrefix(n, p); ok && rest != "" {
			r, err := c.read(rest, suggest)
			return r, true, err
		}
	}
	if m := coelutingTransRe.FindStringSubmatch(n); m != nil {
		id := m[1] + ":1 t"
		a, ok := c.byID[id]
		if !ok {
			return Resolution{}, true, c.unknown(label, nil, suggest)
		}
		return Resolution{Acid: a, Assumption: fmt.Sprintf(
			"label %q names co-eluting trans isomers; counted as %s (trans, positions not resolved)", label, a.ID)}, true, nil
	}
	if m := annotationRe.FindStringSubmatch(n); m != nil {
		return c.readAnnotated(label, m[1], strings.TrimSpace(m[2]), suggest)
	}
	return Resolution{}, false, nil
}

// readAnnotated reads "outer (inner)" when inner is a name or a marker
// word; the two must agree. Otherwise handled is false ("18:1(9Z)" is an
// ordinary label).
func (c *Catalogue) readAnnotated(label, outer, inner string, suggest bool) (Resolution, bool, error) {
	if annotationMarkers[inner] {
		r, err := c.read(outer, suggest)
		return r, true, err
	}
	named, ok := c.lookupName(inner)
	if !ok {
		if ra, isGroup := readAsNames[inner]; isGroup {
			named = c.byID[strings.ToLower(ra.id)]
		} else {
			return Resolution{}, false, nil
		}
	}
	r, err := c.read(outer, false)
	switch {
	case err == nil && r.Acid == named:
		return Resolution{Acid: named}, true, nil
	case err == nil && r.Acid != nil && r.Assumption != "" && r.Acid.Shorthand() == named.Shorthand() && r.Acid.Branch == named.Branch:
		// "18:1 (petroselinic)": the name fixes the isomer the shorthand left open.
		return Resolution{Acid: named}, true, nil
	case err != nil && strings.Contains(err.Error(), "ambiguous"):
		if q := shorthandRe.FindStringSubmatch(outer); q != nil && named.Shorthand() == q[2]+":"+q[3] {
			return Resolution{Acid: named}, true, nil
		}
	case err == nil && r.Acid != nil:
		return Resolution{}, true, Errorf(KindInvalid, "label %q names two acids: %s by its shorthand and %s by its name",
			label, r.Acid.ID, named.ID).withSuggestions(r.Acid.ID, named.ID)
	}
	if err != nil {
		return Resolution{}, true, Errorf(KindInvalid, "label %q: the name %q reads as %s, but %q is not a label of it",
			label, inner, named.ID, outer).withSuggestions(named.ID)
	}
	return Resolution{}, true, Errorf(KindInvalid, "label %q is not an acid", label)
}

// withSuggestions sets the suggestions of an error.
func (e *Error) withSuggestions(s ...string) *Error {
	e.Suggestions = s
	return e
}
