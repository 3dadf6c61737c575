/* scatterprop rng: PCG generators, block streams, uniform doubles.
 *
 * The generators follow O'Neill, M.E. (2014). PCG: A family of simple fast
 * space-efficient statistically good algorithms for random number
 * generation. Technical report HMC-CS-2014-0905, Harvey Mudd College,
 * Claremont, CA, for the XSH-RR and XSL-RR output functions, and her C
 * reference implementation (pcg_basic.c, pcg_variants.h) for the seeding
 * order and the step/output order, so that the streams are bit-identical to
 * the reference's pcg32 and pcg64 (tests/pcg_reference.cpp checks this
 * against the C++ reference, pcg_random.hpp).
 *
 * Jump-ahead is Brown, F.B. (1994). Random number generation with arbitrary
 * strides. Transactions of the American Nuclear Society 71, 202-203: the
 * affine map s -> a s + c composed with itself delta times, by squaring. */
#include "scatterprop/rng.h"

#include <gsl/gsl_cdf.h>

/* ISO C has no 128-bit integer; GCC and Clang provide one as an extension,
 * which __extension__ keeps quiet under -Wpedantic. */
__extension__ typedef unsigned __int128 sp_u128;

/* The LCG multipliers of the reference implementation,
 * PCG_DEFAULT_MULTIPLIER_64 and PCG_DEFAULT_MULTIPLIER_128 (the same values
 * as "default multiplier" in pcg_random.hpp).  Their origin, from memory:
 * the 64-bit one is Knuth's MMIX multiplier (Knuth, D.E. (1997). The Art of
 * Computer Programming, Vol. 2, 3rd ed., section 3.3.4, Table 1), the
 * 128-bit one is from L'Ecuyer, P. (1999). Tables of linear congruential
 * generators of different sizes and good lattice structure. Mathematics of
 * Computation 68(225), 249-260. */
#define PCG_MULT_64 6364136223846793005ULL
#define PCG_MULT_128_HI 2549297995355413924ULL
#define PCG_MULT_128_LO 4865540595714422341ULL

static sp_u128 u128_make(uint64_t hi, uint64_t lo)
{
  return ((sp_u128)hi << 64) | (sp_u128)lo;
}

static sp_u128 pcg_mult_128(void)
{
  return u128_make(PCG_MULT_128_HI, PCG_MULT_128_LO);
}

static uint32_t rotr32(uint32_t x, unsigned r)
{
  return (x >> r) | (x << ((-r) & 31u));
}

static uint64_t rotr64(uint64_t x, unsigned r)
{
  return (x >> r) | (x << ((-r) & 63u));
}

/* ---- pcg32: 64-bit LCG, XSH-RR output ---------------------------------- */

static void pcg32_step(sp_pcg32 *g)
{
  g->state = g->state * PCG_MULT_64 + g->inc;
}

/* XSH-RR (O'Neill 2014): xorshift the high bits down, keep
 * bits 27..58, rotate right by the top 5 bits. */
static uint32_t pcg32_output(uint64_t s)
{
  uint32_t xorshifted = (uint32_t)(((s >> 18) ^ s) >> 27);
  return rotr32(xorshifted, (unsigned)(s >> 59));
}

void sp_pcg32_seed(sp_pcg32 *g, uint64_t initstate, uint64_t initseq)
{
  /* pcg32_srandom_r: state 0, increment 2 initseq + 1 (the top bit of
   * initseq is lost), one step, add initstate, one step. */
  g->state = 0;
  g->inc = (initseq << 1) | 1u;
  pcg32_step(g);
  g->state += initstate;
  pcg32_step(g);
}

uint32_t sp_pcg32_next(sp_pcg32 *g)
{
  /* The 64-bit reference outputs from the state before the step. */
  uint64_t old = g->state;
  pcg32_step(g);
  return pcg32_output(old);
}

void sp_pcg32_advance(sp_pcg32 *g, uint64_t delta)
{
  /* Brown (1994): after processing bit i of delta, (acc_mult, acc_plus) is
   * the map of the low i bits' steps and (cur_mult, cur_plus) the map of
   * 2^i steps.  Everything wraps mod 2^64, so delta = 2^64 - k goes back k
   * steps (the period is 2^64). */
  uint64_t cur_mult = PCG_MULT_64, cur_plus = g->inc;
  uint64_t acc_mult = 1, acc_plus = 0;
  while (delta > 0) {
    if (delta & 1u) {
      acc_mult *= cur_mult;
      acc_plus = acc_plus * cur_mult + cur_plus;
    }
    cur_plus = (cur_mult + 1) * cur_plus;
    cur_mult *= cur_mult;
    delta >>= 1;
  }
  g->state = acc_mult * g->state + acc_plus;
}

/* ---- pcg64: 128-bit LCG, XSL-RR output --------------------------------- */

static void pcg64_step(sp_pcg64 *g)
{
  g->state = g->state * pcg_mult_128() + g->inc;
}

/* XSL-RR (O'Neill 2014): xor the two halves, rotate right by
 * the top 6 bits. */
static uint64_t pcg64_output(sp_u128 s)
{
  uint64_t folded = (uint64_t)(s >> 64) ^ (uint64_t)s;
  return rotr64(folded, (unsigned)(s >> 122));
}

void sp_pcg64_seed(sp_pcg64 *g, uint64_t initstate_hi, uint64_t initstate_lo,
                   uint64_t initseq_hi, uint64_t initseq_lo)
{
  /* pcg64_srandom_r (pcg_setseq_128_srandom_r), same order as pcg32. */
  g->state = 0;
  g->inc = (u128_make(initseq_hi, initseq_lo) << 1) | 1u;
  pcg64_step(g);
  g->state += u128_make(initstate_hi, initstate_lo);
  pcg64_step(g);
}

