/* scatterprop fit: the general minimiser.
 *
 * Nelder, J.A. & Mead, R. (1965). A simplex method for function
 * minimization. The Computer Journal 7(4), 308-313, in GSL's
 * gsl_multimin_fminimizer_nmsimplex2 (the O(n) per-iteration variant),
 * run on unconstrained transforms of the free parameters:
 *   SP_PARAM_REAL        theta = t
 *   SP_PARAM_POSITIVE    theta = exp(t)
 *   SP_PARAM_BELOW_DATA  theta = min(x) - exp(t) * spread
 *   SP_PARAM_ABOVE_DATA  theta = max(x) + exp(t) * spread
 * (spread = max(x) - min(x), or a fallback when the data are all equal),
 * so every trial point is inside the parameter space.  LIMIT parameters
 * are never free.
 *
 * The simplex is restarted once from its best vertex (Nelder-Mead can stop
 * on a collapsed simplex away from a minimum: McKinnon, K.I.M. (1998).
 * Convergence of the Nelder-Mead simplex method to a nonstationary point.
 * SIAM J. Optim. 9(1), 148-158), then polished by damped Newton steps on a
 * finite-difference gradient and Hessian in t (Dennis, J.E. & Schnabel,
 * R.B. (1983). Numerical Methods for Unconstrained Optimization and
 * Nonlinear Equations. Prentice-Hall, sections 5.6 and 6.3).  The result is
 * "converged" when the Newton decrement g' H^-1 g / 2 -- the predicted
 * further decrease of the objective -- is below 1e-12 * max(1, |f|), with
 * H positive definite: at that point the remaining relative parameter
 * error is of order sqrt(1e-12 |f| / n) per observation scale, far inside
 * the 1e-5 agreement the tests ask for. */
#include "fit_internal.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>

/* GSL's nmsimplex2 refuses non-finite function values (GSL_EBADFUNC), so
 * a trial point outside the parameter space or the support gets this
 * value, larger than any attainable -log-likelihood. */
#define FIT_PENALTY 1e300

/* Simplex stopping size in t units (log units for positive parameters,
 * multiples of the data spread for locations after the step scaling),
 * and the iteration cap per free parameter.  The Newton polish does the
 * final digits, so the simplex only has to land in the basin. */
#define FIT_NM_SIZE 1e-7
#define FIT_NM_ITER_PER_DIM 2000
#define FIT_NEWTON_MAX 30
#define FIT_DECREMENT_TOL 1e-12

sp_fit_ws *sp_fit_ws_alloc(size_t nmax)
{
  sp_fit_ws *w = calloc(1, sizeof *w);
  if (!w) return NULL;
  w->nmax = nmax;
  size_t m = nmax ? nmax : 1;
  w->scaled = malloc(m * sizeof *w->scaled);
  w->work = malloc((m + 1) * sizeof *w->work);
  w->sorted = malloc(m * sizeof *w->sorted);
  w->P = malloc(m * sizeof *w->P);
  w->Q = malloc(m * sizeof *w->Q);
  w->sample = malloc(m * sizeof *w->sample);
  if (!w->scaled || !w->work || !w->sorted || !w->P || !w->Q || !w->sample) {
    sp_fit_ws_free(w);
    return NULL;
  }
  return w;
}

void sp_fit_ws_free(sp_fit_ws *w)
{
  if (!w) return;
  for (size_t k = 0; k <= SP_FAMILY_MAX_PARAMS; k++) {
    if (w->nm[k]) gsl_multimin_fminimizer_free(w->nm[k]);
    if (w->t[k]) gsl_vector_free(w->t[k]);
    if (w->step[k]) gsl_vector_free(w->step[k]);
  }
  free(w->scaled);
  free(w->work);
  free(w->sorted);
  free(w->P);
  free(w->Q);
  free(w->sample);
  free(w);
}

static int ws_dim(sp_fit_ws *w, size_t k)
{
  if (w->nm[k]) return 1;
  w->nm[k] = gsl_multimin_fminimizer_alloc(gsl_multimin_fminimizer_nmsimplex2, k);
  w->t[k] = gsl_vector_alloc(k);
  w->step[k] = gsl_vector_alloc(k);
  return w->nm[k] && w->t[k] && w->step[k];
}

double sp_fit_negloglik(const sp_family *fam, const double *theta,
                        const double *x, size_t n, void *ctx)
{
  (void)ctx;
  sp_error e;
  e.code = SP_OK;
  if (fam->check(theta, &e) != SP_OK) return INFINITY;
  double s = 0.0;
  for (size_t i = 0; i < n; i++) s += fam->logpdf(theta, x[i]);
  if (!(s > -INFINITY) || isnan(s)) return INFINITY;
  return -s;
}

