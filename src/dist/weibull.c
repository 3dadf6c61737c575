/* weibull(shape, scale): the two-parameter Weibull distribution,
 *   F(x) = 1 - exp(-(x/scale)^shape),  x >= 0.
 * Both tails come from t = (x/scale)^shape directly: Q = exp(-t) and
 * P = -expm1(-t), so neither tail is formed as 1 minus the other.
 *
 * Maximum likelihood (also used by weibull3 for a given location): the
 * profile equation in the shape k,
 *   sum x^k log x / sum x^k - 1/k - mean(log x) = 0,
 * (Cohen, A.C. (1965). Maximum likelihood estimation in the Weibull
 * distribution based on complete and on censored samples. Technometrics
 * 7(4), 579-588) has a single root, because its left side increases in k
 * (its derivative is a weighted variance of log x plus 1/k^2).  It is solved
 * with the data divided by their maximum, so x^k lies in (0, 1] and cannot
 * overflow for data spanning many orders of magnitude, and the logs of the
 * data computed once.  The start is Menon's estimator k0 = pi / (sd(log x)
 * sqrt 6), within a few 1/sqrt(n) of the root for Weibull samples.  Each
 * pass over the logs then takes the moments of log x under the weights x^k
 * up to the 8th; through the exponential series they give the profile
 * function at any nearby k, and the root of that series, with a bound on
 * what its truncation leaves out, is the next shape (the series step
 * below).  For Weibull samples of 1e4 values and more the first pass
 * usually settles the root to within the rounding of the sums, and the
 * scale comes from the same pass; small samples take two passes.  What
 * the series step does not settle (a start far from the root, as outliers
 * in log x give) goes on by safeguarded Newton on log k
 * (sp_dist_solve_increasing), one pass per iteration. */
#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include <gsl/gsl_sf_gamma.h>
#include <gsl/gsl_sf_zeta.h>

#include "dist/dist_common.h"

enum { SHAPE, SCALE };

/* Tolerance on log k of the safeguarded iteration: Newton converges
 * quadratically, so once a step is below 1e-12 the iterate after it is
 * accurate to the rounding noise of the profile function. */
#define WEIBULL_TOL 1e-12
#define WEIBULL_MAXIT 200

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_positive("weibull", "shape", t[SHAPE], err);
  if (s == SP_OK) s = sp_dist_check_positive("weibull", "scale", t[SCALE], err);
  return s;
}

static void support(const double *t, double *lo, double *hi)
{
  (void)t;
  *lo = 0.0;
  *hi = INFINITY;
}

/* t = (x/scale)^k and log(x/scale), staying finite where x/scale itself
 * would underflow or overflow. */
static double power_term(const double *t, double x, double *lz)
{
  double z = x / t[SCALE];
  if (z >= DBL_MIN && z <= DBL_MAX) {
    *lz = log(z);
    return pow(z, t[SHAPE]);
  }
  *lz = log(x) - log(t[SCALE]);
  return exp(t[SHAPE] * *lz);
}

static double logpdf(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x < 0.0 || x == INFINITY) return -INFINITY;
  double k = t[SHAPE];
  if (x == 0.0) {
    if (k < 1.0) return INFINITY;
    if (k > 1.0) return -INFINITY;
    return -log(t[SCALE]);
  }
  double lz;
  double p = power_term(t, x, &lz);
  return log(k) - log(t[SCALE]) + (k - 1.0) * lz - p;
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 0.0;
  double lz;
  return -expm1(-power_term(t, x, &lz));
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (!(x > 0.0)) return 1.0;
  double lz;
  return exp(-power_term(t, x, &lz));
}

static double quantile_P(const double *t, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  return t[SCALE] * pow(-log1p(-p), 1.0 / t[SHAPE]);
}

static double quantile_Q(const double *t, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  return t[SCALE] * pow(-log(q), 1.0 / t[SHAPE]);
}

