/* Private interface between the engine's source files (never installed). */
#ifndef SP_ENGINE_INTERNAL_H
#define SP_ENGINE_INTERNAL_H

#include <stddef.h>
#include <stdint.h>

#include "scatterprop/engine.h"
#include "scatterprop/rng.h"

/* ---- stream plan ------------------------------------------------------------
 * Regular blocks b < 2^48 - 1 use sp_rng_block_stream(seed, b, d) for
 * dimension d of the design (input d; for Sobol' indices, A uses d = i and B
 * uses d = k + i).  The last block index is reserved for the streams that
 * belong to the run as a whole, told apart by sub: */
#define ENGINE_DESIGN_BLOCK ((UINT64_C(1) << 48) - 1)
#define ENGINE_SUB_LHS 0u               /* + d: Latin hypercube keys */
#define ENGINE_SUB_SHIFT (1u << 14)     /* + d: Cranley-Patterson shifts */
#define ENGINE_SUB_BOOT (1u << 15)      /* + r: bootstrap resample r */
#define ENGINE_MAX_DIM (1u << 14)       /* dimensions the plan can number */
#define ENGINE_MAX_BOOT (1u << 15)

/* Rounds of the Feistel permutation of the Latin hypercube strata; see
 * engine_sample.c for the reason. */
#define ENGINE_LHS_ROUNDS 6

/* ---- designs (engine_sample.c) ---------------------------------------------- */

typedef struct {
  sp_engine_method method;
  uint64_t seed;
  size_t dim;            /* D: uniform dimensions */
  uint64_t size;         /* G: samples per design (lhs, sobol); 0 for mc */
  size_t ndesigns, cap;  /* designs with keys or shifts drawn */
  unsigned halfbits;     /* lhs: Feistel half width, 2 * halfbits >= log2 G */
  uint64_t *keys;        /* lhs: cap x dim x ENGINE_LHS_ROUNDS round keys */
  uint64_t *shift;       /* sobol: cap x dim 52-bit shifts */
  uint32_t *points;      /* sobol: size x dim numerators, units 2^-30 */
} engine_design;

/* Prepares a design of dimension dim with designs of size G (lhs, sobol;
 * ignored for mc).  sobol: dim <= 40 and G <= 2^30.  SP_ENOMEM/SP_EUSAGE. */
sp_status engine_design_init(engine_design *d, sp_engine_method m, uint64_t seed,
                             size_t dim, uint64_t size, sp_error *err);
/* Makes sure designs 0..count-1 have their keys or shifts. */
sp_status engine_design_reserve(engine_design *d, size_t count, sp_error *err);
void engine_design_free(engine_design *d);
/* Open uniforms u[0..n) of dimension dd for samples k0..k0+n-1 of block b. */
void engine_design_uniform(const engine_design *d, size_t dd, uint64_t b,
                           uint64_t k0, size_t n, double *u);
/* The keyed permutation of [0, size) used by lhs (for tests of the rule). */
uint64_t engine_lhs_permute(const uint64_t *keys, unsigned halfbits,
                            uint64_t size, uint64_t j);

/* ---- inputs and copula (engine_copula.c, engine_sample.c) ------------------- */

typedef struct {
  size_t k;
  const sp_engine_input *in;
  size_t ncop;           /* inputs in a correlated group */
  size_t *cop;           /* their indices, ascending */
  unsigned char *iscop;  /* k flags: input i is in a correlated group */
  double *L;             /* k x k lower Cholesky factor (row-major), or NULL */
} engine_inputs;

/* Validates inputs and correlations and builds the Cholesky factor of the
 * normal-score correlation matrix.  SP_EUSAGE naming the input or pair. */
sp_status engine_inputs_init(engine_inputs *x, const sp_engine_input *in,
                             size_t k, const sp_engine_corr *corr, size_t ncorr,
                             sp_error *err);
void engine_inputs_free(engine_inputs *x);

/* Fills x[i][0..n) for every input of block b, samples k0.., using
 * dimensions doff + i of the design.  z is scratch of k * n doubles. */
void engine_sample_block(const engine_inputs *x, const engine_design *d,
                         size_t doff, uint64_t b, uint64_t k0, size_t n,
                         double *const *out, double *z);

