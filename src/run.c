/* scatterprop run: model + fit records + engine, and the run record. */
#include "scatterprop/run.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "build_info.h"
#include "json_build.h"
#include "provenance_internal.h"

struct sp_run {
  char *path;
  char *text;
  size_t len;
  sp_model *model;
  sp_run_fit_source *fits;
  size_t nfits;
  sp_engine_input *inputs;
  int executed;
  sp_engine_result result;
  int has_sobol;
  sp_engine_sobol_result sobol;
};

void sp_run_options_init(sp_run_options *o)
{
  memset(o, 0, sizeof *o);
  sp_engine_options_init(&o->engine);
  o->engine.rank_sensitivity = 1;
}

/* The model file's text: a regular file, size-checked before a byte is
 * read, and never more than one byte past SP_MODEL_MAX_BYTES (a file that
 * grows while it is read is then refused by sp_model_compile). */
static char *read_all(const char *path, size_t *len, sp_error *err)
{
  FILE *fp = sp_file_open_input(path, "model", SP_MODEL_MAX_BYTES, err);
  if (!fp) return NULL;
  size_t cap = 4096, n = 0;
  char *buf = malloc(cap);
  size_t got;
  while (buf && n <= SP_MODEL_MAX_BYTES && (got = fread(buf + n, 1, cap - n - 1, fp)) > 0) {
    n += got;
    if (cap - n - 1 == 0) {
      char *nb = realloc(buf, cap * 2);
      if (!nb) { free(buf); buf = NULL; break; }
      buf = nb;
      cap *= 2;
    }
  }
  int bad = ferror(fp);
  fclose(fp);
  if (!buf) { sp_fail(err, SP_ENOMEM, "out of memory reading %s", path); return NULL; }
  if (bad) { free(buf); sp_fail(err, SP_EIO, "%s: read failed", path); return NULL; }
  buf[n] = '\0';
  *len = n;
  return buf;
}

void sp_run_free(sp_run *r)
{
  if (!r) return;
  for (size_t k = 0; k < r->nfits; k++) {
    /* allocated and checked above under the same status (not followed):
     * NOLINTNEXTLINE(clang-analyzer-core.NullDereference) */
    free(r->fits[k].path);
    sp_record_fit_clear(&r->fits[k].fit);
  }
  free(r->fits);
  free(r->inputs);
  if (r->executed) sp_engine_result_free(&r->result);
  if (r->has_sobol) sp_engine_sobol_result_free(&r->sobol);
  sp_model_free(r->model);
  free(r->text);
  free(r->path);
  free(r);
}

/* Resolves input i from its fit record. */
static sp_status resolve_fit(sp_run *r, size_t i, sp_error *err)
{
  const sp_model_input *in = sp_model_input_at(r->model, i);
  sp_run_fit_source *src = &r->fits[r->nfits];
  memset(src, 0, sizeof *src);
  src->input = i;
  src->path = strdup(in->fit_path_resolved);
  if (!src->path) return sp_fail(err, SP_ENOMEM, "out of memory");
  r->nfits++;
  sp_error e;
  sp_error_clear(&e);
  if (sp_sha256_file(src->path, src->sha256, &src->size, &e) != SP_OK ||
      sp_record_fit_read(src->path, &src->fit, &e) != SP_OK) {
    /* The record's own position (a JSON syntax error's line and column)
     * stays in the message. */
    char inner[SP_ERROR_MSG_MAX + SP_ERROR_FILE_MAX + 64];
    sp_error_format(&e, inner, sizeof inner);
    *err = e;
    sp_fail_at(err, e.code, r->path, in->line, 0, "input %s: %.900s", in->name, inner);
    return sp_error_hint(err, "fit(\"...\") paths are relative to the model file's folder; "
                              "write the record with 'scatterprop fit ... --out FILE'");
  }
  /* The record's unit must convert to the declared one. */
  sp_unit *ru = sp_unit_parse(src->fit.unit ? src->fit.unit : "1", &e);
  if (!ru) {
    return sp_fail_at(err, SP_EMODEL, r->path, in->line, 0, "input %s: fit record %s: %s",
                      in->name, in->fit_path, e.msg);
  }
  double scale = 1, offset = 0;
  sp_status s = sp_unit_conversion(ru, in->unit, &scale, &offset, &e);
  sp_unit_free(ru);
  if (s != SP_OK) {
    sp_fail_at(err, SP_EMODEL, r->path, in->line, 0,
               "input %s [%s]: fit record %s is in %s, which cannot be converted to %s",
               in->name, in->unit_text, in->fit_path, src->fit.unit ? src->fit.unit : "1",
               in->unit_text);
    return sp_error_hint(err, "check that the record fits the column this input means "
                              "(record column '%s')", src->fit.column ? src->fit.column : "?");
  }
  if (sp_model_set_input_dist(r->model, i, src->fit.family, src->fit.params, scale, offset,
                              &e) != SP_OK) {
    return sp_fail_at(err, SP_EMODEL, r->path, in->line, 0, "input %s: %s", in->name, e.msg);
  }
  return SP_OK;
}

