/* truncnormal(mean, sd, lower, upper): the normal(mean, sd) restricted to
 * [lower, upper]; either limit may be infinite.  lower and upper are
 * SP_PARAM_LIMIT: given with the data, never fitted.
 *
 * Precision far in a tail.  With a = (lower - mean)/sd and b = (upper -
 * mean)/sd the normalising mass Z = Phi(b) - Phi(a) underflows once a limit
 * lies some 38 sd out, so everything is computed from logarithms of the
 * normal tails, log Q(z) (log erfc beyond z = 37), and differences of tails
 * as log Q(a) + log(1 - exp(log Q(b) - log Q(a))) with sp_dist_log1mexp.
 * Intervals in the lower tail (upper <= mean) are mirrored (x -> -x) into
 * the upper tail, so every difference is taken in the tail that keeps its
 * digits: Q-based when lower >= mean, and from erf (a sum of two positive
 * terms) when the interval straddles the mean.
 *
 * Quantiles: the target tail probability is formed in logs from the limit
 * nearer to it, and inverted with gsl_cdf_ugaussian_Qinv (Wichura 1988, AS
 * 241), or, below exp(-700), by Newton's method on log Q(z) using GSL's
 * hazard function phi/Q.
 *
 * Mean and variance: closed forms near the mean; for a limit 2 sd or more
 * into a tail, from Laplace's continued fraction for the Mills ratio, and
 * for narrow intervals from a Taylor series, so that neither cancels (see
 * the moments section below). */
#include <float.h>
#include <math.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_sf_erf.h>

#include "dist/dist_common.h"

enum { MEAN, SD, LOWER, UPPER };

/* Above this z, Q(z) < 1e-300 approaches the subnormal range; log erfc
 * takes over. */
#define TN_DIRECT_Z 37.0
/* Below this log tail, exp() would leave the normal range of doubles. */
#define TN_LOG_DIRECT (-700.0)

/* Above this z, log Q(z) comes from the leading term of the asymptotic
 * series Q(z) = phi(z)/z (1 - 1/z^2 + 3/z^4 - ...) (Abramowitz, M. &
 * Stegun, I.A. (eds.) (1964). Handbook of Mathematical Functions. National
 * Bureau of Standards, Applied Mathematics Series 55, 26.2.12): the first
 * correction, log(1 - 1/z^2) ~ -1e-16, is far below the rounding of
 * log Q ~ -5e15 there.  GSL's gsl_sf_log_erfc returns NaN once z^2
 * overflows (z near 1e154), which a standardised limit reaches when sd is
 * tiny (sd = 1e-300). */
#define TN_ASYMPTOTIC_Z 1e8

/* log Q(z) for the standard normal. */
static double log_Q(double z)
{
  if (z == INFINITY) return -INFINITY;
  if (z < 0.0) return log1p(-gsl_cdf_ugaussian_P(z));
  if (z < TN_DIRECT_Z) return log(gsl_cdf_ugaussian_Q(z));
  /* (0.5 z) z: no overflow before the true value leaves the doubles */
  if (z > TN_ASYMPTOTIC_Z) return -(0.5 * z) * z - log(z) - SP_DIST_LN_SQRT_2PI;
  return gsl_sf_log_erfc(z / SP_DIST_SQRT2) - SP_DIST_LN2;
}

static double log_P(double z) { return log_Q(-z); }

/* log(Phi(a + w) - Phi(a)) for a narrow interval, from the Taylor series
 *   Phi(a + w) - Phi(a) = phi(a) sum_{k>=1} (-1)^(k-1) He_{k-1}(a) w^k / k!
 * (phi^(k)(a) = (-1)^k He_k(a) phi(a), with the probabilists' Hermite
 * polynomials He_k and their recurrence He_(k+1) = a He_k - k He_(k-1):
 * Abramowitz, M. & Stegun, I.A. (eds.) (1964). Handbook of Mathematical
 * Functions. National Bureau of Standards, Applied Mathematics Series 55,
 * chapter 22), used
 * where w (|a| + |a + w| + 1) <= SERIES_MAX.  There the difference of two
 * tails would cancel (it loses log10(|log Q| / (w h)) digits), while the
 * terms of the series shrink at least geometrically and its sum stays
 * within a factor e of its largest term. */
