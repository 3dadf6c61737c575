/* scatterprop stats: descriptive statistics and selection.
 *
 * Algorithms (full references):
 *  - mean and variance: the corrected two-pass algorithm of Chan, T.F.,
 *    Golub, G.H. & LeVeque, R.J. (1983), "Algorithms for computing the
 *    sample variance: analysis and recommendations", The American
 *    Statistician 37(3), 242-247 (their equation 1.7, equation number
 *    from memory): the mean is
 *    corrected by the mean of the deviations, and the sum of squares by
 *    (sum of deviations)^2 / n;
 *  - each sum is accumulated with Neumaier's improvement of Kahan's
 *    compensated summation: Neumaier, A. (1974), "Rundungsfehleranalyse
 *    einiger Verfahren zur Summation endlicher Summen", Zeitschrift fuer
 *    Angewandte Mathematik und Mechanik 54(1), 39-51; Kahan, W. (1965),
 *    "Further remarks on reducing truncation errors", Communications of the
 *    ACM 8(1), 40;
 *  - skewness and kurtosis: moment definitions of the NIST/SEMATECH
 *    e-Handbook of Statistical Methods (2012), section 1.3.5.11;
 *  - quantiles: definition 7 of Hyndman, R.J. & Fan, Y. (1996), "Sample
 *    quantiles in statistical packages", The American Statistician 50(4),
 *    361-365, with the interpolation written as numpy 1.24 writes it (see
 *    lerp below);
 *  - selection: introselect, Musser, D.R. (1997), "Introspective sorting
 *    and selection algorithms", Software: Practice and Experience 27(8),
 *    983-993: Hoare's quickselect (Hoare, C.A.R. (1961), "Algorithm 65:
 *    Find", Communications of the ACM 4(7), 321-322) with a median-of-3
 *    pivot, falling back to heap selection (Williams, J.W.J. (1964),
 *    "Algorithm 232: Heapsort", Communications of the ACM 7(6), 347-348;
 *    Floyd, R.W. (1964), "Algorithm 245: Treesort 3", Communications of the
 *    ACM 7(12), 701) once too many partitions were unbalanced.  Partitions
 *    are three-way, by the split-end scheme of Bentley, J.L. & McIlroy,
 *    M.D. (1993), "Engineering a sort function", Software: Practice and
 *    Experience 23(11), 1249-1265, so runs of equal values cost one pass,
 *    not a quadratic number.  (Dijkstra's single-scan "Dutch national
 *    flag" partition was tried first: it rotates the upper part, so that
 *    on sorted input the next median of 3 is nearly the minimum.) */
#include "scatterprop/stats.h"

#include <float.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

/* ---- compensated summation -------------------------------------------- */

typedef struct {
  double s, c; /* running sum and the accumulated rounding error */
} ksum;

static void ksum_add(ksum *k, double x)
{
  double t = k->s + x;
  if (fabs(k->s) >= fabs(x)) k->c += (k->s - t) + x;
  else k->c += (x - t) + k->s;
  k->s = t;
}

static double ksum_value(const ksum *k) { return k->s + k->c; }

/* ---- selection --------------------------------------------------------- */

static void swap(double *a, size_t i, size_t j)
{
  double t = a[i];
  a[i] = a[j];
  a[j] = t;
}

/* Below this size insertion sort beats partitioning (the usual crossover in
 * Musser 1997 and in most library sorts is 16 elements). */
#define SELECT_SMALL 16

static void insertion_sort(double *a, size_t lo, size_t hi)
{
  for (size_t i = lo + 1; i <= hi; i++) {
    double v = a[i];
    size_t j = i;
    while (j > lo && a[j - 1] > v) {
      a[j] = a[j - 1];
      j--;
    }
    a[j] = v;
  }
}

/* Sift-down in a heap stored at base[0..m); max-heap when max_heap is
 * non-zero, else min-heap. */
static void sift_down(double *base, size_t m, size_t i, int max_heap)
{
  double v = base[i];
  for (;;) {
    size_t c = 2 * i + 1;
    if (c >= m) break;
    if (c + 1 < m && (max_heap ? base[c + 1] > base[c] : base[c + 1] < base[c])) c++;
    if (!(max_heap ? base[c] > v : base[c] < v)) break;
    base[i] = base[c];
    i = c;
  }
  base[i] = v;
}

