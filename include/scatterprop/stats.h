/* scatterprop stats: descriptive statistics and selection.
 *
 * Definitions (stated so results can be compared with other tools):
 *  - mean: arithmetic mean, by a two-pass algorithm with the correction
 *    term of Chan, Golub & LeVeque (1983), "Algorithms for computing the
 *    sample variance: analysis and recommendations", The American
 *    Statistician 37(3), 242-247;
 *  - sd: sample standard deviation with the n - 1 denominator;
 *  - skewness g1 = m3 / m2^(3/2) and excess kurtosis g2 = m4 / m2^2 - 3,
 *    with central moments m_k = sum (x - mean)^k / n: the definitions of
 *    the NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.5.11
 *    (scipy.stats.skew and kurtosis with bias=True);
 *  - quartiles and other sample quantiles: linear interpolation between
 *    order statistics, definition 7 of Hyndman & Fan (1996), "Sample
 *    quantiles in statistical packages", The American Statistician 50(4),
 *    361-365 (numpy.percentile's default). */
#ifndef SP_STATS_H
#define SP_STATS_H

#include "scatterprop/core.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct {
  size_t n;          /* finite values used */
  double mean;
  double sd;         /* NAN when n < 2 */
  double min, max;
  double q1, median, q3;
  double skewness;   /* NAN when n < 3 or sd == 0 */
  double kurtosis;   /* excess; NAN when n < 4 or sd == 0 */
} sp_describe;

/* Describes x[0..n) (all values must be finite; the caller drops missing
 * ones).  work must hold n doubles (it is overwritten; it must not overlap
 * x) or be NULL, in which case the function allocates and frees its own.
 * SP_EDATA when n == 0 or a value is not finite; SP_ENUMERIC when the
 * standard deviation itself exceeds the range of a double (values of
 * opposite sign near DBL_MAX; sums are scaled, so no intermediate
 * overflows); SP_ENOMEM when work is NULL and cannot be allocated. */
sp_status sp_stats_describe(const double *x, size_t n, double *work,
                            sp_describe *out, sp_error *err);

/* Rearranges a[0..n) so that a[k] is the value a full sort would put there,
 * with a[i] <= a[k] for i < k and a[i] >= a[k] for i > k.  Expected O(n)
 * (Musser's introselect: quickselect with a median-of-3 pivot and a
 * three-way partition, so equal values cost one pass, and a heap-select
 * fallback that bounds the worst case at O(n log n)).  Returns a[k], or
 * NAN (leaving a untouched) when k >= n.  a must hold no NaN. */
double sp_select(double *a, size_t n, size_t k);

/* Hyndman-Fan definition-7 quantile of a[0..n) at probability p in [0, 1],
 * by selection (a is rearranged): with h = (n - 1) p = j + g, the value
 * x(j) + g (x(j+1) - x(j)) of the order statistics, evaluated as
 * numpy.percentile(method='linear') evaluates it.  NAN when n == 0 or p is
 * outside [0, 1]. */
double sp_quantile_select(double *a, size_t n, double p);
/* The same on sorted data (not checked). */
double sp_quantile_sorted(const double *sorted, size_t n, double p);

#ifdef __cplusplus
}
#endif
#endif /* SP_STATS_H */
