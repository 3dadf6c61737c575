/* engine: streaming moments, exact percentiles by selection, histogram.
 *
 * Moments.  Each block's finite values give n, the mean and the central sums
 * M2, M3, M4 by two passes over the block (the mean first); blocks are then
 * merged strictly in block order with the pairwise update formulas of
 * Chan, T.F., Golub, G.H. & LeVeque, R.J. (1979). Updating formulae and a
 * pairwise algorithm for computing sample variances. Stanford report
 * STAN-CS-79-773 (published 1983 in COMPSTAT 1982, 30-41) for M2 and of
 * Pebay, P. (2008). Formulas for robust, one-pass parallel computation of
 * covariances and arbitrary-order statistical moments. Sandia report
 * SAND2008-6212, eqs. (2.1)-(2.2) for M3 and M4:
 *   d = mean_b - mean_a, n = n_a + n_b,
 *   mean = mean_a + d n_b / n,
 *   M2 = M2_a + M2_b + d^2 n_a n_b / n,
 *   M3 = M3_a + M3_b + d^3 n_a n_b (n_a - n_b) / n^2
 *        + 3 d (n_a M2_b - n_b M2_a) / n,
 *   M4 = M4_a + M4_b + d^4 n_a n_b (n_a^2 - n_a n_b + n_b^2) / n^3
 *        + 6 d^2 (n_a^2 M2_b + n_b^2 M2_a) / n^2 + 4 d (n_a M3_b - n_b M3_a) / n.
 *
 * Percentiles.  Hyndman, R.J. & Fan, Y. (1996). Sample quantiles in
 * statistical packages. The American Statistician 50(4), 361-365,
 * definition 7: with h = (m - 1) p = j + g, Q(p) = y_(j) + g (y_(j+1) - y_(j))
 * (0-based order statistics), interpolated as sp_quantile_sorted does so the
 * numbers equal sp_quantile_select's.  The order statistics are found by
 * selection (sp_select) on the kept values, never by a full sort: the two
 * tails that the shortest coverage interval needs are isolated by two
 * selections and sorted (each holds (1 - p) m values), and the remaining
 * order statistics are placed by a recursive multi-selection (select the
 * middle target, recurse on both sides), O(m log t) for t targets. */
#include "engine_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "scatterprop/stats.h"

/* ---- moments ------------------------------------------------------------- */

void engine_moments_zero(engine_moments *m)
{
  memset(m, 0, sizeof *m);
  m->mean = m->m2 = m->m3 = m->m4 = 0.0;
  m->min = INFINITY;
  m->max = -INFINITY;
}

/* The power-of-two exponent that brings the largest magnitude big into
 * [0.5, 1), clamped to the normal powers of two (as sp_stats_describe
 * scales).  Multiplying by 2^shift is exact barring underflow of values
 * 2^1022 times smaller than the largest, whose contributions lie below the
 * rounding of the sums anyway; so the sums are those of unscaled
 * arithmetic wherever that does not overflow or underflow. */
static int64_t moments_shift(double big)
{
  int e;
  frexp(big, &e);
  int64_t shift = -(int64_t)e;
  if (shift > 1022) shift = 1022;
  if (shift < -1022) shift = -1022;
  return shift;
}

void engine_moments_block(const double *y, size_t n, engine_moments *m)
{
  engine_moments_zero(m);
  double lo = INFINITY, hi = -INFINITY;
  uint64_t c = 0;
  for (size_t i = 0; i < n; i++) {
    double v = y[i];
    if (isfinite(v)) {
      c++;
      lo = v < lo ? v : lo;
      hi = v > hi ? v : hi;
    } else if (isnan(v)) {
      m->nan++;
    } else if (v > 0) {
      m->posinf++;
    } else {
      m->neginf++;
    }
  }
  m->n = c;
  if (c == 0) return;
  m->min = lo;
  m->max = hi;
  const int64_t shift = moments_shift(fmax(fabs(lo), fabs(hi)));
  const double sc = ldexp(1.0, (int)shift);
  const double slo = lo * sc, shi = hi * sc;
  double s = 0.0;
  for (size_t i = 0; i < n; i++)
    if (isfinite(y[i])) s += y[i] * sc;
  double mean = s / (double)c;
  /* Second pass: the correction of the mean (Chan, Golub & LeVeque 1983,
   * The American Statistician 37(3), 242-247, eq. 1.7) and the central
   * sums, all on the scaled values. */
  double d1 = 0.0;
  for (size_t i = 0; i < n; i++)
    if (isfinite(y[i])) d1 += y[i] * sc - mean;
  mean += d1 / (double)c;
  if (mean < slo) mean = slo;
  if (mean > shi) mean = shi;
  double s2 = 0.0, s3 = 0.0, s4 = 0.0;
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(y[i])) continue;
    double d = y[i] * sc - mean, d2 = d * d;
    s2 += d2;
    s3 += d2 * d;
    s4 += d2 * d2;
  }
  m->shift = shift;
  m->mean = ldexp(mean, (int)-shift);
  m->m2 = s2;
  m->m3 = s3;
  m->m4 = s4;
}

