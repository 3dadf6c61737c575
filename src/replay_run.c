/* scatterprop replay of a run record: check the model file, every fit
 * record and, through them, every data file; run the model again with the
 * recorded options; compare the new run record with the old. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "scatterprop/run.h"
#include "replay_internal.h"

#define TRY(x)                                                                 \
  do {                                                                         \
    sp_status s_ = (x);                                                        \
    if (s_ != SP_OK) return s_;                                                \
  } while (0)

/* Engine options from the record.  Arrays are allocated into *pct, *hr,
 * *tol (owned by the caller, free()). */
typedef struct {
  double *pct, *hr, *tol;
  size_t nhr, ntol;
} run_arrays;

static sp_status num_array(const sp_replay_ctx *c, const json_t *o, const char *key,
                           const char *path, int nullable_array, int nullable_items,
                           double **out, size_t *n)
{
  json_t *a = json_object_get(o, key);
  *out = NULL;
  *n = 0;
  if (!a) return sp_replay_bad(c, path, "is missing");
  if (nullable_array && json_is_null(a)) return SP_OK;
  if (!json_is_array(a))
    return sp_replay_bad(c, path, nullable_array ? "must be an array or null" : "must be an array");
  size_t k = json_array_size(a);
  *out = malloc((k ? k : 1) * sizeof **out);
  if (!*out) return sp_fail(c->err, SP_ENOMEM, "out of memory");
  for (size_t i = 0; i < k; i++) {
    json_t *v = json_array_get(a, i);
    if (nullable_items && json_is_null(v)) {
      (*out)[i] = NAN;
      continue;
    }
    if (!json_is_number(v)) {
      char p[256];
      snprintf(p, sizeof p, "%.200s[%zu]", path, i);
      return sp_replay_bad(c, p, "must be a number");
    }
    (*out)[i] = json_number_value(v);
  }
  *n = k;
  return SP_OK;
}

static sp_status run_options(const sp_replay_ctx *c, const json_t *root, sp_run_options *ro,
                             run_arrays *ar)
{
  json_t *o = NULL;
  TRY(sp_replay_need_obj(c, root, "options", "options", &o));
  const char *method = NULL;
  TRY(sp_replay_need_str(c, o, "method", "options.method", 0, &method));
  sp_error e;
  sp_error_clear(&e);
  if (sp_engine_method_find(method, &ro->engine.method, &e) != SP_OK)
    return sp_replay_bad(c, "options.method", "is refused: %s", e.msg);
  uint64_t u;
  TRY(sp_replay_need_u64(c, o, "seed", "options.seed", &ro->engine.seed));
  TRY(sp_replay_need_u64(c, o, "samples_requested", "options.samples_requested",
                         &ro->engine.samples));
  TRY(sp_replay_need_u64(c, o, "block", "options.block", &u));
  ro->engine.block = (size_t)u;
  TRY(sp_replay_need_u64(c, o, "replicates", "options.replicates", &u));
  ro->engine.replicates = (size_t)u;
  TRY(sp_replay_need_num(c, o, "coverage", "options.coverage", 0, &ro->engine.coverage));
  TRY(sp_replay_need_u64(c, o, "adaptive_digits", "options.adaptive_digits", &u));
  if (u > 64) return sp_replay_bad(c, "options.adaptive_digits", "must be at most 64");
  ro->engine.adaptive_digits = (unsigned)u;
  TRY(sp_replay_need_u64(c, o, "sobol_samples", "options.sobol_samples", &ro->sobol_samples));
  size_t npct = 0;
  TRY(num_array(c, o, "extra_percentiles", "options.extra_percentiles", 0, 0, &ar->pct, &npct));
  ro->engine.percentiles = ar->pct;
  ro->engine.npercentiles = npct;
  TRY(sp_replay_need_u64(c, o, "histogram_bins", "options.histogram_bins", &u));
  ro->engine.hist_bins = (size_t)u;
  TRY(sp_replay_need_u64(c, o, "max_samples", "options.max_samples", &ro->engine.max_samples));
  TRY(sp_replay_need_num(c, o, "limit_confidence", "options.limit_confidence", 0,
                         &ro->engine.limit_confidence));
  TRY(sp_replay_need_u64(c, o, "sobol_bootstrap", "options.sobol_bootstrap", &u));
  ro->engine.bootstrap = (size_t)u;
  TRY(sp_replay_need_num(c, o, "index_confidence", "options.index_confidence", 0,
                         &ro->engine.index_confidence));
  TRY(num_array(c, o, "histogram_range", "options.histogram_range", 1, 1, &ar->hr, &ar->nhr));
  ro->engine.hist_range = ar->hr;
  TRY(num_array(c, o, "tolerances", "options.tolerances", 1, 0, &ar->tol, &ar->ntol));
  ro->engine.tolerance = ar->tol;
  return SP_OK;
}

