#!/usr/bin/env python3
"""SciPy side of the bandedge/SciPy comparison (run by bench/scipycmp).

Reads the problems written by scipycmp (energies E in eV, alpha and sigma in
cm^-1 inside a fixed window, the start vector and the bounds of bandedge's
direct+urbach model), fits each with scipy.optimize.least_squares and writes
the parameters, the final cost and the time of every repetition as JSON.

The model is the same closed form as bandedge's model.DirectUrbach (the
exponentially broadened parabolic direct edge, Katahara & Hillhouse,
J. Appl. Phys. 116, 173504, 2014):

    alpha(E) = (C/E) * sqrt(g) * F(z),   z = (E - E_g)/g,  g = E_U,
    F(z)  = (sqrt(pi)/4) e^z                            (z <= 0)
    F(z)  = sqrt(z) - D(sqrt(z))/2 + (sqrt(pi)/4) erfcx(sqrt(z))   (z > 0)
    F'(z) = (sqrt(pi)/4) e^z                            (z <= 0)
    F'(z) = D(sqrt(z))/2 + (sqrt(pi)/4) erfcx(sqrt(z))  (z > 0)

with D Dawson's integral (scipy.special.dawsn) and erfcx the scaled
complementary error function (scipy.special.erfcx), evaluated vectorised in
NumPy. Jacobian (analytic, as in bandedge):

    d alpha/d E_g = -(C/E) g^-1/2 F'(z)
    d alpha/d C   =  g^1/2 F(z) / E
    d alpha/d g   =  (C/E) g^-1/2 (F(z)/2 - z F'(z))

For z >= 50 the bracket F/2 - zF' loses digits to cancellation, so there,
as in bandedge, F, F' and the bracket come from the asymptotic series of D
and erfcx combined term by term (a_n = (2n-1)!!/(2z)^n):
F = sqrt(z) - (a1 + a3 + ...)/(2 sqrt z), F' = (1 + a2 + a4 + ...)/(2 sqrt z),
h = -[(a1 + a3 + ...)/(4 sqrt z) + sqrt(z) (a2 + a4 + ...)/2].

Residuals r_i = (alpha_i - f(E_i; p)) / sigma_i, i.e. weights 1/sigma_i^2.

Usage: scipy_fit.py problems.json results.json
"""

import json
import sys
import time
import platform

import numpy as np
import scipy
from scipy.optimize import least_squares
from scipy.special import dawsn, erfcx

QSP = 0.25 * np.sqrt(np.pi)  # sqrt(pi)/4 = Gamma(3/2)/2
ASYM_Z = 50.0


def edge(z):
    """Return F(z), F'(z) and h(z) = F/2 - z F' for an array z."""
    f = np.empty_like(z)
    df = np.empty_like(z)
    h = np.empty_like(z)
    neg = z <= 0
    mid = (z > 0) & (z < ASYM_Z)
    big = z >= ASYM_Z
    zn = z[neg]
    ex = QSP * np.exp(zn)
    f[neg] = ex
    df[neg] = ex
    h[neg] = ex * (0.5 - zn)
    zm = z[mid]
    y = np.sqrt(zm)
    dw = dawsn(y)
    er = QSP * erfcx(y)
    fm = y - 0.5 * dw + er
    dfm = 0.5 * dw + er
    f[mid] = fm
    df[mid] = dfm
    h[mid] = 0.5 * fm - zm * dfm
    if big.any():
        zb = z[big]
        yb = np.sqrt(zb)
        t = 1.0 / (2.0 * zb)
        a = np.ones_like(zb)
        odd = np.zeros_like(zb)
        even = np.zeros_like(zb)
        for n in range(1, 40):  # a_n < 1e-17 a_2 long before n = 40 at z >= 50
            a = a * (2 * n - 1) * t
            if n % 2:
                odd += a
            else:
                even += a
        f[big] = yb - odd / (2 * yb)
        df[big] = (1 + even) / (2 * yb)
        h[big] = -(odd / (4 * yb) + yb * even / 2)
    return f, df, h


def make_problem(e, alpha, sigma):
    inv_e = 1.0 / e
    w = 1.0 / sigma

    def fun(p):
        eg, c, g = p
        sg = np.sqrt(g)
        f, _, _ = edge((e - eg) / g)
        return w * (alpha - c * sg * inv_e * f)

    def jac(p):
        eg, c, g = p
        sg = np.sqrt(g)
        f, df, h = edge((e - eg) / g)
        pre = c * inv_e / sg
        j = np.empty((e.size, 3))
        j[:, 0] = pre * df  # -(-pre*df): residual is alpha - model
        j[:, 1] = -sg * f * inv_e
        j[:, 2] = -pre * h
        j *= w[:, None]
        return j

    return fun, jac


def main():
    if len(sys.argv) != 3:
        sys.exit("usage: scipy_fit.py problems.json results.json")
    with open(sys.argv[1]) as fh:
        pf = json.load(fh)
    lower = np.array([-np.inf if v is None else v for v in pf["lower"]])
    upper = np.array([np.inf if v is None else v for v in pf["upper"]])
    tol = pf["tol"]
    reps = pf["reps"]
    probs = []
    for p in pf["problems"]:
        e = np.asarray(p["e"], dtype=float)
        fun, jac = make_problem(e, np.asarray(p["alpha"], dtype=float), np.asarray(p["sigma"], dtype=float))
        probs.append((fun, jac, np.asarray(p["start"], dtype=float)))

    methods = {
        "trf": dict(method="trf", bounds=(lower, upper), x_scale="jac", ftol=tol, xtol=tol, gtol=tol),
        "lm": dict(method="lm", x_scale="jac", ftol=tol, xtol=tol, gtol=tol),
        "trf-default": dict(method="trf", bounds=(lower, upper), x_scale="jac"),
    }
    labels = {
        "trf": "SciPy trf, bounds, tol %g" % tol,
        "lm": "SciPy lm (MINPACK), no bounds, tol %g" % tol,
        "trf-default": "SciPy trf, bounds, default tol 1e-8",
    }
    out = {
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "methods": {},
        "order": list(methods),
        "labels": labels,
    }
    for name, kw in methods.items():
        results = [None] * len(probs)
        times = [[] for _ in probs]
        for rep in range(-1, reps):  # rep -1 is an untimed warm-up
            for i, (fun, jac, x0) in enumerate(probs):
                t0 = time.perf_counter()
                r = least_squares(fun, x0, jac=jac, **kw)
                dt = time.perf_counter() - t0
                if rep >= 0:
                    times[i].append(dt)
                results[i] = r
        out["methods"][name] = [
            {
                "params": r.x.tolist(),
                "times": times[i],
                "cost": float(r.cost),
                "nfev": int(r.nfev),
                "njev": int(r.njev) if r.njev is not None else 0,
                "status": int(r.status),
                "message": str(r.message),
            }
            for i, r in enumerate(results)
        ]
    with open(sys.argv[2], "w") as fh:
        json.dump(out, fh)


if __name__ == "__main__":
    main()
