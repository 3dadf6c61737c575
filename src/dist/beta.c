/* beta(alpha, beta, min, max): the beta distribution on [min, max],
 * density ((x - min)/w)^(alpha-1) ((max - x)/w)^(beta-1) / (w B(alpha, beta)),
 * w = max - min; min and max default to 0 and 1.
 *
 * Tails: with y = (x - min)/w and ym = (max - x)/w each computed from its
 * own end, P = I_y(alpha, beta) = 1 - I_ym(beta, alpha), evaluated from
 * whichever of y and ym is smaller (GSL's gsl_cdf_beta_P/_Q), so neither
 * tail passes through 1 - y or 1 - ym, which would round.
 *
 * Quantiles: GSL's gsl_cdf_beta_Pinv returns NAN for p = 1e-300 or small
 * shapes, so the quantile is solved here: for a tail target <= 1/2, on
 * v = log y (or log ym for the upper tail, with the shapes swapped), by
 * safeguarded Newton from the leading term I_y ~ y^alpha / (alpha B), which
 * is exact to rounding when y (1 + |beta - 1|) < DBL_EPSILON/4, so
 * quantiles that underflow come out as min cleanly.
 *
 * Sampler: X = G_a / (G_a + G_b) for independent standard gammas
 * (Marsaglia & Tsang 2000, gamma.c), placed from the nearer end; in logs
 * when a shape is below 1, where a gamma variate can underflow.
 *
 * A model input; fit_start (the method of moments) is provided for an
 * explicit request, but the family is not offered as an automatic fitting
 * candidate (no SP_FAMILY_FIT): with min and max free its likelihood is
 * unbounded for shapes below 1. */
#include <float.h>
#include <math.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_sf_gamma.h>

#include "dist/dist_common.h"

enum { ALPHA, BETA, MIN, MAX };

/* Quantile solver: tolerance 2 DBL_EPSILON on log y, and an iteration cap
 * that bisection alone could not exhaust over the double range. */
#define BETA_QTOL (2.0 * DBL_EPSILON)
#define BETA_QMAXIT 200

/* The larger the smaller shape, the more terms GSL's continued fraction
 * for the incomplete beta needs near the mean; once both shapes pass some
 * 5e5 it runs out of iterations and gsl_cdf_beta_P returns NaN (measured
 * with GSL 2.7: beta(1e6, 1e6) has NaN tails within 3 sd of the mean and a
 * median 0.12 sd off; beta(8.65e5, 8.65e5) and beta(1e10, 1e5) are clean).
 * So the smaller shape is capped, with a margin; a beta that narrow (sd
 * below 1/630 of the range) is a normal to within its skewness. */
#define BETA_MAX_MIN_SHAPE 1e5

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_positive("beta", "alpha", t[ALPHA], err);
  if (s == SP_OK) s = sp_dist_check_positive("beta", "beta", t[BETA], err);
  if (s == SP_OK) s = sp_dist_check_finite("beta", "min", t[MIN], err);
  if (s == SP_OK) s = sp_dist_check_finite("beta", "max", t[MAX], err);
  if (s != SP_OK) return s;
  if (!(t[MAX] > t[MIN]))
    return sp_fail(err, SP_EUSAGE, "beta: max must be > min, got min %g, max %g",
                   t[MIN], t[MAX]);
  if (!isfinite(t[MAX] - t[MIN]))
    return sp_fail(err, SP_EUSAGE,
                   "beta: max - min must be finite, got min %g, max %g", t[MIN],
                   t[MAX]);
  if (t[ALPHA] > BETA_MAX_MIN_SHAPE && t[BETA] > BETA_MAX_MIN_SHAPE)
    return sp_fail(err, SP_EUSAGE,
                   "beta: %s must be at most %g when %s is larger too, got alpha %g, "
                   "beta %g", t[ALPHA] <= t[BETA] ? "alpha" : "beta", BETA_MAX_MIN_SHAPE,
                   t[ALPHA] <= t[BETA] ? "beta" : "alpha", t[ALPHA], t[BETA]);
  return SP_OK;
}

