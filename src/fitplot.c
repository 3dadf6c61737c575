/* scatterprop fitplot: the charts of a fit, drawn from a plan that is made
 * either from a fit result or from a fit record, over the values of the
 * data file's table.  See fitplot.h.
 *
 * The record's candidates and lots are read here with jansson (the record
 * module returns only the chosen family); sp_record_fit_read validates the
 * record first, and the few fields it does not check and this module uses
 * (a candidate's rank; a lot's n, status and chosen family) are checked
 * here with messages in the record module's style. */
#include "scatterprop/fitplot.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>

#include <jansson.h>

#include "json_locate.h"

/* ---- small helpers ----------------------------------------------------- */

/* Quoted messages in a note are cut at 290 bytes ("%.290s"), so the longest
 * prefix ("no family chosen: ", 18 bytes) and the text fit the note's
 * SP_FIT_TEXT_MAX (320) bytes. */

static char *dup_text(const char *s)
{
  if (!s) return NULL;
  size_t n = strlen(s) + 1;
  char *d = malloc(n);
  if (d) memcpy(d, s, n);
  return d;
}

/* Copies text for a message or a terminal line: control characters (which
 * could move a terminal's cursor or hide text) become '?'; a cut keeps
 * whole UTF-8 sequences. */
static void plain_copy(const char *s, char *buf, size_t n)
{
  size_t k = 0;
  const unsigned char *p = (const unsigned char *)(s ? s : "");
  while (*p && k + 1 < n) {
    size_t len = 1;
    if (*p >= 0xC0) {
      while (len < 4 && (p[len] & 0xC0u) == 0x80u) len++;
    }
    if (k + len >= n) break;
    for (size_t i = 0; i < len; i++) {
      unsigned char c = p[i];
      buf[k++] = (c < 0x20 || c == 0x7F) ? '?' : (char)c;
    }
    p += len;
  }
  buf[k] = '\0';
}

const char *sp_fitplot_kind_name(sp_fitplot_kind k)
{
  switch (k) {
  case SP_FITPLOT_HIST: return "histogram";
  case SP_FITPLOT_PROB: return "probability plot";
  case SP_FITPLOT_ECDF: return "empirical CDF";
  default: return "lots";
  }
}

/* ---- stems --------------------------------------------------------------- */

char *sp_fitplot_stem(const char *column, const char *lot, int pooled, const char *suffix,
                      char *buf, size_t n)
{
  char c[SP_FITPLOT_STEM_COLUMN + 1], l[SP_FITPLOT_STEM_LOT + 8], s[SP_PLOT_STEM_MAX + 1];
  sp_plot_stem(column, c, sizeof c);
  if (pooled) snprintf(l, sizeof l, "_pooled");
  else if (lot) {
    char t[SP_FITPLOT_STEM_LOT + 1];
    sp_plot_stem(lot, t, sizeof t);
    snprintf(l, sizeof l, "_lot_%s", t);
  } else {
    l[0] = '\0';
  }
  if (suffix && *suffix) sp_plot_stem(suffix, s, sizeof s);
  else s[0] = '\0';
  snprintf(buf, n, "fit_%s%s%s%s", c, l, s[0] ? "_" : "", s);
  return buf;
}

/* ---- picking the curves -------------------------------------------------- */

/* What the picker needs of a candidate, from a fit result or a record. */
typedef struct {
  const sp_family *family;
  const double *theta;
  int ok, rejected;
  size_t rank;
} cand_view;

static void add_curve(sp_fitplot_fit *f, const sp_family *fam, const double *theta,
                      size_t rank, int chosen)
{
  sp_fitplot_curve *c = &f->curves[f->ncurves++];
  memset(c, 0, sizeof *c);
  c->family = fam;
  for (size_t p = 0; p < fam->nparam && p < SP_FAMILY_MAX_PARAMS; p++) c->theta[p] = theta[p];
  c->rank = rank;
  c->chosen = chosen;
}

/* The chosen curve is given separately (family, theta, rank), with
 * chosen_index its candidate (or -1); the others come from v in rank
 * order. */
static void pick_rest(const cand_view *v, size_t nv, long chosen_index, sp_fitplot_fit *f)
{
  for (size_t r = 1; r <= nv && f->ncurves < SP_FITPLOT_CURVES; r++)
    for (size_t i = 0; i < nv && f->ncurves < SP_FITPLOT_CURVES; i++)
      if ((long)i != chosen_index && v[i].ok && !v[i].rejected && v[i].rank == r)
        add_curve(f, v[i].family, v[i].theta, v[i].rank, 0);
}

void sp_fitplot_pick(const sp_fit_result *r, sp_fitplot_fit *out)
{
  memset(out, 0, sizeof *out);
  out->n = r->n;
  if (r->chosen < 0 || (size_t)r->chosen >= r->ncand) {
    snprintf(out->note, sizeof out->note, "no family chosen: %.290s",
             r->reason[0] ? r->reason : "no candidate could be fitted");
    return;
  }
  const sp_fit_candidate *ch = &r->cand[r->chosen];
  add_curve(out, ch->family, ch->theta, ch->rank, 1);
  cand_view v[SP_FIT_MAX_FAMILIES];
  size_t nv = r->ncand < SP_FIT_MAX_FAMILIES ? r->ncand : SP_FIT_MAX_FAMILIES;
  for (size_t i = 0; i < nv; i++) {
    const sp_fit_candidate *c = &r->cand[i];
    v[i] = (cand_view){c->family, c->theta, c->status == SP_FIT_OK, c->rejected, c->rank};
  }
  pick_rest(v, nv, r->chosen, out);
}

