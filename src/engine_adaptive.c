/* engine: adaptive Monte Carlo, JCGM 101:2008 clause 7.9.
 *
 * JCGM 101:2008, Supplement 1 to the GUM - Propagation of distributions
 * using a Monte Carlo method, 7.9.4: batches of M trials (M = max(J, 10^4),
 * J the smallest integer >= 100 / (1 - p); engine_adaptive_batch rounds M
 * up to whole blocks); after batch h >= 2, with y^(r), u(y^(r)) and the
 * symmetric interval ends y_low^(r), y_high^(r) of each batch r, the
 * standard deviation of their average
 *   s = sqrt( sum_r (x^(r) - mean x)^2 / (h (h - 1)) )
 * is formed for each of the four quantities; the computation has
 * stabilised when 2 s <= delta for all four, delta being the numerical
 * tolerance of u(y) (from all h M values) for ndig significant digits
 * (7.9.2), or the tolerance the caller gives.  Every output must
 * stabilise.  The final results use all h M values (7.9.4 k). */
#include "engine_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "scatterprop/stats.h"

double sp_engine_jcgm_tolerance(double z, unsigned ndig)
{
  if (!isfinite(z) || z == 0.0 || ndig == 0) return NAN;
  double a = fabs(z);
  /* z = c 10^l with c an ndig-digit integer: l from the decimal exponent,
   * raised by one when rounding c to ndig digits carries into a new digit
   * (0.0999 with ndig = 2 is 10 x 10^-2). */
  int l = (int)floor(log10(a)) - (int)ndig + 1;
  double c = nearbyint(a / pow(10.0, l));
  if (c >= pow(10.0, ndig)) l += 1;
  if (c < pow(10.0, ndig - 1)) l -= 1; /* log10 rounded up at a power of 10 */
  return 0.5 * pow(10.0, l);
}

sp_status engine_adaptive_init(engine_adaptive *a, size_t nout, uint64_t batch,
                               sp_error *err)
{
  memset(a, 0, sizeof *a);
  a->nout = nout;
  a->batch = batch;
  a->cap = 16;
  a->est = malloc(a->cap * nout * 4 * sizeof *a->est);
  a->scratch = malloc((size_t)batch * sizeof *a->scratch);
  if (!a->est || !a->scratch) {
    engine_adaptive_free(a);
    return sp_fail(err, SP_ENOMEM, "cannot allocate the adaptive batches");
  }
  return SP_OK;
}

void engine_adaptive_free(engine_adaptive *a)
{
  if (!a) return;
  free(a->est);
  free(a->scratch);
  memset(a, 0, sizeof *a);
}

sp_status engine_adaptive_add(engine_adaptive *a, double *const *vals,
                              double coverage, sp_error *err)
{
  if (a->h == a->cap) {
    double *p = realloc(a->est, a->cap * 2 * a->nout * 4 * sizeof *p);
    if (!p) return sp_fail(err, SP_ENOMEM, "cannot allocate the adaptive batches");
    a->est = p;
    a->cap *= 2;
  }
  double *e = a->est + a->h * a->nout * 4;
  for (size_t o = 0; o < a->nout; o++) {
    size_t m = 0;
    for (uint64_t s = 0; s < a->batch; s++)
      if (isfinite(vals[o][s])) a->scratch[m++] = vals[o][s];
    engine_moments mo;
    engine_moments_block(a->scratch, m, &mo);
    e[4 * o + 0] = m ? mo.mean : NAN;
    e[4 * o + 1] = engine_moments_sd(&mo);
    size_t lo, hi;
    if (sp_engine_symmetric_index(m, coverage, &lo, &hi)) {
      e[4 * o + 2] = sp_select(a->scratch, m, lo);
      /* a[lo + 1..m) holds the values above: select there */
      e[4 * o + 3] = sp_select(a->scratch + lo + 1, m - lo - 1, hi - lo - 1);
    } else {
      e[4 * o + 2] = e[4 * o + 3] = NAN;
    }
  }
  a->h++;
  return SP_OK;
}

int engine_adaptive_stable(const engine_adaptive *a, const double *u_all,
                           unsigned ndig, const double *tol, sp_engine_output *out)
{
  if (a->h < 2) return 0;
  int stable = 1;
  const double h = (double)a->h;
  for (size_t o = 0; o < a->nout; o++) {
    double two_s[4];
    for (int q = 0; q < 4; q++) {
      double s = 0.0;
      for (size_t r = 0; r < a->h; r++) s += a->est[(r * a->nout + o) * 4 + q];
      double mean = s / h, ss = 0.0;
      for (size_t r = 0; r < a->h; r++) {
        double d = a->est[(r * a->nout + o) * 4 + q] - mean;
        ss += d * d;
      }
      two_s[q] = 2.0 * sqrt(ss / (h * (h - 1.0)));
    }
    double delta = tol ? tol[o] : sp_engine_jcgm_tolerance(u_all[o], ndig);
    out[o].delta = delta;
    out[o].s2_mean = two_s[0];
    out[o].s2_sd = two_s[1];
    out[o].s2_lo = two_s[2];
    out[o].s2_hi = two_s[3];
    for (int q = 0; q < 4; q++)
      if (!(two_s[q] <= delta)) stable = 0;
  }
  return stable;
}