sp_status sp_run_open(const char *path, sp_run **out, sp_model_diags *diags, sp_error *err)
{
  *out = NULL;
  sp_run *r = calloc(1, sizeof *r);
  if (!r) return sp_fail(err, SP_ENOMEM, "out of memory");
  r->path = strdup(path);
  if (!r->path) { free(r); return sp_fail(err, SP_ENOMEM, "out of memory"); }
  r->text = read_all(path, &r->len, err);
  if (!r->text) { sp_run_free(r); return err ? err->code : SP_EIO; }
  sp_status s = sp_model_compile(path, r->text, r->len, &r->model, diags, err);
  if (s != SP_OK) { sp_run_free(r); return s; }
  size_t ni = sp_model_input_count(r->model);
  r->fits = calloc(ni ? ni : 1, sizeof *r->fits);
  r->inputs = calloc(ni ? ni : 1, sizeof *r->inputs);
  if (!r->fits || !r->inputs) { sp_run_free(r); return sp_fail(err, SP_ENOMEM, "out of memory"); }
  for (size_t i = 0; i < ni && s == SP_OK; i++)
    if (sp_model_input_at(r->model, i)->fit_path) s = resolve_fit(r, i, err);
  if (s == SP_OK) s = sp_model_check_inputs(r->model, err);
  if (s != SP_OK) { sp_run_free(r); return s; }
  *out = r;
  return SP_OK;
}

const sp_model *sp_run_model(const sp_run *r) { return r->model; }
const char *sp_run_model_text(const sp_run *r) { return r->text; }
size_t sp_run_fit_count(const sp_run *r) { return r->nfits; }
const sp_run_fit_source *sp_run_fit_at(const sp_run *r, size_t k)
{
  return k < r->nfits ? &r->fits[k] : NULL;
}
const sp_engine_result *sp_run_result(const sp_run *r) { return r->executed ? &r->result : NULL; }
const sp_engine_sobol_result *sp_run_sobol(const sp_run *r)
{
  return r->has_sobol ? &r->sobol : NULL;
}

/* ---- the evaluator: the compiled model over blocks ---------------------- */

static void *ev_ws_alloc(void *ctx, size_t block)
{
  return sp_model_ws_alloc(ctx, block, NULL);
}

static void ev_ws_free(void *ws) { sp_model_ws_free(ws); }

static void ev_eval(void *ctx, void *ws, const double *const *in, size_t n, double *const *out)
{
  sp_model_eval(ctx, ws, in, n, out);
}

/* Engine inputs, correlations and limits from the model.  corr and lim
 * must hold the model's counts. */
static void engine_setup(sp_run *r, sp_engine_corr *corr, sp_engine_limit *lim,
                         sp_evaluator *ev)
{
  const sp_model *m = r->model;
  for (size_t i = 0; i < sp_model_input_count(m); i++) {
    const sp_model_input *in = sp_model_input_at(m, i);
    r->inputs[i].fam = in->family;
    memcpy(r->inputs[i].theta, in->theta, sizeof r->inputs[i].theta);
    r->inputs[i].scale = in->scale;
    r->inputs[i].offset = in->offset;
    r->inputs[i].name = in->name;
  }
  for (size_t k = 0; k < sp_model_correlation_count(m); k++) {
    const sp_model_correlation *c = sp_model_correlation_at(m, k);
    corr[k].i = c->i;
    corr[k].j = c->j;
    corr[k].rho_s = c->rho;
  }
  for (size_t k = 0; k < sp_model_limit_count(m); k++) {
    const sp_model_limit *l = sp_model_limit_at(m, k);
    lim[k].output = l->output;
    lim[k].direction = l->dir == SP_MODEL_LIMIT_BELOW ? SP_ENGINE_BELOW : SP_ENGINE_ABOVE;
    lim[k].value = l->value;
  }
  sp_run_model_evaluator(m, ev);
}

