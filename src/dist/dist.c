/* scatterprop dist: quantile mapping, log-likelihood and the private helpers
 * the family files share (dist_common.h). */
#include "scatterprop/dist.h"

#include <float.h>
#include <math.h>

#include "dist/dist_common.h"

void sp_family_from_uniform(const sp_family *fam, const double *theta,
                            const double *u, double *out, size_t n)
{
  /* For u > 1/2, 1 - u is exact (Sterbenz's lemma) and the upper quantile
   * keeps the tail's digits that quantile_P(u) would lose. */
  for (size_t i = 0; i < n; i++)
    out[i] = u[i] > 0.5 ? fam->quantile_Q(theta, 1.0 - u[i])
                        : fam->quantile_P(theta, u[i]);
}

double sp_family_loglik(const sp_family *fam, const double *theta,
                        const double *x, size_t n)
{
  /* Neumaier's compensated sum (Neumaier, A. (1974). Rundungsfehleranalyse
   * einiger Verfahren zur Summation endlicher Summen. ZAMM 54(1), 39-51), so
   * a million terms keep the digits a likelihood-ratio comparison needs. */
  double s = 0.0, c = 0.0;
  for (size_t i = 0; i < n; i++) {
    double v = fam->logpdf(theta, x[i]);
    if (!isfinite(v)) return v; /* -inf outside the support; +inf at a pole */
    double t = s + v;
    if (fabs(s) >= fabs(v))
      c += (s - t) + v;
    else
      c += (v - t) + s;
    s = t;
  }
  return s + c;
}

sp_status sp_dist_check_finite(const char *fam, const char *pname, double v,
                               sp_error *err)
{
  if (!isfinite(v))
    return sp_fail(err, SP_EUSAGE, "%s: %s must be finite, got %g", fam, pname, v);
  return SP_OK;
}

sp_status sp_dist_check_positive(const char *fam, const char *pname, double v,
                                 sp_error *err)
{
  if (!(v > 0.0) || !isfinite(v))
    return sp_fail(err, SP_EUSAGE, "%s: %s must be > 0, got %g", fam, pname, v);
  return SP_OK;
}

void sp_dist_summarise(const double *x, size_t n, sp_dist_summary *s)
{
  s->n = n;
  s->min = INFINITY;
  s->max = -INFINITY;
  s->n_nonpos = 0;
  s->n_neg = 0;
  s->n_nonfinite = 0;
  double sum = 0.0;
  for (size_t i = 0; i < n; i++) {
    double v = x[i];
    if (!isfinite(v)) {
      s->n_nonfinite++;
      continue;
    }
    if (v < s->min) s->min = v;
    if (v > s->max) s->max = v;
    if (v <= 0.0) s->n_nonpos++;
    if (v < 0.0) s->n_neg++;
    sum += v;
  }
  double mean = n > 0 ? sum / (double)n : NAN;
  /* Second pass: centred sums, plus the correction term of the corrected
   * two-pass algorithm (Chan, T.F., Golub, G.H. & LeVeque, R.J. (1983).
   * Algorithms for computing the sample variance: analysis and
   * recommendations. The American Statistician 37(3), 242-247). */
  double d1 = 0.0, d2 = 0.0, d3 = 0.0;
  for (size_t i = 0; i < n; i++) {
    double d = x[i] - mean;
    d1 += d;
    d2 += d * d;
    d3 += d * d * d;
  }
  if (n > 0) {
    double corr = d1 / (double)n;
    mean += corr;
    d2 -= d1 * corr;
  }
  s->mean = mean;
  s->m2 = d2 > 0.0 ? d2 : 0.0;
  s->m3 = d3;
}

sp_status sp_dist_need_data(const char *fam, const sp_dist_summary *s,
                            size_t nmin, sp_error *err)
{
  if (s->n_nonfinite > 0)
    return sp_fail(err, SP_EDATA, "%s: the data have %zu non-finite values",
                   fam, s->n_nonfinite);
  if (s->n < nmin)
    return sp_fail(err, SP_EDATA, "%s needs at least %zu values; the data have %zu",
                   fam, nmin, s->n);
  return SP_OK;
}

sp_status sp_dist_need_positive(const char *fam, const sp_dist_summary *s,
                                sp_error *err)
{
  if (s->n_nonpos > 0)
    return sp_fail(err, SP_EDATA,
                   "%s needs values > 0; the data have %zu value%s <= 0 (min %g)",
                   fam, s->n_nonpos, s->n_nonpos == 1 ? "" : "s", s->min);
  return SP_OK;
}

sp_status sp_dist_scan_positive(const char *fam, const double *x, size_t n,
                                sp_error *err)
{
  int bad = n == 0;
  for (size_t i = 0; i < n && !bad; i++)
    bad = !(x[i] > 0.0) || !isfinite(x[i]);
  if (!bad) return SP_OK;
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data(fam, &s, 1, err);
  if (st == SP_OK) st = sp_dist_need_positive(fam, &s, err);
  return st;
}

sp_status sp_dist_need_nonnegative(const char *fam, const sp_dist_summary *s,
                                   sp_error *err)
{
  if (s->n_neg > 0)
    return sp_fail(err, SP_EDATA,
                   "%s needs values >= 0; the data have %zu value%s < 0 (min %g)",
                   fam, s->n_neg, s->n_neg == 1 ? "" : "s", s->min);
  return SP_OK;
}

