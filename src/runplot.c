/* scatterprop runplot: a run's results mapped onto the plot module's
 * chart specs. */
#include "scatterprop/runplot.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "engine_internal.h"
#include "scatterprop/stats.h"

static const char *const kind_names[SP_RUNPLOT_NKINDS] = {"hist", "exceed", "sens",
                                                          "sobol", "conv", "scatter"};

const char *sp_runplot_kind_name(sp_runplot_kind k)
{
  return (unsigned)k < SP_RUNPLOT_NKINDS ? kind_names[k] : NULL;
}

void sp_runplot_options_init(sp_runplot_options *o)
{
  memset(o, 0, sizeof *o);
  sp_plot_options_init(&o->plot);
  o->prefix = "run";
  o->scatter_points = SP_RUNPLOT_SCATTER_DEFAULT;
}

void sp_runplot_set_clear(sp_runplot_set *set)
{
  if (!set) return;
  free(set->charts);
  memset(set, 0, sizeof *set);
}

void sp_runplot_series_clear(sp_runplot_series *s)
{
  if (!s) return;
  free(s->nsamples);
  free(s->nfinite);
  free(s->mean);
  free(s->mean_se);
  free(s->lo);
  free(s->hi);
  memset(s, 0, sizeof *s);
}

/* ---- convergence ------------------------------------------------------------ */

sp_status sp_runplot_convergence(const double *y, uint64_t n, double p, sp_runplot_series *s,
                                 sp_error *err)
{
  memset(s, 0, sizeof *s);
  if (!(p > 0 && p < 1))
    return sp_fail(err, SP_EUSAGE, "convergence: coverage %g outside (0, 1)", p);
  if (n > 0 && !y) return sp_fail(err, SP_EUSAGE, "convergence: no samples given");
  /* Points: 1000, 2000, 4000, ... below n, then n. */
  size_t cap = 1;
  for (uint64_t N = SP_RUNPLOT_CONV_FIRST; N < n; N *= 2) cap++;
  double *work = malloc((n ? (size_t)n : 1) * sizeof *work);
  s->nsamples = malloc(cap * sizeof *s->nsamples);
  s->nfinite = malloc(cap * sizeof *s->nfinite);
  s->mean = malloc(cap * sizeof *s->mean);
  s->mean_se = malloc(cap * sizeof *s->mean_se);
  s->lo = malloc(cap * sizeof *s->lo);
  s->hi = malloc(cap * sizeof *s->hi);
  if (!work || !s->nsamples || !s->nfinite || !s->mean || !s->mean_se || !s->lo || !s->hi) {
    free(work);
    sp_runplot_series_clear(s);
    return sp_fail(err, SP_ENOMEM, "convergence: out of memory for %llu samples",
                   (unsigned long long)n);
  }
  /* The finite values of the prefix are kept at the front of work in
   * sample order (m of them); each point extends the prefix, then
   * selects on a copy so that the order of later points is not needed. */
  double *sel = NULL;
  size_t m = 0;
  uint64_t done = 0;
  for (uint64_t N = SP_RUNPLOT_CONV_FIRST;; N *= 2) {
    if (N > n) N = n;
    for (; done < N; done++)
      if (isfinite(y[done])) work[m++] = y[done];
    if (m >= 2) {
      double sum = 0;
      for (size_t i = 0; i < m; i++) sum += work[i];
      double mean = sum / (double)m, dev = 0, ss = 0;
      for (size_t i = 0; i < m; i++) {
        double d = work[i] - mean;
        dev += d;
        ss += d * d;
      }
      /* Chan, T.F., Golub, G.H. & LeVeque, R.J. (1983). Algorithms for
       * computing the sample variance: analysis and recommendations. The
       * American Statistician 37(3), 242-247: the sum of the deviations
       * corrects the rounding of the first pass's mean (and the sum of
       * squares, by the same term). */
      mean += dev / (double)m;
      double var = (ss - dev * dev / (double)m) / (double)(m - 1);
      size_t ilo, ihi;
      if (sp_engine_symmetric_index(m, p, &ilo, &ihi)) {
        if (!sel) sel = malloc((size_t)n * sizeof *sel);
        if (!sel) {
          free(work);
          sp_runplot_series_clear(s);
          return sp_fail(err, SP_ENOMEM, "convergence: out of memory for %llu samples",
                         (unsigned long long)n);
        }
        memcpy(sel, work, m * sizeof *sel);
        /* Select the upper end first: afterwards sel[0..ihi) holds the
         * ihi smallest values, among which the lower end is found. */
        double hi = sp_select(sel, m, ihi);
        double lo = ilo < ihi ? sp_select(sel, ihi, ilo) : hi;
        size_t k = s->npoints++;
        s->nsamples[k] = (double)N;
        s->nfinite[k] = (double)m;
        s->mean[k] = mean;
        s->mean_se[k] = sqrt(var > 0 ? var : 0) / sqrt((double)m);
        s->lo[k] = lo;
        s->hi[k] = hi;
      }
    }
    if (N >= n) break;
  }
  free(sel);
  free(work);
  return SP_OK;
}