typedef struct {
  const sp_family *fam;
  const double *x;
  size_t n;
  sp_fit_objective obj;
  void *ctx;
  double base[SP_FAMILY_MAX_PARAMS];
  size_t idx[SP_FAMILY_MAX_PARAMS];
  size_t k;
  double xmin, xmax, spread;
  size_t evals;
} tctx;

static void t_to_theta(const tctx *c, const double *t, double *theta)
{
  memcpy(theta, c->base, c->fam->nparam * sizeof *theta);
  for (size_t j = 0; j < c->k; j++) {
    size_t p = c->idx[j];
    switch (c->fam->param_kinds[p]) {
    case SP_PARAM_POSITIVE: theta[p] = exp(t[j]); break;
    case SP_PARAM_BELOW_DATA: theta[p] = c->xmin - exp(t[j]) * c->spread; break;
    case SP_PARAM_ABOVE_DATA: theta[p] = c->xmax + exp(t[j]) * c->spread; break;
    default: theta[p] = t[j]; break;
    }
  }
}

/* The inverse transform; a start value on the wrong side of the data (or
 * not positive) is moved inside by a tenth of the spread. */
static void theta_to_t(const tctx *c, const double *theta, double *t)
{
  for (size_t j = 0; j < c->k; j++) {
    size_t p = c->idx[j];
    double v = theta[p];
    switch (c->fam->param_kinds[p]) {
    case SP_PARAM_POSITIVE:
      t[j] = (v > 0 && isfinite(v)) ? log(v) : 0.0;
      break;
    case SP_PARAM_BELOW_DATA: {
      double d = (c->xmin - v) / c->spread;
      t[j] = (d > 0 && isfinite(d)) ? log(d) : log(0.1);
      break;
    }
    case SP_PARAM_ABOVE_DATA: {
      double d = (v - c->xmax) / c->spread;
      t[j] = (d > 0 && isfinite(d)) ? log(d) : log(0.1);
      break;
    }
    default:
      t[j] = isfinite(v) ? v : 0.5 * (c->xmin + c->xmax);
      break;
    }
  }
}

static double f_t(const tctx *c, const double *t)
{
  double theta[SP_FAMILY_MAX_PARAMS];
  t_to_theta(c, t, theta);
  double v = c->obj(c->fam, theta, c->x, c->n, c->ctx);
  return isfinite(v) ? v : FIT_PENALTY;
}

static double f_gsl(const gsl_vector *v, void *p)
{
  tctx *c = p;
  double t[SP_FAMILY_MAX_PARAMS];
  for (size_t j = 0; j < c->k; j++) t[j] = gsl_vector_get(v, j);
  c->evals++;
  return f_t(c, t);
}

/* Typical magnitude of t_j, for finite-difference steps: the data spread
 * for an untransformed location, 1 for the log-transformed kinds. */
static double t_typical(const tctx *c, size_t j)
{
  sp_param_kind kind = c->fam->param_kinds[c->idx[j]];
  return kind == SP_PARAM_REAL ? c->spread : 1.0;
}

/* Finite-difference gradient (central, step eps^(1/3) * typ: the step that
 * balances truncation O(h^2) against rounding O(eps/h)) and Hessian
 * (central, step eps^(1/4) * typ: balances O(h^2) against O(eps/h^2)).
 * Steps are made exactly representable as (t + h) - t. */
