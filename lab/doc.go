// Package lab turns per-scan results into what a laboratory reports:
// replicate groups and results on the sample's own basis.
//
// # Replicates
//
// Scans whose sample sheet rows share a "group" cell are replicates of
// one sample. Per group and compound: n, the mean, the sample standard
// deviation SD (n-1 in the denominator), RSD % = 100 SD / |mean| and each
// member's value. A group is flagged FlagRepRSD when its RSD exceeds a
// limit (DefaultMaxRSD unless told) and FlagRepOutlier when, for n >= 3,
// its most extreme member is an outlier by Grubbs' test (GrubbsCritical).
// Neither flag is raised when the group's mean is below the members'
// mean LOQ (noise about zero; common practice).
//
// # Reporting basis
//
// A basis is a mass fraction (mg/kg, µg/g, % w/w, ...) or a
// concentration (mg/L, µg/L, µM, ...). A concentration basis is the
// result converted with package internal/units. A mass fraction needs
// the preparation from the sample sheet: mass m taken, made up to a final
// volume V (the sheet's dilution column is any further dilution of that
// extract, already applied to the result c):
//
//	w = c V / m                                   (c in g/L, V in L, m in g)
//	u(w)² = (V/m)² u(c)² + (c/m)² u(V)² + (c V/m²)² u(m)²
//
// the law of propagation of uncertainty to first order for uncorrelated
// inputs (GUM, JCGM 100:2008, eq. 10). LOD and LOQ are converted with the
// same factor V/m.
//
// # Reported text
//
// CertText gives the text a certificate shows: "n.d. (< LOD x)" below the
// detection limit, "< LOQ (y)" below the quantitation limit, else the
// value rounded as Round states.
package lab
