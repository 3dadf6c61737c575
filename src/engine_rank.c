/* engine: rank (Spearman) correlations of inputs with outputs.
 *
 * Spearman, C. (1904). The proof and measurement of association between two
 * things. American Journal of Psychology 15(1), 72-101: the Pearson
 * correlation of the ranks, ties given their average rank.  For each
 * output, the samples where it is not finite are left out, and the inputs
 * are ranked over the same samples.  The share of each input is
 * rho_i^2 / sum_j rho_j^2 (normalised squares: the fraction of the output's
 * rank variance a linear rank model would attribute to it when inputs are
 * independent). */
#include "engine_internal.h"

#include <math.h>
#include <stdlib.h>

/* Pearson correlation of two rank vectors of length n (mean (n + 1) / 2). */
static double rank_pearson(const double *a, const double *b, size_t n)
{
  const double c = 0.5 * ((double)n + 1.0);
  double sab = 0.0, saa = 0.0, sbb = 0.0;
  for (size_t i = 0; i < n; i++) {
    double da = a[i] - c, db = b[i] - c;
    sab += da * db;
    saa += da * da;
    sbb += db * db;
  }
  if (!(saa > 0.0 && sbb > 0.0)) return NAN;
  return sab / sqrt(saa * sbb);
}

/* The ranks rx of input xi over the m samples listed in keep (copied into
 * sub first), or over all of them when keep is NULL. */
static void input_ranks(const double *xi, const uint32_t *keep, size_t m, double *sub,
                        double *rx, uint64_t *tmp, uint32_t *idx)
{
  if (keep)
    for (size_t s = 0; s < m; s++) sub[s] = xi[keep[s]];
  engine_rank(keep ? sub : xi, m, rx, tmp, idx);
}

/* share[i] = rc[i]^2 / sum_j rc[j]^2 for one output's k correlations. */
static void shares(const double *rc, size_t k, double *share)
{
  double sum2 = 0.0;
  for (size_t i = 0; i < k; i++) sum2 += rc[i] * rc[i];
  for (size_t i = 0; i < k; i++) share[i] = sum2 > 0.0 ? rc[i] * rc[i] / sum2 : NAN;
}

sp_status engine_rank_sensitivity(const double *const *x, size_t k,
                                  const double *const *y, size_t nout, size_t n,
                                  double *rc, double *share, sp_error *err)
{
  if (n > UINT32_MAX)
    return sp_fail(err, SP_EUSAGE, "rank sensitivity: at most %u samples", UINT32_MAX);
  /* When every output is finite on every sample (the usual case), all
   * outputs rank the same samples, so each input is ranked once and
   * correlated with every output's ranks (k + nout sorts instead of
   * nout (k + 1)); the output ranks are kept for that, nout arrays. */
  int all_finite = 1;
  for (size_t o = 0; o < nout && all_finite; o++)
    for (size_t s = 0; s < n && all_finite; s++) all_finite = isfinite(y[o][s]);
  const size_t nry = all_finite ? (nout ? nout : 1) : 1;
  const size_t nn = n ? n : 1;
  double *ry = malloc(nry * nn * sizeof *ry);
  double *rx = malloc(nn * sizeof *rx);
  double *sub = all_finite ? NULL : malloc(nn * sizeof *sub);
  uint64_t *tmp = malloc(2 * nn * sizeof *tmp);
  uint32_t *idx = malloc(2 * nn * sizeof *idx);
  uint32_t *keep = all_finite ? NULL : malloc(nn * sizeof *keep);
  sp_status st = SP_OK;
  if (!ry || !rx || (!all_finite && (!sub || !keep)) || !tmp || !idx) {
    st = sp_fail(err, SP_ENOMEM, "rank sensitivity: cannot allocate %zu ranks", n);
    goto done;
  }
  if (all_finite) {
    for (size_t o = 0; o < nout; o++) engine_rank(y[o], n, ry + o * n, tmp, idx);
    for (size_t i = 0; i < k; i++) {
      input_ranks(x[i], NULL, n, NULL, rx, tmp, idx);
      for (size_t o = 0; o < nout; o++)
        rc[o * k + i] = n >= 2 ? rank_pearson(rx, ry + o * n, n) : NAN;
    }
  } else {
    for (size_t o = 0; o < nout; o++) {
      size_t m = 0;
      for (size_t s = 0; s < n; s++)
        if (isfinite(y[o][s])) keep[m++] = (uint32_t)s;
      for (size_t s = 0; s < m; s++) sub[s] = y[o][keep[s]];
      engine_rank(sub, m, ry, tmp, idx);
      for (size_t i = 0; i < k; i++) {
        input_ranks(x[i], keep, m, sub, rx, tmp, idx);
        rc[o * k + i] = m >= 2 ? rank_pearson(rx, ry, m) : NAN;
      }
    }
  }
  for (size_t o = 0; o < nout; o++) shares(rc + o * k, k, share + o * k);
done:
  free(ry);
  free(rx);
  free(sub);
  free(tmp);
  free(idx);
  free(keep);
  return st;
}
