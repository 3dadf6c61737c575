/* gumbel_max(location, scale): the extreme value distribution of the
 * largest value (Gumbel, type I), F(x) = exp(-exp(-(x - location)/scale)).
 * P = exp(-e^-z) and Q = -expm1(-e^-z) are both direct; the quantiles are
 * location - scale log(-log p) and location - scale log(-log1p(-q)).
 *
 * Maximum likelihood (shared with gumbel_min through sp_dist_gumbel_mle,
 * which fits the largest-value form to sign * x): with both parameters
 * free the scale b solves
 *   b - mean(y) + sum y w / sum w = 0,   w = exp(-y/b),
 * whose left side increases in b (the weighted mean's derivative is the
 * weighted variance over b^2), and then location = -b log(mean(exp(-y/b)))
 * (both equations follow from setting the derivatives of the log-likelihood
 * to zero and eliminating the location).  With the location fixed,
 * b solves mean(z (1 - e^-z)) = 1, z = (y - location)/b, whose left side
 * decreases in b.  Both are solved on log b by safeguarded Newton, with the
 * weights taken relative to the smallest y so they cannot overflow. */
#include <float.h>
#include <math.h>

#include "dist/dist_common.h"

enum { LOC, SCALE };

/* Tolerance on log scale: Newton is quadratic, so the iterate after a step
 * below 1e-12 is accurate to rounding; the cap is far beyond what the
 * bracketing (halving at worst) needs over the double range. */
#define GUMBEL_TOL 1e-12
#define GUMBEL_MAXIT 200

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_finite("gumbel_max", "location", t[LOC], err);
  if (s == SP_OK) s = sp_dist_check_positive("gumbel_max", "scale", t[SCALE], err);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  (void)t;
  *lo = -INFINITY;
  *hi = INFINITY;
}

static double logpdf(const double *t, double x)
{
  double z = (x - t[LOC]) / t[SCALE];
  if (isinf(z)) return -INFINITY;
  return -log(t[SCALE]) - z - exp(-z);
}

static double cdf_P(const double *t, double x)
{
  return exp(-exp(-(x - t[LOC]) / t[SCALE]));
}

static double cdf_Q(const double *t, double x)
{
  return -expm1(-exp(-(x - t[LOC]) / t[SCALE]));
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  return t[LOC] - t[SCALE] * log(-log(p));
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  return t[LOC] - t[SCALE] * log(-log1p(-q));
}

/* location - scale log E for standard exponential E from the ziggurat
 * (sp_rng_fill_exponential): P(-log E <= x) = P(E >= exp(-x)) =
 * exp(-exp(-x)).  One log per draw instead of inversion's two; E > 0, so
 * the log is finite. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_exponential(g, out, n);
  const double loc = t[LOC], s = t[SCALE];
  for (size_t i = 0; i < n; i++) out[i] = loc - s * log(out[i]);
}

static double mean(const double *t) { return t[LOC] + SP_DIST_EULER * t[SCALE]; }

static double variance(const double *t)
{
  return SP_DIST_PI * SP_DIST_PI / 6.0 * t[SCALE] * t[SCALE];
}

/* ---- maximum likelihood (largest-value form on y = sign * x) ------------ */

typedef struct {
  const double *x;
  size_t n;
  double sign;
  double ymin;  /* min of y */
  double dbar;  /* mean of y - ymin */
  double loc;   /* fixed location (in y) */
} gctx;

/* Both free: F(t) = b - mean(d) + sum d w / sum w with d = y - ymin >= 0,
 * w = exp(-d/b) in (0, 1]; F' = b (1 + var_w(d)/b^2). */
static int both_fdf(double t, void *vc, double *f, double *df)
{
  const gctx *c = vc;
  double b = exp(t), s0 = 0.0, s1 = 0.0, s2 = 0.0;
  for (size_t i = 0; i < c->n; i++) {
    double d = c->sign * c->x[i] - c->ymin;
    double w = exp(-d / b);
    s0 += w;
    s1 += w * d;
    s2 += w * d * d;
  }
  double m = s1 / s0, v = s2 / s0 - m * m;
  if (v < 0.0) v = 0.0;
  *f = b - c->dbar + m;
  *df = b + v / b;
  return 0;
}

