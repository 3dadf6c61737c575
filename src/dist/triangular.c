/* triangular(min, mode, max): density rising linearly from min to mode and
 * falling to max.  Both tails are closed forms measured from their own end,
 *   P(x) = (x - min)^2 / ((max - min)(mode - min))   for x <= mode,
 *   Q(x) = (max - x)^2 / ((max - min)(max - mode))   for x >= mode,
 * and so are both quantiles (square roots of the same), each written so
 * that it does not cancel (see far_side and beyond).  A model input only
 * (no fitting hooks). */
#include <math.h>

#include "dist/dist_common.h"

enum { MIN, MODE, MAX };

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_finite("triangular", "min", t[MIN], err);
  if (s == SP_OK) s = sp_dist_check_finite("triangular", "mode", t[MODE], err);
  if (s == SP_OK) s = sp_dist_check_finite("triangular", "max", t[MAX], err);
  if (s != SP_OK) return s;
  if (!(t[MAX] > t[MIN]))
    return sp_fail(err, SP_EUSAGE,
                   "triangular: max must be > min, got min %g, max %g", t[MIN],
                   t[MAX]);
  if (!(t[MODE] >= t[MIN] && t[MODE] <= t[MAX]))
    return sp_fail(err, SP_EUSAGE,
                   "triangular: mode must lie in [min, max] = [%g, %g], got %g",
                   t[MIN], t[MAX], t[MODE]);
  if (!isfinite(t[MAX] - t[MIN]))
    return sp_fail(err, SP_EUSAGE,
                   "triangular: max - min must be finite, got min %g, max %g",
                   t[MIN], t[MAX]);
  return SP_OK;
}

static void support(const double *t, double *lo, double *hi)
{
  *lo = t[MIN];
  *hi = t[MAX];
}

static double logpdf_raw(const double *t, double x)
{
  if (isnan(x)) return NAN;
  double a = t[MIN], c = t[MODE], b = t[MAX];
  if (x < a || x > b) return -INFINITY;
  if (x < c) return log(2.0 * (x - a) / ((b - a) * (c - a)));
  if (x > c) return log(2.0 * (b - x) / ((b - a) * (b - c)));
  return log(2.0 / (b - a));
}

/* Each tail beyond the mode in a form without cancellation:
 *   1 - (b - x)^2 / ((b - a)(b - c))
 *     = [(b - c)(c - a) + (x - c)(2b - c - x)] / ((b - a)(b - c)),
 * a sum of non-negative terms (expand b - x = (b - c) - (x - c)); and
 * the mirror image for P below the mode.  So P stays accurate just above
 * min when mode = min, and Q just below max when mode = max. */
static double far_side(double a, double c, double b, double x)
{
  return ((b - c) * (c - a) + (x - c) * (2.0 * b - c - x)) / ((b - a) * (b - c));
}

static double cdf_P_raw(const double *t, double x)
{
  if (isnan(x)) return NAN;
  double a = t[MIN], c = t[MODE], b = t[MAX];
  if (x <= a) return 0.0;
  if (x >= b) return 1.0;
  if (x <= c) return (x - a) * (x - a) / ((b - a) * (c - a));
  return far_side(a, c, b, x);
}

static double cdf_Q_raw(const double *t, double x)
{
  if (isnan(x)) return NAN;
  double a = t[MIN], c = t[MODE], b = t[MAX];
  if (x <= a) return 1.0;
  if (x >= b) return 0.0;
  if (x >= c) return (b - x) * (b - x) / ((b - a) * (b - c));
  return far_side(-b, -c, -a, -x);
}

/* The quantile with P-mass p in the rising part (p <= F(mode)):
 * min + sqrt(p (b - a)(c - a)).  Beyond the mode, with s = sqrt((1 - p)
 * (b - a)(b - c)), the root b - s is rewritten as
 *   c + (b - c)(b - a)(p - F(c)) / ((b - c) + s),
 * (rationalising (b - c) - s), which keeps its digits for small p when the
 * mode is at min, where b - s would cancel. */
static double rising(double a, double c, double b, double p)
{
  return a + sqrt(p * (b - a) * (c - a));
}