/* Heap selection of a[k] within a[lo..hi], O(m log m) for m = hi - lo + 1:
 * a heap of the j + 1 smallest (or the m - j largest, whichever is fewer)
 * is kept while the rest stream past it; its root is then the wanted order
 * statistic, and the elements outside the heap lie on the correct side. */
static void heap_select(double *a, size_t lo, size_t hi, size_t k)
{
  size_t m = hi - lo + 1, j = k - lo;
  if (j < m / 2) {
    double *h = a + lo;
    size_t hm = j + 1;
    for (size_t i = hm / 2; i-- > 0;) sift_down(h, hm, i, 1);
    for (size_t i = hm; i < m; i++)
      if (h[i] < h[0]) {
        swap(h, 0, i);
        sift_down(h, hm, 0, 1);
      }
    swap(h, 0, j); /* the largest of the j + 1 smallest goes to k */
  } else {
    double *h = a + k; /* min-heap of a[k..hi], the m - j largest */
    size_t hm = hi - k + 1;
    for (size_t i = hm / 2; i-- > 0;) sift_down(h, hm, i, 0);
    for (size_t i = lo; i < k; i++)
      if (a[i] > h[0]) {
        double t = a[i];
        a[i] = h[0];
        h[0] = t;
        sift_down(h, hm, 0, 0);
      }
    /* h[0] = a[k] is now the smallest of the m - j largest */
  }
}

/* Floor of log2(n) for n >= 1. */
static unsigned floor_log2(size_t n)
{
  unsigned r = 0;
  while (n >>= 1) r++;
  return r;
}

double sp_select(double *a, size_t n, size_t k)
{
  if (n == 0 || k >= n) return NAN;
  size_t lo = 0, hi = n - 1;
  /* A bound in the spirit of Musser's: after 2 floor(log2 n) + 2
   * partitions that each kept more than 3/4 of their input, the remaining
   * range goes to heap selection.
   * Every partition costs at most its range, so the total stays
   * O(n log n) in the worst case and O(n) expected. */
  unsigned bad_left = 2 * floor_log2(n) + 2;
  while (hi > lo) {
    size_t m = hi - lo + 1;
    if (m <= SELECT_SMALL) {
      insertion_sort(a, lo, hi);
      return a[k];
    }
    if (bad_left == 0) {
      heap_select(a, lo, hi, k);
      return a[k];
    }
    /* median of three of the first, middle and last elements */
    size_t mid = lo + m / 2;
    if (a[mid] < a[lo]) swap(a, mid, lo);
    if (a[hi] < a[mid]) {
      swap(a, hi, mid);
      if (a[mid] < a[lo]) swap(a, mid, lo);
    }
    const double p = a[mid];
    /* Bentley & McIlroy's three-way partition: scan from both ends as in
     * Hoare's partition, parking values equal to p at the two ends, then
     * swap the parked runs into the middle.  Invariant during the scan:
     * a[lo..ea) == p, a[ea..b) < p, a(c..ed] > p, a(ed..hi] == p. */
    size_t ea = lo, b = lo, c = hi, ed = hi;
    for (;;) {
      while (b <= c && !(a[b] > p)) {
        if (!(a[b] < p)) swap(a, ea++, b);
        b++;
      }
      while (c >= b && !(a[c] < p)) {
        if (!(a[c] > p)) swap(a, c, ed--);
        c--;
      }
      if (b > c) break;
      swap(a, b++, c--);
    }
    /* now b = c + 1; move the parked equal runs next to each other */
    size_t nless = b - ea, ngreater = ed - c;
    size_t s = ea - lo < nless ? ea - lo : nless;
    for (size_t t = 0; t < s; t++) swap(a, lo + t, b - s + t);
    s = ed - c < hi - ed ? ed - c : hi - ed;
    for (size_t t = 0; t < s; t++) swap(a, b + t, hi - s + 1 + t);
    size_t lt = lo + nless, gt = hi + 1 - ngreater; /* a[lt..gt) == p */
    if (k < lt) hi = lt - 1;
    else if (k >= gt) lo = gt;
    else return a[k]; /* k falls among the values equal to the pivot */
    if (4 * (hi - lo + 1) > 3 * m) bad_left--;
  }
  return a[k];
}

