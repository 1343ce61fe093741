#!/usr/bin/python3
"""Write one invented absorbance scan in four file layouts.

The files let a test check that every reader returns the same numbers:
  same-scan.csv         two-column scan, comma, ascending
  same-scan-eu.csv      semicolon, decimal comma, free-text preamble, descending
  same-wide.tsv         wide table (tab), the scan is column "mix B"
  same-scan.jdx         JCAMP-DX 4.24, XYDATA in DIF/DUP form with the Y-value check,
                        XFACTOR 0.1 and YFACTOR 0.0001

The data are invented (two Gaussian bands plus a flat baseline); the JCAMP-DX
compression is written here, independently of the Go writer, from the rules of
R. S. McDonald and P. A. Wilks, Appl. Spectrosc. 42 (1988) 151-162.
Run: /usr/bin/python3 gen-same.py
"""
import math

wl = [400 + 5 * i for i in range(41)]          # 400..600 nm


def band(x, c, w, h):
    return h * math.exp(-0.5 * ((x - c) / w) ** 2)


# Absorbance rounded to 4 decimals; a flat baseline up to 430 nm gives DUP runs.
ints = []
for x in wl:
    a = 0.0100 + (band(x, 480, 25, 0.65) + band(x, 550, 18, 0.4) if x > 430 else 0)
    ints.append(round(a * 10000))
vals = ["%.4f" % (i / 10000) for i in ints]
other1 = ["%.4f" % (0.5 * i / 10000) for i in ints]
other2 = ["%.4f" % (0.02 + 0.001 * k) for k in range(len(wl))]

with open("same-scan.csv", "w", newline="\n") as f:
    f.write("wavelength (nm),absorbance\n")
    for x, v in zip(wl, vals):
        f.write("%d,%s\n" % (x, v))

with open("same-scan-eu.csv", "w", newline="\r\n") as f:
    f.write("Messung: Probe 7\n")
    f.write("Datum: 01.02.2025; Operator: X\n")
    f.write("\n")
    f.write("Wellenlänge [nm];Abs\n")
    for x, v in reversed(list(zip(wl, vals))):
        f.write("%s;%s\n" % (("%.1f" % x).replace(".", ","), v.replace(".", ",")))

with open("same-wide.tsv", "w", newline="\n") as f:
    f.write("# three scans on one grid\n")
    f.write("nm\tmix A (A)\tmix B (A)\tblank (A)\n")
    for k, x in enumerate(wl):
        f.write("%d\t%s\t%s\t%s\n" % (x, other1[k], vals[k], other2[k]))


def sqz(v, dif):
    s = str(abs(v))
    d = int(s[0])
    if dif:
        c = "%" if d == 0 else ("JKLMNOPQR"[d - 1] if v > 0 else "jklmnopqr"[d - 1])
    else:
        c = "@" if d == 0 else ("ABCDEFGHI"[d - 1] if v > 0 else "abcdefghi"[d - 1])
    return c + s[1:]


def dup(n):
    s = str(n)
    return "STUVWXYZs"[int(s[0]) - 1] + s[1:]


XFACTOR = 0.1
lines = []
p = 0
per_line = 10
while p < len(ints) - 1:
    toks = ["%d" % round(wl[p] / XFACTOR), sqz(ints[p], False)]
    q = p
    while q < len(ints) - 1 and q - p < per_line:
        d = ints[q + 1] - ints[q]
        r = 1
        while q + r < len(ints) - 1 and ints[q + r + 1] - ints[q + r] == d and q + r - p < per_line:
            r += 1
        toks.append(sqz(d, True) + (dup(r) if r > 1 else ""))
        q += r
    lines.append(toks[0] + " " + "".join(toks[1:]))
    p = q
lines.append("%d %s" % (round(wl[-1] / XFACTOR), sqz(ints[-1], False)))  # closing Y check

with open("same-scan.jdx", "w", newline="\n") as f:
    f.write("##TITLE= same scan $$ invented data\n")
    f.write("##JCAMP-DX= 4.24\n")
    f.write("##DATA TYPE= UV/VIS SPECTRUM\n")
    f.write("##ORIGIN= huesolve test data (invented)\n")
    f.write("##OWNER= public domain\n")
    f.write("##X_UNITS= NANOMETERS\n")
    f.write("##YUNITS= ABSORBANCE\n")
    f.write("##XFACTOR= %g\n" % XFACTOR)
    f.write("##YFACTOR= 0.0001\n")
    f.write("##FIRST X= %d\n" % wl[0])
    f.write("##LASTX= %d\n" % wl[-1])
    f.write("##NPOINTS= %d\n" % len(wl))
    f.write("##FIRSTY= %s\n" % vals[0])
    f.write("##XYDATA= (X++(Y..Y))\n")
    for l in lines:
        f.write(l + "\n")
    f.write("##END=\n")
