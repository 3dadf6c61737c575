#!/usr/bin/env python3
"""Live cross-check of the dist families against scipy.stats.

Usage: dist_scipy.py DIST_DRIVER

Runs tests/dist_driver.c (which prints logpdf, cdf_P, cdf_Q, quantile_P,
quantile_Q, mean and variance of every family on a grid) and recomputes each
value with scipy.stats.  Exit 0 when all agree, 1 on a mismatch, 77
(ctest "skipped") when scipy cannot be imported.

Tolerances (relative, see TOL below):
  * 1e-12 by default.  Every value is computed at the same double x or p on
    both sides, so the difference is the two implementations' rounding,
    amplified by the conditioning of the function: a tail probability at
    z standard deviations changes by z^2 * eps relative per ulp of z, which
    is 1e-13 at the 1e-200 tail of the normal (z = 30).
  * Looser where a special function limits, per family and quantity, each
    with its reason in LOOSE below.
Values of |want| below a floor are compared absolutely: for quantiles and
means the floor is the family's standard deviation (or 1 where it does
not exist), for logpdf it is 1.
"""
import math
import subprocess
import sys
import warnings

try:
    import numpy as np
    import scipy
    from scipy import stats
except ImportError as e:  # pragma: no cover
    print("skipped: scipy not available (%s)" % e)
    sys.exit(77)

TOL = 1e-12

# (family, quantity) -> (rtol, reason)
LOOSE = {
    # GSL's incomplete gamma (gsl_sf_gamma_inc_P/Q) is good to about 1e-13
    # relative far in its tails (measured against mpmath at 40 digits: 7e-14
    # at a = 100, x = 1000); scipy.special.gammainc is an independent
    # implementation with errors of the same order.
    ("gamma", "P"): (5e-13, "GSL incomplete gamma, ~1e-13 in the tails"),
    ("gamma", "Q"): (5e-13, "GSL incomplete gamma, ~1e-13 in the tails"),
    # GSL's incomplete beta (continued fraction) likewise.
    ("beta", "P"): (5e-13, "GSL incomplete beta, ~1e-13 in the tails"),
    ("beta", "Q"): (5e-13, "GSL incomplete beta, ~1e-13 in the tails"),
    # Quantiles solved against those cdfs inherit their error divided by the
    # (larger than 1) elasticity x f(x)/P.
    ("gamma", "qP"): (5e-13, "inverse of the GSL incomplete gamma"),
    ("gamma", "qQ"): (5e-13, "inverse of the GSL incomplete gamma"),
    ("beta", "qP"): (5e-13, "inverse of the GSL incomplete beta"),
    ("beta", "qQ"): (5e-13, "inverse of the GSL incomplete beta"),
}


def scipy_dist(name, t):
    """The frozen scipy.stats distribution for a family and its parameters."""
    if name == "normal":
        return stats.norm(loc=t[0], scale=t[1])
    if name == "lognormal":
        return stats.lognorm(s=t[1], scale=math.exp(t[0]))
    if name == "weibull":
        return stats.weibull_min(c=t[0], scale=t[1])
    if name == "weibull3":
        return stats.weibull_min(c=t[0], scale=t[1], loc=t[2])
    if name == "gamma":
        return stats.gamma(a=t[0], scale=t[1])
    if name == "exponential":
        return stats.expon(scale=1.0 / t[0])
    if name == "exponential2":
        return stats.expon(loc=t[1], scale=1.0 / t[0])
    if name == "gumbel_max":
        return stats.gumbel_r(loc=t[0], scale=t[1])
    if name == "gumbel_min":
        return stats.gumbel_l(loc=t[0], scale=t[1])
    if name == "logistic":
        return stats.logistic(loc=t[0], scale=t[1])
    if name == "loglogistic":
        return stats.fisk(c=t[0], scale=t[1])
    if name == "uniform":
        return stats.uniform(loc=t[0], scale=t[1] - t[0])
    if name == "truncnormal":
        m, s, lo, hi = t
        return stats.truncnorm(a=(lo - m) / s, b=(hi - m) / s, loc=m, scale=s)
    if name == "triangular":
        lo, mode, hi = t
        return stats.triang(c=(mode - lo) / (hi - lo), loc=lo, scale=hi - lo)
    if name == "beta":
        return stats.beta(a=t[0], b=t[1], loc=t[2], scale=t[3] - t[2])
    raise KeyError(name)