double engine_moments_sd(const engine_moments *m)
{
  if (m->n < 2) return NAN;
  return ldexp(sqrt(m->m2 / ((double)m->n - 1.0)), (int)-m->shift);
}

void engine_moments_merge(engine_moments *a, const engine_moments *b)
{
  a->nan += b->nan;
  a->posinf += b->posinf;
  a->neginf += b->neginf;
  if (b->n == 0) return;
  if (a->n == 0) {
    uint64_t nan = a->nan, pi = a->posinf, ni = a->neginf;
    *a = *b;
    a->nan = nan;
    a->posinf = pi;
    a->neginf = ni;
    return;
  }
  /* Both to the smaller shift (the larger magnitude): the other's sums
   * shrink by an exact power of two. */
  const int64_t shift = a->shift < b->shift ? a->shift : b->shift;
  const int ea = (int)(shift - a->shift), eb = (int)(shift - b->shift);
  const double a2 = ldexp(a->m2, 2 * ea), a3 = ldexp(a->m3, 3 * ea), a4 = ldexp(a->m4, 4 * ea);
  const double b2 = ldexp(b->m2, 2 * eb), b3 = ldexp(b->m3, 3 * eb), b4 = ldexp(b->m4, 4 * eb);
  const double sa = ldexp(a->mean, (int)shift), sb = ldexp(b->mean, (int)shift);
  const double na = (double)a->n, nb = (double)b->n, n = na + nb;
  const double d = sb - sa, dn = d / n, dn2 = dn * dn;
  const double m2 = a2 + b2 + d * dn * na * nb;
  const double m3 = a3 + b3 + d * dn2 * na * nb * (na - nb)
                    + 3.0 * dn * (na * b2 - nb * a2);
  const double m4 = a4 + b4 + d * dn2 * dn * na * nb * (na * na - na * nb + nb * nb)
                    + 6.0 * dn2 * (na * na * b2 + nb * nb * a2)
                    + 4.0 * dn * (na * b3 - nb * a3);
  a->mean = ldexp(sa + dn * nb, (int)-shift);
  a->shift = shift;
  a->m2 = m2;
  a->m3 = m3;
  a->m4 = m4;
  a->n += b->n;
  if (b->min < a->min) a->min = b->min;
  if (b->max > a->max) a->max = b->max;
}

size_t engine_compact_finite(double *y, size_t n)
{
  size_t w = 0;
  for (size_t i = 0; i < n; i++)
    if (isfinite(y[i])) y[w++] = y[i];
  return w;
}

/* ---- quantiles ----------------------------------------------------------- */

double engine_hf7_lerp(double a, double b, double g)
{
  /* The interpolation of sp_quantile_sorted (numpy 1.24's _lerp): from the
   * lower end for g < 1/2, from the upper end otherwise, weighted when b - a
   * overflows. */
  if (g == 0.0) return a;
  double d = b - a;
  if (!isfinite(d)) return a * (1.0 - g) + b * g;
  return g < 0.5 ? a + d * g : b - d * (1.0 - g);
}

void engine_hf7_position(size_t m, double p, size_t *j, double *g)
{
  double h = (double)(m - 1) * p;
  double fl = floor(h);
  *j = (size_t)fl;
  *g = h - fl;
  if (*j >= m - 1) {
    *j = m - 1;
    *g = 0.0;
  }
}

static int cmp_size(const void *pa, const void *pb)
{
  size_t a = *(const size_t *)pa, b = *(const size_t *)pb;
  return (a > b) - (a < b);
}

/* Places y[t[i]] for the ascending distinct targets t[0..nt) within
 * [lo, hi) as a full sort of that range would. */
static void multiselect(double *y, size_t lo, size_t hi, const size_t *t, size_t nt)
{
  while (nt > 0) {
    size_t mid = nt / 2, k = t[mid];
    sp_select(y + lo, hi - lo, k - lo);
    /* recurse on the smaller side, loop on the larger */
    if (mid < nt - mid - 1) {
      multiselect(y, lo, k, t, mid);
      lo = k + 1;
      t += mid + 1;
      nt -= mid + 1;
    } else {
      multiselect(y, k + 1, hi, t + mid + 1, nt - mid - 1);
      hi = k;
      nt = mid;
    }
  }
}

