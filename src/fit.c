/* scatterprop fit: options, estimation dispatch, the candidate loop,
 * information criteria, ranking and the choice of a family, per-lot fits.
 *
 * Information criteria with k free parameters and n observations:
 *   AIC  = 2k - 2 logL                     (Akaike, H. (1974). A new look at
 *          the statistical model identification. IEEE Trans. Automatic
 *          Control 19(6), 716-723)
 *   AICc = AIC + 2k(k+1)/(n-k-1)           (Hurvich, C.M. & Tsai, C.-L.
 *          (1989). Regression and time series model selection in small
 *          samples. Biometrika 76(2), 297-307); undefined when n-k-1 <= 0
 *   BIC  = k ln n - 2 logL                 (Schwarz, G. (1978). Estimating
 *          the dimension of a model. Ann. Statist. 6(2), 461-464). */
#include "fit_internal.h"

#include "scatterprop/stats.h"
#include "scatterprop/summary.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

sp_status sp_fit_fail_nomem(sp_error *err)
{
  return sp_fail(err, SP_ENOMEM, "fit: out of memory");
}

/* ---- names ------------------------------------------------------------ */

static const char *const select_names[] = {"aicc", "aic", "bic", "loglik"};
static const char *const pvalue_names[] = {"auto", "bootstrap", "approximation", "none"};

const char *sp_fit_select_name(sp_fit_select s)
{
  return (unsigned)s < 4 ? select_names[s] : "?";
}

sp_status sp_fit_select_parse(const char *text, sp_fit_select *out, sp_error *err)
{
  for (int i = 0; i < 4; i++)
    if (strcmp(text, select_names[i]) == 0) {
      *out = (sp_fit_select)i;
      return SP_OK;
    }
  return sp_fail(err, SP_EUSAGE,
                 "unknown selection criterion '%s' (use aicc, aic, bic or loglik)", text);
}

const char *sp_fit_pvalue_mode_name(sp_fit_pvalue_mode m)
{
  return (unsigned)m < 4 ? pvalue_names[m] : "?";
}

sp_status sp_fit_pvalue_mode_parse(const char *text, sp_fit_pvalue_mode *out,
                                   sp_error *err)
{
  for (int i = 0; i < 4; i++)
    if (strcmp(text, pvalue_names[i]) == 0) {
      *out = (sp_fit_pvalue_mode)i;
      return SP_OK;
    }
  return sp_fail(err, SP_EUSAGE,
                 "unknown p-value method '%s' (use auto, bootstrap, approximation or none)",
                 text);
}

const char *sp_fit_method_name(sp_fit_method m)
{
  switch (m) {
  case SP_FIT_METHOD_FAMILY: return "ML-family";
  case SP_FIT_METHOD_SIMPLEX: return "ML-simplex";
  case SP_FIT_METHOD_PROFILE: return "ML-profile";
  case SP_FIT_METHOD_MPS: return "MPS";
  default: return "fixed";
  }
}

const char *sp_fit_status_name(sp_fit_status s)
{
  switch (s) {
  case SP_FIT_OK: return "ok";
  case SP_FIT_SKIPPED: return "skipped";
  default: return "failed";
  }
}

static const char *criterion_label(sp_fit_select s)
{
  switch (s) {
  case SP_FIT_SELECT_AIC: return "AIC";
  case SP_FIT_SELECT_BIC: return "BIC";
  case SP_FIT_SELECT_LOGLIK: return "log-likelihood";
  default: return "AICc";
  }
}

/* ---- options ---------------------------------------------------------- */

void sp_fit_options_init(sp_fit_options *o)
{
  memset(o, 0, sizeof *o);
  o->select = SP_FIT_SELECT_AICC;
  o->alpha = 0.05;
  o->pvalue = SP_FIT_PVALUE_AUTO;
  o->bootstrap_B = 1000;
  o->seed = 1;
}

sp_status sp_fit_options_fix(sp_fit_options *o, const char *name, double value,
                             sp_error *err)
{
  if (!name || !name[0])
    return sp_fail(err, SP_EUSAGE, "fixed parameter: empty name");
  if (strlen(name) >= SP_FIT_NAME_MAX)
    return sp_fail(err, SP_EUSAGE, "fixed parameter: name '%.40s...' too long", name);
  if (!isfinite(value))
    return sp_fail(err, SP_EUSAGE, "fixed parameter %s: value must be finite", name);
  for (size_t i = 0; i < o->nfixed; i++)
    if (strcmp(o->fixed[i].name, name) == 0) {
      o->fixed[i].value = value;
      o->fixed[i].meta_line = 0;
      return SP_OK;
    }
  if (o->nfixed >= SP_FIT_MAX_FIXED)
    return sp_fail(err, SP_EUSAGE, "at most %d fixed parameters", SP_FIT_MAX_FIXED);
  sp_fit_fixed *f = &o->fixed[o->nfixed++];
  snprintf(f->name, sizeof f->name, "%s", name);
  f->value = value;
  f->meta_line = 0;
  return SP_OK;
}

sp_status sp_fit_options_fix_parse(sp_fit_options *o, const char *text, sp_error *err)
{
  const char *eq = strchr(text, '=');
  if (!eq || eq == text)
    return sp_fail(err, SP_EUSAGE, "fixed parameter '%s': expected NAME=VALUE", text);
  char name[SP_FIT_NAME_MAX];
  size_t len = (size_t)(eq - text);
  if (len >= sizeof name)
    return sp_fail(err, SP_EUSAGE, "fixed parameter '%s': name too long", text);
  memcpy(name, text, len);
  name[len] = '\0';
  double v;
  sp_error e;
  sp_error_clear(&e);
  if (sp_parse_double(eq + 1, '.', &v, &e) != SP_OK)
    return sp_fail(err, SP_EUSAGE, "fixed parameter %s: %s", name, e.msg);
  return sp_fit_options_fix(o, name, v, err);
}

