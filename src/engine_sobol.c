/* engine: first-order and total Sobol' indices with bootstrap intervals.
 *
 * Sobol', I.M. (1993). Sensitivity estimates for nonlinear mathematical
 * models. Mathematical Modelling and Computational Experiments 1(4),
 * 407-414 (the indices).  Estimators of Saltelli, A., Annoni, P., Azzini,
 * I., Campolongo, F., Ratto, M. & Tarantola, S. (2010). Variance based
 * sensitivity analysis of model output. Design and estimator for the total
 * sensitivity index. Computer Physics Communications 181(2), 259-270,
 * Table 2, from matrices A and B of N base samples each and the k matrices
 * A_B^(i) (A with column i taken from B), N (k + 2) evaluations
 * (Saltelli, A. (2002). Making best use of model evaluations to compute
 * sensitivity indices. Computer Physics Communications 145(2), 280-297):
 *   V_i  = (1/N) sum_j f(B)_j (f(A_B^(i))_j - f(A)_j)          (first order)
 *   VT_i = (1/(2N)) sum_j (f(A)_j - f(A_B^(i))_j)^2             (total, Jansen)
 * Jansen, M.J.W. (1999). Analysis of variance designs for model output.
 * Computer Physics Communications 117(1-2), 35-43.  S_i = V_i / V and
 * ST_i = VT_i / V with V the sample variance of the 2N values f(A), f(B).
 * Deviation: every f is first centred by the mean of f(A) and f(B); the
 * estimators are unchanged in expectation (E[f(A_B^(i)) - f(A)] = 0) and a
 * large mean no longer swamps V_i in rounding (Saltelli et al. 2010,
 * section 3, discuss this variance of the first-order estimator).
 * A base sample whose k + 2 values are not all finite for every output is
 * left out (and counted).
 *
 * Intervals: percentile bootstrap (Efron, B. & Tibshirani, R.J. (1993). An
 * Introduction to the Bootstrap, Chapman & Hall, section 13.3) over the
 * base samples, R resamples, resample r drawn from the design stream
 * (seed, 2^48 - 1, 2^15 + r) so resamples can be computed on any thread;
 * bootstrap standard errors are the standard deviation of the resampled
 * indices.  With the sobol method the base samples are not independent and
 * the bootstrap intervals are only indicative. */
#include "engine_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "scatterprop/stats.h"

typedef struct {
  const sp_evaluator *ev;
  const engine_inputs *inp;
  const engine_design *des;
  size_t k, nout;
  uint64_t B, N;
  double **f; /* nout x (k + 2) arrays: A, B, A_B^(1..k) */
} sob_job;

typedef struct {
  void *ews;
  double *xa, *xb, *z;
  double **pa, **pb;
  const double **in;
  double **out;
} sob_thread;

static void sob_thread_free(const sob_job *j, sob_thread *t)
{
  if (!t) return;
  if (t->ews && j->ev->ws_free) j->ev->ws_free(t->ews);
  free(t->xa);
  free(t->xb);
  free(t->z);
  free(t->pa);
  free(t->pb);
  free(t->in);
  free(t->out);
  free(t);
}

static void *sob_thread_init(void *jv)
{
  sob_job *j = jv;
  sob_thread *t = calloc(1, sizeof *t);
  if (!t) return NULL;
  t->xa = malloc(j->k * j->B * sizeof *t->xa);
  t->xb = malloc(j->k * j->B * sizeof *t->xb);
  t->z = malloc(j->k * j->B * sizeof *t->z);
  t->pa = malloc(j->k * sizeof *t->pa);
  t->pb = malloc(j->k * sizeof *t->pb);
  t->in = malloc(j->k * sizeof *t->in);
  t->out = malloc(j->nout * sizeof *t->out);
  int ok = t->xa && t->xb && t->z && t->pa && t->pb && t->in && t->out;
  if (ok && j->ev->ws_alloc) {
    t->ews = j->ev->ws_alloc(j->ev->ctx, j->B);
    ok = t->ews != NULL;
  }
  if (!ok) {
    sob_thread_free(j, t);
    return NULL;
  }
  for (size_t i = 0; i < j->k; i++) {
    t->pa[i] = t->xa + i * j->B;
    t->pb[i] = t->xb + i * j->B;
  }
  return t;
}