/* scale E^(1/shape) for standard exponential E from the ziggurat
 * (sp_rng_fill_exponential): if E is exponential, P(scale E^(1/k) > x) =
 * P(E > (x/scale)^k) = exp(-(x/scale)^k).  No branch on the uniform, and
 * E carries no rounding of its own; the power runs over the block in
 * sp_family_pow_block (block_pow.c), within some (2 |log E| / k + 4) ulps of
 * pow and some 20% faster.  Measured on the development machine: 13 ns
 * per draw with the C library's pow, against 30 to 36 ns by inversion. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  sp_rng_fill_exponential(g, out, n);
  const double inv_k = 1.0 / t[SHAPE], s = t[SCALE];
  sp_family_pow_block(out, n, inv_k);
  for (size_t i = 0; i < n; i++) out[i] *= s;
}

/* scale * Gamma(1 + 1/k), through lgamma when Gamma would overflow. */
static double mean(const double *t)
{
  double a = 1.0 + 1.0 / t[SHAPE];
  if (a < 170.0) return t[SCALE] * tgamma(a);
  return exp(log(t[SCALE]) + gsl_sf_lngamma(a));
}

/* D(h) = lgamma(1 + 2h) - 2 lgamma(1 + h) >= 0 for h = 1/k.  For small h
 * the two terms nearly cancel (variance ~ pi^2/(6k^2)), so D comes from the
 * Taylor series of lgamma(1 + x) = -gamma x + sum_{j>=2} (-1)^j zeta(j) x^j / j
 * (Abramowitz, M. & Stegun, I.A. (eds.) (1964). Handbook of Mathematical
 * Functions. National Bureau of Standards, Applied Mathematics Series 55,
 * section 6.1), in which the linear terms cancel
 * exactly:  D(h) = sum_{j>=2} (-1)^j zeta(j) (2^j - 2) h^j / j.
 * For h <= 1/8 the terms shrink by at least 1/4 each (radius 1/2), so 30
 * terms reach below DBL_EPSILON; for larger h the direct difference loses
 * at most a few digits of a quantity that is then no longer small. */
static double lgamma_gap(double h)
{
  if (h > 0.125)
    return gsl_sf_lngamma(1.0 + 2.0 * h) - 2.0 * gsl_sf_lngamma(1.0 + h);
  double sum = 0.0, hj = h, two_j = 2.0;
  for (int j = 2; j <= 40; j++) {
    hj *= h;
    two_j *= 2.0;
    double term = gsl_sf_zeta_int(j) * (two_j - 2.0) * hj / j;
    sum += (j % 2 == 0) ? term : -term;
    if (fabs(term) < 0.25 * DBL_EPSILON * sum) break;
  }
  return sum;
}

/* scale^2 [Gamma(1 + 2/k) - Gamma(1 + 1/k)^2]
 *   = scale^2 Gamma(1 + 2/k) (1 - exp(-D(1/k))), in logs so that tiny k
 * overflows cleanly to infinity and large k keeps its digits. */
static double variance(const double *t)
{
  double h = 1.0 / t[SHAPE];
  double d = lgamma_gap(h);
  return exp(2.0 * log(t[SCALE]) + gsl_sf_lngamma(1.0 + 2.0 * h)) * -expm1(-d);
}

/* ---- maximum likelihood ------------------------------------------------ */

/* The logs l = log(x - loc) are computed once into a buffer of n doubles,
 * and y = l - c (c = the largest l, so y <= 0) is formed as each pass reads
 * them; a log costs as much as the exp each pass needs, so this halves the
 * cost of every pass.  Should the buffer not be available, the logs are
 * recomputed in each pass instead. */
typedef struct {
  const double *x;
  const double *lbuf; /* the logs l, or NULL */
  size_t n;
  double loc;
  double c;       /* the largest log(x - loc) */
  double ybar;    /* mean of y */
  double ymin;    /* smallest y */
  double shift;   /* for fixed scale: c - log scale, so v = y + shift */
  /* The last evaluation of the both-free profile: k, sum w, sum w y / sum w,
   * for the scale at the root without another pass. */
  double k_last, s0_last, a_last;
} wctx;

static double wy(const wctx *c, size_t i)
{
  return (c->lbuf ? c->lbuf[i] : log(c->x[i] - c->loc)) - c->c;
}