/* ---- order statistics by bracketing --------------------------------------
 * For large m the order statistics are found without rearranging y: a
 * pseudorandom subsample of BRACKET_SUB values (positions from a fixed
 * stream, so the work is reproducible) gives a value a above the (M - q)-th
 * smallest and b below the (M - q)-th largest with overwhelming
 * probability (6 binomial standard deviations of subsample rank, plus 2).
 * Pass 1 counts the values below a, above b, and in each of BRACKET_BINS
 * equal bins of [a, b]; pass 2 copies the two tails (which the shortest
 * interval needs sorted anyway) and the few bins that hold a wanted order
 * statistic.  The tails are radix-sorted, the wanted bins sorted, and the
 * order statistics read off by their ranks: exact, in two streaming passes.
 * If a bracket misses (counts below or above fall short, as heavily tied
 * data can make them), the selection path is taken instead.  Bracketing
 * from a subsample is the idea of Floyd, R.W. & Rivest, R.L. (1975).
 * Expected time bounds for selection. Communications of the ACM 18(3),
 * 165-172, applied here to many ranks at once. */
#define BRACKET_MIN 131072u   /* below this, selection is as fast */
#define BRACKET_SUB 65536u    /* subsample size */
#define BRACKET_BINS 65536u   /* bins of the middle range */
#define BRACKET_SIGMAS 6.0    /* bracket half-width in rank standard deviations */

static int cmp_dbl(const void *pa, const void *pb)
{
  double a = *(const double *)pa, b = *(const double *)pb;
  return (a > b) - (a < b);
}

typedef struct {
  size_t m, nlow, nhigh;   /* values below a, above b */
  const double *low, *high; /* sorted */
  const size_t *cum;       /* cum[b]: values below bin b (from a) */
  const size_t *off;       /* start of bin b's sorted copy in mid */
  const double *mid;
} bracket;

static double bracket_get(const bracket *br, size_t t)
{
  if (t < br->nlow) return br->low[t];
  if (t >= br->m - br->nhigh) return br->high[t - (br->m - br->nhigh)];
  /* the bin holding rank t: the last b with cum[b] <= t */
  size_t lo = 0, hi = BRACKET_BINS;
  while (hi - lo > 1) {
    size_t md = lo + (hi - lo) / 2;
    if (br->cum[md] <= t) lo = md;
    else hi = md;
  }
  return br->mid[br->off[lo] + (t - br->cum[lo])];
}

static size_t bin_of(double v, double a, double scale)
{
  size_t b = (size_t)((v - a) * scale);
  return b < BRACKET_BINS ? b : BRACKET_BINS - 1;
}

/* Returns 1 and fills pct and o when the bracketing succeeds, 0 to fall back,
 * -1 when memory runs out. */