static int fd_grad_hess(const tctx *c, const double *t, double f0, const double *typs, double *g,
                        double *H)
{
  size_t k = c->k;
  double h3[SP_FAMILY_MAX_PARAMS], h4[SP_FAMILY_MAX_PARAMS];
  double tp[SP_FAMILY_MAX_PARAMS];
  double fp[SP_FAMILY_MAX_PARAMS], fm[SP_FAMILY_MAX_PARAMS];
  const double e3 = cbrt(DBL_EPSILON), e4 = sqrt(sqrt(DBL_EPSILON));
  for (size_t j = 0; j < k; j++) {
    double typ = typs[j];
    double a = t[j] + e3 * typ;
    h3[j] = a - t[j];
    double b = t[j] + e4 * typ;
    h4[j] = b - t[j];
  }
  memcpy(tp, t, k * sizeof *t);
  for (size_t j = 0; j < k; j++) {
    tp[j] = t[j] + h3[j];
    double a = f_t(c, tp);
    tp[j] = t[j] - h3[j];
    double b = f_t(c, tp);
    tp[j] = t[j];
    if (a >= FIT_PENALTY || b >= FIT_PENALTY) return 0;
    g[j] = (a - b) / (2.0 * h3[j]);
    tp[j] = t[j] + h4[j];
    fp[j] = f_t(c, tp);
    tp[j] = t[j] - h4[j];
    fm[j] = f_t(c, tp);
    tp[j] = t[j];
    if (fp[j] >= FIT_PENALTY || fm[j] >= FIT_PENALTY) return 0;
    H[j * k + j] = (fp[j] - 2.0 * f0 + fm[j]) / (h4[j] * h4[j]);
  }
  for (size_t i = 0; i < k; i++) {
    for (size_t j = i + 1; j < k; j++) {
      double s[4];
      const int si[4] = {1, 1, -1, -1}, sj[4] = {1, -1, 1, -1};
      for (int q = 0; q < 4; q++) {
        tp[i] = t[i] + si[q] * h4[i];
        tp[j] = t[j] + sj[q] * h4[j];
        s[q] = f_t(c, tp);
        if (s[q] >= FIT_PENALTY) return 0;
      }
      tp[i] = t[i];
      tp[j] = t[j];
      double hij = (s[0] - s[1] - s[2] + s[3]) / (4.0 * h4[i] * h4[j]);
      H[i * k + j] = H[j * k + i] = hij;
    }
  }
  return 1;
}

static double f_coord(void *ctx, const double *t)
{
  double v = f_t(ctx, t);
  return v >= FIT_PENALTY ? INFINITY : v;
}

/* Newton polish; returns 1 if the decrement criterion was met.  The
 * difference steps start from the typical magnitudes (t_typical) and are
 * matched once, at the simplex's best point, to the curvature seen there
 * (sp_fit_fd_adapt): a location of 1e8 with a spread of 1e-2, or the log
 * of a scale whose likelihood varies over a billionth of it (a
 * log-logistic of shape 1e9), would otherwise get steps far wider than
 * the likelihood's peak. */
static int newton_polish(tctx *c, double *t, double *f, size_t *iters)
{
  size_t k = c->k;
  double g[SP_FAMILY_MAX_PARAMS], H[SP_FAMILY_MAX_PARAMS * SP_FAMILY_MAX_PARAMS];
  double d[SP_FAMILY_MAX_PARAMS], tn[SP_FAMILY_MAX_PARAMS];
  double typ[SP_FAMILY_MAX_PARAMS];
  const double e4 = sqrt(sqrt(DBL_EPSILON));
  memcpy(tn, t, k * sizeof *t);
  for (size_t j = 0; j < k; j++) {
    typ[j] = fmax(fabs(t[j]), t_typical(c, j));
    double h = sp_fit_fd_adapt(f_coord, c, tn, j, *f, e4 * typ[j], INFINITY, c->n);
    if (isfinite(h)) typ[j] = h / e4;
  }
  for (int it = 0; it < FIT_NEWTON_MAX; it++) {
    (*iters)++;
    if (!fd_grad_hess(c, t, *f, typ, g, H)) return 0;
    gsl_matrix_view Hm = gsl_matrix_view_array(H, k, k);
    gsl_vector_view gv = gsl_vector_view_array(g, k);
    gsl_vector_view dv = gsl_vector_view_array(d, k);
    if (gsl_linalg_cholesky_decomp1(&Hm.matrix) != GSL_SUCCESS) return 0;
    if (gsl_linalg_cholesky_solve(&Hm.matrix, &gv.vector, &dv.vector) != GSL_SUCCESS)
      return 0;
    double dec = 0.0;
    for (size_t j = 0; j < k; j++) dec += g[j] * d[j];
    double tol = FIT_DECREMENT_TOL * fmax(1.0, fabs(*f));
    if (!(dec >= 0.0)) return 0;
    if (0.5 * dec <= tol) {
      /* One more full step: inside the quadratic region it squares the
       * remaining error, so the estimate ends at the rounding floor rather
       * than at the tolerance.  The predicted decrease is below tol, which
       * is the level of the objective's rounding noise (a sum of n terms),
       * so the step is taken unless it raises f by more than tol. */
      for (size_t j = 0; j < k; j++) tn[j] = t[j] - d[j];
      double fn = f_t(c, tn);
      if (fn <= *f + tol) {
        memcpy(t, tn, k * sizeof *t);
        *f = fn;
      }
      return 1;
    }
    /* Backtracking by halving; 30 halvings shrink the step to 1e-9 of
     * the Newton step, past which a descent direction that still fails
     * is rounding noise. */
    double s = 1.0;
    int moved = 0;
    for (int ls = 0; ls < 30; ls++) {
      for (size_t j = 0; j < k; j++) tn[j] = t[j] - s * d[j];
      double fn = f_t(c, tn);
      if (fn < *f) {
        memcpy(t, tn, k * sizeof *t);
        *f = fn;
        moved = 1;
        break;
      }
      s *= 0.5;
    }
    /* No decrease along a descent direction: the objective's rounding
     * floor is reached, and the decrement measures mostly noise; it is
     * accepted as converged within a thousand times the tolerance: a
     * predicted gain of at most 1e-9 |f|, i.e. a distance of at most
     * sqrt(2e-9 |f|) standard errors from the optimum (0.0014 se at
     * |f| = 1000). */
    if (!moved) return 0.5 * dec <= 1e3 * tol;
  }
  return 0;
}

