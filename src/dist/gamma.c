/* gamma(shape, scale): density x^(a-1) exp(-x/s) / (Gamma(a) s^a), x >= 0.
 *
 * Tails: GSL's regularised incomplete gamma functions gsl_sf_gamma_inc_P/_Q
 * (each computed directly, never as 1 minus the other), except for shapes
 * from 3e4 on, where both come from Temme's uniform expansion (temme
 * below: GSL's are wrong there).
 *
 * Quantiles: GSL's gsl_cdf_gamma_Pinv/_Qinv give up or lose their digits
 * far in the tails (p = 1e-300, or shape 0.01), so the quantile is solved
 * here: on u = log x, the log of the tail whose target is <= 1/2 is matched
 * to log(target) by safeguarded Newton (sp_dist_solve_increasing), starting
 * from the Wilson-Hilferty cube-root normal approximation (Wilson, E.B. &
 * Hilferty, M.M. (1931). The distribution of chi-square. PNAS 17(12),
 * 684-688) or, where that fails, from the leading term of the series
 * P(a, x) ~ x^a / Gamma(a + 1).  Below x = DBL_EPSILON/4 that leading term
 * is exact to rounding and is evaluated from u itself, so quantiles in or
 * below the subnormal range come out cleanly.
 *
 * Sampler: Marsaglia, G. & Tsang, W.W. (2000). A simple method for
 * generating gamma variables. ACM Transactions on Mathematical Software
 * 26(3), 363-372, with ziggurat normals (sp_rng_normal_ziggurat; the same
 * paper's authors' ziggurat, 2000) and open uniforms; for shape < 1 their
 * boost Gamma(a) = Gamma(a + 1) U^(1/a), taken in logs, with log U = -E
 * for a ziggurat exponential E (sp_rng_exponential_ziggurat), which saves
 * a logarithm.  These draws are shared with the beta sampler.
 *
 * Maximum likelihood: the shape solves log a - psi(a) = log(mean x) -
 * mean(log x), after Minka, T.P. (2002). Estimating a Gamma distribution.
 * Microsoft Research technical note (start value and the Newton equation),
 * solved on log a by safeguarded Newton; scale = mean / shape. */
#include <float.h>
#include <math.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_sf_gamma.h>
#include <gsl/gsl_sf_log.h>
#include <gsl/gsl_sf_psi.h>

#include "dist/dist_common.h"

enum { SHAPE, SCALE };

/* Quantile solver: tolerance 2 DBL_EPSILON on log x and an iteration cap
 * that bisection alone could not exhaust over the double range. */
#define GAMMA_QTOL (2.0 * DBL_EPSILON)
#define GAMMA_QMAXIT 200
/* Maximum-likelihood tolerance on log shape (Newton is quadratic, so the
 * iterate after a 1e-12 step is accurate to rounding). */
#define GAMMA_TOL 1e-12
/* From this shape on, logpdf uses the saddle-point form (below, the direct
 * form loses at most log10(a log a) ~ 1.4 digits). */
#define GAMMA_SADDLE_A 10.0
#define GAMMA_MAXIT 200

/* The largest shape accepted: there the sd of log x, 1/sqrt(a) = 1e-10,
 * is still 4000 times the quantile solver's tolerance on log x
 * (GAMMA_QTOL |log x|, 2.2e-14 at a = 1e20); beyond, quantiles lose their
 * digits (at a = 1e24 they were off by 0.02 sd).  Such a gamma is a normal
 * to within a skewness of 2/sqrt(a) = 2e-10. */
#define GAMMA_MAX_SHAPE 1e20

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_positive("gamma", "shape", t[SHAPE], err);
  if (s == SP_OK) s = sp_dist_check_positive("gamma", "scale", t[SCALE], err);
  if (s == SP_OK && t[SHAPE] > GAMMA_MAX_SHAPE)
    s = sp_fail(err, SP_EUSAGE,
                "gamma: shape must be at most %g (a spread of 1e-10 of the mean; "
                "a normal describes it), got %g", GAMMA_MAX_SHAPE, t[SHAPE]);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  (void)t;
  *lo = 0.0;
  *hi = INFINITY;
}