static int order_stats_bracket(const double *y, size_t m, const double *p, size_t np,
                               size_t qq, size_t tail, int have_sym, size_t s_lo,
                               size_t s_hi, double *pct, sp_engine_output *o)
{
  int ret = -1;
  double *sub = malloc(BRACKET_SUB * sizeof *sub);
  uint64_t *tmp = malloc(2 * BRACKET_SUB * sizeof *tmp);
  size_t *cnt = calloc(BRACKET_BINS, sizeof *cnt);
  size_t *cum = malloc(BRACKET_BINS * sizeof *cum);
  size_t *off = malloc(BRACKET_BINS * sizeof *off);
  size_t *fill = calloc(BRACKET_BINS, sizeof *fill);
  unsigned char *need = calloc(BRACKET_BINS, 1);
  double *low = NULL, *high = NULL, *mid = NULL;
  uint64_t *stmp = NULL;
  if (!sub || !tmp || !cnt || !cum || !off || !fill || !need) goto out;

  sp_pcg64 g;
  sp_rng_block_stream(&g, m, 0, 0); /* positions depend on m only */
  for (size_t i = 0; i < BRACKET_SUB; i++) sub[i] = y[sp_rng_below(&g, m)];
  engine_sort_doubles(sub, BRACKET_SUB, tmp);
  const double ms = BRACKET_SUB, pt = (double)tail / (double)m;
  const double dev = BRACKET_SIGMAS * sqrt(ms * pt * (1.0 - pt)) + 2.0;
  double ra = ceil(pt * ms + dev), rb = floor((double)qq / (double)m * ms - dev);
  ret = 0;
  if (!(ra < rb && rb < ms && ra >= 0)) goto out;
  const double a = sub[(size_t)ra], b = sub[(size_t)rb];
  if (!(a < b)) goto out;
  const double scale = (double)BRACKET_BINS / (b - a);

  /* pass 1: counts */
  size_t nlow = 0, nhigh = 0;
  for (size_t i = 0; i < m; i++) {
    double v = y[i];
    if (v < a) nlow++;
    else if (v > b) nhigh++;
    else cnt[bin_of(v, a, scale)]++;
  }
  if (nlow < tail || nhigh < tail) goto out;
  size_t c = nlow;
  for (size_t k = 0; k < BRACKET_BINS; k++) {
    cum[k] = c;
    c += cnt[k];
  }
  /* the wanted ranks in the middle */
  for (size_t i = 0; i < np + 1; i++) {
    size_t cand[2];
    size_t nc = 0;
    if (i < np) {
      size_t j;
      double gg;
      engine_hf7_position(m, p[i], &j, &gg);
      cand[nc++] = j;
      if (gg > 0.0) cand[nc++] = j + 1;
    } else if (have_sym) {
      cand[nc++] = s_lo;
      cand[nc++] = s_hi;
    }
    for (size_t q = 0; q < nc; q++) {
      size_t t = cand[q];
      if (t < nlow || t >= m - nhigh) continue;
      size_t lo = 0, hi = BRACKET_BINS;
      while (hi - lo > 1) {
        size_t md = lo + (hi - lo) / 2;
        if (cum[md] <= t) lo = md;
        else hi = md;
      }
      need[lo] = 1;
    }
  }
  size_t nmid = 0;
  for (size_t k = 0; k < BRACKET_BINS; k++) {
    off[k] = nmid;
    if (need[k]) nmid += cnt[k];
  }
  ret = -1;
  low = malloc(nlow * sizeof *low);
  high = malloc(nhigh * sizeof *high);
  mid = malloc((nmid ? nmid : 1) * sizeof *mid);
  size_t big = nlow > nhigh ? nlow : nhigh;
  stmp = malloc(2 * big * sizeof *stmp);
  if (!low || !high || !mid || !stmp) goto out;

  /* pass 2: copies */
  size_t il = 0, ih = 0;
  for (size_t i = 0; i < m; i++) {
    double v = y[i];
    if (v < a) {
      low[il++] = v;
    } else if (v > b) {
      high[ih++] = v;
    } else {
      size_t k = bin_of(v, a, scale);
      if (need[k]) mid[off[k] + fill[k]++] = v;
    }
  }
  engine_sort_doubles(low, nlow, stmp);
  engine_sort_doubles(high, nhigh, stmp);
  for (size_t k = 0; k < BRACKET_BINS; k++)
    if (need[k] && cnt[k] > 1) qsort(mid + off[k], cnt[k], sizeof *mid, cmp_dbl);

  bracket br = {m, nlow, nhigh, low, high, cum, off, mid};
  /* shortest interval: y_(r) = low[r], y_(r+q) from high */
  size_t best = 0;
  double w = INFINITY;
  const size_t base = m - nhigh;
  for (size_t r = 0; r < tail; r++) {
    double d = high[r + qq - base] - low[r];
    if (d < w) {
      w = d;
      best = r;
    }
  }
  o->short_lo = low[best];
  o->short_hi = high[best + qq - base];
  for (size_t i = 0; i < np; i++) {
    size_t j;
    double gg;
    engine_hf7_position(m, p[i], &j, &gg);
    double yj = bracket_get(&br, j);
    pct[i] = gg > 0.0 ? engine_hf7_lerp(yj, bracket_get(&br, j + 1), gg) : yj;
  }
  if (have_sym) {
    o->sym_lo = bracket_get(&br, s_lo);
    o->sym_hi = bracket_get(&br, s_hi);
  }
  ret = 1;
out:
  free(sub);
  free(tmp);
  free(cnt);
  free(cum);
  free(off);
  free(fill);
  free(need);
  free(low);
  free(high);
  free(mid);
  free(stmp);
  return ret;
}

