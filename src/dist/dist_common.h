/* Private helpers shared by the distribution families (src/dist/).
 * Never installed; the functions are defined in src/dist/dist.c. */
#ifndef SP_DIST_COMMON_H
#define SP_DIST_COMMON_H

#include <math.h>
#include <stddef.h>

#include "scatterprop/core.h"
#include "scatterprop/dist.h"
#include "scatterprop/rng.h"

/* Euler-Mascheroni constant gamma = -psi(1), to 20 digits (Abramowitz,
 * M. & Stegun, I.A. (eds.) (1964). Handbook of Mathematical Functions.
 * National Bureau of Standards, Applied Mathematics Series 55, section
 * 6.1). */
#define SP_DIST_EULER 0.57721566490153286061
/* log(sqrt(2*pi)), the normal density's constant. */
#define SP_DIST_LN_SQRT_2PI 0.91893853320467274178
/* pi, log 2 and sqrt 2 to double precision (M_PI and friends are X/Open,
 * not C11). */
#define SP_DIST_PI 3.14159265358979323846
#define SP_DIST_LN2 0.69314718055994530942
#define SP_DIST_SQRT2 1.41421356237309504880

/* Nonzero when parameter i is flagged fixed (fixed may be NULL: none are). */
static inline int sp_dist_is_fixed(const int *fixed, size_t i)
{
  return fixed != NULL && fixed[i] != 0;
}

/* Nonzero when every one of the nparam parameters is fixed. */
static inline int sp_dist_all_fixed(const int *fixed, size_t nparam)
{
  for (size_t i = 0; i < nparam; i++)
    if (!sp_dist_is_fixed(fixed, i)) return 0;
  return 1;
}

/* check() helpers: SP_EUSAGE naming family, parameter and value. */
sp_status sp_dist_check_finite(const char *fam, const char *pname, double v,
                               sp_error *err);
sp_status sp_dist_check_positive(const char *fam, const char *pname, double v,
                                 sp_error *err);

/* Summary of data in two passes (mean, then centred sums), so the variance
 * keeps its digits when the mean is large against the spread. */
typedef struct {
  size_t n;
  double min, max;
  double mean;
  double m2;       /* sum of squared deviations from mean */
  double m3;       /* sum of cubed deviations */
  size_t n_nonpos; /* values <= 0 */
  size_t n_neg;    /* values < 0 */
  size_t n_nonfinite;
} sp_dist_summary;

void sp_dist_summarise(const double *x, size_t n, sp_dist_summary *s);

/* SP_EDATA unless n >= nmin and all values are finite. */
sp_status sp_dist_need_data(const char *fam, const sp_dist_summary *s,
                            size_t nmin, sp_error *err);
/* SP_EDATA unless all values are > 0, with the count and the minimum
 * ("lognormal needs values > 0; the data have 3 values <= 0 (min -0.2)"). */
sp_status sp_dist_need_positive(const char *fam, const sp_dist_summary *s,
                                sp_error *err);
/* The checks of sp_dist_need_data(fam, s, 1) and sp_dist_need_positive in
 * one pass of comparisons (no summary is formed unless one fails, for the
 * message); for the fits that run over a million values. */
sp_status sp_dist_scan_positive(const char *fam, const double *x, size_t n,
                                sp_error *err);
/* SP_EDATA unless all values are >= 0. */
sp_status sp_dist_need_nonnegative(const char *fam, const sp_dist_summary *s,
                                   sp_error *err);
/* SP_EDATA when all values are equal (zero spread); for fits that have to
 * estimate a spread parameter. */
sp_status sp_dist_need_spread(const char *fam, const sp_dist_summary *s,
                              sp_error *err);

/* For a spread that came out zero or non-finite: SP_EDATA (as
 * sp_dist_need_spread) when the values are all equal, SP_ENUMERIC when they
 * differ but their spread under- or overflows once squared. Never SP_OK. */
sp_status sp_dist_spread_failure(const char *fam, const sp_dist_summary *s,
                                 sp_error *err);
/* The last step of every fit_start and fit_mle: st unless it is SP_OK; then
 * SP_OK if theta passes fam->check, else SP_ENUMERIC quoting the check (the
 * data were representable, the parameters they give are not, e.g. a
 * variance of 1e-400). */
sp_status sp_dist_validate_fit(const sp_family *fam, sp_status st,
                               const double *theta, sp_error *err);

/* Mean and sum of squared deviations of log(x) (two passes), for x > 0. */
void sp_dist_log_moments(const double *x, size_t n, double *mean_log,
                         double *m2_log);