/* ---- quantiles ----------------------------------------------------------- */

/* a + t (b - a) for t in [0, 1], written as numpy 1.24's _lerp writes it
 * (numpy/lib/function_base.py): from the lower end when t < 0.5 and from the
 * upper end otherwise, so t = 1 gives b exactly.  When b - a overflows
 * (values of opposite sign near DBL_MAX) the weighted form is used. */
static double lerp(double a, double b, double t)
{
  if (t == 0.0) return a;
  double d = b - a;
  if (!isfinite(d)) return a * (1.0 - t) + b * t;
  return t < 0.5 ? a + d * t : b - d * (1.0 - t);
}

/* Position of the definition-7 quantile: h = (n - 1) p = j + g. */
static void quantile_position(size_t n, double p, size_t *j, double *g)
{
  double h = (double)(n - 1) * p;
  double fl = floor(h);
  *j = (size_t)fl;
  *g = h - fl;
  if (*j >= n - 1) { /* p = 1 */
    *j = n - 1;
    *g = 0.0;
  }
}

double sp_quantile_sorted(const double *sorted, size_t n, double p)
{
  if (n == 0 || !(p >= 0.0 && p <= 1.0)) return NAN;
  size_t j;
  double g;
  quantile_position(n, p, &j, &g);
  if (g == 0.0) return sorted[j];
  return lerp(sorted[j], sorted[j + 1], g);
}

/* Minimum of a[lo..n). */
static double min_from(const double *a, size_t lo, size_t n)
{
  /* written before on every path (the loop bounds are not followed):
   * NOLINTNEXTLINE(clang-analyzer-core.uninitialized.Assign) */
  double m = a[lo];
  for (size_t i = lo + 1; i < n; i++)
    if (a[i] < m) m = a[i];
  return m;
}

/* The definition-7 quantile at p when a[from..n) holds exactly the order
 * statistics from..n-1 in some order and from <= the lower index.  On
 * return a[j] is in place and a[j + 1..n) holds the statistics above it,
 * so a further quantile at a larger p may pass from = j (returned in
 * *j_out). */
static double quantile_from(double *a, size_t n, size_t from, double p, size_t *j_out)
{
  size_t j;
  double g;
  quantile_position(n, p, &j, &g);
  double lo = sp_select(a + from, n - from, j - from);
  *j_out = j;
  if (g == 0.0) return lo;
  return lerp(lo, min_from(a, j + 1, n), g);
}

double sp_quantile_select(double *a, size_t n, double p)
{
  if (n == 0 || !(p >= 0.0 && p <= 1.0)) return NAN;
  size_t j;
  return quantile_from(a, n, 0, p, &j);
}

/* ---- describe ---------------------------------------------------------- */