static double logpdf(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x < 0.0 || x == INFINITY) return -INFINITY;
  double a = t[SHAPE];
  if (x == 0.0) {
    if (a < 1.0) return INFINITY;
    if (a > 1.0) return -INFINITY;
    return -log(t[SCALE]);
  }
  double y = x / t[SCALE];
  if (a >= GAMMA_SADDLE_A && fabs(y - a) < 0.5 * a) {
    /* (a - 1) log y - y - lgamma(a), with lgamma(a) = (a - 1/2) log a - a +
     * log sqrt(2 pi) + log Gamma*(a) (GSL's gammastar) and r = y/a - 1:
     *   a log1pmx(r) - log1p(r) - log sqrt(2 pi a) - log Gamma*(a),
     * the same value without the cancellation of terms of size a log a
     * (which costs 1e-3 absolute at a = 1e11 in the direct form).  Used
     * within half the mean of the mean: further out log f is itself of
     * order a and the direct form is accurate relative to it, while 1 + r
     * would lose digits as x goes to 0. */
    double r = (y - a) / a;
    return a * gsl_sf_log_1plusx_mx(r) - log1p(r) - 0.5 * log(a) -
           SP_DIST_LN_SQRT_2PI - log(gsl_sf_gammastar(a)) - log(t[SCALE]);
  }
  double ly = y >= DBL_MIN ? log(y) : log(x) - log(t[SCALE]);
  return (a - 1.0) * ly - y - gsl_sf_lngamma(a) - log(t[SCALE]);
}

/* P(a, x) and Q(a, x) for large a from the uniform asymptotic expansion of
 * Temme, N.M. (1979). The asymptotic expansion of the incomplete gamma
 * functions. SIAM Journal on Mathematical Analysis 10(4), 757-766:
 *   Q(a, x) = erfc(eta sqrt(a/2)) / 2 + R,
 *   R = exp(-a eta^2 / 2) / sqrt(2 pi a) (c0(eta) + c1(eta) / a + ...),
 * with lambda = x/a, eps = lambda - 1, eta^2 / 2 = eps - log(1 + eps)
 * (eta of the sign of eps), c0 = 1/eps - 1/eta and
 * c1 = 1/eta^3 - (lambda^2 + 10 lambda + 1) / (12 eps^3); near eps = 0,
 * where those differences cancel, their Taylor series in eps (Temme's
 * coefficients, as GSL 2.7 specfunc/gamma_inc.c writes them), and
 *   P(a, x) = erfc(-eta sqrt(a/2)) / 2 - R,
 * both uniformly in x > 0.  GSL itself uses this expansion only while
 * (x - a)^2 < a and a > 1e6; elsewhere, for x > 1e6, its gsl_sf_gamma_inc_Q
 * switches to a series in a/x that does not converge when x is near a (it
 * returns GSL_EMAXITER and a wrong value: Q(1e8, 1e8 + 1e4) came out 0.092
 * instead of 0.159), and its P series stops short near x = a - sqrt(a)
 * from a = 5e4 on (P(5e4, 5e4 - 223.6) is off by 5.8e-8 relatively).  The
 * omitted term is of relative size c2 / a^2 of R, and R is at most of the
 * size of the erfc term (no cancellation: R has the sign that adds to the
 * small tail).  Measured against mpmath 1.2.1 (230 digits, P from
 * x^a e^-x / Gamma(a+1) 1F1(1; a+1; x)) at x = a + z sqrt(a), z from -30
 * to 30: largest relative error 8.5e-13 at a = 3e4, 3.4e-13 at 5e4,
 * 8e-14 from 1e5 to 1e8 (GSL's own: 1.3e-13 at 3e4, 5.8e-8 at 5e4). */
#define GAMMA_TEMME_A 3e4
/* Below this |eps|, the Taylor series of c0 and c1 (error O(eps^5),
 * eps^5 < DBL_EPSILON; GSL's GSL_ROOT5_DBL_EPSILON). */
#define GAMMA_TEMME_SERIES 7.4009597974140505e-04