void sp_run_model_evaluator(const sp_model *m, sp_evaluator *ev)
{
  ev->ninputs = sp_model_input_count(m);
  ev->noutputs = sp_model_output_count(m);
  ev->ctx = (void *)(uintptr_t)m; /* the evaluator only reads the model */
  ev->ws_alloc = ev_ws_alloc;
  ev->ws_free = ev_ws_free;
  ev->eval = ev_eval;
}

sp_status sp_run_memory_needed(const sp_run *r, const sp_run_options *opt, uint64_t *bytes,
                               sp_error *err)
{
  return sp_engine_memory_needed(&opt->engine, sp_model_input_count(r->model),
                                 sp_model_output_count(r->model), bytes, err);
}

sp_status sp_run_execute(sp_run *r, const sp_run_options *opt, sp_error *err)
{
  const sp_model *m = r->model;
  /* A model without inputs compiles (its outputs are constants), but has
   * nothing to propagate: a model error, not the engine's usage error. */
  if (sp_model_input_count(m) == 0)
    return sp_fail_at(err, SP_EMODEL, r->path, sp_model_output_at(m, 0)->line, 0,
                      "the model has no inputs: nothing is uncertain, so there is nothing "
                      "to propagate");
  size_t nc = sp_model_correlation_count(m), nl = sp_model_limit_count(m);
  sp_engine_corr *corr = calloc(nc ? nc : 1, sizeof *corr);
  sp_engine_limit *lim = calloc(nl ? nl : 1, sizeof *lim);
  if (!corr || !lim) {
    free(corr); free(lim);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  sp_evaluator ev;
  engine_setup(r, corr, lim, &ev);
  sp_engine_options eo = opt->engine;
  eo.corr = corr;
  eo.ncorr = nc;
  eo.limits = lim;
  eo.nlimits = nl;
  if (r->executed) { sp_engine_result_free(&r->result); r->executed = 0; }
  if (r->has_sobol) { sp_engine_sobol_result_free(&r->sobol); r->has_sobol = 0; }
  sp_status s = sp_engine_run(r->inputs, sp_model_input_count(m), &ev, &eo, &r->result, err);
  if (s == SP_OK) r->executed = 1;
  /* A correlation matrix the engine refuses comes from the model's
   * 'correlate' lines: report it as a model error at the first of them. */
  if (s == SP_EUSAGE && nc > 0 && err && strstr(err->msg, "correlation")) {
    err->code = SP_EMODEL;
    snprintf(err->file, sizeof err->file, "%s", r->path);
    err->line = sp_model_correlation_at(m, 0)->line;
    err->col = 0;
    s = SP_EMODEL;
  }
  if (s == SP_OK && opt->sobol_samples > 0 && r->result.status == SP_ENGINE_COMPLETE) {
    sp_engine_options so = eo;
    so.samples = opt->sobol_samples;
    so.adaptive_digits = 0;
    so.keep_samples = 0;
    so.corr = NULL;
    so.ncorr = 0;
    if (nc > 0) {
      s = sp_fail(err, SP_EUSAGE, "Sobol' indices need independent inputs; the model "
                                  "correlates %zu pair%s", nc, nc == 1 ? "" : "s");
      sp_error_hint(err, "drop --sobol, or remove the 'correlate' lines for this analysis");
    } else {
      s = sp_engine_sobol_indices(r->inputs, sp_model_input_count(m), &ev, &so, &r->sobol, err);
      if (s == SP_OK) r->has_sobol = 1;
    }
  }
  free(corr);
  free(lim);
  return s;
}

int sp_run_decimals(const sp_run *r, size_t j)
{
  if (!r->executed || j >= r->result.noutputs) return -1;
  double sem = r->result.out[j].sem;
  if (!(sem > 0) || !isfinite(sem)) return -1;
  int d = 1 - (int)floor(log10(sem));
  /* Fixed decimals only where they show the value: past 15 decimals the
   * values would print as zeros, and from 1e15 up a double has no more
   * integer digits to show; -1 asks for 6 significant digits there. */
  if (d > 15 || sem >= 1e15) return -1;
  if (d < 0) d = 0;
  return d;
}

/* ---- the run record ------------------------------------------------------ */

static const char *direction_name(uint64_t d) { return d == SP_ENGINE_BELOW ? "<" : ">"; }

static json_t *params_json(wctx *w, const sp_family *f, const double *theta)
{
  json_t *o = obj(w);
  for (size_t p = 0; f && p < f->nparam; p++) set(w, o, f->param_names[p], num(w, theta[p]));
  return o;
}

static json_t *inputs_json(wctx *w, const sp_run *r)
{
  const sp_model *m = r->model;
  json_t *a = arr(w);
  for (size_t i = 0; i < sp_model_input_count(m); i++) {
    const sp_model_input *in = sp_model_input_at(m, i);
    json_t *o = obj(w);
    set(w, o, "name", str(w, in->name));
    set(w, o, "unit", str(w, in->unit_text));
    set(w, o, "line", integer(w, in->line));
    set(w, o, "family", str(w, in->family ? in->family->name : NULL));
    set(w, o, "params", params_json(w, in->family, in->theta));
    set(w, o, "scale", num(w, in->scale));
    set(w, o, "offset", num(w, in->offset));
    const sp_run_fit_source *src = NULL;
    for (size_t k = 0; k < r->nfits; k++)
      if (r->fits[k].input == i) src = &r->fits[k];
    if (src) {
      json_t *f = obj(w);
      set(w, f, "path", str(w, in->fit_path));
      set(w, f, "resolved", str(w, src->path));
      set(w, f, "size", integer(w, (long long)src->size));
      set(w, f, "sha256", str(w, src->sha256));
      set(w, f, "unit", str(w, src->fit.unit));
      set(w, f, "column", str(w, src->fit.column));
      set(w, f, "data_path", str(w, src->fit.data_path));
      set(w, f, "data_sha256", str(w, src->fit.sha256));
      set(w, f, "n", integer(w, (long long)src->fit.n));
      set(w, o, "source", str(w, "fit"));
      set(w, o, "fit_record", f);
    } else {
      set(w, o, "source", str(w, "model"));
      set(w, o, "fit_record", json_null());
    }
    push(w, a, o);
  }
  return a;
}

static json_t *output_json(wctx *w, const sp_run *r, size_t j)
{
  const sp_engine_result *res = &r->result;
  const sp_engine_output *o = &res->out[j];
  const sp_model_output *mo = sp_model_output_at(r->model, j);
  json_t *x = obj(w);
  set(w, x, "name", str(w, mo->name));
  set(w, x, "unit", str(w, mo->unit_text));
  set(w, x, "n", integer(w, (long long)o->n));
  set(w, x, "nan", integer(w, (long long)o->nan));
  set(w, x, "posinf", integer(w, (long long)o->posinf));
  set(w, x, "neginf", integer(w, (long long)o->neginf));
  set(w, x, "mean", num(w, o->mean));
  set(w, x, "sd", num(w, o->sd));
  set(w, x, "sem", num(w, o->sem));
  set(w, x, "min", num(w, o->min));
  set(w, x, "max", num(w, o->max));
  set(w, x, "skewness", num(w, o->skewness));
  set(w, x, "excess_kurtosis", num(w, o->kurtosis));
  json_t *ci = obj(w);
  set(w, ci, "coverage", num(w, res->coverage));
  set(w, ci, "symmetric", json_pack("[o, o]", num(w, o->sym_lo), num(w, o->sym_hi)));
  set(w, ci, "shortest", json_pack("[o, o]", num(w, o->short_lo), num(w, o->short_hi)));
  set(w, x, "coverage_interval", ci);
  json_t *pct = arr(w);
  for (size_t k = 0; k < res->npct; k++) {
    json_t *p = obj(w);
    set(w, p, "p", num(w, res->pct_p[k]));
    set(w, p, "value", num(w, res->pct[j * res->npct + k]));
    push(w, pct, p);
  }
  set(w, x, "percentiles", pct);
  json_t *h = obj(w);
  set(w, h, "lo", num(w, o->hist_lo));
  set(w, h, "hi", num(w, o->hist_hi));
  set(w, h, "below", integer(w, (long long)o->hist_below));
  set(w, h, "above", integer(w, (long long)o->hist_above));
  json_t *counts = arr(w);
  for (size_t b = 0; b < res->nbins; b++)
    push(w, counts, integer(w, (long long)res->hist[j * res->nbins + b]));
  set(w, h, "counts", counts);
  set(w, x, "histogram", h);
  json_t *sens = arr(w);
  for (size_t i = 0; i < res->ninputs; i++) {
    json_t *s = obj(w);
    set(w, s, "input", str(w, sp_model_input_at(r->model, i)->name));
    set(w, s, "spearman", num(w, res->rank_corr ? res->rank_corr[j * res->ninputs + i] : NAN));
    set(w, s, "share", num(w, res->rank_share ? res->rank_share[j * res->ninputs + i] : NAN));
    if (r->has_sobol) {
      const sp_engine_index *ix = &r->sobol.idx[j * r->sobol.ninputs + i];
      set(w, s, "S", json_pack("{s:o, s:o, s:o, s:o}", "value", num(w, ix->S), "lo",
                               num(w, ix->S_lo), "hi", num(w, ix->S_hi), "se", num(w, ix->S_se)));
      set(w, s, "ST", json_pack("{s:o, s:o, s:o, s:o}", "value", num(w, ix->ST), "lo",
                                num(w, ix->ST_lo), "hi", num(w, ix->ST_hi), "se",
                                num(w, ix->ST_se)));
    }
    push(w, sens, s);
  }
  set(w, x, "sensitivity", sens);
  return x;
}

char *sp_run_record_json(const sp_run *r, const sp_run_options *opt, int argc,
                         char *const *argv, int64_t created, sp_error *err)
{
  if (!r->executed) {
    sp_fail(err, SP_EUSAGE, "sp_run_record_json: the run has not been executed");
    return NULL;
  }
  if (r->result.status == SP_ENGINE_CANCELLED && r->result.noutputs == 0) {
    sp_fail(err, SP_EUSAGE,
            "sp_run_record_json: the run was cancelled and its samples "
            "discarded (discard_cancelled)");
    return NULL;
  }
  const sp_engine_result *res = &r->result;
  wctx w = {0};
  json_t *root = obj(&w);
  set(&w, root, "format", str(&w, SP_RECORD_RUN_FORMAT));
  set(&w, root, "version", integer(&w, SP_RECORD_RUN_VERSION));
  json_t *tool = obj(&w);
  set(&w, tool, "name", str(&w, "scatterprop"));
  set(&w, tool, "version", str(&w, sp_version()));
  set(&w, tool, "git", str(&w, sp_git_revision()));
  set(&w, tool, "compiler", str(&w, sp_build_compiler()));
  set(&w, tool, "gsl", str(&w, sp_build_gsl_version()));
  set(&w, tool, "system", str(&w, SP_BUILD_SYSTEM));
  set(&w, root, "tool", tool);
  char ts[SP_RECORD_TIME_LEN];
  sp_record_time_utc(created, ts);
  set(&w, root, "created_utc", str(&w, ts));
  json_t *cmd = arr(&w);
  for (int i = 0; i < argc; i++) push(&w, cmd, sp_provenance_text(&w, argv[i]));
  set(&w, root, "command", cmd);
  set(&w, root, "caution", str(&w, sp_caution_text()));
  json_t *model = obj(&w);
  set(&w, model, "path", str(&w, r->path));
  set(&w, model, "sha256", str(&w, sp_model_sha256(r->model)));
  set(&w, model, "text", str(&w, r->text));
  set(&w, root, "model", model);
  set(&w, root, "inputs", inputs_json(&w, r));
  json_t *corr = arr(&w);
  for (size_t k = 0; k < sp_model_correlation_count(r->model); k++) {
    const sp_model_correlation *c = sp_model_correlation_at(r->model, k);
    push(&w, corr, json_pack("{s:o, s:o, s:o}", "a", str(&w, sp_model_input_at(r->model, c->i)->name),
                             "b", str(&w, sp_model_input_at(r->model, c->j)->name), "spearman",
                             num(&w, c->rho)));
  }
  set(&w, root, "correlations", corr);
  json_t *o = obj(&w);
  set(&w, o, "method", str(&w, sp_engine_method_name((sp_engine_method)res->method)));
  /* A seed of 2^63 or more does not fit a JSON integer that every reader
   * takes: it is written as its decimal digits (as in fit records). */
  if (res->seed <= (uint64_t)INT64_MAX) {
    set(&w, o, "seed", integer(&w, (long long)res->seed));
  } else {
    char sd[24];
    snprintf(sd, sizeof sd, "%llu", (unsigned long long)res->seed);
    set(&w, o, "seed", str(&w, sd));
  }
  set(&w, o, "generator", str(&w, "pcg64 (XSL-RR 128/64), block streams per docs/reproducibility.md"));
  set(&w, o, "stream_rule", str(&w, sp_provenance_stream_rule()));
  set(&w, o, "samples_requested", integer(&w, (long long)res->requested));
  set(&w, o, "block", integer(&w, (long long)res->block));
  set(&w, o, "replicates", integer(&w, (long long)res->replicates));
  set(&w, o, "coverage", num(&w, res->coverage));
  set(&w, o, "adaptive_digits", integer(&w, opt->engine.adaptive_digits));
  set(&w, o, "sobol_samples", integer(&w, (long long)opt->sobol_samples));
  set(&w, o, "threads", integer(&w, (long long)res->threads));
  /* The rest of the resolved engine options, so that a replay can run
   * exactly this run again (docs/run-record.md). */
  json_t *extra = arr(&w);
  for (size_t k = 0; k < opt->engine.npercentiles; k++)
    push(&w, extra, num(&w, opt->engine.percentiles[k]));
  set(&w, o, "extra_percentiles", extra);
  set(&w, o, "histogram_bins", integer(&w, (long long)opt->engine.hist_bins));
  set(&w, o, "max_samples", integer(&w, (long long)opt->engine.max_samples));
  set(&w, o, "limit_confidence", num(&w, opt->engine.limit_confidence));
  set(&w, o, "sobol_bootstrap", integer(&w, (long long)opt->engine.bootstrap));
  set(&w, o, "index_confidence", num(&w, opt->engine.index_confidence));
  size_t nout = sp_model_output_count(r->model);
  json_t *hr = json_null(), *tol = json_null();
  if (opt->engine.hist_range) {
    hr = arr(&w);
    for (size_t k = 0; k < 2 * nout; k++) push(&w, hr, num(&w, opt->engine.hist_range[k]));
  }
  if (opt->engine.tolerance) {
    tol = arr(&w);
    for (size_t k = 0; k < nout; k++) push(&w, tol, num(&w, opt->engine.tolerance[k]));
  }
  set(&w, o, "histogram_range", hr);
  set(&w, o, "tolerances", tol);
  set(&w, root, "options", o);
  json_t *rs = obj(&w);
  static const char *const status_names[] = {"complete", "cancelled", "not stabilised"};
  set(&w, rs, "status", str(&w, res->status < 3 ? status_names[res->status] : "unknown"));
  set(&w, rs, "samples", integer(&w, (long long)res->samples));
  static const char *const sem_names[] = {"iid", "replicates", "iid bound (lhs)"};
  set(&w, rs, "sem_kind", str(&w, res->sem_kind < 3 ? sem_names[res->sem_kind] : "unknown"));
  set(&w, rs, "batches", integer(&w, (long long)res->batches));
  set(&w, rs, "batch_size", integer(&w, (long long)res->batch_size));
  json_t *outs = arr(&w);
  for (size_t j = 0; j < res->noutputs; j++) push(&w, outs, output_json(&w, r, j));
  set(&w, rs, "outputs", outs);
  json_t *lims = arr(&w);
  for (size_t k = 0; k < res->nlimits; k++) {
    const sp_engine_exceed *e = &res->exceed[k];
    const sp_model_output *mo = sp_model_output_at(r->model, (size_t)e->output);
    json_t *l = obj(&w);
    set(&w, l, "output", str(&w, mo->name));
    set(&w, l, "requirement", str(&w, direction_name(e->direction)));
    set(&w, l, "value", num(&w, e->value));
    set(&w, l, "unit", str(&w, mo->unit_text));
    set(&w, l, "violations", integer(&w, (long long)e->violations));
    set(&w, l, "n", integer(&w, (long long)e->n));
    set(&w, l, "p_violation", num(&w, e->p));
    set(&w, l, "interval", json_pack("[o, o]", num(&w, e->lo), num(&w, e->hi)));
    set(&w, l, "interval_kind", str(&w, e->one_sided ? "one-sided Clopper-Pearson bound"
                                                     : "Wilson score"));
    set(&w, l, "confidence", num(&w, opt->engine.limit_confidence));
    push(&w, lims, l);
  }
  set(&w, rs, "limits", lims);
  set(&w, root, "results", rs);
  set(&w, root, "provenance", sp_provenance_json_object(&w));
  char *txt = w.bad ? NULL : json_dumps(root, REC_DUMP_FLAGS);
  json_decref(root);
  if (!txt) sp_fail(err, SP_ENOMEM, "cannot build the run record (out of memory)");
  return txt;
}

/* ---- tables --------------------------------------------------------------- */

sp_status sp_run_table_path(const sp_run *r, const char *dir, size_t j, const char *kind, char *buf,
                            size_t n, sp_error *err)
{
  if (j >= sp_model_output_count(r->model))
    return sp_fail(err, SP_EUSAGE, "sp_run_table_path: no output %zu", j);
  if (strcmp(kind, "percentiles") != 0 && strcmp(kind, "histogram") != 0 &&
      strcmp(kind, "samples") != 0)
    return sp_fail(err, SP_EUSAGE, "sp_run_table_path: no table kind '%s'", kind);
  const char *name = sp_model_output_at(r->model, j)->name;
  int w = snprintf(buf, n, "%s/%s.%s.csv", dir, name, kind);
  if (w < 0 || (size_t)w >= n) return sp_fail(err, SP_ELIMIT, "%s: path too long", dir);
  return SP_OK;
}

static sp_status write_table(const char *dir, const char *name, const char *kind,
                             int overwrite, const sp_run *r, size_t j, sp_error *err)
{
  char path[4096];
  sp_status ps = sp_run_table_path(r, dir, j, kind, path, sizeof path, err);
  if (ps != SP_OK) return ps;
  sp_outfile *f = sp_outfile_open(path, overwrite, err);
  if (!f) return err ? err->code : SP_EIO;
  FILE *fp = sp_outfile_stream(f);
  const sp_engine_result *res = &r->result;
  const char *unit = sp_model_output_at(r->model, j)->unit_text;
  fprintf(fp, "# scatterprop run of %s: output %s [%s]\n", r->path, name, unit);
  fprintf(fp, "# method %s, seed %llu, %llu samples\n",
          sp_engine_method_name((sp_engine_method)res->method), (unsigned long long)res->seed,
          (unsigned long long)res->samples);
  if (strcmp(kind, "percentiles") == 0) {
    fprintf(fp, "percent,%s [%s]\n", name, unit);
    for (size_t k = 0; k < res->npct; k++)
      fprintf(fp, "%.12g,%.17g\n", 100.0 * res->pct_p[k], res->pct[j * res->npct + k]);
  } else if (strcmp(kind, "histogram") == 0) {
    const sp_engine_output *o = &res->out[j];
    fprintf(fp, "bin_lo [%s],bin_hi [%s],count\n", unit, unit);
    double wdt = (o->hist_hi - o->hist_lo) / (double)res->nbins;
    for (size_t b = 0; b < res->nbins; b++)
      fprintf(fp, "%.17g,%.17g,%llu\n", o->hist_lo + wdt * (double)b,
              b + 1 == res->nbins ? o->hist_hi : o->hist_lo + wdt * (double)(b + 1),
              (unsigned long long)res->hist[j * res->nbins + b]);
  } else {
    fprintf(fp, "%s [%s]\n", name, unit);
    const double *v = res->samples_kept + j * res->samples;
    for (uint64_t k = 0; k < res->samples; k++) fprintf(fp, "%.17g\n", v[k]);
  }
  return sp_outfile_commit(f, err);
}

sp_status sp_run_write_tables(const sp_run *r, const char *dir, int with_samples, int overwrite,
                              sp_error *err)
{
  if (!r->executed) return sp_fail(err, SP_EUSAGE, "sp_run_write_tables: no results yet");
  if (r->result.status == SP_ENGINE_CANCELLED && r->result.noutputs == 0)
    return sp_fail(err, SP_EUSAGE,
                   "sp_run_write_tables: the run was cancelled and its "
                   "samples discarded (discard_cancelled)");
  for (size_t j = 0; j < r->result.noutputs; j++) {
    const char *name = sp_model_output_at(r->model, j)->name;
    sp_status s = write_table(dir, name, "percentiles", overwrite, r, j, err);
    if (s == SP_OK) s = write_table(dir, name, "histogram", overwrite, r, j, err);
    if (s == SP_OK && with_samples && r->result.samples_kept)
      s = write_table(dir, name, "samples", overwrite, r, j, err);
    if (s != SP_OK) return s;
  }
  return SP_OK;
}
