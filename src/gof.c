/* scatterprop gof: EDF statistics on probability-integral-transformed data,
 * and p-values by the published method for each case.
 *
 * Statistics: Stephens, M.A. (1974). EDF statistics for goodness of fit and
 * some comparisons. Journal of the American Statistical Association
 * 69(347), 730-737.
 *
 * p-values with estimated parameters: D'Agostino, R.B. & Stephens, M.A.
 * (eds.) (1986). Goodness-of-Fit Techniques. Marcel Dekker, New York,
 * chapter 4 (Stephens, "Tests based on EDF statistics"); Stephens, M.A.
 * (1977). Goodness of fit for the extreme value distribution. Biometrika
 * 64(3), 583-588; Stephens, M.A. (1979). Tests of fit for the logistic
 * distribution based on the empirical distribution function. Biometrika
 * 66(3), 591-595.  Every table below names its source beside it. */
#include "scatterprop/gof.h"

#include <float.h>
#include <math.h>
#include <string.h>

/* ---- names ---------------------------------------------------------- */

static const char *const case_names[SP_GOF_NCASES] = {
  "fully-specified", "normal", "exponential", "extreme-value", "logistic"
};

const char *sp_gof_case_name(sp_gof_case c)
{
  if ((int)c < 0 || (int)c >= SP_GOF_NCASES) return NULL;
  return case_names[c];
}

sp_status sp_gof_case_find(const char *name, sp_gof_case *out, sp_error *err)
{
  if (!name || !out)
    return sp_fail(err, SP_EUSAGE, "goodness of fit: case name or output is NULL");
  for (int i = 0; i < SP_GOF_NCASES; i++) {
    if (strcmp(name, case_names[i]) == 0) {
      *out = (sp_gof_case)i;
      return SP_OK;
    }
  }
  sp_fail(err, SP_EUSAGE, "goodness of fit: unknown case '%s'", name);
  return sp_error_hint(err, "known cases: fully-specified, normal, exponential, "
                            "extreme-value, logistic");
}

const char *sp_gof_pkind_name(sp_gof_pkind k)
{
  switch (k) {
  case SP_GOF_P_POINT: return "point";
  case SP_GOF_P_BELOW: return "below";
  case SP_GOF_P_ABOVE: return "above";
  case SP_GOF_P_NONE: return "none";
  }
  return NULL;
}

/* ---- P/Q arrays ----------------------------------------------------- */

sp_status sp_gof_fill_pq(const double *x, size_t n, sp_gof_cdf_fn cdf_P,
                         sp_gof_cdf_fn cdf_Q, const void *ctx, double *P,
                         double *Q, sp_error *err)
{
  if (n == 0)
    return sp_fail(err, SP_EUSAGE, "goodness of fit: empty sample");
  if (!x || !cdf_P || !cdf_Q || !P || !Q)
    return sp_fail(err, SP_EUSAGE, "goodness of fit: NULL argument to sp_gof_fill_pq");
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(x[i]))
      return sp_fail(err, SP_EDATA, "goodness of fit: observation %zu is not finite (%g)",
                     i + 1, x[i]);
    if (i > 0 && x[i] < x[i - 1])
      return sp_fail(err, SP_EDATA,
                     "goodness of fit: sample not sorted ascending at observation %zu "
                     "(%.17g after %.17g)", i + 1, x[i], x[i - 1]);
    double p = cdf_P(ctx, x[i]), q = cdf_Q(ctx, x[i]);
    if (!(p >= 0.0 && p <= 1.0) || !(q >= 0.0 && q <= 1.0))
      return sp_fail(err, SP_EDATA,
                     "goodness of fit: cdf at observation %zu (x = %.17g) gave "
                     "P = %.17g, Q = %.17g, outside [0, 1]", i + 1, x[i], p, q);
    P[i] = p;
    Q[i] = q;
  }
  return SP_OK;
}

/* A cdf may be non-monotone by a few units in the last place of 1.0;
 * allow that much before calling the P array unsorted. */
#define PQ_MONOTONE_SLACK (8.0 * DBL_EPSILON)

