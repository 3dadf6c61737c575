#!/usr/bin/env python3
"""Live cross-check of the gof module against SciPy.

Usage: gof_scipy.py PATH_TO_CHECK_GOF

Samples come from numpy's default generator with a fixed seed.  Each is sent
to `check_gof --driver` (tests/check_gof.c), which sorts it, builds P/Q with
GSL (or closed forms) through sp_gof_fill_pq and prints the statistics and
p-values.  They are compared with SciPy 1.10:

  fully specified N(0, 1):
    D, p         scipy.stats.kstest(x, 'norm', method='exact')
    D+, p        kstest(..., alternative='greater', method='exact')
    D-, p        kstest(..., alternative='less', method='exact')
    W^2, p       scipy.stats.cramervonmises(x, 'norm')
    A^2          the formula of scipy.stats.anderson (its last lines) with the
                 known parameters: -n - sum((2i-1)/n (logcdf + logsf[::-1]))
  parameters estimated (A^2 only; scipy gives no p-value):
    A^2          scipy.stats.anderson(x, dist).statistic for dist = norm
                 (mean and s with ddof=1, as scipy's source in _morestats.py
                 does), expon, logistic, gumbel_r, gumbel_l, with the
                 parameters scipy fitted (fit_result.params) passed to the
                 driver
    tables       our p-value at scipy's critical_values (Stephens' tables
                 divided by the same modification, rounded to 3 decimals) must
                 be scipy's significance_level: logistic and gumbel within the
                 effect of that rounding; expon (scipy has the 1974 values,
                 we the 1986 revision) and norm (scipy uses Stephens 1974's
                 A^2(1 + 4/n - 25/n^2), we the 1986 A^2(1 + 0.75/n + 2.25/n^2)
                 with the Table 4.9 formula) are only reported.

Tolerances are stated beside each comparison with the reason.  Exit 0 when
all agree, 1 on any disagreement, 77 (ctest: skipped) when numpy or scipy is
missing.
"""
import math
import subprocess
import sys

try:
    import numpy as np
    import scipy
    from scipy import stats
except ImportError as e:  # pragma: no cover
    print(f"skipped: numpy/scipy not importable ({e})")
    sys.exit(77)

FLOOR = 1e-4  # SP_GOF_P_FLOOR in include/scatterprop/gof.h


class Checker:
    def __init__(self):
        self.passed = 0
        self.failed = 0
        self.worst = {}

    def close(self, what, ours, ref, atol, rtol=0.0):
        err = abs(ours - ref)
        ok = err <= atol + rtol * abs(ref)
        scale = atol + rtol * abs(ref)
        w = self.worst.get(what, (0.0, 0.0))
        if err > w[0]:
            self.worst[what] = (err, err / scale if scale > 0 else math.inf)
        if ok:
            self.passed += 1
        else:
            self.failed += 1
            print(f"FAIL {what}: ours {ours!r}, scipy {ref!r}, |diff| {err:.3g} "
                  f"> {atol:g} + {rtol:g} * |ref|")
        return ok

    def true(self, what, cond, detail=""):
        if cond:
            self.passed += 1
        else:
            self.failed += 1
            print(f"FAIL {what} {detail}")