/* ---- the one-pass series step ----
 *
 * At a shape k, one pass gives the moments M_j = sum w u^j (j = 0..8) of
 * u = y - c0 under the weights w = exp(k y), about the centre
 * c0 = ybar + 1/k (where the weighted mean of y lies at the root).  They
 * give the sums at any other shape k + h by the exponential series:
 *   sum exp((k + h) y) = exp(h c0) T(h),  T(h) = sum_j M_j h^j / j!,
 * so the profile function at k + h is
 *   G(h) = c0 + T'(h) / T(h) - 1/(k + h) - ybar,
 * with T' the derivative in h.  T truncated after M_7 is a polynomial: G
 * is solved for h by Newton's method on it (a few dozen operations an
 * iteration, no pass over the data).  Taylor's theorem with Lagrange's
 * form of the remainder bounds what the truncation leaves out: e^(hu)
 * minus its series to degree 7 is at most (hu)^8/8! F, and u e^(hu) minus
 * u times its series to degree 6 at most |u|^8 |h|^7/7! F, where
 * F = exp(max(0, h u)) <= exp(max(0, h u_min, h u_max)) over the data; so
 *   |T - T_7| <= E0 = F h^8 M_8 / 8!,  |T' - T_7'| <= E1 = F |h|^7 M_8 / 7!
 * (M_8 >= 0: an even power), and T'/T differs from T_7'/T_7 by at most
 * (E1 + |T_7'/T_7| E0) / (T_7 - E0).  The profile function rises with slope
 * at least 1/k^2 (its derivative is a weighted variance plus 1/k^2), so an
 * error e in it moves the root by at most about e k^2, e k in log k.  The
 * step is accepted when that bound, doubled, with the residual of the
 * polynomial solve added, is below series_tol(n) in log k: the root is
 * then final and the scale comes from T_7 at it, in the same pass.
 * Otherwise k + h is the next shape; the error after such a step falls as
 * the 7th power of the error before it, so from the moment start (within
 * some 1/sqrt(n) of the root) one pass does for Weibull samples from some
 * 1e4 values on, and two for samples of some tens. */

/* Accepting a root when its bound is below the rounding of the sums the
 * profile function is made of: each of the n additions of a sum rounds by
 * at most half an ulp, and n such errors of random sign add up to some
 * sqrt(n) half-ulps of the sum; the floor of 64 DBL_EPSILON (1.4e-14) keeps
 * a margin below the 1e-13 agreement with 50-digit references that
 * tests/check_dist.c asks of small samples. */
static double series_tol(size_t n)
{
  double r = sqrt((double)n);
  return DBL_EPSILON * (r > 64.0 ? r : 64.0);
}

/* Passes of the series step before the safeguarded iteration takes over. */
#define WEIBULL_SERIES_PASSES 6
/* Newton iterations on the polynomial within one pass. */
#define WEIBULL_SERIES_MAXIT 40

/* The moments M[0..8] of u = y - c0 under w = exp(k y), one pass. */
static void series_moments(const wctx *c, double k, double c0, double *M)
{
  double m0 = 0.0, m1 = 0.0, m2 = 0.0, m3 = 0.0, m4 = 0.0, m5 = 0.0, m6 = 0.0,
         m7 = 0.0, m8 = 0.0;
  for (size_t i = 0; i < c->n; i++) {
    double y = wy(c, i);
    double w = exp(k * y), u = y - c0;
    /* short chains of dependent products: w u^j from w u^(j-2) */
    double u2 = u * u;
    double a1 = w * u, a2 = w * u2, a3 = a1 * u2, a4 = a2 * u2;
    double a5 = a3 * u2, a6 = a4 * u2, a7 = a5 * u2, a8 = a6 * u2;
    m0 += w;
    m1 += a1;
    m2 += a2;
    m3 += a3;
    m4 += a4;
    m5 += a5;
    m6 += a6;
    m7 += a7;
    m8 += a8;
  }
  M[0] = m0; M[1] = m1; M[2] = m2; M[3] = m3; M[4] = m4;
  M[5] = m5; M[6] = m6; M[7] = m7; M[8] = m8;
}

/* T_7 (t[0]), T_7' (t[1]) and T_7'' (t[2]) at h, by Horner's rule:
 * T^(r)(h) = sum_{j=r}^{7} M_j h^(j-r) / (j-r)!. */
