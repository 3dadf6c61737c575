#!/usr/bin/env python3
"""Live cross-check of sp_stats_describe against numpy and scipy.

Usage: stats_scipy.py PATH_TO_STATS_DRIVER

Datasets come from numpy's default generator with a fixed seed; each is
written to a file, described by the C driver (tests/stats_driver.c), and
every field is compared with

    mean      numpy.mean(x)
    sd        numpy.std(x, ddof=1)
    min, max  numpy.min, numpy.max
    q1, median, q3
              numpy.percentile(x, [25, 50, 75], method='linear')
              (Hyndman & Fan definition 7)
    skewness  scipy.stats.skew(x, bias=True)          (n >= 3, else NaN)
    kurtosis  scipy.stats.kurtosis(x, fisher=True, bias=True)
                                                      (n >= 4, else NaN)

Tolerance against numpy/scipy: |ours - reference| <= 1e-12 * scale.  Both
sides evaluate the same formulas in IEEE double; the differences are the
order of the sums (numpy sums pairwise, with an error below about
log2(n) * eps * the sum of the terms' magnitudes, i.e. ~1e-15 of it for
n <= 2000; ours are compensated sums, ~2 eps), a few roundings in the
quotients and powers, and the centre of the moments: scipy takes central
moments about its rounded mean, we correct ours to the exact mean (see
src/stats.c).  1e-12 leaves a margin of ~1000 over these while any wrong
formula (n instead of n - 1, another quantile definition, an unbiased
skewness) is off by 1e-4 or more.  The scale is what the rounding errors are
proportional to:
    mean      mean(|x|): a sum is only accurate relative to its terms
    sd        sd
    min, max, quartiles
              the value itself (order statistics; the interpolation is
              numpy's formula, so these agree to the last bit in practice)
    skewness  mean(|d|^3) / m2^1.5 + 3 mean(|x|) / sd
    kurtosis  m4 / m2^2 + 4 (mean(|d|^3) / m2^1.5) mean(|x|) / sd
              (d = x - mean, m_k = mean(d^k)).  The first terms bound the
              sums; the second are the sensitivities |dg1/dmu| = 3 / sd and
              |dg2/dmu| = 4 |g1| / sd to the centre, times mean(|x|), the
              scale of the reference's own error in the mean: for
              1e6 + N(0, 0.1) data scipy's skewness is itself off in the 9th
              digit.

Tolerance against exact values: the mean, the sample variance and the
biased moment ratios are also computed exactly in rational arithmetic from
the same doubles (Python's fractions module) and compared with
|ours - exact| <= 1e-13 * scale, the scale as above without the
sensitivity terms.  Our rounding errors are a few eps of the scale (the
deviations x - mean carry one rounding each, the sums ~2 eps), so 1e-13 is
a margin of ~100.

Exit status: 0 all agree, 1 a difference or a driver failure, 77 scipy
cannot be imported (ctest SKIP_RETURN_CODE).
"""
import math
import os
from fractions import Fraction
import subprocess
import sys
import tempfile

try:
    import numpy as np
    from scipy import stats
except ImportError as exc:  # reported as "skipped" by ctest, never as passed
    print(f"SKIP: numpy/scipy cannot be imported ({exc})")
    sys.exit(77)

RTOL = 1e-12
RTOL_EXACT = 1e-13
SEED = 20240611
FIELDS = ["mean", "sd", "min", "max", "q1", "median", "q3", "skewness", "kurtosis"]
EXACT_FIELDS = ["mean", "sd", "skewness", "kurtosis"]


def datasets():
    rng = np.random.default_rng(SEED)
    yield "normal(10, 2), n=1000", rng.normal(10.0, 2.0, 1000)
    yield "normal(0, 1), n=1001", rng.normal(0.0, 1.0, 1001)
    yield "lognormal(0, 1), n=1500", rng.lognormal(0.0, 1.0, 1500)
    yield "3 * t(5), n=2000", 3.0 * rng.standard_t(5, 2000)
    yield "integers 0..9 (ties), n=777", rng.integers(0, 10, 777).astype(float)
    yield "1e6 + normal(0, 0.1), n=1000", 1e6 + rng.normal(0.0, 0.1, 1000)
    yield "exponential(1), n=9", rng.exponential(1.0, 9)
    for n in (2, 3, 4):
        yield f"normal(5, 1), n={n}", rng.normal(5.0, 1.0, n)
    yield "constant 2.5, n=5", np.full(5, 2.5)


