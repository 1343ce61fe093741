#!/usr/bin/python3
"""Generate outliers.json: externally studentized residuals and Bonferroni
outlier-test limits of straight-line fits, computed by statsmodels.

Run with Debian's interpreter and python3-statsmodels (which brings
python3-scipy and python3-numpy):

    apt-get install python3-statsmodels
    cd testdata/outliers && /usr/bin/python3 gen_outliers.py > outliers.json

Datasets:
- anscombe1, anscombe3: F. J. Anscombe, "Graphs in Statistical Analysis",
  The American Statistician 27 (1973) 17-21, sets I and III (x, y as
  published; set III has one outlier, x = 13).
- calib: an invented UV-Vis calibration line (duplicate standards at 2 to
  20 mg/L, two blanks) with one standard's concentration mistyped
  (12 written where the scan is of 16-ish), as calibrate meets it.

For each: the residuals studentized externally
(OLSInfluence.resid_studentized_external), the Bonferroni-adjusted p
values of outlier_test(method="bonf") and the two-sided limit of |t| at
family-wise level alpha, scipy.stats.t.ppf(1 - alpha/(2 n), n - 3).
"""
import json

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import stats

ALPHA = 0.01

DATA = {
    "anscombe1": (
        [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5],
        [8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68],
    ),
    "anscombe3": (
        [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5],
        [7.46, 6.77, 12.74, 7.11, 7.81, 8.84, 6.08, 5.39, 8.15, 6.42, 5.73],
    ),
    "calib": (
        [0, 0, 2, 2, 4, 4, 8, 8, 12, 12, 16, 16, 20, 20],
        [0.0012, -0.0008, 0.0712, 0.0695, 0.1391, 0.1405, 0.2790, 0.2811,
         0.5602, 0.4188, 0.5571, 0.5590, 0.6981, 0.6969],
    ),
}


def main():
    out = {
        "source": "statsmodels %s, scipy %s (Debian)" % (statsmodels.__version__, scipy.__version__),
        "alpha": ALPHA,
        "cases": {},
    }
    for name, (x, y) in DATA.items():
        x = np.asarray(x, dtype=float)
        y = np.asarray(y, dtype=float)
        fit = sm.OLS(y, sm.add_constant(x)).fit()
        infl = fit.get_influence()
        ot = fit.outlier_test(method="bonf")
        n = len(x)
        out["cases"][name] = {
            "x": x.tolist(),
            "y": y.tolist(),
            "student_resid": [float(v) for v in infl.resid_studentized_external],
            "bonf_p": [float(v) for v in np.asarray(ot)[:, 2]],
            "limit": float(stats.t.ppf(1 - ALPHA / (2 * n), n - 3)),
        }
    print(json.dumps(out, indent=1))


main()