static void series_eval(const double *M, double h, double *t)
{
  for (int r = 0; r < 3; r++) {
    double b = M[7];
    for (int j = 6; j >= r; j--) b = M[j] + b * h / (double)(j + 1 - r);
    t[r] = b;
  }
}

/* Solves G(h) = 0 on the moments M taken at k about c0 (d0 = c0 - ybar,
 * umin and umax the extremes of u).  Returns 0 with *h, the bound on the
 * error of log(k + h) (*bound) and T_7(h) (*T0); -1 if the polynomial
 * gives no usable root within |h| <= k/2.  *newton is Newton's step in
 * log k from G(0) and G'(0), the exact profile function and its slope at
 * k (NAN if they are not usable). */
static int series_root(const double *M, double k, double d0, double umin,
                       double umax, double tol, double *h_out, double *bound,
                       double *T0, double *newton)
{
  double h = 0.0, t[3], a = 0.0, G = 0.0;
  int done = 0;
  *newton = NAN;
  for (int it = 0; it < WEIBULL_SERIES_MAXIT; it++) {
    series_eval(M, h, t);
    if (!(t[0] > 0.0)) return -1;
    double kh = k + h;
    a = t[1] / t[0];
    G = d0 + a - 1.0 / kh;
    if (done) break;
    double Gp = t[2] / t[0] - a * a + 1.0 / (kh * kh);
    if (!(Gp > 0.0) || !isfinite(G)) return -1;
    double dh = -G / Gp;
    if (it == 0) *newton = dh / k;
    h += dh;
    if (!(fabs(h) <= 0.5 * k)) return -1;
    /* a last evaluation at the final h for the residual, T_7 and T_7'/T_7 */
    if (fabs(dh) <= 0.125 * tol * (k + h)) done = 1;
  }
  if (!done) return -1;
  double F = exp(fmax(0.0, fmax(h * umin, h * umax)));
  double h7 = pow(fabs(h), 7.0);
  double E1 = F * h7 * M[8] / 5040.0, E0 = E1 * fabs(h) / 8.0;
  if (!(t[0] > E0)) return -1;
  double e = (E1 + fabs(a) * E0) / (t[0] - E0) + fabs(G);
  *h_out = h;
  *bound = 2.0 * e * (k + h);
  *T0 = t[0];
  return isfinite(*bound) ? 0 : -1;
}

/* The profile equation on s = log k, with weights w = exp(k y) in (0, 1]:
 * the safeguarded iteration for the cases the series step does not settle. */
static int profile_fdf(double s, void *vc, double *f, double *df)
{
  wctx *c = vc;
  double k = exp(s);
  double s0 = 0.0, s1 = 0.0, s2 = 0.0;
  for (size_t i = 0; i < c->n; i++) {
    double y = wy(c, i);
    double w = exp(k * y);
    s0 += w;
    s1 += w * y;
    s2 += w * y * y;
  }
  double a = s1 / s0;
  double v = s2 / s0 - a * a;
  if (v < 0.0) v = 0.0;
  *f = a - 1.0 / k - c->ybar;
  *df = k * v + 1.0 / k;
  c->k_last = k;
  c->s0_last = s0;
  c->a_last = a;
  return 0;
}

/* With the scale fixed, the shape solves
 *   mean(exp(k v) v) - 1/k - mean(v) = 0,  v = log(x / scale),
 * whose left side increases in k; the weights are taken relative to the
 * largest v (= shift, where y = 0) so they stay in (0, 1]. */
static int fixed_scale_fdf(double s, void *vc, double *f, double *df)
{
  const wctx *c = vc;
  double k = exp(s);
  double t1 = 0.0, t2 = 0.0;
  for (size_t i = 0; i < c->n; i++) {
    double y = wy(c, i), v = y + c->shift;
    double w = exp(k * y);
    t1 += w * v;
    t2 += w * v * v;
  }
  double nn = (double)c->n;
  double e = exp(k * c->shift);
  double m1 = e * (t1 / nn), m2 = e * (t2 / nn);
  if (isnan(m1)) return -1;
  *f = m1 - 1.0 / k - (c->ybar + c->shift);
  *df = k * m2 + 1.0 / k;
  return 0;
}