/* Temme's Q(a, x) (upper = 1) or P(a, x) (upper = 0). */
static double temme(double a, double x, int upper)
{
  const double eps = (x - a) / a, lam = x / a;
  /* x below a DBL_EPSILON / 2: P = x^a / Gamma(a + 1) underflows for
   * a >= GAMMA_TEMME_A, and log(1 + eps) would be log(0) */
  if (eps <= -1.0) return upper ? 1.0 : 0.0;
  const double ln_term = gsl_sf_log_1plusx_mx(eps); /* log(1 + eps) - eps */
  const double eta = (eps < 0.0 ? -1.0 : 1.0) * sqrt(-2.0 * ln_term);
  double c0, c1;
  if (fabs(eps) < GAMMA_TEMME_SERIES) {
    c0 = -1.0 / 3.0 + eps * (1.0 / 12.0 - eps * (23.0 / 540.0 - eps * (353.0 / 12960.0 -
                                                                      eps * 589.0 / 30240.0)));
    c1 = -1.0 / 540.0 - eps / 288.0;
  } else {
    c0 = 1.0 / eps - 1.0 / eta;
    c1 = 1.0 / (eta * eta * eta) - (lam * lam + 10.0 * lam + 1.0) / (12.0 * eps * eps * eps);
  }
  const double r = exp(-0.5 * a * eta * eta - SP_DIST_LN_SQRT_2PI) / sqrt(a) * (c0 + c1 / a);
  const double y = eta * sqrt(0.5 * a);
  return upper ? 0.5 * erfc(y) + r : 0.5 * erfc(-y) - r;
}

/* The tails P(a, x) and Q(a, x) of the standard gamma. */
static double gamma_P(double a, double x)
{
  if (a >= GAMMA_TEMME_A) return temme(a, x, 0);
  return gsl_sf_gamma_inc_P(a, x);
}

static double gamma_Q(double a, double x)
{
  if (a >= GAMMA_TEMME_A) return temme(a, x, 1);
  return gsl_sf_gamma_inc_Q(a, x);
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 0.0;
  if (x == INFINITY) return 1.0;
  return gamma_P(t[SHAPE], x / t[SCALE]);
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 1.0;
  if (x == INFINITY) return 0.0;
  return gamma_Q(t[SHAPE], x / t[SCALE]);
}

/* ---- quantiles ---------------------------------------------------------- */

typedef struct {
  double a;
  double lga;  /* lgamma(a) */
  double lga1; /* lgamma(a + 1) */
  double ltarget;
} qctx;

/* log P(a, x) for the standard gamma, with x = exp(u).  When P underflows
 * (x far below a) the series
 *   P = x^a e^-x / Gamma(a+1) * sum_k x^k / ((a+1)...(a+k))
 * (Abramowitz, M. & Stegun, I.A. (eds.) (1964). Handbook of Mathematical
 * Functions. National Bureau of Standards, Applied Mathematics Series 55,
 * section 6.5) is summed in logs. */
static double log_P(const qctx *c, double u, double x)
{
  if (x < 0.25 * DBL_EPSILON) return c->a * u - c->lga1;
  double p = gamma_P(c->a, x);
  if (p > 0.0) return log(p);
  /* From GAMMA_TEMME_A on, P underflows only below DBL_MIN, and the series
   * would need of order a terms (and cancel terms of size a log a): the
   * solver brackets the root with -inf instead. */
  if (!(x < c->a) || c->a >= GAMMA_TEMME_A) return -INFINITY;
  double term = 1.0, sum = 1.0;
  for (int k = 1; k < 100000; k++) {
    term *= x / (c->a + k);
    sum += term;
    if (term < DBL_EPSILON * sum) break;
  }
  return c->a * u - x - c->lga1 + log(sum);
}

/* log(x f(x)) for the standard gamma at x = e^u, f its density: directly
 * below GAMMA_TEMME_A; from there on in logpdf's saddle-point form, since
 * a u - x - lgamma(a) cancels terms of size a log a (an error of 1e6 in
 * the exponent at a = 1e20 made Newton stop at a wrong root). */
static double log_xf(const qctx *c, double u, double x)
{
  if (c->a < GAMMA_TEMME_A) return c->a * u - x - c->lga;
  const double std[2] = {c->a, 1.0};
  return u + logpdf(std, x);
}