static void support(const double *t, double *lo, double *hi)
{
  *lo = t[MIN];
  *hi = t[MAX];
}

/* (s - 1) log(u), taken as 0 for s = 1 (including u = 0). */
static double power_log(double s, double u)
{
  return s == 1.0 ? 0.0 : (s - 1.0) * log(u);
}

static double logpdf(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x < t[MIN] || x > t[MAX]) return -INFINITY;
  double w = t[MAX] - t[MIN];
  double y = (x - t[MIN]) / w, ym = (t[MAX] - x) / w;
  return power_log(t[ALPHA], y) + power_log(t[BETA], ym) -
         gsl_sf_lnbeta(t[ALPHA], t[BETA]) - log(w);
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x <= t[MIN]) return 0.0;
  if (x >= t[MAX]) return 1.0;
  double w = t[MAX] - t[MIN], y = (x - t[MIN]) / w, ym = (t[MAX] - x) / w;
  return y <= ym ? gsl_cdf_beta_P(y, t[ALPHA], t[BETA])
                 : gsl_cdf_beta_Q(ym, t[BETA], t[ALPHA]);
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x <= t[MIN]) return 1.0;
  if (x >= t[MAX]) return 0.0;
  double w = t[MAX] - t[MIN], y = (x - t[MIN]) / w, ym = (t[MAX] - x) / w;
  return ym <= y ? gsl_cdf_beta_P(ym, t[BETA], t[ALPHA])
                 : gsl_cdf_beta_Q(y, t[ALPHA], t[BETA]);
}

/* ---- quantiles ---------------------------------------------------------- */

typedef struct {
  double a, b, lnb, ltarget;
} qctx;

/* F(v) = log I_y(a, b) - log target with y = e^v, increasing;
 * F' = y f(y) / I. */
static int lower_fdf(double v, void *vc, double *f, double *df)
{
  const qctx *c = vc;
  double y = exp(v);
  if (!(y < 1.0)) {
    *f = -c->ltarget;
    *df = 0.0;
    return 0;
  }
  if (y * (1.0 + fabs(c->b - 1.0)) < 0.25 * DBL_EPSILON) {
    *f = c->a * v - log(c->a) - c->lnb - c->ltarget;
    *df = c->a;
    return 0;
  }
  double p = gsl_cdf_beta_P(y, c->a, c->b);
  if (!(p > 0.0)) {
    *f = -INFINITY;
    *df = INFINITY;
    return 0;
  }
  double lp = log(p);
  *f = lp - c->ltarget;
  *df = exp(c->a * v + (c->b - 1.0) * log1p(-y) - c->lnb - lp);
  return 0;
}

/* The y in [0, 1] with I_y(a, b) = target, target in (0, 1/2]. */
static double std_lower(double a, double b, double target)
{
  qctx c = {a, b, gsl_sf_lnbeta(a, b), log(target)};
  double v0 = (c.ltarget + log(a) + c.lnb) / a;
  double vm = log(a / (a + b));
  if (v0 > vm) v0 = vm;
  double root;
  /* rc = 1 (bracketed, not to full tolerance) still gives the bracket's
   * midpoint, within rounding noise of the root. */
  if (sp_dist_solve_increasing(lower_fdf, &c, v0, BETA_QTOL, BETA_QMAXIT, &root) < 0)
    return NAN;
  double y = exp(root);
  return y < 1.0 ? y : 1.0;
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  if (p == 0.0) return t[MIN];
  if (p == 1.0) return t[MAX];
  double w = t[MAX] - t[MIN];
  if (p <= 0.5) return t[MIN] + w * std_lower(t[ALPHA], t[BETA], p);
  return t[MAX] - w * std_lower(t[BETA], t[ALPHA], 1.0 - p);
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  if (q == 0.0) return t[MAX];
  if (q == 1.0) return t[MIN];
  double w = t[MAX] - t[MIN];
  if (q <= 0.5) return t[MAX] - w * std_lower(t[BETA], t[ALPHA], q);
  return t[MIN] + w * std_lower(t[ALPHA], t[BETA], 1.0 - q);
}