#define SERIES_MAX 0.5
static double log_diff_series(double a, double w)
{
  double he0 = 1.0, he1 = a; /* He_{k-1}, He_k */
  double pw = w;             /* w^k / k! */
  double sum = w;            /* k = 1 term: He_0 w */
  int small = 0;             /* consecutive negligible terms */
  for (int k = 2; k < 80; k++) {
    pw *= w / k;
    double term = (k % 2 == 0 ? -he1 : he1) * pw;
    sum += term;
    double he2 = a * he1 - (k - 1) * he0;
    he0 = he1;
    he1 = he2;
    /* Two in a row, since one He_k(a) may happen to lie near a zero. */
    small = fabs(term) <= 0.25 * DBL_EPSILON * fabs(sum) ? small + 1 : 0;
    if (small == 2) break;
  }
  return -0.5 * a * a - SP_DIST_LN_SQRT_2PI + log(sum);
}

/* log(Phi(b) - Phi(a)) for a < b, given also w = b - a computed from the
 * unstandardised values (exact where Sterbenz's lemma applies). */
static double log_diff(double a, double b, double w)
{
  if (w * (fabs(a) + fabs(b) + 1.0) <= SERIES_MAX) return log_diff_series(a, w);
  if (a >= 0.0) {
    double la = log_Q(a);
    return la + sp_dist_log1mexp(log_Q(b) - la);
  }
  if (b <= 0.0) {
    double lb = log_P(b);
    return lb + sp_dist_log1mexp(log_P(a) - lb);
  }
  return log(0.5 * (erf(b / SP_DIST_SQRT2) - erf(a / SP_DIST_SQRT2)));
}

/* The z with log Q(z) = l. */
static double z_from_log_Q(double l)
{
  if (l >= 0.0) return -INFINITY;
  if (l == -INFINITY) return INFINITY;
  if (l > TN_LOG_DIRECT) return gsl_cdf_ugaussian_Qinv(exp(l));
  /* log Q(z) = -z^2/2 - log(z sqrt(2 pi)) + O(z^-2) gives the start; then
   * Newton: d log Q / dz = -hazard(z). */
  double z = sqrt(-2.0 * l);
  z = sqrt(-2.0 * l - 2.0 * (log(z) + SP_DIST_LN_SQRT_2PI));
  for (int i = 0; i < 50; i++) {
    double step = (log_Q(z) - l) / gsl_sf_hazard(z);
    z += step;
    if (fabs(step) <= 4.0 * DBL_EPSILON * z) break;
  }
  return z;
}

/* Parameters in the orientation that keeps precision: mirrored (x -> -x)
 * when the whole interval lies at or below the mean, so a < b and b > 0. */
typedef struct {
  double mu, sd, lo, hi; /* as given */
  int mirror;
  int narrow;            /* the series regime of log_diff for [lo, hi] */
  double a0, b0, w;      /* standardised limits as given, and b0 - a0 */
  double a, b;           /* standardised limits after mirroring */
  double lQa, lQb, lPa, logZ;
} tn;

static void setup(const double *t, tn *c)
{
  c->mu = t[MEAN];
  c->sd = t[SD];
  c->lo = t[LOWER];
  c->hi = t[UPPER];
  double a = (t[LOWER] - t[MEAN]) / t[SD], b = (t[UPPER] - t[MEAN]) / t[SD];
  c->a0 = a;
  c->b0 = b;
  c->w = (t[UPPER] - t[LOWER]) / t[SD];
  c->narrow = c->w * (fabs(a) + fabs(b) + 1.0) <= SERIES_MAX;
  c->mirror = b <= 0.0;
  if (c->mirror) {
    double tmp = a;
    a = -b;
    b = -tmp;
  }
  c->a = a;
  c->b = b;
  c->lQa = log_Q(a);
  c->lQb = log_Q(b);
  c->lPa = log_P(a);
  c->logZ = log_diff(a, b, (t[UPPER] - t[LOWER]) / t[SD]);
}

