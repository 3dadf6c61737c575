/* scatterprop fit: covariance from the observed information.
 *
 * The covariance of the maximum-likelihood estimate is estimated by the
 * inverse of the observed information, the Hessian of -logL at the
 * estimate in the natural parameters (Efron, B. & Hinkley, D.V. (1978).
 * Assessing the accuracy of the maximum likelihood estimator: observed
 * versus expected Fisher information. Biometrika 65(3), 457-483).
 *
 * The Hessian is taken by central differences:
 *   H_ii = (f(t+h_i) - 2 f(t) + f(t-h_i)) / h_i^2
 *   H_ij = (f(++) - f(+-) - f(-+) + f(--)) / (4 h_i h_j).
 * Step size: with L_i the length over which f changes curvature in
 * parameter i, the truncation error of the second difference is of order
 * (h/L)^2 and the rounding error of order eps * |f| / (h^2 f''), so the
 * total relative error is minimised near h = eps^(1/4) * L, giving about
 * eps^(1/2) ~ 1e-8 relative accuracy (Gill, P.E., Murray, W. & Wright,
 * M.H. (1981). Practical Optimization. Academic Press, section 8.6).
 * For a scale or shape parameter L is its own magnitude, so
 * h_i = eps^(1/4) * max(|theta_i|, typical_i) with typical_i the data's
 * standard deviation.  A location's magnitude depends only on where the
 * measurement scale puts its origin (a diameter of 1000.002 mm), not on
 * the likelihood's curvature, so locations use h_i = eps^(1/4) * typical_i
 * alone; a threshold below (or above) the data is also kept at most half
 * its distance from the nearest observation so that every trial point
 * stays inside the support.  A step that the curvature seen at it shows
 * to be far from its best size is then changed (sp_fit_fd_adapt below).
 * Each step is made exactly representable by h = (theta + h) - theta.
 *
 * The matrix is inverted by Cholesky (GSL gsl_linalg_cholesky_decomp1 and
 * _invert); failure of the decomposition means the observed information is
 * not positive definite and the covariance is reported unavailable. */
#include "fit_internal.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>

typedef struct {
  const sp_family *fam;
  const double *x;
  size_t n;
  sp_fit_objective obj;
} hctx;

static double hf(const hctx *h, const double *theta)
{
  return h->obj(h->fam, theta, h->x, h->n, NULL);
}

static double hf_coord(void *ctx, const double *theta)
{
  return hf(ctx, theta);
}

/* The step rule above assumes that a parameter's magnitude (or the data's
 * spread, for a location) is the length over which -logL changes
 * curvature.  That fails at the edges: a shape of 0.3 fitted to data
 * whose sd is 1e4 gets a step larger than the shape, and the scale of a
 * Weibull with shape 1e9 varies the likelihood over scale/shape, a
 * billionth of its magnitude.  So each step is then matched to the
 * curvature actually seen.  With L the curvature length of a sum of n
 * terms, L^2 ~ n / f'', and d = f'' h^2 / 2 the second difference, the
 * truncation error of the second difference is about (h/L)^2/12 = d/(6n)
 * relative, the rounding error 4 eps |f| / (f'' h^2) = 2 eps |f| / d;
 * their sum is smallest at d* = sqrt(12 n eps |f|), where the relative
 * error is 2 sqrt(eps |f| / (3n)) (about 1e-8 for |f|/n of order one).
 * A step within a factor 10 of that (d within a factor 100) is kept as it
 * is; one that has to change is brought to d within a factor 2 of d*.  The quadratic model moves
 * the step at most 64 times per trial, since far from the peak -logL is not quadratic; growth
 * without a visible difference stops after 8^20 = 1e18 times the first step (a parameter the
 * likelihood does not depend on), and the loop after 64 trials. */
