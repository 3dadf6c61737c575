/* scatterprop record: fit records in JSON (jansson), written in a fixed key
 * order and read back with validation that names the offending field.
 * The schema is documented in docs/fit-record.md. */
#include "scatterprop/record.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <jansson.h>

#include "build_info.h"
#include "provenance_internal.h"

void sp_record_time_utc(int64_t t, char buf[SP_RECORD_TIME_LEN])
{
  time_t tt = (time_t)t;
  struct tm tm;
  if (!gmtime_r(&tt, &tm)) {
    snprintf(buf, SP_RECORD_TIME_LEN, "1970-01-01T00:00:00Z");
    return;
  }
  strftime(buf, SP_RECORD_TIME_LEN, "%Y-%m-%dT%H:%M:%SZ", &tm);
}

/* ---- writing ----------------------------------------------------------- */

#include "json_build.h"
#include "json_locate.h"

static json_t *params_obj(wctx *w, const sp_family *f, const double *v)
{
  json_t *o = obj(w);
  for (size_t p = 0; p < f->nparam; p++) set(w, o, f->param_names[p], num(w, v[p]));
  return o;
}

static json_t *fixed_arr(wctx *w, const sp_fit_candidate *c)
{
  json_t *a = arr(w);
  for (size_t p = 0; p < c->nparam; p++)
    if (c->fixed[p]) push(w, a, str(w, c->family->param_names[p]));
  return a;
}

static json_t *cov_obj(wctx *w, const sp_fit_candidate *c)
{
  if (!c->cov_available) return json_null();
  json_t *o = obj(w), *names = arr(w), *m = arr(w);
  for (size_t p = 0; p < c->nparam; p++) {
    if (c->fixed[p]) continue;
    push(w, names, str(w, c->family->param_names[p]));
    json_t *row = arr(w);
    for (size_t q = 0; q < c->nparam; q++)
      if (!c->fixed[q]) push(w, row, num(w, c->cov[p][q]));
    push(w, m, row);
  }
  set(w, o, "params", names);
  set(w, o, "matrix", m);
  return o;
}

static const char *const gof_keys[SP_FIT_NGOF] = {"A2", "D", "W2"};

static json_t *candidate_obj(wctx *w, const sp_fit_candidate *c)
{
  json_t *o = obj(w);
  const sp_family *f = c->family;
  int ok = c->status == SP_FIT_OK;
  set(w, o, "family", str(w, f->name));
  set(w, o, "status", str(w, sp_fit_status_name(c->status)));
  set(w, o, "reason", c->reason[0] ? str(w, c->reason) : json_null());
  set(w, o, "method", ok ? str(w, sp_fit_method_name(c->method)) : json_null());
  set(w, o, "converged", json_boolean(ok && c->converged));
  set(w, o, "params", ok ? params_obj(w, f, c->theta) : json_null());
  set(w, o, "fixed", fixed_arr(w, c));
  if (ok) {
    json_t *se = obj(w), *ci = obj(w);
    for (size_t p = 0; p < f->nparam; p++) {
      set(w, se, f->param_names[p], num(w, c->se[p]));
      if (c->ci_scale[p] == SP_FIT_CI_NONE) {
        set(w, ci, f->param_names[p], json_null());
        continue;
      }
      json_t *iv = obj(w);
      set(w, iv, "lower", num(w, c->ci_lo[p]));
      set(w, iv, "upper", num(w, c->ci_hi[p]));
      set(w, iv, "scale", str(w, c->ci_scale[p] == SP_FIT_CI_LOG ? "log" : "linear"));
      set(w, ci, f->param_names[p], iv);
    }
    set(w, o, "se", se);
    set(w, o, "ci95", ci);
    set(w, o, "covariance", cov_obj(w, c));
    set(w, o, "covariance_note", str(w, c->cov_note));
  } else {
    set(w, o, "se", json_null());
    set(w, o, "ci95", json_null());
    set(w, o, "covariance", json_null());
    set(w, o, "covariance_note", json_null());
  }
  set(w, o, "n", integer(w, (long long)c->n));
  set(w, o, "k", integer(w, (long long)c->k));
  set(w, o, "loglik", ok ? num(w, c->loglik) : json_null());
  set(w, o, "aic", ok ? num(w, c->aic) : json_null());
  set(w, o, "aicc", ok ? num(w, c->aicc) : json_null());
  set(w, o, "bic", ok ? num(w, c->bic) : json_null());
  if (ok) {
    json_t *g = obj(w);
    for (int j = 0; j < SP_FIT_NGOF; j++) {
      json_t *s = obj(w);
      set(w, s, "stat", num(w, c->gof[j].stat));
      set(w, s, "p", num(w, c->gof[j].p));
      set(w, s, "bound", c->gof[j].bound < 0   ? str(w, "below")
                         : c->gof[j].bound > 0 ? str(w, "above")
                                               : json_null());
      set(w, s, "method", c->gof[j].method[0] ? str(w, c->gof[j].method) : json_null());
      set(w, g, gof_keys[j], s);
    }
    set(w, g, "bootstrap_failed", integer(w, (long long)c->bootstrap_failed));
    set(w, o, "gof", g);
  } else {
    set(w, o, "gof", json_null());
  }
  set(w, o, "rejected", json_boolean(c->rejected));
  set(w, o, "judged_by", ok && c->judged_by >= 0 ? str(w, gof_keys[c->judged_by]) : json_null());
  set(w, o, "rank", c->rank ? integer(w, (long long)c->rank) : json_null());
  return o;
}

