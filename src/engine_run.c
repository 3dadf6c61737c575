/* engine: a propagation run (fixed N or adaptive), end to end.
 *
 * Block b holds samples bB..bB+B-1.  A thread computing it draws the
 * inputs (engine_sample_block), evaluates the model straight into the
 * output arrays (one double per sample per output, kept for the exact
 * percentiles) and summarises the block's moments into its own slot; the
 * caller's thread merges the slots in block order (engine_threads.c).
 * After the blocks, each output is summarised on its own (outputs in
 * parallel, each by one thread, so the figures do not depend on the thread
 * count either). */
#include "engine_internal.h"

#include <math.h>
#include <omp.h>
#include <stdlib.h>
#include <string.h>

/* ---- the job shared by the threads ----------------------------------------- */

typedef struct {
  const sp_evaluator *ev;
  const engine_inputs *inp;
  const engine_design *des;
  size_t k, nout;
  uint64_t B, N;           /* N bounds the last block (UINT64_MAX: adaptive) */
  double **vals;           /* nout arrays */
  double **xin;            /* k arrays when inputs are kept, else NULL */
  engine_moments *bm;      /* per block of the segment, nout each */
  uint64_t first;          /* first block of the segment */
  engine_moments *tot;     /* nout, merged in block order */
} run_job;

typedef struct {
  void *ews;
  double *xbuf, *z;
  const double **in;
  double **out, **x;
} run_thread;

static void *run_thread_init(void *jv)
{
  run_job *j = jv;
  run_thread *t = calloc(1, sizeof *t);
  if (!t) return NULL;
  t->z = malloc(j->k * j->B * sizeof *t->z);
  t->xbuf = j->xin ? NULL : malloc(j->k * j->B * sizeof *t->xbuf);
  t->in = malloc(j->k * sizeof *t->in);
  t->x = malloc(j->k * sizeof *t->x);
  t->out = malloc(j->nout * sizeof *t->out);
  int ok = t->z && (j->xin || t->xbuf) && t->in && t->x && t->out;
  if (ok && j->ev->ws_alloc) {
    t->ews = j->ev->ws_alloc(j->ev->ctx, j->B);
    ok = t->ews != NULL;
  }
  if (!ok) {
    free(t->z);
    free(t->xbuf);
    free(t->in);
    free(t->x);
    free(t->out);
    free(t);
    return NULL;
  }
  return t;
}

static void run_thread_fini(void *jv, void *tv)
{
  run_job *j = jv;
  run_thread *t = tv;
  if (t->ews && j->ev->ws_free) j->ev->ws_free(t->ews);
  free(t->z);
  free(t->xbuf);
  free(t->in);
  free(t->x);
  free(t->out);
  free(t);
}

static void run_block(void *jv, void *tv, uint64_t b)
{
  run_job *j = jv;
  run_thread *t = tv;
  const uint64_t k0 = b * j->B;
  const size_t n = (size_t)(j->N - k0 < j->B ? j->N - k0 : j->B);
  for (size_t i = 0; i < j->k; i++)
    t->x[i] = j->xin ? j->xin[i] + k0 : t->xbuf + i * j->B;
  engine_sample_block(j->inp, j->des, 0, b, k0, n, t->x, t->z);
  for (size_t i = 0; i < j->k; i++) t->in[i] = t->x[i];
  for (size_t o = 0; o < j->nout; o++) t->out[o] = j->vals[o] + k0;
  j->ev->eval(j->ev->ctx, t->ews, t->in, n, t->out);
  engine_moments *m = j->bm + (b - j->first) * j->nout;
  for (size_t o = 0; o < j->nout; o++) engine_moments_block(t->out[o], n, &m[o]);
}

static void run_merge(void *jv, uint64_t b)
{
  run_job *j = jv;
  const engine_moments *m = j->bm + (b - j->first) * j->nout;
  for (size_t o = 0; o < j->nout; o++) engine_moments_merge(&j->tot[o], &m[o]);
}

/* ---- helpers ---------------------------------------------------------------- */

