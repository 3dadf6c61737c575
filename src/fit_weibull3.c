/* scatterprop fit: the 3-parameter Weibull (a threshold below the data).
 *
 * Maximum likelihood by profiling the threshold gamma: for each gamma <
 * min(x) the 2-parameter Weibull MLE of x - gamma is found with the
 * weibull family's own solver, and the profile log-likelihood is
 * maximised over gamma.  The search runs on s with gamma = min(x) -
 * exp(s) * spread over a grid of GRID_N points from 1e-6 to 1e3 spreads
 * below the smallest value, then by Brent's method (GSL
 * gsl_min_fminimizer_brent; Brent, R.P. (1973). Algorithms for
 * Minimization without Derivatives. Prentice-Hall, chapter 5) inside the
 * bracket around the highest interior local maximum of the grid.
 *
 * As gamma approaches min(x) with a fitted shape below 1 the likelihood
 * grows without bound, and for shapes near or below 1 the profile often has
 * no interior maximum at all; a maximum-likelihood estimate then does not
 * exist (Smith, R.L. (1985). Maximum likelihood estimation in a class of
 * nonregular cases. Biometrika 72(1), 67-90).  The fallback is the maximum
 * product of spacings estimate (Cheng, R.C.H. & Amin, N.A.K. (1983).
 * Estimating parameters in continuous univariate distributions with a
 * shifted origin. J. R. Statist. Soc. B 45(3), 394-403): maximise
 *   sum_{i=1}^{n+1} log(F(x_(i)) - F(x_(i-1))),  F(x_(0)) = 0, F(x_(n+1)) = 1,
 * which stays bounded as gamma -> min(x) and is consistent and efficient
 * where ML is.  Tied observations give zero spacings; following Cheng &
 * Amin's suggestion (from memory) the term for a tie is replaced by
 * log f(x_(i)).  The result's method is then SP_FIT_METHOD_MPS ("MPS"). */
#include "fit_internal.h"

#include <float.h>
#include <math.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>

/* Grid for the profile: 37 points, log-spaced over nine decades of the
 * distance below min(x) (about 0.58 in s between points: fine enough to
 * separate a local maximum from the boundary, cheap enough for a
 * bootstrap that refits every replicate). */
#define GRID_N 37
#define GRID_LO 1e-6
#define GRID_HI 1e3

typedef struct {
  const sp_family *w2;
  const double *x;
  size_t n;
  double xmin, spread;
  int fixed2[SP_FAMILY_MAX_PARAMS];
  double theta2[SP_FAMILY_MAX_PARAMS]; /* fixed values; the last estimate */
  double keep2[SP_FAMILY_MAX_PARAMS];
  double *y;
  int ok;
} prof;

/* Profile log-likelihood at gamma = xmin - exp(s) * spread; -INFINITY when
 * the inner fit fails. */
static double profile(prof *P, double s)
{
  double gamma = P->xmin - exp(s) * P->spread;
  for (size_t i = 0; i < P->n; i++) P->y[i] = P->x[i] - gamma;
  memcpy(P->theta2, P->keep2, sizeof P->keep2);
  sp_error e;
  sp_error_clear(&e);
  if (P->w2->fit_mle(P->y, P->n, P->fixed2, P->theta2, &e) != SP_OK) return -INFINITY;
  double nll = sp_fit_negloglik(P->w2, P->theta2, P->y, P->n, NULL);
  return isfinite(nll) ? -nll : -INFINITY;
}

static double brent_f(double s, void *p)
{
  double v = profile(p, s);
  /* GSL's Brent minimiser needs finite values. */
  return isfinite(v) ? -v : 1e300;
}

double sp_fit_mps_negobj(const sp_family *fam, const double *theta,
                         const double *sorted, size_t n, void *ctx)
{
  (void)ctx;
  sp_error e;
  e.code = SP_OK;
  if (fam->check(theta, &e) != SP_OK) return INFINITY;
  double s = 0.0, Pprev = 0.0, Qprev = 1.0;
  for (size_t i = 0; i <= n; i++) {
    double P = i < n ? fam->cdf_P(theta, sorted[i]) : 1.0;
    double Q = i < n ? fam->cdf_Q(theta, sorted[i]) : 0.0;
    /* Difference on the side where it is accurate. */
    double d = P < 0.5 ? P - Pprev : Qprev - Q;
    if (i > 0 && i < n && sorted[i] == sorted[i - 1]) {
      d = exp(fam->logpdf(theta, sorted[i]));
    }
    if (!(d > 0)) return INFINITY;
    s += log(d);
    Pprev = P;
    Qprev = Q;
  }
  return -s;
}

