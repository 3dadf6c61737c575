/* scatterprop engine: Monte Carlo propagation of input distributions
 * through a model, block by block, on several threads.
 *
 * The engine knows nothing of the model language: it calls a generic
 * evaluator (sp_evaluator) on blocks of B samples.  Block b of a run always
 * draws input i from the stream sp_rng_block_stream(seed, b, i), whichever
 * thread computes it, and per-block statistics are merged strictly in block
 * order, so every result is bit-identical for any thread count.
 *
 * Methods (docs/engine.md has the definitions and the memory needed):
 *  - "mc": each family's block sampler, or inversion through a Gaussian
 *    copula when the input is rank-correlated with another;
 *  - "lhs": Latin hypercube sampling (McKay, Beckman & Conover 1979) with one
 *    design over the whole run (or over each batch of an adaptive run);
 *  - "sobol": Sobol' points (GSL's gsl_qrng_sobol, dimension <= 40), with a
 *    Cranley-Patterson random shift per replicate, so that the spread of the
 *    replicates gives an error estimate.
 *
 * Definitions used in the results (full text in docs/engine.md):
 *  - sd: n - 1 denominator; skewness g1 = m3 / m2^(3/2) and excess kurtosis
 *    g2 = m4 / m2^2 - 3 with m_k = sum (y - mean)^k / n (as sp_stats_describe);
 *  - percentiles: Hyndman & Fan (1996) definition 7, exact order statistics
 *    (the same numbers as sp_quantile_select on the finite values);
 *  - coverage intervals: JCGM 101:2008 clause 7.7 (order statistics
 *    y_(r), y_(r+q) with q = pM rounded half up), probabilistically
 *    symmetric (7.7.1) and shortest (7.7.2);
 *  - exceedance intervals: Wilson score when 0 < k < n, the exact one-sided
 *    Clopper-Pearson bound when k = 0 or k = n;
 *  - NaN and infinite outputs are counted per output and excluded from every
 *    statistic of that output. */
#ifndef SP_ENGINE_H
#define SP_ENGINE_H

#include <stddef.h>
#include <stdint.h>

#include "scatterprop/core.h"
#include "scatterprop/dist.h"