static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  double w = t[MAX] - t[MIN], a = t[ALPHA], b = t[BETA];
  if (a >= 1.0 && b >= 1.0) {
    /* Both gammas are at least ~1e-5 with overwhelming probability and never
     * underflow: the ratio is formed directly. */
    for (size_t i = 0; i < n; i++) {
      double ga = sp_dist_gamma_variate(a, g), gb = sp_dist_gamma_variate(b, g);
      double s = ga + gb;
      out[i] = ga <= gb ? t[MIN] + w * (ga / s) : t[MAX] - w * (gb / s);
    }
    return;
  }
  /* A shape below 1 can give gammas below the double range: logs. */
  for (size_t i = 0; i < n; i++) {
    double la = sp_dist_gamma_log_variate(a, g);
    double lb = sp_dist_gamma_log_variate(b, g);
    double ls = sp_dist_logaddexp(la, lb);
    out[i] = la <= lb ? t[MIN] + w * exp(la - ls) : t[MAX] - w * exp(lb - ls);
  }
}

static double mean(const double *t)
{
  double a = t[ALPHA], b = t[BETA];
  return t[MIN] + (t[MAX] - t[MIN]) * (a / (a + b));
}

static double variance(const double *t)
{
  double a = t[ALPHA], b = t[BETA], w = t[MAX] - t[MIN], s = a + b;
  return w * w * (a / s) * (b / s) / (s + 1.0);
}

/* Method of moments on y = (x - min)/(max - min): with m and v the mean and
 * variance of y, alpha = m k and beta = (1 - m) k, k = m (1 - m)/v - 1.
 * min and max, unless fixed, start one expected gap (range/(n - 1)) beyond
 * the data, as for the uniform. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("beta", &s, 2, err);
  if (st == SP_OK) st = sp_dist_need_spread("beta", &s, err);
  if (st != SP_OK) return st;
  double gap = (s.max - s.min) / (double)(n - 1);
  if (!sp_dist_is_fixed(fixed, MIN)) t[MIN] = s.min - gap;
  if (!sp_dist_is_fixed(fixed, MAX)) t[MAX] = s.max + gap;
  if (s.min < t[MIN] || s.max > t[MAX])
    return sp_fail(err, SP_EDATA,
                   "beta: the data range %g to %g lies outside [min, max] = "
                   "[%g, %g]", s.min, s.max, t[MIN], t[MAX]);
  if (!(t[MAX] > t[MIN]))
    return sp_fail(err, SP_EDATA, "beta: max must be > min, got min %g, max %g",
                   t[MIN], t[MAX]);
  double w = t[MAX] - t[MIN];
  double m = (s.mean - t[MIN]) / w, v = s.m2 / (double)n / (w * w);
  int fa = sp_dist_is_fixed(fixed, ALPHA), fb = sp_dist_is_fixed(fixed, BETA);
  if (!(m > 0.0 && m < 1.0)) m = 0.5;
  if (fa && !fb) {
    t[BETA] = t[ALPHA] * (1.0 - m) / m;
  } else if (fb && !fa) {
    t[ALPHA] = t[BETA] * m / (1.0 - m);
  } else if (!fa && !fb) {
    double k = m * (1.0 - m) / v - 1.0;
    if (k > 0.0 && isfinite(k)) {
      t[ALPHA] = m * k;
      t[BETA] = (1.0 - m) * k;
    } else {
      /* Spread too large for a beta with these ends: start from the
       * uniform. */
      t[ALPHA] = 1.0;
      t[BETA] = 1.0;
    }
  }
  return SP_OK;
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_beta, start_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_beta = {
  .name = "beta",
  .title = "Beta (4-parameter)",
  .flags = SP_FAMILY_PROPAGATE,
  .nparam = 4,
  .param_names = {"alpha", "beta", "min", "max"},
  .param_kinds = {SP_PARAM_POSITIVE, SP_PARAM_POSITIVE, SP_PARAM_BELOW_DATA,
                  SP_PARAM_ABOVE_DATA},
  .param_defaults = {NAN, NAN, 0.0, 1.0},
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
  .fit_start = fit_start,
  .fit_mle = NULL,
};
