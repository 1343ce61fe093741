// Package lsq is the numerical core of huesolve: least squares with a mix
// of non-negative and free coefficients (an active-set method after Lawson
// and Hanson), its KKT certificate, standard errors and confidence
// intervals, conditioning, and residual statistics. It knows nothing of
// spectra: rows are observations, columns are regressors.
//
// # Problem
//
// For a design X (n rows, p columns), optional noise levels sigma_i and
// an observation y, a [Solver] finds
//
//	b = argmin || W^(1/2) (y - X b) ||_2   subject to b_j >= 0 for j in N,
//
// where W = diag(1/sigma_i^2) (the identity without Sigma), N is the set of
// non-negative columns and F, the others, are free in sign.
//
// # Method
//
// Set-up ([NewSolver]) weights the rows, scales every column to unit
// norm, d_j = ||W^(1/2) x_j||, X_s = W^(1/2) X D^-1, orders the columns free
// block first, X_s = [B S], and takes one thin Householder QR (LAPACK
// dgeqrf/dorgqr through gonum):
//
//	[B S] = [Q_B Q_S] [R_BB R_BS]
//	                  [ 0   R_SS]
//
// Q_B R_BB is the thin QR of the free block, P = I - Q_B Q_B' projects it
// out, and P S = Q_S R_SS. For any y, with z = Q' W^(1/2) y,
//
//	min_{beta, c>=0} ||W^(1/2)y - B beta - S c||^2
//	   = min_{c>=0} ||z_S - R_SS c||^2 + ||(I - QQ') W^(1/2) y||^2,
//
// so each [Solver.Solve] costs one product z = Q'W^(1/2)y (n p flops), the
// Lawson-Hanson active-set iteration on the small upper-triangular system
// (R_SS, z_S) (each passive-set least-squares problem re-triangularised by
// Givens rotations), the free coefficients by back-substitution,
//
//	R_BB beta = z_B - R_BS c,
//
// and the undoing of the column scaling. X'X is never formed.
//
// # Certificate
//
// After each solve the residual r = y - X b is recomputed from the original
// (unscaled, unweighted) columns, and the KKT conditions are checked with
// the gradient g = X_s' W^(1/2) r:
//
//	KKT = max( max_{j in N, b_j = 0} max(g_j, 0), max_{other j} |g_j| ) / (||X_s||_2 ||W^(1/2) y||)
//
// A solve with KKT above [KKTTol] is reported as [Inaccurate].
//
// # Uncertainty
//
// With A the passive set (free columns and non-negative columns with
// b_j > 0), the covariance of the coefficients is
//
//	Cov(b_A) = s^2 D_A^-1 (X_sA' X_sA)^-1 D_A^-1 = s^2 D_A^-1 T^-1 T^-T D_A^-1,
//
// with T the triangular factor of the passive columns of R (so again no
// X'X), s^2 = sum (r_i/sigma_i)^2 / (n - |A|), or s^2 = 1 when Sigma carries
// the noise level and Options.scaleSE is false. Intervals are b_j ± q SE_j
// with q the 0.975 quantile of Student's t on n - |A| degrees of freedom
// (the standard normal quantile when the noise level is known).
// Coefficients held at zero are marked AtBound, with SE 0: the
// linearised covariance says nothing about them. Beside the constrained
// fit, Result.Unconstrained and unconstrainedSE give the ordinary least
// squares estimate (R b_u = z, at p^2 flops) so that a caller can show how
// far below zero the data would put a coefficient held at the bound.
//
// # Residual diagnostics
//
// Each Result carries the residual, its RMS, R^2 about the mean of y, the
// reduced chi-square against Sigma, the Durbin-Watson statistic
//
//	DW = sum_(i=2..n) (e_i - e_(i-1))^2 / sum_i e_i^2,   e_i = r_i / sigma_i,
//
// over row order (Durbin & Watson, Biometrika 37, 1950), and the band of
// [bandWidth] rows with the largest mean squared e_i. [DWSevere] and
// [ChiSqSevere] are the limits the callers compare DW and the reduced
// chi-square with.
//
// # Cost
//
// For n rows and p columns, NewSolver costs O(n p^2) (QR) plus O(p^3);
// each Solve with a fixed design costs about 4 n p flops (Q'y, residual,
// KKT gradient) plus O(n) for the statistics and O(p^3) for the active
// set and standard errors. Weights that change from one y to the next
// (Options.Sigma) are part of the factorisation, so they need a new
// factorisation per y: O(n p^2) per spectrum instead of O(n p), with
// [Solver.Reset] reusing the storage of one Solver, and [Solver.Reweight]
// also the design it holds (only the weights change). A caller that
// compares many fits of one y by their residual sums and keeps few of
// them calls [Solver.SolveCoef] (coefficients, residual, RSS) and
// [Solver.Finish] for the fits it keeps only (statistics, standard
// errors, KKT certificate); Solve is the two in turn, so either way gives
// the same bits. The pseudo-inverse and the KKT gradient rows are made on
// first use.
//
// # Conditioning
//
// [Solver.Cond] is the 2-norm condition number of X_s (units do not
// masquerade as collinearity) and [Solver.Leakage] ||P s_k|| / ||s_k||,
// which is 1/sqrt of the variance inflation factor of s_k against the free
// block alone. [CondWarn], [CondRefuse] and [LeakageWarn] are the limits
// the callers compare them with.
//
// # Workspaces and concurrency
//
// A Solver holds one workspace and is not safe for concurrent use;
// [Solver.Clone] gives each worker goroutine its own workspace sharing the
// read-only factorisation. In steady state (same Result passed again) a
// Solve allocates nothing.
package lsq