sp_status sp_dist_need_spread(const char *fam, const sp_dist_summary *s,
                              sp_error *err)
{
  if (!(s->max > s->min))
    return sp_fail(err, SP_EDATA,
                   "%s: all %zu values are equal (%g), so the spread cannot be "
                   "estimated", fam, s->n, s->min);
  return SP_OK;
}

sp_status sp_dist_spread_failure(const char *fam, const sp_dist_summary *s,
                                 sp_error *err)
{
  sp_status st = sp_dist_need_spread(fam, s, err);
  if (st != SP_OK) return st;
  return sp_fail(err, SP_ENUMERIC,
                 "%s: the spread of the data (range %g to %g) under- or "
                 "overflows in double precision", fam, s->min, s->max);
}

sp_status sp_dist_validate_fit(const sp_family *fam, sp_status st,
                               const double *theta, sp_error *err)
{
  if (st != SP_OK) return st;
  sp_error e;
  sp_error_clear(&e);
  if (fam->check(theta, &e) == SP_OK) return SP_OK;
  return sp_fail(err, SP_ENUMERIC, "%s: the data give invalid parameters (%s)",
                 fam->name, e.msg);
}

void sp_dist_log_moments(const double *x, size_t n, double *mean_log,
                         double *m2_log)
{
  double sum = 0.0;
  for (size_t i = 0; i < n; i++) sum += log(x[i]);
  double m = n > 0 ? sum / (double)n : NAN;
  double d1 = 0.0, d2 = 0.0;
  for (size_t i = 0; i < n; i++) {
    double d = log(x[i]) - m;
    d1 += d;
    d2 += d * d;
  }
  if (n > 0) {
    double corr = d1 / (double)n;
    m += corr;
    d2 -= d1 * corr;
  }
  *mean_log = m;
  *m2_log = d2 > 0.0 ? d2 : 0.0;
}

void sp_dist_sample_by_quantile(double (*qP)(const double *, double),
                                double (*qQ)(const double *, double),
                                const double *theta, sp_pcg64 *g, double *out,
                                size_t n)
{
  sp_rng_fill_open(g, out, n);
  for (size_t i = 0; i < n; i++) {
    double u = out[i];
    out[i] = u > 0.5 ? qQ(theta, 1.0 - u) : qP(theta, u);
  }
}

double sp_dist_logit(double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  if (p >= 0.25 && p <= 0.75) {
    /* p / (1 - p) = 1 + (2p - 1) / (1 - p), and 2p - 1 is exact on [1/4, 1]
     * (Sterbenz), so log1p sees the exact distance from 1/2 and the result
     * keeps its relative digits near p = 1/2. */
    double d = 2.0 * p - 1.0;
    return log1p(d / (1.0 - p));
  }
  return log(p) - log1p(-p);
}

double sp_dist_log1mexp(double a)
{
  if (a > 0.0) return NAN;
  return a > -SP_DIST_LN2 ? log(-expm1(a)) : log1p(-exp(a));
}

double sp_dist_logaddexp(double a, double b)
{
  if (a == -INFINITY) return b;
  if (b == -INFINITY) return a;
  double m = a > b ? a : b;
  return m + log1p(exp(-fabs(a - b)));
}

int sp_dist_solve_increasing(sp_dist_fdf fn, void *ctx, double t0, double tol,
                             int maxit, double *root)
{
  double lo = -INFINITY, hi = INFINITY;
  double t = t0, f, df;
  double expand = 1.0;          /* bracket search step, doubled each time */
  double dxold = INFINITY, dx = INFINITY;
  if (fn(t, ctx, &f, &df) != 0 || isnan(f)) return -1;
  for (int it = 0; it < maxit; it++) {
    if (f == 0.0) {
      *root = t;
      return 0;
    }
    if (f < 0.0)
      lo = t;
    else
      hi = t;
    double tn;
    int newton_ok = isfinite(f) && isfinite(df) && df > 0.0;
    if (isfinite(lo) && isfinite(hi)) {
      /* rtsafe's rule: bisect when Newton leaves the bracket or does not
       * halve the step of two iterations ago. */
      tn = newton_ok ? t - f / df : NAN;
      if (!newton_ok || !(tn > lo && tn < hi) ||
          fabs(2.0 * f) > fabs(dxold * df)) {
        dxold = dx;
        tn = 0.5 * (lo + hi);
        dx = tn - t;
      } else {
        dxold = dx;
        dx = tn - t;
      }
      if (hi - lo <= tol * fmax(1.0, fabs(lo))) {
        *root = 0.5 * (lo + hi);
        return 0;
      }
    } else {
      tn = newton_ok ? t - f / df : NAN;
      /* Newton's step, limited to the bracket search step so that a flat
       * start cannot throw the iterate far out. */
      if (!isfinite(tn) || (f < 0.0 && !(tn > t)) || (f > 0.0 && !(tn < t)) ||
          fabs(tn - t) > expand) {
        tn = f < 0.0 ? t + expand : t - expand;
        expand *= 2.0;
      }
      dxold = dx;
      dx = tn - t;
    }
    if (fabs(dx) <= tol * fmax(1.0, fabs(t))) {
      *root = tn;
      return 0;
    }
    t = tn;
    if (fn(t, ctx, &f, &df) != 0 || isnan(f)) return -1;
  }
  if (isfinite(lo) && isfinite(hi)) {
    *root = 0.5 * (lo + hi);
    return 1;
  }
  return -1;
}