/* P and Q of the (possibly mirrored) truncated law at standardised z,
 * whose distance from the lower limit a (for P) or the upper limit b (for
 * Q) is d, computed from the unstandardised values. */
static double core_P(const tn *c, double z, double d)
{
  if (!(z > c->a)) return 0.0;
  if (!(z < c->b)) return 1.0;
  return exp(log_diff(c->a, z, d) - c->logZ);
}

static double core_Q(const tn *c, double z, double d)
{
  if (!(z > c->a)) return 1.0;
  if (!(z < c->b)) return 0.0;
  return exp(log_diff(z, c->b, d) - c->logZ);
}

/* Standardised quantiles of the (possibly mirrored) law. */
static double core_zP(const tn *c, double p)
{
  if (p == 0.0) return c->a;
  if (p == 1.0) return c->b;
  if (c->a >= 0.0) {
    /* Q(z) = Q(a) - p Z for small p, Q(b) + (1 - p) Z otherwise. */
    double lq = p <= 0.5 ? c->lQa + log1p(-p * exp(c->logZ - c->lQa))
                         : sp_dist_logaddexp(c->lQb, log1p(-p) + c->logZ);
    return z_from_log_Q(lq);
  }
  double lp = sp_dist_logaddexp(c->lPa, log(p) + c->logZ);
  if (lp <= -SP_DIST_LN2) return -z_from_log_Q(lp);
  return z_from_log_Q(sp_dist_logaddexp(c->lQb, log1p(-p) + c->logZ));
}

static double core_zQ(const tn *c, double q)
{
  if (q == 0.0) return c->b;
  if (q == 1.0) return c->a;
  double lq = sp_dist_logaddexp(c->lQb, log(q) + c->logZ);
  if (c->a >= 0.0 || lq <= -SP_DIST_LN2) return z_from_log_Q(lq);
  return -z_from_log_Q(sp_dist_logaddexp(c->lPa, log1p(-q) + c->logZ));
}

/* Near a finite limit (the whole of a narrow interval, or the part of any
 * interval next to a finite limit that holds the target mass): the
 * standardised distance d in [0, w] from the limit a (the lower limit; or
 * -b, for mass below the upper limit b, by symmetry) holding mass
 * target * Z, by Newton's method on log D(a, d) - log(target Z) with
 * D(a, d) = Phi(a + d) - Phi(a) from the series.  D is nearly linear there
 * (phi varies by at most e^(1/2)), so the start d0 = target Z / phi(a) is
 * close and a few steps reach rounding level; the quantile is then formed
 * as limit +- sd d, keeping its digits relative to its distance from the
 * limit.  (Forming the tail target from log Q instead would round it on
 * the scale of Q(a), up to 1/2 when the limit is near the mean.) */
static double limit_start(const tn *c, double a, double target)
{
  return exp(log(target) + c->logZ + 0.5 * a * a + SP_DIST_LN_SQRT_2PI);
}

static int in_series(double a, double d)
{
  return d * (2.0 * fabs(a) + d + 1.0) <= 0.5 * SERIES_MAX;
}

static double limit_distance(const tn *c, double a, double target, double d)
{
  double lt = log(target) + c->logZ;
  for (int i = 0; i < 50 && d > 0.0; i++) {
    double ld = log_diff_series(a, d);
    double z = a + d;
    double dd = (ld - lt) / exp(-0.5 * z * z - SP_DIST_LN_SQRT_2PI - ld);
    double dn = d - dd;
    if (dn < 0.0) dn = 0.5 * d;
    if (dn > c->w) dn = c->w;
    int done = fabs(dn - d) <= 2.0 * DBL_EPSILON * d;
    d = dn;
    if (done) break;
  }
  return d;
}

/* The quantile with mass (<= 1/2) above the lower limit (from_upper = 0)
 * or below the upper limit (from_upper = 1), if it lies in the series
 * regime of that limit; NAN otherwise. */