def main():
    if len(sys.argv) != 2:
        print("usage: gof_scipy.py PATH_TO_CHECK_GOF", file=sys.stderr)
        return 2
    driver = sys.argv[1]
    print(f"numpy {np.__version__}, scipy {scipy.__version__}")
    rng = np.random.default_rng(20240501)

    lines = []   # driver input lines
    jobs = []    # (kind, payload) parallel to lines

    # ---- fully specified N(0, 1): null samples and three alternatives ----
    for n in (5, 10, 20, 50, 100, 141, 500, 2000, 20000):
        for src in ("null", "shift", "t3", "wide"):
            if src == "null":
                x = rng.standard_normal(n)
            elif src == "shift":
                x = rng.standard_normal(n) + 0.5
            elif src == "t3":
                x = rng.standard_t(3, n)
            else:
                x = 1.6 * rng.standard_normal(n)
            lines.append("fully-specified norm 0 1 %d %s" %
                         (n, " ".join(repr(float(v)) for v in x)))
            jobs.append(("full", (n, src, x)))

    # ---- estimated parameters: A^2 against scipy.stats.anderson ---------
    gens = {
        "norm": lambda n: rng.normal(10.0, 2.0, n),
        "expon": lambda n: rng.exponential(3.0, n),
        "logistic": lambda n: rng.logistic(1.0, 0.5, n),
        "gumbel_r": lambda n: rng.gumbel(2.0, 1.5, n),
        "gumbel_l": lambda n: -rng.gumbel(2.0, 1.5, n),
    }
    cases = {"norm": "normal", "expon": "exponential", "logistic": "logistic",
             "gumbel_r": "extreme-value", "gumbel_l": "extreme-value"}
    for dist, gen in gens.items():
        for n in (8, 20, 50, 200):
            x = gen(n)
            res = stats.anderson(x, dist)
            a, b = (float(v) for v in res.fit_result.params)
            lines.append("%s %s %r %r %d %s" % (cases[dist], dist, a, b, n,
                                                " ".join(repr(float(v)) for v in x)))
            jobs.append(("est", (dist, n, res)))
            for c, s in zip(res.critical_values, res.significance_level):
                lines.append("pvalue ad %s %d %r" % (cases[dist], n, float(c)))
                jobs.append(("crit", (dist, n, float(c), float(s) / 100.0)))

    out = subprocess.run([driver, "--driver"], input="\n".join(lines) + "\n",
                         capture_output=True, text=True, timeout=120)
    if out.returncode != 0:
        print(f"FAIL driver exited {out.returncode}: {out.stderr}")
        return 1
    answers = out.stdout.splitlines()
    if len(answers) != len(jobs):
        print(f"FAIL driver gave {len(answers)} lines for {len(jobs)} requests")
        return 1

    ck = Checker()
    info = {}
    for (kind, payload), ans in zip(jobs, answers):
        f = ans.split()
        if kind == "full":
            n, src, x = payload
            a2, d, dp, dm, w2 = (float(v) for v in f[:5])
            pad, kad, pks, kks, pkp, kkp, pkm, kkm, pcv, kcv = f[5:15]
            tag = f"n={n} {src}"
            xs = np.sort(x)
            # Statistics: the same sums in double; differences come from the
            # cdf implementations (GSL vs scipy's ndtr, both ~1e-16 relative)
            # and the summation order: 1e-12 relative is ample.  A^2 is
            # -n + S/n with S/n ~ n, so its rounding is relative to n:
            # 1e-14 n absolute.
            i = np.arange(1, n + 1)
            lc, ls = stats.norm.logcdf(xs), stats.norm.logsf(xs)
            a2_ref = -n - np.sum((2 * i - 1.0) / n * (lc + ls[::-1]))
            if math.isinf(a2):
                # Designed difference: where a cdf underflows to P = 0 (a
                # t3 draw ~40 sd out) our A^2 is +inf (the log(0) guard);
                # scipy works from logcdf and stays finite but huge.  Both
                # mean p ~ 0: require scipy's A^2 to be far in the tail.
                ck.true(f"A2 infinite only in the far tail ({tag})",
                        a2_ref > 20.0 and (stats.norm.cdf(xs[0]) == 0.0 or
                                           stats.norm.sf(xs[-1]) == 0.0),
                        f"scipy A2 {a2_ref}")
            else:
                ck.close(f"A2 statistic ({tag})", a2, a2_ref, 1e-14 * n, 1e-12)
            k2 = stats.kstest(x, "norm", method="exact")
            ck.close(f"D statistic ({tag})", d, k2.statistic, 1e-15, 1e-12)
            kp = stats.kstest(x, "norm", alternative="greater", method="exact")
            km = stats.kstest(x, "norm", alternative="less", method="exact")
            ck.close(f"D+ statistic ({tag})", dp, kp.statistic, 1e-15, 1e-12)
            ck.close(f"D- statistic ({tag})", dm, km.statistic, 1e-15, 1e-12)
            # Two-sided exact p.  For n <= 140 scipy is exact too (Durbin
            # matrix, Pomeranz recursion, or the doubled one-sided tail) and
            # the two agree to rounding: 1e-12 absolute + 1e-9 relative (the
            # relative part covers the doubled tail where both neglect the
            # two-sided term, ~exp(-6 n d^2)).  For n > 140 scipy switches
            # to the Pelz-Good series (for n d^1.5 > 1.4 and n d^2 < 2.2),
            # while we keep the exact matrix.  Its error is largest just
            # above the switch: at n = 141, d = 0.10931371596488071 exact
            # rational arithmetic on the Durbin matrix (fractions.Fraction)
            # gives P(D < d) = 0.9362882778774592, ours 0.93628827787745905,
            # scipy's p is 3.9e-7 off; differences up to 1.3e-6 show here:
            # 2e-6 absolute.
            atol = 1e-12 if n <= 140 else 2e-6
            ck.close(f"KS p exact ({tag})", float(pks), k2.pvalue, atol, 1e-9)
            # One-sided: both exact sums; 1e-10 relative covers the lgamma
            # rounding of our binomial coefficients (n <= 2000).
            ck.close(f"KS+ p ({tag})", float(pkp), kp.pvalue, 1e-14, 1e-10)
            ck.close(f"KS- p ({tag})", float(pkm), km.pvalue, 1e-14, 1e-10)
            cv = stats.cramervonmises(x, "norm")
            ck.close(f"W2 statistic ({tag})", w2, cv.statistic, 1e-15, 1e-12)
            # Same Csorgo-Faraway formula; scipy stops each series at terms
            # below 1e-7, we sum to double precision.  The terms fall off
            # like exp(-k^2/x), so the next term after scipy's stop is far
            # smaller (measured agreement 1.3e-12): 1e-8 absolute.  Below
            # our floor we report a bound, so scipy must be below it too.
            if kcv == "below":
                ck.true(f"W2 p bound ({tag})", cv.pvalue < FLOOR + 1e-8,
                        f"scipy p {cv.pvalue} not below {FLOOR}")
            else:
                ck.close(f"W2 p ({tag})", float(pcv), cv.pvalue, 1e-8)
        elif kind == "est":
            dist, n, res = payload
            a2 = float(f[0])
            # A^2 with scipy's fitted parameters; scipy evaluates the
            # standardised logcdf/logsf, we the cdf of the unstandardised x
            # through GSL: 1e-10 relative.
            ck.close(f"anderson({dist}) A2 n={n}", a2, float(res.statistic), 0.0, 1e-10)
        else:
            dist, n, c, level = payload
            p, kindp = float(f[0]), f[1]
            what = f"p at scipy critical value ({dist}, n={n}, level {level})"
            if dist in ("logistic", "gumbel_r", "gumbel_l"):
                # scipy rounds crit/(modification) to 3 decimals: the level
                # is matched to the change of ln p over 0.0005 (at most ~1.5%
                # between these tables' points) -> 2% relative.
                ck.close(what, p, level, 0.0, 0.02)
                ck.true(what + " kind", kindp in ("point", "above", "below"))
            else:
                key = (dist, n)
                info.setdefault(key, []).append(p / level - 1.0)

    for (dist, n), rels in sorted(info.items()):
        print(f"info: {dist} n={n}: our p at scipy's critical values differs from "
              f"its levels by {min(rels):+.3f} .. {max(rels):+.3f} (relative; "
              f"other table convention)")
    print("worst |diff| per comparison (and as a fraction of its tolerance):")
    groups = {}
    for what, (err, frac) in ck.worst.items():
        key = what.split(" (")[0].split(" n=")[0]
        g = groups.get(key, (0.0, 0.0))
        groups[key] = (max(g[0], err), max(g[1], frac))
    for key in sorted(groups):
        print(f"  {key}: {groups[key][0]:.3g} ({groups[key][1]:.2f} of tolerance)")
    print(f"gof_scipy: {ck.passed} passed, {ck.failed} failed")
    return 0 if ck.failed == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