/* Block sampler by inversion: fills out[0..n) with open uniforms from g and
 * maps each through quantile_P (u <= 1/2) or quantile_Q(1 - u) (u > 1/2;
 * 1 - u is exact there by Sterbenz's lemma), so the upper tail keeps full
 * precision.  One generator output per draw: bit-stable and block-able. */
void sp_dist_sample_by_quantile(double (*qP)(const double *, double),
                                double (*qQ)(const double *, double),
                                const double *theta, sp_pcg64 *g, double *out,
                                size_t n);

/* logit(p) = log(p / (1 - p)) for p in [0, 1], accurate near 0, 1/2 and 1
 * (log1p of an exact difference in the middle, log - log1p outside). */
double sp_dist_logit(double p);
/* log(1 - exp(a)) for a <= 0, after Maechler, M. (2012). Accurately
 * computing log(1 - exp(-|a|)), assessed by the Rmpfr package. CRAN
 * vignette of package Rmpfr: log(-expm1(a)) for a > -ln 2, log1p(-exp(a))
 * otherwise. */
double sp_dist_log1mexp(double a);
/* log(exp(a) + exp(b)) without overflow. */
double sp_dist_logaddexp(double a, double b);

/* Safeguarded Newton iteration for a root of an increasing function F of one
 * variable t (typically t = log of a positive parameter).  fn fills F(t)
 * and F'(t) > 0 and returns 0, or nonzero when it cannot evaluate.  The
 * bracket [lo, hi] may start infinite on either side; it is found by steps
 * of doubling length from t0 and then narrowed: each Newton step that would
 * leave the bracket (or a non-finite F) is replaced by bisection, after
 * Press, W.H., Teukolsky, S.A., Vetterling, W.T. & Flannery, B.P. (2007).
 * Numerical Recipes, 3rd ed., Cambridge University Press, section 9.4
 * (rtsafe).  Converged when a step is below tol * max(1, |t|).  Returns 0
 * and *root when converged; 1 and the midpoint of the bracket when maxit
 * was exceeded with a sign change bracketed (F too noisy for tol); -1 if
 * no sign change was found or fn failed. */
typedef int (*sp_dist_fdf)(double t, void *ctx, double *f, double *df);
int sp_dist_solve_increasing(sp_dist_fdf fn, void *ctx, double t0, double tol,
                             int maxit, double *root);

/* Weibull maximum likelihood for (x - loc) (weibull.c; weibull3 uses it for
 * a given location).  Every x - loc must be > 0.  Honours fix_shape and
 * fix_scale (the fixed values are read from *shape, *scale).  SP_EDATA when
 * the shape must be estimated and all values are equal, SP_ENUMERIC when the
 * iteration fails. */
sp_status sp_dist_weibull_mle(const char *fam, const double *x, size_t n,
                              double loc, int fix_shape, int fix_scale,
                              double *shape, double *scale, sp_error *err);

/* Gumbel maximum likelihood (gumbel_max.c): fits the largest-value form to
 * y = sign * x (sign = +1 for gumbel_max, -1 for gumbel_min) and returns
 * the location on the scale of x.  Honours fix_loc and fix_scale (fixed
 * values read from *loc, *scale).  SP_EDATA for empty or constant data,
 * SP_ENUMERIC when the iteration fails. */
sp_status sp_dist_gumbel_mle(const char *fam, const double *x, size_t n,
                             double sign, int fix_loc, int fix_scale,
                             double *loc, double *scale, sp_error *err);

/* log of one standard Gamma(a) deviate (gamma.c: Marsaglia & Tsang 2000,
 * with the U^(1/a) boost for a < 1 taken in logs so tiny shapes cannot
 * underflow); beta draws its two gammas from here. */
double sp_dist_gamma_log_variate(double a, sp_pcg64 *g);
/* One standard Gamma(a) deviate for a >= 1 (the same method, no logs). */
double sp_dist_gamma_variate(double a, sp_pcg64 *g);

/* The families, one per file, listed in registry.c. */
extern const sp_family sp_dist_normal;
extern const sp_family sp_dist_lognormal;
extern const sp_family sp_dist_weibull;
extern const sp_family sp_dist_weibull3;
extern const sp_family sp_dist_gamma;
extern const sp_family sp_dist_exponential;
extern const sp_family sp_dist_exponential2;
extern const sp_family sp_dist_gumbel_max;
extern const sp_family sp_dist_gumbel_min;
extern const sp_family sp_dist_logistic;
extern const sp_family sp_dist_loglogistic;
extern const sp_family sp_dist_uniform;
extern const sp_family sp_dist_truncnormal;
extern const sp_family sp_dist_triangular;
extern const sp_family sp_dist_beta;

#endif /* SP_DIST_COMMON_H */
