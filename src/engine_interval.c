/* engine: coverage intervals of JCGM 101:2008 clause 7.7.
 *
 * JCGM 101:2008, Evaluation of measurement data - Supplement 1 to the "Guide
 * to the expression of uncertainty in measurement" - Propagation of
 * distributions using a Monte Carlo method.  Joint Committee for Guides in
 * Metrology.  With the M model values sorted, y_(1) <= ... <= y_(M), and
 * q = pM if pM is an integer, otherwise the integer part of pM + 1/2:
 *  - 7.7.1 (probabilistically symmetric): r = (1 - p) M / 2 if that is an
 *    integer, otherwise the integer part of (1 - p) M / 2 + 1/2; the
 *    interval is [y_(r), y_(r+q)];
 *  - 7.7.2 (shortest): [y_(r*), y_(r*+q)] with r* minimising
 *    y_(r+q) - y_(r) over r = 1, ..., M - q (the first minimiser is taken;
 *    engine_order_stats computes it on the two sorted tails).
 * The shortest interval is computed in engine_stats.c, where the order
 * statistics are placed. */
#include "engine_internal.h"

#include <math.h>

/* The integer part of x + 1/2, where x is a product like (1 - p) M / 2 that
 * is meant to be an integer or half-integer but carries the rounding of p
 * (0.95 is not a binary fraction): x is first snapped to the nearest
 * multiple of 1/2 when it lies within 2^-40 relative of it. */
static double round_half_up(double x)
{
  double h = floor(2.0 * x + 0.5) / 2.0;
  if (fabs(x - h) <= 0x1p-40 * fmax(1.0, fabs(x))) x = h;
  return floor(x + 0.5);
}

size_t engine_jcgm_q(size_t m, double p)
{
  return (size_t)round_half_up(p * (double)m);
}

int sp_engine_symmetric_index(size_t m, double p, size_t *lo, size_t *hi)
{
  if (!(p > 0.0 && p < 1.0) || m == 0) return 0;
  double q = round_half_up(p * (double)m);
  double r = round_half_up((1.0 - p) * (double)m / 2.0);
  if (r < 1.0 || r + q > (double)m) return 0;
  *lo = (size_t)r - 1;
  *hi = (size_t)(r + q) - 1;
  return 1;
}
