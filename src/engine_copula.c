/* engine: input checks and the Gaussian copula for rank correlations.
 *
 * A Spearman rank correlation rho_s between two inputs is imposed through a
 * Gaussian copula: normal scores z with Pearson correlation
 *   rho_n = 2 sin(pi rho_s / 6),
 * the exact relation between Spearman's and Pearson's correlation of a
 * bivariate normal (Pearson, K. (1907). Mathematical contributions to the
 * theory of evolution XVI: On further methods of determining correlation.
 * Drapers' Company Research Memoirs, Biometric Series IV; the usual practice
 * of, e.g., Kurowicka, D. & Cooke, R. (2006). Uncertainty Analysis with High
 * Dimensional Dependence Modelling, Wiley, section 4.2), are made from
 * independent scores with the Cholesky factor L of the correlation matrix
 * (GSL's gsl_linalg_cholesky_decomp1), and each input is the family's
 * quantile of Phi(z).  The ranks of the inputs are those of z, so the
 * rank correlation of each pair is rho_s exactly in distribution, whatever
 * the marginal families.  Positive definiteness of the given rho_s does not
 * carry over to rho_n in every case; the check is on rho_n. */
#include "engine_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_math.h>

double sp_engine_spearman_to_pearson(double rho_s)
{
  return 2.0 * sin(M_PI * rho_s / 6.0);
}

static const char *iname(const sp_engine_input *in, size_t i, char *buf, size_t n)
{
  if (in[i].name && in[i].name[0]) return in[i].name;
  snprintf(buf, n, "input %zu", i + 1);
  return buf;
}

/* 1 if the leading m x m block of r (k x k, row-major) is positive definite,
 * by an unpivoted Cholesky factorisation (Golub, G.H. & Van Loan, C.F.
 * (2013). Matrix Computations, 4th ed., Johns Hopkins, Algorithm 4.2.1);
 * *fail receives the first row whose pivot is not positive. */
static int leading_pd(const double *r, size_t k, size_t m, double *work, size_t *fail)
{
  for (size_t i = 0; i < m; i++) {
    for (size_t j = 0; j <= i; j++) {
      double s = r[i * k + j];
      for (size_t t = 0; t < j; t++) s -= work[i * k + t] * work[j * k + t];
      if (i == j) {
        if (!(s > 0.0)) {
          *fail = i;
          return 0;
        }
        work[i * k + i] = sqrt(s);
      } else {
        work[i * k + j] = s / work[j * k + j];
      }
    }
  }
  return 1;
}

/* Message for a matrix that is not positive definite: the row p where the
 * factorisation first fails and the pair (j, p) whose removal makes the
 * leading (p + 1) x (p + 1) block positive definite, trying the largest
 * |rho| first; without such a pair, the largest |rho| in row p. */
static sp_status not_pd(const sp_engine_input *in, size_t k, double *r,
                        const double *rs, double *work, sp_error *err)
{
  size_t p = 0, f;
  leading_pd(r, k, k, work, &p);
  size_t best = k, largest = k;
  double bestabs = -1.0, largestabs = -1.0;
  for (size_t j = 0; j < p; j++) {
    double v = r[p * k + j];
    if (v == 0.0) continue;
    if (fabs(v) > largestabs) {
      largestabs = fabs(v);
      largest = j;
    }
    r[p * k + j] = r[j * k + p] = 0.0;
    int ok = leading_pd(r, k, p + 1, work, &f);
    r[p * k + j] = r[j * k + p] = v;
    if (ok && fabs(v) > bestabs) {
      bestabs = fabs(v);
      best = j;
    }
  }
  char b1[32], b2[32];
  size_t j = best < k ? best : largest;
  if (j >= k) /* row p has no correlation: a diagonal pivot cannot fail */
    return sp_fail(err, SP_EUSAGE, "rank correlations are not positive definite");
  sp_fail(err, SP_EUSAGE,
          "rank correlations are not positive definite: the correlation matrix of "
          "the normal scores (rho_n = 2 sin(pi rho_s / 6)) fails at %s; "
          "the pair (%s, %s) with rho_s = %g %s",
          iname(in, p, b1, sizeof b1), iname(in, j, b2, sizeof b2),
          iname(in, p, b1, sizeof b1), rs[p * k + j],
          best < k ? "is inconsistent with the others (without it the inputs up to "
                     "there are consistent)"
                   : "is the strongest of the inconsistent ones");
  return sp_error_hint(err, "lower the magnitude of that correlation or of the "
                            "correlations it combines with");
}