/* F(u) = log P(e^u) - log p, increasing; F' = x f(x) / P. */
static int lower_fdf(double u, void *vc, double *f, double *df)
{
  const qctx *c = vc;
  double x = exp(u);
  if (x == INFINITY) {
    *f = -c->ltarget;
    *df = 0.0;
    return 0;
  }
  double lp = log_P(c, u, x);
  *f = lp - c->ltarget;
  *df = x < 0.25 * DBL_EPSILON ? c->a : exp(log_xf(c, u, x) - lp);
  return 0;
}

/* F(u) = log q - log Q(e^u), increasing; F' = x f(x) / Q.  Below
 * x = DBL_EPSILON/4, Q = 1 - x^a / Gamma(a + 1) to rounding, taken from u
 * itself: exp(u) would be subnormal there for tiny shapes (whose median
 * can be 1e-316), too coarse for Newton's method. */
static int upper_fdf(double u, void *vc, double *f, double *df)
{
  const qctx *c = vc;
  double x = exp(u);
  if (x < 0.25 * DBL_EPSILON) {
    double lp = c->a * u - c->lga1, lq = sp_dist_log1mexp(lp);
    *f = c->ltarget - lq;
    *df = exp(c->a * u - c->lga - lq);
    return 0;
  }
  double q = x == INFINITY ? 0.0 : gamma_Q(c->a, x);
  if (!(q > 0.0)) {
    *f = INFINITY;
    *df = INFINITY;
    return 0;
  }
  double lq = log(q);
  *f = c->ltarget - lq;
  *df = exp(log_xf(c, u, x) - lq);
  return 0;
}

/* The standard gamma's quantile for the tail target (upper = 0: P(x) =
 * target, upper = 1: Q(x) = target), target in (0, 1/2]. */
static double std_quantile(double a, double target, int upper)
{
  qctx c = {a, gsl_sf_lngamma(a), gsl_sf_lngamma(a + 1.0), log(target)};
  double z = upper ? gsl_cdf_ugaussian_Qinv(target) : gsl_cdf_ugaussian_Pinv(target);
  double base = 1.0 - 1.0 / (9.0 * a) + z / (3.0 * sqrt(a));
  double u0;
  if (base > 0.0)
    u0 = log(a) + 3.0 * log(base);
  else
    u0 = (c.ltarget + c.lga1) / a;
  if (!upper) {
    /* The leading series term bounds the lower quantile from below. */
    double us = (c.ltarget + c.lga1) / a;
    if (us > u0) u0 = us;
  }
  double root;
  /* rc = 1 (bracketed, not to full tolerance) still gives the bracket's
   * midpoint, within rounding noise of the root. */
  int rc = sp_dist_solve_increasing(upper ? upper_fdf : lower_fdf, &c, u0,
                                    GAMMA_QTOL, GAMMA_QMAXIT, &root);
  if (rc < 0) return NAN;
  return exp(root);
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  if (p == 0.0) return 0.0;
  if (p == 1.0) return INFINITY;
  double x = p <= 0.5 ? std_quantile(t[SHAPE], p, 0)
                      : std_quantile(t[SHAPE], 1.0 - p, 1);
  return t[SCALE] * x;
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  if (q == 0.0) return INFINITY;
  if (q == 1.0) return 0.0;
  double x = q <= 0.5 ? std_quantile(t[SHAPE], q, 1)
                      : std_quantile(t[SHAPE], 1.0 - q, 0);
  return t[SCALE] * x;
}

/* ---- sampler ------------------------------------------------------------ */

/* One standard Gamma(a) deviate for a >= 1 (Marsaglia & Tsang 2000, section
 * 6).  The constant 0.0331 is their squeeze, which saves the logarithms for
 * about 98% of the candidates; the second test is the exact acceptance. */