static double near_limit_quantile(const tn *c, double mass, int from_upper)
{
  double a = from_upper ? -c->b0 : c->a0;
  if (!isfinite(a)) return NAN;
  double d0 = c->narrow ? mass * c->w : limit_start(c, a, mass);
  if (!c->narrow && !in_series(a, d0)) return NAN;
  double d = limit_distance(c, a, mass, d0);
  return from_upper ? c->hi - c->sd * d : c->lo + c->sd * d;
}

static double clamp(const tn *c, double x)
{
  if (x < c->lo) return c->lo;
  if (x > c->hi) return c->hi;
  return x;
}

static double quantile_P_c(const tn *c, double p)
{
  if (!(p >= 0.0 && p <= 1.0)) return NAN;
  if (p > 0.0 && p < 1.0) {
    double x = p <= 0.5 ? near_limit_quantile(c, p, 0) : near_limit_quantile(c, 1.0 - p, 1);
    if (!isnan(x)) return clamp(c, x);
  }
  if (c->mirror) return clamp(c, c->mu - c->sd * core_zQ(c, p));
  return clamp(c, c->mu + c->sd * core_zP(c, p));
}

static double quantile_Q_c(const tn *c, double q)
{
  if (!(q >= 0.0 && q <= 1.0)) return NAN;
  if (q > 0.0 && q < 1.0) {
    double x = q <= 0.5 ? near_limit_quantile(c, q, 1) : near_limit_quantile(c, 1.0 - q, 0);
    if (!isnan(x)) return clamp(c, x);
  }
  if (c->mirror) return clamp(c, c->mu - c->sd * core_zP(c, q));
  return clamp(c, c->mu + c->sd * core_zQ(c, q));
}

static sp_status check(const double *t, sp_error *err)
{
  sp_status s = sp_dist_check_finite("truncnormal", "mean", t[MEAN], err);
  if (s == SP_OK) s = sp_dist_check_positive("truncnormal", "sd", t[SD], err);
  if (s != SP_OK) return s;
  if (isnan(t[LOWER]) || t[LOWER] == INFINITY)
    return sp_fail(err, SP_EUSAGE,
                   "truncnormal: lower must be a number or -inf, got %g", t[LOWER]);
  if (isnan(t[UPPER]) || t[UPPER] == -INFINITY)
    return sp_fail(err, SP_EUSAGE,
                   "truncnormal: upper must be a number or +inf, got %g", t[UPPER]);
  if (!(t[LOWER] < t[UPPER]))
    return sp_fail(err, SP_EUSAGE,
                   "truncnormal: upper must be > lower, got lower %g, upper %g",
                   t[LOWER], t[UPPER]);
  tn c;
  setup(t, &c);
  if (!(c.logZ > -INFINITY))
    return sp_fail(err, SP_EUSAGE,
                   "truncnormal: the interval [%g, %g] holds no probability of "
                   "normal(%g, %g) in double precision", t[LOWER], t[UPPER],
                   t[MEAN], t[SD]);
  return SP_OK;
}

static void support(const double *t, double *lo, double *hi)
{
  *lo = t[LOWER];
  *hi = t[UPPER];
}

/* Only log Z is needed here (two tail evaluations, not setup's five): the
 * log-likelihood calls this once per value. */
static double logpdf(const double *t, double x)
{
  if (isnan(x)) return NAN;
  if (x < t[LOWER] || x > t[UPPER]) return -INFINITY;
  double a = (t[LOWER] - t[MEAN]) / t[SD], b = (t[UPPER] - t[MEAN]) / t[SD];
  double logZ = b <= 0.0 ? log_diff(-b, -a, (t[UPPER] - t[LOWER]) / t[SD])
                         : log_diff(a, b, (t[UPPER] - t[LOWER]) / t[SD]);
  double z = (x - t[MEAN]) / t[SD];
  return -0.5 * z * z - log(t[SD]) - SP_DIST_LN_SQRT_2PI - logZ;
}

