// Package unmix solves sample spectra against a reference set: it builds
// the design (reference absorptivities times path length, plus baseline
// terms), fits each sample by non-negative least squares (package lsq),
// and turns the fit into concentrations with uncertainties, fit figures
// and quality flags.
//
// # The sample model
//
// A sample scan is converted to absorbance, brought onto the reference
// grid by linear interpolation (never extrapolated), blank-corrected,
// given the reference set's pre-treatment, cropped to the window and
// fitted as
//
//	A(l) = sum_k b_ref eps_k(l) c_k + sum_j beta_j B_j(l) + e(l)
//
// with c_k >= 0 (compounds) and beta_j free (polynomial baseline) or
// non-negative (scattering term). Concentrations are then scaled to the
// sample: c = c_fit * (b_ref / b_sample) * dilution.
//
// Points whose raw absorbance exceeds the ceiling are left out. The noise
// model is the reference set's (reference.Set.Sigma):
//
//	sigma(l) = max(noise(l), noiseFloorAU) * sqrt(1 + 10^(2 (A(l) - knee)))
//
// where noise(l) is the reference set's calibration noise, A(l) the
// sample's raw absorbance and knee the set's (reference.Set.Knee: measured
// from the standards when the set has a noise model, else WeightKneeA): flat at low absorbance, growing as 10^A where
// photometric noise dominates (s_A = 0.434 s_T / T for constant
// transmittance noise s_T). With Options.Weighted the fit weights by
// 1/sigma^2; either way the reduced chi-square, the detection limits and
// the plotted noise band use sigma.
//
// # Uncertainty
//
// Unweighted, standard errors are the least-squares ones scaled by the
// residual variance; weighted, they come from the noise model, scaled up
// by sqrt(chi-square) when that exceeds 1. Either way they carry the
// error the absorptivities bring from calibration, which adds to the
// residual as it adds to the variance of the concentrations (a simulation
// in the tests checks this). Intervals are c +- t(0.975, DoF) SE, cut at
// zero; a compound held at zero reports [0, max(0, u + t SE_u)] with u
// the unconstrained estimate. Detection and quantitation limits are 3.3
// and 10 times the noise-model standard deviation of the unconstrained
// estimate (sigma / net analyte signal for constant noise). Per-compound
// calibration intercepts (Compound.Intercept) are not used.
//
// # Cost
//
// The design is factorised once per model. A sample with points above the
// ceiling needs a design on fewer rows; those are cached by mask per
// model clone (up to maskCacheSize). A weighted fit depends on the
// sample's own absorbance, so it factors its own design for every sample
// (one thin QR factorisation of n x p, about the cost of the solve
// itself for p = 5), in one design per model clone whose storage it
// reuses (lsq.Solver.Reset), and whose matrix it keeps while the rows
// do not change (lsq.Solver.Reweight). A fit is first solved for its
// coefficients and residual (lsq.Solver.SolveCoef); its statistics and
// standard errors are made only when it fills a Result (Model.finish),
// so the shift's intermediate steps and the automatic model's candidates
// not chosen skip them. The automatic model (auto.go) reads a scan
// once for all its candidates (views of the floor's reading for those
// without a shift), a shifted candidate starts from its unshifted
// twin's fit rather than solving it again, and in a weighted fit the
// floor takes its QR from the floor plus the scattering term, fitted
// first (lsq.Solver.ReweightFrom); a shift not told apart from
// zero restores the unshifted reading and fit kept before its
// iterations. The results are those of fitting each candidate on its
// own, bit for bit.
//
// # Where things live
//
// options.go and result.go hold the package's types; design.go the
// design (rows, columns, the one builder validate uses too); model.go
// NewModel; solve.go Solve and SolveTo with the steps they run on one
// scan (read, mask, noise, design, fit), passing a scan value from step
// to step; shift.go the shift estimate; fill.go the Result.
package unmix