/* ---- sorting and the robust scale ------------------------------------- */

static int cmp_double(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

void sp_fit_sort(double *x, size_t n)
{
  qsort(x, n, sizeof *x, cmp_double);
}

/* Scale equivariance, detected numerically.  The general minimiser works
 * better on data of order one, but only a family whose parameters map
 * under x -> x/c (locations and scales divide by c, rates multiply,
 * shapes stay) may be fitted on x/c and mapped back.  The family table
 * does not say which positive parameter is a scale, a rate or a shape, so
 * each assignment is tried (3^m for m positive parameters, at most 81) and
 * accepted when
 *   logpdf(M_c theta, c y) = logpdf(theta, y) - ln c
 * holds to 1e-9 relative at five data points, two parameter points and
 * two factors c.  c is a power of two, so x/c is exact. */
static void map_scale(const sp_family *fam, unsigned code, double c,
                      const double *theta, double *out)
{
  for (size_t p = 0; p < fam->nparam; p++) {
    if (fam->param_kinds[p] == SP_PARAM_POSITIVE) {
      unsigned mode = code % 3u;
      code /= 3u;
      out[p] = mode == 0 ? theta[p] : mode == 1 ? theta[p] * c : theta[p] / c;
    } else {
      out[p] = theta[p] * c;
    }
  }
}

static int scale_mask(const sp_family *fam, const double *theta, const double *x,
                      size_t n, unsigned *code_out)
{
  unsigned ncodes = 1;
  for (size_t p = 0; p < fam->nparam; p++)
    if (fam->param_kinds[p] == SP_PARAM_POSITIVE) ncodes *= 3u;
  double th[2][SP_FAMILY_MAX_PARAMS];
  memcpy(th[0], theta, fam->nparam * sizeof *theta);
  for (size_t p = 0; p < fam->nparam; p++)
    th[1][p] = fam->param_kinds[p] == SP_PARAM_POSITIVE ? theta[p] * 1.25 : theta[p];
  const double cs[2] = {8.0, 0.125};
  const size_t at[5] = {0, n / 4, n / 2, (3 * n) / 4, n - 1};
  for (unsigned code = 0; code < ncodes; code++) {
    int ok = 1, compared = 0;
    for (int a = 0; a < 2 && ok; a++) {
      for (int b = 0; b < 2 && ok; b++) {
        double m[SP_FAMILY_MAX_PARAMS];
        map_scale(fam, code, cs[b], th[a], m);
        for (int q = 0; q < 5 && ok; q++) {
          double y = x[at[q]];
          double l0 = fam->logpdf(th[a], y);
          double l1 = fam->logpdf(m, cs[b] * y) + log(cs[b]);
          if (!isfinite(l0) && !isfinite(l1)) continue;
          if (!(fabs(l1 - l0) <= 1e-9 * (1.0 + fabs(l0)))) ok = 0;
          compared++;
        }
      }
    }
    if (ok && compared >= 6) {
      *code_out = code;
      return 1;
    }
  }
  return 0;
}

/* The power of two nearest the median of |x|. */
static double robust_factor(const double *x, size_t n, double *scratch)
{
  double big = 0.0;
  for (size_t i = 0; i < n; i++) {
    scratch[i] = fabs(x[i]);
    if (scratch[i] > big) big = scratch[i];
  }
  double m = sp_select(scratch, n, n / 2);
  if (!(m > 0)) m = big;
  if (!(m > 0) || !isfinite(m)) return 1.0;
  return ldexp(1.0, (int)lround(log2(m)));
}

static sp_status fit_general(const sp_family *fam, const double *x, size_t n,
                             const int *fixed, double *theta, sp_fit_mle_info *info,
                             sp_fit_ws *w, sp_error *err)
{
  double c = robust_factor(x, n, w->sorted);
  unsigned mask = 0;
  if (c != 1.0 && scale_mask(fam, theta, x, n, &mask)) {
    for (size_t i = 0; i < n; i++) w->scaled[i] = x[i] / c;
    double ts[SP_FAMILY_MAX_PARAMS];
    map_scale(fam, mask, 1.0 / c, theta, ts);
    sp_status st = sp_fit_simplex(fam, w->scaled, n, fixed, ts, sp_fit_negloglik, NULL,
                                  w, info, err);
    if (st != SP_OK) return st;
    map_scale(fam, mask, c, ts, theta);
    return SP_OK;
  }
  return sp_fit_simplex(fam, x, n, fixed, theta, sp_fit_negloglik, NULL, w, info, err);
}

/* ---- estimation dispatch ---------------------------------------------- */

/* Special fitters by family name.  A family's fit_mle hook sees only its
 * own parameters; weibull3 needs another family's solver (the 2-parameter
 * weibull's, inside a profile over the location) and a different
 * estimator (MPS) when the likelihood has no interior maximum, which is
 * fitting policy rather than a property of the distribution, so it lives
 * here and not in the family file. */
static const struct {
  const char *family;
  sp_fit_special fit;
} special_fitters[] = {
  {"weibull3", sp_fit_weibull3},
};

static sp_fit_special find_special(const sp_family *fam)
{
  for (size_t i = 0; i < sizeof special_fitters / sizeof special_fitters[0]; i++)
    if (strcmp(fam->name, special_fitters[i].family) == 0) return special_fitters[i].fit;
  return NULL;
}

sp_status sp_fit_mle_ws(const sp_family *fam, const double *x, size_t n,
                        const int *fixed, double *theta, sp_fit_mle_info *info,
                        sp_fit_ws *w, sp_error *err)
{
  memset(info, 0, sizeof *info);
  int fx[SP_FAMILY_MAX_PARAMS] = {0};
  double keep[SP_FAMILY_MAX_PARAMS];
  size_t k = 0;
  for (size_t p = 0; p < fam->nparam; p++) {
    fx[p] = fixed ? (fixed[p] != 0) : 0;
    keep[p] = theta[p];
    if (fam->param_kinds[p] == SP_PARAM_LIMIT && !fx[p])
      return sp_fail(err, SP_EUSAGE, "%s: parameter '%s' is a limit and must be given",
                     fam->name, fam->param_names[p]);
    if (!fx[p]) k++;
  }
  if (n < 2 || n < k)
    return sp_fail(err, SP_EUSAGE, "%s: %zu observations cannot determine %zu parameters",
                   fam->name, n, k);
  if (n > w->nmax)
    return sp_fail(err, SP_EUSAGE, "fit: workspace for %zu observations, given %zu",
                   w->nmax, n);
  if (!fam->fit_start)
    return sp_fail(err, SP_EUSAGE, "%s: the family offers no starting values", fam->name);
  sp_fit_special special = find_special(fam);
  sp_status st;
  /* A family solver needs no starting values (dist.h: fit_mle reads only
   * the fixed entries of theta) and checks the data itself, so fit_start
   * runs only for the other estimators, or when the solver gives up. */
  int direct = k > 0 && !special && fam->fit_mle;
  if (!direct) {
    st = fam->fit_start(x, n, fx, theta, err);
    if (st != SP_OK) return st;
    for (size_t p = 0; p < fam->nparam; p++)
      if (fx[p]) theta[p] = keep[p];
  }

  if (k == 0) {
    info->method = SP_FIT_METHOD_NONE;
    info->converged = 1;
  } else {
    if (special) {
      st = special(fam, x, n, fx, theta, info, w, err);
      if (st != SP_OK) return st;
    } else if (fam->fit_mle) {
      sp_error e;
      sp_error_clear(&e);
      st = fam->fit_mle(x, n, fx, theta, &e);
      if (st == SP_OK) {
        info->method = SP_FIT_METHOD_FAMILY;
        info->converged = 1;
      } else if (st == SP_ENUMERIC) {
        /* The family's solver gave up: the general minimiser tries from
         * the starting values, and the note keeps the solver's reason. */
        for (size_t p = 0; p < fam->nparam; p++) theta[p] = keep[p];
        st = fam->fit_start(x, n, fx, theta, err);
        if (st != SP_OK) return st;
        for (size_t p = 0; p < fam->nparam; p++)
          if (fx[p]) theta[p] = keep[p];
        st = fit_general(fam, x, n, fx, theta, info, w, err);
        if (st != SP_OK) return st;
        char note[SP_FIT_TEXT_MAX];
        snprintf(note, sizeof note, "%s", info->note);
        snprintf(info->note, sizeof info->note, "family solver failed (%.120s)%s%.150s",
                 e.msg, note[0] ? "; " : "", note);
      } else {
        *err = e;
        return st;
      }
    } else {
      st = fit_general(fam, x, n, fx, theta, info, w, err);
      if (st != SP_OK) return st;
    }
  }
  for (size_t p = 0; p < fam->nparam; p++)
    /* written before on every path (the loop bounds are not followed):
     * NOLINTNEXTLINE(clang-analyzer-core.uninitialized.Assign) */
    if (fx[p]) theta[p] = keep[p];
  sp_error e;
  sp_error_clear(&e);
  if (fam->check(theta, &e) != SP_OK)
    return sp_fail(err, SP_ENUMERIC, "%s: estimate outside the parameter space: %s",
                   fam->name, e.msg);
  return SP_OK;
}

sp_status sp_fit_mle(const sp_family *fam, const double *x, size_t n,
                     const int *fixed, double *theta, sp_fit_mle_info *info,
                     sp_error *err)
{
  for (size_t i = 0; i < n; i++)
    if (!isfinite(x[i]))
      return sp_fail(err, SP_EDATA, "fit: value %zu is not finite", i + 1);
  sp_fit_ws *w = sp_fit_ws_alloc(n);
  if (!w) return sp_fit_fail_nomem(err);
  sp_status st = sp_fit_mle_ws(fam, x, n, fixed, theta, info, w, err);
  sp_fit_ws_free(w);
  return st;
}

/* ---- the candidate loop ----------------------------------------------- */

void sp_fit_result_clear(sp_fit_result *r)
{
  if (!r) return;
  free(r->cand);
  memset(r, 0, sizeof *r);
  r->chosen = -1;
}

static void criteria(sp_fit_candidate *c)
{
  double k = (double)c->k, n = (double)c->n;
  c->aic = 2.0 * k - 2.0 * c->loglik;
  c->aicc = (n - k - 1.0 > 0.0) ? c->aic + 2.0 * k * (k + 1.0) / (n - k - 1.0) : NAN;
  c->bic = k * log(n) - 2.0 * c->loglik;
}

/* Fixed values for a candidate: options first, then metadata for LIMIT
 * parameters.  Returns 0 and fills reason when a limit is missing. */
static int candidate_fixed(const sp_family *fam, const sp_fit_options *o,
                           sp_fit_candidate *c)
{
  for (size_t p = 0; p < fam->nparam; p++) {
    c->fixed[p] = 0;
    c->theta[p] = NAN;
    for (size_t i = 0; i < o->nfixed; i++)
      if (strcmp(o->fixed[i].name, fam->param_names[p]) == 0) {
        c->fixed[p] = 1;
        c->theta[p] = o->fixed[i].value;
      }
    if (!c->fixed[p] && fam->param_kinds[p] == SP_PARAM_LIMIT) {
      for (size_t i = 0; i < o->nmeta; i++) {
        if (strcmp(o->meta[i].key, fam->param_names[p]) != 0) continue;
        double v;
        sp_error e;
        sp_error_clear(&e);
        if (sp_parse_double(o->meta[i].value, '.', &v, &e) != SP_OK) {
          snprintf(c->reason, sizeof c->reason,
                   "metadata line %ld: limit '%s': %.100s (correct the line, or give "
                   "--fix %s=VALUE)",
                   o->meta[i].line, fam->param_names[p], e.msg, fam->param_names[p]);
          return 0;
        }
        c->fixed[p] = 1;
        c->theta[p] = v;
      }
      if (!c->fixed[p]) {
        snprintf(c->reason, sizeof c->reason,
                 "limit '%s' not given (use --fix %s=VALUE or a '# %s: VALUE' "
                 "metadata line; for a one-sided truncation give a value far beyond "
                 "the data)",
                 fam->param_names[p], fam->param_names[p], fam->param_names[p]);
        return 0;
      }
    }
  }
  return 1;
}

static sp_status fit_candidate(const sp_family *fam, const double *x,
                               const double *sorted, size_t n,
                               const sp_fit_options *o, sp_fit_candidate *c,
                               sp_fit_ws *w, sp_error *err)
{
  memset(c, 0, sizeof *c);
  c->family = fam;
  c->nparam = fam->nparam;
  c->n = n;
  c->loglik = c->aic = c->aicc = c->bic = NAN;
  for (int j = 0; j < SP_FIT_NGOF; j++) c->gof[j].stat = c->gof[j].p = NAN;
  for (size_t p = 0; p < SP_FAMILY_MAX_PARAMS; p++) c->se[p] = c->ci_lo[p] = c->ci_hi[p] = NAN;
  if (!candidate_fixed(fam, o, c)) {
    c->status = SP_FIT_SKIPPED;
    return SP_OK;
  }
  for (size_t p = 0; p < fam->nparam; p++)
    if (!c->fixed[p]) c->k++;
  sp_fit_mle_info info;
  sp_error e;
  sp_error_clear(&e);
  sp_status st = sp_fit_mle_ws(fam, x, n, c->fixed, c->theta, &info, w, &e);
  if (st == SP_ENOMEM) {
    *err = e;
    return st;
  }
  if (st != SP_OK) {
    c->status = (st == SP_EDATA || st == SP_EUSAGE) ? SP_FIT_SKIPPED : SP_FIT_FAILED;
    snprintf(c->reason, sizeof c->reason, "%.300s", e.msg);
    return SP_OK;
  }
  c->method = info.method;
  c->converged = info.converged;
  snprintf(c->reason, sizeof c->reason, "%.300s", info.note);
  double nll = sp_fit_negloglik(fam, c->theta, x, n, NULL);
  if (!isfinite(nll)) {
    if (info.method != SP_FIT_METHOD_MPS) {
      c->status = SP_FIT_FAILED;
      snprintf(c->reason, sizeof c->reason, "the likelihood is zero at the estimate");
      return SP_OK;
    }
  }
  c->loglik = -nll;
  criteria(c);
  st = sp_fit_covariance(c, x, n, err);
  if (st != SP_OK) return st;
  sp_fit_gof_sorted(fam, c->theta, sorted, n, w->P, w->Q, c->gof);
  return SP_OK;
}

double sp_fit_criterion(const sp_fit_candidate *c, sp_fit_select s)
{
  double v;
  switch (s) {
  case SP_FIT_SELECT_AIC: v = c->aic; break;
  case SP_FIT_SELECT_BIC: v = c->bic; break;
  case SP_FIT_SELECT_LOGLIK: v = -c->loglik; break;
  default: v = c->aicc; break;
  }
  return isfinite(v) ? v : INFINITY;
}

void sp_fit_rank(sp_fit_result *r)
{
  const sp_fit_options *o = &r->opt;
  size_t nok = 0, nfree = 0, nfree_conv = 0, njudged = 0;
  int substitute = 0;
  r->chosen = -1;
  for (size_t i = 0; i < r->ncand; i++) {
    sp_fit_candidate *c = &r->cand[i];
    c->rank = 0;
    c->rejected = 0;
    c->judged_by = -1;
    if (c->status != SP_FIT_OK) continue;
    nok++;
    /* A^2 first; W^2 (the other quadratic statistic), then D, stand in
     * when A^2 has no p-value. */
    static const int order[SP_FIT_NGOF] = {SP_FIT_GOF_A2, SP_FIT_GOF_W2, SP_FIT_GOF_D};
    c->judged_by = -1;
    for (int j = 0; j < SP_FIT_NGOF && c->judged_by < 0; j++)
      if (isfinite(c->gof[order[j]].p)) c->judged_by = order[j];
    if (c->judged_by > SP_FIT_GOF_A2) substitute = 1;
    if (c->judged_by >= 0) njudged++;
    c->rejected = c->judged_by >= 0 && c->gof[c->judged_by].p < o->alpha;
    if (!c->rejected) nfree++;
    if (!c->rejected && c->converged) nfree_conv++;
  }
  /* AICc needs n > k + 1.  When none of the candidates the choice is made
   * from has it (n = 3 with two parameters, while a one-parameter family
   * that has it is rejected), their AICc would be an equal infinity and the
   * choice the order of the list: rank by AIC then, and say so. */
  sp_fit_select sel = o->select;
  int aicc_undefined = 0;
  if (sel == SP_FIT_SELECT_AICC && nok > 0) {
    aicc_undefined = 1;
    for (size_t i = 0; i < r->ncand; i++) {
      const sp_fit_candidate *c = &r->cand[i];
      if (c->status != SP_FIT_OK || (nfree > 0 && c->rejected) ||
          (nfree_conv > 0 && !c->converged))
        continue;
      if (isfinite(c->aicc)) aicc_undefined = 0;
    }
    if (aicc_undefined) sel = SP_FIT_SELECT_AIC;
  }
  /* Rank by the criterion; ties keep candidate order. */
  for (size_t i = 0; i < r->ncand; i++) {
    sp_fit_candidate *c = &r->cand[i];
    if (c->status != SP_FIT_OK) continue;
    double v = sp_fit_criterion(c, sel);
    size_t rank = 1;
    for (size_t j = 0; j < r->ncand; j++) {
      const sp_fit_candidate *d = &r->cand[j];
      if (j == i || d->status != SP_FIT_OK) continue;
      double u = sp_fit_criterion(d, sel);
      if (u < v || (u == v && j < i)) rank++;
    }
    c->rank = rank;
  }
  const char *crit = criterion_label(sel);
  const char *best_word = sel == SP_FIT_SELECT_LOGLIK ? "highest" : "lowest";
  double alpha_pct = 100.0 * o->alpha;
  if (nok == 0) {
    snprintf(r->reason, sizeof r->reason, "no candidate family could be fitted");
    return;
  }
  if (o->force_family) {
    for (size_t i = 0; i < r->ncand; i++) {
      sp_fit_candidate *c = &r->cand[i];
      if (strcmp(c->family->name, o->force_family) != 0) continue;
      if (c->status != SP_FIT_OK) {
        snprintf(r->reason, sizeof r->reason,
                 "%s was requested but could not be fitted: %.200s", c->family->name,
                 c->reason);
        return;
      }
      r->chosen = (long)i;
      double v = sel == SP_FIT_SELECT_LOGLIK ? c->loglik : sp_fit_criterion(c, sel);
      snprintf(r->reason, sizeof r->reason, "%s: chosen by request (%s %.1f, rank %zu of %zu%s%s)",
               c->family->name, crit, v, c->rank, nok,
               c->rejected ? ", rejected by A² at the level set" : "",
               c->converged ? "" : ", not converged");
      return;
    }
    snprintf(r->reason, sizeof r->reason, "requested family %s is not a candidate",
             o->force_family);
    return;
  }
  /* An estimate whose estimator did not meet its tolerance is chosen
   * only when every candidate not rejected is in that state. */
  long best = -1;
  for (size_t i = 0; i < r->ncand; i++) {
    const sp_fit_candidate *c = &r->cand[i];
    if (c->status != SP_FIT_OK) continue;
    if (nfree > 0 && c->rejected) continue;
    if (nfree_conv > 0 && !c->converged) continue;
    if (best < 0 || c->rank < r->cand[best].rank) best = (long)i;
  }
  r->chosen = best;
  const sp_fit_candidate *c = &r->cand[best];
  double v = sel == SP_FIT_SELECT_LOGLIK ? c->loglik : sp_fit_criterion(c, sel);
  const char *by = substitute ? "A² (W² where A² is infinite)" : "A²";
  if (njudged == 0) {
    /* --pvalues none, or no statistic had a p-value: nothing was tested,
     * and the reason must not claim otherwise. */
    snprintf(r->reason, sizeof r->reason,
             "%s: %s %s (%.1f) of the %zu%s candidate%s; no goodness-of-fit p-value was "
             "computed, so none was tested",
             c->family->name, best_word, crit, v, nfree_conv > 0 ? nfree_conv : nfree,
             nfree_conv > 0 && nfree > nfree_conv ? " converged" : "",
             (nfree_conv > 0 ? nfree_conv : nfree) == 1 ? "" : "s");
  } else if (nfree_conv > 0) {
    snprintf(r->reason, sizeof r->reason,
             "%s: %s %s (%.1f) of the %zu candidate%s not rejected by %s at %g%%", c->family->name,
             best_word, crit, v, nfree_conv, nfree_conv == 1 ? "" : "s", by, alpha_pct);
    if (nfree > nfree_conv) {
      size_t len = strlen(r->reason);
      snprintf(r->reason + len, sizeof r->reason - len,
               " and converged (%zu not converged left out)", nfree - nfree_conv);
    }
  } else if (nfree > 0)
    snprintf(r->reason, sizeof r->reason,
             "%s: %s %s (%.1f) of the %zu candidate%s not rejected by %s at %g%%; "
             "none of them converged, so treat the estimate with care",
             c->family->name, best_word, crit, v, nfree, nfree == 1 ? "" : "s", by, alpha_pct);
  else
    snprintf(r->reason, sizeof r->reason,
             "%s: %s %s (%.1f) of the %zu fitted candidate%s; every one is rejected "
             "by %s at %g%%",
             c->family->name, best_word, crit, v, nok, nok == 1 ? "" : "s", by, alpha_pct);
  if (aicc_undefined) {
    size_t len = strlen(r->reason);
    snprintf(r->reason + len, sizeof r->reason - len,
             " (AICc is undefined for n = %zu: n <= k + 1 for every candidate it could "
             "choose from)",
             r->n);
  }
}

/* The hint for a fixed parameter no candidate has: the registered
 * families that have it, or else the candidates' parameter names. */
static sp_status fixed_hint(const sp_family *const *fams, size_t nf, const char *name,
                            sp_error *err)
{
  char list[SP_ERROR_MSG_MAX] = "";
  size_t len = 0, count = 0;
  for (size_t i = 0; i < sp_family_count(); i++) {
    const sp_family *f = sp_family_at(i);
    if (!(f->flags & SP_FAMILY_FIT) || sp_family_param_index(f, name) < 0) continue;
    len += (size_t)snprintf(list + len, len < sizeof list ? sizeof list - len : 0, "%s%s",
                            count++ ? ", " : "", f->name);
    if (len >= sizeof list) break;
  }
  if (count > 0)
    return sp_error_hint(err, "'%s' is a parameter of %s: add %s to --families", name, list,
                         count == 1 ? "it" : "one of them");
  for (size_t j = 0; j < nf; j++)
    for (size_t p = 0; p < fams[j]->nparam; p++) {
      const char *pn = fams[j]->param_names[p];
      int seen = 0;
      for (size_t q = 0; q < j && !seen; q++)
        seen = sp_family_param_index(fams[q], pn) >= 0;
      for (size_t r = 0; r < p && !seen; r++)
        seen = strcmp(fams[j]->param_names[r], pn) == 0;
      if (seen || len >= sizeof list) continue;
      len += (size_t)snprintf(list + len, sizeof list - len, "%s%s", len ? ", " : "", pn);
    }
  return sp_error_hint(err, "the candidates' parameters are: %s", list);
}

sp_status sp_fit_run(const double *x, size_t n, const sp_fit_options *opt,
                     sp_fit_result *out, sp_error *err)
{
  memset(out, 0, sizeof *out);
  out->chosen = -1;
  if (n < 2) {
    sp_fail(err, SP_EDATA, "fit: need at least 2 values, got %zu", n);
    return sp_error_hint(err, "a distribution cannot be fitted to fewer than 2 values; "
                              "check the column, the lot and the missing cells");
  }
  for (size_t i = 0; i < n; i++)
    if (!isfinite(x[i]))
      return sp_fail(err, SP_EDATA, "fit: value %zu is not finite", i + 1);
  if (!(opt->alpha > 0 && opt->alpha < 1))
    return sp_fail(err, SP_EUSAGE, "fit: alpha must be in (0, 1), got %g", opt->alpha);
  if (opt->pvalue == SP_FIT_PVALUE_BOOTSTRAP && opt->bootstrap_B == 0)
    return sp_fail(err, SP_EUSAGE, "fit: the bootstrap needs B >= 1");

  const sp_family *fams[SP_FIT_MAX_FAMILIES];
  size_t nf = 0;
  if (opt->families) {
    for (size_t i = 0; i < opt->nfamilies; i++) {
      const sp_family *f = sp_family_find(opt->families[i]);
      if (!f) {
        sp_fail(err, SP_EUSAGE, "unknown family '%s'", opt->families[i]);
        char names[512];
        size_t len = 0;
        names[0] = '\0';
        for (size_t k = 0; k < sp_family_count(); k++) {
          const sp_family *g = sp_family_at(k);
          if (!(g->flags & SP_FAMILY_FIT) || len >= sizeof names) continue;
          int w = snprintf(names + len, sizeof names - len, "%s%s", len ? ", " : "", g->name);
          if (w > 0) len += (size_t)w;
        }
        return sp_error_hint(err, "the families that can be fitted: %s", names);
      }
      for (size_t j = 0; j < nf; j++)
        if (fams[j] == f) {
          sp_fail(err, SP_EUSAGE, "family '%s' listed twice", f->name);
          return sp_error_hint(err, "name each candidate family once");
        }
      if (!(f->flags & SP_FAMILY_FIT)) {
        sp_fail(err, SP_EUSAGE,
                "family '%s' cannot be fitted (it is offered for "
                "propagation only)",
                f->name);
        return sp_error_hint(err, "run 'scatterprop fit --help' for the families that "
                                  "can be fitted");
      }
      if (nf >= SP_FIT_MAX_FAMILIES)
        return sp_fail(err, SP_EUSAGE, "at most %d candidate families", SP_FIT_MAX_FAMILIES);
      fams[nf++] = f;
    }
  } else {
    for (size_t i = 0; i < sp_family_count() && nf < SP_FIT_MAX_FAMILIES; i++) {
      const sp_family *f = sp_family_at(i);
      if ((f->flags & SP_FAMILY_FIT) && (f->flags & SP_FAMILY_CANDIDATE)) fams[nf++] = f;
    }
  }
  if (opt->force_family) {
    /* A family asked for by name is fitted even when the default list
     * leaves it out (exponential, uniform, ...); with an explicit list it
     * must be on it. */
    const sp_family *f = sp_family_find(opt->force_family);
    if (!f || !(f->flags & SP_FAMILY_FIT)) {
      sp_fail(err, SP_EUSAGE, "requested family '%s' %s", opt->force_family,
              f ? "cannot be fitted (it is offered for propagation only)"
                : "is not a known family");
      return sp_error_hint(err, "run 'scatterprop fit --help' for the list of families");
    }
    int found = 0;
    for (size_t j = 0; j < nf; j++)
      found |= fams[j] == f;
    if (!found && !opt->families && nf < SP_FIT_MAX_FAMILIES) {
      fams[nf++] = f;
      found = 1;
    }
    if (!found) {
      sp_fail(err, SP_EUSAGE, "requested family '%s' is not among the candidates",
              opt->force_family);
      return sp_error_hint(err, "add %s to --families, or leave --families out", opt->force_family);
    }
  }
  if (nf == 0) return sp_fail(err, SP_EUSAGE, "fit: no candidate families");
  for (size_t i = 0; i < opt->nfixed; i++) {
    int found = 0;
    for (size_t j = 0; j < nf; j++) {
      const int p = sp_family_param_index(fams[j], opt->fixed[i].name);
      if (p < 0) continue;
      found = 1;
      /* a scale or shape held at a value no fit could have is the
       * caller's mistake, not the data's */
      if (fams[j]->param_kinds[p] == SP_PARAM_POSITIVE && !(opt->fixed[i].value > 0.0)) {
        sp_fail(err, SP_EUSAGE, "fixed parameter %s = %g: %s needs %s > 0", opt->fixed[i].name,
                opt->fixed[i].value, fams[j]->name, opt->fixed[i].name);
        return sp_error_hint(err, "give a positive value, or leave %s free", opt->fixed[i].name);
      }
    }
    if (!found) {
      sp_fail(err, SP_EUSAGE,
              "fixed parameter '%s' belongs to none of the candidate "
              "families",
              opt->fixed[i].name);
      return fixed_hint(fams, nf, opt->fixed[i].name, err);
    }
  }

  out->cand = calloc(nf, sizeof *out->cand);
  sp_fit_ws *w = sp_fit_ws_alloc(n);
  double *sorted = malloc(n * sizeof *sorted);
  if (!out->cand || !w || !sorted) {
    free(sorted);
    sp_fit_ws_free(w);
    sp_fit_result_clear(out);
    return sp_fit_fail_nomem(err);
  }
  out->ncand = nf;
  out->n = n;
  out->opt = *opt;
  memcpy(sorted, x, n * sizeof *x);
  sp_fit_sort(sorted, n);

  sp_status st = SP_OK;
  for (size_t i = 0; i < nf && st == SP_OK; i++) {
    sp_fit_candidate *c = &out->cand[i];
    st = fit_candidate(fams[i], x, sorted, n, opt, c, w, err);
    if (st != SP_OK || c->status != SP_FIT_OK || opt->pvalue == SP_FIT_PVALUE_NONE) continue;
    if (opt->pvalue == SP_FIT_PVALUE_BOOTSTRAP && c->family->sample) {
      st = sp_fit_bootstrap(c, n, opt->bootstrap_B, opt->seed, (uint32_t)i, opt->threads,
                            NULL, err);
      continue;
    }
    int napprox = sp_fit_gof_approx(c, sorted, n, w->P, w->Q);
    if (opt->pvalue == SP_FIT_PVALUE_AUTO && napprox < SP_FIT_NGOF &&
        (!c->family->sample || (double)opt->bootstrap_B * (double)n > SP_FIT_AUTO_BOOTSTRAP_MAX)) {
      /* Too costly to run unasked (or impossible): say so per statistic. */
      for (int j = 0; j < SP_FIT_NGOF; j++) {
        if (isfinite(c->gof[j].p)) continue;
        if (c->family->sample)
          snprintf(c->gof[j].method, sizeof c->gof[j].method,
                   "not computed: the bootstrap of B x n = %.3g values exceeds the "
                   "automatic limit; ask for it with --pvalues bootstrap",
                   (double)opt->bootstrap_B * (double)n);
        else
          snprintf(c->gof[j].method, sizeof c->gof[j].method,
                   "not computed: the family has no sampler for a bootstrap");
      }
      continue;
    }
    if (opt->pvalue == SP_FIT_PVALUE_AUTO && napprox < SP_FIT_NGOF) {
      /* The bootstrap for the statistics without a published method; the
       * approximations are kept where they exist. */
      sp_fit_candidate b = *c;
      st = sp_fit_bootstrap(&b, n, opt->bootstrap_B, opt->seed, (uint32_t)i, opt->threads,
                            NULL, err);
      if (st != SP_OK) continue;
      c->bootstrap_failed = b.bootstrap_failed;
      for (int j = 0; j < SP_FIT_NGOF; j++)
        if (!isfinite(c->gof[j].p)) c->gof[j] = b.gof[j];
    }
  }
  free(sorted);
  sp_fit_ws_free(w);
  if (st != SP_OK) {
    sp_fit_result_clear(out);
    return st;
  }
  sp_fit_rank(out);
  return SP_OK;
}

/* ---- per lot ---------------------------------------------------------- */

void sp_fit_grouped_clear(sp_fit_grouped *g)
{
  if (!g) return;
  for (size_t i = 0; g->groups && i < g->ngroups; i++) {
    free(g->groups[i].label);
    sp_fit_result_clear(&g->groups[i].fit);
  }
  free(g->groups);
  sp_fit_result_clear(&g->pooled);
  memset(g, 0, sizeof *g);
}

sp_status sp_fit_run_grouped(const double *x, const char *const *group, size_t n,
                             const sp_fit_options *opt, sp_fit_grouped *out,
                             sp_error *err)
{
  memset(out, 0, sizeof *out);
  out->pooled.chosen = -1;
  /* The lots in order of first appearance, each with its rows in file
   * order, in time linear in the rows (sp_group_labels). */
  sp_group *lots = NULL;
  size_t nlots = 0;
  sp_status st = sp_group_labels(group, n, 1, &lots, &nlots, err);
  if (st != SP_OK) return st;
  double *vals = malloc((n ? n : 1) * sizeof *vals);
  out->groups = calloc(nlots ? nlots : 1, sizeof *out->groups);
  if (!vals || !out->groups) {
    st = sp_fit_fail_nomem(err);
    goto done;
  }
  for (size_t g = 0; g < nlots; g++) {
    sp_fit_group *G = &out->groups[g];
    G->fit.chosen = -1;
    G->label = lots[g].label; /* moved: lots[g] no longer owns it */
    lots[g].label = NULL;
    out->ngroups++;
    size_t m = 0;
    for (size_t k = 0; k < lots[g].n; k++) {
      size_t i = lots[g].rows[k];
      if (isnan(x[i])) G->nmissing++;
      else vals[m++] = x[i];
    }
    sp_error e;
    sp_error_clear(&e);
    G->status = sp_fit_run(vals, m, opt, &G->fit, &e);
    if (G->status == SP_ENOMEM) {
      *err = e;
      st = SP_ENOMEM;
      goto done;
    }
    if (G->status != SP_OK) snprintf(G->message, sizeof G->message, "%.300s", e.msg);
  }
  {
    size_t m = 0;
    for (size_t i = 0; i < n; i++) {
      if (isnan(x[i])) out->pooled_missing++;
      else vals[m++] = x[i];
    }
    st = sp_fit_run(vals, m, opt, &out->pooled, err);
  }
done:
  free(vals);
  sp_groups_free(lots, nlots);
  if (st != SP_OK) sp_fit_grouped_clear(out);
  return st;
}

/* A data error of the fit ("need at least 2 values, got 1") says which
 * file and column it is about. */
static sp_status with_column(const sp_table *t, const char *column, sp_status st,
                             sp_error *err)
{
  if (st != SP_EDATA || !err) return st;
  char msg[SP_ERROR_MSG_MAX], hint[SP_ERROR_MSG_MAX];
  snprintf(msg, sizeof msg, "%s", err->msg);
  snprintf(hint, sizeof hint, "%s", err->hint);
  sp_fail(err, SP_EDATA, "%s: column '%s': %.900s", t->path, column, msg);
  if (hint[0]) sp_error_hint(err, "%s", hint);
  return SP_EDATA;
}

/* The hint naming the table's columns of one kind. */
static sp_status columns_hint(const sp_table *t, sp_column_kind kind, const char *what,
                              sp_error *err)
{
  char list[SP_ERROR_MSG_MAX / 2] = "";
  size_t len = 0, count = 0;
  for (size_t i = 0; i < t->ncols && len < sizeof list; i++) {
    if (t->cols[i].kind != kind) continue;
    len += (size_t)snprintf(list + len, sizeof list - len, "%s'%s'", count++ ? ", " : "",
                            t->cols[i].name);
  }
  if (count == 0) return sp_error_hint(err, "the file has no %s column", what);
  return sp_error_hint(err, "the %s column%s: %.400s", what, count == 1 ? " is" : "s are", list);
}

sp_status sp_fit_table(const sp_table *t, const char *column, const char *by,
                       const sp_fit_options *opt, sp_fit_grouped *out, sp_error *err)
{
  memset(out, 0, sizeof *out);
  out->pooled.chosen = -1;
  const sp_column *c = sp_table_column(t, column);
  if (!c) {
    sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, 0, "no column named '%s' in the header",
               column);
    return columns_hint(t, SP_COLUMN_NUMERIC, "numeric", err);
  }
  if (c->kind != SP_COLUMN_NUMERIC) {
    sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, (long)c->index + 1,
               "column '%s' is text, not numbers", column);
    return columns_hint(t, SP_COLUMN_NUMERIC, "numeric", err);
  }
  for (size_t i = 0; i < c->n; i++)
    if (c->flags[i] & (SP_OBS_CENSORED_LEFT | SP_OBS_CENSORED_RIGHT))
      return sp_fail(err, SP_EDATA, "%s: column '%s' has censored observations (row %zu), "
                     "which this release cannot fit", t->path, column, i + 1);
  sp_fit_options o = *opt;
  if (!o.meta) {
    o.meta = t->meta;
    o.nmeta = t->nmeta;
  }
  if (by) {
    const sp_column *g = sp_table_column(t, by);
    if (!g) {
      sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, 0, "no column named '%s' in the header",
                 by);
      return columns_hint(t, SP_COLUMN_TEXT, "text (lot)", err);
    }
    if (g->kind != SP_COLUMN_TEXT) {
      sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, (long)g->index + 1,
                 "the lot column '%s' must be text", by);
      return columns_hint(t, SP_COLUMN_TEXT, "text (lot)", err);
    }
    return with_column(t, column,
                       sp_fit_run_grouped(c->values, (const char *const *)g->text, c->n, &o,
                                          out, err),
                       err);
  }
  double *v = malloc((c->n ? c->n : 1) * sizeof *v);
  if (!v) return sp_fit_fail_nomem(err);
  size_t m = 0;
  for (size_t i = 0; i < c->n; i++) {
    if (c->flags[i] & SP_OBS_MISSING || isnan(c->values[i])) out->pooled_missing++;
    else v[m++] = c->values[i];
  }
  sp_status st = sp_fit_run(v, m, &o, &out->pooled, err);
  free(v);
  return with_column(t, column, st, err);
}
