/* engine: methods by name, option defaults and checks, the memory guard. */
#include "engine_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

/* ---- methods ------------------------------------------------------------- */

static const struct {
  const char *name;
  sp_engine_method method;
} methods[SP_ENGINE_NMETHODS] = {
  {"mc", SP_ENGINE_MC},
  {"lhs", SP_ENGINE_LHS},
  {"sobol", SP_ENGINE_SOBOL},
};

const char *sp_engine_method_name(sp_engine_method m)
{
  for (size_t i = 0; i < SP_ENGINE_NMETHODS; i++)
    if (methods[i].method == m) return methods[i].name;
  return NULL;
}

sp_status sp_engine_method_find(const char *name, sp_engine_method *m, sp_error *err)
{
  for (size_t i = 0; name && i < SP_ENGINE_NMETHODS; i++) {
    if (strcmp(methods[i].name, name) == 0) {
      *m = methods[i].method;
      return SP_OK;
    }
  }
  return sp_fail(err, SP_EUSAGE, "unknown sampling method '%s' (known: mc, lhs, sobol)",
                 name ? name : "");
}

/* ---- defaults -------------------------------------------------------------- */

/* The percentiles every run reports, in percent. */
const double engine_default_percentiles[] = {0.1, 0.5, 1, 2.5, 5, 10, 25, 50,
                                             75, 90, 95, 97.5, 99, 99.5, 99.9};
const size_t engine_ndefault_percentiles =
    sizeof engine_default_percentiles / sizeof engine_default_percentiles[0];

/* Default cap of adaptive runs: 10^8 samples (0.8 GB per output). */
#define DEFAULT_MAX_SAMPLES 100000000u
/* Default block: 4096 samples keep a block of a few inputs in L2 cache
 * (4096 x 8 bytes = 32 KiB per input). */
#define DEFAULT_BLOCK 4096u
/* Default Sobol' replicates: 10 gives an error estimate with 9 degrees of
 * freedom. */
#define DEFAULT_REPLICATES 10u
#define DEFAULT_BOOTSTRAP 500u

void sp_engine_options_init(sp_engine_options *o)
{
  memset(o, 0, sizeof *o);
  o->method = SP_ENGINE_MC;
  o->block = DEFAULT_BLOCK;
  o->replicates = DEFAULT_REPLICATES;
  o->coverage = 0.95;
  o->hist_bins = 50;
  o->limit_confidence = 0.95;
  o->max_samples = DEFAULT_MAX_SAMPLES;
  o->bootstrap = DEFAULT_BOOTSTRAP;
  o->index_confidence = 0.95;
}

static int cmp_double(const void *pa, const void *pb)
{
  double a = *(const double *)pa, b = *(const double *)pb;
  return (a > b) - (a < b);
}

double *engine_percentile_list(const sp_engine_options *opt, size_t *np)
{
  size_t n = engine_ndefault_percentiles + opt->npercentiles;
  double *p = malloc(n * sizeof *p);
  if (!p) return NULL;
  for (size_t i = 0; i < engine_ndefault_percentiles; i++)
    p[i] = engine_default_percentiles[i] / 100.0;
  for (size_t i = 0; i < opt->npercentiles; i++)
    p[engine_ndefault_percentiles + i] = opt->percentiles[i] / 100.0;
  qsort(p, n, sizeof *p, cmp_double);
  size_t w = 0;
  for (size_t i = 0; i < n; i++)
    if (w == 0 || p[i] != p[w - 1]) p[w++] = p[i];
  *np = w;
  return p;
}

/* ---- checks ---------------------------------------------------------------- */

