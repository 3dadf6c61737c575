/* Benchmark of the engine on the demo spring model (not a ctest).
 *
 *   bench_engine [N]      (default N = 10^7)
 *
 * Helical compression spring, wire diameter d, mean coil diameter Dm,
 * shear modulus G, load F, na = 8 active coils, spring index C = Dm / d:
 *   rate   = G d^4 / (8 Dm^3 na)                              [N/mm]
 *   stress = ((4C - 1)/(4C - 4) + 0.615/C) 8 F Dm / (pi d^3)  [MPa]
 * (Wahl's stress correction factor: Wahl, A.M. (1963). Mechanical Springs,
 * 2nd ed., McGraw-Hill, chapter 2), with d ~ normal(2.0, 0.004) mm,
 * Dm ~ normal(16, 0.075) mm, G ~ normal(79300, 900) MPa,
 * F ~ weibull(shape 8, scale 120) N.
 *
 * Timed in the same run:
 *  - the engine ("mc", default block) on the model compiled from the model
 *    language (SPRING_MODEL below, the bytecode interpreter that
 *    `scatterprop propagate` runs), on 1 and on 2 threads: moments, 15
 *    percentiles, both 95% intervals and a histogram per output;
 *  - the engine with a hand-written C evaluator of the same formulas, on 1
 *    and 2 threads (what the interpreter costs over compiled C);
 *  - a straightforward scalar C loop of the same model with the same
 *    generators (the engine's block streams and the families' samplers,
 *    a block of each input at a time), Welford's running mean and
 *    variance, and the same percentile method (sp_quantile_select, once per
 *    percentile).  Its draws equal the engine's, so its percentiles must be
 *    identical: the benchmark checks that.
 * Prints "key value" lines (read by bench_engine.py, which adds numpy) and
 * the ratios. */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_math.h>

#include "scatterprop/dist.h"
#include "scatterprop/engine.h"
#include "scatterprop/model.h"
#include "scatterprop/rng.h"
#include "scatterprop/run.h"
#include "scatterprop/stats.h"

#define NA_COILS 8.0
#define SEED 20240601u

