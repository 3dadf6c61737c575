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
#include <omp.h>
#include <stdlib.h>
#include <string.h>
#if defined(__x86_64__) && defined(__SSE2__)
#include <emmintrin.h>
#endif

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

/* A block is summed in MOMENT_LANES interleaved partial sums (value i goes
 * to lane i mod MOMENT_LANES, the rest of the block to lane 0, and the
 * lanes are added pairwise at the end): the lanes are independent chains
 * of additions, which the compiler turns into vector instructions (the
 * fixed-count inner loops vectorise at -O2, as the model's kernels do),
 * instead of one chain that waits on each addition.  Blocks with a
 * non-finite value (rare) take a scalar path that skips them.  The order
 * of the additions is fixed by the block alone, so the figures do not
 * depend on the thread count. */
#define MOMENT_LANES 4

/* Sums of the lanes, in a fixed order. */
static double lanes_sum(const double *a) { return (a[0] + a[1]) + (a[2] + a[3]); }

/* Sets the finite count, min, max and the non-finite counts of m from
 * y[0..n); returns 1 when every value is finite, and then *sum is the sum
 * of the values (in the lanes, unscaled; it may have overflowed). */
static int moments_scan(const double *y, size_t n, engine_moments *m, double *sum)
{
  const size_t nl = n - n % MOMENT_LANES;
  double lo[MOMENT_LANES], hi[MOMENT_LANES], fin[MOMENT_LANES], s[MOMENT_LANES];
  for (size_t l = 0; l < MOMENT_LANES; l++) {
    lo[l] = INFINITY;
    hi[l] = -INFINITY;
    fin[l] = s[l] = 0.0;
  }
  /* min and max of the lanes (NaN compares false and drops out), a sum of
   * y - y that is NaN as soon as any value is infinite or NaN, and the sum */
  for (size_t i = 0; i < nl; i += MOMENT_LANES)
    for (size_t l = 0; l < MOMENT_LANES; l++) {
      const double v = y[i + l];
      lo[l] = v < lo[l] ? v : lo[l];
      hi[l] = v > hi[l] ? v : hi[l];
      fin[l] += v - v;
      s[l] += v;
    }
  double vlo = INFINITY, vhi = -INFINITY;
  for (size_t l = 0; l < MOMENT_LANES; l++) {
    vlo = lo[l] < vlo ? lo[l] : vlo;
    vhi = hi[l] > vhi ? hi[l] : vhi;
  }
  int all = lanes_sum(fin) == 0.0;
  for (size_t i = nl; i < n && all; i++) {
    const double v = y[i];
    all = isfinite(v);
    vlo = v < vlo ? v : vlo;
    vhi = v > vhi ? v : vhi;
    s[0] += v;
  }
  if (all) {
    m->n = n;
    m->min = vlo;
    m->max = vhi;
    *sum = lanes_sum(s);
    return 1;
  }
  uint64_t c = 0;
  vlo = INFINITY;
  vhi = -INFINITY;
  for (size_t i = 0; i < n; i++) {
    const double v = y[i];
    if (isfinite(v)) {
      c++;
      vlo = v < vlo ? v : vlo;
      vhi = v > vhi ? v : vhi;
    } else if (isnan(v)) {
      m->nan++;
    } else if (v > 0) {
      m->posinf++;
    } else {
      m->neginf++;
    }
  }
  m->n = c;
  m->min = c ? vlo : INFINITY;
  m->max = c ? vhi : -INFINITY;
  return 0;
}

