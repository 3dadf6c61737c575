/* scatterprop rng: PCG generators, block streams, uniform doubles, normal
 * and exponential deviates.
 *
 * O'Neill, M.E. (2014). PCG: A family of simple fast space-efficient
 * statistically good algorithms for random number generation. Technical
 * report HMC-CS-2014-0905, Harvey Mudd College.
 *
 * Two members are provided, written from the paper:
 *  - sp_pcg32: 64-bit LCG state, XSH-RR output, 32-bit results
 *    (the paper's pcg32 / pcg_setseq_64_xsh_rr_32);
 *  - sp_pcg64: 128-bit LCG state, XSL-RR output, 64-bit results
 *    (pcg64 / pcg_setseq_128_xsl_rr_64), using unsigned __int128.
 * Both take a stream selector (the LCG increment is 2*stream+1) and jump
 * ahead in O(log n) (Brown, F.B. (1994). Random number generation with
 * arbitrary strides. Trans. Am. Nucl. Soc. 71, 202-203). */
#ifndef SP_RNG_H
#define SP_RNG_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

typedef struct {
  uint64_t state;
  uint64_t inc; /* always odd */
} sp_pcg32;

/* Seeds as the reference pcg32_srandom_r(initstate, initseq). */
void sp_pcg32_seed(sp_pcg32 *g, uint64_t initstate, uint64_t initseq);
uint32_t sp_pcg32_next(sp_pcg32 *g);
/* Advances by delta steps (delta may be any value; steps wrap mod 2^64). */
void sp_pcg32_advance(sp_pcg32 *g, uint64_t delta);

/* __extension__: ISO C and C++ have no 128-bit integer, GCC and Clang
 * provide one; this keeps -Wpedantic quiet in every includer. */
typedef struct {
  __extension__ unsigned __int128 state;
  __extension__ unsigned __int128 inc; /* always odd */
} sp_pcg64;

/* Seeds as the reference pcg64_srandom_r(initstate, initseq); the 128-bit
 * values are given as (hi, lo) halves. */
void sp_pcg64_seed(sp_pcg64 *g, uint64_t initstate_hi, uint64_t initstate_lo,
                   uint64_t initseq_hi, uint64_t initseq_lo);
uint64_t sp_pcg64_next(sp_pcg64 *g);
/* Advances by delta steps (delta given as (hi, lo), mod 2^128). */
void sp_pcg64_advance(sp_pcg64 *g, uint64_t delta_hi, uint64_t delta_lo);

/* The block stream rule (documented in docs/reproducibility.md).  The
 * generator for (seed, block, sub) -- sub numbers the independent streams a
 * block needs, such as one per model input -- is sp_pcg64 seeded with
 *   initstate = (splitmix64(seed), splitmix64(seed ^ 0x9e3779b97f4a7c15))
 *   initseq   = (seed, block * 2^16 + sub)
 * where splitmix64 is sp_splitmix64 below and block * 2^16 + sub wraps mod
 * 2^64.  Any block can be generated alone, by any thread or process.  Every
 * (seed, block, sub) with block < 2^48, sub < 2^16 and seed < 2^63 has its
 * own LCG increment (the increment 2 * initseq + 1 drops the top bit of
 * seed, so seeds differing only in bit 63 share increments but start from
 * different states). */
void sp_rng_block_stream(sp_pcg64 *g, uint64_t seed, uint64_t block, uint32_t sub);

/* SplitMix64 finaliser (Steele, Lea & Flood 2014, "Fast splittable
 * pseudorandom number generators", OOPSLA '14, 453-472), used to spread
 * seeds: z = (x ^ x >> 30) * 0xbf58476d1ce4e5b9, z = (z ^ z >> 27) *
 * 0x94d049bb133111eb, return z ^ z >> 31 (no increment is added first:
 * sp_splitmix64(k * 0x9e3779b97f4a7c15) is the k-th output of Vigna's
 * splitmix64.c seeded with 0). */
uint64_t sp_splitmix64(uint64_t x);

/* Uniform double in [0, 1) from the top 53 bits of one output. */
double sp_rng_uniform(sp_pcg64 *g);
/* Uniform double in the open interval (0, 1): (k + 0.5) / 2^52 for the top
 * 52 bits k of one output, for inverse-CDF sampling where 0 and 1 must never
 * occur.  Every value is exact, in [2^-53, 1 - 2^-53], and symmetric about
 * 1/2.  (53 bits cannot work: (k + 0.5) / 2^53 is not a double for
 * k >= 2^52 and rounds to exactly 1 at k = 2^53 - 1.) */
double sp_rng_uniform_open(sp_pcg64 *g);
/* Fills u[0..n) with sp_rng_uniform_open values (the block sampler's source). */
void sp_rng_fill_open(sp_pcg64 *g, double *u, size_t n);
/* Standard normal deviate by inversion of one open uniform with GSL's
 * gsl_cdf_ugaussian_Pinv (Wichura 1988, AS 241, Applied Statistics 37(3),
 * 477-484), so each deviate uses exactly one output of the stream. */
double sp_rng_normal(sp_pcg64 *g);
/* Standard normal deviate by the ziggurat method (Marsaglia, G. & Tsang,
 * W.W. (2000). The ziggurat method for generating random variables. J.
 * Stat. Software 5(8), 1-7), 256 layers, the tail by Marsaglia (1964,
 * Technometrics 6(1), 101-102), the layer, sign and value taken from
 * disjoint bits of one output (Doornik 2005; details in rng.c).  Exact in
 * distribution up to the 2^-52 resolution of the value (never 0); uses one output
 * with probability 0.985, more otherwise.  A different stream of values
 * from sp_rng_normal (inversion), which it does not replace. */
double sp_rng_normal_ziggurat(sp_pcg64 *g);
/* out[0..n) = n successive sp_rng_normal_ziggurat(g) values (the same
 * values and the same final state of g), about 8 times faster than
 * inversion. */
void sp_rng_fill_normal(sp_pcg64 *g, double *out, size_t n);
/* Standard exponential deviate (rate 1) by the ziggurat method, 256
 * layers; uses one output with probability 0.978, more otherwise.  Every
 * value is finite and > 0 (at least 2^-53 x_255 = 7.1e-18, see rng.c). */
double sp_rng_exponential_ziggurat(sp_pcg64 *g);
/* out[0..n) = n successive sp_rng_exponential_ziggurat(g) values. */
void sp_rng_fill_exponential(sp_pcg64 *g, double *out, size_t n);
/* The ziggurat tables, for inspection and tests: for the normal
 * (exponential = 0) or the exponential (exponential = 1) half density f,
 * *x gets the layer edges x[0..256] (x[1] = r, x[256] = 0) and *fx gets
 * f(x[0..256]), both borrowed (static); returns the number of layers, 256. */
size_t sp_rng_ziggurat_tables(int exponential, const double **x, const double **fx);
/* Uniform integer in [0, n) without modulo bias (Lemire 2019, "Fast random
 * integer generation in an interval", ACM TOMACS 29(1), 3:1-3:12). n > 0;
 * n == 0 returns 0 without drawing.  Uses one output, or more with
 * probability (2^64 mod n) / 2^64. */
uint64_t sp_rng_below(sp_pcg64 *g, uint64_t n);

#ifdef __cplusplus
}
#endif
#endif /* SP_RNG_H */