sp_status engine_options_check(const sp_engine_options *opt, size_t ninputs,
                               size_t noutputs, int indices, sp_error *err)
{
  if (!sp_engine_method_name(opt->method))
    return sp_fail(err, SP_EUSAGE, "unknown sampling method %d", (int)opt->method);
  if (opt->block == 0) return sp_fail(err, SP_EUSAGE, "block size must be at least 1");
  if (opt->threads < 0)
    return sp_fail(err, SP_EUSAGE, "threads must be 0 (all) or positive, got %d", opt->threads);
  if (ninputs == 0) return sp_fail(err, SP_EUSAGE, "the model has no inputs");
  if (noutputs == 0) return sp_fail(err, SP_EUSAGE, "the model has no outputs");
  size_t dim = indices ? 2 * ninputs : ninputs;
  if (dim >= ENGINE_MAX_DIM)
    return sp_fail(err, SP_EUSAGE, "%zu inputs: the stream plan numbers at most %u dimensions",
                   ninputs, ENGINE_MAX_DIM - 1);
  const int adaptive = !indices && opt->adaptive_digits > 0;
  if (!adaptive && opt->samples == 0)
    return sp_fail(err, SP_EUSAGE, "the number of samples must be at least 1");
  /* 2^50 samples keep every byte count of the memory guard below 2^64 */
  const uint64_t most = UINT64_C(1) << 50;
  if ((!adaptive && opt->samples > most) || (adaptive && opt->max_samples > most)) {
    sp_fail(err, SP_EUSAGE, "at most 2^50 samples per run, got %llu",
            (unsigned long long)(adaptive ? opt->max_samples : opt->samples));
    return sp_error_hint(err, "2^50 is about 1.1e15; give fewer samples, or --tolerance to stop "
                              "when the results have the digits asked for");
  }
  if (opt->method == SP_ENGINE_SOBOL) {
    if (dim > SP_ENGINE_SOBOL_MAX_DIM)
      return sp_fail(err, SP_EUSAGE,
                     "sobol: %zu dimensions%s; GSL's Sobol' generator has at most %d",
                     dim, indices ? " (twice the inputs, for A and B)" : "",
                     SP_ENGINE_SOBOL_MAX_DIM);
    if (!indices && !adaptive) {
      if (opt->replicates == 0)
        return sp_fail(err, SP_EUSAGE, "sobol: replicates must be at least 1");
      if (opt->samples % opt->replicates != 0)
        return sp_fail(err, SP_EUSAGE,
                       "sobol: samples (%llu) must be a multiple of replicates (%zu)",
                       (unsigned long long)opt->samples, opt->replicates);
    }
  }
  if (opt->npercentiles > 0 && !opt->percentiles)
    return sp_fail(err, SP_EUSAGE, "%zu percentiles given without their array", opt->npercentiles);
  for (size_t i = 0; i < opt->npercentiles; i++)
    if (!(opt->percentiles[i] > 0.0 && opt->percentiles[i] < 100.0))
      return sp_fail(err, SP_EUSAGE, "percentile %g lies outside (0, 100)", opt->percentiles[i]);
  if (!(opt->coverage > 0.0 && opt->coverage < 1.0))
    return sp_fail(err, SP_EUSAGE, "coverage probability %g lies outside (0, 1)", opt->coverage);
  if (opt->hist_bins == 0) return sp_fail(err, SP_EUSAGE, "histogram bins must be at least 1");
  if (opt->hist_range) {
    for (size_t o = 0; o < noutputs; o++) {
      double lo = opt->hist_range[2 * o], hi = opt->hist_range[2 * o + 1];
      if (isnan(lo) && isnan(hi)) continue;
      if (!(isfinite(lo) && isfinite(hi) && lo < hi))
        return sp_fail(err, SP_EUSAGE,
                       "histogram range of output %zu must be finite with lo < hi, got [%g, %g]",
                       o + 1, lo, hi);
    }
  }
  if (opt->nlimits > 0 && !opt->limits)
    return sp_fail(err, SP_EUSAGE, "%zu limits given without their array", opt->nlimits);
  for (size_t i = 0; i < opt->nlimits; i++) {
    const sp_engine_limit *l = &opt->limits[i];
    if (l->output >= noutputs)
      return sp_fail(err, SP_EUSAGE, "limit %zu names output %zu, the model has %zu", i + 1,
                     l->output + 1, noutputs);
    if (l->direction != SP_ENGINE_BELOW && l->direction != SP_ENGINE_ABOVE)
      return sp_fail(err, SP_EUSAGE, "limit %zu: unknown direction %d", i + 1, (int)l->direction);
    if (!isfinite(l->value))
      return sp_fail(err, SP_EUSAGE, "limit %zu: value must be finite, got %g", i + 1, l->value);
  }
  if (!(opt->limit_confidence > 0.0 && opt->limit_confidence < 1.0))
    return sp_fail(err, SP_EUSAGE, "limit confidence %g lies outside (0, 1)",
                   opt->limit_confidence);
  if (adaptive) {
    uint64_t batch = engine_adaptive_batch(opt->coverage, opt->block);
    if (opt->max_samples < 2 * batch)
      return sp_fail(err, SP_EUSAGE,
                     "adaptive: max_samples (%llu) must allow two batches of %llu samples",
                     (unsigned long long)opt->max_samples, (unsigned long long)batch);
    if (opt->method == SP_ENGINE_SOBOL && batch > (UINT64_C(1) << 30))
      return sp_fail(err, SP_EUSAGE, "adaptive sobol: batch of %llu points exceeds 2^30",
                     (unsigned long long)batch);
    if (opt->tolerance)
      for (size_t o = 0; o < noutputs; o++)
        if (!(isfinite(opt->tolerance[o]) && opt->tolerance[o] > 0.0))
          return sp_fail(err, SP_EUSAGE, "adaptive: tolerance of output %zu must be > 0, got %g",
                         o + 1, opt->tolerance[o]);
  }
  if (indices) {
    if (opt->bootstrap > ENGINE_MAX_BOOT)
      return sp_fail(err, SP_EUSAGE, "bootstrap resamples (%zu) exceed %u", opt->bootstrap,
                     ENGINE_MAX_BOOT);
    if (!(opt->index_confidence > 0.0 && opt->index_confidence < 1.0))
      return sp_fail(err, SP_EUSAGE, "index confidence %g lies outside (0, 1)",
                     opt->index_confidence);
    if (opt->ncorr > 0)
      return sp_fail(err, SP_EUSAGE,
                     "Sobol' indices need independent inputs; %zu rank correlations were given",
                     opt->ncorr);
  }
  return SP_OK;
}