static double now(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static inline void spring(double d, double dm, double g, double f, double *rate, double *stress)
{
  const double c = dm / d;
  const double d2 = d * d, d3 = d2 * d;
  *rate = g * (d2 * d2) / (8.0 * dm * dm * dm * NA_COILS);
  *stress = ((4.0 * c - 1.0) / (4.0 * c - 4.0) + 0.615 / c) * 8.0 * f * dm / (M_PI * d3);
}

static void spring_eval(void *ctx, void *ws, const double *const *in, size_t n,
                        double *const *out)
{
  (void)ctx;
  (void)ws;
  const double *d = in[0], *dm = in[1], *g = in[2], *f = in[3];
  double *rate = out[0], *stress = out[1];
  for (size_t i = 0; i < n; i++) spring(d[i], dm[i], g[i], f[i], &rate[i], &stress[i]);
}

/* The same model in the model language (G in MPa, so that no unit factor
 * is applied and the bytecode computes what spring() computes). */
static const char SPRING_MODEL[] =
    "input d  [mm]  ~ normal(mean=2.0, sd=0.004)\n"
    "input Dm [mm]  ~ normal(mean=16.0, sd=0.075)\n"
    "input G  [MPa] ~ normal(mean=79300, sd=900)\n"
    "input F  [N]   ~ weibull(shape=8, scale=120)\n"
    "const n = 8\n"
    "let C = Dm / d\n"
    "output rate   [N/mm] = G * d^4 / (8 * Dm^3 * n)\n"
    "output stress [MPa]  = ((4*C - 1)/(4*C - 4) + 0.615/C) * 8 * F * Dm / (pi * d^3)\n";

typedef struct {
  double mean[2], sd[2], pct[2][15];
} scalar_result;

/* The scalar reference: each input's block from its family's sampler on
 * the block stream (as the engine's mc method), then per sample the model
 * and Welford's update; then sp_quantile_select per percentile. */
static void scalar_loop(const sp_engine_input *in, uint64_t n, size_t block,
                        const double *p, size_t np, double *y0, double *y1,
                        scalar_result *res)
{
  double mean[2] = {0, 0}, m2[2] = {0, 0};
  uint64_t k = 0;
  /* Each input's block is drawn by its family's sampler, as the engine's mc
   * method does; then the model runs one sample at a time. */
  double *draws = malloc(4 * block * sizeof *draws);
  if (!draws) {
    fprintf(stderr, "bench_engine: out of memory\n");
    exit(1);
  }
  for (uint64_t b = 0; b * block < n; b++) {
    sp_pcg64 g[4];
    uint64_t end = (b + 1) * block < n ? (b + 1) * block : n;
    for (uint32_t i = 0; i < 4; i++) {
      sp_rng_block_stream(&g[i], SEED, b, i);
      in[i].fam->sample(in[i].theta, &g[i], draws + i * block, (size_t)(end - k));
    }
    for (uint64_t k0 = k; k < end; k++) {
      double x[4];
      for (int i = 0; i < 4; i++) x[i] = draws[i * block + (k - k0)];
      double y[2];
      spring(x[0], x[1], x[2], x[3], &y[0], &y[1]);
      y0[k] = y[0];
      y1[k] = y[1];
      for (int o = 0; o < 2; o++) {
        double dlt = y[o] - mean[o];
        mean[o] += dlt / (double)(k + 1);
        m2[o] += dlt * (y[o] - mean[o]);
      }
    }
  }
  free(draws);
  for (int o = 0; o < 2; o++) {
    res->mean[o] = mean[o];
    res->sd[o] = sqrt(m2[o] / (double)(n - 1));
    for (size_t i = 0; i < np; i++)
      res->pct[o][i] = sp_quantile_select(o ? y1 : y0, (size_t)n, p[i]);
  }
}

int main(int argc, char **argv)
{
  gsl_set_error_handler_off();
  uint64_t n = 10000000u;
  if (argc > 1) {
    sp_error perr;
    if (sp_parse_u64(argv[1], &n, &perr) != SP_OK || n < 2) {
      fprintf(stderr, "bench_engine: bad sample count '%s'\n", argv[1]);
      return 2;
    }
  }
  const sp_family *normal = sp_family_find("normal"), *weibull = sp_family_find("weibull");
  if (!normal || !weibull) {
    fprintf(stderr, "bench_engine: families normal/weibull not registered\n");
    return 1;
  }
  sp_engine_input in[4];
  memset(in, 0, sizeof in);
  const double th[4][2] = {{2.0, 0.004}, {16.0, 0.075}, {79300.0, 900.0}, {8.0, 120.0}};
  const char *names[4] = {"d", "Dm", "G", "F"};
  for (int i = 0; i < 4; i++) {
    in[i].fam = i == 3 ? weibull : normal;
    in[i].theta[0] = th[i][0];
    in[i].theta[1] = th[i][1];
    in[i].scale = 1.0;
    in[i].name = names[i];
  }
  sp_evaluator ev = {4, 2, NULL, NULL, NULL, spring_eval};
  sp_model *model = NULL;
  sp_model_diags diags;
  sp_model_diags_init(&diags);
  sp_error merr;
  if (sp_model_compile("bench-spring.spm", SPRING_MODEL, strlen(SPRING_MODEL), &model, &diags,
                       &merr) != SP_OK) {
    fprintf(stderr, "bench_engine: the benchmark's model does not compile: %s\n", merr.msg);
    return 1;
  }
  sp_model_diags_clear(&diags);
  sp_evaluator mev;
  sp_run_model_evaluator(model, &mev); /* as propagate evaluates it */

  sp_engine_options o;
  sp_engine_options_init(&o);
  o.samples = n;
  o.seed = SEED;
  sp_engine_timing tm;
  o.timing = &tm;
  /* r[0], r[1]: bytecode on 1 and 2 threads; r[2], r[3]: hand-written C */
  sp_engine_result r[4];
  double t_eng[4], t_blocks[4], t_summary[4];
  for (int t = 0; t < 4; t++) {
    o.threads = t % 2 + 1;
    sp_error err;
    double t0 = now();
    if (sp_engine_run(in, 4, t < 2 ? &mev : &ev, &o, &r[t], &err) != SP_OK) {
      fprintf(stderr, "bench_engine: %s\n", err.msg);
      return 1;
    }
    t_eng[t] = now() - t0;
    t_blocks[t] = tm.blocks;
    t_summary[t] = tm.summary;
  }

  double *y0 = malloc((size_t)n * sizeof *y0), *y1 = malloc((size_t)n * sizeof *y1);
  if (!y0 || !y1) {
    fprintf(stderr, "bench_engine: out of memory\n");
    return 1;
  }
  scalar_result sr;
  double t0 = now();
  scalar_loop(in, n, o.block, r[2].pct_p, r[2].npct, y0, y1, &sr);
  double t_scalar = now() - t0;

  /* The scalar loop draws exactly the engine's samples and evaluates the
   * hand-written formulas, so its percentiles must equal r[2]'s.  The
   * bytecode rounds some products in another order (8 Dm^3 n), so it is
   * compared within a relative 1e-12 (a few ulps) instead. */
  int same = r[2].npct == 15, bytecode_close = 1;
  double dmean = 0.0, dbyte = 0.0;
  for (int out = 0; out < 2 && same; out++) {
    for (size_t i = 0; i < 15; i++) {
      if (sr.pct[out][i] != r[2].pct[out * 15 + i]) same = 0;
      double ref = r[2].pct[out * 15 + i];
      dbyte = fmax(dbyte, fabs(r[0].pct[out * 15 + i] - ref) / fabs(ref));
    }
    dmean = fmax(dmean, fabs(sr.mean[out] - r[2].out[out].mean) / r[2].out[out].sd);
    dbyte = fmax(dbyte, fabs(r[0].out[out].mean - r[2].out[out].mean) / fabs(r[2].out[out].mean));
  }
  if (!(dbyte < 1e-12)) bytecode_close = 0;
  int threads_same = 1;
  for (int t = 0; t < 4; t += 2)
    threads_same = threads_same && memcmp(r[t].out, r[t + 1].out, 2 * sizeof *r[t].out) == 0 &&
                   memcmp(r[t].pct, r[t + 1].pct, 30 * sizeof *r[t].pct) == 0;

  printf("samples %llu\n", (unsigned long long)n);
  static const char *const label[4] = {"engine_1t", "engine_2t", "handc_1t", "handc_2t"};
  for (int t = 0; t < 4; t++) {
    printf("%s_s %.4f\n", label[t], t_eng[t]);
    printf("%s_blocks_s %.4f\n", label[t], t_blocks[t]);
    printf("%s_summary_s %.4f\n", label[t], t_summary[t]);
    printf("%s_ns_per_sample %.2f\n", label[t], 1e9 * t_eng[t] / (double)n);
  }
  printf("scalar_s %.4f\n", t_scalar);
  printf("scalar_ns_per_sample %.2f\n", 1e9 * t_scalar / (double)n);
  printf("ratio_scalar_over_engine_1t %.3f\n", t_scalar / t_eng[0]);
  printf("ratio_engine_1t_over_2t %.3f\n", t_eng[0] / t_eng[1]);
  printf("ratio_bytecode_over_handc_1t %.3f\n", t_eng[0] / t_eng[2]);
  printf("summary_share_1t %.3f\n", t_summary[0] / t_eng[0]);
  printf("percentiles_identical_to_scalar %d\n", same);
  printf("mean_difference_in_sd %.3g\n", dmean);
  printf("bytecode_max_rel_difference %.3g\n", dbyte);
  printf("threads_bit_identical %d\n", threads_same);
  printf("rate_mean %.6f rate_sd %.6f rate_p99.9 %.6f\n", r[0].out[0].mean, r[0].out[0].sd,
         r[0].pct[14]);
  printf("stress_mean %.4f stress_sd %.4f stress_p99.9 %.4f\n", r[0].out[1].mean,
         r[0].out[1].sd, r[0].pct[15 + 14]);
  free(y0);
  free(y1);
  for (int t = 0; t < 4; t++) sp_engine_result_free(&r[t]);
  sp_model_free(model);
  return same && threads_same && bytecode_close ? 0 : 1;
}