#ifdef __cplusplus
extern "C" {
#endif

/* ---- the model, as the engine sees it ------------------------------------ */

/* A vectorised model with ninputs inputs and noutputs outputs.
 *  ws_alloc(ctx, block) returns a workspace for blocks of up to block
 *    samples, one per thread (NULL on out-of-memory); ws_free frees it;
 *  eval(ctx, ws, in, n, out) reads in[i][0..n) for each input i and writes
 *    out[o][0..n) for each output o.  It must be a pure function of its
 *    inputs (the engine's determinism rests on it) and may be called from
 *    several threads at once with different workspaces; ctx is shared and
 *    must not be written.  Outputs may be NaN or infinite: the engine counts
 *    and excludes them.
 * ws_alloc and ws_free may be NULL when eval needs no workspace (ws is then
 * NULL). */
typedef struct {
  size_t ninputs, noutputs;
  void *ctx;
  void *(*ws_alloc)(void *ctx, size_t block);
  void (*ws_free)(void *ws);
  void (*eval)(void *ctx, void *ws, const double *const *in, size_t n,
               double *const *out);
} sp_evaluator;

/* One model input: value = scale * draw + offset, draw ~ fam(theta).
 * fam must provide quantile_P and quantile_Q (inversion is used by lhs,
 * sobol and the copula) and sample (used by mc); check() is called on theta
 * when present.  name is used in messages (may be NULL: "input 3"). */
typedef struct {
  const sp_family *fam;
  double theta[SP_FAMILY_MAX_PARAMS];
  double scale, offset;
  const char *name;
} sp_engine_input;

/* A Spearman rank correlation rho_s in [-1, 1] between inputs i != j. */
typedef struct {
  size_t i, j;
  double rho_s;
} sp_engine_corr;

/* A limit on an output, stated as the requirement the output must meet:
 * SP_ENGINE_BELOW ("y < value") is violated by y >= value, SP_ENGINE_ABOVE
 * ("y > value") by y <= value. */
typedef enum { SP_ENGINE_BELOW = 0, SP_ENGINE_ABOVE = 1 } sp_engine_direction;
typedef struct {
  size_t output;
  sp_engine_direction direction;
  double value;
} sp_engine_limit;

/* ---- methods ------------------------------------------------------------- */

typedef enum { SP_ENGINE_MC = 0, SP_ENGINE_LHS = 1, SP_ENGINE_SOBOL = 2 } sp_engine_method;
#define SP_ENGINE_NMETHODS 3
/* "mc", "lhs", "sobol" (NULL for a value outside the enum). */
const char *sp_engine_method_name(sp_engine_method m);
/* The method spelled name; SP_EUSAGE naming the known spellings if unknown. */
sp_status sp_engine_method_find(const char *name, sp_engine_method *m, sp_error *err);

/* GSL's Sobol' generator's largest dimension (inputs for "sobol", twice the
 * inputs for Sobol' indices with the "sobol" method). */
#define SP_ENGINE_SOBOL_MAX_DIM 40

/* ---- options --------------------------------------------------------------- */

/* Called between blocks by the thread that merges them (the caller's
 * thread), with the samples merged so far and the samples planned (the cap
 * for adaptive runs).  A non-zero return cancels the run: blocks already
 * started complete, no new block starts, and the result is marked partial. */
typedef int (*sp_engine_progress_fn)(void *user, uint64_t done, uint64_t total);

/* Wall-clock seconds of the two phases of a run, filled when the options
 * point to one (kept out of the result, which must not depend on timing). */
typedef struct {
  double blocks;   /* sampling, evaluation and merging of the blocks */
  double summary;  /* percentiles, intervals, histogram, sensitivity */
} sp_engine_timing;

typedef struct {
  sp_engine_method method;
  uint64_t seed;
  uint64_t samples;       /* N; for sp_engine_sobol_indices, base samples */
  size_t block;           /* B (default 4096); part of what a run reproduces */
  int threads;            /* 0: omp_get_max_threads() */
  size_t replicates;      /* sobol method: R shifted replicates (default 10) */

  const sp_engine_corr *corr; /* borrowed; ncorr pairs */
  size_t ncorr;

  const double *percentiles; /* extra percentiles in (0, 100), borrowed */
  size_t npercentiles;
  double coverage;        /* coverage probability of the intervals (0.95) */
  size_t hist_bins;       /* default 50 */
  /* NULL, or 2 * noutputs values lo, hi per output; a NAN pair means
   * [min, max] of that output.  Borrowed. */
  const double *hist_range;

  const sp_engine_limit *limits; /* borrowed */
  size_t nlimits;
  double limit_confidence; /* of the exceedance intervals (0.95) */

  int rank_sensitivity;   /* non-zero: Spearman correlations input x output */
  int keep_samples;       /* non-zero: the result retains every output value */

  /* Adaptive Monte Carlo, JCGM 101:2008 clause 7.9: non-zero digits ndig
   * (7.9.2) turns it on (samples is then ignored); tolerance, when not NULL,
   * gives noutputs absolute tolerances delta instead of deriving them from
   * ndig.  max_samples caps the run (default 10^8). */
  unsigned adaptive_digits;
  const double *tolerance;
  uint64_t max_samples;

  size_t bootstrap;       /* Sobol' indices: bootstrap resamples (default 500) */
  double index_confidence; /* of the bootstrap intervals (0.95) */

  uint64_t memory_limit;  /* bytes; 0: 75% of physical memory */
  sp_engine_progress_fn progress; /* may be NULL */
  /* Non-zero: a cancelled run returns as soon as its blocks stop, without
   * summarising them (no moments, percentiles, sensitivity; res->status
   * SP_ENGINE_CANCELLED, res->samples the samples merged, the rest zero),
   * for callers that keep nothing of a partial run and want Ctrl-C to take
   * effect at once.  Zero (default): the partial run is summarised. */
  int discard_cancelled;
  void *progress_user;
  sp_engine_timing *timing;       /* may be NULL; written by the run */
} sp_engine_options;

/* Fills o with the defaults above (mc, seed 0, samples 0, block 4096, ...). */
void sp_engine_options_init(sp_engine_options *o);

/* ---- results --------------------------------------------------------------- */

typedef enum {
  SP_ENGINE_COMPLETE = 0,    /* all planned samples (or stabilised) */
  SP_ENGINE_CANCELLED = 1,   /* the progress callback asked to stop: partial */
  SP_ENGINE_NOT_STABILISED = 2 /* adaptive: max_samples reached first */
} sp_engine_run_status;

/* How sem was obtained. */
typedef enum {
  SP_ENGINE_SEM_IID = 0,        /* sd / sqrt(n): independent samples (mc) */
  SP_ENGINE_SEM_REPLICATES = 1, /* spread of the means of independent
                                   replicates or batches (sobol, adaptive) */
  SP_ENGINE_SEM_IID_BOUND = 2   /* lhs, one design: sd / sqrt(n), an upper
                                   bound (Owen 1997) rather than an estimate */
} sp_engine_sem_kind;

/* Statistics of one output.  Every member is 8 bytes wide, so the struct
 * has no padding and results can be compared byte for byte. */
typedef struct {
  uint64_t n;                /* finite values used */
  uint64_t nan, posinf, neginf; /* excluded values */
  double mean, sd, sem, min, max, skewness, kurtosis;
  double sym_lo, sym_hi;     /* probabilistically symmetric interval */
  double short_lo, short_hi; /* shortest interval */
  double hist_lo, hist_hi;   /* histogram range */
  uint64_t hist_below, hist_above; /* finite values outside the range */
  /* adaptive runs: the numerical tolerance used (JCGM 101 7.9.2) and the
   * final 2 s of the batch averages of y, u(y), y_low, y_high (7.9.4 j) */
  double delta, s2_mean, s2_sd, s2_lo, s2_hi;
} sp_engine_output;

/* An exceedance result (same layout rule: 8-byte members only). */
typedef struct {
  uint64_t output;
  uint64_t direction;   /* sp_engine_direction */
  double value;
  uint64_t violations;  /* finite values violating the requirement */
  uint64_t n;           /* finite values */
  double p;             /* violations / n */
  double lo, hi;        /* interval at limit_confidence */
  uint64_t one_sided;   /* 1: k = 0 (lo = 0) or k = n (hi = 1) */
} sp_engine_exceed;

typedef struct {
  uint64_t status;        /* sp_engine_run_status */
  uint64_t method;        /* sp_engine_method */
  uint64_t seed, block, replicates;
  uint64_t requested;     /* N planned (adaptive: the cap) */
  uint64_t samples;       /* trials taken and merged */
  uint64_t threads;       /* threads used (recorded only: results do not
                             depend on it) */
  uint64_t sem_kind;      /* sp_engine_sem_kind */
  uint64_t batches, batch_size; /* adaptive: h and M; 0 otherwise */
  double coverage;
  uint64_t ninputs, noutputs, npct, nbins, nlimits;

  double *pct_p;          /* npct probabilities, ascending, in (0, 1) */
  sp_engine_output *out;  /* noutputs */
  double *pct;            /* noutputs x npct: pct[o * npct + k] */
  uint64_t *hist;         /* noutputs x nbins */
  sp_engine_exceed *exceed; /* nlimits */
  double *rank_corr;      /* noutputs x ninputs Spearman, or NULL */
  double *rank_share;     /* noutputs x ninputs rho^2 / sum rho^2, or NULL */
  double *samples_kept;   /* noutputs x samples in sample order (with the
                             non-finite values), or NULL */
} sp_engine_result;

/* Frees the arrays of r (not r itself) and zeroes it.  r may be NULL. */
void sp_engine_result_free(sp_engine_result *r);

/* Runs the propagation.  inputs[0..ninputs) must match ev->ninputs.  res is
 * provided by the caller and filled with owned arrays (free them with
 * sp_engine_result_free, also after a failure).  Returns SP_OK (check
 * res->status for cancelled or not stabilised runs), or:
 *  SP_EUSAGE  options or inputs outside their domain, correlations that are
 *             not positive definite after conversion (naming a pair);
 *  SP_ENOMEM  the run needs more memory than memory_limit (the message
 *             gives both figures), or an allocation failed. */
sp_status sp_engine_run(const sp_engine_input *inputs, size_t ninputs,
                        const sp_evaluator *ev, const sp_engine_options *opt,
                        sp_engine_result *res, sp_error *err);

/* Bytes a run with these options would allocate (excluding the evaluator's
 * workspaces, which the engine cannot know), for a progress display or a
 * dry run.  For adaptive runs, the figure for max_samples. */
sp_status sp_engine_memory_needed(const sp_engine_options *opt, size_t ninputs,
                                  size_t noutputs, uint64_t *bytes, sp_error *err);

/* ---- Sobol' indices -------------------------------------------------------- */

/* One input's indices for one output, with bootstrap percentile intervals
 * (index_confidence) and bootstrap standard errors. */
typedef struct {
  double S, S_lo, S_hi, S_se;
  double ST, ST_lo, ST_hi, ST_se;
} sp_engine_index;

typedef struct {
  uint64_t status;        /* sp_engine_run_status (COMPLETE or CANCELLED) */
  uint64_t method, seed, block, threads;
  uint64_t base_samples;  /* N merged */
  uint64_t evaluations;   /* N (k + 2) model evaluations */
  uint64_t used;          /* base samples whose k + 2 values were all finite
                             for every output */
  uint64_t bootstrap;
  uint64_t ninputs, noutputs;
  double *mean, *variance; /* noutputs, from f(A) and f(B) */
  sp_engine_index *idx;   /* noutputs x ninputs: idx[o * ninputs + i] */
} sp_engine_sobol_result;

void sp_engine_sobol_result_free(sp_engine_sobol_result *r);

/* First-order and total Sobol' indices by the estimators of Saltelli et al.
 * (2010) (first order) and Jansen (1999) (total) from N = opt->samples base
 * samples: matrices A and B (a 2k-dimensional design of the chosen method)
 * and the k matrices A_B^(i), evaluated block-wise.  Inputs must be
 * independent (ncorr = 0).  Errors as sp_engine_run. */
sp_status sp_engine_sobol_indices(const sp_engine_input *inputs, size_t ninputs,
                                  const sp_evaluator *ev,
                                  const sp_engine_options *opt,
                                  sp_engine_sobol_result *res, sp_error *err);

/* ---- building blocks, public for tests and reports ------------------------- */

/* Pearson correlation of the Gaussian copula with Spearman rho_s:
 * 2 sin(pi rho_s / 6) (Pearson 1907). */
double sp_engine_spearman_to_pearson(double rho_s);

/* JCGM 101:2008 7.9.2: the numerical tolerance of z with ndig significant
 * digits, 10^l / 2 where z = c 10^l with c an ndig-digit integer.  NAN for
 * z = 0 or non-finite z, or ndig = 0. */
double sp_engine_jcgm_tolerance(double z, unsigned ndig);

/* Interval for a binomial proportion k/n at confidence conf in (0, 1):
 * Wilson (1927) score interval for 0 < k < n; for k = 0, [0, 1 -
 * (1 - conf)^(1/n)] (one-sided Clopper-Pearson), and symmetrically for k = n.
 * Returns 1 for the one-sided cases, 0 otherwise; NAN bounds when n = 0. */
int sp_engine_binomial_interval(uint64_t k, uint64_t n, double conf,
                                double *lo, double *hi);

/* JCGM 101:2008 7.7 on sorted values y[0..m): the order-statistic indices
 * (0-based) of the probabilistically symmetric interval, lo = r - 1 and
 * hi = r + q - 1.  Returns 0 when m is too small for coverage p (r < 1 or
 * r + q > m), 1 otherwise. */
int sp_engine_symmetric_index(size_t m, double p, size_t *lo, size_t *hi);

#ifdef __cplusplus
}
#endif
#endif /* SP_ENGINE_H */