/* ---- the fresh subsample ----------------------------------------------------- */

sp_status sp_runplot_subsample(const sp_model *m, uint64_t seed, size_t n, double *const *in,
                               double *const *out, sp_error *err)
{
  if (n == 0) return sp_fail(err, SP_EUSAGE, "subsample: no points asked for");
  size_t k = sp_model_input_count(m), nc = sp_model_correlation_count(m);
  sp_engine_input *ei = calloc(k ? k : 1, sizeof *ei);
  sp_engine_corr *ec = calloc(nc ? nc : 1, sizeof *ec);
  double *z = malloc((k ? k : 1) * n * sizeof *z);
  if (!ei || !ec || !z) {
    free(ei);
    free(ec);
    free(z);
    return sp_fail(err, SP_ENOMEM, "subsample: out of memory");
  }
  for (size_t i = 0; i < k; i++) {
    const sp_model_input *mi = sp_model_input_at(m, i);
    ei[i].fam = mi->family;
    memcpy(ei[i].theta, mi->theta, sizeof ei[i].theta);
    ei[i].scale = mi->scale;
    ei[i].offset = mi->offset;
    ei[i].name = mi->name;
  }
  for (size_t c = 0; c < nc; c++) {
    const sp_model_correlation *mc = sp_model_correlation_at(m, c);
    ec[c].i = mc->i;
    ec[c].j = mc->j;
    ec[c].rho_s = mc->rho;
  }
  engine_inputs x;
  engine_design d;
  sp_status st = engine_inputs_init(&x, ei, k, ec, nc, err);
  if (st == SP_OK) {
    st = engine_design_init(&d, SP_ENGINE_MC, seed, k, 0, err);
    if (st == SP_OK) {
      engine_sample_block(&x, &d, 0, SP_RUNPLOT_SCATTER_BLOCK, 0, n, in, z);
      engine_design_free(&d);
    }
    engine_inputs_free(&x);
  }
  if (st == SP_OK) {
    sp_model_ws *ws = sp_model_ws_alloc(m, n, err);
    if (!ws) {
      st = err ? err->code : SP_ENOMEM;
    } else {
      sp_model_eval(m, ws, (const double *const *)in, n, out);
      sp_model_ws_free(ws);
    }
  }
  free(ei);
  free(ec);
  free(z);
  return st;
}

/* ---- charts -------------------------------------------------------------------- */

/* The state shared by one output's charts. */
typedef struct {
  const sp_run *r;
  const sp_runplot_options *opt;
  size_t j;
  const sp_model_output *mo;
  sp_plot_axis axis;
  sp_plot_limit *lim;       /* this output's limits */
  size_t nlim;
  char (*lim_text)[SP_PLOT_LABEL_MAX];
  double *finite;           /* this output's finite samples, sample order */
  size_t nfinite;
} out_ctx;

static void chart_options(const out_ctx *c, sp_runplot_kind kind, sp_plot_options *po,
                          char *stem, size_t n)
{
  *po = c->opt->plot;
  char name[SP_PLOT_STEM_MAX + 1];
  sp_plot_stem(c->mo->name, name, sizeof name);
  snprintf(stem, n, "%s_%s_%s", c->opt->prefix ? c->opt->prefix : "run", name,
           kind_names[kind]);
  po->stem = stem;
}

/* Draws one chart through fn and records the outcome in ch. */
typedef sp_status (*draw_fn)(const out_ctx *c, const sp_plot_options *po, sp_runplot_chart *ch,
                             sp_error *err);

