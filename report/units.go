package report

import "strings"

// Units of quantities per unit concentration, for table headings: an
// absorptivity in L/(mg·cm) rather than "per unit per cm" when the
// concentration is a mass or an amount of substance per volume.

// massOrAmount are the numerators a concentration unit may have for its
// derived units to be written out; volumes the denominators.
var (
	massOrAmount = map[string]bool{"kg": true, "g": true, "mg": true, "µg": true, "μg": true, "ug": true, "ng": true,
		"mol": true, "mmol": true, "µmol": true, "μmol": true, "umol": true, "nmol": true}
	volumes = map[string]bool{"L": true, "l": true, "dL": true, "mL": true, "ml": true, "µL": true, "μL": true, "uL": true}
	// molar are the shorthands for mol/L and its parts.
	molar = map[string][2]string{"M": {"mol", "L"}, "mM": {"mmol", "L"}, "µM": {"µmol", "L"}, "μM": {"μmol", "L"},
		"uM": {"umol", "L"}, "nM": {"nmol", "L"}}
)

// splitConcUnit returns the numerator and denominator of a concentration
// unit that is a mass or amount per volume ("mg/L" -> "mg", "L"; "M" ->
// "mol", "L"), or ok false.
func splitConcUnit(u string) (num, den string, ok bool) {
	u = strings.TrimSpace(u)
	if m, ok := molar[u]; ok {
		return m[0], m[1], true
	}
	num, den, ok = strings.Cut(u, "/")
	num, den = strings.TrimSpace(num), strings.TrimSpace(den)
	if !ok || !massOrAmount[num] || !volumes[den] {
		return "", "", false
	}
	return num, den, true
}

// absorptivityUnit names the unit of an absorptivity (absorbance per
// unit concentration per cm of path) for the concentration unit conc:
// "L/(mg·cm)" for mg/L, "L/(mol·cm)" for mol/L or M; "per ppm per cm" for
// another unit; "per unit per cm" when conc is empty.
func absorptivityUnit(conc string) string {
	if num, den, ok := splitConcUnit(conc); ok {
		return den + "/(" + num + "·cm)"
	}
	if c := strings.TrimSpace(conc); c != "" {
		return "per " + c + " per cm"
	}
	return "per unit per cm"
}

// sensitivityUnit names the unit of a sensitivity (absorbance per unit
// concentration): "A·L/mg" for mg/L; "A per ppm" for another unit; "A per
// unit" when conc is empty.
func sensitivityUnit(conc string) string {
	if num, den, ok := splitConcUnit(conc); ok {
		return "A·" + den + "/" + num
	}
	if c := strings.TrimSpace(conc); c != "" {
		return "A per " + c
	}
	return "A per unit"
}

// commonUnit returns the unit every entry of units shares, or "" when
// they differ (a heading can then name none).
func commonUnit(units []string) string {
	if len(units) == 0 {
		return ""
	}
	for _, u := range units[1:] {
		if strings.TrimSpace(u) != strings.TrimSpace(units[0]) {
			return ""
		}
	}
	return strings.TrimSpace(units[0])
}