void sp_engine_result_free(sp_engine_result *r)
{
  if (!r) return;
  free(r->pct_p);
  free(r->out);
  free(r->pct);
  free(r->hist);
  free(r->exceed);
  free(r->rank_corr);
  free(r->rank_share);
  free(r->samples_kept);
  memset(r, 0, sizeof *r);
}

static void free_arrays(double **a, size_t n)
{
  if (!a) return;
  for (size_t i = 0; i < n; i++) free(a[i]);
  free(a);
}

/* Grows each of the n arrays of a to cap doubles. */
static sp_status grow(double **a, size_t n, uint64_t cap, sp_error *err)
{
  for (size_t i = 0; i < n; i++) {
    double *p = realloc(a[i], (size_t)cap * sizeof *p);
    if (!p)
      return sp_fail(err, SP_ENOMEM, "cannot allocate %llu values per variable",
                     (unsigned long long)cap);
    a[i] = p;
  }
  return SP_OK;
}

/* Fills the moment figures of o from m. */
static void output_moments(sp_engine_output *o, const engine_moments *m)
{
  const double n = (double)m->n;
  o->n = m->n;
  o->nan = m->nan;
  o->posinf = m->posinf;
  o->neginf = m->neginf;
  o->mean = m->n ? m->mean : NAN;
  o->min = m->n ? m->min : NAN;
  o->max = m->n ? m->max : NAN;
  o->sd = engine_moments_sd(m);
  const double m2 = m->m2 / n;
  o->skewness = m->n >= 3 && m2 > 0.0 ? (m->m3 / n) / (m2 * sqrt(m2)) : NAN;
  o->kurtosis = m->n >= 4 && m2 > 0.0 ? (m->m4 / n) / (m2 * m2) - 3.0 : NAN;
}

/* sem from the means of the complete designs of size G in y[0..n). */
static double replicate_sem(const double *y, uint64_t n, uint64_t G)
{
  uint64_t c = G ? n / G : 0;
  if (c < 2) return NAN;
  double s = 0.0, s2 = 0.0, first = NAN;
  for (uint64_t g = 0; g < c; g++) {
    engine_moments m;
    engine_moments_block(y + g * G, (size_t)G, &m);
    if (m.n == 0) return NAN;
    /* sums of deviations from the first mean, for accuracy */
    if (g == 0) first = m.mean;
    double d = m.mean - first;
    s += d;
    s2 += d * d;
  }
  double dc = (double)c, mean = s / dc;
  double ss = s2 - mean * s;
  if (ss < 0.0) ss = 0.0;
  return sqrt(ss / (dc * (dc - 1.0)));
}

/* Histogram and order statistics of output o (its values compacted to the
 * finite ones first when there are others), on `threads` threads. */
static sp_status summarise_output(const run_job *job, sp_engine_result *res,
                                  sp_engine_output *outs, const sp_engine_options *opt,
                                  size_t o, uint64_t samples, size_t np, int threads)
{
  sp_engine_output *so = &outs[o];
  double *y = job->vals[o];
  /* the moments counted the non-finite values: compact only when any */
  size_t m = so->nan + so->posinf + so->neginf ? engine_compact_finite(y, (size_t)samples)
                                               : (size_t)samples;
  double lo = so->min, hi = so->max;
  if (opt->hist_range && !isnan(opt->hist_range[2 * o])) {
    lo = opt->hist_range[2 * o];
    hi = opt->hist_range[2 * o + 1];
  }
  so->hist_lo = lo;
  so->hist_hi = hi;
  if (engine_histogram_par(y, m, lo, hi, opt->hist_bins, res->hist + o * opt->hist_bins,
                           &so->hist_below, &so->hist_above, threads) != SP_OK)
    return SP_ENOMEM;
  return engine_order_stats(y, m, res->pct_p, np, opt->coverage, res->pct + o * np, so,
                            threads, NULL);
}

/* ---- the run -------------------------------------------------------------- */