def reference(x):
    """numpy/scipy values and the scales of their tolerances."""
    n = x.size
    mean = np.mean(x)
    d = x - mean
    m2 = np.mean(d**2)
    ref = {
        "mean": mean,
        "sd": np.std(x, ddof=1) if n >= 2 else math.nan,
        "min": np.min(x),
        "max": np.max(x),
    }
    ref["q1"], ref["median"], ref["q3"] = np.percentile(x, [25, 50, 75], method="linear")
    scale = {
        "mean": np.mean(np.abs(x)),
        "sd": ref["sd"],
        "min": abs(ref["min"]),
        "max": abs(ref["max"]),
        "q1": abs(ref["q1"]),
        "median": abs(ref["median"]),
        "q3": abs(ref["q3"]),
    }
    exact_scale = dict(scale)
    constant = np.min(x) == np.max(x)
    ref["skewness"] = ref["kurtosis"] = math.nan
    if not constant:
        shape3 = np.mean(np.abs(d) ** 3) / m2**1.5
        centre = np.mean(np.abs(x)) / math.sqrt(m2)
        if n >= 3:
            ref["skewness"] = stats.skew(x, bias=True)
            exact_scale["skewness"] = shape3
            scale["skewness"] = shape3 + 3.0 * centre
        if n >= 4:
            ref["kurtosis"] = stats.kurtosis(x, fisher=True, bias=True)
            exact_scale["kurtosis"] = np.mean(d**4) / m2**2
            scale["kurtosis"] = exact_scale["kurtosis"] + 4.0 * shape3 * centre
    else:
        ref["sd"] = scale["sd"] = exact_scale["sd"] = 0.0
    as_float = lambda m: {k: float(v) for k, v in m.items()}
    return as_float(ref), as_float(scale), as_float(exact_scale)


def exact(x):
    """Mean, sd, skewness and kurtosis from exact rational moments."""
    fx = [Fraction(v) for v in x.tolist()]
    n = len(fx)
    mu = sum(fx) / n
    d = [v - mu for v in fx]
    s2 = sum(t * t for t in d)
    out = {"mean": float(mu), "sd": math.sqrt(s2 / (n - 1)) if n >= 2 else math.nan}
    out["skewness"] = out["kurtosis"] = math.nan
    if s2 > 0:
        m2 = s2 / n
        m3 = sum(t**3 for t in d) / n
        m4 = sum(t**4 for t in d) / n
        if n >= 3:
            # m3 / m2^1.5 = (m3 / m2) / sqrt(m2): one rounding before the root
            out["skewness"] = float(m3 / m2) / math.sqrt(m2)
        if n >= 4:
            out["kurtosis"] = float(m4 / (m2 * m2) - 3)
    elif n >= 2:
        out["sd"] = 0.0
    return out


def compare(name, source, got, ref, scale, rtol, worst):
    """Counts the fields of got that differ from ref beyond rtol * scale."""
    failures = 0
    for f in ref:
        g, r = got[f], ref[f]
        if math.isnan(r):
            if not math.isnan(g):
                print(f"FAIL {name}: {f} = {g!r}, {source} NaN")
                failures += 1
            continue
        err = abs(g - r)
        s = scale[f]
        rel = err / s if s > 0 else (0.0 if err == 0 else math.inf)
        worst[f] = max(worst[f], rel)
        if rel > rtol:
            print(f"FAIL {name}: {f} = {g!r}, {source} {r!r}, "
                  f"error {err:.3g} = {rel:.3g} of scale {s:.6g} (limit {rtol:g})")
            failures += 1
    return failures


def run_driver(driver, path):
    proc = subprocess.run([driver, path], capture_output=True, text=True, check=False)
    if proc.returncode != 0:
        raise RuntimeError(f"driver failed ({proc.returncode}): {proc.stderr.strip()}")
    out = {}
    for line in proc.stdout.splitlines():
        key, value = line.split()
        out[key] = float(value)
    return out


def main():
    if len(sys.argv) != 2:
        print("usage: stats_scipy.py PATH_TO_STATS_DRIVER", file=sys.stderr)
        return 1
    driver = sys.argv[1]
    failures = 0
    worst = {f: 0.0 for f in FIELDS}
    worst_exact = {f: 0.0 for f in EXACT_FIELDS}
    with tempfile.TemporaryDirectory() as tmp:
        for i, (name, x) in enumerate(datasets()):
            path = os.path.join(tmp, f"data{i}.txt")
            with open(path, "w", encoding="ascii") as fh:
                fh.write("".join(f"{v!r}\n" for v in x.tolist()))
            try:
                got = run_driver(driver, path)
            except RuntimeError as exc:
                print(f"FAIL {name}: {exc}")
                failures += 1
                continue
            ref, scale, exact_scale = reference(x)
            if int(got["n"]) != x.size:
                print(f"FAIL {name}: n = {got['n']}, want {x.size}")
                failures += 1
            failures += compare(name, "numpy/scipy", got, ref, scale, RTOL, worst)
            failures += compare(name, "exact", got, exact(x), exact_scale, RTOL_EXACT,
                                worst_exact)
            print(f"checked {name}")
    print("largest error / scale vs numpy/scipy: "
          + ", ".join(f"{f} {worst[f]:.2g}" for f in FIELDS))
    print("largest error / scale vs exact: "
          + ", ".join(f"{f} {worst_exact[f]:.2g}" for f in EXACT_FIELDS))
    print(f"numpy {np.__version__}, scipy {__import__('scipy').__version__}, seed {SEED}")
    if failures:
        print(f"{failures} difference(s)")
        return 1
    print("all fields agree")
    return 0


if __name__ == "__main__":
    sys.exit(main())