sp_status engine_options_check_counts(const sp_engine_options *opt, int indices, sp_error *err)
{
  if (indices && opt->samples > UINT32_MAX)
    return sp_fail(err, SP_EUSAGE, "Sobol' indices: at most %u base samples", UINT32_MAX);
  if (!indices && opt->rank_sensitivity && opt->adaptive_digits == 0 &&
      opt->samples > UINT32_MAX)
    return sp_fail(err, SP_EUSAGE, "rank sensitivity: at most %u samples", UINT32_MAX);
  return SP_OK;
}

/* ---- memory -------------------------------------------------------------- */

uint64_t engine_memory_limit(uint64_t lim, int *is_default)
{
  *is_default = lim == 0;
  if (lim) return lim;
  long pages = sysconf(_SC_PHYS_PAGES), size = sysconf(_SC_PAGESIZE);
  if (pages <= 0 || size <= 0) return UINT64_MAX; /* unknown: no guard */
  /* 75%: leaves a quarter of the machine to the system and the evaluator */
  return (uint64_t)pages / 4 * 3 * (uint64_t)size;
}

static void fmt_bytes(char *buf, size_t n, uint64_t b)
{
  double v = (double)b;
  if (v >= 1e9) snprintf(buf, n, "%.1f GB", v / 1e9);
  else if (v >= 1e6) snprintf(buf, n, "%.1f MB", v / 1e6);
  else snprintf(buf, n, "%.1f kB", v / 1e3);
}

sp_status engine_memory_guard(uint64_t bytes, uint64_t limit_opt, sp_error *err)
{
  int def;
  uint64_t lim = engine_memory_limit(limit_opt, &def);
  if (bytes <= lim) return SP_OK;
  char need[32], have[32];
  fmt_bytes(need, sizeof need, bytes);
  fmt_bytes(have, sizeof have, lim);
  sp_fail(err, SP_ENOMEM, "this run needs %s; the limit is %s%s", need, have,
          def ? " (75% of physical memory)" : "");
  return sp_error_hint(err, "lower the number of samples (every sample keeps one double per "
                            "output), or raise the memory limit");
}