static json_t *seed_json(wctx *w, uint64_t seed)
{
  if (seed <= (uint64_t)INT64_MAX) return integer(w, (long long)seed);
  char buf[24];
  snprintf(buf, sizeof buf, "%llu", (unsigned long long)seed);
  return str(w, buf);
}

static json_t *options_obj(wctx *w, const sp_fit_result *r)
{
  const sp_fit_options *o = &r->opt;
  json_t *j = obj(w), *fams = arr(w), *fixed = obj(w), *boot = obj(w);
  for (size_t i = 0; i < r->ncand; i++) push(w, fams, str(w, r->cand[i].family->name));
  for (size_t i = 0; i < o->nfixed; i++) set(w, fixed, o->fixed[i].name, num(w, o->fixed[i].value));
  set(w, j, "families", fams);
  set(w, j, "fixed", fixed);
  set(w, j, "select", str(w, sp_fit_select_name(o->select)));
  set(w, j, "force_family", str(w, o->force_family));
  set(w, j, "alpha", num(w, o->alpha));
  set(w, j, "pvalue_method", str(w, sp_fit_pvalue_mode_name(o->pvalue)));
  set(w, boot, "B", integer(w, (long long)o->bootstrap_B));
  set(w, boot, "seed", seed_json(w, o->seed));
  set(w, boot, "generator", str(w, sp_provenance_generator()));
  set(w, boot, "stream_rule",
      str(w, "replicate b of candidate i: the block stream (seed, b, i) of the rule below"));
  set(w, boot, "rule", str(w, sp_provenance_stream_rule()));
  set(w, j, "bootstrap", boot);
  set(w, j, "threads", integer(w, sp_provenance_threads(o->threads)));
  return j;
}

static json_t *chosen_obj(wctx *w, const sp_fit_result *r)
{
  if (r->chosen < 0) return json_null();
  const sp_fit_candidate *c = &r->cand[r->chosen];
  json_t *o = obj(w);
  set(w, o, "family", str(w, c->family->name));
  set(w, o, "params", params_obj(w, c->family, c->theta));
  set(w, o, "fixed", fixed_arr(w, c));
  set(w, o, "covariance", cov_obj(w, c));
  set(w, o, "covariance_note", str(w, c->cov_note));
  return o;
}

/* The body shared by a whole-column fit and each lot: n, chosen,
 * candidates, reason. */
static void fit_body(wctx *w, json_t *o, const sp_fit_result *r)
{
  set(w, o, "chosen", chosen_obj(w, r));
  set(w, o, "choice_reason", str(w, r->reason));
  json_t *cands = arr(w);
  for (size_t i = 0; i < r->ncand; i++) push(w, cands, candidate_obj(w, &r->cand[i]));
  set(w, o, "candidates", cands);
}

static json_t *record_root(wctx *w, const sp_fit_result *r, const sp_record_fit_source *s,
                           size_t nmissing, int argc, char *const *argv)
{
  json_t *root = obj(w), *tool = obj(w), *data = obj(w), *meta = arr(w);
  char when[SP_RECORD_TIME_LEN];
  sp_record_time_utc(s->created, when);
  set(w, root, "format", str(w, SP_RECORD_FIT_FORMAT));
  set(w, root, "version", integer(w, SP_RECORD_FIT_VERSION));
  set(w, tool, "name", str(w, "scatterprop"));
  set(w, tool, "version", str(w, sp_version()));
  set(w, tool, "git", str(w, sp_git_revision()));
  set(w, tool, "compiler", str(w, sp_build_compiler()));
  set(w, tool, "gsl", str(w, sp_build_gsl_version()));
  set(w, tool, "system", str(w, SP_BUILD_SYSTEM));
  set(w, root, "tool", tool);
  set(w, root, "created_utc", str(w, when));
  json_t *cmd = arr(w);
  for (int i = 0; argv && i < argc; i++) push(w, cmd, sp_provenance_text(w, argv[i]));
  set(w, root, "command", cmd);
  set(w, data, "path", str(w, s->path ? s->path : ""));
  set(w, data, "size", integer(w, (long long)s->size));
  set(w, data, "sha256", str(w, s->sha256 ? s->sha256 : ""));
  for (size_t i = 0; i < s->nmeta; i++) {
    json_t *m = obj(w);
    set(w, m, "line", integer(w, s->meta[i].line));
    set(w, m, "key", str(w, s->meta[i].key));
    set(w, m, "value", str(w, s->meta[i].value));
    push(w, meta, m);
  }
  set(w, data, "metadata", meta);
  set(w, data, "column", str(w, s->column ? s->column : ""));
  set(w, data, "unit", str(w, s->unit));
  set(w, data, "n", integer(w, (long long)r->n));
  set(w, data, "missing", integer(w, (long long)nmissing));
  set(w, root, "data", data);
  set(w, root, "options", options_obj(w, r));
  fit_body(w, root, r);
  return root;
}