static double cdf_P(const double *t, double x)
{
  if (isnan(x)) return NAN;
  tn c;
  setup(t, &c);
  double z = (x - t[MEAN]) / t[SD];
  double dlo = (x - t[LOWER]) / t[SD], dhi = (t[UPPER] - x) / t[SD];
  double p = c.mirror ? core_Q(&c, -z, dlo) : core_P(&c, z, dlo);
  if (p <= 0.5) return p;
  /* Near 1, the difference of logs of size |log Z| leaves an absolute error
   * |log Z| eps (1e-13 at 40 sd); 1 - Q from the other, small tail is
   * accurate to eps. */
  return 1.0 - (c.mirror ? core_P(&c, -z, dhi) : core_Q(&c, z, dhi));
}

static double cdf_Q(const double *t, double x)
{
  if (isnan(x)) return NAN;
  tn c;
  setup(t, &c);
  double z = (x - t[MEAN]) / t[SD];
  double dlo = (x - t[LOWER]) / t[SD], dhi = (t[UPPER] - x) / t[SD];
  double q = c.mirror ? core_P(&c, -z, dhi) : core_Q(&c, z, dhi);
  if (q <= 0.5) return q;
  return 1.0 - (c.mirror ? core_Q(&c, -z, dlo) : core_P(&c, z, dlo));
}

static double quantile_P(const double *t, double p)
{
  tn c;
  setup(t, &c);
  return quantile_P_c(&c, p);
}

static double quantile_Q(const double *t, double q)
{
  tn c;
  setup(t, &c);
  return quantile_Q_c(&c, q);
}

/* Smallest probability Z of [lower, upper] under normal(mean, sd) for
 * which the sampler draws by rejection: a ziggurat normal costs about 3.4
 * ns with its scaling and inversion 110 to 160 ns per draw (measured), so
 * rejection, at 3.4/Z ns per draw, is faster down to Z = 0.03; at 1/16 it
 * costs at most about 55 ns, and the count of draws per value stays small. */
#define TN_REJECT_MIN_MASS 0.0625

/* For Z >= TN_REJECT_MIN_MASS, rejection: mean + sd z for ziggurat normals
 * z (sp_rng_fill_normal), kept when they lie in [lower, upper] (given x in
 * the interval, x has exactly the truncated law; the test is on x itself,
 * so every draw lies in the support).  Each round draws as many normals as
 * values are missing and compacts the kept ones in place, so the last
 * normal drawn is always the n-th kept one: the stream is consumed exactly
 * as far as needed, and a block drawn in two calls equals one call.
 * Otherwise inversion, with the limits' logarithms computed once per
 * block. */
static void sample(const double *t, sp_pcg64 *g, double *out, size_t n)
{
  tn c;
  setup(t, &c);
  if (c.logZ >= log(TN_REJECT_MIN_MASS)) {
    const double mu = t[MEAN], sd = t[SD], lo = t[LOWER], hi = t[UPPER];
    size_t k = 0;
    while (k < n) {
      sp_rng_fill_normal(g, out + k, n - k);
      for (size_t i = k; i < n; i++) {
        const double x = mu + sd * out[i];
        out[k] = x; /* k <= i: the slot was read already */
        k += x >= lo && x <= hi;
      }
    }
    return;
  }
  sp_rng_fill_open(g, out, n);
  for (size_t i = 0; i < n; i++) {
    double u = out[i];
    out[i] = u > 0.5 ? quantile_Q_c(&c, 1.0 - u) : quantile_P_c(&c, u);
  }
}

/* ---- mean and variance ------------------------------------------------- */

/* The closed forms
 *   E[T] = (phi(a) - phi(b))/Z,  E[T^2] = 1 + (a phi(a) - b phi(b))/Z
 * for the standardised T (from phi'(t) = -t phi(t), integrating t phi and
 * t^2 phi over [a, b] by parts) are used as they stand when the interval
 * reaches within 2 sd of the mean.  Further out, Var T = E[T^2] - E[T]^2
 * cancels (terms near a^2 summing to about 1/a^2), and the phi/Z ratios
 * carry the rounding of a^2/2 in their exponents, so the moments of
 * s = T - a are computed instead from the continued fraction of Laplace
 * for the Mills ratio R(a) = Q(a)/phi(a) = 1/T0,
 *   Tk = a + (k + 1)/T(k+1),  k = 0, 1, 2, ...
 * (Abramowitz & Stegun 1964, section 26.2), evaluated backward from depth
 * CF_DEPTH: with h = phi(a)/Q(a) = T0, rho = Q(b)/Q(a) = E R(b)/R(a) and
 * E = phi(b)/phi(a) = exp(-w (a + b)/2),
 *   E[s]   = (1/T1 - h E + a rho) / (1 - rho),
 *   E[s^2] = (2/(T1 T2) - rho (1 + a^2) + h E (a - w)) / (1 - rho),
 * which follow from the closed forms with 1 - a (h - a) = 2/(T1 T2), and
 * cancel at most by a factor of about 2.  Narrow intervals (the series
 * regime of log_diff) take the moments of the density proportional to
 * exp(-a s - s^2/2) on [0, w] from its Taylor series instead. */