sp_status sp_gof_check_pq(const double *P, const double *Q, size_t n,
                          sp_error *err)
{
  if (n == 0)
    return sp_fail(err, SP_EUSAGE, "goodness of fit: empty sample");
  if (!P || !Q)
    return sp_fail(err, SP_EUSAGE, "goodness of fit: NULL P or Q array");
  for (size_t i = 0; i < n; i++) {
    if (!(P[i] >= 0.0 && P[i] <= 1.0 && Q[i] >= 0.0 && Q[i] <= 1.0))
      return sp_fail(err, SP_EDATA,
                     "goodness of fit: P[%zu] = %.17g or Q[%zu] = %.17g outside [0, 1]",
                     i, P[i], i, Q[i]);
    if (fabs(P[i] + Q[i] - 1.0) > SP_GOF_PQ_TOL)
      return sp_fail(err, SP_EDATA,
                     "goodness of fit: P[%zu] + Q[%zu] = %.17g, not 1 (P = %.17g, "
                     "Q = %.17g): Q must be the upper tail at the same point",
                     i, i, P[i] + Q[i], P[i], Q[i]);
    if (i > 0 && P[i] < P[i - 1] - PQ_MONOTONE_SLACK)
      return sp_fail(err, SP_EDATA,
                     "goodness of fit: P not ascending at %zu (%.17g after %.17g): "
                     "sort the sample first", i, P[i], P[i - 1]);
  }
  return SP_OK;
}

/* ---- statistics ----------------------------------------------------- */

double sp_gof_ad_stat(const double *P, const double *Q, size_t n)
{
  if (n == 0) return NAN;
  /* sum_{i=1}^n (2i-1) [ln z_i + ln(1 - z_(n+1-i))], regrouped by index:
   * z_i carries weight 2i - 1 in ln z_i and 2n - 2i + 1 in ln(1 - z_i). */
  double nn = (double)n, s = 0.0;
  for (size_t i = 0; i < n; i++) {
    if (P[i] <= 0.0 || Q[i] <= 0.0) return INFINITY;
    double w = 2.0 * (double)i + 1.0;
    s += w * log(P[i]) + (2.0 * nn - w) * log(Q[i]);
  }
  return -nn - s / nn;
}

double sp_gof_ks_stat(const double *P, size_t n, double *dplus, double *dminus)
{
  if (n == 0) {
    if (dplus) *dplus = NAN;
    if (dminus) *dminus = NAN;
    return NAN;
  }
  double nn = (double)n, dp = -INFINITY, dm = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    double a = (double)(i + 1) / nn - P[i];
    double b = P[i] - (double)i / nn;
    if (a > dp) dp = a;
    if (b > dm) dm = b;
  }
  if (dplus) *dplus = dp;
  if (dminus) *dminus = dm;
  return dp > dm ? dp : dm;
}

double sp_gof_cvm_stat(const double *P, size_t n)
{
  if (n == 0) return NAN;
  double nn = (double)n, s = 1.0 / (12.0 * nn);
  for (size_t i = 0; i < n; i++) {
    double t = P[i] - (2.0 * (double)i + 1.0) / (2.0 * nn);
    s += t * t;
  }
  return s;
}

sp_status sp_gof_stats_compute(const double *P, const double *Q, size_t n,
                               sp_gof_stats *out, sp_error *err)
{
  if (!out) return sp_fail(err, SP_EUSAGE, "goodness of fit: NULL output");
  sp_status st = sp_gof_check_pq(P, Q, n, err);
  if (st != SP_OK) return st;
  out->n = n;
  out->a2 = sp_gof_ad_stat(P, Q, n);
  out->d = sp_gof_ks_stat(P, n, &out->dplus, &out->dminus);
  out->w2 = sp_gof_cvm_stat(P, n);
  return SP_OK;
}

/* ---- p-value helpers ------------------------------------------------ */

static void set_point(sp_gof_pvalue *out, double p, const char *method)
{
  out->p = p;
  out->p_lo = out->p_hi = p;
  out->kind = SP_GOF_P_POINT;
  out->method = method;
}

static void set_below(sp_gof_pvalue *out, double bound, const char *method)
{
  out->p = bound;
  out->p_lo = 0.0;
  out->p_hi = bound;
  out->kind = SP_GOF_P_BELOW;
  out->method = method;
}