uint64_t engine_adaptive_batch(double coverage, size_t block)
{
  /* JCGM 101 7.9.4 b): M = max(J, 10^4), J the smallest integer >= 100 /
   * (1 - p); rounded up here to whole blocks so that batches are blocks. */
  double j = ceil(100.0 / (1.0 - coverage));
  double m = j > 1e4 ? j : 1e4;
  uint64_t mm = (uint64_t)m;
  return (mm + block - 1) / block * block;
}

uint64_t engine_run_bytes(const sp_engine_options *opt, size_t k, size_t nout,
                          uint64_t nsamp, int threads)
{
  const uint64_t B = opt->block, N = nsamp;
  uint64_t nblocks = (N + B - 1) / B;
  uint64_t b = 0;
  b += N * nout * 8;                                 /* one double per sample per output */
  if (opt->keep_samples) b += N * nout * 8;          /* the copy in sample order */
  if (opt->rank_sensitivity) { /* inputs; ranks and sort scratch (engine_rank.c) */
    const uint64_t rt = (uint64_t)engine_rank_threads(threads, k, nout);
    const uint64_t fin = 8 * (uint64_t)nout + 32 * rt; /* all finite: rt threads */
    b += N * k * 8 + N * (fin > 52 ? fin : 52);
  }
  b += (uint64_t)threads * (2 * B * k * 8 + (k + nout) * 16); /* block inputs, scratch */
  b += nblocks * (nout * sizeof(engine_moments) + 1);
  uint64_t tail = opt->coverage < 0.5 ? N : (uint64_t)((1.0 - opt->coverage) * (double)N) + 1;
  /* Per output summarised at a time: the tails (12% over M - q each) and
   * their sort scratch, the subsample and its sort scratch, the slot
   * tables.  With fewer outputs than threads the outputs go one after the
   * other on all threads: per-chunk slot counts, two sorters' scratch. */
  const uint64_t fixed = 24 * BRACKET_SUB + 4 * 8 * BRACKET_SLOTS;
  if (nout < (uint64_t)threads)
    b += 54 * tail + fixed + (uint64_t)threads * 8 * (BRACKET_SLOTS + opt->hist_bins + 2);
  else
    b += (uint64_t)threads * (36 * tail + fixed + 8 * BRACKET_SLOTS);
  if (opt->method == SP_ENGINE_SOBOL) {
    uint64_t G = opt->adaptive_digits ? engine_adaptive_batch(opt->coverage, opt->block)
                                      : N / (opt->replicates ? opt->replicates : 1);
    b += G * k * 4;
  }
  if (opt->adaptive_digits) b += engine_adaptive_batch(opt->coverage, opt->block) * 8;
  return b;
}

uint64_t engine_sobol_bytes(const sp_engine_options *opt, size_t k, size_t nout, int threads)
{
  const uint64_t B = opt->block, N = opt->samples;
  uint64_t nblocks = (N + B - 1) / B;
  uint64_t b = N * (k + 2) * nout * 8;               /* f(A), f(B), f(A_B^(i)) */
  b += N * 4;                                         /* the samples kept */
  b += (uint64_t)threads * (4 * B * k * 8 + (k + nout) * 16);
  b += nblocks;
  b += (uint64_t)opt->bootstrap * nout * k * 2 * 8;
  if (opt->method == SP_ENGINE_SOBOL) b += N * 2 * k * 4;
  return b;
}

sp_status sp_engine_memory_needed(const sp_engine_options *opt, size_t ninputs,
                                  size_t noutputs, uint64_t *bytes, sp_error *err)
{
  if (!opt || !bytes) return sp_fail(err, SP_EUSAGE, "sp_engine_memory_needed: missing argument");
  if (opt->block == 0) return sp_fail(err, SP_EUSAGE, "block size must be at least 1");
  int t = engine_threads_resolve(opt->threads);
  uint64_t n = opt->adaptive_digits ? opt->max_samples : opt->samples;
  *bytes = engine_run_bytes(opt, ninputs, noutputs, n, t);
  return SP_OK;
}
