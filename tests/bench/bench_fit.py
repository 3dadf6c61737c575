#!/usr/bin/env python3
"""Fit benchmark: scatterprop against scipy on the same data, same run.

Usage: bench_fit.py BUILD_DIR [--py-reps R]

1. 2-parameter Weibull MLE at n = 1,000,000: bench_fit (sp_fit_mle, best of
   5) against scipy.stats.weibull_min.fit(x, floc=0) (best of 3); goal >= 30x.
2. Parametric-bootstrap A^2 p-value, B = 1000, n = 50, every replicate
   refitted: bench_fit on 1 and 2 threads against a Python loop of R
   replicates (default 1000) of weibull_min.rvs + weibull_min.fit(floc=0)
   + A^2 by its definition; the loop time is scaled to 1000 replicates if
   R < 1000.  Goal >= 300x on one thread, faster again on two.
Prints the figures and the ratios.
"""
import os
import subprocess
import sys
import tempfile
import time

import numpy as np
from scipy import stats


def run(cmd):
    out = subprocess.run(cmd, capture_output=True, text=True, check=True)
    return dict(zip(out.stdout.split()[0::2], out.stdout.split()[1::2]))


def a2_stat(x, c, scale):
    xs = np.sort(x)
    n = len(xs)
    i = np.arange(1, n + 1)
    return -n - np.sum((2 * i - 1) * (stats.weibull_min.logcdf(xs, c, 0, scale)
                                      + stats.weibull_min.logsf(xs[::-1], c, 0, scale))) / n


def main():
    if len(sys.argv) < 2:
        print(__doc__)
        return 2
    build = sys.argv[1]
    reps = 1000
    if "--py-reps" in sys.argv:
        reps = int(sys.argv[sys.argv.index("--py-reps") + 1])
    exe = os.path.join(build, "tests", "bench_fit")
    rng = np.random.default_rng(12345)
    with tempfile.TemporaryDirectory() as d:
        # 1. Weibull MLE, n = 1e6.
        x = stats.weibull_min.rvs(1.8, scale=250.0, size=1_000_000, random_state=rng)
        f = os.path.join(d, "big.f64")
        x.astype(np.float64).tofile(f)
        c = run([exe, "weibull", f])
        best = float("inf")
        for _ in range(3):
            t0 = time.perf_counter()
            k, _, lam = stats.weibull_min.fit(x, floc=0)
            best = min(best, time.perf_counter() - t0)
        tc = float(c["seconds"])
        print(f"weibull MLE n=1e6: scatterprop {tc:.4f} s (shape {float(c['shape']):.10g}, "
              f"scale {float(c['scale']):.10g}); scipy {best:.4f} s (shape {k:.10g}, "
              f"scale {lam:.10g}); ratio {best / tc:.1f}x (goal >= 30x)")

        # 2. Bootstrap, B = 1000, n = 50.
        x50 = stats.weibull_min.rvs(2.0, scale=10.0, size=50, random_state=rng)
        f = os.path.join(d, "small.f64")
        x50.astype(np.float64).tofile(f)
        c1 = run([exe, "bootstrap", f, "1000", "1"])
        c2 = run([exe, "bootstrap", f, "1000", "2"])
        k0, _, lam0 = stats.weibull_min.fit(x50, floc=0)
        t_obs = a2_stat(x50, k0, lam0)
        t0 = time.perf_counter()
        ge = 0
        for _ in range(reps):
            xb = stats.weibull_min.rvs(k0, scale=lam0, size=50, random_state=rng)
            kb, _, lb = stats.weibull_min.fit(xb, floc=0)
            ge += a2_stat(xb, kb, lb) >= t_obs
        tp = (time.perf_counter() - t0) * 1000.0 / reps
        p_py = (1 + ge) / (reps + 1)
        t1, t2 = float(c1["seconds"]), float(c2["seconds"])
        print(f"bootstrap A2 p, B=1000, n=50: scatterprop 1 thread {t1:.4f} s, 2 threads "
              f"{t2:.4f} s (p {float(c1['p']):.4g}, identical on 2 threads: "
              f"{c1['p'] == c2['p']}); scipy loop {tp:.2f} s for 1000 "
              f"({reps} run, p {p_py:.4g})")
        print(f"  ratio 1 thread {tp / t1:.0f}x (goal >= 300x), 2 threads {tp / t2:.0f}x, "
              f"2-thread speed-up {t1 / t2:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