double sp_fit_fd_adapt(sp_fit_coord_fn f, void *ctx, double *v, size_t j, double f0, double h,
                       double hmax, size_t n)
{
  const double target = sqrt(12.0 * (double)n * DBL_EPSILON * fmax(fabs(f0), 1.0));
  const double v0 = v[j];
  const double hmin = 16.0 * DBL_EPSILON * fmax(fabs(v0), DBL_MIN);
  int grown = 0;
  /* the first step is kept if d is within a factor 100 of d*; a step
   * that had to be changed is taken to within a factor 2 of it */
  double band = 1e2;
  if (!(h <= hmax)) {
    h = hmax;
    band = 2.0;
  }
  for (int it = 0; it < 64; it++) {
    if (it > 0) band = 2.0;
    if (!(h >= hmin)) return NAN;
    double hs = (v0 + h) - v0;
    v[j] = v0 + hs;
    double fp = f(ctx, v);
    v[j] = v0 - hs;
    double fm = f(ctx, v);
    v[j] = v0;
    if (!isfinite(fp) || !isfinite(fm)) {
      h /= 8.0;
      continue;
    }
    double d = 0.5 * (fp + fm) - f0;
    if (d > 0 && d * band >= target && d <= band * target) return h;
    if (d > 0) {
      /* the quadratic model, trusted within a factor 64 per trial (far
       * from the peak -logL is not quadratic) */
      double r = sqrt(target / d);
      double hn = fmin(h * fmin(fmax(r, 1.0 / 64.0), 64.0), hmax);
      if (hn == h) return h;
      h = hn;
      continue;
    }
    /* d <= 0: the difference is lost in rounding (or f is not convex
     * here, which the Cholesky factorisation will report) */
    if (h >= hmax || grown++ >= 20) return h;
    h = fmin(8.0 * h, hmax);
  }
  return h;
}

/* Standard error and Wald 95% interval of parameter p: on the log scale
 * for a positive parameter (so the interval stays positive), linear
 * otherwise. */
static void set_interval(sp_fit_candidate *c, size_t p, double var)
{
  const double z = gsl_cdf_ugaussian_Pinv(0.975);
  double se = sqrt(var), th = c->theta[p];
  c->se[p] = se;
  if (c->family->param_kinds[p] == SP_PARAM_POSITIVE) {
    c->ci_scale[p] = SP_FIT_CI_LOG;
    c->ci_lo[p] = th * exp(-z * se / th);
    c->ci_hi[p] = th * exp(z * se / th);
  } else {
    c->ci_scale[p] = SP_FIT_CI_LINEAR;
    c->ci_lo[p] = th - z * se;
    c->ci_hi[p] = th + z * se;
  }
}

/* Closed-form observed information at the maximum-likelihood estimate,
 * where it is simple (by family name; the finite-difference Hessian
 * otherwise):
 *  - normal (mean m, sd s) and lognormal (the same on ln x): at the MLE
 *    -d2 logL/dm2 = n/s^2, -d2 logL/ds2 = 2n/s^2 (with the other
 *    parameter free or fixed at its value), and the cross term is
 *    -2 sum(x - m)/s^3 = 0 when m is estimated, so Var(m) = s^2/n,
 *    Var(s) = s^2/(2n), Cov = 0;
 *  - exponential (rate r): -d2 logL/dr2 = n/r^2, Var(r) = r^2/n.
 * Returns 1 when it filled var[] (the diagonal; off-diagonal terms are 0),
 * 0 when the family has no closed form here. */
static int analytic_variance(const sp_fit_candidate *c, size_t n, double *var)
{
  const char *name = c->family->name;
  double dn = (double)n;
  if (strcmp(name, "normal") == 0 || strcmp(name, "lognormal") == 0) {
    double s = c->theta[1];
    var[0] = s * s / dn;
    var[1] = s * s / (2.0 * dn);
    /* With the mean fixed away from the data mean the cross term is not
     * zero and the sd's MLE differs: use the numerical Hessian then. */
    return !c->fixed[0];
  }
  if (strcmp(name, "exponential") == 0) {
    var[0] = c->theta[0] * c->theta[0] / dn;
    return 1;
  }
  return 0;
}