sp_status sp_fit_simplex(const sp_family *fam, const double *x, size_t n,
                         const int *fixed, double *theta, sp_fit_objective obj,
                         void *ctx, sp_fit_ws *w, sp_fit_mle_info *info,
                         sp_error *err)
{
  tctx c;
  memset(&c, 0, sizeof c);
  c.fam = fam;
  c.x = x;
  c.n = n;
  c.obj = obj;
  c.ctx = ctx;
  memcpy(c.base, theta, fam->nparam * sizeof *theta);
  c.xmin = INFINITY;
  c.xmax = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    if (x[i] < c.xmin) c.xmin = x[i];
    if (x[i] > c.xmax) c.xmax = x[i];
  }
  c.spread = c.xmax - c.xmin;
  if (!(c.spread > 0)) c.spread = fabs(c.xmin) > 0 ? fabs(c.xmin) : 1.0;
  for (size_t p = 0; p < fam->nparam; p++)
    if (!(fixed && fixed[p])) c.idx[c.k++] = p;

  info->method = SP_FIT_METHOD_SIMPLEX;
  info->converged = 0;
  info->iterations = 0;
  if (c.k == 0) {
    info->converged = 1;
    return SP_OK;
  }
  if (!ws_dim(w, c.k)) return sp_fit_fail_nomem(err);

  double t[SP_FAMILY_MAX_PARAMS];
  theta_to_t(&c, theta, t);
  double f = f_t(&c, t);
  if (f >= FIT_PENALTY)
    return sp_fail(err, SP_ENUMERIC,
                   "%s: the likelihood is zero at the starting values", fam->name);

  gsl_multimin_function fn = {f_gsl, c.k, &c};
  gsl_multimin_fminimizer *m = w->nm[c.k];
  int nm_conv = 0;
  for (int round = 0; round < 2; round++) {
    for (size_t j = 0; j < c.k; j++) {
      /* written before on every path (the loop bounds are not followed):
       * NOLINTNEXTLINE(clang-analyzer-core.CallAndMessage) */
      gsl_vector_set(w->t[c.k], j, t[j]);
      /* Initial steps: a tenth of the data spread for a location, 0.2
       * (about 20%) on the log scale; the restart uses a tenth of that. */
      double s = c.fam->param_kinds[c.idx[j]] == SP_PARAM_REAL ? 0.1 * c.spread : 0.2;
      gsl_vector_set(w->step[c.k], j, round == 0 ? s : 0.1 * s);
    }
    int gs = gsl_multimin_fminimizer_set(m, &fn, w->t[c.k], w->step[c.k]);
    if (gs != GSL_SUCCESS)
      return sp_fail(err, SP_ENUMERIC, "%s: minimizer setup failed: %s", fam->name,
                     gsl_strerror(gs));
    nm_conv = 0;
    for (size_t it = 0; it < FIT_NM_ITER_PER_DIM * c.k; it++) {
      info->iterations++;
      gs = gsl_multimin_fminimizer_iterate(m);
      if (gs != GSL_SUCCESS) break;
      double size = gsl_multimin_fminimizer_size(m);
      if (gsl_multimin_test_size(size, FIT_NM_SIZE) == GSL_SUCCESS) {
        nm_conv = 1;
        break;
      }
    }
    const gsl_vector *best = gsl_multimin_fminimizer_x(m);
    double fb = gsl_multimin_fminimizer_minimum(m);
    if (fb <= f) {
      for (size_t j = 0; j < c.k; j++) t[j] = gsl_vector_get(best, j);
      f = fb;
    }
  }
  int newton_ok = newton_polish(&c, t, &f, &info->iterations);
  t_to_theta(&c, t, theta);
  info->converged = newton_ok;
  if (!newton_ok)
    snprintf(info->note, sizeof info->note, "%s",
             nm_conv ? "simplex converged but the Newton polish could not confirm a "
                       "minimum (Hessian not positive definite)"
                     : "simplex did not converge within its iteration limit");
  return SP_OK;
}