static double mt_gamma(double a, sp_pcg64 *g)
{
  double d = a - 1.0 / 3.0, c = 1.0 / sqrt(9.0 * d);
  for (;;) {
    double x, v;
    do {
      x = sp_rng_normal_ziggurat(g);
      v = 1.0 + c * x;
    } while (v <= 0.0);
    v = v * v * v;
    double u = sp_rng_uniform_open(g);
    double x2 = x * x;
    if (u < 1.0 - 0.0331 * x2 * x2) return d * v;
    if (log(u) < 0.5 * x2 + d * (1.0 - v + log(v))) return d * v;
  }
}

double sp_dist_gamma_variate(double a, sp_pcg64 *g) { return mt_gamma(a, g); }

double sp_dist_gamma_log_variate(double a, sp_pcg64 *g)
{
  if (a >= 1.0) return log(mt_gamma(a, g));
  return log(mt_gamma(a + 1.0, g)) - sp_rng_exponential_ziggurat(g) / a;
}

static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  double a = t[SHAPE], s = t[SCALE];
  if (a >= 1.0) {
    for (size_t i = 0; i < n; i++) out[i] = s * mt_gamma(a, g);
  } else {
    for (size_t i = 0; i < n; i++) out[i] = s * exp(sp_dist_gamma_log_variate(a, g));
  }
}

static double mean(const double *t) { return t[SHAPE] * t[SCALE]; }
static double variance(const double *t) { return t[SHAPE] * t[SCALE] * t[SCALE]; }

/* ---- maximum likelihood ------------------------------------------------- */

/* log a - psi(a) and its derivative 1/a - psi'(a).  For a >= 10 the
 * difference cancels, so the asymptotic series is used (Abramowitz & Stegun
 * 1964, sections 6.3 and 6.4, with the Bernoulli numbers B2..B14):
 *   log a - psi(a) = 1/(2a) + 1/(12a^2) - 1/(120a^4) + 1/(252a^6)
 *                    - 1/(240a^8) + 1/(132a^10) - 691/(32760a^12) + 1/(12a^14);
 * at a = 10 the first omitted term is below 1e-15 of the sum. */
static void lmpsi(double a, double *f, double *df)
{
  if (a < 10.0) {
    *f = log(a) - gsl_sf_psi(a);
    *df = 1.0 / a - gsl_sf_psi_1(a);
    return;
  }
  double r = 1.0 / a, r2 = r * r;
  *f = r * 0.5 +
       r2 * (1.0 / 12 + r2 * (-1.0 / 120 + r2 * (1.0 / 252 + r2 * (-1.0 / 240 +
       r2 * (1.0 / 132 + r2 * (-691.0 / 32760 + r2 * (1.0 / 12)))))));
  *df = -(r2 * 0.5 +
          r2 * r * (1.0 / 6 + r2 * (-1.0 / 30 + r2 * (1.0 / 42 + r2 * (-1.0 / 30 +
          r2 * (5.0 / 66 + r2 * (-691.0 / 2730 + r2 * (7.0 / 6))))))));
}

typedef struct {
  double s; /* log(mean) - mean(log x) (both free) or mean(log x) - log scale */
} mctx;

/* Both free: F(t) = s - (log a - psi(a)), a = e^t, increasing. */
static int shape_fdf(double t, void *vc, double *f, double *df)
{
  const mctx *c = vc;
  double a = exp(t), g, dg;
  lmpsi(a, &g, &dg);
  *f = c->s - g;
  *df = -a * dg;
  return 0;
}

/* Scale fixed: F(t) = psi(a) - (mean(log x) - log scale), increasing. */
static int digamma_fdf(double t, void *vc, double *f, double *df)
{
  const mctx *c = vc;
  double a = exp(t);
  *f = gsl_sf_psi(a) - c->s;
  *df = a * gsl_sf_psi_1(a);
  return 0;
}

static sp_status need_gamma_data(const double *x, size_t n, sp_dist_summary *s,
                                 sp_error *err)
{
  sp_dist_summarise(x, n, s);
  sp_status st = sp_dist_need_data("gamma", s, 1, err);
  if (st == SP_OK) st = sp_dist_need_positive("gamma", s, err);
  return st;
}