/* Checks the model, the fit records and their data into rep. */
static sp_status check_inputs(const sp_replay_ctx *c, const char *path, const json_t *root,
                              sp_replay_report *rep, char **model_path)
{
  json_t *model = NULL, *inputs = NULL;
  const char *mpath = NULL, *msha = NULL, *mtext = NULL;
  TRY(sp_replay_need_obj(c, root, "model", "model", &model));
  TRY(sp_replay_need_str(c, model, "path", "model.path", 0, &mpath));
  TRY(sp_replay_need_sha(c, model, "sha256", "model.sha256", &msha));
  TRY(sp_replay_need_str(c, model, "text", "model.text", 0, &mtext));
  TRY(sp_replay_need_arr(c, root, "inputs", "inputs", &inputs));
  /* The model text the record carries must be the one it names by hash. */
  char tsha[SP_SHA256_HEX_LEN];
  size_t tlen = json_string_length(json_object_get(model, "text"));
  sp_sha256_buffer(mtext, tlen, tsha);
  if (strcmp(tsha, msha) != 0) {
    TRY(sp_replay_add_input(rep, "model text inside the record", path, msha, tlen, c->err));
    sp_replay_input *in = &rep->inputs[rep->ninputs - 1];
    /* The record file itself was hashed: state the text's hash instead. */
    memcpy(in->actual_sha256, tsha, sizeof tsha);
    in->actual_size = tlen;
    if (in->status == SP_REPLAY_INPUT_OK) rep->nbad++;
    in->status = SP_REPLAY_INPUT_CHANGED;
  }
  int exists = 0;
  *model_path = sp_replay_locate(path, root, mpath, &exists);
  if (!*model_path) return sp_fail(c->err, SP_ENOMEM, "out of memory");
  TRY(sp_replay_add_input(rep, "model", *model_path, msha, tlen, c->err));
  sp_replay_note_tried(rep, path, root, mpath);
  char *mdir = sp_replay_dir_of(*model_path);
  if (!mdir) return sp_fail(c->err, SP_ENOMEM, "out of memory");
  sp_status s = SP_OK;
  for (size_t i = 0; i < json_array_size(inputs) && s == SP_OK; i++) {
    json_t *in = json_array_get(inputs, i), *fr = NULL;
    char p[128];
    snprintf(p, sizeof p, "inputs[%zu]", i);
    if (!json_is_object(in)) {
      s = sp_replay_bad(c, p, "must be an object");
      break;
    }
    const char *name = NULL, *source = NULL, *fpath = NULL, *fsha = NULL;
    uint64_t fsize = 0;
    char pp[160];
    snprintf(pp, sizeof pp, "%s.name", p);
    s = sp_replay_need_str(c, in, "name", pp, 0, &name);
    snprintf(pp, sizeof pp, "%s.source", p);
    if (s == SP_OK) s = sp_replay_need_str(c, in, "source", pp, 0, &source);
    if (s != SP_OK) break;
    if (strcmp(source, "fit") != 0) {
      if (strcmp(source, "model") != 0) s = sp_replay_bad(c, pp, "must be \"fit\" or \"model\"");
      continue;
    }
    snprintf(pp, sizeof pp, "%s.fit_record", p);
    s = sp_replay_need_obj(c, in, "fit_record", pp, &fr);
    snprintf(pp, sizeof pp, "%s.fit_record.path", p);
    if (s == SP_OK) s = sp_replay_need_str(c, fr, "path", pp, 0, &fpath);
    snprintf(pp, sizeof pp, "%s.fit_record.sha256", p);
    if (s == SP_OK) s = sp_replay_need_sha(c, fr, "sha256", pp, &fsha);
    snprintf(pp, sizeof pp, "%s.fit_record.size", p);
    if (s == SP_OK) s = sp_replay_need_u64(c, fr, "size", pp, &fsize);
    if (s != SP_OK) break;
    /* Resolved as the model resolves it: against the model's folder. */
    char *fp = sp_replay_join(mdir, fpath);
    if (!fp) {
      s = sp_fail(c->err, SP_ENOMEM, "out of memory");
      break;
    }
    char role[256];
    snprintf(role, sizeof role, "fit record of input %.100s", name);
    s = sp_replay_add_input(rep, role, fp, fsha, fsize, c->err);
    if (s == SP_OK && rep->inputs[rep->ninputs - 1].status == SP_REPLAY_INPUT_OK) {
      json_t *froot = sp_replay_load_json(fp, c->err);
      if (!froot) {
        s = c->err ? c->err->code : SP_EDATA;
      } else {
        snprintf(role, sizeof role, "data of fit record %.200s", fp);
        s = sp_replay_check_fit_data(fp, froot, role, rep, c->err);
        json_decref(froot);
      }
    }
    free(fp);
  }
  free(mdir);
  return s;
}