#define CF_DEPTH 200
#define CF_MIN_A 2.0

/* T1, T2 of the continued fraction at a >= CF_MIN_A; at a = 2 the depth
 * 200 leaves a truncation error below 1e-20 (it shrinks as a grows). */
static void mills_cf(double a, double *t1, double *t2)
{
  double t = a;
  *t2 = a;
  for (int k = CF_DEPTH - 1; k >= 1; k--) {
    t = a + (k + 1) / t;
    if (k == 2) *t2 = t;
  }
  *t1 = t;
}

/* Moments of s = T - a on [0, w] for a >= CF_MIN_A (upper-tail case). */
static void moments_tail(const tn *c, double *ms, double *vs)
{
  double a = c->a, b = c->b, w = c->w, t1, t2;
  mills_cf(a, &t1, &t2);
  double h = a + 1.0 / t1;
  double e = 0.0, rho = 0.0;
  if (isfinite(b)) {
    double u1, u2;
    mills_cf(b, &u1, &u2);
    e = exp(-0.5 * w * (a + b));
    rho = e * h / (b + 1.0 / u1);
  }
  double one = 1.0 - rho;
  double m1 = (1.0 / t1 - h * e + a * rho) / one;
  double he = e > 0.0 ? h * e * (a - w) : 0.0; /* 0 for b = +inf */
  double m2 = (2.0 / (t1 * t2) - rho * (1.0 + a * a) + he) / one;
  *ms = m1;
  *vs = m2 - m1 * m1;
}

/* Moments of s = T - a0 on [0, w] for a narrow interval: with
 * exp(-a s - s^2/2) = sum_j c_j s^j, c_j = (-1)^j He_j(a)/j!, the integrals
 * J_k = int_0^1 u^k f(w u) du = sum_j c_j w^j / (j + k + 1), and
 * E[s] = w J1/J0, Var s = w^2 (J2 J0 - J1^2)/J0^2 (J = 1, 1/2, 1/3 for the
 * uniform, whose variance w^2/12 this cancels from by a factor 4 only). */
static void moments_narrow(const tn *c, double *ms, double *vs)
{
  double a = c->a0, w = c->w;
  double he0 = 1.0, he1 = a, cw = 1.0; /* He_j, He_(j+1), w^j / j! */
  double j0 = 1.0, j1 = 0.5, j2 = 1.0 / 3.0;
  int small = 0;
  for (int j = 1; j < 80; j++) {
    cw *= w / j;
    double cj = (j % 2 == 0 ? he1 : -he1) * cw;
    j0 += cj / (j + 1);
    j1 += cj / (j + 2);
    j2 += cj / (j + 3);
    double he2 = a * he1 - j * he0;
    he0 = he1;
    he1 = he2;
    small = fabs(cj) <= 0.25 * DBL_EPSILON ? small + 1 : 0;
    if (small == 2) break;
  }
  *ms = w * j1 / j0;
  *vs = w * w * (j2 * j0 - j1 * j1) / (j0 * j0);
}

/* phi(z)/Z and z phi(z)/Z, zero at infinite limits. */
static void phi_terms(double z, double logZ, double *r, double *zr)
{
  if (!isfinite(z)) {
    *r = 0.0;
    *zr = 0.0;
    return;
  }
  *r = exp(-0.5 * z * z - SP_DIST_LN_SQRT_2PI - logZ);
  *zr = z * *r;
}

