/* scatterprop gof: goodness-of-fit statistics and their p-values.
 *
 * The module knows nothing of distribution families.  It works on the
 * probability-integral transform of a sorted sample x_(1) <= ... <= x_(n):
 *
 *   P[i] = F(x_(i+1))        (lower tail, i = 0 .. n-1, ascending)
 *   Q[i] = 1 - F(x_(i+1))    (upper tail, computed directly as the
 *                             family's survival function, never as 1 - P)
 *
 * so that the upper tail keeps full precision where F is close to 1.
 * sp_gof_fill_pq() builds both arrays from two callbacks.
 *
 * Statistics (Stephens, M.A. (1974). EDF statistics for goodness of fit
 * and some comparisons. Journal of the American Statistical Association
 * 69(347), 730-737, section 2), with z_i = P[i-1], i = 1..n:
 *   Anderson-Darling  A^2 = -n - (1/n) sum (2i-1) [ln z_i + ln(1 - z_(n+1-i))]
 *   Kolmogorov-Smirnov D+ = max (i/n - z_i), D- = max (z_i - (i-1)/n),
 *                      D  = max(D+, D-)
 *   Cramer-von Mises  W^2 = 1/(12n) + sum (z_i - (2i-1)/(2n))^2
 * Each is one O(n) pass with no allocation, so a parametric bootstrap can
 * call them thousands of times.
 *
 * p-values depend on what was estimated from the same data (the "case").
 * Each p-value comes with the method that produced it (a static string for
 * the CLI and the records) and says whether it is a value or only a bound
 * ("p < 0.01").  See docs/goodness-of-fit.md for the sources, the measured
 * accuracy of each method, and the conventions each case expects. */
#ifndef SP_GOF_H
#define SP_GOF_H

#include <stddef.h>

#include "scatterprop/core.h"