static void sob_thread_fini(void *jv, void *tv)
{
  sob_thread_free(jv, tv);
}

static void sob_block(void *jv, void *tv, uint64_t b)
{
  sob_job *j = jv;
  sob_thread *t = tv;
  const size_t k = j->k, w = k + 2;
  const uint64_t k0 = b * j->B;
  const size_t n = (size_t)(j->N - k0 < j->B ? j->N - k0 : j->B);
  engine_sample_block(j->inp, j->des, 0, b, k0, n, t->pa, t->z);
  engine_sample_block(j->inp, j->des, k, b, k0, n, t->pb, t->z);
  for (size_t m = 0; m < k + 2; m++) {
    /* m = 0: A; m = 1: B; m = 2 + i: A with column i from B */
    for (size_t i = 0; i < k; i++)
      t->in[i] = (m == 1 || m == 2 + i) ? t->pb[i] : t->pa[i];
    for (size_t o = 0; o < j->nout; o++) t->out[o] = j->f[o * w + m] + k0;
    j->ev->eval(j->ev->ctx, t->ews, t->in, n, t->out);
  }
}

static void sob_merge(void *jv, uint64_t b)
{
  (void)jv;
  (void)b; /* the values stay in place; nothing to fold */
}

void sp_engine_sobol_result_free(sp_engine_sobol_result *r)
{
  if (!r) return;
  free(r->mean);
  free(r->variance);
  free(r->idx);
  memset(r, 0, sizeof *r);
}

/* Index estimates from the (centred) values at rows rows[0..n) (or 0..n-1
 * when rows is NULL): S and ST for each (o, i) into est (nout x k x 2),
 * and V per output into var (may be NULL). */
static void estimate(double *const *f, size_t k, size_t nout, const uint32_t *rows, size_t n,
                     double *acc, double *est, double *var)
{
  const size_t w = k + 2;
  /* acc per output: sA, sB, sAA, sBB, then per input: sum fB d, sum d^2 */
  const size_t per = 4 + 2 * k;
  memset(acc, 0, nout * per * sizeof *acc);
  for (size_t t = 0; t < n; t++) {
    size_t j = rows ? rows[t] : t;
    for (size_t o = 0; o < nout; o++) {
      double *a = acc + o * per;
      double fa = f[o * w][j], fb = f[o * w + 1][j];
      a[0] += fa;
      a[1] += fb;
      a[2] += fa * fa;
      a[3] += fb * fb;
      for (size_t i = 0; i < k; i++) {
        double d = f[o * w + 2 + i][j] - fa;
        a[4 + 2 * i] += fb * d;
        a[5 + 2 * i] += d * d;
      }
    }
  }
  const double dn = (double)n;
  for (size_t o = 0; o < nout; o++) {
    const double *a = acc + o * per;
    double mean = (a[0] + a[1]) / (2.0 * dn);
    double v = (a[2] + a[3] - 2.0 * dn * mean * mean) / (2.0 * dn - 1.0);
    if (var) var[o] = v;
    for (size_t i = 0; i < k; i++) {
      est[(o * k + i) * 2] = n >= 2 && v > 0.0 ? a[4 + 2 * i] / dn / v : NAN;
      est[(o * k + i) * 2 + 1] = n >= 2 && v > 0.0 ? a[5 + 2 * i] / (2.0 * dn) / v : NAN;
    }
  }
}