sp_status sp_fit_covariance(sp_fit_candidate *c, const double *x, size_t n,
                            sp_error *err)
{
  const sp_family *fam = c->family;
  size_t np = fam->nparam;
  size_t idx[SP_FAMILY_MAX_PARAMS], k = 0;
  c->cov_available = 0;
  memset(c->cov, 0, sizeof c->cov);
  for (size_t p = 0; p < SP_FAMILY_MAX_PARAMS; p++) {
    c->se[p] = c->ci_lo[p] = c->ci_hi[p] = NAN;
    c->ci_scale[p] = SP_FIT_CI_NONE;
  }
  for (size_t p = 0; p < np; p++)
    if (!c->fixed[p]) idx[k++] = p;
  if (k == 0) {
    snprintf(c->cov_note, sizeof c->cov_note, "every parameter is fixed");
    return SP_OK;
  }

  double avar[SP_FAMILY_MAX_PARAMS];
  if (c->method == SP_FIT_METHOD_FAMILY && analytic_variance(c, n, avar)) {
    for (size_t i = 0; i < k; i++) {
      c->cov[idx[i]][idx[i]] = avar[idx[i]];
      set_interval(c, idx[i], avar[idx[i]]);
    }
    c->cov_available = 1;
    snprintf(c->cov_note, sizeof c->cov_note,
             "inverse observed information (closed form at the MLE)");
    return SP_OK;
  }

  double mean = 0.0, xmin = INFINITY, xmax = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    mean += x[i];
    if (x[i] < xmin) xmin = x[i];
    if (x[i] > xmax) xmax = x[i];
  }
  mean /= (double)n;
  double ss = 0.0;
  for (size_t i = 0; i < n; i++) ss += (x[i] - mean) * (x[i] - mean);
  double sd = sqrt(ss / (double)n);
  if (!(sd > 0)) sd = fabs(mean) > 0 ? fabs(mean) : 1.0;

  hctx h = {fam, x, n, sp_fit_negloglik};
  double *sorted = NULL;
  if (c->method == SP_FIT_METHOD_MPS) {
    /* The MPS estimate is not a stationary point of logL; its spacings
     * objective is, and shares the information asymptotically (Cheng &
     * Amin 1983, section 4), so its Hessian is used instead. */
    sorted = malloc(n * sizeof *sorted);
    if (!sorted) return sp_fit_fail_nomem(err);
    memcpy(sorted, x, n * sizeof *x);
    sp_fit_sort(sorted, n);
    h.x = sorted;
    h.obj = sp_fit_mps_negobj;
  }

  const double e4 = sqrt(sqrt(DBL_EPSILON));
  double step[SP_FAMILY_MAX_PARAMS];
  for (size_t j = 0; j < k; j++) {
    size_t p = idx[j];
    double th = c->theta[p], s;
    switch (fam->param_kinds[p]) {
    case SP_PARAM_POSITIVE:
      s = e4 * fmax(fabs(th), sd);
      break;
    case SP_PARAM_BELOW_DATA:
    case SP_PARAM_ABOVE_DATA: {
      double gap = fam->param_kinds[p] == SP_PARAM_BELOW_DATA ? xmin - th : th - xmax;
      if (!(gap > 0)) {
        snprintf(c->cov_note, sizeof c->cov_note,
                 "covariance unavailable: parameter '%s' is at the data boundary "
                 "(a non-regular maximum without observed information)",
                 fam->param_names[p]);
        free(sorted);
        return SP_OK;
      }
      s = fmin(e4 * sd, 0.5 * gap);
      break;
    }
    default:
      s = e4 * sd;
      break;
    }
    step[j] = s;
  }

  double f0 = hf(&h, c->theta);
  if (isfinite(f0)) {
    double v[SP_FAMILY_MAX_PARAMS];
    memcpy(v, c->theta, np * sizeof *v);
    for (size_t j = 0; j < k; j++) {
      size_t p = idx[j];
      double th = c->theta[p], hmax = INFINITY;
      if (fam->param_kinds[p] == SP_PARAM_POSITIVE)
        hmax = 0.5 * th;
      else if (fam->param_kinds[p] == SP_PARAM_BELOW_DATA)
        hmax = 0.5 * (xmin - th);
      else if (fam->param_kinds[p] == SP_PARAM_ABOVE_DATA)
        hmax = 0.5 * (th - xmax);
      double s = sp_fit_fd_adapt(hf_coord, &h, v, p, f0, step[j], hmax, n);
      if (!isfinite(s)) {
        f0 = NAN;
        break;
      }
      double a = th + s;
      step[j] = a - th;
    }
  }
  /* A variance is of the order of step^2 divided by the curvature of
   * -logL in step units (between about 1 and n), so step^2 must lie inside
   * the double range with a margin of 1/epsilon (2^52) at each end (the
   * covariances are then bounded by the geometric means).  Data near 1e300
   * or 1e-300 give parameters whose variances (1e600, 1e-600) no double
   * holds: the covariance is then unavailable for that reason, said
   * plainly, instead of an overflowed Hessian read as "not positive
   * definite" or a variance underflowed to 0. */
  if (isfinite(f0)) {
    for (size_t i = 0; i < k; i++) {
      double pr = step[i] * step[i];
      if (pr > DBL_MIN / DBL_EPSILON && pr < DBL_MAX * DBL_EPSILON) continue;
      snprintf(c->cov_note, sizeof c->cov_note,
               "covariance unavailable: the variance of '%s', of the order of (%.1e)^2 at this "
               "magnitude of the data (%.3g to %.3g), is outside the range of a double; "
               "rescale the data (another unit) for standard errors",
               fam->param_names[idx[i]], step[i], xmin, xmax);
      free(sorted);
      return SP_OK;
    }
  }
  double H[SP_FAMILY_MAX_PARAMS * SP_FAMILY_MAX_PARAMS];
  double tp[SP_FAMILY_MAX_PARAMS];
  int finite = isfinite(f0);
  memcpy(tp, c->theta, np * sizeof *tp);
  for (size_t i = 0; i < k && finite; i++) {
    size_t pi = idx[i];
    tp[pi] = c->theta[pi] + step[i];
    double fp = hf(&h, tp);
    tp[pi] = c->theta[pi] - step[i];
    double fm = hf(&h, tp);
    tp[pi] = c->theta[pi];
    finite = isfinite(fp) && isfinite(fm);
    H[i * k + i] = (fp - 2.0 * f0 + fm) / (step[i] * step[i]);
    for (size_t j = i + 1; j < k && finite; j++) {
      size_t pj = idx[j];
      const int si[4] = {1, 1, -1, -1}, sj[4] = {1, -1, 1, -1};
      double s[4];
      for (int q = 0; q < 4; q++) {
        tp[pi] = c->theta[pi] + si[q] * step[i];
        tp[pj] = c->theta[pj] + sj[q] * step[j];
        s[q] = hf(&h, tp);
        finite = finite && isfinite(s[q]);
      }
      tp[pi] = c->theta[pi];
      tp[pj] = c->theta[pj];
      H[i * k + j] = H[j * k + i] = (s[0] - s[1] - s[2] + s[3]) / (4.0 * step[i] * step[j]);
    }
  }
  free(sorted);
  if (!finite) {
    snprintf(c->cov_note, sizeof c->cov_note,
             "covariance unavailable: the likelihood is not finite near the estimate");
    return SP_OK;
  }
  gsl_matrix_view Hm = gsl_matrix_view_array(H, k, k);
  if (gsl_linalg_cholesky_decomp1(&Hm.matrix) != GSL_SUCCESS ||
      gsl_linalg_cholesky_invert(&Hm.matrix) != GSL_SUCCESS) {
    snprintf(c->cov_note, sizeof c->cov_note,
             "covariance unavailable: the observed information is not positive definite");
    return SP_OK;
  }
  /* Taken from one triangle so the matrix is exactly symmetric (the
   * record reader insists on it). */
  for (size_t i = 0; i < k; i++)
    for (size_t j = i; j < k; j++)
      c->cov[idx[i]][idx[j]] = c->cov[idx[j]][idx[i]] = H[i * k + j];
  for (size_t i = 0; i < k; i++) {
    size_t p = idx[i];
    double v = c->cov[p][p];
    if (!(v > 0) || !isfinite(v)) {
      snprintf(c->cov_note, sizeof c->cov_note,
               "covariance unavailable: non-positive variance for '%s'",
               fam->param_names[p]);
      memset(c->cov, 0, sizeof c->cov);
      return SP_OK;
    }
    set_interval(c, p, v);
  }
  c->cov_available = 1;
  snprintf(c->cov_note, sizeof c->cov_note, "%s",
           c->method == SP_FIT_METHOD_MPS
               ? "inverse Hessian of the spacings objective (central differences)"
               : "inverse observed information (central differences)");
  return SP_OK;
}