uint64_t sp_pcg64_next(sp_pcg64 *g)
{
  /* The 128-bit reference (pcg_setseq_128_xsl_rr_64_random_r) steps first
   * and outputs from the new state, unlike the 64-bit one. */
  pcg64_step(g);
  return pcg64_output(g->state);
}

void sp_pcg64_advance(sp_pcg64 *g, uint64_t delta_hi, uint64_t delta_lo)
{
  /* Brown (1994), as in sp_pcg32_advance, mod 2^128. */
  sp_u128 delta = u128_make(delta_hi, delta_lo);
  sp_u128 cur_mult = pcg_mult_128(), cur_plus = g->inc;
  sp_u128 acc_mult = 1, acc_plus = 0;
  while (delta > 0) {
    if (delta & 1u) {
      acc_mult *= cur_mult;
      acc_plus = acc_plus * cur_mult + cur_plus;
    }
    cur_plus = (cur_mult + 1) * cur_plus;
    cur_mult *= cur_mult;
    delta >>= 1;
  }
  g->state = acc_mult * g->state + acc_plus;
}

/* ---- seeds and block streams ------------------------------------------- */

/* 2^64 / golden ratio, the SplitMix64 increment ("GOLDEN_GAMMA" of Steele,
 * Lea & Flood 2014); the block rule flips the seed's bits with it. */
#define SPLITMIX64_GAMMA 0x9e3779b97f4a7c15ULL

uint64_t sp_splitmix64(uint64_t x)
{
  /* The finaliser "mix64" of SplitMix64 (Steele, G.L., Lea, D. & Flood,
   * C.H. (2014). Fast splittable pseudorandom number generators. Proc. 2014
   * ACM Int. Conf. on Object Oriented Programming Systems Languages &
   * Applications (OOPSLA '14), 453-472), with the shift/multiply constants
   * of Stafford's "Mix13" variant of the MurmurHash3 finaliser, as in Java
   * 8's SplittableRandom and Vigna's splitmix64.c (Stafford, D. (2011).
   * Better bit mixing: improving on MurmurHash3's 64-bit finalizer, web
   * note).  It is a bijection of 64-bit words; sp_splitmix64(k * gamma) is
   * the k-th output of splitmix64.c seeded with 0. */
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

void sp_rng_block_stream(sp_pcg64 *g, uint64_t seed, uint64_t block, uint32_t sub)
{
  /* The rule documented in rng.h; block * 2^16 + sub is computed mod 2^64,
   * so arguments outside block < 2^48, sub < 2^16 alias other streams. */
  sp_pcg64_seed(g, sp_splitmix64(seed), sp_splitmix64(seed ^ SPLITMIX64_GAMMA),
                seed, (block << 16) + (uint64_t)sub);
}

/* ---- doubles and integers ---------------------------------------------- */

double sp_rng_uniform(sp_pcg64 *g)
{
  /* k / 2^53 for the top 53 bits k: every value exact, in [0, 1 - 2^-53]. */
  return (double)(sp_pcg64_next(g) >> 11) * 0x1.0p-53;
}

double sp_rng_uniform_open(sp_pcg64 *g)
{
  /* (k + 0.5) / 2^52 for the top 52 bits k.  k + 0.5 needs 53 significant
   * bits, so every value is exact, in [2^-53, 1 - 2^-53], and 1 - u is a
   * possible value whenever u is.  With 53 bits, (k + 0.5) / 2^53 is not
   * representable for k >= 2^52: it rounds to even, and k = 2^53 - 1 gives
   * exactly 1. */
  return ((double)(sp_pcg64_next(g) >> 12) + 0.5) * 0x1.0p-52;
}

void sp_rng_fill_open(sp_pcg64 *g, double *u, size_t n)
{
  for (size_t i = 0; i < n; i++)
    u[i] = sp_rng_uniform_open(g);
}

double sp_rng_normal(sp_pcg64 *g)
{
  /* gsl_cdf_ugaussian_Pinv is finite on the whole open-uniform range
   * (|z| <= 8.3 for u in [2^-53, 1 - 2^-53]) and raises no GSL error there. */
  return gsl_cdf_ugaussian_Pinv(sp_rng_uniform_open(g));
}

uint64_t sp_rng_below(sp_pcg64 *g, uint64_t n)
{
  /* Lemire, D. (2019). Fast random integer generation in an interval. ACM
   * Transactions on Modeling and Computer Simulation 29(1), 3:1-3:12: the
   * result is the high word of the 128-bit product x * n.  Each result j is
   * the high word for ceil or floor of 2^64 / n values of x; rejecting the
   * products whose low word l is below t = 2^64 mod n leaves exactly
   * floor(2^64 / n) values of x for every j.  Since t < n, t (one division)
   * is needed only when l < n, which is rare for small n. */
  if (n == 0) return 0; /* outside the domain; avoids the division by 0 */
  sp_u128 m = (sp_u128)sp_pcg64_next(g) * n;
  uint64_t l = (uint64_t)m;
  if (l < n) {
    uint64_t t = (0 - n) % n; /* (2^64 - n) mod n = 2^64 mod n */
    while (l < t) {
      m = (sp_u128)sp_pcg64_next(g) * n;
      l = (uint64_t)m;
    }
  }
  return (uint64_t)(m >> 64);
}
