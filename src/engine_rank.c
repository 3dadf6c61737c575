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

sp_status engine_rank_sensitivity(const double *const *x, size_t k,
                                  const double *const *y, size_t nout, size_t n,
                                  double *rc, double *share, sp_error *err)
{
  if (n > UINT32_MAX)
    return sp_fail(err, SP_EUSAGE, "rank sensitivity: at most %u samples", UINT32_MAX);
  double *ry = malloc((n ? n : 1) * sizeof *ry);
  double *rx = malloc((n ? n : 1) * sizeof *rx);
  double *sub = malloc((n ? n : 1) * sizeof *sub);
  uint64_t *tmp = malloc((n ? 2 * n : 1) * sizeof *tmp);
  uint32_t *idx = malloc((n ? 2 * n : 1) * sizeof *idx);
  uint32_t *keep = malloc((n ? n : 1) * sizeof *keep);
  sp_status st = SP_OK;
  if (!ry || !rx || !sub || !tmp || !idx || !keep) {
    st = sp_fail(err, SP_ENOMEM, "rank sensitivity: cannot allocate %zu ranks", n);
    goto done;
  }
  for (size_t o = 0; o < nout; o++) {
    size_t m = 0;
    for (size_t s = 0; s < n; s++)
      if (isfinite(y[o][s])) keep[m++] = (uint32_t)s;
    for (size_t s = 0; s < m; s++) sub[s] = y[o][keep[s]];
    engine_rank(sub, m, ry, tmp, idx);
    double sum2 = 0.0;
    for (size_t i = 0; i < k; i++) {
      for (size_t s = 0; s < m; s++) sub[s] = x[i][keep[s]];
      engine_rank(sub, m, rx, tmp, idx);
      double r = m >= 2 ? rank_pearson(rx, ry, m) : NAN;
      rc[o * k + i] = r;
      sum2 += r * r;
    }
    for (size_t i = 0; i < k; i++) {
      double r = rc[o * k + i];
      share[o * k + i] = sum2 > 0.0 ? r * r / sum2 : NAN;
    }
  }
done:
  free(ry);
  free(rx);
  free(sub);
  free(tmp);
  free(idx);
  free(keep);
  return st;
}