/* The provenance object closes every fit record (after "by"). */
static void add_provenance(wctx *w, json_t *root)
{
  set(w, root, "provenance", sp_provenance_json_object(w));
}

static sp_status dump(wctx *w, json_t *root, char **out, sp_error *err)
{
  *out = NULL;
  if (!w->bad) *out = json_dumps(root, REC_DUMP_FLAGS);
  json_decref(root);
  if (!*out)
    return sp_fail(err, SP_ENOMEM, "fit record: could not build the JSON text (out of "
                   "memory, or text that is not valid UTF-8)");
  return SP_OK;
}

sp_status sp_record_fit_dumps(const sp_fit_result *r, const sp_record_fit_source *src,
                              char **out, sp_error *err)
{
  return sp_record_fit_dumps_cmd(r, src, 0, NULL, out, err);
}

sp_status sp_record_fit_dumps_cmd(const sp_fit_result *r, const sp_record_fit_source *src,
                                  int argc, char *const *argv, char **out, sp_error *err)
{
  if (r->ncand == 0) return sp_fail(err, SP_EUSAGE, "fit record: the fit has no candidates");
  wctx w = {0};
  json_t *root = record_root(&w, r, src, src->nmissing, argc, argv);
  set(&w, root, "by", json_null());
  add_provenance(&w, root);
  return dump(&w, root, out, err);
}

sp_status sp_record_fit_grouped_dumps(const sp_fit_grouped *g,
                                      const sp_record_fit_source *src, char **out,
                                      sp_error *err)
{
  return sp_record_fit_grouped_dumps_cmd(g, src, 0, NULL, out, err);
}

sp_status sp_record_fit_grouped_dumps_cmd(const sp_fit_grouped *g,
                                          const sp_record_fit_source *src, int argc,
                                          char *const *argv, char **out, sp_error *err)
{
  if (g->pooled.ncand == 0)
    return sp_fail(err, SP_EUSAGE, "fit record: the fit has no candidates");
  wctx w = {0};
  json_t *root = record_root(&w, &g->pooled, src, g->pooled_missing, argc, argv);
  json_t *by = obj(&w), *lots = arr(&w);
  set(&w, by, "column", str(&w, src->group_column ? src->group_column : ""));
  for (size_t i = 0; i < g->ngroups; i++) {
    const sp_fit_group *G = &g->groups[i];
    json_t *o = obj(&w);
    set(&w, o, "value", str(&w, G->label));
    set(&w, o, "n", integer(&w, (long long)G->fit.n));
    set(&w, o, "missing", integer(&w, (long long)G->nmissing));
    set(&w, o, "status", str(&w, G->status == SP_OK ? "ok" : "failed"));
    set(&w, o, "message", G->message[0] ? str(&w, G->message) : json_null());
    if (G->status == SP_OK) {
      fit_body(&w, o, &G->fit);
    } else {
      set(&w, o, "chosen", json_null());
      set(&w, o, "choice_reason", json_null());
      set(&w, o, "candidates", arr(&w));
    }
    push(&w, lots, o);
  }
  set(&w, by, "groups", lots);
  set(&w, root, "by", by);
  add_provenance(&w, root);
  return dump(&w, root, out, err);
}

sp_status sp_record_write_text(const char *path, const char *text, int overwrite,
                               sp_error *err)
{
  return sp_file_write_atomic(path, text, strlen(text), overwrite, err);
}

/* ---- reading ----------------------------------------------------------- */

typedef struct {
  const char *name;
  const char *text; /* the record's text, where a bad field is looked up */
  size_t len;
  sp_error *err;
} rctx;

/* A message about field `field` of the record, at the field's value (or,
 * for a missing field, at the object that lacks it) when it is found. */
static sp_status bad_at(rctx *r, const char *field, const char *what)
{
  long line = 0, col = 0;
  if (field && sp_json_locate(r->text, r->len, field, &line, &col))
    return sp_fail_at(r->err, SP_EDATA, r->name, line, col, "fit record: field '%s' %s", field,
                      what);
  return sp_fail(r->err, SP_EDATA, "fit record %s: field '%s' %s", r->name, field, what);
}