static sp_status draw_hist(const out_ctx *c, const sp_plot_options *po, sp_runplot_chart *ch,
                           sp_error *err)
{
  const sp_engine_result *res = sp_run_result(c->r);
  const sp_engine_output *o = &res->out[c->j];
  size_t nb = (size_t)res->nbins;
  if (o->n < 2 || !(o->hist_hi > o->hist_lo) || nb == 0) {
    snprintf(ch->note, sizeof ch->note, "no histogram: %s has %s", c->mo->name,
             o->n < 2 ? "fewer than two finite values" : "a single value");
    return SP_OK;
  }
  double *edges = malloc((nb + 1) * sizeof *edges), *counts = malloc(nb * sizeof *counts);
  if (!edges || !counts) {
    free(edges);
    free(counts);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  /* The edges the run's histogram table uses (sp_run_write_tables). */
  double w = (o->hist_hi - o->hist_lo) / (double)nb;
  for (size_t b = 0; b < nb; b++) {
    edges[b] = o->hist_lo + w * (double)b;
    counts[b] = (double)res->hist[c->j * nb + b];
  }
  edges[nb] = o->hist_hi;
  sp_plot_run_hist spec;
  memset(&spec, 0, sizeof spec);
  char title[SP_PLOT_LABEL_MAX];
  char cnt[SP_PLOT_COUNT_MAX];
  snprintf(title, sizeof title, "%s: distribution of %s samples", c->mo->name,
           sp_plot_count_text((unsigned long long)o->n, cnt, sizeof cnt));
  spec.title = title;
  spec.axis = c->axis;
  spec.edges = edges;
  spec.counts = counts;
  spec.nbins = nb;
  if (isfinite(o->sym_lo) && isfinite(o->sym_hi)) {
    spec.coverage.lo = o->sym_lo;
    spec.coverage.hi = o->sym_hi;
    spec.coverage.level = res->coverage;
  }
  spec.limits = c->lim;
  spec.nlimits = c->nlim;
  sp_status st = sp_plot_run_histogram(&spec, po, &ch->out, err);
  free(edges);
  free(counts);
  if (st == SP_OK) {
    ch->drawn = 1;
    snprintf(ch->caption, sizeof ch->caption,
             "%s: histogram of the run's %zu bins (density), the %g %% probabilistically "
             "symmetric coverage interval shaded%s.",
             c->mo->name, nb, 100 * res->coverage, c->nlim ? ", limits dashed" : "");
  }
  return st;
}

static sp_status draw_exceed(const out_ctx *c, const sp_plot_options *po, sp_runplot_chart *ch,
                             sp_error *err)
{
  int constant = 1;
  for (size_t i = 1; i < c->nfinite && constant; i++) constant = c->finite[i] == c->finite[0];
  if (c->nfinite < 2 || constant) {
    snprintf(ch->note, sizeof ch->note, "no exceedance curve: %s has %s", c->mo->name,
             c->nfinite < 2 ? "fewer than two finite values" : "a single value");
    return SP_OK;
  }
  sp_plot_exceedance spec;
  memset(&spec, 0, sizeof spec);
  char title[SP_PLOT_LABEL_MAX];
  snprintf(title, sizeof title, "%s: probability of exceedance", c->mo->name);
  spec.title = title;
  spec.axis = c->axis;
  spec.samples = c->finite;
  spec.n = c->nfinite;
  spec.limits = c->lim;
  spec.nlimits = c->nlim;
  sp_status st = sp_plot_run_exceedance(&spec, po, &ch->out, err);
  if (st == SP_OK) {
    ch->drawn = 1;
    char cnt[SP_PLOT_COUNT_MAX];
    snprintf(ch->caption, sizeof ch->caption,
             "%s: empirical probability of exceedance P(Y > y) of the %s finite samples, "
             "logarithmic axis%s.",
             c->mo->name, sp_plot_count_text(c->nfinite, cnt, sizeof cnt),
             c->nlim ? "; limits dashed" : "");
  }
  return st;
}

/* Input order by decreasing value of v (stable), into order[0..k). */
static void rank_inputs(const double *v, size_t k, size_t *order)
{
  for (size_t i = 0; i < k; i++) {
    size_t a = i;
    while (a > 0 && v[order[a - 1]] < v[i]) {
      order[a] = order[a - 1];
      a--;
    }
    order[a] = i;
  }
}

static double clip01(double v) { return v < 0 ? 0 : v > 1 ? 1 : v; }

static sp_status draw_bars(const out_ctx *c, const sp_plot_options *po, sp_runplot_chart *ch,
                           int sobol, sp_error *err)
{
  const sp_engine_result *res = sp_run_result(c->r);
  const sp_engine_sobol_result *sob = sp_run_sobol(c->r);
  const sp_model *m = sp_run_model(c->r);
  size_t k = (size_t)res->ninputs;
  if (k == 0) {
    snprintf(ch->note, sizeof ch->note, "no sensitivity chart: the model has no inputs");
    return SP_OK;
  }
  if (!sobol && !res->rank_share) {
    snprintf(ch->note, sizeof ch->note, "no sensitivity chart: the run computed no rank "
                                        "correlations");
    return SP_OK;
  }
  if (sobol && !sob) {
    snprintf(ch->note, sizeof ch->note, "no Sobol' indices: the run did not compute them");
    return SP_OK;
  }
  double *v = malloc(k * sizeof *v), *tot = malloc(k * sizeof *tot);
  size_t *order = malloc(k * sizeof *order);
  const char **names = malloc(k * sizeof *names);
  if (!v || !tot || !order || !names) {
    free(v);
    free(tot);
    free(order);
    free(names);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  int clipped = 0;
  for (size_t i = 0; i < k; i++) {
    if (sobol) {
      const sp_engine_index *ix = &sob->idx[c->j * sob->ninputs + i];
      v[i] = clip01(ix->S);
      tot[i] = clip01(ix->ST);
      clipped |= v[i] != ix->S || tot[i] != ix->ST;
      if (!isfinite(ix->S) || !isfinite(ix->ST)) v[i] = tot[i] = 0;
    } else {
      double s = res->rank_share[c->j * k + i];
      v[i] = isfinite(s) ? clip01(s) : 0;
    }
  }
  rank_inputs(v, k, order);
  /* The chart shows the largest SP_PLOT_INPUTS_MAX; the rest are in the
   * tables of the report. */
  size_t shown = k < SP_PLOT_INPUTS_MAX ? k : SP_PLOT_INPUTS_MAX;
  double *vs = malloc(shown * sizeof *vs), *ts = malloc(shown * sizeof *ts);
  if (!vs || !ts) {
    free(v);
    free(tot);
    free(order);
    free(names);
    free(vs);
    free(ts);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  for (size_t a = 0; a < shown; a++) {
    names[a] = sp_model_input_at(m, order[a])->name;
    vs[a] = v[order[a]];
    ts[a] = tot[order[a]];
  }
  char title[SP_PLOT_LABEL_MAX], more[64] = "";
  if (shown < k) snprintf(more, sizeof more, " (the %zu largest of %zu inputs)", shown, k);
  snprintf(title, sizeof title, "%s: %s%s", c->mo->name,
           sobol ? "Sobol' indices" : "what drives the spread", more);
  sp_plot_sensitivity spec;
  memset(&spec, 0, sizeof spec);
  spec.title = title;
  spec.inputs = names;
  spec.share = vs;
  spec.ninputs = shown;
  if (sobol) {
    spec.measure = clipped ? "first-order index S (estimates clipped to [0, 1])"
                           : "first-order index S";
    spec.share_total = ts;
    spec.measure_total = "total-effect index ST";
  } else {
    spec.measure = "share of the squared Spearman rank correlations";
  }
  sp_status st = sp_plot_run_sensitivity(&spec, po, &ch->out, err);
  if (st == SP_OK) {
    ch->drawn = 1;
    char cnt[SP_PLOT_COUNT_MAX];
    if (sobol)
      snprintf(ch->caption, sizeof ch->caption,
               "%s: first-order (filled) and total-effect (outlined) Sobol' indices from %s "
               "base samples, largest at the top.",
               c->mo->name, sp_plot_count_text(sob->base_samples, cnt, sizeof cnt));
    else
      snprintf(ch->caption, sizeof ch->caption,
               "%s: each input's share of the sum of squared Spearman rank correlations "
               "with the output, largest at the top.",
               c->mo->name);
  }
  free(v);
  free(tot);
  free(order);
  free(names);
  free(vs);
  free(ts);
  return st;
}

static sp_status draw_sens(const out_ctx *c, const sp_plot_options *po, sp_runplot_chart *ch,
                           sp_error *err)
{
  return draw_bars(c, po, ch, 0, err);
}

static sp_status draw_sobol(const out_ctx *c, const sp_plot_options *po, sp_runplot_chart *ch,
                            sp_error *err)
{
  return draw_bars(c, po, ch, 1, err);
}

static sp_status draw_conv(const out_ctx *c, const sp_plot_options *po, sp_runplot_chart *ch,
                           sp_error *err)
{
  const sp_engine_result *res = sp_run_result(c->r);
  sp_runplot_series s;
  sp_status st = sp_runplot_convergence(res->samples_kept + c->j * res->samples, res->samples,
                                        res->coverage, &s, err);
  if (st != SP_OK) return st;
  if (s.npoints == 0) {
    snprintf(ch->note, sizeof ch->note, "no convergence chart: %s has too few finite values "
                                        "for a %g %% interval", c->mo->name,
             100 * res->coverage);
    sp_runplot_series_clear(&s);
    return SP_OK;
  }
  sp_plot_convergence spec;
  memset(&spec, 0, sizeof spec);
  char title[SP_PLOT_LABEL_MAX];
  snprintf(title, sizeof title, "%s: convergence with the number of samples", c->mo->name);
  spec.title = title;
  spec.axis = c->axis;
  spec.nsamples = s.nsamples;
  spec.mean = s.mean;
  spec.mean_se = s.mean_se;
  spec.lo = s.lo;
  spec.hi = s.hi;
  spec.level = res->coverage;
  spec.npoints = s.npoints;
  st = sp_plot_run_convergence(&spec, po, &ch->out, err);
  if (st == SP_OK) {
    ch->drawn = 1;
    snprintf(ch->caption, sizeof ch->caption,
             "%s: mean of the first N samples with \u00b12 standard errors (s/\u221aN) and the "
             "ends of the %g %% coverage interval of those samples, N = %d, %d, ... and the "
             "whole run.",
             c->mo->name, 100 * res->coverage, SP_RUNPLOT_CONV_FIRST, 2 * SP_RUNPLOT_CONV_FIRST);
  }
  sp_runplot_series_clear(&s);
  return st;
}

static sp_status draw_scatter(const out_ctx *c, const sp_plot_options *po,
                              sp_runplot_chart *ch, sp_error *err)
{
  const sp_engine_result *res = sp_run_result(c->r);
  const sp_model *m = sp_run_model(c->r);
  size_t k = (size_t)res->ninputs, no = (size_t)res->noutputs;
  if (k == 0) {
    snprintf(ch->note, sizeof ch->note, "no scatter chart: the model has no inputs");
    return SP_OK;
  }
  if (!res->rank_share) {
    snprintf(ch->note, sizeof ch->note, "no scatter chart: without rank correlations the most "
                                        "influential input is not known");
    return SP_OK;
  }
  size_t best = 0;
  for (size_t i = 1; i < k; i++)
    if (res->rank_share[c->j * k + i] > res->rank_share[c->j * k + best]) best = i;
  size_t n = c->opt->scatter_points ? c->opt->scatter_points : SP_RUNPLOT_SCATTER_DEFAULT;
  double *buf = malloc((k + no) * n * sizeof *buf);
  double **in = malloc(k * sizeof *in), **out = malloc(no * sizeof *out);
  if (!buf || !in || !out) {
    free(buf);
    free(in);
    free(out);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  for (size_t i = 0; i < k; i++) in[i] = buf + i * n;
  for (size_t o = 0; o < no; o++) out[o] = buf + (k + o) * n;
  sp_status st = sp_runplot_subsample(m, res->seed, n, in, out, err);
  size_t kept = 0;
  if (st == SP_OK) {
    /* Points with a non-finite coordinate cannot be drawn. */
    double *x = in[best], *y = out[c->j];
    for (size_t s = 0; s < n; s++)
      /* filled by sp_runplot_subsample for every s < n (not followed):
       * NOLINTNEXTLINE(clang-analyzer-core.CallAndMessage) */
      if (isfinite(x[s]) && isfinite(y[s])) {
        x[kept] = x[s];
        y[kept] = y[s];
        kept++;
      }
    if (kept == 0) {
      snprintf(ch->note, sizeof ch->note, "no scatter chart: no finite point among %zu", n);
    } else {
      const sp_model_input *mi = sp_model_input_at(m, best);
      char title[SP_PLOT_LABEL_MAX];
      char cnt[SP_PLOT_COUNT_MAX];
      snprintf(title, sizeof title,
               "%s against %s: a fresh subsample of %s points, not the "
               "run's samples",
               c->mo->name, mi->name, sp_plot_count_text(kept, cnt, sizeof cnt));
      sp_plot_scatter spec;
      memset(&spec, 0, sizeof spec);
      spec.title = title;
      spec.xaxis.quantity = mi->name;
      spec.xaxis.unit = mi->unit_text;
      spec.yaxis = c->axis;
      spec.x = x;
      spec.y = y;
      spec.npoints = kept;
      spec.limits = c->lim;
      spec.nlimits = c->nlim;
      st = sp_plot_run_scatter(&spec, po, &ch->out, err);
      if (st == SP_OK) {
        ch->drawn = 1;
        snprintf(ch->caption, sizeof ch->caption,
                 "%s against its most influential input %s (largest rank share) on %s "
                 "points drawn afresh with the run's seed on the streams of block 2^48 - 2, "
                 "none of the run's own samples%s.",
                 c->mo->name, mi->name, sp_plot_count_text(kept, cnt, sizeof cnt),
                 c->nlim ? "; limits dashed" : "");
      }
    }
  }
  free(buf);
  free(in);
  free(out);
  return st;
}

static const draw_fn drawers[SP_RUNPLOT_NKINDS] = {draw_hist, draw_exceed, draw_sens,
                                                   draw_sobol, draw_conv, draw_scatter};

static int plain_name(const char *s)
{
  if (!s || !*s) return 0;
  for (const char *p = s; *p; p++)
    if (!((*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') || (*p >= '0' && *p <= '9') ||
          *p == '_' || *p == '-'))
      return 0;
  return *s != '-' && strlen(s) <= SP_PLOT_STEM_MAX / 4;
}

static const char *dir_name(sp_engine_direction d) { return d == SP_ENGINE_BELOW ? "<" : ">"; }

/* Unless overwrite, no file of any chart of m may exist in the folder. */
static sp_status check_free(const sp_model *m, const sp_runplot_options *opt, sp_error *err)
{
  if (opt->plot.overwrite) return SP_OK;
  static const char *const ext[4] = {".dat", ".gp", ".png", ".svg"};
  for (size_t j = 0; j < sp_model_output_count(m); j++) {
    char name[SP_PLOT_STEM_MAX + 1];
    sp_plot_stem(sp_model_output_at(m, j)->name, name, sizeof name);
    for (int kind = 0; kind < SP_RUNPLOT_NKINDS; kind++) {
      for (int k = 0; k < 4; k++) {
        char p[SP_PLOT_PATH_MAX];
        int w = snprintf(p, sizeof p, "%s/%s_%s_%s%s", opt->plot.outdir,
                         opt->prefix ? opt->prefix : "run", name, kind_names[kind], ext[k]);
        if (w < 0 || (size_t)w >= sizeof p)
          return sp_fail(err, SP_ELIMIT, "%s: output folder path too long", opt->plot.outdir);
        struct stat sb;
        if (lstat(p, &sb) == 0) {
          sp_fail(err, SP_EIO, "%s: file exists; refusing to overwrite it (no chart was drawn)", p);
          return sp_error_hint(err, "give --force to replace the charts, or choose another "
                                    "folder");
        }
      }
    }
  }
  return SP_OK;
}

static sp_status check_options(const sp_runplot_options *opt, sp_error *err)
{
  if (!opt) return sp_fail(err, SP_EUSAGE, "run charts: no options given");
  if (opt->prefix && !plain_name(opt->prefix))
    return sp_fail(err, SP_EUSAGE, "run charts: prefix '%s' is not a plain name "
                                   "([A-Za-z0-9_-], at most %d bytes)",
                   opt->prefix, SP_PLOT_STEM_MAX / 4);
  if (opt->scatter_points > SP_PLOT_SCATTER_MAX)
    return sp_fail(err, SP_EUSAGE, "run charts: %zu scatter points asked; at most %d",
                   opt->scatter_points, SP_PLOT_SCATTER_MAX);
  return SP_OK;
}

sp_status sp_runplot_check(const sp_model *m, const sp_runplot_options *opt, sp_error *err)
{
  if (!m) return sp_fail(err, SP_EUSAGE, "run charts: no model given");
  sp_status st = check_options(opt, err);
  if (st == SP_OK) st = sp_plot_check(&opt->plot, err);
  /* A folder that does not exist yet holds no files. */
  struct stat sb;
  if (st == SP_OK && stat(opt->plot.outdir, &sb) == 0) st = check_free(m, opt, err);
  return st;
}

sp_status sp_runplot_draw(const sp_run *r, const sp_runplot_options *opt, sp_runplot_set *set,
                          sp_error *err)
{
  memset(set, 0, sizeof *set);
  const sp_engine_result *res = r ? sp_run_result(r) : NULL;
  if (!res) return sp_fail(err, SP_EUSAGE, "run charts: the run has not been executed");
  if (!res->samples_kept)
    return sp_fail(err, SP_EUSAGE,
                   "run charts: the run kept no samples (execute it with "
                   "keep_samples on)");
  sp_status cs = check_options(opt, err);
  if (cs != SP_OK) return cs;
  const sp_model *m = sp_run_model(r);
  /* Every chart's files are checked first: nothing is drawn when one is in
   * the way. */
  if ((cs = check_free(m, opt, err)) != SP_OK) return cs;
  size_t no = (size_t)res->noutputs;
  set->charts = calloc(no * SP_RUNPLOT_NKINDS + 1, sizeof *set->charts);
  size_t nl = sp_model_limit_count(m);
  sp_plot_limit *lim = calloc(nl + 1, sizeof *lim);
  char(*lim_text)[SP_PLOT_LABEL_MAX] = calloc(nl + 1, sizeof *lim_text);
  double *finite = malloc((res->samples ? (size_t)res->samples : 1) * sizeof *finite);
  if (!set->charts || !lim || !lim_text || !finite) {
    free(lim);
    free(lim_text);
    free(finite);
    sp_runplot_set_clear(set);
    return sp_fail(err, SP_ENOMEM, "run charts: out of memory");
  }
  sp_status st = SP_OK;
  for (size_t j = 0; j < no && st == SP_OK; j++) {
    out_ctx c;
    memset(&c, 0, sizeof c);
    c.r = r;
    c.opt = opt;
    c.j = j;
    c.mo = sp_model_output_at(m, j);
    c.axis.quantity = c.mo->name;
    c.axis.unit = c.mo->unit_text;
    c.lim = lim;
    c.lim_text = lim_text;
    for (size_t k = 0; k < nl; k++) {
      const sp_model_limit *ml = sp_model_limit_at(m, k);
      if (ml->output != j) continue;
      snprintf(lim_text[c.nlim], SP_PLOT_LABEL_MAX, "limit %s %s %.6g %s", c.mo->name,
               dir_name(ml->dir == SP_MODEL_LIMIT_BELOW ? SP_ENGINE_BELOW : SP_ENGINE_ABOVE),
               ml->value, c.mo->unit_text);
      lim[c.nlim].value = ml->value;
      lim[c.nlim].label = lim_text[c.nlim];
      c.nlim++;
    }
    const double *y = res->samples_kept + j * res->samples;
    for (uint64_t s = 0; s < res->samples; s++)
      if (isfinite(y[s])) finite[c.nfinite++] = y[s];
    c.finite = finite;
    for (int kind = 0; kind < SP_RUNPLOT_NKINDS && st == SP_OK; kind++) {
      sp_runplot_chart *ch = &set->charts[set->ncharts++];
      ch->output = j;
      ch->kind = (sp_runplot_kind)kind;
      char stem[SP_PLOT_STEM_MAX + 64];
      sp_plot_options po;
      chart_options(&c, (sp_runplot_kind)kind, &po, stem, sizeof stem);
      st = drawers[kind](&c, &po, ch, err);
      if (st == SP_OK && ch->drawn) {
        set->ndrawn++;
        if (ch->out.rendered) set->nrendered++;
        else snprintf(ch->note, sizeof ch->note, "%s", ch->out.hint);
      }
    }
  }
  free(lim);
  free(lim_text);
  free(finite);
  return st;
}