static double mean(const double *t)
{
  tn c;
  setup(t, &c);
  double ms, vs;
  if (c.narrow) {
    moments_narrow(&c, &ms, &vs);
    return c.lo + c.sd * ms;
  }
  double m;
  if (c.a >= CF_MIN_A) {
    moments_tail(&c, &ms, &vs);
    m = c.sd * (c.a + ms);
  } else {
    double ra, za, rb, zb;
    phi_terms(c.a, c.logZ, &ra, &za);
    phi_terms(c.b, c.logZ, &rb, &zb);
    m = c.sd * (ra - rb);
  }
  return c.mirror ? c.mu - m : c.mu + m;
}

static double variance(const double *t)
{
  tn c;
  setup(t, &c);
  double ms, vs;
  if (c.narrow) {
    moments_narrow(&c, &ms, &vs);
    return c.sd * c.sd * vs;
  }
  if (c.a >= CF_MIN_A) {
    moments_tail(&c, &ms, &vs);
    return c.sd * c.sd * vs;
  }
  double ra, za, rb, zb;
  phi_terms(c.a, c.logZ, &ra, &za);
  phi_terms(c.b, c.logZ, &rb, &zb);
  double d = ra - rb;
  return c.sd * c.sd * (1.0 + (za - zb) - d * d);
}

/* Starting values: the limits must be given (a limit that is not flagged
 * fixed takes its default, -inf or +inf); mean and sd from the sample
 * moments, which a general minimiser then corrects for the truncation. */
static sp_status start_impl(const double *x, size_t n, const int *fixed,
                            double *t, sp_error *err)
{
  if (!sp_dist_is_fixed(fixed, LOWER)) t[LOWER] = -INFINITY;
  if (!sp_dist_is_fixed(fixed, UPPER)) t[UPPER] = INFINITY;
  /* Limits in the wrong order are the caller's mistake, said before the
   * data are blamed for lying outside them. */
  if (!(t[LOWER] < t[UPPER]))
    return sp_fail(err, SP_EUSAGE, "truncnormal: upper must be > lower, got lower %g, upper %g",
                   t[LOWER], t[UPPER]);
  sp_dist_summary s;
  sp_dist_summarise(x, n, &s);
  sp_status st = sp_dist_need_data("truncnormal", &s, 1, err);
  if (st != SP_OK) return st;
  if (s.min < t[LOWER] || s.max > t[UPPER]) {
    size_t out = 0;
    for (size_t i = 0; i < n; i++)
      if (x[i] < t[LOWER] || x[i] > t[UPPER]) out++;
    return sp_fail(err, SP_EDATA,
                   "truncnormal: %zu value%s lie outside the limits [%g, %g] "
                   "(data range %g to %g)", out, out == 1 ? "" : "s", t[LOWER],
                   t[UPPER], s.min, s.max);
  }
  if (!sp_dist_is_fixed(fixed, MEAN)) t[MEAN] = s.mean;
  if (!sp_dist_is_fixed(fixed, SD)) {
    st = sp_dist_need_spread("truncnormal", &s, err);
    if (st != SP_OK) return st;
    t[SD] = sqrt(s.m2 / (double)n);
  }
  return SP_OK;
}

/* Every result passes check() (sp_dist_validate_fit). */
static sp_status fit_start(const double *x, size_t n, const int *fixed,
                           double *t, sp_error *err)
{
  return sp_dist_validate_fit(&sp_dist_truncnormal, start_impl(x, n, fixed, t, err), t,
                              err);
}

const sp_family sp_dist_truncnormal = {
  .name = "truncnormal",
  .title = "Truncated normal",
  .flags = SP_FAMILY_FIT | SP_FAMILY_PROPAGATE,
  .nparam = 4,
  .param_names = {"mean", "sd", "lower", "upper"},
  .param_kinds = {SP_PARAM_REAL, SP_PARAM_POSITIVE, SP_PARAM_LIMIT, SP_PARAM_LIMIT},
  .param_defaults = {NAN, NAN, -INFINITY, INFINITY},
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