/* Method of moments: shape = mean^2 / var, scale = var / mean (var with the
 * n denominator); with one fixed, the other from the mean. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_dist_summary s;
  sp_status st = need_gamma_data(x, n, &s, err);
  if (st != SP_OK) return st;
  int fa = sp_dist_is_fixed(fixed, SHAPE), fs = sp_dist_is_fixed(fixed, SCALE);
  if (fa && fs) return SP_OK;
  if (fa) {
    t[SCALE] = s.mean / t[SHAPE];
  } else if (fs) {
    t[SHAPE] = s.mean / t[SCALE];
  } else {
    st = sp_dist_need_spread("gamma", &s, err);
    if (st != SP_OK) return st;
    double var = s.m2 / (double)n;
    t[SHAPE] = s.mean * s.mean / var;
    t[SCALE] = var / s.mean;
  }
  return SP_OK;
}

static sp_status mle_impl(const double *x, size_t n, const int *fixed,
                          double *t, sp_error *err)
{
  int fa = sp_dist_is_fixed(fixed, SHAPE), fs = sp_dist_is_fixed(fixed, SCALE);
  if (fa && fs) return SP_OK;
  sp_dist_summary s;
  sp_status st = need_gamma_data(x, n, &s, err);
  if (st != SP_OK) return st;
  if (fa) {
    t[SCALE] = s.mean / t[SHAPE];
    return SP_OK;
  }
  double root;
  int rc;
  mctx c;
  if (fs) {
    double ml, m2;
    sp_dist_log_moments(x, n, &ml, &m2);
    c.s = ml - log(t[SCALE]);
    /* Start from the inverse of psi(a) ~ log(a - 1/2) (large a) or
     * psi(a) ~ -1/a - gamma (small a), the initialisation in Minka (2002). */
    double a0 = c.s >= -2.22 ? exp(c.s) + 0.5 : -1.0 / (c.s + SP_DIST_EULER);
    rc = sp_dist_solve_increasing(digamma_fdf, &c, log(a0), GAMMA_TOL,
                                  GAMMA_MAXIT, &root);
  } else {
    st = sp_dist_need_spread("gamma", &s, err);
    if (st != SP_OK) return st;
    /* With m the computed mean, d = x/m - 1 and md = mean(d) (zero up to
     * the rounding of m):
     *   s = log(mean) - mean(log x) = log1p(md) - mean(log1p(d))
     *     = mean(d - log1p(d)) - (md - log1p(md)),
     * whose first sum has positive terms ~d^2/2 (GSL's log_1plusx_mx keeps
     * small d exact) and whose second is of order md^2.  Direct log(mean) -
     * mean(log x) would lose digits when the spread is small (large a). */
    double s1 = 0.0, s2 = 0.0;
    for (size_t i = 0; i < n; i++) {
      double d = (x[i] - s.mean) / s.mean;
      /* Far from the mean, d - log1p(d) has no cancellation, and d itself
       * may round to -1 for x << mean: log of the ratio instead. */
      if (fabs(d) < 0.5)
        s1 -= gsl_sf_log_1plusx_mx(d);
      else
        s1 += d - log(x[i] / s.mean);
      s2 += d;
    }
    c.s = s1 / (double)n + gsl_sf_log_1plusx_mx(s2 / (double)n);
    if (!(c.s > 0.0) || !isfinite(c.s)) return sp_dist_spread_failure("gamma", &s, err);
    double a0 = (3.0 - c.s + sqrt((c.s - 3.0) * (c.s - 3.0) + 24.0 * c.s)) /
                (12.0 * c.s);
    rc = sp_dist_solve_increasing(shape_fdf, &c, log(a0), GAMMA_TOL,
                                  GAMMA_MAXIT, &root);
  }
  if (rc != 0 || !isfinite(root))
    return sp_fail(err, SP_ENUMERIC,
                   "gamma: the maximum-likelihood equation for shape did not "
                   "converge");
  t[SHAPE] = exp(root);
  if (!fs) t[SCALE] = s.mean / t[SHAPE];
  return SP_OK;
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_gamma, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_gamma, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_gamma = {
  .name = "gamma",
  .title = "Gamma",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE,
  .nparam = 2,
  .param_names = {"shape", "scale"},
  .param_kinds = {SP_PARAM_POSITIVE, SP_PARAM_POSITIVE},
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
