/* scatterprop fit: goodness-of-fit statistics of a fitted family, their
 * published p-value approximations, and the parametric bootstrap.
 *
 * Parametric bootstrap with re-estimation in every replicate: Stute, W.,
 * Gonzalez Manteiga, W. & Presedo Quindimil, M. (1993). Bootstrap based
 * goodness-of-fit-tests. Metrika 40, 243-256.  Replicate b is drawn from
 * the fitted distribution with the block stream (seed, b, candidate index)
 * and refitted exactly as the data were (same family, same fixed
 * parameters, same estimator); its statistics use its own estimate.  The
 * p-value is (1 + #{T_b >= T}) / (B + 1) (Davison, A.C. & Hinkley, D.V.
 * (1997). Bootstrap Methods and their Application. Cambridge University
 * Press, eq. 4.11).  The counts are integers summed over threads, so the
 * p-values do not depend on the number of threads or on scheduling. */
#include "fit_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <omp.h>

#include "scatterprop/gof.h"
#include "scatterprop/rng.h"

void sp_fit_gof_sorted(const sp_family *fam, const double *theta,
                       const double *sorted, size_t n, double *P, double *Q,
                       sp_fit_gof *gof)
{
  for (size_t i = 0; i < n; i++) {
    P[i] = fam->cdf_P(theta, sorted[i]);
    Q[i] = fam->cdf_Q(theta, sorted[i]);
  }
  gof[SP_FIT_GOF_A2].stat = sp_gof_ad_stat(P, Q, n);
  gof[SP_FIT_GOF_D].stat = sp_gof_ks_stat(P, n, NULL, NULL);
  gof[SP_FIT_GOF_W2].stat = sp_gof_cvm_stat(P, n);
}

sp_status sp_fit_gof_stats(const sp_family *fam, const double *theta,
                           const double *x, size_t n, sp_fit_gof *gof,
                           sp_error *err)
{
  double *s = malloc(3 * (n ? n : 1) * sizeof *s);
  if (!s) return sp_fit_fail_nomem(err);
  memcpy(s, x, n * sizeof *x);
  sp_fit_sort(s, n);
  sp_fit_gof_sorted(fam, theta, s, n, s + n, s + 2 * n, gof);
  free(s);
  return SP_OK;
}

/* Published p-value approximations for estimated parameters, by family
 * name: the gof module's cases (D'Agostino & Stephens 1986; Stephens 1974,
 * 1977, 1979) and the family they apply to when every parameter was
 * estimated by maximum likelihood.  lognormal is the normal case on ln x
 * and weibull the extreme-value case on ln x: the statistics are
 * unchanged by the monotone transformation, because F(x) is the same
 * number either way.  The normal-case tables were made with the sample
 * standard deviation s (n - 1 denominator), so for normal and lognormal
 * the statistics entered in the tables are recomputed with sd scaled by
 * sqrt(n / (n - 1)) (s_param names that parameter). */
static const struct {
  const char *family;
  sp_gof_case gcase;
  const char *s_param;
} approx_table[] = {
  {"normal", SP_GOF_CASE_NORMAL, "sd"},
  {"lognormal", SP_GOF_CASE_NORMAL, "sdlog"},
  {"exponential", SP_GOF_CASE_EXPONENTIAL, NULL},
  {"weibull", SP_GOF_CASE_EXTREME_VALUE, NULL},
  {"gumbel_max", SP_GOF_CASE_EXTREME_VALUE, NULL},
  {"gumbel_min", SP_GOF_CASE_EXTREME_VALUE, NULL},
  {"logistic", SP_GOF_CASE_LOGISTIC, NULL},
};

static void set_p(sp_fit_gof *g, const sp_gof_pvalue *pv, const char *extra)
{
  g->p = pv->p;
  g->bound = pv->kind == SP_GOF_P_BELOW ? -1 : pv->kind == SP_GOF_P_ABOVE ? 1 : 0;
  snprintf(g->method, sizeof g->method, "%s%s", pv->method, extra);
}

int sp_fit_gof_approx(sp_fit_candidate *c, const double *sorted, size_t n, double *P,
                      double *Q)
{
  const sp_family *f = c->family;
  sp_gof_case gcase = SP_GOF_CASE_FULLY_SPECIFIED;
  const char *s_param = NULL;
  /* Below n = 5 the estimated-parameter formulas and tables do not hold.
   * Simulated here (scipy, 1e5 normal samples per n, A² with s and the
   * Table 4.9 formula): n = 3 rejects 0.0% at a nominal 5% (A² is bounded
   * for n = 3) and 12% at 10%; n = 4 rejects 4.7% at 5% but 0.12% at 1%;
   * n = 5 rejects 4.6% at 5% and 0.71% at 1%, n >= 6 within half a point.
   * There the bootstrap (exact up to simulation for these location-scale
   * cases) gives the p-values. */
  if (c->k > 0 && n < SP_FIT_APPROX_MIN_N) {
    for (int j = 0; j < SP_FIT_NGOF; j++)
      if (!isfinite(c->gof[j].p))
        snprintf(c->gof[j].method, sizeof c->gof[j].method,
                 "no published approximation below n = %d (--pvalues auto or bootstrap gives one)",
                 SP_FIT_APPROX_MIN_N);
    return 0;
  }
  if (c->k > 0) {
    if (c->k != f->nparam) return 0;
    size_t i = 0, m = sizeof approx_table / sizeof approx_table[0];
    while (i < m && strcmp(approx_table[i].family, f->name) != 0) i++;
    if (i == m) return 0;
    gcase = approx_table[i].gcase;
    s_param = approx_table[i].s_param;
  }
  sp_fit_gof g[SP_FIT_NGOF];
  memcpy(g, c->gof, sizeof g);
  const char *extra = "";
  if (s_param) {
    int j = sp_family_param_index(f, s_param);
    if (j < 0 || n < 2) return 0;
    double th[SP_FAMILY_MAX_PARAMS];
    memcpy(th, c->theta, sizeof th);
    th[j] *= sqrt((double)n / (double)(n - 1));
    sp_fit_gof_sorted(f, th, sorted, n, P, Q, g);
    extra = "; statistic recomputed with s (n - 1 denominator)";
  }
  sp_gof_pvalue pv;
  sp_error e;
  int got = 0;
  e.code = SP_OK;
  if (sp_gof_ad_pvalue(g[SP_FIT_GOF_A2].stat, n, gcase, &pv, &e) == SP_OK &&
      pv.kind != SP_GOF_P_NONE) {
    set_p(&c->gof[SP_FIT_GOF_A2], &pv, extra);
    got++;
  }
  if (sp_gof_ks_pvalue(g[SP_FIT_GOF_D].stat, n, gcase, &pv, &e) == SP_OK &&
      pv.kind != SP_GOF_P_NONE) {
    set_p(&c->gof[SP_FIT_GOF_D], &pv, extra);
    got++;
  }
  if (sp_gof_cvm_pvalue(g[SP_FIT_GOF_W2].stat, n, gcase, &pv, &e) == SP_OK &&
      pv.kind != SP_GOF_P_NONE) {
    set_p(&c->gof[SP_FIT_GOF_W2], &pv, extra);
    got++;
  }
  return got;
}