sp_status sp_engine_run(const sp_engine_input *inputs, size_t ninputs,
                        const sp_evaluator *ev, const sp_engine_options *opt,
                        sp_engine_result *res, sp_error *err)
{
  if (!res) return sp_fail(err, SP_EUSAGE, "sp_engine_run: missing result");
  memset(res, 0, sizeof *res);
  if (!inputs || !ev || !ev->eval || !opt)
    return sp_fail(err, SP_EUSAGE, "sp_engine_run: missing argument");
  if (ev->ninputs != ninputs)
    return sp_fail(err, SP_EUSAGE, "the model has %zu inputs, %zu were described",
                   ev->ninputs, ninputs);
  const size_t k = ninputs, nout = ev->noutputs;
  sp_status st = engine_options_check(opt, k, nout, 0, err);
  if (st != SP_OK) return st;

  const int adaptive = opt->adaptive_digits > 0;
  const uint64_t B = opt->block;
  const int T = engine_threads_resolve(opt->threads);
  const uint64_t batch = adaptive ? engine_adaptive_batch(opt->coverage, opt->block) : 0;
  const uint64_t planned = adaptive ? opt->max_samples / batch * batch : opt->samples;

  st = engine_memory_guard(engine_run_bytes(opt, k, nout, planned, T), opt->memory_limit, err);
  if (st != SP_OK) return st;
  st = engine_options_check_counts(opt, 0, err);
  if (st != SP_OK) return st;

  engine_inputs inp;
  st = engine_inputs_init(&inp, inputs, k, opt->corr, opt->ncorr, err);
  if (st != SP_OK) return st;

  uint64_t G = 0;
  size_t ndes = 0;
  if (opt->method != SP_ENGINE_MC) {
    G = adaptive ? batch : (opt->method == SP_ENGINE_LHS ? planned : planned / opt->replicates);
    ndes = adaptive ? 0 : (opt->method == SP_ENGINE_LHS ? 1 : opt->replicates);
  }
  engine_design des;
  st = engine_design_init(&des, opt->method, opt->seed, k, G, err);
  if (st == SP_OK) st = engine_design_reserve(&des, ndes, err);
  if (st != SP_OK) {
    engine_inputs_free(&inp);
    return st;
  }

  run_job job;
  memset(&job, 0, sizeof job);
  job.ev = ev;
  job.inp = &inp;
  job.des = &des;
  job.k = k;
  job.nout = nout;
  job.B = B;
  job.N = adaptive ? UINT64_MAX : planned;
  const uint64_t seg_blocks = adaptive ? batch / B : (planned + B - 1) / B;
  uint64_t cap = adaptive ? 2 * batch : planned;
  job.vals = calloc(nout, sizeof *job.vals);
  job.xin = opt->rank_sensitivity ? calloc(k, sizeof *job.xin) : NULL;
  job.bm = malloc((size_t)seg_blocks * nout * sizeof *job.bm);
  job.tot = malloc(nout * sizeof *job.tot);
  engine_adaptive ad;
  memset(&ad, 0, sizeof ad);
  double *u_all = NULL;
  if (!job.vals || (opt->rank_sensitivity && !job.xin) || !job.bm || !job.tot) {
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the run's tables");
    goto done;
  }
  for (size_t o = 0; o < nout; o++) engine_moments_zero(&job.tot[o]);
  st = grow(job.vals, nout, cap, err);
  if (st == SP_OK && job.xin) st = grow(job.xin, k, cap, err);
  if (st == SP_OK && adaptive) {
    st = engine_adaptive_init(&ad, nout, batch, err);
    u_all = malloc(nout * sizeof *u_all);
    if (st == SP_OK && !u_all) st = sp_fail(err, SP_ENOMEM, "cannot allocate the run's tables");
  }
  if (st != SP_OK) goto done;

  engine_par par;
  memset(&par, 0, sizeof par);
  par.threads = T;
  par.job = &job;
  par.thread_init = run_thread_init;
  par.thread_fini = run_thread_fini;
  par.block = run_block;
  par.merge = run_merge;
  par.progress = opt->progress;
  par.progress_user = opt->progress_user;
  par.block_size = B;
  par.samples_total = planned;

  uint64_t samples = 0;
  int cancelled = 0, stable = 0;
  const double t0 = omp_get_wtime();
  sp_engine_output *outs = calloc(nout, sizeof *outs);
  if (!outs) {
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the results");
    goto done;
  }
  res->out = outs;
  if (!adaptive) {
    par.first = 0;
    par.nblocks = seg_blocks;
    par.run_samples = planned;
    uint64_t merged;
    st = engine_par_run(&par, &merged, &cancelled, err);
    if (st != SP_OK) goto done;
    samples = merged * B < planned ? merged * B : planned;
  } else {
    for (size_t h = 0;; h++) {
      uint64_t end = (uint64_t)(h + 1) * batch;
      if (end > cap) {
        uint64_t nc = cap * 2 < planned ? cap * 2 : planned;
        st = grow(job.vals, nout, nc, err);
        if (st == SP_OK && job.xin) st = grow(job.xin, k, nc, err);
        if (st != SP_OK) goto done;
        cap = nc;
      }
      if (opt->method != SP_ENGINE_MC) {
        st = engine_design_reserve(&des, h + 1, err);
        if (st != SP_OK) goto done;
      }
      job.first = par.first = h * seg_blocks;
      par.nblocks = seg_blocks;
      par.samples_before = samples;
      par.run_samples = end;
      uint64_t merged;
      st = engine_par_run(&par, &merged, &cancelled, err);
      if (st != SP_OK) goto done;
      samples += merged * B;
      if (cancelled) break;
      double *bv[64];
      double **bvp = nout <= 64 ? bv : malloc(nout * sizeof *bvp);
      if (!bvp) {
        st = sp_fail(err, SP_ENOMEM, "cannot allocate the batch table");
        goto done;
      }
      for (size_t o = 0; o < nout; o++) bvp[o] = job.vals[o] + h * batch;
      st = engine_adaptive_add(&ad, bvp, opt->coverage, err);
      if (bvp != bv) free(bvp);
      if (st != SP_OK) goto done;
      if (h >= 1) {
        for (size_t o = 0; o < nout; o++)
          /* allocated and checked above under the same status (not followed):
           * NOLINTNEXTLINE(clang-analyzer-core.NullDereference) */
          u_all[o] = engine_moments_sd(&job.tot[o]);
        stable = engine_adaptive_stable(&ad, u_all, opt->adaptive_digits, opt->tolerance, outs);
        if (stable) break;
      }
      if (end + batch > planned) break;
    }
    res->batches = ad.h;
    res->batch_size = batch;
  }

  /* ---- summaries ---------------------------------------------------------- */
  const double t1 = omp_get_wtime();
  res->status = cancelled ? SP_ENGINE_CANCELLED
                          : (adaptive && !stable ? SP_ENGINE_NOT_STABILISED : SP_ENGINE_COMPLETE);
  res->method = opt->method;
  res->seed = opt->seed;
  res->block = B;
  res->replicates = opt->method == SP_ENGINE_SOBOL && !adaptive ? opt->replicates : 0;
  res->requested = planned;
  res->samples = samples;
  res->threads = (uint64_t)T;
  /* The caller keeps nothing of a cancelled run: skip the summaries (on
   * 10^7 samples they take seconds, which Ctrl-C should not wait for). */
  if (cancelled && opt->discard_cancelled) goto done;
  res->coverage = opt->coverage;
  res->ninputs = k;
  res->noutputs = nout;
  res->nbins = opt->hist_bins;
  res->nlimits = opt->nlimits;
  if (opt->method == SP_ENGINE_MC) res->sem_kind = SP_ENGINE_SEM_IID;
  else if (opt->method == SP_ENGINE_LHS && !adaptive) res->sem_kind = SP_ENGINE_SEM_IID_BOUND;
  else res->sem_kind = SP_ENGINE_SEM_REPLICATES;

  size_t np;
  res->pct_p = engine_percentile_list(opt, &np);
  res->npct = np;
  res->pct = malloc((np ? np : 1) * nout * sizeof *res->pct);
  res->hist = malloc(opt->hist_bins * nout * sizeof *res->hist);
  res->exceed = calloc(opt->nlimits ? opt->nlimits : 1, sizeof *res->exceed);
  if (!res->pct_p || !res->pct || !res->hist || !res->exceed) {
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the results");
    goto done;
  }
  if (opt->keep_samples) {
    res->samples_kept = malloc((samples ? samples : 1) * nout * sizeof *res->samples_kept);
    if (!res->samples_kept) {
      st = sp_fail(err, SP_ENOMEM, "cannot allocate the kept samples");
      goto done;
    }
    for (size_t o = 0; o < nout; o++)
      memcpy(res->samples_kept + o * samples, job.vals[o], (size_t)samples * sizeof(double));
  }
  for (size_t o = 0; o < nout; o++) {
    sp_engine_output *so = &outs[o];
    output_moments(so, &job.tot[o]);
    if (res->sem_kind == SP_ENGINE_SEM_REPLICATES)
      so->sem = replicate_sem(job.vals[o], samples, G);
    else
      so->sem = so->n >= 2 ? so->sd / sqrt((double)so->n) : NAN;
  }
  if (opt->rank_sensitivity) {
    res->rank_corr = malloc(k * nout * sizeof *res->rank_corr);
    res->rank_share = malloc(k * nout * sizeof *res->rank_share);
    if (!res->rank_corr || !res->rank_share) {
      st = sp_fail(err, SP_ENOMEM, "cannot allocate the rank correlations");
      goto done;
    }
    int all_finite = 1;
    for (size_t o = 0; o < nout; o++)
      if (outs[o].nan + outs[o].posinf + outs[o].neginf) all_finite = 0;
    st = engine_rank_sensitivity((const double *const *)job.xin, k,
                                 (const double *const *)job.vals, nout, (size_t)samples,
                                 all_finite, T, res->rank_corr, res->rank_share, err);
    if (st != SP_OK) goto done;
  }
  for (size_t l = 0; l < opt->nlimits; l++) {
    const sp_engine_limit *lim = &opt->limits[l];
    const double *y = job.vals[lim->output];
    uint64_t viol = 0, nf = 0;
    const int below = lim->direction == SP_ENGINE_BELOW;
    const double lv = lim->value;
    /* integer counts: the same whatever the threads */
#pragma omp parallel for num_threads(T) schedule(static) reduction(+ : viol, nf)
    for (uint64_t s = 0; s < samples; s++) {
      double v = y[s];
      if (!isfinite(v)) continue;
      nf++;
      viol += below ? (v >= lv) : (v <= lv);
    }
    sp_engine_exceed *e = &res->exceed[l];
    e->output = lim->output;
    e->direction = (uint64_t)lim->direction;
    e->value = lim->value;
    e->violations = viol;
    e->n = nf;
    e->p = nf ? (double)viol / (double)nf : NAN;
    e->one_sided = (uint64_t)sp_engine_binomial_interval(viol, nf, opt->limit_confidence,
                                                         &e->lo, &e->hi);
  }

  /* Order statistics and histograms: one output per thread when there are
   * as many outputs as threads, otherwise the outputs one after the other,
   * each on all threads (the figures are the same either way). */
  int failed_out = -1;
  if (nout < (size_t)T) {
    for (size_t o = 0; o < nout && failed_out < 0; o++)
      if (summarise_output(&job, res, outs, opt, o, samples, np, T) != SP_OK) failed_out = (int)o;
  } else {
#pragma omp parallel for num_threads(T) schedule(dynamic, 1)
    for (size_t o = 0; o < nout; o++) {
      if (summarise_output(&job, res, outs, opt, o, samples, np, 1) != SP_OK) {
#pragma omp critical
        if (failed_out < 0 || (int)o < failed_out) failed_out = (int)o;
      }
    }
  }
  if (failed_out >= 0)
    st = sp_fail(err, SP_ENOMEM, "cannot allocate the sort scratch of output %d", failed_out + 1);
  if (opt->timing) {
    opt->timing->blocks = t1 - t0;
    opt->timing->summary = omp_get_wtime() - t1;
  }

done:
  free(u_all);
  engine_adaptive_free(&ad);
  free_arrays(job.vals, nout);
  free_arrays(job.xin, k);
  free(job.bm);
  free(job.tot);
  engine_design_free(&des);
  engine_inputs_free(&inp);
  return st;
}