void sp_fitplot_plan_clear(sp_fitplot_plan *plan)
{
  if (!plan) return;
  free(plan->column);
  free(plan->unit);
  free(plan->group_column);
  for (size_t i = 0; i < plan->nlots; i++) free(plan->lots[i].label);
  free(plan->lots);
  memset(plan, 0, sizeof *plan);
}

static sp_status plan_nomem(sp_fitplot_plan *plan, sp_error *err)
{
  sp_fitplot_plan_clear(plan);
  return sp_fail(err, SP_ENOMEM, "fit charts: out of memory");
}

sp_status sp_fitplot_plan_from_fit(const sp_fit_grouped *g, const char *column,
                                   const char *unit, const char *by,
                                   sp_fitplot_plan *plan, sp_error *err)
{
  memset(plan, 0, sizeof *plan);
  if (!g || !column || !*column)
    return sp_fail(err, SP_EUSAGE, "fit charts: no fit or no column name given");
  plan->column = dup_text(column);
  plan->unit = dup_text(unit);
  plan->group_column = dup_text(by);
  if (!plan->column || (unit && !plan->unit) || (by && !plan->group_column))
    return plan_nomem(plan, err);
  sp_fitplot_pick(&g->pooled, &plan->pooled);
  if (!by || g->ngroups == 0) return SP_OK;
  plan->lots = calloc(g->ngroups, sizeof *plan->lots);
  if (!plan->lots) return plan_nomem(plan, err);
  for (size_t i = 0; i < g->ngroups; i++) {
    const sp_fit_group *G = &g->groups[i];
    sp_fitplot_lot *L = &plan->lots[plan->nlots++];
    L->label = dup_text(G->label);
    if (!L->label) return plan_nomem(plan, err);
    if (G->status == SP_OK) {
      sp_fitplot_pick(&G->fit, &L->fit);
    } else {
      memset(&L->fit, 0, sizeof L->fit);
      snprintf(L->fit.note, sizeof L->fit.note, "not fitted: %.290s", G->message);
    }
  }
  return SP_OK;
}

/* ---- reading a plan from a record ------------------------------------------ */

typedef struct {
  const char *name;
  const char *text; /* the record's text, where a bad field is looked up */
  size_t len;
  sp_error *err;
} rd;