/* log(mean exp(k y)), one pass. */
static double log_mean_power(const wctx *c, double k)
{
  double s0 = 0.0;
  for (size_t i = 0; i < c->n; i++) s0 += exp(k * wy(c, i));
  return log(s0 / (double)c->n);
}

sp_status sp_dist_weibull_mle(const char *fam, const double *x, size_t n,
                              double loc, int fix_shape, int fix_scale,
                              double *shape, double *scale, sp_error *err)
{
  if (fix_shape && fix_scale) return SP_OK;
  if (n == 0) return sp_fail(err, SP_EDATA, "%s needs at least 1 value", fam);
  double *lbuf = n <= SIZE_MAX / sizeof(double) ? malloc(n * sizeof *lbuf) : NULL;
  wctx ctx = {x, NULL, n, loc, 0.0, 0.0, 0.0, 0.0, NAN, NAN, NAN};
  /* One pass for the logs and their largest and smallest, one more for the
   * mean and the sum of squares of y.  The mean enters the profile
   * function directly, beside T'/T of about the same size, so it is summed
   * from the same y <= 0 the other passes use (a sum shifted by some other
   * value, the first log say, would carry the rounding of that value's
   * distance from the others, which an outlier makes large).  m2 = sum y^2
   * - (sum y)^2 / n only seeds the iteration and tells whether the values
   * differ at all (it is exactly 0 when every y is 0): the cancellation it
   * suffers, at most a factor n when all but one value are equal, is
   * harmless there. */
  double lmax = -INFINITY, lmin = INFINITY;
  for (size_t i = 0; i < n; i++) {
    double l = log(x[i] - loc);
    if (lbuf) lbuf[i] = l;
    if (l > lmax) lmax = l;
    if (l < lmin) lmin = l;
  }
  ctx.lbuf = lbuf;
  ctx.c = lmax;
  ctx.ymin = lmin - lmax;
  double sum = 0.0, sum2 = 0.0;
  for (size_t i = 0; i < n; i++) {
    double y = wy(&ctx, i);
    sum += y;
    sum2 += y * y;
  }
  ctx.ybar = sum / (double)n;
  double m2 = sum2 - sum * (sum / (double)n);

  sp_status st = SP_OK;
  /* set by the series step: the scale's log mean power at the root */
  int have_lm = 0;
  double lm = NAN;
  if (!fix_shape) {
    if (!(m2 > 0.0)) {
      st = sp_fail(err, SP_EDATA,
                   "%s: all %zu values are equal (%g), so the shape cannot be "
                   "estimated", fam, n, x[0]);
      goto done;
    }
    /* The start is Menon's moment estimator: log X is Gumbel-min with scale
     * 1/k, whose variance is pi^2 / (6 k^2), so k0 = pi / (sd(log x)
     * sqrt 6), here with the variance over n (Menon, M.V. (1963).
     * Estimation of the shape and scale parameters of the Weibull
     * distribution. Technometrics 5(2), 175-182; volume and pages from
     * memory).  It is consistent, with an asymptotic efficiency of about
     * 55% for 1/k, so for Weibull samples it lies within a few 1/sqrt(n)
     * of the maximum-likelihood root. */
    double sdlog = sqrt(m2 / (double)n);
    double k = SP_DIST_PI / (sdlog * sqrt(6.0));
    double root = NAN;
    int rc = -1;
    if (!fix_scale) {
      const double tol = series_tol(n);
      double s_next = log(k), newton;
      for (int pass = 0; pass < WEIBULL_SERIES_PASSES && isfinite(k); pass++) {
        double M[9], h = 0.0, bound, T0;
        double c0 = ctx.ybar + 1.0 / k;
        series_moments(&ctx, k, c0, M);
        if (series_root(M, k, c0 - ctx.ybar, ctx.ymin - c0, -c0, tol, &h, &bound,
                        &T0, &newton) != 0) {
          /* No usable root of the polynomial (a start far from the root,
           * as outliers in log x give): the safeguarded iteration starts
           * from Newton's step in log k, limited to its first bracket
           * search step (1), so that this pass is not repeated there. */
          if (isfinite(newton)) s_next = log(k) + fmax(-1.0, fmin(1.0, newton));
          break;
        }
        if (bound <= tol) {
          *shape = k + h;
          /* log mean exp((k + h) y) = h c0 + log(T(h) / n) */
          lm = h * c0 + log(T0 / (double)n);
          have_lm = 1;
          break;
        }
        k += h;
        s_next = log(k);
      }
      /* The safeguarded iteration, for what the series step did not
       * settle. */
      if (!have_lm)
        rc = sp_dist_solve_increasing(profile_fdf, &ctx, s_next, WEIBULL_TOL,
                                      WEIBULL_MAXIT, &root);
    } else {
      ctx.shift = ctx.c - log(*scale);
      rc = sp_dist_solve_increasing(fixed_scale_fdf, &ctx, log(k), WEIBULL_TOL,
                                    WEIBULL_MAXIT, &root);
    }
    if (!have_lm) {
      if (rc != 0 || !isfinite(root)) {
        st = sp_fail(err, SP_ENUMERIC,
                     "%s: the maximum-likelihood equation for shape did not "
                     "converge", fam);
        goto done;
      }
      *shape = exp(root);
    }
  }
  if (!fix_scale) {
    /* Closed form for the given shape: scale = (mean (x - loc)^k)^(1/k).
     * The series step gives the mean at its root; after the safeguarded
     * iteration, the sums at the last evaluated k_last (within WEIBULL_TOL
     * of the root) give log mean exp(k y) at the root to first order,
     * d/dk log sum w = sum w y / sum w, with an error of order
     * (k - k_last)^2, far below rounding; otherwise one more pass. */
    double k = *shape;
    double dk = k - ctx.k_last;
    if (!have_lm) {
      if (!fix_shape && fabs(dk) <= 1e-6 * k)
        lm = log(ctx.s0_last / (double)n) + dk * ctx.a_last;
      else
        lm = log_mean_power(&ctx, k);
    }
    *scale = exp(ctx.c + lm / k);
  }
done:
  free(lbuf);
  return st;
}