static sp_status bad(rctx *r, const char *field, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
static sp_status bad(rctx *r, const char *field, const char *fmt, ...)
{
  char what[512];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(what, sizeof what, fmt, ap);
  va_end(ap);
  return bad_at(r, field, what);
}

/* Field lookup with its dotted path for messages. */
static json_t *field(const json_t *o, const char *key)
{
  return json_object_get(o, key);
}

static sp_status need_obj(rctx *r, const json_t *o, const char *key, const char *path,
                          json_t **out)
{
  json_t *v = field(o, key);
  if (!v) return bad(r, path, "is missing");
  if (!json_is_object(v)) return bad(r, path, "must be an object");
  *out = v;
  return SP_OK;
}

static sp_status need_str(rctx *r, const json_t *o, const char *key, const char *path,
                          int nullable, const char **out)
{
  json_t *v = field(o, key);
  if (!v) return bad(r, path, "is missing");
  if (nullable && json_is_null(v)) {
    *out = NULL;
    return SP_OK;
  }
  if (!json_is_string(v))
    return bad(r, path, nullable ? "must be a string or null" : "must be a string");
  *out = json_string_value(v);
  return SP_OK;
}

static sp_status need_num(rctx *r, const json_t *o, const char *key, const char *path,
                          int nullable, double *out)
{
  json_t *v = field(o, key);
  if (!v) return bad(r, path, "is missing");
  if (nullable && json_is_null(v)) {
    *out = NAN;
    return SP_OK;
  }
  if (!json_is_number(v))
    return bad(r, path, nullable ? "must be a number or null" : "must be a number");
  *out = json_number_value(v);
  return SP_OK;
}

static sp_status need_count(rctx *r, const json_t *o, const char *key, const char *path,
                            long long min, long long *out)
{
  json_t *v = field(o, key);
  if (!v) return bad(r, path, "is missing");
  if (!json_is_integer(v)) return bad(r, path, "must be an integer");
  long long x = (long long)json_integer_value(v);
  if (x < min) return bad(r, path, "must be at least %lld, got %lld", min, x);
  *out = x;
  return SP_OK;
}

static sp_status need_bool(rctx *r, const json_t *o, const char *key, const char *path)
{
  json_t *v = field(o, key);
  if (!v) return bad(r, path, "is missing");
  if (!json_is_boolean(v)) return bad(r, path, "must be true or false");
  return SP_OK;
}

static sp_status need_arr(rctx *r, const json_t *o, const char *key, const char *path,
                          json_t **out)
{
  json_t *v = field(o, key);
  if (!v) return bad(r, path, "is missing");
  if (!json_is_array(v)) return bad(r, path, "must be an array");
  *out = v;
  return SP_OK;
}

#define TRY(x)                                                                 \
  do {                                                                         \
    sp_status s_ = (x);                                                        \
    if (s_ != SP_OK) return s_;                                                \
  } while (0)

static int one_of(const char *s, const char *const *words, size_t n)
{
  for (size_t i = 0; i < n; i++)
    if (strcmp(s, words[i]) == 0) return 1;
  return 0;
}

static sp_status check_family(rctx *r, const json_t *o, const char *path,
                              const sp_family **out)
{
  char p[512];
  const char *name = NULL;
  snprintf(p, sizeof p, "%.200s.family", path);
  TRY(need_str(r, o, "family", p, 0, &name));
  *out = sp_family_find(name);
  if (!*out) return bad(r, p, "names an unknown family '%s'", name);
  return SP_OK;
}

/* params: an object with a number (or null when nullable) for each of the
 * family's parameters and no others. */
static sp_status check_params(rctx *r, const json_t *o, const char *key, const char *path,
                              const sp_family *f, int nullable, double *out)
{
  char p[512];
  json_t *v = NULL;
  snprintf(p, sizeof p, "%.200s.%s", path, key);
  TRY(need_obj(r, o, key, p, &v));
  for (size_t q = 0; q < f->nparam; q++) {
    char pp[512];
    snprintf(pp, sizeof pp, "%.200s.%s", p, f->param_names[q]);
    double x;
    TRY(need_num(r, v, f->param_names[q], pp, nullable, &x));
    if (out) out[q] = x;
  }
  const char *k;
  json_t *val;
  json_object_foreach(v, k, val) {
    (void)val;
    if (sp_family_param_index(f, k) < 0) {
      char pp[512];
      snprintf(pp, sizeof pp, "%.200s.%s", p, k);
      return bad(r, pp, "is not a parameter of %s", f->name);
    }
  }
  return SP_OK;
}

static sp_status check_fixed(rctx *r, const json_t *o, const char *path, const sp_family *f,
                             int *fixed)
{
  char p[512];
  json_t *a = NULL;
  snprintf(p, sizeof p, "%.200s.fixed", path);
  TRY(need_arr(r, o, "fixed", p, &a));
  size_t i;
  json_t *v;
  json_array_foreach(a, i, v) {
    char pp[512];
    snprintf(pp, sizeof pp, "%.200s[%zu]", p, i);
    if (!json_is_string(v)) return bad(r, pp, "must be a string");
    int q = sp_family_param_index(f, json_string_value(v));
    if (q < 0) return bad(r, pp, "is not a parameter of %s", f->name);
    if (fixed) fixed[q] = 1;
  }
  return SP_OK;
}

static sp_status check_cov(rctx *r, const json_t *o, const char *path, const sp_family *f,
                           const int *fixed, int *avail,
                           double cov[SP_FAMILY_MAX_PARAMS][SP_FAMILY_MAX_PARAMS])
{
  char p[512];
  snprintf(p, sizeof p, "%.200s.covariance", path);
  json_t *c = field(o, "covariance");
  if (!c) return bad(r, p, "is missing");
  *avail = 0;
  if (json_is_null(c)) return SP_OK;
  if (!json_is_object(c)) return bad(r, p, "must be an object or null");
  char pn[512], pm[512];
  snprintf(pn, sizeof pn, "%.200s.params", p);
  snprintf(pm, sizeof pm, "%.200s.matrix", p);
  json_t *names = NULL, *m = NULL;
  TRY(need_arr(r, c, "params", pn, &names));
  TRY(need_arr(r, c, "matrix", pm, &m));
  size_t k = json_array_size(names);
  size_t free_count = 0;
  for (size_t q = 0; q < f->nparam; q++) free_count += !fixed[q];
  if (k != free_count)
    return bad(r, pn, "must list the %zu free parameters, got %zu", free_count, k);
  int idx[SP_FAMILY_MAX_PARAMS];
  for (size_t i = 0; i < k; i++) {
    json_t *v = json_array_get(names, i);
    char pp[512];
    snprintf(pp, sizeof pp, "%.200s[%zu]", pn, i);
    if (!json_is_string(v)) return bad(r, pp, "must be a string");
    idx[i] = sp_family_param_index(f, json_string_value(v));
    if (idx[i] < 0 || fixed[idx[i]])
      return bad(r, pp, "is not a free parameter of %s", f->name);
  }
  if (json_array_size(m) != k) return bad(r, pm, "must have %zu rows", k);
  for (size_t i = 0; i < k; i++) {
    json_t *row = json_array_get(m, i);
    char pr[512];
    snprintf(pr, sizeof pr, "%.200s[%zu]", pm, i);
    if (!json_is_array(row) || json_array_size(row) != k)
      return bad(r, pr, "must be an array of %zu numbers", k);
    for (size_t j = 0; j < k; j++) {
      json_t *v = json_array_get(row, j);
      if (!json_is_number(v)) {
        char pe[512];
        snprintf(pe, sizeof pe, "%.200s[%zu]", pr, j);
        return bad(r, pe, "must be a number");
      }
      cov[idx[i]][idx[j]] = json_number_value(v);
    }
  }
  for (size_t i = 0; i < k; i++)
    for (size_t j = 0; j < i; j++)
      if (cov[idx[i]][idx[j]] != cov[idx[j]][idx[i]]) {
        char pe[512];
        snprintf(pe, sizeof pe, "%.200s[%zu][%zu]", pm, i, j);
        return bad(r, pe, "must equal its transpose entry (the matrix is symmetric)");
      }
  for (size_t i = 0; i < k; i++)
    if (!(cov[idx[i]][idx[i]] > 0)) {
      char pe[512];
      snprintf(pe, sizeof pe, "%.200s[%zu][%zu]", pm, i, i);
      return bad(r, pe, "must be a positive variance");
    }
  *avail = 1;
  return SP_OK;
}

static sp_status check_candidate(rctx *r, const json_t *c, const char *path)
{
  if (!json_is_object(c)) return bad(r, path, "must be an object");
  const sp_family *f;
  TRY(check_family(r, c, path, &f));
  char p[512];
  const char *status = NULL, *s = NULL;
  static const char *const statuses[] = {"ok", "skipped", "failed"};
  snprintf(p, sizeof p, "%.200s.status", path);
  TRY(need_str(r, c, "status", p, 0, &status));
  if (!one_of(status, statuses, 3)) return bad(r, p, "must be ok, skipped or failed");
  int ok = strcmp(status, "ok") == 0;
  snprintf(p, sizeof p, "%.200s.reason", path);
  TRY(need_str(r, c, "reason", p, 1, &s));
  snprintf(p, sizeof p, "%.200s.method", path);
  TRY(need_str(r, c, "method", p, !ok, &s));
  if (ok) {
    static const char *const methods[] = {"fixed", "ML-family", "ML-simplex", "ML-profile",
                                          "MPS"};
    if (!one_of(s, methods, 5))
      return bad(r, p, "must be one of fixed, ML-family, ML-simplex, ML-profile, MPS");
  }
  snprintf(p, sizeof p, "%.200s.converged", path);
  TRY(need_bool(r, c, "converged", p));
  int fixed[SP_FAMILY_MAX_PARAMS] = {0};
  TRY(check_fixed(r, c, path, f, fixed));
  long long k;
  snprintf(p, sizeof p, "%.200s.n", path);
  TRY(need_count(r, c, "n", p, 0, &k));
  snprintf(p, sizeof p, "%.200s.k", path);
  TRY(need_count(r, c, "k", p, 0, &k));
  static const char *const crit[] = {"loglik", "aic", "aicc", "bic"};
  for (int i = 0; i < 4; i++) {
    double v;
    snprintf(p, sizeof p, "%.200s.%s", path, crit[i]);
    TRY(need_num(r, c, crit[i], p, 1, &v));
  }
  snprintf(p, sizeof p, "%.200s.rejected", path);
  TRY(need_bool(r, c, "rejected", p));
  snprintf(p, sizeof p, "%.200s.judged_by", path);
  TRY(need_str(r, c, "judged_by", p, 1, &s));
  if (s && !one_of(s, gof_keys, SP_FIT_NGOF)) return bad(r, p, "must be A2, W2, D or null");
  if (!ok) return SP_OK;
  double theta[SP_FAMILY_MAX_PARAMS];
  TRY(check_params(r, c, "params", path, f, 0, theta));
  TRY(check_params(r, c, "se", path, f, 1, NULL));
  int avail;
  double cov[SP_FAMILY_MAX_PARAMS][SP_FAMILY_MAX_PARAMS];
  TRY(check_cov(r, c, path, f, fixed, &avail, cov));
  json_t *g = NULL;
  snprintf(p, sizeof p, "%.200s.gof", path);
  TRY(need_obj(r, c, "gof", p, &g));
  for (int j = 0; j < SP_FIT_NGOF; j++) {
    json_t *st = NULL;
    char pg[512], pp[512];
    snprintf(pg, sizeof pg, "%.200s.gof.%s", path, gof_keys[j]);
    TRY(need_obj(r, g, gof_keys[j], pg, &st));
    double v;
    snprintf(pp, sizeof pp, "%.200s.stat", pg);
    TRY(need_num(r, st, "stat", pp, 1, &v));
    snprintf(pp, sizeof pp, "%.200s.p", pg);
    TRY(need_num(r, st, "p", pp, 1, &v));
    if (isfinite(v) && !(v >= 0 && v <= 1)) return bad(r, pp, "must be in [0, 1]");
    snprintf(pp, sizeof pp, "%.200s.bound", pg);
    TRY(need_str(r, st, "bound", pp, 1, &s));
    static const char *const bounds[] = {"below", "above"};
    if (s && !one_of(s, bounds, 2)) return bad(r, pp, "must be below, above or null");
    snprintf(pp, sizeof pp, "%.200s.method", pg);
    TRY(need_str(r, st, "method", pp, 1, &s));
    if (isfinite(v) && !s) return bad(r, pp, "must name the method of a given p-value");
  }
  return SP_OK;
}

static char *dup_or_null(const char *s, int *oom)
{
  if (!s) return NULL;
  size_t n = strlen(s) + 1;
  char *d = malloc(n);
  if (!d) {
    *oom = 1;
    return NULL;
  }
  memcpy(d, s, n);
  return d;
}

void sp_record_fit_clear(sp_record_fit *r)
{
  if (!r) return;
  free(r->unit);
  free(r->column);
  free(r->data_path);
  free(r->reason);
  memset(r, 0, sizeof *r);
}

static sp_status validate(rctx *r, const json_t *root, sp_record_fit *out)
{
  if (!json_is_object(root)) {
    long line = 1, col = 1;
    sp_json_locate(r->text, r->len, "", &line, &col);
    return sp_fail_at(r->err, SP_EDATA, r->name, line, col,
                      "fit record: the top level must be a JSON object");
  }
  const char *s = NULL;
  TRY(need_str(r, root, "format", "format", 0, &s));
  /* set when the reader above returned SP_OK (not followed by the analyzer):
   * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
  if (strcmp(s, SP_RECORD_FIT_FORMAT) != 0)
    return bad(r, "format", "must be \"%s\", got \"%s\"", SP_RECORD_FIT_FORMAT, s);
  long long v;
  TRY(need_count(r, root, "version", "version", 0, &v));
  /* set when the reader above returned SP_OK (not followed):
   * NOLINTNEXTLINE(clang-analyzer-core.UndefinedBinaryOperatorResult) */
  if (v != SP_RECORD_FIT_VERSION)
    return bad(r, "version", "is %lld; this build reads version %d", v,
               SP_RECORD_FIT_VERSION);
  json_t *tool = NULL, *data = NULL, *opt = NULL, *cands = NULL;
  TRY(need_obj(r, root, "tool", "tool", &tool));
  TRY(need_str(r, tool, "name", "tool.name", 0, &s));
  TRY(need_str(r, tool, "version", "tool.version", 0, &s));
  TRY(need_str(r, tool, "git", "tool.git", 0, &s));
  TRY(need_str(r, root, "created_utc", "created_utc", 0, &s));

  TRY(need_obj(r, root, "data", "data", &data));
  const char *path = NULL, *sha = NULL, *column = NULL, *unit = NULL;
  TRY(need_str(r, data, "path", "data.path", 0, &path));
  TRY(need_count(r, data, "size", "data.size", 0, &v));
  TRY(need_str(r, data, "sha256", "data.sha256", 0, &sha));
  /* set when the reader above returned SP_OK (not followed by the analyzer):
   * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
  if (strlen(sha) != 64 || strspn(sha, "0123456789abcdef") != 64)
    return bad(r, "data.sha256", "must be 64 lower-case hexadecimal digits");
  json_t *meta = NULL;
  TRY(need_arr(r, data, "metadata", "data.metadata", &meta));
  size_t i;
  json_t *m;
  json_array_foreach(meta, i, m) {
    char p[512], pp[512];
    snprintf(p, sizeof p, "data.metadata[%zu]", i);
    if (!json_is_object(m)) return bad(r, p, "must be an object");
    snprintf(pp, sizeof pp, "%.200s.line", p);
    long long line;
    TRY(need_count(r, m, "line", pp, 0, &line));
    snprintf(pp, sizeof pp, "%.200s.key", p);
    TRY(need_str(r, m, "key", pp, 0, &s));
    snprintf(pp, sizeof pp, "%.200s.value", p);
    TRY(need_str(r, m, "value", pp, 0, &s));
  }
  TRY(need_str(r, data, "column", "data.column", 0, &column));
  TRY(need_str(r, data, "unit", "data.unit", 1, &unit));
  long long n, missing;
  TRY(need_count(r, data, "n", "data.n", 1, &n));
  TRY(need_count(r, data, "missing", "data.missing", 0, &missing));

  TRY(need_obj(r, root, "options", "options", &opt));
  json_t *fams = NULL, *fixed = NULL, *boot = NULL;
  TRY(need_arr(r, opt, "families", "options.families", &fams));
  json_array_foreach(fams, i, m) {
    char p[512];
    snprintf(p, sizeof p, "options.families[%zu]", i);
    if (!json_is_string(m)) return bad(r, p, "must be a string");
  }
  TRY(need_obj(r, opt, "fixed", "options.fixed", &fixed));
  const char *key;
  json_object_foreach(fixed, key, m) {
    char p[512];
    snprintf(p, sizeof p, "options.fixed.%.100s", key);
    if (!json_is_number(m)) return bad(r, p, "must be a number");
  }
  static const char *const sel[] = {"aicc", "aic", "bic", "loglik"};
  static const char *const pvm[] = {"auto", "bootstrap", "approximation", "none"};
  TRY(need_str(r, opt, "select", "options.select", 0, &s));
  if (!one_of(s, sel, 4)) return bad(r, "options.select", "must be aicc, aic, bic or loglik");
  TRY(need_str(r, opt, "force_family", "options.force_family", 1, &s));
  double alpha;
  TRY(need_num(r, opt, "alpha", "options.alpha", 0, &alpha));
  /* set when the reader above returned SP_OK (not followed):
   * NOLINTNEXTLINE(clang-analyzer-core.UndefinedBinaryOperatorResult) */
  if (!(alpha > 0 && alpha < 1)) return bad(r, "options.alpha", "must be in (0, 1)");
  TRY(need_str(r, opt, "pvalue_method", "options.pvalue_method", 0, &s));
  if (!one_of(s, pvm, 4))
    return bad(r, "options.pvalue_method", "must be auto, bootstrap, approximation or none");
  TRY(need_obj(r, opt, "bootstrap", "options.bootstrap", &boot));
  TRY(need_count(r, boot, "B", "options.bootstrap.B", 0, &v));
  json_t *seed = field(boot, "seed");
  if (!seed) return bad(r, "options.bootstrap.seed", "is missing");
  if (!(json_is_integer(seed) && json_integer_value(seed) >= 0) &&
      !(json_is_string(seed) && json_string_length(seed) > 0 &&
        strspn(json_string_value(seed), "0123456789") == json_string_length(seed)))
    return bad(r, "options.bootstrap.seed",
               "must be a non-negative integer (or its decimal digits as a string)");

  TRY(need_arr(r, root, "candidates", "candidates", &cands));
  if (json_array_size(cands) == 0) return bad(r, "candidates", "must not be empty");
  json_array_foreach(cands, i, m) {
    char p[512];
    snprintf(p, sizeof p, "candidates[%zu]", i);
    TRY(check_candidate(r, m, p));
  }

  const char *reason = NULL;
  TRY(need_str(r, root, "choice_reason", "choice_reason", 0, &reason));
  json_t *ch = field(root, "chosen");
  if (!ch) return bad(r, "chosen", "is missing");
  if (json_is_null(ch)) {
    long line = 0, col = 0;
    if (sp_json_locate(r->text, r->len, "chosen", &line, &col) == 1)
      return sp_fail_at(r->err, SP_EDATA, r->name, line, col,
                        "fit record: no family was chosen (%s)", reason);
    return sp_fail(r->err, SP_EDATA, "fit record %s: no family was chosen (%s)", r->name,
                   reason);
  }
  if (!json_is_object(ch)) return bad(r, "chosen", "must be an object or null");
  const sp_family *f;
  TRY(check_family(r, ch, "chosen", &f));
  memset(out, 0, sizeof *out);
  out->family = f;
  TRY(check_params(r, ch, "params", "chosen", f, 0, out->params));
  TRY(check_fixed(r, ch, "chosen", f, out->fixed));
  sp_error e;
  sp_error_clear(&e);
  if (f->check(out->params, &e) != SP_OK) return bad(r, "chosen.params", "are invalid: %s", e.msg);
  TRY(check_cov(r, ch, "chosen", f, out->fixed, &out->cov_available, out->cov));
  TRY(need_str(r, ch, "covariance_note", "chosen.covariance_note", 0, &s));

  json_t *by = field(root, "by");
  if (!by) return bad(r, "by", "is missing");
  if (!json_is_null(by) && !json_is_object(by)) return bad(r, "by", "must be an object or null");
  if (json_is_object(by)) {
    json_t *groups = NULL;
    TRY(need_str(r, by, "column", "by.column", 0, &s));
    TRY(need_arr(r, by, "groups", "by.groups", &groups));
    json_array_foreach(groups, i, m) {
      char p[512], pp[512];
      snprintf(p, sizeof p, "by.groups[%zu]", i);
      if (!json_is_object(m)) return bad(r, p, "must be an object");
      snprintf(pp, sizeof pp, "%.200s.value", p);
      TRY(need_str(r, m, "value", pp, 0, &s));
      json_t *gc = NULL;
      snprintf(pp, sizeof pp, "%.200s.candidates", p);
      TRY(need_arr(r, m, "candidates", pp, &gc));
      size_t j;
      json_t *c;
      json_array_foreach(gc, j, c) {
        char pc[512];
        snprintf(pc, sizeof pc, "%.200s.candidates[%zu]", p, j);
        TRY(check_candidate(r, c, pc));
      }
    }
  }

  int oom = 0;
  out->unit = dup_or_null(unit, &oom);
  out->column = dup_or_null(column, &oom);
  out->data_path = dup_or_null(path, &oom);
  out->reason = dup_or_null(reason, &oom);
  memcpy(out->sha256, sha, 65);
  out->n = (size_t)n;
  out->ncandidates = json_array_size(cands);
  if (oom) {
    sp_record_fit_clear(out);
    return sp_fail(r->err, SP_ENOMEM, "fit record %s: out of memory", r->name);
  }
  return SP_OK;
}

sp_status sp_record_fit_parse(const char *name, const char *text, size_t len,
                              sp_record_fit *out, sp_error *err)
{
  memset(out, 0, sizeof *out);
  json_error_t je;
  json_t *root = json_loadb(text, len, JSON_REJECT_DUPLICATES, &je);
  if (!root)
    return sp_fail_at(err, SP_EDATA, name, je.line, je.column,
                      "fit record is not valid JSON: %s", je.text);
  rctx r = {name, text, len, err};
  sp_status st = validate(&r, root, out);
  json_decref(root);
  if (st != SP_OK) sp_record_fit_clear(out);
  return st;
}

sp_status sp_record_fit_read(const char *path, sp_record_fit *out, sp_error *err)
{
  memset(out, 0, sizeof *out);
  /* Records are a few kilobytes; 256 MiB is far beyond any real one.  The
   * size is checked before a byte is read, and a pipe or device refused. */
  sp_error local;
  sp_error_clear(&local);
  FILE *fp = sp_file_open_input(path, "fit record", (uint64_t)256 << 20, err ? err : &local);
  if (!fp) return err ? err->code : local.code;
  size_t cap = 1 << 16, len = 0;
  char *buf = malloc(cap);
  if (!buf) {
    fclose(fp);
    return sp_fail(err, SP_ENOMEM, "fit record %s: out of memory", path);
  }
  for (;;) {
    if (len == cap) {
      /* Records are a few kilobytes; 256 MiB is far beyond any real one. */
      if (cap >= (size_t)256 << 20) {
        free(buf);
        fclose(fp);
        return sp_fail(err, SP_ELIMIT, "fit record %s: larger than 256 MiB", path);
      }
      char *nb = realloc(buf, cap * 2);
      if (!nb) {
        free(buf);
        fclose(fp);
        return sp_fail(err, SP_ENOMEM, "fit record %s: out of memory", path);
      }
      buf = nb;
      cap *= 2;
    }
    size_t got = fread(buf + len, 1, cap - len, fp);
    len += got;
    if (got == 0) break;
  }
  int rerr = ferror(fp);
  fclose(fp);
  if (rerr) {
    free(buf);
    return sp_fail(err, SP_EIO, "cannot read fit record %s", path);
  }
  sp_status st = sp_record_fit_parse(path, buf, len, out, err);
  free(buf);
  return st;
}