void engine_moments_block(const double *y, size_t n, engine_moments *m)
{
  engine_moments_zero(m);
  double sum = 0.0;
  const int all = moments_scan(y, n, m, &sum);
  const uint64_t c = m->n;
  if (c == 0) return;
  const size_t nl = all ? n - n % MOMENT_LANES : 0; /* the lanes' share */
  const double big = fmax(fabs(m->min), fabs(m->max));
  const int64_t shift = moments_shift(big);
  const double sc = ldexp(1.0, (int)shift);
  const double slo = m->min * sc, shi = m->max * sc;
  const double cn = (double)c;
  /* The mean of the scaled values: the scan's sum times 2^shift (exact)
   * when it neither overflowed nor was taken over values so small that
   * they lose digits (then the scaled values are summed again). */
  double mean;
  if (all && isfinite(sum) && big >= 0x1p-960) {
    mean = ldexp(sum, (int)shift) / cn;
  } else {
    double s[MOMENT_LANES] = {0.0};
    for (size_t i = 0; i < nl; i += MOMENT_LANES)
      for (size_t l = 0; l < MOMENT_LANES; l++) s[l] += y[i + l] * sc;
    for (size_t i = nl; i < n; i++)
      if (isfinite(y[i])) s[0] += y[i] * sc;
    mean = lanes_sum(s) / cn;
  }
  if (mean < slo) mean = slo;
  if (mean > shi) mean = shi;
  /* The sums of powers of d = y sc - mean and of d itself, whose mean
   * delta corrects the mean (Chan, Golub & LeVeque 1983, The American
   * Statistician 37(3), 242-247, eq. 1.7: the corrected two-pass
   * algorithm).  The central sums about the corrected mean follow by the
   * binomial expansion with S1 = c delta:
   *   M2 = S2 - delta S1,  M3 = S3 - 3 delta S2 + 2 c delta^3,
   *   M4 = S4 - 4 delta S3 + 6 delta^2 S2 - 3 c delta^4;
   * delta is of the order of the rounding of the mean, so the corrections
   * are tiny and cancel nothing. */
  double a1[MOMENT_LANES] = {0.0}, a2[MOMENT_LANES] = {0.0}, a3[MOMENT_LANES] = {0.0},
         a4[MOMENT_LANES] = {0.0};
  for (size_t i = 0; i < nl; i += MOMENT_LANES)
    for (size_t l = 0; l < MOMENT_LANES; l++) {
      const double d = y[i + l] * sc - mean, d2 = d * d;
      a1[l] += d;
      a2[l] += d2;
      a3[l] += d2 * d;
      a4[l] += d2 * d2;
    }
  for (size_t i = nl; i < n; i++) {
    if (!isfinite(y[i])) continue;
    const double d = y[i] * sc - mean, d2 = d * d;
    a1[0] += d;
    a2[0] += d2;
    a3[0] += d2 * d;
    a4[0] += d2 * d2;
  }
  const double s1 = lanes_sum(a1), s2 = lanes_sum(a2), s3 = lanes_sum(a3), s4 = lanes_sum(a4);
  const double delta = s1 / cn, dl2 = delta * delta;
  double m2 = s2 - delta * s1;
  if (m2 < 0.0) m2 = 0.0;
  mean += delta;
  if (mean < slo) mean = slo;
  if (mean > shi) mean = shi;
  m->shift = shift;
  m->mean = ldexp(mean, (int)-shift);
  m->m2 = m2;
  m->m3 = s3 - 3.0 * delta * s2 + 2.0 * cn * dl2 * delta;
  m->m4 = s4 - 4.0 * delta * s3 + 6.0 * dl2 * s2 - 3.0 * cn * dl2 * dl2;
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

/* The first index of chunk c when [0, m) is cut into C contiguous chunks
 * whose sizes differ by at most one (chunk_start(m, C, C) = m). */
static size_t chunk_start(size_t m, size_t C, size_t c)
{
  return m / C * c + (c < m % C ? c : m % C);
}

/* ---- order statistics by bracketing --------------------------------------
 * For large m the order statistics are found without rearranging y: a
 * pseudorandom subsample of BRACKET_SUB values (positions from a fixed
 * stream, so the work is reproducible) gives a value a above the (M - q)-th
 * smallest and b below the (M - q)-th largest with overwhelming
 * probability (6 binomial standard deviations of subsample rank, plus 2).
 * Each value goes to a slot: 0 below a (the low tail), 1..BRACKET_BINS for
 * equal bins of [a, b], BRACKET_BINS + 1 above b (the high tail), by a
 * formula that is monotone in the value, so the slots are ordered.  Pass 1
 * counts the slots; pass 2 copies the two tails (which the shortest
 * interval needs sorted anyway) and the few bins that hold a wanted order
 * statistic, each slot to its own stretch of one buffer.  Both passes are
 * free of branches on the data (a slot not wanted writes to a spare cell
 * without advancing), so random data costs no mispredictions.  The
 * stretches are sorted and the order statistics read off by their ranks:
 * exact, in two streaming passes.  If a bracket misses (the tails hold
 * fewer than M - q values, as heavily tied data can make them), the
 * selection path is taken instead.  Bracketing from a subsample is the
 * idea of Floyd, R.W. & Rivest, R.L. (1975). Expected time bounds for
 * selection. Communications of the ACM 18(3), 165-172, applied here to
 * many ranks at once. */
#define BRACKET_MIN 131072u   /* below this, selection is as fast */
#define BRACKET_SIGMAS 6.0    /* bracket half-width in rank standard deviations */
/* BRACKET_SUB and BRACKET_BINS: engine_internal.h (the memory estimate
 * counts their tables) */

/* The slot of v: floor((v - a) scale) + 1 clamped to [0, BRACKET_BINS + 1].
 * On x86-64 the clamps are the SSE2 instructions maxsd and minsd, whose
 * results equal the C selects below (NaN, which finite data cannot give,
 * goes to 0 in both): GCC 12 keeps the selects as branches, which random
 * data mispredicts.  Either way only the speed depends on it: any
 * monotone slot function gives the same order statistics. */
static inline size_t slot_of(double v, double a, double scale)
{
  const double top = (double)(BRACKET_BINS + 1u);
#if defined(__x86_64__) && defined(__SSE2__)
  __m128d u = _mm_set_sd((v - a) * scale + 1.0);
  u = _mm_max_sd(u, _mm_setzero_pd());
  u = _mm_min_sd(u, _mm_set_sd(top));
  return (size_t)_mm_cvttsd_si64(u);
#else
  double u = (v - a) * scale + 1.0;
  u = u > 0.0 ? u : 0.0;
  u = u < top ? u : top;
  return (size_t)u;
#endif
}

typedef struct {
  const size_t *cum;        /* cum[s]: values in slots below s */
  const size_t *off;        /* start of slot s's sorted stretch in buf */
  const double *buf;
} bracket;

/* The slot holding rank t: the last s with cum[s] <= t. */
static size_t slot_of_rank(const size_t *cum, size_t t)
{
  size_t lo = 0, hi = BRACKET_SLOTS;
  while (hi - lo > 1) {
    size_t md = lo + (hi - lo) / 2;
    if (cum[md] <= t) lo = md;
    else hi = md;
  }
  return lo;
}

/* The order statistic of rank t (its slot was copied and sorted). */
static double bracket_get(const bracket *br, size_t t)
{
  size_t s = slot_of_rank(br->cum, t);
  return br->buf[br->off[s] + (t - br->cum[s])];
}

/* Returns 1 and fills pct and o when the bracketing succeeds, 0 to fall back,
 * -1 when memory runs out. */
static int order_stats_bracket(const double *y, size_t m, const double *p, size_t np,
                               size_t qq, size_t tail, int have_sym, size_t s_lo,
                               size_t s_hi, int threads, double *pct, sp_engine_output *o)
{
  enum { HIGH = BRACKET_BINS + 1u };
  /* The passes run over C contiguous chunks of y, one per thread; chunk c
   * counts into its own row of ccnt, which then becomes chunk c's write
   * positions, so every chunk writes its own part of each stretch (and
   * its own spare cell).  Counts are sums and the stretches are sorted
   * afterwards, so the figures do not depend on C. */
  const size_t C = threads > 1 ? (size_t)threads : 1;
  int ret = -1;
  double *sub = malloc(BRACKET_SUB * sizeof *sub);
  uint64_t *tmp = malloc(2 * BRACKET_SUB * sizeof *tmp);
  size_t *cnt = calloc(BRACKET_SLOTS, sizeof *cnt);
  size_t *ccnt = calloc(C * BRACKET_SLOTS, sizeof *ccnt);
  size_t *cum = malloc(BRACKET_SLOTS * sizeof *cum);
  size_t *off = malloc(BRACKET_SLOTS * sizeof *off);
  size_t *inc = calloc(BRACKET_SLOTS, sizeof *inc);
  double *buf = NULL;
  uint64_t *stmp = NULL;
  if (!sub || !tmp || !cnt || !ccnt || !cum || !off || !inc) goto out;

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
  const double scale = (double)BRACKET_BINS / (b - a);
  if (!(a < b) || !isfinite(scale)) goto out;

  /* pass 1: counts */
#pragma omp parallel for num_threads(threads > 1 ? threads : 1) schedule(static, 1)
  for (size_t ch = 0; ch < C; ch++) {
    size_t *cc = ccnt + ch * BRACKET_SLOTS;
    for (size_t i = chunk_start(m, C, ch), end = chunk_start(m, C, ch + 1); i < end; i++)
      cc[slot_of(y[i], a, scale)]++;
  }
  for (size_t ch = 0; ch < C; ch++)
    for (size_t k = 0; k < BRACKET_SLOTS; k++) cnt[k] += ccnt[ch * BRACKET_SLOTS + k];
  const size_t nlow = cnt[0], nhigh = cnt[HIGH];
  if (nlow < tail || nhigh < tail) goto out;
  size_t c = 0;
  for (size_t k = 0; k < BRACKET_SLOTS; k++) {
    cum[k] = c;
    c += cnt[k];
  }
  /* the slots to copy: both tails, and those of the wanted ranks */
  inc[0] = inc[HIGH] = 1;
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
    for (size_t q = 0; q < nc; q++) inc[slot_of_rank(cum, cand[q])] = 1;
  }
  size_t ncopy = 0, big = 0;
  for (size_t k = 0; k < BRACKET_SLOTS; k++) {
    off[k] = ncopy;
    if (inc[k]) {
      ncopy += cnt[k];
      if (cnt[k] > big) big = cnt[k];
    }
  }
  /* chunk c's write positions: its slot's start plus what the chunks
   * before it put there; slots not copied go to chunk c's spare cell */
  for (size_t k = 0; k < BRACKET_SLOTS; k++) {
    size_t at = off[k];
    for (size_t ch = 0; ch < C; ch++) {
      size_t *pc = ccnt + ch * BRACKET_SLOTS + k, n_here = *pc;
      *pc = inc[k] ? at : ncopy + ch;
      at += n_here;
    }
  }
  ret = -1;
  /* the stretches are sorted on up to two threads (the two tails are the
   * big ones), each with its own scratch */
  const int sorters = threads > 1 ? 2 : 1;
  buf = malloc((ncopy + C) * sizeof *buf);
  stmp = malloc((size_t)sorters * 2 * (big ? big : 1) * sizeof *stmp);
  if (!buf || !stmp) goto out;

  /* pass 2: copies */
#pragma omp parallel for num_threads(threads > 1 ? threads : 1) schedule(static, 1)
  for (size_t ch = 0; ch < C; ch++) {
    size_t *pc = ccnt + ch * BRACKET_SLOTS;
    for (size_t i = chunk_start(m, C, ch), end = chunk_start(m, C, ch + 1); i < end; i++) {
      const double v = y[i];
      const size_t k = slot_of(v, a, scale);
      buf[pc[k]] = v;
      pc[k] += inc[k];
    }
  }
  /* the slots to sort, the two tails first */
  size_t nsort = 0;
  size_t *list = malloc(BRACKET_SLOTS * sizeof *list);
  if (!list) goto out;
  list[nsort++] = 0;
  list[nsort++] = HIGH;
  for (size_t k = 1; k < HIGH; k++)
    if (inc[k] && cnt[k] > 1) list[nsort++] = k;
#pragma omp parallel for num_threads(sorters) schedule(dynamic, 1)
  for (size_t q = 0; q < nsort; q++) {
    const size_t k = list[q];
    uint64_t *st = stmp + (size_t)omp_get_thread_num() * 2 * (big ? big : 1);
    if (cnt[k] > 1) engine_sort_doubles(buf + off[k], cnt[k], st);
  }
  free(list);

  bracket br = {cum, off, buf};
  /* shortest interval: y_(r) = low[r], y_(r+q) from the high tail */
  const double *low = buf, *high = buf + off[HIGH];
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
  free(ccnt);
  free(cum);
  free(off);
  free(inc);
  free(buf);
  free(stmp);
  return ret;
}

