"""Fit NASA 7-coefficient heat-capacity polynomials to NIST-JANAF tabulated Cp.

Used for species whose published NASA records start above 200 K (SO2 and SO3 start at 300 K in
the older NASA records). Maintainer tool: needs the test-only ``janaf`` package. Prints the ten
cp coefficients (low range 200-1000 K, high range 1000-3000 K) with cp continuous at 1000 K.

    python data/tools/fit_nasa7_janaf.py O-034 O-058

Source of the tabulated data: M. W. Chase Jr., NIST-JANAF Thermochemical Tables, 4th ed.,
J. Phys. Chem. Ref. Data Monograph 9 (1998).
"""

import sys

import janaf
import numpy as np
import polars as pl

R = 8.314462618


def fit(index, t_low=200.0, t_mid=1000.0, t_high=3000.0):
    df = janaf.Table(index).df.filter((pl.col("T(K)") >= t_low) & (pl.col("T(K)") <= t_high))
    T = df["T(K)"].to_numpy()
    cp = df["Cp"].to_numpy() / R
    lo, hi = T <= t_mid, T >= t_mid
    # Unknowns: a1..a5 low, a1..a5 high; least squares on cp/R, plus cp and dcp/dT continuity at
    # t_mid as heavily weighted rows.
    rows, rhs = [], []
    for t, c in zip(T[lo], cp[lo], strict=True):
        rows.append([t**k for k in range(5)] + [0.0] * 5)
        rhs.append(c)
    for t, c in zip(T[hi], cp[hi], strict=True):
        rows.append([0.0] * 5 + [t**k for k in range(5)])
        rhs.append(c)
    w = 1e3
    rows.append([w * t_mid**k for k in range(5)] + [-w * t_mid**k for k in range(5)])
    rhs.append(0.0)
    rows.append(
        [w * k * t_mid ** (k - 1) * t_mid for k in range(5)]
        + [-w * k * t_mid ** (k - 1) * t_mid for k in range(5)]
    )
    rhs.append(0.0)
    A = np.array(rows)
    # Scale columns for conditioning.
    scale = np.abs(A).max(axis=0)
    coef, *_ = np.linalg.lstsq(A / scale, np.array(rhs), rcond=None)
    coef = coef / scale
    resid = A[:-2] @ coef - np.array(rhs[:-2])
    return coef[:5], coef[5:], np.abs(resid / np.array(rhs[:-2])).max()


if __name__ == "__main__":
    for index in sys.argv[1:]:
        low, high, err = fit(index)
        print(index, "low", " ".join(f"{c:.10e}" for c in low))
        print(index, "high", " ".join(f"{c:.10e}" for c in high))
        print(index, f"max relative cp error {err:.2e}")