sp_status engine_inputs_init(engine_inputs *x, const sp_engine_input *in,
                             size_t k, const sp_engine_corr *corr, size_t ncorr,
                             sp_error *err)
{
  memset(x, 0, sizeof *x);
  x->k = k;
  x->in = in;
  char b1[32], b2[32];
  for (size_t i = 0; i < k; i++) {
    const sp_family *f = in[i].fam;
    if (!f)
      return sp_fail(err, SP_EUSAGE, "%s has no distribution family", iname(in, i, b1, sizeof b1));
    if (!f->quantile_P || !f->quantile_Q || !f->sample)
      return sp_fail(err, SP_EUSAGE,
                     "%s: family %s lacks a quantile function or sampler needed for propagation",
                     iname(in, i, b1, sizeof b1), f->name ? f->name : "?");
    if (!isfinite(in[i].scale) || !isfinite(in[i].offset))
      return sp_fail(err, SP_EUSAGE, "%s: scale and offset must be finite, got %g and %g",
                     iname(in, i, b1, sizeof b1), in[i].scale, in[i].offset);
    if (f->check) {
      sp_status st = f->check(in[i].theta, err);
      if (st != SP_OK) return st;
    }
  }
  if (ncorr == 0) return SP_OK;
  if (!corr) return sp_fail(err, SP_EUSAGE, "%zu rank correlations given without their array", ncorr);

  double *rs = calloc(k * k, sizeof *rs);
  double *r = calloc(k * k, sizeof *r);
  double *work = calloc(k * k, sizeof *work);
  x->iscop = calloc(k, 1);
  x->cop = calloc(k, sizeof *x->cop);
  x->L = calloc(k * k, sizeof *x->L);
  unsigned char *given = calloc(k * k, 1);
  sp_status st = SP_OK;
  if (!rs || !r || !work || !x->iscop || !x->cop || !x->L || !given) {
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the %zu x %zu correlation matrix", k, k);
    goto done;
  }
  for (size_t i = 0; i < k; i++) r[i * k + i] = rs[i * k + i] = 1.0;
  for (size_t c = 0; c < ncorr; c++) {
    size_t i = corr[c].i, j = corr[c].j;
    double v = corr[c].rho_s;
    if (i >= k || j >= k) {
      st = sp_fail(err, SP_EUSAGE, "rank correlation %zu names input %zu, there are %zu",
                   c + 1, (i >= k ? i : j) + 1, k);
      goto done;
    }
    if (i == j) {
      st = sp_fail(err, SP_EUSAGE, "rank correlation %zu pairs %s with itself", c + 1,
                   iname(in, i, b1, sizeof b1));
      goto done;
    }
    if (!(v >= -1.0 && v <= 1.0)) {
      st = sp_fail(err, SP_EUSAGE, "rank correlation of (%s, %s) must lie in [-1, 1], got %g",
                   iname(in, i, b1, sizeof b1), iname(in, j, b2, sizeof b2), v);
      goto done;
    }
    if (given[i * k + j]) {
      st = sp_fail(err, SP_EUSAGE, "rank correlation of (%s, %s) is given twice",
                   iname(in, i, b1, sizeof b1), iname(in, j, b2, sizeof b2));
      goto done;
    }
    given[i * k + j] = given[j * k + i] = 1;
    rs[i * k + j] = rs[j * k + i] = v;
    double n = sp_engine_spearman_to_pearson(v);
    r[i * k + j] = r[j * k + i] = n;
    if (n != 0.0) x->iscop[i] = x->iscop[j] = 1;
  }
  for (size_t i = 0; i < k; i++)
    if (x->iscop[i]) x->cop[x->ncop++] = i;

  gsl_matrix *m = gsl_matrix_alloc(k, k);
  if (!m) {
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the %zu x %zu correlation matrix", k, k);
    goto done;
  }
  memcpy(m->data, r, k * k * sizeof *r); /* a fresh k x k matrix has tda = k */
  int gs = gsl_linalg_cholesky_decomp1(m);
  if (gs == GSL_EDOM) {
    gsl_matrix_free(m);
    st = not_pd(in, k, r, rs, work, err);
    goto done;
  }
  if (gs != GSL_SUCCESS) {
    gsl_matrix_free(m);
    st = sp_fail(err, SP_ENUMERIC, "Cholesky factorisation of the correlations failed: %s",
                 gsl_strerror(gs));
    goto done;
  }
  /* decomp1 leaves L in the lower triangle (and L^T above). */
  for (size_t i = 0; i < k; i++)
    for (size_t j = 0; j <= i; j++) x->L[i * k + j] = gsl_matrix_get(m, i, j);
  gsl_matrix_free(m);

done:
  free(rs);
  free(r);
  free(work);
  free(given);
  if (st != SP_OK) engine_inputs_free(x);
  return st;
}

void engine_inputs_free(engine_inputs *x)
{
  if (!x) return;
  free(x->iscop);
  free(x->cop);
  free(x->L);
  x->iscop = NULL;
  x->cop = NULL;
  x->L = NULL;
  x->ncop = 0;
}