# ---- references -----------------------------------------------------------
#
# scipy.stats is the reference, except where scipy 1.10.1 itself rounds (each
# case below, with the replacement, which is always built from scipy's or
# Python's own accurate primitives or from exact rational arithmetic):
#  * weibull_min.isf, lognorm.isf: evaluated as ppf(1 - q), so they lose the
#    upper tail (inf at q = 1e-200); replaced by scale (-log q)^(1/c) and
#    exp(meanlog + sdlog norm.isf(q)).
#  * fisk (log-logistic) sf, isf: 1 - cdf and ppf(1 - q); replaced by the
#    closed forms 1/(1 + (x/s)^c) and s (q/(1 - q))^(-1/c) with log1p.
#  * truncnorm: cdf/sf near a finite limit cancel (Phi(x) - Phi(a) formed
#    from two nearly equal tails: relative error 5e-5 at x = a + 3e-12 for
#    a = -1, 8e-4 at x = a + 3e-13 for a = 3), its variance is 4e-11 off for
#    [8, 9], and isf fails beyond ~1e-20 (a value near 9 for q = 1e-200
#    above a = 3); replaced by D(u, v) / D(a, b) with D(u, v) = quad(norm.pdf, u, v)
#    (scipy.integrate.quad, QUADPACK, epsrel 2e-14) for finite u and v and
#    norm.sf/norm.cdf for an infinite end, and by norm.isf/norm.ppf of the
#    target tail mass formed from the nearer limit; mean and variance by
#    quad of t and (t - mean)^2 against norm.pdf.
#  * triang: sf = 1 - cdf and isf = ppf(1 - q); replaced by exact rational
#    arithmetic (fractions.Fraction) on the closed-form tails, and the
#    closed-form quantiles in 40-digit decimal arithmetic.
#  * beta with loc/scale: forms 1 - y near the upper end, so logpdf, cdf and
#    sf lose digits within ~1e-6 of max; replaced by scipy.special.betainc
#    and betaln on y = (x - min)/w or ym = (max - x)/w, whichever is smaller.

from fractions import Fraction
from decimal import Decimal, getcontext

getcontext().prec = 40


def tn_parts(t):
    m, s, lo, hi = t
    return m, s, (lo - m) / s, (hi - m) / s


def tn_D(u, v):
    """Phi(v) - Phi(u), u < v: tails where one end is infinite, a difference
    of tails on one side of 0 only when they differ by a factor > e (v - u >
    1 there), so that it cannot cancel, and quadrature otherwise."""
    from scipy import integrate
    if math.isinf(u):
        return stats.norm.cdf(v)
    if math.isinf(v):
        return stats.norm.sf(u)
    if u >= 0.0 and v - u > 1.0:
        return stats.norm.sf(u) - stats.norm.sf(v)
    if v <= 0.0 and v - u > 1.0:
        return stats.norm.cdf(v) - stats.norm.cdf(u)
    return integrate.quad(stats.norm.pdf, u, v, epsabs=0.0, epsrel=2e-14,
                          limit=200)[0]


def tn_z_from_lower(a, b, Z, p):
    """Standardised quantile with mass p above the lower limit a."""
    if a >= 0.0:
        return stats.norm.isf(stats.norm.sf(a) - p * Z)
    return stats.norm.ppf(stats.norm.cdf(a) + p * Z)


def tn_z_from_upper(a, b, Z, q):
    """Standardised quantile with mass q below the upper limit b."""
    if b <= 0.0:
        return stats.norm.ppf(stats.norm.cdf(b) - q * Z)
    return stats.norm.isf(stats.norm.sf(b) + q * Z)


def tri_tail(t, x, upper):
    a, c, b = (Fraction(v) for v in t)
    x = Fraction(x)
    if x <= a:
        P = Fraction(0)
    elif x >= b:
        P = Fraction(1)
    elif x <= c:
        P = (x - a) ** 2 / ((b - a) * (c - a))
    else:
        P = 1 - (b - x) ** 2 / ((b - a) * (b - c))
    return float(1 - P) if upper else float(P)


def tri_quantile(t, p, upper):
    a, c, b = (Decimal(v) for v in t)
    p = Decimal(p)
    if upper:
        p = 1 - p
    fc = (c - a) / (b - a)
    if p <= fc:
        return float(a + (p * (b - a) * (c - a)).sqrt())
    return float(b - ((1 - p) * (b - a) * (b - c)).sqrt())


def beta_parts(t, x):
    from scipy import special
    a, b, lo, hi = t
    w = hi - lo
    y, ym = (x - lo) / w, (hi - x) / w
    return special, a, b, w, y, ym