sp_status engine_order_stats(double *y, size_t m, const double *p, size_t np,
                             double cov, double *pct, sp_engine_output *o, int threads,
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
    int r = order_stats_bracket(y, m, p, np, qq, tail, have_sym, s_lo, s_hi, threads, pct, o);
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

sp_status engine_histogram_par(const double *y, size_t m, double lo, double hi, size_t nb,
                               uint64_t *counts, uint64_t *below, uint64_t *above,
                               int threads)
{
  const size_t C = threads > 1 ? (size_t)threads : 1;
  if (C == 1 || nb == 0 || m < C) {
    engine_histogram(y, m, lo, hi, nb, counts, below, above);
    return SP_OK;
  }
  /* chunk c counts into row c (nb bins, then below and above); the rows
   * are summed, so the counts do not depend on C */
  uint64_t *rows = malloc(C * (nb + 2) * sizeof *rows);
  if (!rows) return SP_ENOMEM;
#pragma omp parallel for num_threads(threads) schedule(static, 1)
  for (size_t c = 0; c < C; c++) {
    const size_t from = chunk_start(m, C, c);
    uint64_t *r = rows + c * (nb + 2);
    engine_histogram(y + from, chunk_start(m, C, c + 1) - from, lo, hi, nb, r, r + nb,
                     r + nb + 1);
  }
  memset(counts, 0, nb * sizeof *counts);
  *below = *above = 0;
  for (size_t c = 0; c < C; c++) {
    const uint64_t *r = rows + c * (nb + 2);
    for (size_t b = 0; b < nb; b++) counts[b] += r[b];
    *below += r[nb];
    *above += r[nb + 1];
  }
  free(rows);
  return SP_OK;
}

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