static sp_status need_weibull_data(const double *x, size_t n, sp_error *err)
{
  return sp_dist_scan_positive("weibull", x, n, err);
}

/* Starting values from the moments of log x (log X is Gumbel-min with scale
 * 1/k and location log scale): k = pi / (sd(log x) sqrt 6),
 * scale = exp(mean(log x) + gamma/k), the estimators of Menon (1963; cited
 * at the start of sp_dist_weibull_mle). */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  sp_status st = need_weibull_data(x, n, err);
  if (st != SP_OK) return st;
  double ml, m2;
  sp_dist_log_moments(x, n, &ml, &m2);
  if (!sp_dist_is_fixed(fixed, SHAPE)) {
    if (!(m2 > 0.0)) {
      sp_dist_summary s;
      sp_dist_summarise(x, n, &s);
      return sp_dist_spread_failure("weibull", &s, err);
    }
    t[SHAPE] = SP_DIST_PI / (sqrt(m2 / (double)n) * sqrt(6.0));
  }
  if (!sp_dist_is_fixed(fixed, SCALE)) {
    if (sp_dist_is_fixed(fixed, SHAPE))
      return sp_dist_weibull_mle("weibull", x, n, 0.0, 1, 0, &t[SHAPE],
                                 &t[SCALE], err);
    t[SCALE] = exp(ml + SP_DIST_EULER / t[SHAPE]);
  }
  return SP_OK;
}

static sp_status mle_impl(const double *x, size_t n, const int *fixed,
                          double *t, sp_error *err)
{
  if (sp_dist_all_fixed(fixed, 2)) return SP_OK;
  sp_status st = need_weibull_data(x, n, err);
  if (st != SP_OK) return st;
  return sp_dist_weibull_mle("weibull", x, n, 0.0, sp_dist_is_fixed(fixed, SHAPE),
                             sp_dist_is_fixed(fixed, SCALE), &t[SHAPE],
                             &t[SCALE], err);
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_weibull, start_impl(x, n, fixed, t, err), t,
                              err);
}

static sp_status fit_mle(const double *x, size_t n, const int *fixed,
                         double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_weibull, mle_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_weibull = {
  .name = "weibull",
  .title = "Weibull (2-parameter)",
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
