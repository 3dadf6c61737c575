/* Private pieces shared by the fit module's files (never installed). */
#ifndef SP_FIT_INTERNAL_H
#define SP_FIT_INTERNAL_H

#include <gsl/gsl_multimin.h>
#include <gsl/gsl_vector.h>

#include "scatterprop/fit.h"

/* A workspace for repeated fits of up to nmax observations (one per
 * bootstrap thread): scratch arrays and one Nelder-Mead minimiser per
 * dimension, allocated on first use and reused. */
typedef struct {
  size_t nmax;
  double *scaled;   /* nmax: the data divided by the scale factor */
  double *work;     /* nmax: shifted data (profile), spacings (MPS) */
  double *sorted;   /* nmax: sorted copy */
  double *P, *Q;    /* nmax: fitted CDF at the sorted data, and its complement */
  double *sample;   /* nmax: a bootstrap replicate */
  gsl_multimin_fminimizer *nm[SP_FAMILY_MAX_PARAMS + 1];
  gsl_vector *t[SP_FAMILY_MAX_PARAMS + 1];
  gsl_vector *step[SP_FAMILY_MAX_PARAMS + 1];
} sp_fit_ws;

sp_fit_ws *sp_fit_ws_alloc(size_t nmax);
void sp_fit_ws_free(sp_fit_ws *w);

/* The objective a minimiser works on: f(theta) over the free parameters,
 * with the data bounds the transforms need. */
typedef double (*sp_fit_objective)(const sp_family *fam, const double *theta,
                                   const double *x, size_t n, void *ctx);

/* -log-likelihood, +INFINITY where theta fails check() or a point has zero
 * density. */
double sp_fit_negloglik(const sp_family *fam, const double *theta,
                        const double *x, size_t n, void *ctx);

/* The general minimiser: minimises obj over the free parameters of fam
 * (fixed[j] != 0 are held at theta[j]), starting from theta, on the
 * unconstrained transforms of the parameter kinds.  x is the data the
 * objective sees (the transforms of BELOW_DATA/ABOVE_DATA use its
 * extremes).  Returns SP_OK (converged or not, in info) or SP_ENUMERIC if
 * no finite objective value could be found at the start. */
sp_status sp_fit_simplex(const sp_family *fam, const double *x, size_t n,
                         const int *fixed, double *theta, sp_fit_objective obj,
                         void *ctx, sp_fit_ws *w, sp_fit_mle_info *info,
                         sp_error *err);

/* Estimation with a workspace (sp_fit_mle without allocation). */
sp_status sp_fit_mle_ws(const sp_family *fam, const double *x, size_t n,
                        const int *fixed, double *theta, sp_fit_mle_info *info,
                        sp_fit_ws *w, sp_error *err);

/* -sum log(spacings) of the sorted data (maximum product of spacings);
 * +INFINITY where theta fails check() or a spacing is zero. */
double sp_fit_mps_negobj(const sp_family *fam, const double *theta,
                         const double *sorted, size_t n, void *ctx);

/* Special fitters by family name (fit.c's table). */
typedef sp_status (*sp_fit_special)(const sp_family *fam, const double *x,
                                    size_t n, const int *fixed, double *theta,
                                    sp_fit_mle_info *info, sp_fit_ws *w,
                                    sp_error *err);
sp_status sp_fit_weibull3(const sp_family *fam, const double *x, size_t n,
                          const int *fixed, double *theta, sp_fit_mle_info *info,
                          sp_fit_ws *w, sp_error *err);

/* Statistics from the sorted data (into gof[*].stat); P and Q are
 * scratch arrays of n doubles. */
void sp_fit_gof_sorted(const sp_family *fam, const double *theta,
                       const double *sorted, size_t n, double *P, double *Q,
                       sp_fit_gof *gof);

/* Published-approximation p-values for candidate c (fitted to the sorted
 * data[0..n); P and Q are scratch arrays of n doubles) when they exist
 * for its family with every parameter estimated, or for every parameter
 * fixed: sets gof[*].p and method for each statistic that has one and
 * returns how many did (0 if none). */
int sp_fit_gof_approx(sp_fit_candidate *c, const double *sorted, size_t n, double *P,
                      double *Q);

/* A central-difference step matched to the curvature of f along
 * coordinate j of v (fit_hessian.c): f is evaluated at v +- h (v[j] is
 * restored on return), and h is changed until the second difference
 * d = (f(v + h) + f(v - h))/2 - f0 lies within a factor 100 of
 *   d* = sqrt(12 n eps max(|f0|, 1)),
 * the value that balances truncation against rounding when f is a sum of
 * n terms (derivation beside the code).  h is returned unchanged when it
 * already does (so well-scaled fits keep their digits), shrunk by the
 * quadratic model or by factors of 8 where f is not finite (the trial
 * point left the parameter space), grown by 8 (at most to hmax) where
 * the difference is lost in rounding.  NAN when no finite pair exists
 * down to a step of a few ulps of v[j]. */
typedef double (*sp_fit_coord_fn)(void *ctx, const double *v);
double sp_fit_fd_adapt(sp_fit_coord_fn f, void *ctx, double *v, size_t j, double f0, double h,
                       double hmax, size_t n);

/* sp_fail(err, SP_ENOMEM, ...) with the module's message. */
sp_status sp_fit_fail_nomem(sp_error *err);

/* Sorts x[0..n) ascending (in place). */
void sp_fit_sort(double *x, size_t n);

#endif