sp_status sp_replay_run_record(const char *path, json_t *root, const sp_replay_options *opt,
                               sp_replay_report *rep, sp_error *err)
{
  sp_replay_ctx c = {"run", path, err};
  sp_run_options ro;
  sp_run_options_init(&ro);
  run_arrays ar = {NULL, NULL, NULL, 0, 0};
  char *model_path = NULL;
  sp_run *run = NULL;
  char *text = NULL;
  json_t *fresh = NULL;
  sp_status s = run_options(&c, root, &ro, &ar);
  ro.engine.threads = opt->threads;
  if (s == SP_OK) s = check_inputs(&c, path, root, rep, &model_path);
  if (s == SP_OK && rep->nbad > 0) s = sp_replay_inputs_failed(path, rep, err);
  if (s == SP_OK) {
    sp_model_diags d;
    sp_model_diags_init(&d);
    s = sp_run_open(model_path, &run, &d, err);
    sp_model_diags_clear(&d);
  }
  if (s == SP_OK) {
    size_t nout = sp_model_output_count(sp_run_model(run));
    if (ar.hr && ar.nhr != 2 * nout)
      s = sp_replay_bad(&c, "options.histogram_range", "must hold 2 x %zu numbers", nout);
    else if (ar.tol && ar.ntol != nout)
      s = sp_replay_bad(&c, "options.tolerances", "must hold %zu numbers", nout);
  }
  if (s == SP_OK) {
    s = sp_run_execute(run, &ro, err);
    if (s == SP_EUSAGE) {
      char msg[SP_ERROR_MSG_MAX];
      snprintf(msg, sizeof msg, "%s", err ? err->msg : "");
      s = sp_fail(err, SP_EDATA, "run record %s: its options are refused: %s", path, msg);
    }
  }
  if (s == SP_OK) {
    text = sp_run_record_json(run, &ro, 0, NULL, (int64_t)time(NULL), err);
    if (!text) s = err ? err->code : SP_ENOMEM;
  }
  if (s == SP_OK) {
    json_error_t je;
    fresh = json_loads(text, 0, &je);
    if (!fresh) s = sp_fail(err, SP_ENOMEM, "replay: cannot read back the new run record");
  }
  if (s == SP_OK) s = sp_replay_compare_trees(root, fresh, SP_REPLAY_RUN, rep->tolerance, rep, err);
  if (s == SP_OK) s = sp_replay_refuse_malformed("run", path, rep, err);
  if (s == SP_OK && rep->ndiffs_total > 0) s = SP_EDIFFERS;
  json_decref(fresh);
  free(text);
  sp_run_free(run);
  free(model_path);
  free(ar.pct);
  free(ar.hr);
  free(ar.tol);
  return s;
}