/* A point estimate from an approximation, or the floor bound below it. */
static void set_approx(sp_gof_pvalue *out, double p, const char *method)
{
  if (p < SP_GOF_P_FLOOR) set_below(out, SP_GOF_P_FLOOR, method);
  else set_point(out, p, method);
}

static const char NONE_METHOD[] =
    "none: no published approximation for this statistic and case";

static void set_none(sp_gof_pvalue *out)
{
  out->p = out->p_lo = out->p_hi = NAN;
  out->kind = SP_GOF_P_NONE;
  out->method = NONE_METHOD;
}

/* A table of upper-tail critical values: crit[j] ascending with level
 * alpha[j] descending, P(modified statistic > crit[j]) = alpha[j]. */
typedef struct {
  size_t npoints;
  double alpha[6];
  double crit[6];
  const char *method;
} crit_table;

/* Anderson-Darling, exponential with the scale estimated (origin known),
 * A^2 (1 + 0.6/n): D'Agostino & Stephens (1986), ch. 4 (the revised values;
 * Stephens (1974) Table 1A had 0.922, 1.078, 1.341, 1.606, 1.957, which is
 * what SciPy 1.10's anderson(dist='expon') uses). */
static const crit_table AD_EXPON = {
  5, {0.15, 0.10, 0.05, 0.025, 0.01}, {0.916, 1.062, 1.321, 1.591, 1.959},
  "D'Agostino & Stephens 1986 exponential critical values, A2(1+0.6/n), "
  "interpolated in log p"
};
/* Anderson-Darling, extreme value with both parameters by maximum
 * likelihood, A^2 (1 + 0.2/sqrt(n)): Stephens (1977), Table 1. */
static const crit_table AD_EV = {
  5, {0.25, 0.10, 0.05, 0.025, 0.01}, {0.474, 0.637, 0.757, 0.877, 1.038},
  "Stephens 1977 extreme-value critical values, A2(1+0.2/sqrt(n)), "
  "interpolated in log p"
};
/* Anderson-Darling, logistic with both parameters by maximum likelihood,
 * A^2 (1 + 0.25/n): Stephens (1979), Table 1. */
static const crit_table AD_LOGISTIC = {
  6, {0.25, 0.10, 0.05, 0.025, 0.01, 0.005},
  {0.426, 0.563, 0.660, 0.769, 0.906, 1.010},
  "Stephens 1979 logistic critical values, A2(1+0.25/n), interpolated in log p"
};
/* Kolmogorov-Smirnov, normal with mean and s estimated (Lilliefors' case),
 * D (sqrt(n) - 0.01 + 0.85/sqrt(n)): Stephens (1974) Table 1A, reprinted in
 * D'Agostino & Stephens (1986) Table 4.7. */
static const crit_table KS_NORMAL = {
  5, {0.15, 0.10, 0.05, 0.025, 0.01}, {0.775, 0.819, 0.895, 0.955, 1.035},
  "Stephens 1974 normal critical values, D(sqrt(n)-0.01+0.85/sqrt(n)), "
  "interpolated in log p"
};
/* Cramer-von Mises, normal with mean and s estimated, W^2 (1 + 0.5/n):
 * Stephens (1974) Table 1A, reprinted in D'Agostino & Stephens (1986)
 * Table 4.7. */
static const crit_table CVM_NORMAL = {
  5, {0.15, 0.10, 0.05, 0.025, 0.01}, {0.091, 0.104, 0.126, 0.148, 0.178},
  "Stephens 1974 normal critical values, W2(1+0.5/n), interpolated in log p"
};

/* p from a critical-value table: linear in ln(alpha) between the two
 * neighbouring tabulated points; a bound outside the table. */