#ifdef __cplusplus
extern "C" {
#endif

/* What was estimated from the sample before the statistic was computed.
 * The estimated cases assume the estimators the published tables were made
 * with; other estimators make the p-values wrong. */
typedef enum {
  /* F fully specified in advance (nothing estimated from this sample). */
  SP_GOF_CASE_FULLY_SPECIFIED = 0,
  /* Normal with mean and standard deviation estimated by the sample mean
   * and s with the n - 1 denominator (lognormal: the same on ln x).
   * D'Agostino & Stephens (1986), section 4.8. */
  SP_GOF_CASE_NORMAL,
  /* Exponential with known origin and the scale estimated by the sample
   * mean (maximum likelihood). */
  SP_GOF_CASE_EXPONENTIAL,
  /* Extreme-value (Gumbel, largest or smallest) with location and scale by
   * maximum likelihood; use it for a 2-parameter Weibull fitted by maximum
   * likelihood (A^2 is the same computed on ln x).  Stephens (1977). */
  SP_GOF_CASE_EXTREME_VALUE,
  /* Logistic with location and scale by maximum likelihood.  Stephens
   * (1979). */
  SP_GOF_CASE_LOGISTIC
} sp_gof_case;
#define SP_GOF_NCASES 5

/* "fully-specified", "normal", "exponential", "extreme-value", "logistic";
 * NULL for a value outside the enum. */
const char *sp_gof_case_name(sp_gof_case c);
/* The case spelled name (as sp_gof_case_name); SP_EUSAGE naming the text
 * if unknown. */
sp_status sp_gof_case_find(const char *name, sp_gof_case *out, sp_error *err);

/* What kind of number a p-value is. */
typedef enum {
  SP_GOF_P_POINT = 0, /* p is an estimate of the p-value (accuracy: method) */
  SP_GOF_P_BELOW,     /* the p-value is below p ("p < 0.01") */
  SP_GOF_P_ABOVE,     /* the p-value is above p ("p > 0.25") */
  SP_GOF_P_NONE       /* no published method for this statistic and case:
                         p is NAN; use a parametric bootstrap */
} sp_gof_pkind;

/* "point", "below", "above", "none"; NULL outside the enum. */
const char *sp_gof_pkind_name(sp_gof_pkind k);

/* Below this value the approximate methods (Marsaglia & Marsaglia for A^2,
 * Csorgo & Faraway for W^2, the D'Agostino & Stephens formula) do not
 * resolve a p-value: their measured absolute errors are around 1e-5 (A^2)
 * to 1e-3 (W^2 at n = 5), so a smaller result is reported as the bound
 * "p < SP_GOF_P_FLOOR" (kind SP_GOF_P_BELOW).  The exact Kolmogorov-Smirnov
 * methods have no floor. */
#define SP_GOF_P_FLOOR 1e-4

typedef struct {
  double stat;        /* the statistic as passed in */
  double modified;    /* the statistic the table or formula is entered
                         with (e.g. A* = A^2 (1 + 0.75/n + 2.25/n^2));
                         equal to stat where no modification applies */
  double p;           /* the p-value (SP_GOF_P_POINT) or the bound */
  double p_lo, p_hi;  /* an interval that holds the p-value under the
                         method: the two tabulated levels around an
                         interpolated p; [0, p] for a bound below; [p, 1]
                         for a bound above; [p, p] for a formula or an
                         exact method; NAN for SP_GOF_P_NONE */
  sp_gof_pkind kind;
  const char *method; /* static string naming the method and its source,
                         e.g. "D'Agostino & Stephens 1986 Table 4.9
                         formula" */
} sp_gof_pvalue;

/* ---- building the P/Q arrays ---------------------------------------- */

/* A cumulative distribution function or its complement, with the caller's
 * context (for example a family and its parameters). */
typedef double (*sp_gof_cdf_fn)(const void *ctx, double x);

/* Fills P[i] = cdf_P(ctx, x[i]) and Q[i] = cdf_Q(ctx, x[i]) for the sorted
 * sample x[0..n).  Borrows everything; P and Q are caller arrays of n
 * doubles.  SP_EUSAGE if n == 0 or a pointer is NULL; SP_EDATA if x is not
 * finite and ascending, or a callback returns a value outside [0, 1] or
 * NaN (the message names the index and value).  No allocation. */
sp_status sp_gof_fill_pq(const double *x, size_t n, sp_gof_cdf_fn cdf_P,
                         sp_gof_cdf_fn cdf_Q, const void *ctx, double *P,
                         double *Q, sp_error *err);

/* Slack for P[i] + Q[i] = 1 in sp_gof_check_pq: it catches arrays that
 * were swapped, mixed up or computed with different parameters, not
 * rounding (a family's tails agree to ~1e-14). */
#define SP_GOF_PQ_TOL 1e-6

/* Checks P/Q arrays: n >= 1, every value in [0, 1], P ascending (a
 * decrease of up to 8 DBL_EPSILON is accepted as rounding inside a cdf),
 * and |P[i] + Q[i] - 1| <= SP_GOF_PQ_TOL.  SP_EUSAGE for n == 0 or NULL;
 * SP_EDATA otherwise, naming the index and the values. */
sp_status sp_gof_check_pq(const double *P, const double *Q, size_t n,
                          sp_error *err);

/* ---- statistics (no checks, no allocation) -------------------------- */

/* These assume arrays that pass sp_gof_check_pq (they do not check) and
 * return NAN for n == 0. */

/* Anderson-Darling A^2 (Stephens 1974 form, above) from log P and log Q.
 * INFINITY when some P[i] or Q[i] is 0 (an observation where F is 0 or 1,
 * impossible under the hypothesis). */
double sp_gof_ad_stat(const double *P, const double *Q, size_t n);
/* Kolmogorov-Smirnov D; also D+ and D- where the pointers are non-NULL. */
double sp_gof_ks_stat(const double *P, size_t n, double *dplus,
                      double *dminus);
/* Cramer-von Mises W^2. */
double sp_gof_cvm_stat(const double *P, size_t n);

typedef struct {
  size_t n;
  double a2;           /* Anderson-Darling A^2 */
  double d, dplus, dminus; /* Kolmogorov-Smirnov */
  double w2;           /* Cramer-von Mises W^2 */
} sp_gof_stats;

/* Checks the arrays (sp_gof_check_pq) and computes all statistics into
 * the caller's out. */
sp_status sp_gof_stats_compute(const double *P, const double *Q, size_t n,
                               sp_gof_stats *out, sp_error *err);

/* ---- null distributions, fully specified F -------------------------- */

/* Limiting distribution of A^2: P(A^2 <= z) and P(A^2 > z) by the short
 * approximation "adinf" of Marsaglia, G. & Marsaglia, J. (2004).
 * Evaluating the Anderson-Darling distribution. Journal of Statistical
 * Software 9(2), 1-5.  Measured absolute error <= 2.0e-5 against the
 * Anderson & Darling (1954) series.  0 / 1 for z <= 0. */
double sp_gof_ad_inf_P(double z);
double sp_gof_ad_inf_Q(double z);
/* Finite-n distribution of A^2 (n >= 1): adinf plus the paper's error
 * correction errfix(n, x), clamped to [0, 1].  Measured (tests and
 * docs/goodness-of-fit.md): within Monte Carlo noise (3e-4) for n >= 5;
 * at n = 1 within 2.9e-3 for z >= 1 but 0.044 off at z = 0.5, next to the
 * lower end of the support.  NAN for n == 0. */
double sp_gof_ad_P(size_t n, double z);
double sp_gof_ad_Q(size_t n, double z);

/* Exact distribution of the two-sided D_n (n >= 1): *P = P(D_n < d) and
 * *Q = P(D_n >= d), each computed so that the smaller one keeps its
 * relative precision.  Methods (strategy of Simard, R. & L'Ecuyer, P.
 * (2011). Computing the two-sided Kolmogorov-Smirnov distribution. Journal
 * of Statistical Software 39(11), 1-18):
 *  - closed forms of Ruben & Gambino (1982) for n d <= 1 and n d >= n - 1;
 *  - twice the exact one-sided tail for d >= 1/2 (exact there) and for
 *    n d^2 >= 4 (relative error below 1e-10);
 *  - otherwise the Durbin matrix by Marsaglia, G., Tsang, W.W. & Wang, J.
 *    (2003). Evaluating Kolmogorov's distribution. Journal of Statistical
 *    Software 8(18), 1-4 (exact to rounding) while its cost m^3 log2 n
 *    stays small; beyond that, twice the one-sided tail if n d^2 >= 2.2,
 *    else the Pelz & Good (1976) asymptotic series.
 * method (may be NULL) receives a static string naming what was used.
 * The matrix method allocates O(m^2) doubles (m ~ 2 n d); SP_ENOMEM if
 * that fails, SP_EUSAGE for n == 0 or d NaN. */
sp_status sp_gof_ks_dist(size_t n, double d, double *P, double *Q,
                         const char **method, sp_error *err);
/* Exact one-sided tail P(D+_n >= d) (= P(D-_n >= d)) by the Smirnov /
 * Birnbaum & Tingey (1951) sum; 1 for d <= 0, 0 for d >= 1, NAN for
 * n == 0. */
double sp_gof_ks_onesided_Q(size_t n, double d);

/* Limiting distribution of W^2 by the Anderson & Darling (1952) series as
 * written in Csorgo, S. & Faraway, J.J. (1996). The exact and asymptotic
 * distributions of Cramer-von Mises statistics. Journal of the Royal
 * Statistical Society B 58(1), 221-234, eq. (1.2); summed to double
 * precision.  0 / 1 for x <= 0. */
double sp_gof_cvm_inf_P(double x);
double sp_gof_cvm_inf_Q(double x);
/* Finite-n W^2 by Csorgo & Faraway's one-term correction, eq. (1.8):
 * P_n(x) = V(x) + psi1(x)/n on 1/(12n) < x < n/3 (0 below, 1 above),
 * clamped to [0, 1].  NAN for n == 0. */
double sp_gof_cvm_P(size_t n, double x);
double sp_gof_cvm_Q(size_t n, double x);

/* ---- p-values ------------------------------------------------------- */

/* Each fills the caller's out.  stat must be >= 0 and not NaN (A^2 may be
 * INFINITY), n >= 1, gcase one of the enum: otherwise SP_EUSAGE.  A case
 * without a published method is not an error: out->kind is SP_GOF_P_NONE.
 *
 * Anderson-Darling A^2:
 *  - fully specified: 1 - sp_gof_ad_P(n, A^2) (Marsaglia & Marsaglia 2004),
 *    below SP_GOF_P_FLOOR a bound; A^2 = INFINITY gives p = 0;
 *  - normal: A* = A^2 (1 + 0.75/n + 2.25/n^2) and the p-value formula of
 *    D'Agostino, R.B. & Stephens, M.A. (eds.) (1986). Goodness-of-Fit
 *    Techniques. Marcel Dekker, New York, Table 4.9;
 *  - exponential: A^2 (1 + 0.6/n) against D'Agostino & Stephens (1986)
 *    ch. 4 critical values (15%..1%);
 *  - extreme value: A^2 (1 + 0.2/sqrt(n)) against Stephens, M.A. (1977).
 *    Goodness of fit for the extreme value distribution. Biometrika 64(3),
 *    583-588 (25%..1%);
 *  - logistic: A^2 (1 + 0.25/n) against Stephens, M.A. (1979). Tests of fit
 *    for the logistic distribution based on the empirical distribution
 *    function. Biometrika 66(3), 591-595 (25%..0.5%).
 * Tabulated cases interpolate linearly in ln p between the neighbouring
 * levels and report a bound outside the table. */
sp_status sp_gof_ad_pvalue(double a2, size_t n, sp_gof_case gcase,
                           sp_gof_pvalue *out, sp_error *err);

/* Kolmogorov-Smirnov two-sided D:
 *  - fully specified: exact, sp_gof_ks_dist (may allocate, SP_ENOMEM);
 *  - normal: D (sqrt(n) - 0.01 + 0.85/sqrt(n)) against Stephens (1974)
 *    Table 1A critical values (15%..1%);
 *  - other cases: SP_GOF_P_NONE. */
sp_status sp_gof_ks_pvalue(double d, size_t n, sp_gof_case gcase,
                           sp_gof_pvalue *out, sp_error *err);

/* One-sided D+ or D-, fully specified F only: exact
 * sp_gof_ks_onesided_Q. */
sp_status sp_gof_ks_onesided_pvalue(double dpm, size_t n,
                                    sp_gof_pvalue *out, sp_error *err);

/* Cramer-von Mises W^2:
 *  - fully specified: 1 - sp_gof_cvm_P(n, W^2) (Csorgo & Faraway 1996),
 *    below SP_GOF_P_FLOOR a bound;
 *  - normal: W^2 (1 + 0.5/n) against Stephens (1974) Table 1A critical
 *    values (15%..1%);
 *  - other cases: SP_GOF_P_NONE. */
sp_status sp_gof_cvm_pvalue(double w2, size_t n, sp_gof_case gcase,
                            sp_gof_pvalue *out, sp_error *err);

/* Everything at once: checks the arrays, computes the statistics and the
 * three two-sided p-values for gcase into the caller's out. */
typedef struct {
  sp_gof_case gcase;
  sp_gof_stats stats;
  sp_gof_pvalue ad, ks, cvm;
} sp_gof_result;

sp_status sp_gof_test(const double *P, const double *Q, size_t n,
                      sp_gof_case gcase, sp_gof_result *out, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_GOF_H */
