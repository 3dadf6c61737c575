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
#include <omp.h>
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
 * sub first). */
static void input_ranks(const double *xi, const uint32_t *keep, size_t m, double *sub,
                        double *rx, uint64_t *tmp, uint32_t *idx)
{
  for (size_t s = 0; s < m; s++) sub[s] = xi[keep[s]];
  engine_rank(sub, m, rx, tmp, idx);
}

/* share[i] = rc[i]^2 / sum_j rc[j]^2 for one output's k correlations. */
static void shares(const double *rc, size_t k, double *share)
{
  double sum2 = 0.0;
  for (size_t i = 0; i < k; i++) sum2 += rc[i] * rc[i];
  for (size_t i = 0; i < k; i++) share[i] = sum2 > 0.0 ? rc[i] * rc[i] / sum2 : NAN;
}

int engine_rank_threads(int threads, size_t k, size_t nout)
{
  size_t most = k > nout ? k : nout;
  if (most > ENGINE_RANK_MAX_THREADS) most = ENGINE_RANK_MAX_THREADS;
  if (threads < 1) threads = 1;
  return (size_t)threads < most ? threads : (int)(most ? most : 1);
}

/* Scratch of one thread: ranks, sort keys and indices. */
typedef struct {
  double *rx;
  uint64_t *tmp;
  uint32_t *idx;
} rank_scratch;

static int scratch_alloc(rank_scratch *w, size_t nn)
{
  w->rx = malloc(nn * sizeof *w->rx);
  w->tmp = malloc(2 * nn * sizeof *w->tmp);
  w->idx = malloc(2 * nn * sizeof *w->idx);
  return w->rx && w->tmp && w->idx;
}

static void scratch_free(rank_scratch *w)
{
  free(w->rx);
  free(w->tmp);
  free(w->idx);
}

/* Every output finite on every sample: each output ranked once into ry,
 * then each input ranked once and correlated with every output; the
 * variables are ranked on up to T threads (each rank is exact, so the
 * figures do not depend on T). */
static sp_status rank_all_finite(const double *const *x, size_t k, const double *const *y,
                                 size_t nout, size_t n, int T, double *ry, double *rc)
{
  int failed = 0;
#pragma omp parallel num_threads(T)
  {
    rank_scratch w;
    const int ok = scratch_alloc(&w, n ? n : 1);
    if (!ok) {
#pragma omp atomic write
      failed = 1;
    }
#pragma omp barrier
    if (!failed) {
#pragma omp for schedule(dynamic, 1)
      for (size_t o = 0; o < nout; o++) engine_rank(y[o], n, ry + o * n, w.tmp, w.idx);
#pragma omp for schedule(dynamic, 1)
      for (size_t i = 0; i < k; i++) {
        engine_rank(x[i], n, w.rx, w.tmp, w.idx);
        for (size_t o = 0; o < nout; o++)
          rc[o * k + i] = n >= 2 ? rank_pearson(w.rx, ry + o * n, n) : NAN;
      }
    }
    scratch_free(&w);
  }
  return failed ? SP_ENOMEM : SP_OK;
}

sp_status engine_rank_sensitivity(const double *const *x, size_t k,
                                  const double *const *y, size_t nout, size_t n,
                                  int all_finite, int threads, double *rc, double *share,
                                  sp_error *err)
{
  if (n > UINT32_MAX)
    return sp_fail(err, SP_EUSAGE, "rank sensitivity: at most %u samples", UINT32_MAX);
  /* When every output is finite on every sample (the usual case), all
   * outputs rank the same samples, so each input is ranked once and
   * correlated with every output's ranks (k + nout sorts instead of
   * nout (k + 1)); the output ranks are kept for that, nout arrays. */
  const size_t nn = n ? n : 1;
  sp_status st = SP_OK;
  double *ry = NULL, *rx = NULL, *sub = NULL;
  uint64_t *tmp = NULL;
  uint32_t *idx = NULL, *keep = NULL;
  if (all_finite) {
    ry = malloc((nout ? nout : 1) * nn * sizeof *ry);
    if (!ry || rank_all_finite(x, k, y, nout, n, engine_rank_threads(threads, k, nout), ry, rc)
                   != SP_OK)
      st = sp_fail(err, SP_ENOMEM, "rank sensitivity: cannot allocate %zu ranks", n);
    goto done;
  }
  /* Otherwise each output on its own finite samples, one thread. */
  ry = malloc(nn * sizeof *ry);
  rx = malloc(nn * sizeof *rx);
  sub = malloc(nn * sizeof *sub);
  tmp = malloc(2 * nn * sizeof *tmp);
  idx = malloc(2 * nn * sizeof *idx);
  keep = malloc(nn * sizeof *keep);
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
    for (size_t i = 0; i < k; i++) {
      input_ranks(x[i], keep, m, sub, rx, tmp, idx);
      rc[o * k + i] = m >= 2 ? rank_pearson(rx, ry, m) : NAN;
    }
  }
done:
  if (st == SP_OK)
    for (size_t o = 0; o < nout; o++) shares(rc + o * k, k, share + o * k);
  free(ry);
  free(rx);
  free(sub);
  free(tmp);
  free(idx);
  free(keep);
  return st;
}
