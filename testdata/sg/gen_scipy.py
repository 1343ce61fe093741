#!/usr/bin/python3
"""Generate scipy_savgol.txt: Savitzky-Golay weights and filtered signals
from SciPy, the reference for the baseline package's tests.

Run with Debian's python3-scipy:  /usr/bin/python3 gen_scipy.py > scipy_savgol.txt
"""
import numpy as np
import scipy
from scipy.signal import savgol_coeffs, savgol_filter

print("# Savitzky-Golay reference values from SciPy %s (numpy %s), made by gen_scipy.py." % (scipy.__version__, np.__version__))
print("# weights W O D c_-m .. c_m: scipy.signal.savgol_coeffs(W, O, D, use='dot'), per sample step.")
print("# signal H y_0 .. y_(n-1): test signal on a grid of step H nm.")
print("# filter W O D v_0 .. v_(n-1): scipy.signal.savgol_filter(signal, W, O, D, delta=H, mode='interp').")

cases = [(w, o, d) for w in (5, 7, 9, 11, 15, 21, 31)
         for o in range(0, 7) if o < w
         for d in range(0, 3) if d <= o]
for w, o, d in cases:
    c = savgol_coeffs(w, o, deriv=d, use='dot')
    print("weights %d %d %d %s" % (w, o, d, " ".join(repr(float(v)) for v in c)))

h = 0.5
x = 400 + h * np.arange(60)
y = 0.8 * np.exp(-0.5 * ((x - 412) / 3.0) ** 2) + 0.3 * np.sin(x / 4.0) + 0.002 * (x - 400)
print("signal %r %s" % (h, " ".join(repr(float(v)) for v in y)))
for w, o, d in [(5, 2, 0), (7, 3, 1), (9, 4, 2), (11, 2, 1), (15, 5, 0), (21, 6, 2), (31, 3, 1)]:
    v = savgol_filter(y, w, o, deriv=d, delta=h, mode='interp')
    print("filter %d %d %d %s" % (w, o, d, " ".join(repr(float(t)) for t in v)))
