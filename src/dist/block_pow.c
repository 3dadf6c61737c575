/* x^c over a block of positive values, for the samplers (Weibull:
 * scale E^(1/shape) with E exponential).
 *
 * x^c = exp(c log x), each function written out here so that a whole block
 * runs through one loop without calls: the loop vectorises (SSE2 on
 * x86-64), the polynomials by Estrin's scheme (short chains of dependent
 * operations), and costs 6.9 to 7.3 ns a value where the C library's pow
 * costs 8.4 to 8.9 (measured on the development machine, loops of 4096
 * values).  The gain is modest; the other reason is that it is only
 * arithmetic, no library calls and no tables, so the draws do not depend
 * on the C library's version (docs/reproducibility.md).
 *
 * log x: x = 2^e m with m in [sqrt(1/2), sqrt(2)) read off the bits,
 * f = m - 1, s = f / (2 + f), and
 *   log(1 + f) = 2 atanh(s) = f - (h - s (h + R)),  h = f^2 / 2,
 *   R = 2 s^2/3 + 2 s^4/5 + ... + 2 s^20/21,
 * the series of atanh (Abramowitz, M. & Stegun, I.A. (eds.) (1964).
 * Handbook of Mathematical Functions. National Bureau of Standards, Applied
 * Mathematics Series 55, 4.1.27 and 4.6.22); |s| <= 0.1716, so the first
 * term left out, 2 s^23/23, is below 2^-60 of the value.  Writing 2s as
 * f - s f and splitting off h keeps the rounding small (the arrangement of
 * the classic fdlibm e_log.c, here with the exact series coefficients
 * instead of a fitted polynomial); e log 2 is added as e ln2_hi (exact) +
 * e ln2_lo.
 *
 * exp y: y = k ln 2 + r with k = round(y / ln 2) (the 1.5 2^52 shift
 * rounds to nearest), r = (y - k ln2_hi) - k ln2_lo, |r| <= 0.347, and
 * exp r by its Taylor series to r^13/13! (the next term is below 2^-57 of
 * the value), times 2^k built from its bits.
 *
 * Error: y = c log x is rounded (as are the few ulps of the log), and an
 * ulp of y is 2 |y| ulps of exp y, so the result is within some
 * (2 |y| + 4) ulps of x^c: for a Weibull draw of shape 1 or more from an
 * exponential E (|y| = |log E| / shape, under 5 for all but 1 draw in 150)
 * a dozen ulps, a relative 3e-15, far below anything a sample of draws can
 * show; pow, which carries log x in extra precision, stays under 1 ulp.
 * tests/check_dist.c (test_pow_block) measures it against pow.
 * Values the series does not cover (x zero, subnormal or infinite, |y|
 * from 700 on, where 2^k leaves the normal range) go to pow itself. */
#include "dist_common.h"

#include <float.h>
#include <stdint.h>
#include <string.h>

#define LN2_HI 0x1.62e42fee00000p-1  /* ln 2 to 32 bits: k LN2_HI is exact */
#define LN2_LO 0x1.a39ef35793c76p-33 /* ln 2 - LN2_HI (computed to 50 digits) */
#define INV_LN2 1.4426950408889634
#define SHIFTER 0x1.8p52 /* adding it rounds to an integer */
#define SQRT_HALF_BITS UINT64_C(0x3fe6a09e667f3bcd)
#define MANT_MASK UINT64_C(0x000fffffffffffff)
#define EXP_LIMIT 700.0

static inline double log_kernel(double x)
{
  uint64_t u;
  memcpy(&u, &x, sizeof u);
  /* subtracting the bits of sqrt(1/2) moves the binade boundary there */
  const uint64_t t = u - SQRT_HALF_BITS;
  const int32_t e = (int32_t)((int64_t)t >> 52);
  const uint64_t mu = (t & MANT_MASK) + SQRT_HALF_BITS;
  double m;
  memcpy(&m, &mu, sizeof m);
  const double f = m - 1.0, s = f / (2.0 + f), z = s * s;
  /* Estrin's scheme: short chains of dependent operations */
  const double z2 = z * z, z4 = z2 * z2, z8 = z4 * z4;
  const double R = z * (((2.0 / 3 + z * (2.0 / 5)) + z2 * (2.0 / 7 + z * (2.0 / 9))) +
                        z4 * ((2.0 / 11 + z * (2.0 / 13)) + z2 * (2.0 / 15 + z * (2.0 / 17))) +
                        z8 * (2.0 / 19 + z * (2.0 / 21)));
  const double h = 0.5 * f * f, ed = (double)e;
  return ed * LN2_HI + (f - (h - (s * (h + R) + ed * LN2_LO)));
}

static inline double exp_kernel(double y)
{
  const double t = y * INV_LN2 + SHIFTER;
  const double kd = t - SHIFTER;
  const double r = (y - kd * LN2_HI) - kd * LN2_LO;
  /* Estrin's scheme, as for the log */
  const double r2 = r * r, r4 = r2 * r2;
  const double hi =
      ((1.0 / 40320 + r * (1.0 / 362880)) + r2 * (1.0 / 3628800 + r * (1.0 / 39916800))) +
      r4 * (1.0 / 479001600 + r * (1.0 / 6227020800.0));
  const double lo = ((1.0 / 2 + r * (1.0 / 6)) + r2 * (1.0 / 24 + r * (1.0 / 120))) +
                    r4 * (1.0 / 720 + r * (1.0 / 5040));
  const double p = 1.0 + (r + r2 * (lo + (r4 * r2) * hi));
  /* the low bits of t hold k (two's complement); 2^k from its exponent */
  uint64_t tb, sb;
  const double shifter = SHIFTER;
  memcpy(&tb, &t, sizeof tb);
  memcpy(&sb, &shifter, sizeof sb);
  const uint64_t bits = (tb - sb + 1023u) << 52;
  double scale;
  memcpy(&scale, &bits, sizeof scale);
  return p * scale;
}

/* Values per loop of fixed count: GCC 12's -O2 vectoriser takes loops that
 * need no epilogue (as the model's kernels, src/model_eval.c). */
#define CHUNK 8

void sp_family_pow_block(double *x, size_t n, double c)
{
  size_t i = 0;
  for (; i < n; i += CHUNK) {
    const size_t len = n - i < CHUNK ? n - i : CHUNK;
    double y[CHUNK], in[CHUNK];
    if (len == CHUNK) {
      for (size_t j = 0; j < CHUNK; j++) {
        in[j] = x[i + j];
        y[j] = c * log_kernel(in[j]);
        x[i + j] = exp_kernel(y[j]);
      }
    } else {
      for (size_t j = 0; j < len; j++) {
        in[j] = x[i + j];
        y[j] = c * log_kernel(in[j]);
        x[i + j] = exp_kernel(y[j]);
      }
    }
    for (size_t j = 0; j < len; j++)
      if (!(in[j] >= DBL_MIN && in[j] <= DBL_MAX && fabs(y[j]) < EXP_LIMIT))
        x[i + j] = pow(in[j], c);
  }
}
