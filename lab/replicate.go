package lab

import (
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"huesolve/reference"
)

// Group flags.
const (
	// FlagRepRSD: the group's RSD exceeds the limit (Options.MaxRSD).
	FlagRepRSD reference.Flag = "rep-rsd"
	// FlagRepOutlier: a member is an outlier by Grubbs' test (n >= 3).
	FlagRepOutlier reference.Flag = "rep-outlier"
)

// DefaultMaxRSD is the default RSD limit of a replicate group in per
// cent: 5 %, common practice for replicate fills or preparations at
// working concentrations in UV-Vis assays (set a method's own limit with
// Options.MaxRSD).
const DefaultMaxRSD = 5

// GrubbsAlpha is the significance level of the two-sided Grubbs test:
// 5 %, the level at which ISO 5725-2 calls a value a straggler (common
// practice).
const GrubbsAlpha = 0.05

// Stats are the replicate statistics of values: n, the mean, the sample
// standard deviation (n-1 in the denominator; NaN for n < 2) and the RSD
// in per cent, 100 SD / |mean| (NaN when the mean is 0 or SD is NaN).
func Stats(values []float64) (n int, mean, sd, rsd float64) {
	n = len(values)
	if n == 0 {
		return 0, math.NaN(), math.NaN(), math.NaN()
	}
	if n == 1 {
		return 1, values[0], math.NaN(), math.NaN()
	}
	mean, sd = stat.MeanStdDev(values, nil)
	rsd = math.NaN()
	if mean != 0 {
		rsd = 100 * sd / math.Abs(mean)
	}
	return n, mean, sd, rsd
}

// GrubbsCritical is the critical value of Grubbs' two-sided test for one
// outlier among n >= 3 values at significance level alpha:
//
//	G_crit = (n-1)/sqrt(n) * sqrt(t² / (n-2+t²)),  t = t(1 - alpha/(2n); n-2)
//
// the upper 1 - alpha/(2n) quantile of Student's t with n-2 degrees of
// freedom (Grubbs, Technometrics 11, 1969, 1-21; NIST/SEMATECH
// e-Handbook of Statistical Methods, §1.3.5.17). It returns NaN for
// n < 3 or alpha outside (0, 1).
func GrubbsCritical(n int, alpha float64) float64 {
	if n < 3 || !(alpha > 0 && alpha < 1) {
		return math.NaN()
	}
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 2)}.Quantile(1 - alpha/(2*float64(n)))
	fn := float64(n)
	return (fn - 1) / math.Sqrt(fn) * math.Sqrt(t*t/(fn-2+t*t))
}

// Grubbs returns Grubbs' statistic G = max |x_i - mean| / SD of values,
// the index of the value that attains it, and whether G exceeds
// GrubbsCritical(n, alpha). For n < 3 or SD = 0 it returns NaN, -1,
// false.
func Grubbs(values []float64, alpha float64) (g float64, at int, outlier bool) {
	n, mean, sd, _ := Stats(values)
	if n < 3 || !(sd > 0) {
		return math.NaN(), -1, false
	}
	at = -1
	for i, v := range values {
		if d := math.Abs(v-mean) / sd; at < 0 || d > g {
			g, at = d, i
		}
	}
	return g, at, g > GrubbsCritical(n, alpha)
}
