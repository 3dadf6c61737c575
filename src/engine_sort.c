/* engine: least-significant-digit radix sort of doubles, and ranks.
 *
 * Used on the tails of the output values (shortest coverage interval) and
 * for Spearman ranks, where a comparison sort of 10^7 values would dominate
 * the run.  Seward, H.H. (1954). Information sorting in the application of
 * electronic digital computers to business operations. MIT Digital Computer
 * Laboratory report R-232 (LSD radix sort by counting); the order-preserving
 * map of IEEE 754 doubles to unsigned integers (flip every bit of a negative
 * value, only the sign bit of a positive one) is the one of Herf, M. (2001).
 * Radix tricks, web note.  Six passes of 11 bits cover the 64-bit keys;
 * a pass in which every key has the same digit is skipped. */
#include "engine_internal.h"

#include <string.h>

#define RADIX_BITS 11
#define RADIX_SIZE (1u << RADIX_BITS)
#define RADIX_PASSES 6 /* 6 x 11 >= 64 */

static uint64_t key_of(double v)
{
  uint64_t u;
  memcpy(&u, &v, sizeof u);
  return (u >> 63) ? ~u : u | (UINT64_C(1) << 63);
}

static double double_of(uint64_t k)
{
  uint64_t u = (k >> 63) ? k & ~(UINT64_C(1) << 63) : ~k;
  double v;
  memcpy(&v, &u, sizeof v);
  return v;
}

/* Sorts keys k[0..n) (with idx[0..n) alongside when idx is not NULL);
 * k2 and idx2 are scratch of n entries.  The result ends in k / idx. */
static void radix_sort(uint64_t *k, uint64_t *k2, uint32_t *idx, uint32_t *idx2, size_t n)
{
  static const unsigned shifts[RADIX_PASSES] = {0, 11, 22, 33, 44, 55};
  /* 6 x 2048 counters, 96 KiB of stack: well within a thread's stack. */
  size_t count[RADIX_PASSES][RADIX_SIZE];
  memset(count, 0, sizeof count);
  for (size_t i = 0; i < n; i++)
    for (unsigned p = 0; p < RADIX_PASSES; p++)
      count[p][(k[i] >> shifts[p]) & (RADIX_SIZE - 1)]++;
  uint64_t *src = k, *dst = k2;
  uint32_t *isrc = idx, *idst = idx2;
  for (unsigned p = 0; p < RADIX_PASSES; p++) {
    size_t *c = count[p];
    int trivial = 0;
    for (size_t d = 0; d < RADIX_SIZE; d++)
      if (c[d] == n) trivial = 1;
    if (trivial) continue;
    size_t sum = 0;
    for (size_t d = 0; d < RADIX_SIZE; d++) {
      size_t t = c[d];
      c[d] = sum;
      sum += t;
    }
    for (size_t i = 0; i < n; i++) {
      size_t pos = c[(src[i] >> shifts[p]) & (RADIX_SIZE - 1)]++;
      dst[pos] = src[i];
      if (idx) idst[pos] = isrc[i];
    }
    uint64_t *t = src;
    src = dst;
    dst = t;
    uint32_t *it = isrc;
    isrc = idst;
    idst = it;
  }
  if (src != k) {
    memcpy(k, src, n * sizeof *k);
    if (idx) memcpy(idx, isrc, n * sizeof *idx);
  }
}

void engine_sort_doubles(double *y, size_t n, uint64_t *tmp)
{
  uint64_t *k = tmp, *k2 = tmp + n;
  for (size_t i = 0; i < n; i++) k[i] = key_of(y[i]);
  radix_sort(k, k2, NULL, NULL, n);
  for (size_t i = 0; i < n; i++) y[i] = double_of(k[i]);
}

void engine_rank(const double *y, size_t n, double *rank, uint64_t *tmp, uint32_t *idx)
{
  uint64_t *k = tmp, *k2 = tmp + n;
  uint32_t *ix = idx, *ix2 = idx + n;
  for (size_t i = 0; i < n; i++) {
    k[i] = key_of(y[i]);
    ix[i] = (uint32_t)i;
  }
  radix_sort(k, k2, ix, ix2, n);
  /* ranks 1..n; a run of equal values (compared as doubles, so -0 and +0
   * tie) gets the average of its ranks.  The values are read back from the
   * sorted keys, in order, not through ix (which would read y at random) */
  size_t i = 0;
  while (i < n) {
    size_t j = i + 1;
    const double vi = double_of(k[i]);
    while (j < n && double_of(k[j]) == vi) j++;
    double r = 0.5 * ((double)(i + 1) + (double)j);
    for (size_t t = i; t < j; t++) rank[ix[t]] = r;
    i = j;
  }
}