sp_status engine_order_stats(double *y, size_t m, const double *p, size_t np,
                             double cov, double *pct, sp_engine_output *o,
                             sp_error *err)
{
  o->sym_lo = o->sym_hi = o->short_lo = o->short_hi = NAN;
  if (m == 0) {
    for (size_t i = 0; i < np; i++) pct[i] = NAN;
    return SP_OK;
  }
  /* JCGM 101:2008 7.7: q = pM rounded half up; the shortest interval needs
   * y_(r) and y_(r+q) for r = 1..M-q, i.e. the lowest M - q and the highest
   * M - q values, sorted. */
  size_t qq = engine_jcgm_q(m, cov);
  size_t tail = qq < m ? m - qq : 0; /* M - q */
  size_t s_lo = 0, s_hi = 0;
  int have_sym = sp_engine_symmetric_index(m, cov, &s_lo, &s_hi);
  if (m >= BRACKET_MIN && qq >= 1 && tail >= 1 && tail <= qq) {
    int r = order_stats_bracket(y, m, p, np, qq, tail, have_sym, s_lo, s_hi, pct, o);
    if (r < 0) return sp_fail(err, SP_ENOMEM, "cannot allocate the order-statistic scratch");
    if (r > 0) return SP_OK;
  }
  size_t low_end = 0, high_begin = m; /* sorted ranges [0, low_end), [high_begin, m) */
  uint64_t *tmp = NULL;
  if (qq >= 1 && tail >= 1) {
    if (tail > qq) { /* p < 1/2: the two tails overlap; sort everything */
      tmp = malloc(2 * m * sizeof *tmp);
      if (!tmp) return sp_fail(err, SP_ENOMEM, "cannot allocate %zu values for sorting", 2 * m);
      engine_sort_doubles(y, m, tmp);
      low_end = m;
      high_begin = m;
    } else {
      tmp = malloc(2 * tail * sizeof *tmp);
      if (!tmp) return sp_fail(err, SP_ENOMEM, "cannot allocate %zu values for sorting", 2 * tail);
      sp_select(y, m, tail - 1);
      if (qq > tail) sp_select(y + tail, m - tail, qq - tail);
      engine_sort_doubles(y, tail, tmp);
      engine_sort_doubles(y + qq, m - qq, tmp);
      low_end = tail;
      high_begin = qq;
    }
    /* shortest: the first r minimising y_(r+q) - y_(r) (JCGM 7.7.2) */
    size_t best = 0;
    double w = INFINITY;
    for (size_t r = 0; r < tail; r++) {
      double d = y[r + qq] - y[r];
      if (d < w) {
        w = d;
        best = r;
      }
    }
    o->short_lo = y[best];
    o->short_hi = y[best + qq];
    free(tmp);
  }

  /* The remaining order statistics: HF7 needs y_(j) and y_(j+1). */
  size_t *t = malloc((2 * np + 2) * sizeof *t);
  if (!t) return sp_fail(err, SP_ENOMEM, "cannot allocate the percentile targets");
  size_t nt = 0;
  for (size_t i = 0; i < np; i++) {
    size_t j;
    double g;
    engine_hf7_position(m, p[i], &j, &g);
    t[nt++] = j;
    if (g > 0.0) t[nt++] = j + 1;
  }
  if (have_sym) {
    t[nt++] = s_lo;
    t[nt++] = s_hi;
  }
  qsort(t, nt, sizeof *t, cmp_size);
  size_t w = 0;
  for (size_t i = 0; i < nt; i++) {
    if (t[i] < low_end || t[i] >= high_begin) continue; /* already in place */
    if (w > 0 && t[w - 1] == t[i]) continue;
    t[w++] = t[i];
  }
  multiselect(y, low_end, high_begin, t, w);
  free(t);

  for (size_t i = 0; i < np; i++) {
    size_t j;
    double g;
    engine_hf7_position(m, p[i], &j, &g);
    pct[i] = g > 0.0 ? engine_hf7_lerp(y[j], y[j + 1], g) : y[j];
  }
  if (have_sym) {
    o->sym_lo = y[s_lo];
    o->sym_hi = y[s_hi];
  }
  return SP_OK;
}

/* ---- histogram ------------------------------------------------------------- */

void engine_histogram(const double *y, size_t m, double lo, double hi, size_t nb,
                      uint64_t *counts, uint64_t *below, uint64_t *above)
{
  memset(counts, 0, nb * sizeof *counts);
  *below = *above = 0;
  if (nb == 0) return;
  const double width = hi - lo;
  if (!(width > 0.0)) { /* a single value (or an empty range): one bin */
    for (size_t i = 0; i < m; i++) {
      if (y[i] < lo) (*below)++;
      else if (y[i] > hi) (*above)++;
      else counts[0]++;
    }
    return;
  }
  const double scale = (double)nb / width;
  for (size_t i = 0; i < m; i++) {
    double v = y[i];
    if (v < lo) {
      (*below)++;
    } else if (v > hi) {
      (*above)++;
    } else {
      /* bins [lo + i w, lo + (i + 1) w), the last one closed at hi */
      size_t b = (size_t)((v - lo) * scale);
      counts[b < nb ? b : nb - 1]++;
    }
  }
}