static sp_status bad(const rd *r, const char *field, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
static sp_status bad(const rd *r, const char *field, const char *fmt, ...)
{
  char what[512];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(what, sizeof what, fmt, ap);
  va_end(ap);
  long line = 0, col = 0;
  if (sp_json_locate(r->text, r->len, field, &line, &col))
    return sp_fail_at(r->err, SP_EDATA, r->name, line, col, "fit record: field '%s' %s", field,
                      what);
  return sp_fail(r->err, SP_EDATA, "fit record %s: field '%s' %s", r->name, field, what);
}

#define TRY(x)                                                                 \
  do {                                                                         \
    sp_status s_ = (x);                                                        \
    if (s_ != SP_OK) return s_;                                                \
  } while (0)

/* A family's parameters from an object of numbers, checked by the family. */
static sp_status read_params(const rd *r, const json_t *o, const char *path,
                             const sp_family *f, double *theta)
{
  char p[512];
  snprintf(p, sizeof p, "%.300s.params", path);
  json_t *ps = json_object_get(o, "params");
  if (!json_is_object(ps)) return bad(r, p, "must be an object");
  for (size_t q = 0; q < f->nparam; q++) {
    json_t *v = json_object_get(ps, f->param_names[q]);
    if (!json_is_number(v)) {
      char pp[600];
      snprintf(pp, sizeof pp, "%s.%s", p, f->param_names[q]);
      return bad(r, pp, "must be a number");
    }
    theta[q] = json_number_value(v);
  }
  sp_error e;
  sp_error_clear(&e);
  if (f->check && f->check(theta, &e) != SP_OK) return bad(r, p, "are invalid: %s", e.msg);
  return SP_OK;
}

static sp_status read_family(const rd *r, const json_t *o, const char *path,
                             const sp_family **out)
{
  char p[512];
  snprintf(p, sizeof p, "%.300s.family", path);
  json_t *v = json_object_get(o, "family");
  if (!json_is_string(v)) return bad(r, p, "must be a string");
  *out = sp_family_find(json_string_value(v));
  if (!*out) return bad(r, p, "names an unknown family '%s'", json_string_value(v));
  return SP_OK;
}

/* The curves of one fit body (an object with "chosen" and "candidates"):
 * prefix is "" for the top level or "by.groups[i]." for a lot. */
static sp_status read_body(const rd *r, const json_t *o, const char *prefix, sp_fitplot_fit *f)
{
  char p[512];
  snprintf(p, sizeof p, "%.300scandidates", prefix);
  json_t *cands = json_object_get(o, "candidates");
  if (!json_is_array(cands)) return bad(r, p, "must be an array");
  size_t nc = json_array_size(cands);
  if (nc > SP_FIT_MAX_FAMILIES)
    return bad(r, p, "has %zu entries; at most %d families are fitted", nc, SP_FIT_MAX_FAMILIES);
  cand_view v[SP_FIT_MAX_FAMILIES];
  double theta[SP_FIT_MAX_FAMILIES][SP_FAMILY_MAX_PARAMS];
  for (size_t i = 0; i < nc; i++) {
    json_t *c = json_array_get(cands, i);
    char pc[600], pf[700];
    snprintf(pc, sizeof pc, "%s[%zu]", p, i);
    if (!json_is_object(c)) return bad(r, pc, "must be an object");
    memset(&v[i], 0, sizeof v[i]);
    TRY(read_family(r, c, pc, &v[i].family));
    json_t *st = json_object_get(c, "status");
    snprintf(pf, sizeof pf, "%s.status", pc);
    if (!json_is_string(st)) return bad(r, pf, "must be a string");
    v[i].ok = strcmp(json_string_value(st), "ok") == 0;
    json_t *rej = json_object_get(c, "rejected");
    snprintf(pf, sizeof pf, "%s.rejected", pc);
    if (!json_is_boolean(rej)) return bad(r, pf, "must be true or false");
    v[i].rejected = json_is_true(rej);
    json_t *rk = json_object_get(c, "rank");
    snprintf(pf, sizeof pf, "%s.rank", pc);
    if (!rk) return bad(r, pf, "is missing");
    if (!json_is_null(rk)) {
      if (!json_is_integer(rk) || json_integer_value(rk) < 1 ||
          (size_t)json_integer_value(rk) > nc)
        return bad(r, pf, "must be null or an integer from 1 to %zu", nc);
      v[i].rank = (size_t)json_integer_value(rk);
    }
    if (v[i].ok) {
      TRY(read_params(r, c, pc, v[i].family, theta[i]));
      v[i].theta = theta[i];
    } else {
      v[i].rank = 0;
    }
  }
  memset(f, 0, sizeof *f);
  snprintf(p, sizeof p, "%.300schosen", prefix);
  json_t *ch = json_object_get(o, "chosen");
  if (!ch) return bad(r, p, "is missing");
  if (json_is_null(ch)) {
    json_t *why = json_object_get(o, "choice_reason");
    snprintf(f->note, sizeof f->note, "no family chosen: %.290s",
             json_is_string(why) ? json_string_value(why) : "no candidate could be fitted");
    return SP_OK;
  }
  if (!json_is_object(ch)) return bad(r, p, "must be an object or null");
  const sp_family *fam;
  double th[SP_FAMILY_MAX_PARAMS] = {0};
  TRY(read_family(r, ch, p, &fam));
  TRY(read_params(r, ch, p, fam, th));
  /* The chosen family's entry among the candidates: same family, same
   * parameters (the writer copies them from it). */
  long ci = -1;
  for (size_t i = 0; i < nc && ci < 0; i++) {
    if (!v[i].ok || v[i].family != fam) continue;
    int same = 1;
    for (size_t q = 0; q < fam->nparam; q++) same &= v[i].theta[q] == th[q];
    if (same) ci = (long)i;
  }
  add_curve(f, fam, th, ci >= 0 ? v[ci].rank : 0, 1);
  pick_rest(v, nc, ci, f);
  return SP_OK;
}

static sp_status read_count(const rd *r, const json_t *o, const char *key, const char *path,
                            size_t *out)
{
  json_t *v = json_object_get(o, key);
  if (!json_is_integer(v) || json_integer_value(v) < 0)
    return bad(r, path, "must be a non-negative integer");
  *out = (size_t)json_integer_value(v);
  return SP_OK;
}

static sp_status read_plan(const rd *r, const json_t *root, const sp_record_fit *rec,
                           sp_fitplot_plan *plan)
{
  plan->column = dup_text(rec->column);
  plan->unit = dup_text(rec->unit);
  if (!plan->column || (rec->unit && !plan->unit))
    return sp_fail(r->err, SP_ENOMEM, "fit record %s: out of memory", r->name);
  TRY(read_body(r, root, "", &plan->pooled));
  plan->pooled.n = rec->n;
  json_t *by = json_object_get(root, "by");
  if (!json_is_object(by)) return SP_OK;
  json_t *col = json_object_get(by, "column"), *groups = json_object_get(by, "groups");
  if (!json_is_string(col)) return bad(r, "by.column", "must be a string");
  if (!json_is_array(groups)) return bad(r, "by.groups", "must be an array");
  plan->group_column = dup_text(json_string_value(col));
  size_t ng = json_array_size(groups);
  plan->lots = calloc(ng ? ng : 1, sizeof *plan->lots);
  if (!plan->group_column || !plan->lots)
    return sp_fail(r->err, SP_ENOMEM, "fit record %s: out of memory", r->name);
  for (size_t i = 0; i < ng; i++) {
    json_t *G = json_array_get(groups, i);
    char p[64], pf[128];
    snprintf(p, sizeof p, "by.groups[%zu]", i);
    if (!json_is_object(G)) return bad(r, p, "must be an object");
    json_t *val = json_object_get(G, "value");
    snprintf(pf, sizeof pf, "%s.value", p);
    if (!json_is_string(val)) return bad(r, pf, "must be a string");
    for (size_t j = 0; j < plan->nlots; j++)
      /* set when the reader above returned SP_OK (not followed by the analyzer):
       * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
      if (strcmp(plan->lots[j].label, json_string_value(val)) == 0)
        return bad(r, pf, "repeats the lot '%.200s' of by.groups[%zu]", json_string_value(val),
                   j);
    sp_fitplot_lot *L = &plan->lots[plan->nlots];
    L->label = dup_text(json_string_value(val));
    if (!L->label) return sp_fail(r->err, SP_ENOMEM, "fit record %s: out of memory", r->name);
    plan->nlots++;
    size_t n = 0;
    snprintf(pf, sizeof pf, "%s.n", p);
    TRY(read_count(r, G, "n", pf, &n));
    json_t *st = json_object_get(G, "status");
    snprintf(pf, sizeof pf, "%s.status", p);
    if (!json_is_string(st) ||
        (strcmp(json_string_value(st), "ok") != 0 && strcmp(json_string_value(st), "failed") != 0))
      return bad(r, pf, "must be ok or failed");
    if (strcmp(json_string_value(st), "ok") == 0) {
      char prefix[80];
      snprintf(prefix, sizeof prefix, "%s.", p);
      TRY(read_body(r, G, prefix, &L->fit));
    } else {
      json_t *msg = json_object_get(G, "message");
      memset(&L->fit, 0, sizeof L->fit);
      snprintf(L->fit.note, sizeof L->fit.note, "not fitted: %.290s",
               json_is_string(msg) ? json_string_value(msg) : "no reason recorded");
    }
    L->fit.n = n;
  }
  return SP_OK;
}

sp_status sp_fitplot_plan_parse(const char *name, const char *text, size_t len,
                                sp_fitplot_plan *plan, sp_record_fit *rec, sp_error *err)
{
  memset(plan, 0, sizeof *plan);
  if (rec) memset(rec, 0, sizeof *rec);
  sp_record_fit R;
  sp_status st = sp_record_fit_parse(name, text, len, &R, err);
  if (st) return st;
  /* Valid JSON (the record reader just parsed it). */
  json_t *root = json_loadb(text, len, JSON_REJECT_DUPLICATES, NULL);
  if (!root) {
    sp_record_fit_clear(&R);
    return sp_fail(err, SP_ENOMEM, "fit record %s: out of memory", name);
  }
  rd r = {name, text, len, err};
  st = read_plan(&r, root, &R, plan);
  json_decref(root);
  if (st) sp_fitplot_plan_clear(plan);
  if (st || !rec) sp_record_fit_clear(&R);
  else *rec = R;
  return st;
}

/* Records are a few kilobytes; the record reader refuses more than this. */
#define RECORD_MAX ((size_t)256 << 20)

sp_status sp_fitplot_plan_read(const char *path, sp_fitplot_plan *plan, sp_record_fit *rec,
                               sp_error *err)
{
  memset(plan, 0, sizeof *plan);
  if (rec) memset(rec, 0, sizeof *rec);
  sp_error local;
  sp_error_clear(&local);
  FILE *fp = sp_file_open_input(path, "fit record", RECORD_MAX, err ? err : &local);
  if (!fp) return err ? err->code : local.code;
  size_t cap = 1 << 16, len = 0;
  char *buf = malloc(cap);
  sp_status st = SP_OK;
  while (buf) {
    if (len == cap) {
      if (cap >= RECORD_MAX) {
        st = sp_fail(err, SP_ELIMIT, "fit record %s: larger than 256 MiB", path);
        break;
      }
      char *nb = realloc(buf, cap * 2);
      if (!nb) {
        free(buf);
        buf = NULL;
        break;
      }
      buf = nb;
      cap *= 2;
    }
    /* buf is not NULL here (the loop's condition); cppcheck misreads the
     * check as redundant. */
    /* cppcheck-suppress nullPointerArithmeticRedundantCheck */
    size_t got = fread(buf + len, 1, cap - len, fp);
    len += got;
    if (got == 0) break;
  }
  int rerr = ferror(fp);
  fclose(fp);
  if (!buf) return sp_fail(err, SP_ENOMEM, "fit record %s: out of memory", path);
  if (st == SP_OK && rerr) st = sp_fail(err, SP_EIO, "cannot read fit record %s", path);
  if (st == SP_OK) st = sp_fitplot_plan_parse(path, buf, len, plan, rec, err);
  free(buf);
  return st;
}

/* ---- drawing ---------------------------------------------------------------- */

void sp_fitplot_charts_free(sp_fitplot_charts *c)
{
  if (!c) return;
  free(c->charts);
  memset(c, 0, sizeof *c);
}

/* A row's lot index when the row has no value (missing). */
#define NOT_VALUE ((size_t)-1)

/* One set of values to chart: the whole column, a lot, or the pool. */
typedef struct {
  const char *lot;            /* lot id, or NULL */
  int pooled;                 /* 1: all lots pooled */
  const sp_fitplot_fit *fit;
  double *x;                  /* owned */
  size_t n;
  char base[SP_PLOT_STEM_MAX + 1];
} vset;

static int base_taken(const vset *s, size_t ns, const char *base)
{
  for (size_t i = 0; i < ns; i++)
    if (strcmp(s[i].base, base) == 0) return 1;
  return 0;
}

/* A base stem no earlier set has: "_2", "_3", ... appended when needed. */
static void unique_base(vset *s, size_t k, const char *column)
{
  char b[SP_PLOT_STEM_MAX + 1];
  sp_fitplot_stem(column, s[k].lot, s[k].pooled, NULL, b, sizeof b);
  snprintf(s[k].base, sizeof s[k].base, "%s", b);
  for (unsigned d = 2; base_taken(s, k, s[k].base); d++)
    snprintf(s[k].base, sizeof s[k].base, "%.100s_%u", b, d);
}

static void curve_label(const sp_fitplot_curve *c, char *buf, size_t n)
{
  const char *t = c->family->title && *c->family->title ? c->family->title : c->family->name;
  if (c->chosen && c->rank) snprintf(buf, n, "%s (chosen, rank %zu)", t, c->rank);
  else if (c->chosen) snprintf(buf, n, "%s (chosen)", t);
  else snprintf(buf, n, "%s (rank %zu)", t, c->rank);
}

static sp_fitplot_chart *new_chart(sp_fitplot_charts *out, sp_fitplot_kind kind,
                                   const char *base, const char *suffix, const char *subject)
{
  sp_fitplot_chart *c = &out->charts[out->ncharts++];
  memset(c, 0, sizeof *c);
  c->kind = kind;
  snprintf(c->stem, sizeof c->stem, "%s_%s", base, suffix);
  plain_copy(subject, c->subject, sizeof c->subject);
  return c;
}

static sp_status check_free(const sp_fitplot_charts *out, const char *outdir, sp_error *err)
{
  static const char *const ext[4] = {".dat", ".gp", ".png", ".svg"};
  for (size_t i = 0; i < out->ncharts; i++) {
    if (out->charts[i].note[0]) continue;
    for (int k = 0; k < 4; k++) {
      char p[SP_PLOT_PATH_MAX];
      int w = snprintf(p, sizeof p, "%s/%s%s", outdir, out->charts[i].stem, ext[k]);
      if (w < 0 || (size_t)w >= sizeof p)
        return sp_fail(err, SP_ELIMIT, "%s: output folder path too long", outdir);
      struct stat sb;
      if (lstat(p, &sb) == 0) {
        sp_fail(err, SP_EIO, "%s: file exists; refusing to overwrite it (no chart was drawn)",
                p);
        return sp_error_hint(err, "give --force to replace the charts, or choose another "
                                  "folder");
      }
    }
  }
  return SP_OK;
}

static sp_status ensure_dir(const char *dir, sp_error *err)
{
  struct stat sb;
  if (stat(dir, &sb) == 0) {
    if (!S_ISDIR(sb.st_mode))
      return sp_fail(err, SP_EIO, "%s: not a folder; charts need a folder", dir);
    return SP_OK;
  }
  /* 0777 less the user's umask, as mkdir(1) makes it. */
  if (mkdir(dir, 0777) != 0 && errno != EEXIST)
    return sp_fail(err, SP_EIO, "%s: cannot create the chart folder: %s", dir, strerror(errno));
  return SP_OK;
}

static sp_status draw_set(const vset *s, const sp_fitplot_plan *plan, const sp_plot_options *opt,
                          sp_fitplot_chart *const ch[3], sp_error *err)
{
  const sp_fitplot_fit *f = s->fit;
  sp_plot_curve curves[SP_FITPLOT_CURVES];
  char labels[SP_FITPLOT_CURVES][SP_PLOT_LABEL_MAX];
  for (size_t i = 0; i < f->ncurves; i++) {
    curve_label(&f->curves[i], labels[i], sizeof labels[i]);
    curves[i].family = f->curves[i].family;
    memcpy(curves[i].theta, f->curves[i].theta, sizeof curves[i].theta);
    curves[i].label = labels[i];
  }
  char who[2 * SP_PLOT_LABEL_MAX];
  /* The grouping column's own name (lot, station, ...) says what a group is. */
  const char *gname = plan->group_column ? plan->group_column : "lot";
  if (s->pooled) snprintf(who, sizeof who, "%s, every %s pooled", plan->column, gname);
  else if (s->lot) snprintf(who, sizeof who, "%s, %s %s", plan->column, gname, s->lot);
  else snprintf(who, sizeof who, "%s", plan->column);
  char title[3 * SP_PLOT_LABEL_MAX];
  sp_plot_fit spec = {.title = title, .axis = {plan->column, plan->unit}, .x = s->x,
                      .n = s->n, .curves = curves, .ncurves = f->ncurves,
                      .band_level = SP_FITPLOT_BAND_LEVEL};
  sp_plot_options o = *opt;
  sp_status st;
  for (int k = 0; k < 3; k++) {
    sp_fitplot_chart *c = ch[k];
    if (c->note[0]) continue;
    o.stem = c->stem;
    if (c->kind == SP_FITPLOT_HIST) {
      snprintf(title, sizeof title, "%s: histogram and fitted densities", who);
      st = sp_plot_fit_histogram(&spec, &o, &c->out, err);
    } else if (c->kind == SP_FITPLOT_PROB) {
      const sp_family *fam = f->curves[0].family;
      snprintf(title, sizeof title, "%s: probability plot, %s (chosen)", who,
               fam->title && *fam->title ? fam->title : fam->name);
      st = sp_plot_fit_probability(&spec, &o, &c->out, err);
      if (st == SP_ENUMERIC) {
        /* The fitted quantile cannot reach these data: a property of the
         * fit, shown as a note; the other charts still say what they can. */
        snprintf(c->note, sizeof c->note, "%.300s", err->msg);
        sp_error_clear(err);
        continue;
      }
    } else {
      snprintf(title, sizeof title, "%s: empirical CDF and fitted CDFs", who);
      st = sp_plot_fit_ecdf(&spec, &o, &c->out, err);
    }
    if (st) return st;
    c->drawn = 1;
  }
  return SP_OK;
}

/* sp_fitplot_draw, or with check_only its checks alone (nothing drawn, no
 * folder made). */
static sp_status draw_charts(const sp_fitplot_plan *plan, const sp_table *t,
                             const sp_plot_options *opt, sp_fitplot_charts *out, int check_only,
                             sp_error *err)
{
  memset(out, 0, sizeof *out);
  if (!plan || !plan->column || !t || !opt || !opt->outdir || !*opt->outdir)
    return sp_fail(err, SP_EUSAGE, "fit charts: no plan, table or output folder given");
  const sp_column *col = sp_table_column(t, plan->column);
  if (!col)
    return sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, 0,
                      "no column named '%s' in the header", plan->column);
  if (col->kind != SP_COLUMN_NUMERIC)
    return sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, (long)col->index + 1,
                      "column '%s' is text, not numbers", plan->column);
  const sp_column *lc = NULL;
  if (plan->group_column) {
    lc = sp_table_column(t, plan->group_column);
    if (!lc)
      return sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, 0,
                        "no column named '%s' in the header", plan->group_column);
    if (lc->kind != SP_COLUMN_TEXT)
      return sp_fail_at(err, SP_EUSAGE, t->path, t->header_line, (long)lc->index + 1,
                        "the lot column '%s' must be text", plan->group_column);
  }
  size_t nlots = lc ? plan->nlots : 0;
  size_t nsets = nlots + 1;
  vset *sets = calloc(nsets, sizeof *sets);
  size_t *row_lot = NULL;
  size_t npages = nlots ? (nlots + SP_PLOT_LOTS_MAX - 1) / SP_PLOT_LOTS_MAX : 0;
  out->charts = calloc(3 * nsets + npages, sizeof *out->charts);
  sp_status st = SP_OK;
  if (!sets || !out->charts) {
    st = sp_fail(err, SP_ENOMEM, "fit charts: out of memory");
    goto done;
  }

  /* The values of each set, grouped as sp_fit_run_grouped groups them:
   * each row's lot first (rows of a lot usually follow each other, so the
   * previous row's lot is tried first), then arrays of the exact sizes. */
  vset *pool = &sets[nlots];
  pool->pooled = nlots > 0;
  pool->fit = &plan->pooled;
  for (size_t k = 0; k < nlots; k++) {
    sets[k].lot = plan->lots[k].label;
    sets[k].fit = &plan->lots[k].fit;
  }
  row_lot = malloc((col->n ? col->n : 1) * sizeof *row_lot);
  if (!row_lot) {
    st = sp_fail(err, SP_ENOMEM, "fit charts: out of memory");
    goto done;
  }
  size_t last = 0;
  for (size_t i = 0; i < col->n; i++) {
    row_lot[i] = NOT_VALUE;
    if ((col->flags[i] & SP_OBS_MISSING) || isnan(col->values[i])) continue;
    row_lot[i] = nlots; /* the pool only */
    pool->n++;
    if (!lc || !lc->text[i] || !lc->text[i][0] || nlots == 0) continue;
    if (strcmp(lc->text[i], sets[last].lot) != 0)
      for (last = 0; last < nlots && strcmp(lc->text[i], sets[last].lot) != 0; last++) {
      }
    if (last == nlots) {
      last = 0;
      continue;
    }
    row_lot[i] = last;
    sets[last].n++;
  }
  for (size_t k = 0; k < nsets; k++) {
    sets[k].x = malloc((sets[k].n ? sets[k].n : 1) * sizeof *sets[k].x);
    if (!sets[k].x) {
      st = sp_fail(err, SP_ENOMEM, "fit charts: out of memory");
      goto done;
    }
    sets[k].n = 0;
  }
  for (size_t i = 0; i < col->n; i++) {
    if (row_lot[i] == NOT_VALUE) continue;
    pool->x[pool->n++] = col->values[i];
    if (row_lot[i] < nlots) sets[row_lot[i]].x[sets[row_lot[i]].n++] = col->values[i];
  }
  for (size_t k = 0; k < nsets; k++) {
    const sp_fitplot_fit *f = sets[k].fit;
    if (f->ncurves > 0 && f->n != sets[k].n) {
      st = sp_fail(err, SP_EDATA, "%s: column '%s'%s%s%s has %zu values; the fit had %zu",
                   t->path, plan->column, sets[k].lot ? " in lot '" : "",
                   sets[k].lot ? sets[k].lot : "", sets[k].lot ? "'" : "", sets[k].n, f->n);
      goto done;
    }
  }

  /* The charts, their stems and what is left out. */
  char colstem[SP_PLOT_STEM_MAX + 1];
  sp_fitplot_stem(plan->column, NULL, 0, NULL, colstem, sizeof colstem);
  for (size_t k = 0; k < nsets; k++) {
    unique_base(sets, k, plan->column);
    char subject[2 * SP_PLOT_LABEL_MAX + 16];
    if (sets[k].pooled) snprintf(subject, sizeof subject, "pooled");
    else if (sets[k].lot)
      snprintf(subject, sizeof subject, "%s %s",
               plan->group_column ? plan->group_column : "lot", sets[k].lot);
    else snprintf(subject, sizeof subject, "%s", plan->column);
    static const char *const suffix[3] = {"hist", "prob", "ecdf"};
    static const sp_fitplot_kind kinds[3] = {SP_FITPLOT_HIST, SP_FITPLOT_PROB, SP_FITPLOT_ECDF};
    for (int j = 0; j < 3; j++) {
      sp_fitplot_chart *c = new_chart(out, kinds[j], sets[k].base, suffix[j], subject);
      c->one_lot = sets[k].lot && !sets[k].pooled;
      const sp_fitplot_fit *f = sets[k].fit;
      if (sets[k].n < 2)
        snprintf(c->note, sizeof c->note, "%zu value%s; a chart needs 2 or more", sets[k].n,
                 sets[k].n == 1 ? "" : "s");
      else if (kinds[j] == SP_FITPLOT_PROB && f->ncurves == 0)
        snprintf(c->note, sizeof c->note, "%s", f->note[0] ? f->note : "no family chosen");
      else if (kinds[j] == SP_FITPLOT_PROB && !f->curves[0].family->quantile_P)
        snprintf(c->note, sizeof c->note, "%s has no quantile function",
                 f->curves[0].family->name);
    }
  }
  for (size_t pg = 0; pg < npages; pg++) {
    char suffix[32], subject[SP_PLOT_LABEL_MAX + 64];
    if (npages == 1) {
      snprintf(suffix, sizeof suffix, "lots");
      snprintf(subject, sizeof subject, "every %s",
               plan->group_column ? plan->group_column : "lot");
    } else {
      snprintf(suffix, sizeof suffix, "lots%zu", pg + 1);
      snprintf(subject, sizeof subject, "lots %zu-%zu of %zu", pg * SP_PLOT_LOTS_MAX + 1,
               (pg + 1) * SP_PLOT_LOTS_MAX < nlots ? (pg + 1) * SP_PLOT_LOTS_MAX : nlots, nlots);
    }
    /* The lots chart's stem is the column's, never a lot's: "fit_C_lots"
     * cannot equal "fit_C_lot_..._hist" or "fit_C_pooled_...". */
    sp_fitplot_chart *c = new_chart(out, SP_FITPLOT_LOTS, colstem, suffix, subject);
    size_t shown = 0;
    for (size_t k = pg * SP_PLOT_LOTS_MAX; k < nlots && k < (pg + 1) * SP_PLOT_LOTS_MAX; k++)
      shown += sets[k].n > 0;
    if (shown == 0) snprintf(c->note, sizeof c->note, "no lot has a value");
  }

  if (check_only) {
    /* The folder and the templates as sp_plot_check sees them; a folder
     * that does not exist yet holds no chart. */
    struct stat sb;
    if ((st = sp_plot_check(opt, err))) goto done;
    if (!opt->overwrite && stat(opt->outdir, &sb) == 0 && (st = check_free(out, opt->outdir, err)))
      goto done;
    goto done;
  }
  if ((st = ensure_dir(opt->outdir, err))) goto done;
  {
    char tdir[SP_PLOT_PATH_MAX];
    if ((st = sp_plot_template_dir(opt->template_dir, tdir, sizeof tdir, err))) goto done;
  }
  if (!opt->overwrite && (st = check_free(out, opt->outdir, err))) goto done;

  for (size_t k = 0; k < nsets; k++) {
    sp_fitplot_chart *ch[3] = {&out->charts[3 * k], &out->charts[3 * k + 1],
                               &out->charts[3 * k + 2]};
    if ((st = draw_set(&sets[k], plan, opt, ch, err))) goto done;
  }
  for (size_t pg = 0; pg < npages; pg++) {
    sp_fitplot_chart *c = &out->charts[3 * nsets + pg];
    if (c->note[0]) continue;
    sp_plot_lot lots[SP_PLOT_LOTS_MAX];
    size_t nl = 0;
    for (size_t k = pg * SP_PLOT_LOTS_MAX; k < nlots && k < (pg + 1) * SP_PLOT_LOTS_MAX; k++)
      if (sets[k].n > 0) lots[nl++] = (sp_plot_lot){sets[k].lot, sets[k].x, sets[k].n};
    sp_plot_curve pooled;
    char label[SP_PLOT_LABEL_MAX];
    const sp_fitplot_fit *pf = &plan->pooled;
    if (pf->ncurves > 0) {
      const sp_family *fam = pf->curves[0].family;
      snprintf(label, sizeof label, "%s", fam->title && *fam->title ? fam->title : fam->name);
      pooled.family = fam;
      memcpy(pooled.theta, pf->curves[0].theta, sizeof pooled.theta);
      pooled.label = label;
    }
    char title[2 * SP_PLOT_LABEL_MAX + 96];
    if (npages == 1)
      snprintf(title, sizeof title, "%s by %s: empirical CDF of each lot", plan->column,
               plan->group_column);
    else
      snprintf(title, sizeof title, "%s by %s: empirical CDF of each lot (%s)", plan->column,
               plan->group_column, c->subject);
    sp_plot_lots spec = {title, {plan->column, plan->unit}, lots, nl,
                         pf->ncurves > 0 ? &pooled : NULL};
    sp_plot_options o = *opt;
    o.stem = c->stem;
    if ((st = sp_plot_fit_lots(&spec, &o, &c->out, err))) goto done;
    c->drawn = 1;
  }

