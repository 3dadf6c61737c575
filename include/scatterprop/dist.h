/* scatterprop dist: distribution families as data.
 *
 * Each family is one const sp_family in its own file under src/dist/ and one
 * line in the registry (src/dist/registry.c).  The fitter, the sampler, the
 * plots and the model language find families by name through
 * sp_family_find(), so they all spell a family the same way.
 *
 * Parameters are passed as a const double *theta in the family's documented
 * order (param_names).  Functions other than check() assume theta has passed
 * check(); they never fail, and return NAN only where the mathematics is
 * undefined. */
#ifndef SP_DIST_H
#define SP_DIST_H

#include <stddef.h>

#include "scatterprop/core.h"
#include "scatterprop/rng.h"

#ifdef __cplusplus
extern "C" {
#endif

#define SP_FAMILY_MAX_PARAMS 4

/* How a parameter may vary; the fitter optimises on an unconstrained
 * transform chosen from this (identity, log, or a bound by the data). */
typedef enum {
  SP_PARAM_REAL,       /* any finite value (a location) */
  SP_PARAM_POSITIVE,   /* > 0 (a scale or a shape) */
  SP_PARAM_BELOW_DATA, /* a location/threshold that must lie below min(x) */
  SP_PARAM_ABOVE_DATA, /* an upper end that must lie above max(x) */
  SP_PARAM_LIMIT       /* a limit that is given, never fitted (truncation) */
} sp_param_kind;

/* Family capabilities. */
enum {
  SP_FAMILY_FIT = 1,       /* offered as a fitting candidate */
  SP_FAMILY_PROPAGATE = 2, /* usable as a model input */
  /* One of the default candidates of a fit.  Families that are fitted only
   * on request: exponential (a special case of gamma and weibull that
   * rarely suits gauge data), exponential2 and uniform (their maximum
   * likelihood puts a boundary on an observation, which flatters AIC), and
   * truncnormal (it needs its limits). */
  SP_FAMILY_CANDIDATE = 4
};

typedef struct sp_family {
  const char *name;   /* "weibull": CLI, records and model spelling */
  const char *title;  /* "Weibull (2-parameter)": for tables and reports */
  unsigned flags;     /* SP_FAMILY_* */
  size_t nparam;
  const char *param_names[SP_FAMILY_MAX_PARAMS];
  sp_param_kind param_kinds[SP_FAMILY_MAX_PARAMS];
  /* Default value of each parameter for the model language, NAN if it must
   * be given (e.g. beta's min = 0, max = 1). */
  double param_defaults[SP_FAMILY_MAX_PARAMS];

  /* SP_OK, or SP_EUSAGE with a message naming the offending parameter and
   * its value ("weibull: shape must be > 0, got -1"). */
  sp_status (*check)(const double *theta, sp_error *err);
  /* Support [lo, hi] (may be infinite). */
  void (*support)(const double *theta, double *lo, double *hi);
  double (*logpdf)(const double *theta, double x);  /* -INFINITY outside support */
  double (*cdf_P)(const double *theta, double x);   /* P(X <= x) */
  double (*cdf_Q)(const double *theta, double x);   /* P(X > x), accurate in the tail */
  double (*quantile_P)(const double *theta, double p); /* inverse of cdf_P, p in [0,1] */
  double (*quantile_Q)(const double *theta, double q); /* inverse of cdf_Q */
  /* Block sampler: n independent draws using g (the fastest exact method
   * for the family; may consume a variable number of outputs). */
  void (*sample)(const double *theta, sp_pcg64 *g, double *out, size_t n);
  double (*mean)(const double *theta);     /* NAN/INFINITY where it does not exist */
  double (*variance)(const double *theta);

  /* Fitting hooks (NULL where they do not apply).
   * fit_start: starting values from the data x[0..n) (moments or a
   *   regression on the probability plot); entries of theta already set and
   *   flagged in fixed[] must be kept.  SP_EDATA when the data lie outside
   *   every possible support (lognormal on values <= 0), with the reason.
   * fit_mle: a closed-form or specialised maximum-likelihood solution that
   *   honours fixed[]; returns SP_OK (at once when every parameter is
   *   fixed), SP_EDATA for data it cannot fit (outside the support, or too
   *   few or all equal when a spread must be estimated; the same messages
   *   as fit_start), or SP_ENUMERIC when it did not converge; NULL means the
   *   fitter's general minimiser is used.
   * fixed may be NULL for both hooks (no parameter fixed). */
  sp_status (*fit_start)(const double *x, size_t n, const int *fixed,
                         double *theta, sp_error *err);
  sp_status (*fit_mle)(const double *x, size_t n, const int *fixed,
                       double *theta, sp_error *err);
} sp_family;

/* The family named name, or NULL if unknown. */
const sp_family *sp_family_find(const char *name);
/* Number of registered families, and the i-th (in registry order). */
size_t sp_family_count(void);
const sp_family *sp_family_at(size_t i);
/* Index of a parameter by name in fam, or -1. */
int sp_family_param_index(const sp_family *fam, const char *pname);

/* Fills out[0..n) from the open uniforms u[0..n) by the quantile function
 * (used by Latin hypercube, Sobol points and the copula). */
void sp_family_from_uniform(const sp_family *fam, const double *theta,
                            const double *u, double *out, size_t n);
/* Sum of logpdf over x[0..n). */
double sp_family_loglik(const sp_family *fam, const double *theta,
                        const double *x, size_t n);

/* For samplers (the library's Weibull and log-logistic ones, and a family
 * defined outside it): x[i] <- x[i]^c for the n values of x, all positive,
 * as a vectorised exp(c log x) of plain arithmetic (src/dist/block_pow.c),
 * within some (2 |c log x| + 4) ulps of pow and independent of the libm
 * version; zero, subnormal and infinite values and |c log x| >= 700 go to
 * pow itself. */
void sp_family_pow_block(double *x, size_t n, double c);

#ifdef __cplusplus
}
#endif
#endif /* SP_DIST_H */