/* Location fixed: F(t) = 1 - mean(z (1 - e^-z)), increasing in t = log b;
 * F' = mean(z - z e^-z + z^2 e^-z). */
static int scale_fdf(double t, void *vc, double *f, double *df)
{
  const gctx *c = vc;
  double b = exp(t), s = 0.0, sd = 0.0;
  for (size_t i = 0; i < c->n; i++) {
    double z = (c->sign * c->x[i] - c->loc) / b;
    double e = exp(-z);
    s += z * -expm1(-z);
    sd += z + e * z * (z - 1.0);
  }
  double nn = (double)c->n;
  *f = 1.0 - s / nn;
  *df = sd / nn;
  if (isnan(*f)) return -1;
  return 0;
}

sp_status sp_dist_gumbel_mle(const char *fam, const double *x, size_t n,
                             double sign, int fix_loc, int fix_scale,
                             double *loc, double *scale, sp_error *err)
{
  if (fix_loc && fix_scale) return SP_OK;
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data(fam, &s, 1, err);
  if (st != SP_OK) return st;
  double ymin = sign > 0.0 ? s.min : -s.max;
  double ymean = sign * s.mean;
  gctx c = {x, n, sign, ymin, ymean - ymin, sign * *loc};
  if (!fix_scale) {
    double b0, root;
    int rc;
    if (!fix_loc) {
      st = sp_dist_need_spread(fam, &s, err);
      if (st != SP_OK) return st;
      b0 = sqrt(s.m2 / (double)n) * sqrt(6.0) / SP_DIST_PI;
      rc = sp_dist_solve_increasing(both_fdf, &c, log(b0), GUMBEL_TOL,
                                    GUMBEL_MAXIT, &root);
    } else {
      double d = ymean - c.loc;
      b0 = sqrt((s.m2 + (double)n * d * d) / (double)n) * sqrt(6.0) / SP_DIST_PI;
      if (!(b0 > 0.0))
        return sp_fail(err, SP_EDATA,
                       "%s: all %zu values equal the fixed location %g, so the "
                       "scale cannot be estimated", fam, n, *loc);
      rc = sp_dist_solve_increasing(scale_fdf, &c, log(b0), GUMBEL_TOL,
                                    GUMBEL_MAXIT, &root);
    }
    if (rc != 0 || !isfinite(root))
      return sp_fail(err, SP_ENUMERIC,
                     "%s: the maximum-likelihood equation for scale did not "
                     "converge", fam);
    *scale = exp(root);
  }
  if (!fix_loc) {
    /* location = ymin - b log(mean(exp(-(y - ymin)/b))). */
    double b = *scale, s0 = 0.0;
    for (size_t i = 0; i < n; i++) s0 += exp(-(sign * x[i] - ymin) / b);
    *loc = sign * (ymin - b * log(s0 / (double)n));
  }
  return SP_OK;
}

/* Starting values from the moments: scale = sd sqrt(6)/pi,
 * location = mean - gamma scale. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("gumbel_max", &s, 1, err);
  if (st != SP_OK) return st;
  if (!sp_dist_is_fixed(fixed, SCALE)) {
    st = sp_dist_need_spread("gumbel_max", &s, err);
    if (st != SP_OK) return st;
    t[SCALE] = sqrt(s.m2 / (double)n) * sqrt(6.0) / SP_DIST_PI;
  }
  if (!sp_dist_is_fixed(fixed, LOC)) t[LOC] = s.mean - SP_DIST_EULER * t[SCALE];
  return SP_OK;
}

static sp_status mle_impl(const double *x, size_t n, const int *fixed,
                          double *t, sp_error *err)
{
  return sp_dist_gumbel_mle("gumbel_max", x, n, 1.0, sp_dist_is_fixed(fixed, LOC),
                            sp_dist_is_fixed(fixed, SCALE), &t[LOC], &t[SCALE],
                            err);
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_gumbel_max, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_gumbel_max, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_gumbel_max = {
  .name = "gumbel_max",
  .title = "Gumbel (largest extreme value)",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE,
  .nparam = 2,
  .param_names = {"location", "scale"},
  .param_kinds = {SP_PARAM_REAL, SP_PARAM_POSITIVE},
  .param_defaults = {NAN, NAN},
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
  .fit_mle = fit_mle,
};