sp_status sp_stats_describe(const double *x, size_t n, double *work,
                            sp_describe *out, sp_error *err)
{
  if (!x || !out) return sp_fail(err, SP_EUSAGE, "sp_stats_describe: missing argument");
  if (n == 0) return sp_fail(err, SP_EDATA, "no values to describe");

  double lo = x[0], hi = x[0];
  for (size_t i = 0; i < n; i++) {
    if (!isfinite(x[i]))
      return sp_fail(err, SP_EDATA, "value %zu of %zu is not finite", i + 1, n);
    if (x[i] < lo) lo = x[i];
    if (x[i] > hi) hi = x[i];
  }

  sp_describe d;
  d.n = n;
  d.min = lo;
  d.max = hi;
  d.sd = NAN;
  d.skewness = NAN;
  d.kurtosis = NAN;

  if (lo == hi) {
    /* All values equal: every deviation is zero exactly. */
    d.mean = lo;
    d.q1 = d.median = d.q3 = lo;
    if (n >= 2) d.sd = 0.0;
    *out = d;
    return SP_OK;
  }

  /* Scale by a power of two so that the largest magnitude lies in [0.5, 1).
   * Multiplying by a power of two is exact (barring underflow of values
   * 2^1022 times smaller than the largest, whose contribution is below the
   * rounding of the sums anyway), so the results are those of unscaled
   * arithmetic, but neither the sums near DBL_MAX overflow nor the squares
   * and fourth powers of tiny (subnormal) data underflow.  The shift is
   * clamped to the range of normal powers of two. */
  int e;
  frexp(fmax(fabs(lo), fabs(hi)), &e);
  int shift = -e;
  if (shift > 1022) shift = 1022;
  if (shift < -1022) shift = -1022;
  const double c = ldexp(1.0, shift);
  const double dn = (double)n;

  /* pass 2: the mean */
  ksum s1 = {0, 0};
  for (size_t i = 0; i < n; i++) ksum_add(&s1, x[i] * c);
  double mean = ksum_value(&s1) / dn;

  /* pass 3: Chan, Golub & LeVeque's correction of the mean */
  ksum sd1 = {0, 0};
  for (size_t i = 0; i < n; i++) ksum_add(&sd1, x[i] * c - mean);
  mean += ksum_value(&sd1) / dn;
  /* rounding cannot push the mean outside the data */
  if (mean < lo * c) mean = lo * c;
  if (mean > hi * c) mean = hi * c;

  /* pass 4: central moments about the corrected mean */
  ksum r1 = {0, 0}, r2 = {0, 0}, r3 = {0, 0}, r4 = {0, 0};
  for (size_t i = 0; i < n; i++) {
    double dv = x[i] * c - mean, d2 = dv * dv;
    ksum_add(&r1, dv);
    ksum_add(&r2, d2);
    ksum_add(&r3, d2 * dv);
    ksum_add(&r4, d2 * d2);
  }
  /* The rounded mean misses the exact one by delta = sum(d) / n (the
   * residual the compensated sum keeps).  Moments about the exact mean
   * follow by the binomial theorem, with sum(d) = n delta:
   *   S2 = sum d^2 - n delta^2                  (CGL eq. 1.7)
   *   S3 = sum d^3 - 3 delta sum d^2 + 2 n delta^3
   *   S4 = sum d^4 - 4 delta sum d^3 + 6 delta^2 sum d^2 - 3 n delta^4.
   * Carrying the correction to S3 and S4 is our extension of CGL's: for
   * data whose spread is tiny next to their mean (1e6 +- 0.1), half an ulp
   * of the mean otherwise moves the skewness in the 9th digit. */
  double delta = ksum_value(&r1) / dn;
  double q2 = ksum_value(&r2), q3 = ksum_value(&r3), q4 = ksum_value(&r4);
  double dd = delta * delta;
  double ss = q2 - dn * dd;
  double s3 = q3 - 3.0 * delta * q2 + 2.0 * dn * dd * delta;
  double s4 = q4 - 4.0 * delta * q3 + 6.0 * dd * q2 - 3.0 * dn * dd * dd;
  if (ss < 0.0) ss = 0.0;

  d.mean = ldexp(mean, -shift);
  if (n >= 2) {
    double sd = ldexp(sqrt(ss / (dn - 1.0)), -shift);
    if (!isfinite(sd))
      return sp_fail(err, SP_ENUMERIC,
                     "the standard deviation of values from %.17g to %.17g "
                     "exceeds the range of a double", lo, hi);
    d.sd = sd;
  }
  if (ss > 0.0) {
    double m2 = ss / dn, m3 = s3 / dn, m4 = s4 / dn;
    if (n >= 3) d.skewness = m3 / (m2 * sqrt(m2));
    if (n >= 4) d.kurtosis = m4 / (m2 * m2) - 3.0;
  }

  /* quartiles by selection on the work copy */
  double *w = work;
  if (!w) {
    if (n > SIZE_MAX / sizeof *w)
      return sp_fail(err, SP_ENOMEM, "%zu values are too many to describe", n);
    w = malloc(n * sizeof *w);
    if (!w) return sp_fail(err, SP_ENOMEM, "out of memory for %zu values", n);
  }
  for (size_t i = 0; i < n; i++) w[i] = x[i];
  size_t j1, j2, j3;
  d.q1 = quantile_from(w, n, 0, 0.25, &j1);
  d.median = quantile_from(w, n, j1, 0.5, &j2);
  d.q3 = quantile_from(w, n, j2, 0.75, &j3);
  if (w != work) free(w);

  *out = d;
  return SP_OK;
}