static double beyond(double a, double c, double b, double p)
{
  double fc = (c - a) / (b - a);
  double s = sqrt((1.0 - p) * (b - a) * (b - c));
  return c + (b - c) * ((b - a) * (p - fc)) / ((b - c) + s);
}

static double quantile_P_raw(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  double a = t[MIN], c = t[MODE], b = t[MAX];
  if (p <= (c - a) / (b - a)) return rising(a, c, b, p);
  return beyond(a, c, b, p);
}

/* The mirror image: Q-mass q from max is the P-mass q of -X. */
static double quantile_Q_raw(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  double a = t[MIN], c = t[MODE], b = t[MAX];
  if (q <= (b - c) / (b - a)) return -rising(-b, -c, -a, q);
  return -beyond(-b, -c, -a, q);
}

/* The closed forms multiply two widths, which overflows for widths above
 * 1e154 and underflows below 1e-154 (triangular(-1e300, 0, 1) gave NaN
 * quantiles, triangular(0, 1e-300, 1e-300) a NaN log density).  Such
 * parameters are first scaled by a power of two that brings the width near
 * 1: exact, so the results are those of the forms above in exact range.
 * Widths within 2^(+-TRI_SCALE_EXP) are left alone, which keeps every
 * ordinary result bit for bit. */
#define TRI_SCALE_EXP 500

/* 2^k with the width of t times 2^k near 1, or 0 when no scaling is
 * needed; ts receives the scaled parameters. */
static int tri_scale(const double *t, double ts[3])
{
  int e;
  frexp(t[MAX] - t[MIN], &e);
  if (e >= -TRI_SCALE_EXP && e <= TRI_SCALE_EXP) return 0;
  for (int i = 0; i < 3; i++) ts[i] = ldexp(t[i], -e);
  return -e;
}

static double logpdf(const double *t, double x)
{
  double ts[3];
  int k = tri_scale(t, ts);
  if (k == 0) return logpdf_raw(t, x);
  /* f(x) = 2^k f_s(2^k x) */
  return logpdf_raw(ts, ldexp(x, k)) + k * SP_DIST_LN2;
}

static double cdf_P(const double *t, double x)
{
  double ts[3];
  int k = tri_scale(t, ts);
  return k == 0 ? cdf_P_raw(t, x) : cdf_P_raw(ts, ldexp(x, k));
}

static double cdf_Q(const double *t, double x)
{
  double ts[3];
  int k = tri_scale(t, ts);
  return k == 0 ? cdf_Q_raw(t, x) : cdf_Q_raw(ts, ldexp(x, k));
}

static double quantile_P(const double *t, double p)
{
  double ts[3];
  int k = tri_scale(t, ts);
  return k == 0 ? quantile_P_raw(t, p) : ldexp(quantile_P_raw(ts, p), -k);
}

static double quantile_Q(const double *t, double q)
{
  double ts[3];
  int k = tri_scale(t, ts);
  return k == 0 ? quantile_Q_raw(t, q) : ldexp(quantile_Q_raw(ts, q), -k);
}

static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_dist_sample_by_quantile(quantile_P, quantile_Q, t, g, out, n);
}

static double mean(const double *t) { return (t[MIN] + t[MODE] + t[MAX]) / 3.0; }

/* (a^2 + b^2 + c^2 - ab - ac - bc)/18, written as a sum of squares of
 * differences so that nothing cancels. */
static double variance(const double *t)
{
  double ab = t[MAX] - t[MIN], ac = t[MODE] - t[MIN], cb = t[MAX] - t[MODE];
  return (ab * ab + ac * ac + cb * cb) / 36.0;
}

const sp_family sp_dist_triangular = {
  .name = "triangular",
  .title = "Triangular",
  .flags = SP_FAMILY_PROPAGATE,
  .nparam = 3,
  .param_names = {"min", "mode", "max"},
  .param_kinds = {SP_PARAM_REAL, SP_PARAM_REAL, SP_PARAM_REAL},
  .param_defaults = {NAN, NAN, NAN},
  .check = check,
  .support = support,
  .logpdf = logpdf,
  .cdf_P = cdf_P,
  .cdf_Q = cdf_Q,
  .quantile_P = quantile_P,
  .quantile_Q = quantile_Q,
  .sample = sample,
  .mean = mean,
  .variance = variance,
  .fit_start = NULL,
  .fit_mle = NULL,
};