static void table_pvalue(const crit_table *t, double mod, sp_gof_pvalue *out)
{
  size_t last = t->npoints - 1;
  out->method = t->method;
  if (mod < t->crit[0]) {
    out->p = out->p_lo = t->alpha[0];
    out->p_hi = 1.0;
    out->kind = SP_GOF_P_ABOVE;
    return;
  }
  if (mod > t->crit[last]) {
    set_below(out, t->alpha[last], t->method);
    return;
  }
  for (size_t j = 0; j < last; j++) {
    if (mod <= t->crit[j + 1]) {
      double f = (mod - t->crit[j]) / (t->crit[j + 1] - t->crit[j]);
      double la = log(t->alpha[j]), lb = log(t->alpha[j + 1]);
      out->p = (f == 0.0) ? t->alpha[j] : (f == 1.0 ? t->alpha[j + 1]
                                                    : exp(la + f * (lb - la)));
      out->p_lo = t->alpha[j + 1];
      out->p_hi = t->alpha[j];
      out->kind = SP_GOF_P_POINT;
      return;
    }
  }
  /* mod == crit[last] exactly. */
  set_point(out, t->alpha[last], t->method);
}

static sp_status check_args(const char *what, double stat, size_t n,
                            sp_gof_case gcase, sp_gof_pvalue *out, sp_error *err)
{
  if (!out) return sp_fail(err, SP_EUSAGE, "%s p-value: NULL output", what);
  if (n == 0) return sp_fail(err, SP_EUSAGE, "%s p-value: n must be >= 1", what);
  if (isnan(stat) || stat < 0.0)
    return sp_fail(err, SP_EUSAGE, "%s p-value: statistic must be >= 0, got %g", what,
                   stat);
  if ((int)gcase < 0 || (int)gcase >= SP_GOF_NCASES)
    return sp_fail(err, SP_EUSAGE, "%s p-value: unknown case %d", what, (int)gcase);
  out->stat = stat;
  out->modified = stat;
  return SP_OK;
}

/* ---- Anderson-Darling ----------------------------------------------- */

static const char AD_MARSAGLIA[] = "Marsaglia & Marsaglia 2004 (adinf + errfix)";
static const char AD_TABLE49[] =
    "D'Agostino & Stephens 1986 Table 4.9 formula, A*=A2(1+0.75/n+2.25/n^2)";

/* D'Agostino & Stephens (1986) Table 4.9: the upper-tail p of A* for the
 * normal case, four quadratics in A* on [0, 0.2), [0.2, 0.34), [0.34, 0.6)
 * and [0.6, inf).  The last exponent has its minimum at A* = 5.709 /
 * (2 * 0.0186) = 153.47, beyond which the formula would rise again; there
 * (and wherever p < SP_GOF_P_FLOOR) a bound is returned instead. */
#define TABLE49_VERTEX (5.709 / (2.0 * 0.0186))

static double table49_p(double a)
{
  if (a < 0.2) return -expm1(-13.436 + 101.14 * a - 223.73 * a * a);
  if (a < 0.34) return -expm1(-8.318 + 42.796 * a - 59.938 * a * a);
  if (a < 0.6) return exp(0.9177 - 4.279 * a - 1.38 * a * a);
  return exp(1.2937 - 5.709 * a + 0.0186 * a * a);
}

sp_status sp_gof_ad_pvalue(double a2, size_t n, sp_gof_case gcase,
                           sp_gof_pvalue *out, sp_error *err)
{
  sp_status st = check_args("Anderson-Darling", a2, n, gcase, out, err);
  if (st != SP_OK) return st;
  double nn = (double)n;
  switch (gcase) {
  case SP_GOF_CASE_FULLY_SPECIFIED:
    if (isinf(a2)) set_point(out, 0.0, AD_MARSAGLIA);
    else set_approx(out, sp_gof_ad_Q(n, a2), AD_MARSAGLIA);
    break;
  case SP_GOF_CASE_NORMAL: {
    double a = a2 * (1.0 + 0.75 / nn + 2.25 / (nn * nn));
    out->modified = a;
    if (a >= TABLE49_VERTEX) set_below(out, SP_GOF_P_FLOOR, AD_TABLE49);
    else set_approx(out, table49_p(a), AD_TABLE49);
    break;
  }
  case SP_GOF_CASE_EXPONENTIAL:
    out->modified = a2 * (1.0 + 0.6 / nn);
    table_pvalue(&AD_EXPON, out->modified, out);
    break;
  case SP_GOF_CASE_EXTREME_VALUE:
    out->modified = a2 * (1.0 + 0.2 / sqrt(nn));
    table_pvalue(&AD_EV, out->modified, out);
    break;
  case SP_GOF_CASE_LOGISTIC:
    out->modified = a2 * (1.0 + 0.25 / nn);
    table_pvalue(&AD_LOGISTIC, out->modified, out);
    break;
  }
  return SP_OK;
}