sp_status sp_fit_weibull3(const sp_family *fam, const double *x, size_t n,
                          const int *fixed, double *theta, sp_fit_mle_info *info,
                          sp_fit_ws *w, sp_error *err)
{
  const sp_family *w2 = sp_family_find("weibull");
  if (!w2 || !w2->fit_mle || !w2->fit_start)
    return sp_fail(err, SP_EUSAGE, "%s: needs the weibull family's solver", fam->name);
  long loc = -1;
  int map[SP_FAMILY_MAX_PARAMS];
  for (size_t p = 0; p < fam->nparam; p++) {
    map[p] = -1;
    if (fam->param_kinds[p] == SP_PARAM_BELOW_DATA) {
      loc = (long)p;
      continue;
    }
    map[p] = sp_family_param_index(w2, fam->param_names[p]);
    if (map[p] < 0)
      return sp_fail(err, SP_EUSAGE, "%s: parameter '%s' has no weibull counterpart",
                     fam->name, fam->param_names[p]);
  }
  if (loc < 0 || fam->nparam != w2->nparam + 1)
    return sp_fail(err, SP_EUSAGE, "%s: expected weibull's parameters and a threshold",
                   fam->name);

  prof P;
  memset(&P, 0, sizeof P);
  P.w2 = w2;
  P.x = x;
  P.n = n;
  P.y = w->work;
  P.xmin = INFINITY;
  double xmax = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    if (x[i] < P.xmin) P.xmin = x[i];
    if (x[i] > xmax) xmax = x[i];
  }
  P.spread = xmax - P.xmin;
  if (!(P.spread > 0)) P.spread = fabs(P.xmin) > 0 ? fabs(P.xmin) : 1.0;
  for (size_t p = 0; p < fam->nparam; p++)
    if (map[p] >= 0) {
      P.fixed2[map[p]] = fixed[p];
      P.keep2[map[p]] = theta[p];
    }
  info->iterations = 0;
  info->note[0] = '\0';

  /* A given threshold: a plain 2-parameter fit of x - gamma. */
  if (fixed[loc]) {
    double gamma = theta[loc];
    if (!(gamma < P.xmin))
      return sp_fail(err, SP_EDATA, "%s: the fixed location %g is not below the "
                     "smallest value %g", fam->name, gamma, P.xmin);
    double s = log((P.xmin - gamma) / P.spread);
    if (!isfinite(profile(&P, s)))
      return sp_fail(err, SP_ENUMERIC, "%s: the weibull fit of x - location failed",
                     fam->name);
    for (size_t p = 0; p < fam->nparam; p++)
      if (map[p] >= 0) theta[p] = P.theta2[map[p]];
    info->method = SP_FIT_METHOD_FAMILY;
    info->converged = 1;
    return SP_OK;
  }

  double gs[GRID_N], gl[GRID_N];
  const double s_lo = log(GRID_LO), s_hi = log(GRID_HI);
  for (int i = 0; i < GRID_N; i++) {
    gs[i] = s_lo + (s_hi - s_lo) * i / (GRID_N - 1);
    gl[i] = profile(&P, gs[i]);
  }
  info->iterations = GRID_N;
  int best = -1;
  for (int i = 1; i < GRID_N - 1; i++) {
    if (!isfinite(gl[i])) continue;
    if (gl[i] >= gl[i - 1] && gl[i] >= gl[i + 1] && (best < 0 || gl[i] > gl[best]))
      best = i;
  }
  int top = 0;
  for (int i = 1; i < GRID_N; i++)
    if (gl[i] > gl[top]) top = i;

  if (best >= 0) {
    double s_best = gs[best], l_best = gl[best];
    gsl_min_fminimizer *m = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
    if (!m) return sp_fit_fail_nomem(err);
    gsl_function F = {brent_f, &P};
    int converged = 0;
    if (gl[best] > gl[best - 1] && gl[best] > gl[best + 1] &&
        gsl_min_fminimizer_set_with_values(m, &F, gs[best], -gl[best], gs[best - 1],
                                           -gl[best - 1], gs[best + 1],
                                           -gl[best + 1]) == GSL_SUCCESS) {
      /* Brent converges superlinearly; 200 iterations is far beyond what
       * a bracket from the grid needs (about 40 at golden-section speed). */
      for (int it = 0; it < 200; it++) {
        info->iterations++;
        if (gsl_min_fminimizer_iterate(m) != GSL_SUCCESS) break;
        double a = gsl_min_fminimizer_x_lower(m), b = gsl_min_fminimizer_x_upper(m);
        /* GSL's Brent step cannot resolve below about 2 sqrt(eps) |s|
         * (its internal tolerance), so the bracket is asked to 1e-7 (1 +
         * |s|) in s: a relative change of that size in the distance of the
         * threshold below min(x), inside the 1e-5 agreement the tests ask
         * for. */
        if (gsl_min_test_interval(a, b, 1e-7, 1e-7) == GSL_SUCCESS) {
          converged = 1;
          break;
        }
      }
      double sm = gsl_min_fminimizer_x_minimum(m);
      double lm = -gsl_min_fminimizer_f_minimum(m);
      if (lm >= l_best) s_best = sm;
    } else {
      /* A flat top on the grid: the grid point is kept. */
      converged = 0;
      snprintf(info->note, sizeof info->note,
               "profile likelihood flat near its maximum; threshold kept at a grid point");
    }
    gsl_min_fminimizer_free(m);
    profile(&P, s_best);
    theta[loc] = P.xmin - exp(s_best) * P.spread;
    for (size_t p = 0; p < fam->nparam; p++)
      if (map[p] >= 0) theta[p] = P.theta2[map[p]];
    info->method = SP_FIT_METHOD_PROFILE;
    info->converged = converged;
    if (top == 0)
      snprintf(info->note, sizeof info->note,
               "local maximum of the profile likelihood; the likelihood is unbounded as "
               "the location approaches min(x)");
    return SP_OK;
  }

  if (top == GRID_N - 1) {
    /* The profile still rises at 1e3 spreads below the data: the sample
     * looks like a smallest-extreme-value sample (the weibull3 limit as
     * the threshold goes to -infinity with the shape). */
    profile(&P, gs[top]);
    theta[loc] = P.xmin - exp(gs[top]) * P.spread;
    for (size_t p = 0; p < fam->nparam; p++)
      if (map[p] >= 0) theta[p] = P.theta2[map[p]];
    info->method = SP_FIT_METHOD_PROFILE;
    info->converged = 0;
    snprintf(info->note, sizeof info->note,
             "the profile likelihood increases without an interior maximum as the location "
             "goes to -infinity; estimate at the search limit");
    return SP_OK;
  }

  /* No interior maximum, the likelihood rising towards min(x): MPS. */
  memcpy(w->sorted, x, n * sizeof *x);
  sp_fit_sort(w->sorted, n);
  /* Start the spacings fit with the threshold 5% of the data spread below
   * min(x): inside the region where the likelihood rose towards min(x),
   * and far enough from it for the 2-parameter fit to be regular. */
  double s0 = log(0.05);
  if (!isfinite(profile(&P, s0)))
    return sp_fail(err, SP_ENUMERIC, "%s: no starting point for the spacings fit", fam->name);
  theta[loc] = P.xmin - exp(s0) * P.spread;
  for (size_t p = 0; p < fam->nparam; p++)
    if (map[p] >= 0) theta[p] = P.theta2[map[p]];
  sp_fit_mle_info mi;
  memset(&mi, 0, sizeof mi);
  sp_status st = sp_fit_simplex(fam, w->sorted, n, fixed, theta, sp_fit_mps_negobj, NULL,
                                w, &mi, err);
  if (st != SP_OK) return st;
  info->method = SP_FIT_METHOD_MPS;
  info->converged = mi.converged;
  info->iterations += mi.iterations;
  snprintf(info->note, sizeof info->note,
           "no interior maximum of the likelihood (it grows without bound as the location "
           "approaches min(x)): maximum product of spacings, Cheng & Amin 1983%s%.100s",
           mi.note[0] ? "; " : "", mi.note);
  return SP_OK;
}