/* ---- moments (engine_stats.c) -------------------------------------------- */

/* mean, min and max are in the output's unit; the central sums m2, m3, m4
 * are those of the values times 2^shift (a power of two chosen from the
 * largest magnitude, so that neither the sums of values near DBL_MAX
 * overflow nor the powers of tiny values underflow).  Read the standard
 * deviation with engine_moments_sd; skewness and kurtosis are ratios in
 * which the scale cancels. */
typedef struct {
  uint64_t n, nan, posinf, neginf;
  int64_t shift;
  double mean, m2, m3, m4, min, max;
} engine_moments;

void engine_moments_block(const double *y, size_t n, engine_moments *m);
/* a <- a merged with b (a's samples first). */
void engine_moments_merge(engine_moments *a, const engine_moments *b);
void engine_moments_zero(engine_moments *m);
/* The sample standard deviation (n - 1) of m, NAN for fewer than 2 values;
 * +Inf when it exceeds the range of a double. */
double engine_moments_sd(const engine_moments *m);

/* Removes non-finite values from y[0..n) keeping the order; returns the
 * number kept. */
size_t engine_compact_finite(double *y, size_t n);

/* The bracketing of engine_order_stats: a subsample of BRACKET_SUB values,
 * BRACKET_BINS equal bins between the tails (their counters stay in the
 * second-level cache), and two slots for the tails. */
#define BRACKET_SUB 65536u
#define BRACKET_BINS 16384u
#define BRACKET_SLOTS (BRACKET_BINS + 2u)

/* Order statistics of y[0..m) (finite, rearranged): the percentiles p[0..np)
 * by Hyndman-Fan 7 into pct, and the JCGM 101 intervals at coverage cov.
 * The bracketing passes (large m) run on `threads` threads (1: this one);
 * the figures do not depend on the number. */
sp_status engine_order_stats(double *y, size_t m, const double *p, size_t np,
                             double cov, double *pct, sp_engine_output *o, int threads,
                             sp_error *err);
/* Histogram of y[0..m) on [lo, hi] into counts[0..nb) with the outside
 * counts. */
void engine_histogram(const double *y, size_t m, double lo, double hi, size_t nb,
                      uint64_t *counts, uint64_t *below, uint64_t *above);
/* The same counted on `threads` threads; SP_ENOMEM (nothing counted) when
 * their rows cannot be allocated. */
sp_status engine_histogram_par(const double *y, size_t m, double lo, double hi, size_t nb,
                               uint64_t *counts, uint64_t *below, uint64_t *above,
                               int threads);
/* JCGM 101 7.7: q = pM, rounded half up (engine_interval.c). */
size_t engine_jcgm_q(size_t m, double p);
/* Hyndman-Fan 7 interpolation as sp_quantile_sorted: a + g (b - a). */
double engine_hf7_lerp(double a, double b, double g);
/* Hyndman-Fan 7 position: (m - 1) p = j + g. */
void engine_hf7_position(size_t m, double p, size_t *j, double *g);

/* ---- sorting (engine_sort.c) --------------------------------------------- */

/* Sorts y[0..n) ascending (finite values); tmp holds 2 n uint64. */
void engine_sort_doubles(double *y, size_t n, uint64_t *tmp);
/* Ranks of y[0..n) (finite): rank[i] in 1..n, ties get their average rank.
 * tmp holds 2 n uint64 and idx 2 n uint32. */
void engine_rank(const double *y, size_t n, double *rank, uint64_t *tmp,
                 uint32_t *idx);

/* ---- threads (engine_threads.c) ------------------------------------------- */

typedef struct {
  int threads;
  uint64_t nblocks;      /* blocks first..first+nblocks-1 of the job */
  uint64_t first;
  void *job;
  /* per-thread workspace; NULL on out-of-memory */
  void *(*thread_init)(void *job);
  void (*thread_fini)(void *job, void *tw);
  void (*block)(void *job, void *tw, uint64_t b);
  /* in block order, on the caller's thread */
  void (*merge)(void *job, uint64_t b);
  sp_engine_progress_fn progress;
  void *progress_user;
  uint64_t samples_before;  /* for progress: samples merged before first */
  uint64_t samples_total;
  uint64_t block_size, run_samples; /* to convert blocks to samples */
} engine_par;