sp_status sp_fit_bootstrap(sp_fit_candidate *c, size_t n, size_t B, uint64_t seed,
                           uint32_t index, int threads, double *stats,
                           sp_error *err)
{
  if (B == 0) return sp_fail(err, SP_EUSAGE, "bootstrap: B must be at least 1");
  if (c->status != SP_FIT_OK || !c->family->sample)
    return sp_fail(err, SP_EUSAGE, "bootstrap: %s is not a fitted candidate",
                   c->family->name);
  if (n < 2) return sp_fail(err, SP_EUSAGE, "bootstrap: n must be at least 2");
  int nt = threads > 0 ? threads : omp_get_max_threads();
  if (nt < 1) nt = 1;
  if ((size_t)nt > B) nt = (int)B;
  sp_fit_ws **ws = calloc((size_t)nt, sizeof *ws);
  if (!ws) return sp_fit_fail_nomem(err);
  int ok = 1;
  for (int t = 0; t < nt && ok; t++) ok = (ws[t] = sp_fit_ws_alloc(n)) != NULL;
  if (!ok) {
    for (int t = 0; t < nt; t++) sp_fit_ws_free(ws[t]);
    free(ws);
    return sp_fit_fail_nomem(err);
  }
  const sp_family *fam = c->family;
  double T[SP_FIT_NGOF];
  for (int j = 0; j < SP_FIT_NGOF; j++) T[j] = c->gof[j].stat;
  unsigned long long ge0 = 0, ge1 = 0, ge2 = 0, nfail = 0;
  long long nb = (long long)B;
#pragma omp parallel for num_threads(nt) schedule(dynamic, 4) \
    reduction(+ : ge0, ge1, ge2, nfail)
  for (long long b = 0; b < nb; b++) {
    sp_fit_ws *w = ws[omp_get_thread_num()];
    sp_pcg64 g;
    sp_rng_block_stream(&g, seed, (uint64_t)b, index);
    fam->sample(c->theta, &g, w->sample, n);
    double th[SP_FAMILY_MAX_PARAMS];
    memcpy(th, c->theta, sizeof th);
    sp_fit_mle_info info;
    sp_error e;
    e.code = SP_OK;
    sp_status st = sp_fit_mle_ws(fam, w->sample, n, c->fixed, th, &info, w, &e);
    if (st != SP_OK) {
      nfail++;
      if (stats)
        for (int j = 0; j < SP_FIT_NGOF; j++) stats[3 * b + j] = NAN;
      continue;
    }
    memcpy(w->scaled, w->sample, n * sizeof *w->sample);
    sp_fit_sort(w->scaled, n);
    sp_fit_gof gb[SP_FIT_NGOF];
    sp_fit_gof_sorted(fam, th, w->scaled, n, w->P, w->Q, gb);
    ge0 += !(gb[0].stat < T[0]);
    ge1 += !(gb[1].stat < T[1]);
    ge2 += !(gb[2].stat < T[2]);
    if (stats)
      for (int j = 0; j < SP_FIT_NGOF; j++) stats[3 * b + j] = gb[j].stat;
  }
  for (int t = 0; t < nt; t++) sp_fit_ws_free(ws[t]);
  free(ws);
  unsigned long long ge[SP_FIT_NGOF] = {ge0, ge1, ge2};
  size_t bok = B - (size_t)nfail;
  c->bootstrap_failed = (size_t)nfail;
  for (int j = 0; j < SP_FIT_NGOF; j++) {
    if (!isfinite(T[j])) {
      /* An estimate on the data boundary (uniform's min and max,
       * exponential2's location) puts F = 0 or 1 at an observation, so A^2
       * is infinite for the data and for every replicate alike: no
       * p-value can be had from it. */
      c->gof[j].p = NAN;
      snprintf(c->gof[j].method, sizeof c->gof[j].method,
               "not available: the statistic is infinite (the estimate puts an "
               "observation where F is 0 or 1)");
      continue;
    }
    c->gof[j].p = (1.0 + (double)ge[j]) / ((double)bok + 1.0);
    c->gof[j].bound = 0;
    snprintf(c->gof[j].method, sizeof c->gof[j].method,
             "parametric bootstrap, %zu refitted replicates, seed %llu", bok,
             (unsigned long long)seed);
  }
  return SP_OK;
}