class Ref:
    """Reference values for one family and parameter set."""

    def __init__(self, name, t):
        self.name, self.t = name, t
        self.d = scipy_dist(name, t)

    def logpdf(self, x):
        if self.name == "beta":
            sp, a, b, w, y, ym = beta_parts(self.t, x)
            if not (0.0 <= y <= 1.0):
                return -math.inf
            return float(sp.xlogy(a - 1, y) + sp.xlogy(b - 1, ym)
                         - sp.betaln(a, b) - math.log(w))
        return float(self.d.logpdf(x))

    def tail(self, x, upper):
        name, t = self.name, self.t
        if name == "loglogistic" and upper:
            return 1.0 / (1.0 + (x / t[1]) ** t[0])
        if name == "truncnormal":
            m, s, a, b = tn_parts(t)
            z = (x - m) / s
            if z <= a:
                return 1.0 if upper else 0.0
            if z >= b:
                return 0.0 if upper else 1.0
            Z = tn_D(a, b)
            return (tn_D(z, b) if upper else tn_D(a, z)) / Z
        if name == "triangular":
            return tri_tail(t, x, upper)
        if name == "beta":
            sp, a, b, w, y, ym = beta_parts(t, x)
            if y <= ym:
                P = sp.betainc(a, b, y)
                return float(1.0 - P if upper else P)
            Q = sp.betainc(b, a, ym)
            return float(Q if upper else 1.0 - Q)
        return float(self.d.sf(x) if upper else self.d.cdf(x))

    def quantile(self, p, upper):
        name, t = self.name, self.t
        if name in ("weibull", "weibull3") and upper:
            loc = t[2] if name == "weibull3" else 0.0
            return loc + t[1] * (-math.log(p)) ** (1.0 / t[0])
        if name == "lognormal" and upper:
            return math.exp(t[0] + t[1] * stats.norm.isf(p))
        if name == "loglogistic":
            lg = math.log(p) - math.log1p(-p)
            return t[1] * math.exp((-lg if upper else lg) / t[0])
        if name == "truncnormal":
            m, s, a, b = tn_parts(t)
            Z = tn_D(a, b)
            lower_mass = (1.0 - p) if upper else p
            if lower_mass <= 0.5:
                z = tn_z_from_lower(a, b, Z, lower_mass)
            else:
                z = tn_z_from_upper(a, b, Z, p if upper else 1.0 - p)
            return min(max(m + s * z, t[2]), t[3])
        if name == "triangular":
            return tri_quantile(t, p, upper)
        return float(self.d.isf(p) if upper else self.d.ppf(p))

    def moments(self):
        if self.name == "truncnormal":
            from scipy import integrate
            m, s, a, b = tn_parts(self.t)
            Z = tn_D(a, b)
            q = lambda f: integrate.quad(f, a, b, epsabs=0.0, epsrel=2e-14,
                                         limit=200)[0]
            mu = q(lambda z: z * stats.norm.pdf(z)) / Z
            var = q(lambda z: (z - mu) ** 2 * stats.norm.pdf(z)) / Z
            return m + s * mu, s * s * var
        mean, var = (float(v) for v in self.d.stats(moments="mv"))
        if self.name == "loglogistic":
            # scipy returns nan where the moment diverges; the family
            # reports +inf (shape <= 1: mean, shape <= 2: variance).
            if self.t[0] <= 1.0:
                mean = math.inf
            if self.t[0] <= 2.0:
                var = math.inf
        return mean, var


def close(got, want, rtol, floor):
    if math.isnan(want) and math.isnan(got):
        return True
    if math.isinf(want) or math.isinf(got):
        return got == want
    return abs(got - want) <= rtol * max(abs(want), floor)


def main():
    if len(sys.argv) != 2:
        print("usage: dist_scipy.py DIST_DRIVER", file=sys.stderr)
        return 2
    out = subprocess.run([sys.argv[1]], check=True, capture_output=True,
                         text=True).stdout
    warnings.simplefilter("ignore")
    print("scipy", scipy.__version__, "numpy", np.__version__)
    fails = 0
    checked = 0
    worst = {}
    name = t = ref = None
    scale = 1.0

    def cmp(what, arg, got, want, floor):
        nonlocal fails, checked
        rtol = LOOSE.get((name, what), (TOL, ""))[0]
        checked += 1
        if not math.isnan(want) and not math.isinf(want):
            den = max(abs(want), floor)
            err = abs(got - want) / den if den > 0 else abs(got - want)
            key = (name, what)
            worst[key] = max(worst.get(key, 0.0), err)
        if not close(got, want, rtol, floor):
            fails += 1
            print("MISMATCH %s%s %s(%r) = %.17g, scipy %.17g (rtol %g)"
                  % (name, t, what, arg, got, want, rtol))

    for line in out.splitlines():
        f = line.split()
        if f[0] == "F":
            name = f[1]
            t = [float(v) for v in f[3:3 + int(f[2])]]
            ref = Ref(name, t)
            sd = math.sqrt(ref.moments()[1])
            scale = sd if math.isfinite(sd) and sd > 0 else 1.0
        elif f[0] == "X":
            x, lp, P, Q = (float(v) for v in f[1:])
            cmp("logpdf", x, lp, ref.logpdf(x), 1.0)
            cmp("P", x, P, ref.tail(x, False), 0.0)
            cmp("Q", x, Q, ref.tail(x, True), 0.0)
        elif f[0] == "U":
            p, qp, qq = (float(v) for v in f[1:])
            cmp("qP", p, qp, ref.quantile(p, False), scale)
            cmp("qQ", p, qq, ref.quantile(p, True), scale)
        elif f[0] == "M":
            m, v = (float(x) for x in f[1:])
            sm, sv = ref.moments()
            cmp("mean", 0, m, sm, scale)
            cmp("var", 0, v, sv, 0.0)
    print("checked %d values, %d mismatches" % (checked, fails))
    for key in sorted(worst):
        print("  worst relative difference %-14s %-7s %.2e"
              % (key[0], key[1], worst[key]))
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