done:
  for (size_t i = 0; i < out->ncharts; i++) {
    /* allocated and checked above under the same status (not followed):
     * NOLINTNEXTLINE(clang-analyzer-core.NullDereference) */
    out->ndrawn += out->charts[i].drawn;
    out->nrendered += out->charts[i].drawn && out->charts[i].out.rendered;
  }
  if (sets)
    for (size_t k = 0; k < nsets; k++) free(sets[k].x);
  free(sets);
  free(row_lot);
  return st;
}

sp_status sp_fitplot_draw(const sp_fitplot_plan *plan, const sp_table *t,
                          const sp_plot_options *opt, sp_fitplot_charts *out, sp_error *err)
{
  return draw_charts(plan, t, opt, out, 0, err);
}

sp_status sp_fitplot_check(const sp_fitplot_plan *plan, const sp_table *t,
                           const sp_plot_options *opt, sp_error *err)
{
  sp_fitplot_charts charts;
  sp_status st = draw_charts(plan, t, opt, &charts, 1, err);
  sp_fitplot_charts_free(&charts);
  return st;
}

/* ---- redrawing from a record --------------------------------------------------- */

static int path_exists(const char *p)
{
  struct stat sb;
  /* set when the reader above returned SP_OK (not followed by the analyzer):
   * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
  return stat(p, &sb) == 0;
}

/* The data file of a record: as recorded, else (a relative path that does
 * not exist from here) beside the record. */
static sp_status locate_data(const char *record_path, const char *recorded, char *buf,
                             size_t n, sp_error *err)
{
  if (snprintf(buf, n, "%s", recorded) >= (int)n)
    return sp_fail(err, SP_ELIMIT, "data file path in %s is too long", record_path);
  if (path_exists(recorded)) return SP_OK;
  const char *slash = strrchr(record_path, '/');
  if (recorded[0] != '/' && slash) {
    int w = snprintf(buf, n, "%.*s/%s", (int)(slash - record_path), record_path, recorded);
    if (w > 0 && (size_t)w < n && path_exists(buf)) return SP_OK;
    char tried[SP_PLOT_PATH_MAX];
    snprintf(tried, sizeof tried, "%s", buf);
    snprintf(buf, n, "%s", recorded);
    sp_fail(err, SP_EIO, "data file %s named in fit record %s not found (also looked for %s)",
            recorded, record_path, tried);
  } else {
    sp_fail(err, SP_EIO, "data file %s named in fit record %s not found", recorded,
            record_path);
  }
  return sp_error_hint(err, "give the data file's location with --data FILE; its SHA-256 "
                            "must match the record's");
}

static sp_status hash_mismatch(const char *data, const char *got, const char *record_path,
                               const char *want, sp_error *err)
{
  sp_fail(err, SP_EDATA, "data file %s has SHA-256 %s, but fit record %s was made from a file "
          "with SHA-256 %s: the file is not the one fitted", data, got, record_path, want);
  return sp_error_hint(err, "redraw from the original data, or fit the changed file again");
}

sp_status sp_fitplot_redraw(const char *record_path, const char *data_path,
                            const sp_plot_options *opt, sp_fitplot_charts *out,
                            sp_error *err)
{
  memset(out, 0, sizeof *out);
  sp_fitplot_plan plan;
  sp_record_fit rec;
  sp_status st = sp_fitplot_plan_read(record_path, &plan, &rec, err);
  if (st) return st;
  char path[SP_PLOT_PATH_MAX];
  sp_table *t = NULL;
  if (data_path) {
    if (snprintf(path, sizeof path, "%s", data_path) >= (int)sizeof path)
      st = sp_fail(err, SP_ELIMIT, "data file path too long");
  } else {
    st = locate_data(record_path, rec.data_path, path, sizeof path, err);
  }
  char hex[SP_SHA256_HEX_LEN];
  if (st == SP_OK) st = sp_sha256_file(path, hex, NULL, err);
  if (st == SP_OK && strcmp(hex, rec.sha256) != 0)
    st = hash_mismatch(path, hex, record_path, rec.sha256, err);
  if (st == SP_OK) {
    const char *cols[2] = {plan.column, plan.group_column};
    sp_ingest_options io;
    sp_ingest_options_init(&io);
    io.columns = cols;
    io.ncolumns = plan.group_column ? 2 : 1;
    /* The lot column is read as text when it has no unit, as fit read it. */
    if (plan.group_column) {
      io.text_columns = &cols[1];
      io.ntext_columns = 1;
    }
    st = sp_table_read(path, &io, &t, err);
  }
  /* The table's own hash covers the bytes it parsed (the file could have
   * changed after the first check). */
  if (st == SP_OK && strcmp(t->sha256, rec.sha256) != 0)
    st = hash_mismatch(path, t->sha256, record_path, rec.sha256, err);
  if (st == SP_OK) st = sp_fitplot_draw(&plan, t, opt, out, err);
  sp_table_free(t);
  sp_record_fit_clear(&rec);
  sp_fitplot_plan_clear(&plan);
  return st;
}