/* ---- Kolmogorov-Smirnov --------------------------------------------- */

sp_status sp_gof_ks_pvalue(double d, size_t n, sp_gof_case gcase,
                           sp_gof_pvalue *out, sp_error *err)
{
  sp_status st = check_args("Kolmogorov-Smirnov", d, n, gcase, out, err);
  if (st != SP_OK) return st;
  if (d > 1.0)
    return sp_fail(err, SP_EUSAGE, "Kolmogorov-Smirnov p-value: D must be <= 1, got %g", d);
  double nn = (double)n;
  switch (gcase) {
  case SP_GOF_CASE_FULLY_SPECIFIED: {
    double p, q;
    const char *how;
    st = sp_gof_ks_dist(n, d, &p, &q, &how, err);
    if (st != SP_OK) return st;
    set_point(out, q, how);
    break;
  }
  case SP_GOF_CASE_NORMAL:
    out->modified = d * (sqrt(nn) - 0.01 + 0.85 / sqrt(nn));
    table_pvalue(&KS_NORMAL, out->modified, out);
    break;
  default:
    set_none(out);
    break;
  }
  return SP_OK;
}

static const char KS_ONESIDED[] = "Birnbaum & Tingey 1951 exact one-sided sum";

sp_status sp_gof_ks_onesided_pvalue(double dpm, size_t n, sp_gof_pvalue *out,
                                    sp_error *err)
{
  /* D+ >= 1 - P[n-1] >= 0 and D- >= P[0] >= 0, so a negative value is a
   * caller error like any other. */
  if (!out) return sp_fail(err, SP_EUSAGE, "one-sided Kolmogorov-Smirnov p-value: NULL output");
  if (n == 0)
    return sp_fail(err, SP_EUSAGE, "one-sided Kolmogorov-Smirnov p-value: n must be >= 1");
  if (isnan(dpm) || dpm < 0.0 || dpm > 1.0)
    return sp_fail(err, SP_EUSAGE,
                   "one-sided Kolmogorov-Smirnov p-value: statistic must be in [0, 1], got %g",
                   dpm);
  out->stat = out->modified = dpm;
  set_point(out, sp_gof_ks_onesided_Q(n, dpm), KS_ONESIDED);
  return SP_OK;
}

/* ---- Cramer-von Mises ----------------------------------------------- */

static const char CVM_CF[] = "Csorgo & Faraway 1996 eq. (1.8)";

sp_status sp_gof_cvm_pvalue(double w2, size_t n, sp_gof_case gcase,
                            sp_gof_pvalue *out, sp_error *err)
{
  sp_status st = check_args("Cramer-von Mises", w2, n, gcase, out, err);
  if (st != SP_OK) return st;
  double nn = (double)n;
  switch (gcase) {
  case SP_GOF_CASE_FULLY_SPECIFIED:
    set_approx(out, sp_gof_cvm_Q(n, w2), CVM_CF);
    break;
  case SP_GOF_CASE_NORMAL:
    out->modified = w2 * (1.0 + 0.5 / nn);
    table_pvalue(&CVM_NORMAL, out->modified, out);
    break;
  default:
    set_none(out);
    break;
  }
  return SP_OK;
}

/* ---- everything ----------------------------------------------------- */

sp_status sp_gof_test(const double *P, const double *Q, size_t n,
                      sp_gof_case gcase, sp_gof_result *out, sp_error *err)
{
  if (!out) return sp_fail(err, SP_EUSAGE, "goodness of fit: NULL output");
  sp_status st = sp_gof_stats_compute(P, Q, n, &out->stats, err);
  if (st != SP_OK) return st;
  out->gcase = gcase;
  st = sp_gof_ad_pvalue(out->stats.a2, n, gcase, &out->ad, err);
  if (st != SP_OK) return st;
  st = sp_gof_ks_pvalue(out->stats.d, n, gcase, &out->ks, err);
  if (st != SP_OK) return st;
  return sp_gof_cvm_pvalue(out->stats.w2, n, gcase, &out->cvm, err);
}