sp_status sp_engine_sobol_indices(const sp_engine_input *inputs, size_t ninputs,
                                  const sp_evaluator *ev, const sp_engine_options *opt,
                                  sp_engine_sobol_result *res, sp_error *err)
{
  if (!res) return sp_fail(err, SP_EUSAGE, "sp_engine_sobol_indices: missing result");
  memset(res, 0, sizeof *res);
  if (!inputs || !ev || !ev->eval || !opt)
    return sp_fail(err, SP_EUSAGE, "sp_engine_sobol_indices: missing argument");
  if (ev->ninputs != ninputs)
    return sp_fail(err, SP_EUSAGE, "the model has %zu inputs, %zu were described",
                   ev->ninputs, ninputs);
  const size_t k = ninputs, nout = ev->noutputs, w = k + 2;
  sp_status st = engine_options_check(opt, k, nout, 1, err);
  if (st != SP_OK) return st;
  const int T = engine_threads_resolve(opt->threads);
  const uint64_t N = opt->samples, B = opt->block;
  st = engine_memory_guard(engine_sobol_bytes(opt, k, nout, T), opt->memory_limit, err);
  if (st != SP_OK) return st;
  st = engine_options_check_counts(opt, 1, err);
  if (st != SP_OK) return st;

  engine_inputs inp;
  st = engine_inputs_init(&inp, inputs, k, NULL, 0, err);
  if (st != SP_OK) return st;
  engine_design des;
  st = engine_design_init(&des, opt->method, opt->seed, 2 * k, N, err);
  if (st == SP_OK) st = engine_design_reserve(&des, 1, err);
  if (st != SP_OK) {
    engine_inputs_free(&inp);
    return st;
  }

  sob_job job;
  memset(&job, 0, sizeof job);
  job.ev = ev;
  job.inp = &inp;
  job.des = &des;
  job.k = k;
  job.nout = nout;
  job.B = B;
  job.N = N;
  job.f = calloc(nout * w, sizeof *job.f);
  double *acc = NULL, *boot = NULL, *est = NULL;
  if (!job.f) {
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the index tables");
    goto done;
  }
  for (size_t a = 0; a < nout * w; a++) {
    job.f[a] = malloc((size_t)N * sizeof(double));
    if (!job.f[a]) {
      st = sp_fail(err, SP_ENOMEM, "cannot allocate %llu values per matrix",
                   (unsigned long long)N);
      goto done;
    }
  }

  engine_par par;
  memset(&par, 0, sizeof par);
  par.threads = T;
  par.job = &job;
  par.thread_init = sob_thread_init;
  par.thread_fini = sob_thread_fini;
  par.block = sob_block;
  par.merge = sob_merge;
  par.progress = opt->progress;
  par.progress_user = opt->progress_user;
  par.block_size = B;
  par.samples_total = N;
  par.run_samples = N;
  par.nblocks = (N + B - 1) / B;
  uint64_t merged;
  int cancelled;
  st = engine_par_run(&par, &merged, &cancelled, err);
  if (st != SP_OK) goto done;
  const size_t done_n = (size_t)(merged * B < N ? merged * B : N);
  if (cancelled && opt->discard_cancelled) {
    /* Nothing of it is kept (sp_engine_options.discard_cancelled). */
    res->status = SP_ENGINE_CANCELLED;
    res->method = opt->method;
    res->seed = opt->seed;
    res->base_samples = done_n;
    goto done;
  }

  /* keep the base samples that are finite everywhere, in order */
  size_t n = 0;
  for (size_t j = 0; j < done_n; j++) {
    int ok = 1;
    for (size_t a = 0; a < nout * w && ok; a++) ok = isfinite(job.f[a][j]);
    if (!ok) continue;
    for (size_t a = 0; a < nout * w; a++) job.f[a][n] = job.f[a][j];
    n++;
  }
  res->status = cancelled ? SP_ENGINE_CANCELLED : SP_ENGINE_COMPLETE;
  res->method = opt->method;
  res->seed = opt->seed;
  res->block = B;
  res->threads = (uint64_t)T;
  res->base_samples = done_n;
  res->evaluations = done_n * w;
  res->used = n;
  res->bootstrap = opt->bootstrap;
  res->ninputs = k;
  res->noutputs = nout;
  res->mean = malloc(nout * sizeof *res->mean);
  res->variance = malloc(nout * sizeof *res->variance);
  res->idx = calloc(nout * k, sizeof *res->idx);
  const size_t per = 4 + 2 * k;
  acc = malloc(nout * per * sizeof *acc);
  est = malloc(nout * k * 2 * sizeof *est);
  if (!res->mean || !res->variance || !res->idx || !acc || !est) {
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the index results");
    goto done;
  }
  /* centre by the mean of f(A) and f(B) */
  for (size_t o = 0; o < nout; o++) {
    engine_moments ma, mb;
    engine_moments_block(job.f[o * w], n, &ma);
    engine_moments_block(job.f[o * w + 1], n, &mb);
    engine_moments_merge(&ma, &mb);
    double c = n ? ma.mean : NAN;
    res->mean[o] = c;
    if (n)
      for (size_t m = 0; m < w; m++)
        for (size_t j = 0; j < n; j++) job.f[o * w + m][j] -= c;
  }
  estimate(job.f, k, nout, NULL, n, acc, est, res->variance);
  for (size_t a = 0; a < nout * k; a++) {
    sp_engine_index *x = &res->idx[a];
    /* written before on every path (the loop bounds are not followed):
     * NOLINTNEXTLINE(clang-analyzer-core.uninitialized.Assign) */
    x->S = est[2 * a];
    x->ST = est[2 * a + 1];
    x->S_lo = x->S_hi = x->S_se = x->ST_lo = x->ST_hi = x->ST_se = NAN;
  }

  const size_t R = opt->bootstrap;
  if (R >= 2 && n >= 2) {
    boot = malloc(R * nout * k * 2 * sizeof *boot);
    if (!boot) {
      st = sp_fail(err, SP_ENOMEM, "cannot allocate %zu bootstrap resamples", R);
      goto done;
    }
    int failed = 0;
#pragma omp parallel num_threads(T)
    {
      uint32_t *rw = malloc(n * sizeof *rw);
      double *ac = malloc(nout * per * sizeof *ac);
      if (!rw || !ac) {
#pragma omp atomic write
        failed = 1;
      }
#pragma omp for schedule(static)
      for (size_t r = 0; r < R; r++) {
        if (!rw || !ac) continue;
        sp_pcg64 g;
        sp_rng_block_stream(&g, opt->seed, ENGINE_DESIGN_BLOCK, ENGINE_SUB_BOOT + (uint32_t)r);
        for (size_t t = 0; t < n; t++) rw[t] = (uint32_t)sp_rng_below(&g, n);
        estimate(job.f, k, nout, rw, n, ac, boot + r * nout * k * 2, NULL);
      }
      free(rw);
      free(ac);
    }
    if (failed) {
      st = sp_fail(err, SP_ENOMEM, "cannot allocate a bootstrap workspace");
      goto done;
    }
    double *col = malloc(R * sizeof *col);
    if (!col) {
      st = sp_fail(err, SP_ENOMEM, "cannot allocate %zu bootstrap resamples", R);
      goto done;
    }
    const double plo = (1.0 - opt->index_confidence) / 2.0, phi = 1.0 - plo;
    for (size_t a = 0; a < nout * k; a++) {
      for (int which = 0; which < 2; which++) {
        size_t m = 0;
        for (size_t r = 0; r < R; r++) {
          double v = boot[(r * nout * k + a) * 2 + which];
          if (isfinite(v)) col[m++] = v;
        }
        double lo = NAN, hi = NAN, se = NAN;
        if (m >= 2) {
          engine_moments mm;
          engine_moments_block(col, m, &mm);
          se = engine_moments_sd(&mm);
          lo = sp_quantile_select(col, m, plo);
          hi = sp_quantile_select(col, m, phi);
        }
        sp_engine_index *x = &res->idx[a];
        if (which == 0) {
          x->S_lo = lo;
          x->S_hi = hi;
          x->S_se = se;
        } else {
          x->ST_lo = lo;
          x->ST_hi = hi;
          x->ST_se = se;
        }
      }
    }
    free(col);
  }

done:
  free(acc);
  free(est);
  free(boot);
  if (job.f) {
    for (size_t a = 0; a < nout * w; a++) free(job.f[a]);
    free(job.f);
  }
  engine_design_free(&des);
  engine_inputs_free(&inp);
  return st;
}