/* Runs the blocks on p->threads threads; *merged receives the number of
 * blocks merged (all, unless cancelled); *cancelled is set when progress
 * asked to stop.  SP_ENOMEM when a thread workspace could not be made. */
sp_status engine_par_run(const engine_par *p, uint64_t *merged, int *cancelled,
                         sp_error *err);
/* Threads to use for option value t (0: omp_get_max_threads()). */
int engine_threads_resolve(int t);

/* ---- options (engine_options.c) ------------------------------------------- */

/* Checks opt against the domains documented in engine.h. */
sp_status engine_options_check(const sp_engine_options *opt, size_t ninputs,
                               size_t noutputs, int indices, sp_error *err);
/* The sample-count limits of rank sensitivity and Sobol' indices (2^32 - 1),
 * checked after the memory guard so that a run too large for memory is
 * refused with its figure first. */
sp_status engine_options_check_counts(const sp_engine_options *opt, int indices,
                                      sp_error *err);
/* The default percentiles (percent) and their count. */
extern const double engine_default_percentiles[];
extern const size_t engine_ndefault_percentiles;
/* Merged, sorted, deduplicated probabilities (owned). */
double *engine_percentile_list(const sp_engine_options *opt, size_t *np);
/* Memory limit in bytes for option value lim (0: 75% of physical memory). */
uint64_t engine_memory_limit(uint64_t lim, int *is_default);
/* Refuses a run of bytes over the limit, with both figures. */
sp_status engine_memory_guard(uint64_t bytes, uint64_t limit_opt, sp_error *err);
/* Adaptive batch size M of JCGM 101 7.9.4 b), rounded up to whole blocks. */
uint64_t engine_adaptive_batch(double coverage, size_t block);
/* Memory of a propagation run with nsamp samples. */
uint64_t engine_run_bytes(const sp_engine_options *opt, size_t k, size_t nout,
                          uint64_t nsamp, int threads);
uint64_t engine_sobol_bytes(const sp_engine_options *opt, size_t k, size_t nout,
                            int threads);

/* ---- adaptive (engine_adaptive.c) ----------------------------------------- */

typedef struct {
  size_t nout;
  size_t h, cap;
  double *est;           /* cap x nout x 4: y, u(y), y_low, y_high per batch */
  double *scratch;       /* batch-sized copy for the interval ends */
  uint64_t batch;
} engine_adaptive;

sp_status engine_adaptive_init(engine_adaptive *a, size_t nout, uint64_t batch,
                               sp_error *err);
void engine_adaptive_free(engine_adaptive *a);
/* Records batch h's estimates from the values vals[o][0..batch). */
sp_status engine_adaptive_add(engine_adaptive *a, double *const *vals,
                              double coverage, sp_error *err);
/* 1 when every output has stabilised (7.9.4 j), given u(y) of all values so
 * far per output; fills delta and the 2 s figures into out[]. */
int engine_adaptive_stable(const engine_adaptive *a, const double *u_all,
                           unsigned ndig, const double *tol,
                           sp_engine_output *out);

/* ---- sensitivity (engine_rank.c) ----------------------------------------- */

/* Spearman correlations of inputs x[i][0..n) with outputs y[o][0..n),
 * skipping for each output the samples where it is not finite.  rc and share
 * are nout x k.  all_finite says that every output is finite on every
 * sample (the moments counted it); then the variables are ranked on
 * engine_rank_threads(threads, k, nout) threads. */
sp_status engine_rank_sensitivity(const double *const *x, size_t k,
                                  const double *const *y, size_t nout, size_t n,
                                  int all_finite, int threads, double *rc, double *share,
                                  sp_error *err);
/* Threads the ranking uses: at most the larger of k and nout, and at most
 * ENGINE_RANK_MAX_THREADS (each holds 32 bytes of scratch per sample). */
#define ENGINE_RANK_MAX_THREADS 4
int engine_rank_threads(int threads, size_t k, size_t nout);

#endif /* SP_ENGINE_INTERNAL_H */
