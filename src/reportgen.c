/* scatterprop reportgen: the HTML report of a run from its run record,
 * fit records and data files (docs/report.md). */
#include "scatterprop/reportgen.h"

#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <jansson.h>

#include "scatterprop/dist.h"
#include "scatterprop/fitplot.h"
#include "scatterprop/ingest.h"
#include "scatterprop/record.h"
#include "scatterprop/report.h"
#include "scatterprop/run.h"
#include "scatterprop/runplot.h"
#include "scatterprop/summary.h"

#include "json_locate.h"
#include "replay_internal.h"

void sp_reportgen_options_init(sp_reportgen_options *o) { memset(o, 0, sizeof *o); }

/* ---- a pool: everything the report spec points to ----------------------- */

typedef struct {
  void **items;
  size_t n, cap;
  int oom;
} pool;

static void *pool_keep(pool *p, void *ptr)
{
  if (!ptr) {
    p->oom = 1;
    return NULL;
  }
  if (p->n == p->cap) {
    size_t cap = p->cap ? 2 * p->cap : 256;
    void **it = realloc(p->items, cap * sizeof *it);
    if (!it) {
      free(ptr);
      p->oom = 1;
      return NULL;
    }
    p->items = it;
    p->cap = cap;
  }
  p->items[p->n++] = ptr;
  return ptr;
}

static void *pool_calloc(pool *p, size_t n, size_t size)
{
  return pool_keep(p, calloc(n ? n : 1, size));
}

static char *pool_str(pool *p, const char *s) { return pool_keep(p, strdup(s ? s : "")); }

static char *pool_vfmt(pool *p, const char *fmt, va_list ap) __attribute__((format(printf, 2, 0)));
static char *pool_vfmt(pool *p, const char *fmt, va_list ap)
{
  va_list aq;
  va_copy(aq, ap);
  int n = vsnprintf(NULL, 0, fmt, aq);
  va_end(aq);
  if (n < 0) {
    p->oom = 1;
    return NULL;
  }
  char *s = malloc((size_t)n + 1);
  if (s) vsnprintf(s, (size_t)n + 1, fmt, ap);
  return pool_keep(p, s);
}

static char *pool_fmt(pool *p, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static char *pool_fmt(pool *p, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  char *s = pool_vfmt(p, fmt, ap);
  va_end(ap);
  return s;
}

static void pool_free(pool *p)
{
  for (size_t i = 0; i < p->n; i++) free(p->items[i]);
  free(p->items);
  memset(p, 0, sizeof *p);
}

/* ---- the report being built --------------------------------------------- */

typedef struct {
  const char *title;
  int level;
  sp_report_block *blocks;
  size_t n, cap;
} section;

typedef struct {
  pool p;
  section *sec;
  size_t nsec, capsec;
  sp_report_fact *settings;
  size_t nset, capset;
  sp_report_input *inputs;
  size_t nin, capin;
  size_t nfigures, nembedded;
  const char **cells;           /* of the last table made */
  const sp_report_table *cells_of;
} builder;

/* Grows a[0..*n) of elem-sized items to hold one more; NULL on failure. */
static void *grow(builder *b, void **a, size_t *n, size_t *cap, size_t elem)
{
  if (*n == *cap) {
    size_t c = *cap ? 2 * *cap : 16;
    void *na = realloc(*a, c * elem);
    if (!na) {
      b->p.oom = 1;
      return NULL;
    }
    memset((char *)na + *cap * elem, 0, (c - *cap) * elem);
    *a = na;
    *cap = c;
  }
  return (char *)*a + (*n)++ * elem;
}

static void add_section(builder *b, int level, const char *title)
{
  section *s = grow(b, (void **)&b->sec, &b->nsec, &b->capsec, sizeof *s);
  if (!s) return;
  s->title = pool_str(&b->p, title);
  s->level = level;
}

static sp_report_block *add_block(builder *b, sp_report_block_kind kind)
{
  if (b->nsec == 0) return NULL;
  section *s = &b->sec[b->nsec - 1];
  sp_report_block *k = grow(b, (void **)&s->blocks, &s->n, &s->cap, sizeof *k);
  if (k) k->kind = kind;
  return k;
}

static void add_text(builder *b, sp_report_block_kind kind, const char *text)
{
  sp_report_block *k = add_block(b, kind);
  if (k) k->text = text;
}

static void add_para(builder *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void add_para(builder *b, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  char *text = pool_vfmt(&b->p, fmt, ap);
  va_end(ap);
  add_text(b, SP_REPORT_PARAGRAPH, text);
}

static void add_setting(builder *b, const char *key, const char *value)
{
  sp_report_fact *f = grow(b, (void **)&b->settings, &b->nset, &b->capset, sizeof *f);
  if (!f) return;
  f->key = pool_str(&b->p, key);
  f->value = pool_str(&b->p, value);
}

static void add_input(builder *b, const char *role, const char *path, const char *sha,
                      uint64_t size)
{
  sp_report_input *in = grow(b, (void **)&b->inputs, &b->nin, &b->capin, sizeof *in);
  if (!in) return;
  in->role = pool_str(&b->p, role);
  in->path = pool_str(&b->p, path);
  in->sha256 = pool_str(&b->p, sha);
  in->size = size;
}

/* A table of nrows x ncols cells to be filled with set_cell. */
static sp_report_table *add_table(builder *b, const char *caption, size_t ncols, size_t nrows,
                                  const char *const *head, const char *align)
{
  sp_report_table *t = pool_calloc(&b->p, 1, sizeof *t);
  const char **cells = pool_calloc(&b->p, ncols * (nrows ? nrows : 1), sizeof *cells);
  const char **h = pool_calloc(&b->p, ncols, sizeof *h);
  if (!t || !cells || !h) return NULL;
  for (size_t c = 0; c < ncols; c++) h[c] = pool_str(&b->p, head[c]);
  t->caption = pool_str(&b->p, caption);
  b->cells = cells;
  b->cells_of = t;
  t->ncols = ncols;
  t->nrows = nrows;
  t->head = h;
  t->cells = cells;
  t->align = align ? pool_str(&b->p, align) : NULL;
  sp_report_block *k = add_block(b, SP_REPORT_TABLE);
  if (k) k->table = t;
  return t;
}

/* Cells of the table made last (the spec's cells are const to readers). */
static void set_cell(builder *b, sp_report_table *t, size_t row, size_t col, const char *text)
{
  if (!t || t != b->cells_of || row >= t->nrows || col >= t->ncols) return;
  b->cells[row * t->ncols + col] = pool_str(&b->p, text);
}

static void add_figure(builder *b, const char *svg, const char *caption, const char *note)
{
  sp_report_figure *f = pool_calloc(&b->p, 1, sizeof *f);
  if (!f) return;
  f->svg_path = svg ? pool_str(&b->p, svg) : NULL;
  f->caption = pool_str(&b->p, caption);
  f->missing_note = note ? pool_str(&b->p, note) : NULL;
  sp_report_block *k = add_block(b, SP_REPORT_FIGURE);
  if (k) k->figure = f;
  b->nfigures++;
  if (svg) b->nembedded++;
}

static void add_facts(builder *b, const sp_report_fact *facts, size_t n)
{
  sp_report_fact *f = pool_calloc(&b->p, n, sizeof *f);
  if (!f) return;
  for (size_t i = 0; i < n; i++) {
    f[i].key = pool_str(&b->p, facts[i].key);
    f[i].value = pool_str(&b->p, facts[i].value);
  }
  sp_report_block *k = add_block(b, SP_REPORT_FACTS);
  if (k) {
    k->facts = f;
    k->nfacts = n;
  }
}

static void builder_free(builder *b)
{
  for (size_t i = 0; i < b->nsec; i++) free(b->sec[i].blocks);
  free(b->sec);
  free(b->settings);
  free(b->inputs);
  pool_free(&b->p);
}

/* ---- numbers as text ------------------------------------------------------ */

/* Decimals that show values to the Monte Carlo resolution, two significant
 * digits of the standard error of the mean: the rule of sp_run_decimals,
 * applied to the recorded sem.  -1 when sem is not a positive number. */
static int mc_decimals(double sem)
{
  if (!(sem > 0) || !isfinite(sem)) return -1;
  int d = 1 - (int)floor(log10(sem));
  return d < 0 ? 0 : d > 15 ? 15 : d;
}

static void fmt_dec(char *buf, size_t n, int dec, double v)
{
  if (!isfinite(v)) snprintf(buf, n, "-");
  else if (dec >= 0) snprintf(buf, n, "%.*f", dec, v);
  else snprintf(buf, n, "%.6g", v);
}

/* v with prec digits: kind 'f' fixed, 'g' significant, '+' fixed with a
 * sign; "-" when not finite. */
static void fmt_g(char *buf, size_t n, char kind, int prec, double v)
{
  if (!isfinite(v)) snprintf(buf, n, "-");
  else if (kind == 'g') snprintf(buf, n, "%.*g", prec, v);
  else if (kind == '+') snprintf(buf, n, "%+.*f", prec, v);
  else snprintf(buf, n, "%.*f", prec, v);
}

/* ---- JSON fields, validated once and named by their path ----------------- */

enum { T_STR = 1, T_NUM = 2, T_INT = 4, T_NULL = 8, T_OBJ = 16, T_ARR = 32, T_BOOL = 64 };

typedef struct {
  const char *kind; /* "run record", "fit record" */
  const char *file;
  sp_error *err;
  sp_status st;
} checker;

/* A failure about the field at path (dotted, with [N] for elements), at
 * the field's line and column in the file when it is found there (the
 * tree keeps no positions, so the file is read again, on this error path
 * only).  Sets c->st and returns it. */
static sp_status cfail(checker *c, const char *path, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
static sp_status cfail(checker *c, const char *path, const char *fmt, ...)
{
  char what[768];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(what, sizeof what, fmt, ap);
  va_end(ap);
  long line = 0, col = 0;
  if (sp_json_locate_file(c->file, path, &line, &col))
    return c->st = sp_fail_at(c->err, SP_EDATA, c->file, line, col, "%s: %s", c->kind, what);
  return c->st = sp_fail(c->err, SP_EDATA, "%s %s: %s", c->kind, c->file, what);
}

/* A failure about field `path` of the record in file, at the field's
 * position when it is found there (as cfail, without a checker). */
static sp_status field_fail(sp_error *err, const char *kind, const char *file, const char *path,
                            const char *what)
{
  long line = 0, col = 0;
  if (sp_json_locate_file(file, path, &line, &col))
    return sp_fail_at(err, SP_EDATA, file, line, col, "%s: field '%s' %s", kind, path, what);
  return sp_fail(err, SP_EDATA, "%s %s: field '%s' %s", kind, file, path, what);
}

static const char *type_words(int mask)
{
  switch (mask & ~T_NULL) {
  case T_STR: return mask & T_NULL ? "a string or null" : "a string";
  case T_NUM: return mask & T_NULL ? "a number or null" : "a number";
  case T_INT: return mask & T_NULL ? "an integer or null" : "an integer";
  case T_OBJ: return mask & T_NULL ? "an object or null" : "an object";
  case T_ARR: return "an array";
  case T_BOOL: return "true or false";
  default: return "of another type";
  }
}

static int type_ok(const json_t *v, int mask)
{
  if (!v) return 0;
  if (json_is_null(v)) return (mask & T_NULL) != 0;
  if (json_is_string(v)) return (mask & T_STR) != 0;
  if (json_is_integer(v)) return (mask & (T_INT | T_NUM)) != 0;
  if (json_is_real(v)) return (mask & T_NUM) != 0;
  if (json_is_object(v)) return (mask & T_OBJ) != 0;
  if (json_is_array(v)) return (mask & T_ARR) != 0;
  if (json_is_boolean(v)) return (mask & T_BOOL) != 0;
  return 0;
}

/* o[key], which must be of a type in mask; where is the path of o. */
static json_t *field(checker *c, const json_t *o, const char *where, const char *key, int mask)
{
  if (c->st != SP_OK) return NULL;
  json_t *v = o ? json_object_get(o, key) : NULL;
  if (!type_ok(v, mask)) {
    char path[512];
    snprintf(path, sizeof path, "%s%s%s", where, *where ? "." : "", key);
    cfail(c, path, "field '%s' %s %s", path, v ? "must be" : "is missing; it must be",
          type_words(mask));
    return NULL;
  }
  return v;
}

/* Element i of array a (of a type in mask). */
static json_t *element(checker *c, const json_t *a, const char *where, size_t i, int mask)
{
  if (c->st != SP_OK) return NULL;
  json_t *v = json_array_get(a, i);
  if (!type_ok(v, mask)) {
    char path[512];
    snprintf(path, sizeof path, "%s[%zu]", where, i);
    cfail(c, path, "field '%s' must be %s", path, type_words(mask));
    return NULL;
  }
  return v;
}

/* Accessors for validated fields. */
static const char *gstr(const json_t *o, const char *key)
{
  return json_string_value(json_object_get(o, key));
}
static double gnum(const json_t *o, const char *key)
{
  const json_t *v = json_object_get(o, key);
  return json_is_number(v) ? json_number_value(v) : NAN;
}
static double anum(const json_t *a, size_t i)
{
  const json_t *v = json_array_get(a, i);
  return json_is_number(v) ? json_number_value(v) : NAN;
}
/* Integers are written as signed 64-bit values; a seed of 2^63 or more
 * reads back as its two's complement, which the cast undoes. */
static uint64_t guint(const json_t *o, const char *key)
{
  const json_t *v = json_object_get(o, key);
  return json_is_integer(v) ? (uint64_t)json_integer_value(v) : 0;
}

static int is_hex64(const char *s)
{
  if (!s || strlen(s) != 64) return 0;
  for (const char *p = s; *p; p++)
    if (!((*p >= '0' && *p <= '9') || (*p >= 'a' && *p <= 'f'))) return 0;
  return 1;
}

static void check_hex(checker *c, const json_t *o, const char *where, const char *key)
{
  json_t *v = field(c, o, where, key, T_STR);
  if (v && !is_hex64(json_string_value(v)))
  {
    char path[512];
    snprintf(path, sizeof path, "%s.%s", where, key);
    cfail(c, path, "field '%s' must be 64 lower-case hex digits", path);
  }
}

/* Every field of the run record that the report reads. */
static sp_status check_run_record(checker *c, const json_t *root)
{
  char w[128], w2[160];
  json_t *fmt = field(c, root, "", "format", T_STR);
  if (fmt && strcmp(json_string_value(fmt), SP_RECORD_RUN_FORMAT) != 0)
    return cfail(c, "format", "format is '%s', not '%s'", json_string_value(fmt),
                 SP_RECORD_RUN_FORMAT);
  json_t *ver = field(c, root, "", "version", T_INT);
  if (ver && json_integer_value(ver) != SP_RECORD_RUN_VERSION)
    return cfail(c, "version", "version %lld; this scatterprop reads version %d",
                 (long long)json_integer_value(ver), SP_RECORD_RUN_VERSION);
  json_t *tool = field(c, root, "", "tool", T_OBJ);
  static const char *const tool_keys[] = {"name", "version", "git", "compiler", "gsl", "system"};
  for (size_t i = 0; i < 6; i++) field(c, tool, "tool", tool_keys[i], T_STR | T_NULL);
  field(c, root, "", "created_utc", T_STR);
  json_t *cmd = field(c, root, "", "command", T_ARR);
  for (size_t i = 0; cmd && i < json_array_size(cmd); i++) element(c, cmd, "command", i, T_STR);
  json_t *model = field(c, root, "", "model", T_OBJ);
  field(c, model, "model", "path", T_STR);
  check_hex(c, model, "model", "sha256");
  field(c, model, "model", "text", T_STR);
  json_t *inputs = field(c, root, "", "inputs", T_ARR);
  for (size_t i = 0; inputs && i < json_array_size(inputs); i++) {
    snprintf(w, sizeof w, "inputs[%zu]", i);
    json_t *in = element(c, inputs, "inputs", i, T_OBJ);
    field(c, in, w, "name", T_STR);
    field(c, in, w, "unit", T_STR);
    field(c, in, w, "family", T_STR);
    json_t *pr = field(c, in, w, "params", T_OBJ);
    const char *k;
    json_t *v;
    snprintf(w2, sizeof w2, "%s.params", w);
    if (pr) json_object_foreach(pr, k, v) field(c, pr, w2, k, T_NUM);
    field(c, in, w, "scale", T_NUM);
    field(c, in, w, "offset", T_NUM);
    json_t *src = field(c, in, w, "source", T_STR);
    json_t *fr = field(c, in, w, "fit_record", T_OBJ | T_NULL);
    if (src && strcmp(json_string_value(src), "fit") == 0) {
      snprintf(w2, sizeof w2, "%s.fit_record", w);
      if (c->st == SP_OK && !json_is_object(fr))
        return cfail(c, w2, "field '%s' must be an object for a fitted input", w2);
      field(c, fr, w2, "path", T_STR);
      field(c, fr, w2, "size", T_INT);
      check_hex(c, fr, w2, "sha256");
      field(c, fr, w2, "data_sha256", T_STR | T_NULL);
    }
  }
  json_t *corr = field(c, root, "", "correlations", T_ARR);
  for (size_t i = 0; corr && i < json_array_size(corr); i++) {
    snprintf(w, sizeof w, "correlations[%zu]", i);
    json_t *e = element(c, corr, "correlations", i, T_OBJ);
    field(c, e, w, "a", T_STR);
    field(c, e, w, "b", T_STR);
    field(c, e, w, "spearman", T_NUM);
  }
  json_t *o = field(c, root, "", "options", T_OBJ);
  field(c, o, "options", "method", T_STR);
  field(c, o, "options", "seed", T_INT);
  field(c, o, "options", "generator", T_STR | T_NULL);
  static const char *const okeys[] = {"samples_requested", "block", "replicates",
                                      "adaptive_digits", "sobol_samples", "threads"};
  for (size_t i = 0; i < 6; i++) field(c, o, "options", okeys[i], T_INT);
  field(c, o, "options", "coverage", T_NUM);
  static const char *const ok2[] = {"histogram_bins", "max_samples", "sobol_bootstrap"};
  for (size_t i = 0; i < 3; i++) field(c, o, "options", ok2[i], T_INT);
  field(c, o, "options", "limit_confidence", T_NUM);
  field(c, o, "options", "index_confidence", T_NUM);
  json_t *xp = field(c, o, "options", "extra_percentiles", T_ARR);
  for (size_t i = 0; xp && i < json_array_size(xp); i++)
    element(c, xp, "options.extra_percentiles", i, T_NUM);
  json_t *hr = field(c, o, "options", "histogram_range", T_ARR | T_NULL);
  for (size_t i = 0; json_is_array(hr) && i < json_array_size(hr); i++)
    element(c, hr, "options.histogram_range", i, T_NUM | T_NULL);
  json_t *tl = field(c, o, "options", "tolerances", T_ARR | T_NULL);
  for (size_t i = 0; json_is_array(tl) && i < json_array_size(tl); i++)
    element(c, tl, "options.tolerances", i, T_NUM);
  json_t *res = field(c, root, "", "results", T_OBJ);
  field(c, res, "results", "status", T_STR);
  field(c, res, "results", "samples", T_INT);
  field(c, res, "results", "sem_kind", T_STR);
  field(c, res, "results", "batches", T_INT);
  field(c, res, "results", "batch_size", T_INT);
  json_t *outs = field(c, res, "results", "outputs", T_ARR);
  for (size_t j = 0; outs && j < json_array_size(outs); j++) {
    snprintf(w, sizeof w, "results.outputs[%zu]", j);
    json_t *x = element(c, outs, "results.outputs", j, T_OBJ);
    field(c, x, w, "name", T_STR);
    field(c, x, w, "unit", T_STR);
    static const char *const ik[] = {"n", "nan", "posinf", "neginf"};
    for (size_t i = 0; i < 4; i++) field(c, x, w, ik[i], T_INT);
    static const char *const nk[] = {"mean", "sd", "sem", "min", "max", "skewness",
                                     "excess_kurtosis"};
    for (size_t i = 0; i < 7; i++) field(c, x, w, nk[i], T_NUM | T_NULL);
    snprintf(w2, sizeof w2, "%s.coverage_interval", w);
    json_t *ci = field(c, x, w, "coverage_interval", T_OBJ);
    field(c, ci, w2, "coverage", T_NUM);
    static const char *const ck[] = {"symmetric", "shortest"};
    for (size_t i = 0; i < 2; i++) {
      json_t *a = field(c, ci, w2, ck[i], T_ARR);
      char w3[200];
      snprintf(w3, sizeof w3, "%s.%s", w2, ck[i]);
      if (a && json_array_size(a) != 2 && c->st == SP_OK)
        return cfail(c, w3, "field '%s' must hold two numbers", w3);
      for (size_t e = 0; a && e < 2; e++) element(c, a, w3, e, T_NUM | T_NULL);
    }
    snprintf(w2, sizeof w2, "%s.percentiles", w);
    json_t *pct = field(c, x, w, "percentiles", T_ARR);
    for (size_t k = 0; pct && k < json_array_size(pct); k++) {
      char w3[200];
      snprintf(w3, sizeof w3, "%s[%zu]", w2, k);
      json_t *e = element(c, pct, w2, k, T_OBJ);
      field(c, e, w3, "p", T_NUM);
      field(c, e, w3, "value", T_NUM | T_NULL);
    }
    snprintf(w2, sizeof w2, "%s.histogram", w);
    json_t *h = field(c, x, w, "histogram", T_OBJ);
    field(c, h, w2, "lo", T_NUM | T_NULL);
    field(c, h, w2, "hi", T_NUM | T_NULL);
    field(c, h, w2, "below", T_INT);
    field(c, h, w2, "above", T_INT);
    json_t *cnt = field(c, h, w2, "counts", T_ARR);
    char w3[200];
    snprintf(w3, sizeof w3, "%s.counts", w2);
    for (size_t k = 0; cnt && k < json_array_size(cnt); k++) element(c, cnt, w3, k, T_INT);
    snprintf(w2, sizeof w2, "%s.sensitivity", w);
    json_t *sens = field(c, x, w, "sensitivity", T_ARR);
    for (size_t k = 0; sens && k < json_array_size(sens); k++) {
      snprintf(w3, sizeof w3, "%s[%zu]", w2, k);
      json_t *e = element(c, sens, w2, k, T_OBJ);
      field(c, e, w3, "input", T_STR);
      field(c, e, w3, "spearman", T_NUM | T_NULL);
      field(c, e, w3, "share", T_NUM | T_NULL);
      static const char *const sk[] = {"S", "ST"};
      for (size_t s = 0; e && s < 2; s++) {
        if (!json_object_get(e, sk[s])) continue;
        char w4[240];
        snprintf(w4, sizeof w4, "%s.%s", w3, sk[s]);
        json_t *ix = field(c, e, w3, sk[s], T_OBJ);
        static const char *const xk[] = {"value", "lo", "hi", "se"};
        for (size_t q = 0; q < 4; q++) field(c, ix, w4, xk[q], T_NUM | T_NULL);
      }
    }
  }
  json_t *lims = field(c, res, "results", "limits", T_ARR);
  for (size_t k = 0; lims && k < json_array_size(lims); k++) {
    snprintf(w, sizeof w, "results.limits[%zu]", k);
    json_t *l = element(c, lims, "results.limits", k, T_OBJ);
    field(c, l, w, "output", T_STR);
    field(c, l, w, "requirement", T_STR);
    field(c, l, w, "value", T_NUM);
    field(c, l, w, "unit", T_STR);
    field(c, l, w, "violations", T_INT);
    field(c, l, w, "n", T_INT);
    field(c, l, w, "p_violation", T_NUM | T_NULL);
    json_t *iv = field(c, l, w, "interval", T_ARR);
    snprintf(w2, sizeof w2, "%s.interval", w);
    if (iv && json_array_size(iv) != 2 && c->st == SP_OK)
      return cfail(c, w2, "field '%s' must hold two numbers", w2);
    for (size_t e = 0; iv && e < 2; e++) element(c, iv, w2, e, T_NUM | T_NULL);
    field(c, l, w, "interval_kind", T_STR);
    field(c, l, w, "confidence", T_NUM);
  }
  return c->st;
}

/* The fields of a fit record the report reads beyond those that
 * sp_record_fit_read validates (the candidates' table and the lots). */
static sp_status check_candidates(checker *c, const json_t *cands, const char *where)
{
  char w[200];
  for (size_t i = 0; i < json_array_size(cands); i++) {
    snprintf(w, sizeof w, "%s[%zu]", where, i);
    json_t *e = element(c, cands, where, i, T_OBJ);
    field(c, e, w, "family", T_STR);
    field(c, e, w, "status", T_STR);
    field(c, e, w, "reason", T_STR | T_NULL);
    field(c, e, w, "params", T_OBJ | T_NULL);
    field(c, e, w, "rank", T_INT | T_NULL);
    field(c, e, w, "rejected", T_BOOL);
    static const char *const nk[] = {"loglik", "aicc", "bic"};
    for (size_t k = 0; k < 3; k++) field(c, e, w, nk[k], T_NUM | T_NULL);
    json_t *g = field(c, e, w, "gof", T_OBJ | T_NULL);
    if (json_is_object(g)) {
      char w2[240];
      snprintf(w2, sizeof w2, "%s.gof", w);
      json_t *a2 = field(c, g, w2, "A2", T_OBJ);
      char w3[260];
      snprintf(w3, sizeof w3, "%s.A2", w2);
      field(c, a2, w3, "stat", T_NUM | T_NULL);
      field(c, a2, w3, "p", T_NUM | T_NULL);
      field(c, a2, w3, "bound", T_STR | T_NULL);
    }
  }
  return c->st;
}

static sp_status check_fit_record(checker *c, const json_t *root)
{
  json_t *data = field(c, root, "", "data", T_OBJ);
  field(c, data, "data", "path", T_STR);
  field(c, data, "data", "size", T_INT);
  check_hex(c, data, "data", "sha256");
  field(c, data, "data", "column", T_STR);
  field(c, data, "data", "n", T_INT);
  json_t *meta = field(c, data, "data", "metadata", T_ARR);
  for (size_t i = 0; meta && i < json_array_size(meta); i++) {
    char w[64];
    snprintf(w, sizeof w, "data.metadata[%zu]", i);
    json_t *m = element(c, meta, "data.metadata", i, T_OBJ);
    field(c, m, w, "key", T_STR);
    field(c, m, w, "value", T_STR);
  }
  json_t *o = field(c, root, "", "options", T_OBJ);
  json_t *fam = field(c, o, "options", "families", T_ARR);
  for (size_t i = 0; fam && i < json_array_size(fam); i++)
    element(c, fam, "options.families", i, T_STR);
  field(c, o, "options", "select", T_STR);
  field(c, o, "options", "alpha", T_NUM);
  field(c, o, "options", "pvalue_method", T_STR);
  json_t *bs = field(c, o, "options", "bootstrap", T_OBJ);
  field(c, bs, "options.bootstrap", "B", T_INT);
  field(c, bs, "options.bootstrap", "seed", T_INT | T_STR);
  field(c, root, "", "choice_reason", T_STR | T_NULL);
  json_t *cands = field(c, root, "", "candidates", T_ARR);
  if (cands) check_candidates(c, cands, "candidates");
  json_t *by = field(c, root, "", "by", T_OBJ | T_NULL);
  if (json_is_object(by)) {
    field(c, by, "by", "column", T_STR);
    json_t *g = field(c, by, "by", "groups", T_ARR);
    for (size_t i = 0; g && i < json_array_size(g); i++) {
      char w[64];
      snprintf(w, sizeof w, "by.groups[%zu]", i);
      json_t *e = element(c, g, "by.groups", i, T_OBJ);
      field(c, e, w, "value", T_STR);
      field(c, e, w, "n", T_INT);
      field(c, e, w, "status", T_STR);
      field(c, e, w, "message", T_STR | T_NULL);
      json_t *ch = field(c, e, w, "chosen", T_OBJ | T_NULL);
      if (json_is_object(ch)) {
        char w2[96];
        snprintf(w2, sizeof w2, "%s.chosen", w);
        field(c, ch, w2, "family", T_STR);
        field(c, ch, w2, "params", T_OBJ);
      }
    }
  }
  return c->st;
}

/* ---- files ---------------------------------------------------------------- */

static int readable(const char *path) { return access(path, R_OK) == 0; }

/* The JSON of a record file, opened by sp_file_open_input (a regular file
 * of at most 256 MiB, so a pipe cannot block and a device cannot fill
 * memory).  NULL with *opened 0 and err set when it cannot be opened; NULL
 * with *opened 1 and je set when it is not JSON. */
static json_t *load_record(const char *path, const char *what, int *opened, json_error_t *je,
                           sp_error *err)
{
  *opened = 0;
  FILE *fp = sp_file_open_input(path, what, (uint64_t)256 << 20, err);
  if (!fp) return NULL;
  *opened = 1;
  json_t *root = json_loadf(fp, JSON_REJECT_DUPLICATES, je);
  fclose(fp);
  return root;
}

/* The folder part of path ("." when it has none), into buf. */
static void dir_of(const char *path, char *buf, size_t n)
{
  const char *slash = strrchr(path, '/');
  if (!slash) snprintf(buf, n, ".");
  else if (slash == path) snprintf(buf, n, "/");
  else snprintf(buf, n, "%.*s", (int)(slash - path), path);
}

/* path as shown in the report: relative to the current folder when it
 * lies below it (a path found through the folder a record was made in is
 * absolute), else as it is. */
static const char *shown_path(pool *p, const char *path)
{
  char cwd[SP_PLOT_PATH_MAX];
  if (!getcwd(cwd, sizeof cwd)) return path;
  size_t n = strlen(cwd);
  if (n > 1 && strncmp(path, cwd, n) == 0 && path[n] == '/' && path[n + 1] != '\0')
    return pool_str(p, path + n + 1);
  return path;
}

/* Removes the files of a folder this module made, then the folder. */
static void remove_tree(const char *dir)
{
  DIR *d = opendir(dir);
  if (d) {
    struct dirent *e;
    char p[SP_PLOT_PATH_MAX + 256];
    while ((e = readdir(d)) != NULL) {
      if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0) continue;
      snprintf(p, sizeof p, "%s/%s", dir, e->d_name);
      unlink(p);
    }
    closedir(d);
  }
  rmdir(dir);
}

/* A shell-like rendering of a command line: words with characters a shell
 * would read specially are single-quoted. */
static char *join_command(pool *p, const json_t *words, const char *prefix)
{
  size_t cap = strlen(prefix) + 1;
  for (size_t i = 0; i < json_array_size(words); i++)
    cap += 4 * strlen(json_string_value(json_array_get(words, i))) + 4;
  char *s = pool_keep(p, malloc(cap));
  if (!s) return NULL;
  size_t n = (size_t)snprintf(s, cap, "%s", prefix);
  for (size_t i = 0; i < json_array_size(words); i++) {
    const char *w = json_string_value(json_array_get(words, i));
    int plain = *w != '\0';
    for (const char *c = w; *c; c++)
      if (!((*c >= 'a' && *c <= 'z') || (*c >= 'A' && *c <= 'Z') || (*c >= '0' && *c <= '9') ||
            strchr("-_./=,:+@%", *c)))
        plain = 0;
    if (n > 0) s[n++] = ' ';
    if (plain) {
      n += (size_t)snprintf(s + n, cap - n, "%s", w);
    } else {
      s[n++] = '\'';
      for (const char *c = w; *c; c++) {
        if (*c == '\'') {
          memcpy(s + n, "'\\''", 4);
          n += 4;
        } else {
          s[n++] = *c;
        }
      }
      s[n++] = '\'';
      s[n] = '\0';
    }
  }
  return s;
}

/* ---- fit sources ------------------------------------------------------------ */

typedef struct {
  char *path;           /* the fit record as opened (resolved at run time) */
  const char *written;  /* as the model wrote it */
  char sha[SP_SHA256_HEX_LEN];
  uint64_t size;
  json_t *root;
  sp_record_fit rec;
  int have_rec;
  char *data_path;      /* the data file as opened */
  char data_sha[SP_SHA256_HEX_LEN];
  sp_table *table;
  const sp_column *col;
  double *x;            /* the fitted (non-missing) values */
  size_t n;
  const char *by;       /* lot column, or NULL */
  sp_summary_set *summary;
  char inputs[256];     /* the model inputs that use it */
} fitsrc;

static void fitsrc_clear(fitsrc *f)
{
  free(f->path);
  json_decref(f->root);
  if (f->have_rec) sp_record_fit_clear(&f->rec);
  free(f->data_path);
  sp_summary_set_free(f->summary);
  sp_table_free(f->table);
  free(f->x);
  memset(f, 0, sizeof *f);
}

/* Opens fit record fr (the run record's inputs[i].fit_record) and its
 * data, checking both SHA-256. */
static sp_status open_fit(fitsrc *f, const json_t *fr, const char *resolved,
                          const char *input_name, sp_error *err)
{
  f->written = gstr(fr, "path");
  f->path = strdup(resolved);
  if (!f->path) return sp_fail(err, SP_ENOMEM, "out of memory");
  snprintf(f->inputs, sizeof f->inputs, "%s", input_name);
  if (!readable(resolved))
    return sp_fail(err, SP_EIO, "fit record %s of input %s cannot be read: %s", resolved,
                   input_name, strerror(errno));
  sp_status st = sp_sha256_file(resolved, f->sha, &f->size, err);
  if (st != SP_OK) return st;
  if (strcmp(f->sha, gstr(fr, "sha256")) != 0) {
    sp_fail(err, SP_EDATA, "fit record %s has changed since the run: its SHA-256 is %s, the "
                           "run record says %s",
            resolved, f->sha, gstr(fr, "sha256"));
    return sp_error_hint(err, "make the report from the records of one analysis, or run "
                              "'scatterprop propagate' again");
  }
  st = sp_record_fit_read(resolved, &f->rec, err);
  if (st != SP_OK) return st;
  f->have_rec = 1;
  json_error_t je;
  f->root = json_load_file(resolved, 0, &je);
  if (!f->root)
    return sp_fail_at(err, SP_EDATA, resolved, je.line, je.column,
                      "fit record is not valid JSON: %s", je.text);
  checker c = {"fit record", resolved, err, SP_OK};
  if ((st = check_fit_record(&c, f->root)) != SP_OK) return st;
  json_t *data = json_object_get(f->root, "data");
  const char *dsha = gstr(data, "sha256");
  const char *rsha = gstr(fr, "data_sha256");
  if (rsha && strcmp(rsha, dsha) != 0)
    return sp_fail(err, SP_EDATA, "fit record %s names data with SHA-256 %s, the run record "
                                  "says %s",
                   resolved, dsha, rsha);
  /* The data path is as given to 'scatterprop fit': found as the replay
   * module finds it (relative to the record's folder in an archive, else to
   * the folder the fit ran in, else to the current one); failing that, the
   * fit record's folder is tried. */
  int exists = 0;
  char *located = sp_replay_locate(resolved, f->root, gstr(data, "path"), &exists);
  if (!located) return sp_fail(err, SP_ENOMEM, "out of memory");
  char dpath[SP_PLOT_PATH_MAX];
  snprintf(dpath, sizeof dpath, "%s", located);
  free(located);
  const char *dp = dpath;
  char alt[2 * SP_PLOT_PATH_MAX + 2] = "";
  if (!readable(dp) && dp[0] != '/') {
    char d[SP_PLOT_PATH_MAX];
    dir_of(resolved, d, sizeof d);
    snprintf(alt, sizeof alt, "%s/%s", d, gstr(data, "path"));
    if (readable(alt)) dp = alt;
  }
  if (!readable(dp)) {
    sp_fail(err, SP_EIO, "data file %s of fit record %s cannot be read: %s%s%s", dp, resolved,
            strerror(errno), alt[0] ? "; also tried " : "", alt);
    return sp_error_hint(err, "the path is the one given to 'scatterprop fit'; make the report "
                              "from the folder the fit was run in");
  }
  f->data_path = strdup(dp);
  if (!f->data_path) return sp_fail(err, SP_ENOMEM, "out of memory");
  /* The lot column is read as text when it has no unit (lots numbered
   * 117, 131 group as they did in the fit). */
  json_t *by = json_object_get(f->root, "by");
  f->by = json_is_object(by) ? gstr(by, "column") : NULL;
  sp_ingest_options io;
  sp_ingest_options_init(&io);
  if (f->by) {
    io.text_columns = &f->by;
    io.ntext_columns = 1;
  }
  st = sp_table_read(dp, &io, &f->table, err);
  if (st != SP_OK) return st;
  memcpy(f->data_sha, f->table->sha256, sizeof f->data_sha);
  if (strcmp(f->data_sha, dsha) != 0) {
    sp_fail(err, SP_EDATA, "data file %s has changed since fit record %s was written: its "
                           "SHA-256 is %s, the fit record says %s",
            dp, resolved, f->data_sha, dsha);
    return sp_error_hint(err, "fit the changed data again ('scatterprop fit') and propagate "
                              "again, or restore the data file");
  }
  const char *colname = gstr(data, "column");
  f->col = sp_table_column(f->table, colname);
  if (!f->col || f->col->kind != SP_COLUMN_NUMERIC)
    return sp_fail(err, SP_EDATA, "data file %s has no numeric column '%s' (fit record %s)", dp,
                   colname, resolved);
  f->x = malloc((f->col->n ? f->col->n : 1) * sizeof *f->x);
  if (!f->x) return sp_fail(err, SP_ENOMEM, "out of memory");
  for (size_t i = 0; i < f->col->n; i++)
    if (!(f->col->flags[i] & SP_OBS_MISSING)) f->x[f->n++] = f->col->values[i];
  if ((uint64_t)f->n != guint(data, "n"))
    return sp_fail(err, SP_EDATA, "data file %s gives %zu values of '%s', fit record %s says "
                                  "%llu",
                   dp, f->n, colname, resolved, (unsigned long long)guint(data, "n"));
  const char *cols[1] = {colname};
  return sp_summary_build(f->table, cols, 1, f->by, &f->summary, err);
}

/* ---- the repeated run ------------------------------------------------------- */

/* The repeated run's record against the recorded one, by the rules of the
 * replay module (replay.h: the same fields compared, the same ignored):
 * bit for bit when the record names this build, else within
 * SP_REPLAY_DEFAULT_TOLERANCE.  *tol receives the tolerance applied. */
static sp_status compare_with_record(const json_t *root, const sp_run *run,
                                     const sp_run_options *ro, const char *file, double *tol,
                                     sp_error *err)
{
  char *text = sp_run_record_json(run, ro, 0, NULL, 0, err);
  if (!text) return err ? err->code : SP_ENOMEM;
  json_error_t je;
  json_t *fresh = json_loads(text, 0, &je);
  free(text);
  if (!fresh) return sp_fail(err, SP_ENOMEM, "cannot read back the repeated run's record");
  sp_replay_report rep;
  memset(&rep, 0, sizeof rep);
  sp_replay_check_build(root, &rep);
  *tol = rep.build_differs ? SP_REPLAY_DEFAULT_TOLERANCE : 0.0;
  sp_status st = sp_replay_compare_trees(root, fresh, SP_REPLAY_RUN, *tol, &rep, err);
  if (st == SP_OK && rep.ndiffs_total > 0) {
    const sp_replay_diff *d = &rep.diffs[0];
    char more[64] = "";
    if (rep.ndiffs_total > 1)
      snprintf(more, sizeof more, " (and %zu more figure%s)", rep.ndiffs_total - 1,
               rep.ndiffs_total == 2 ? "" : "s");
    st = sp_fail(err, SP_EDIFFERS, "repeating the run does not reproduce run record %s: %s is "
                                   "%s in the record, %s now%s",
                 file, d->path, d->recorded, d->replayed, more);
    if (rep.build_note[0])
      sp_error_hint(err, "the record was made by another build (%s); 'scatterprop replay "
                         "%s' lists every difference; charts drawn by 'propagate --plots "
                         "DIR' can be used with --plots DIR",
                    rep.build_note, file);
    else
      sp_error_hint(err, "'scatterprop replay %s' lists every difference; charts drawn by "
                         "'propagate --plots DIR' can be used with --plots DIR",
                    file);
  }
  sp_replay_report_clear(&rep);
  json_decref(fresh);
  return st;
}

/* Arrays of the repeated run's options (owned, free()). */
typedef struct {
  double *pct, *hr, *tol;
} run_arrays;

static double *num_array(const json_t *a, size_t *n)
{
  *n = json_array_size(a);
  double *v = malloc((*n ? *n : 1) * sizeof *v);
  for (size_t i = 0; v && i < *n; i++) v[i] = anum(a, i);
  return v;
}

/* Repeats the run from the record into *out (the model at model_path).
 * check: for 'scatterprop plot', the options of the charts to draw,
 * checked (sp_runplot_check) before the run is executed; NULL for the
 * report (which draws into a fresh folder of its own). */
static sp_status repeat_run(const json_t *root, const char *file, const char *model_path,
                            int threads, const sp_runplot_options *check, sp_run **out,
                            sp_run_options *ro, run_arrays *ar, sp_error *err)
{
  *out = NULL;
  const json_t *model = json_object_get(root, "model"), *o = json_object_get(root, "options");
  if (!readable(model_path)) {
    sp_fail(err, SP_EIO, "model %s of run record %s cannot be read: %s", model_path, file,
            strerror(errno));
    if (check)
      return sp_error_hint(err, "the model path is the one given to 'scatterprop propagate'; "
                                "run 'scatterprop plot' from the folder it was run in");
    return sp_error_hint(err, "the model path is the one given to 'scatterprop propagate'; "
                              "make the report from the folder it was run in, or give "
                              "--plots DIR");
  }
  sp_model_diags diags;
  sp_model_diags_init(&diags);
  sp_run *run = NULL;
  sp_status st = sp_run_open(model_path, &run, &diags, err);
  if (st != SP_OK && diags.count > 0) {
    char buf[2048];
    sp_model_diag_format(&diags.items[0], buf, sizeof buf);
    sp_fail(err, SP_EMODEL, "the model of run record %s no longer compiles: %s", file, buf);
  }
  sp_model_diags_clear(&diags);
  if (st != SP_OK) return st;
  if (strcmp(sp_model_sha256(sp_run_model(run)), gstr(model, "sha256")) != 0) {
    sp_fail(err, SP_EDATA, "model %s has changed since the run: its SHA-256 is %s, run record "
                           "%s says %s",
            model_path, sp_model_sha256(sp_run_model(run)), file, gstr(model, "sha256"));
    sp_run_free(run);
    return sp_error_hint(err, "restore the model, or run 'scatterprop propagate' again");
  }
  /* The recorded options, as the replay module reads them. */
  sp_run_options_init(ro);
  sp_engine_options *eo = &ro->engine;
  sp_error me;
  sp_error_clear(&me);
  if (sp_engine_method_find(gstr(o, "method"), &eo->method, &me) != SP_OK) {
    sp_run_free(run);
    char what[SP_ERROR_MSG_MAX + 16];
    snprintf(what, sizeof what, "is wrong: %.1000s", me.msg);
    return field_fail(err, "run record", file, "options.method", what);
  }
  eo->seed = guint(o, "seed");
  eo->samples = guint(o, "samples_requested");
  eo->block = (size_t)guint(o, "block");
  eo->replicates = (size_t)guint(o, "replicates");
  eo->coverage = gnum(o, "coverage");
  eo->adaptive_digits = (unsigned)guint(o, "adaptive_digits");
  ro->sobol_samples = guint(o, "sobol_samples");
  eo->hist_bins = (size_t)guint(o, "histogram_bins");
  eo->max_samples = guint(o, "max_samples");
  eo->limit_confidence = gnum(o, "limit_confidence");
  eo->bootstrap = (size_t)guint(o, "sobol_bootstrap");
  eo->index_confidence = gnum(o, "index_confidence");
  size_t n = 0, nout = sp_model_output_count(sp_run_model(run));
  ar->pct = num_array(json_object_get(o, "extra_percentiles"), &n);
  eo->percentiles = ar->pct;
  eo->npercentiles = n;
  const json_t *hr = json_object_get(o, "histogram_range");
  if (json_is_array(hr)) {
    ar->hr = num_array(hr, &n);
    eo->hist_range = ar->hr;
    if (n != 2 * nout) {
      char what[64];
      snprintf(what, sizeof what, "must hold 2 x %zu numbers", nout);
      st = field_fail(err, "run record", file, "options.histogram_range", what);
    }
  }
  const json_t *tl = json_object_get(o, "tolerances");
  if (json_is_array(tl)) {
    ar->tol = num_array(tl, &n);
    eo->tolerance = ar->tol;
    if (n != nout) {
      char what[64];
      snprintf(what, sizeof what, "must hold %zu numbers", nout);
      st = field_fail(err, "run record", file, "options.tolerances", what);
    }
  }
  if (!ar->pct || (json_is_array(hr) && !ar->hr) || (json_is_array(tl) && !ar->tol))
    st = sp_fail(err, SP_ENOMEM, "out of memory");
  eo->threads = threads;
  eo->keep_samples = 1;
  /* Charts that could not be drawn are found before the run, not after. */
  if (st == SP_OK && check) st = sp_runplot_check(sp_run_model(run), check, err);
  if (st == SP_OK) st = sp_run_execute(run, ro, err);
  if (st == SP_ENOMEM && check)
    sp_error_hint(err, "the charts need every sample of the run in memory; 'propagate --plots "
                       "DIR' draws them while the run is made");
  else if (st == SP_ENOMEM)
    sp_error_hint(err, "the report repeats the run keeping every sample for its charts; draw "
                       "them with 'propagate --plots DIR' and give the report --plots DIR");
  if (st != SP_OK) {
    sp_run_free(run);
    return st;
  }
  *out = run;
  return SP_OK;
}

/* ---- charts of the fits ------------------------------------------------------ */

typedef struct {
  const char *workdir;  /* where charts are drawn */
  const char *gnuplot;
  const char *template_dir;
  int have_gnuplot;
  const char *no_render_note;
} chart_env;

/* A figure for a chart call's outcome. */
static void figure_of(builder *b, const chart_env *env, const sp_plot_output *out,
                      const char *caption)
{
  add_figure(b, out->rendered ? out->svg : NULL, caption,
             out->rendered ? NULL : env->no_render_note);
}

/* The fit's charts by the fitplot module, from the data already read and
 * checked: the charts of the whole column (pooled over the lots) and the
 * lots side by side.  The per-lot charts are left to 'scatterprop plot'. */
static sp_status fit_charts(builder *b, const chart_env *env, const fitsrc *f, sp_error *err)
{
  sp_fitplot_plan plan;
  memset(&plan, 0, sizeof plan);
  sp_status st = sp_fitplot_plan_read(f->path, &plan, NULL, err);
  if (st != SP_OK) return st;
  sp_plot_options po;
  sp_plot_options_init(&po);
  po.outdir = env->workdir;
  po.overwrite = 1;
  po.gnuplot = env->gnuplot;
  po.template_dir = env->template_dir;
  sp_fitplot_charts charts;
  memset(&charts, 0, sizeof charts);
  st = sp_fitplot_draw(&plan, f->table, &po, &charts, err);
  const char *col = f->col->name;
  for (size_t i = 0; st == SP_OK && i < charts.ncharts; i++) {
    const sp_fitplot_chart *c = &charts.charts[i];
    if (c->one_lot) continue;
    const char *cap = NULL;
    switch (c->kind) {
    case SP_FITPLOT_HIST:
      cap = pool_fmt(&b->p, "%s: histogram of the %zu values (density) with the chosen fit "
                            "(solid) and the best-ranked candidates not rejected (dashed).",
                     col, f->n);
      break;
    case SP_FITPLOT_PROB:
      cap = pool_fmt(&b->p, "%s: ordered values against the quantiles of the chosen %s fit at "
                            "the Hazen plotting positions (i - 0.5)/n, with a pointwise 95 %% "
                            "band.",
                     col, f->rec.family->title);
      break;
    case SP_FITPLOT_ECDF:
      cap = pool_fmt(&b->p, "%s: empirical distribution function of the values with the "
                            "CDFs of the fits drawn in the histogram.",
                     col);
      break;
    case SP_FITPLOT_LOTS:
      cap = pool_fmt(&b->p, "%s: empirical CDF of each %s, with the chosen fit to all of "
                            "them pooled (dashed).",
                     col, f->by ? f->by : "lot");
      break;
    }
    if (!c->drawn) add_figure(b, NULL, cap, c->note);
    else figure_of(b, env, &c->out, cap);
  }
  sp_fitplot_charts_free(&charts);
  sp_fitplot_plan_clear(&plan);
  return st;
}

/* ---- sections ------------------------------------------------------------------ */

static void section_summary(builder *b, const json_t *root)
{
  const json_t *rs = json_object_get(root, "results"), *o = json_object_get(root, "options");
  const json_t *outs = json_object_get(rs, "outputs"), *lims = json_object_get(rs, "limits");
  add_section(b, 1, "Summary");
  add_para(b, "Monte Carlo propagation of the model %s: %llu samples by the %s method, seed "
              "%llu; the run is %s.",
           gstr(json_object_get(root, "model"), "path"),
           (unsigned long long)guint(rs, "samples"), gstr(o, "method"),
           (unsigned long long)guint(o, "seed"), gstr(rs, "status"));
  static const char *const head[] = {"output", "unit", "mean \u00b1 standard error",
                                     "standard deviation", "coverage interval"};
  size_t no = json_array_size(outs);
  sp_report_table *t = add_table(b, "Key results: each output's mean with its Monte Carlo "
                                    "standard error, and the probabilistically symmetric "
                                    "coverage interval.",
                                 5, no, head, "llrrr");
  for (size_t j = 0; j < no; j++) {
    const json_t *x = json_array_get(outs, j);
    int dec = mc_decimals(gnum(x, "sem"));
    char a[64], s[64], c[160], lo[64], hi[64];
    fmt_dec(a, sizeof a, dec, gnum(x, "mean"));
    fmt_dec(s, sizeof s, dec, gnum(x, "sem"));
    const json_t *ci = json_object_get(x, "coverage_interval");
    const json_t *sy = json_object_get(ci, "symmetric");
    fmt_dec(lo, sizeof lo, dec, anum(sy, 0));
    fmt_dec(hi, sizeof hi, dec, anum(sy, 1));
    snprintf(c, sizeof c, "%g %%: [%s, %s]", 100 * gnum(ci, "coverage"), lo, hi);
    set_cell(b, t, j, 0, gstr(x, "name"));
    set_cell(b, t, j, 1, gstr(x, "unit"));
    set_cell(b, t, j, 2, pool_fmt(&b->p, "%s \u00b1 %s", a, s));
    fmt_dec(a, sizeof a, dec, gnum(x, "sd"));
    set_cell(b, t, j, 3, a);
    set_cell(b, t, j, 4, c);
  }
  size_t nl = json_array_size(lims);
  if (nl == 0) return;
  static const char *const lh[] = {"requirement", "probability of violation", "interval"};
  t = add_table(b, "The chance of violating each limit, with its interval.", 3, nl, lh, "lrr");
  for (size_t k = 0; k < nl; k++) {
    const json_t *l = json_array_get(lims, k);
    const json_t *iv = json_object_get(l, "interval");
    char p[64], lo[64], hi[64];
    fmt_g(p, sizeof p, 'g', 3, gnum(l, "p_violation"));
    fmt_g(lo, sizeof lo, 'g', 3, anum(iv, 0));
    fmt_g(hi, sizeof hi, 'g', 3, anum(iv, 1));
    set_cell(b, t, k, 0,
             pool_fmt(&b->p, "%s %s %.6g %s", gstr(l, "output"), gstr(l, "requirement"),
                      gnum(l, "value"), gstr(l, "unit")));
    set_cell(b, t, k, 1, p);
    set_cell(b, t, k, 2,
             pool_fmt(&b->p, "%g %%: [%s, %s]", 100 * gnum(l, "confidence"), lo, hi));
  }
}

static void section_data(builder *b, const fitsrc *fits, size_t nf)
{
  add_section(b, 1, "Data");
  if (nf == 0) {
    add_para(b, "No input of the model was fitted to data: every distribution is stated in "
                "the model.");
    return;
  }
  add_para(b, "Each data file was read again and its SHA-256 checked against its fit record "
              "before it was summarised. Standard deviations use the n - 1 denominator; "
              "quartiles are Hyndman & Fan's definition 7; missing readings are counted, "
              "not used.");
  for (size_t k = 0; k < nf; k++) {
    const fitsrc *f = &fits[k];
    const sp_summary_block *blk = &f->summary->blocks[0];
    add_section(b, 2, pool_fmt(&b->p, "%s%s%s%s in %s", f->col->name, f->col->unit_text ? " [" : "",
                               f->col->unit_text ? f->col->unit_text : "",
                               f->col->unit_text ? "]" : "", shown_path(&b->p, f->data_path)));
    const json_t *meta = json_object_get(json_object_get(f->root, "data"), "metadata");
    size_t nm = json_array_size(meta);
    if (nm > 0) {
      sp_report_fact *facts = calloc(nm, sizeof *facts);
      if (!facts) {
        b->p.oom = 1;
        return;
      }
      for (size_t i = 0; i < nm; i++) {
        const json_t *m = json_array_get(meta, i);
        facts[i].key = *gstr(m, "key") ? gstr(m, "key") : "note";
        facts[i].value = gstr(m, "value");
      }
      add_facts(b, facts, nm);
      free(facts);
    }
    static const char *const head[] = {"lot", "n",      "missing", "mean", "sd", "min",
                                       "Q1",  "median", "Q3",      "max",  "g1", "g2"};
    const char *h[12];
    memcpy(h, head, sizeof h);
    h[0] = f->by ? f->by : "values";
    sp_report_table *t = add_table(
        b, pool_fmt(&b->p, "%s%s%s: summary (sd with n - 1; g1 skewness, g2 excess kurtosis).",
                    f->col->name, f->by ? " by " : "", f->by ? f->by : ""),
        12, blk->nrows, h, "lrrrrrrrrrrr");
    for (size_t r = 0; r < blk->nrows; r++) {
      const sp_summary_row *row = &blk->rows[r];
      char v[64];
      set_cell(b, t, r, 0, row->group ? row->group : (f->by ? "all lots" : "all"));
      set_cell(b, t, r, 1, pool_fmt(&b->p, "%zu", row->has_stats ? row->d.n : (size_t)0));
      set_cell(b, t, r, 2, pool_fmt(&b->p, "%zu", row->missing));
      if (!row->has_stats) continue;
      const double vals[] = {row->d.mean, row->d.sd,     row->d.min, row->d.q1,
                             row->d.median, row->d.q3,   row->d.max};
      for (size_t c = 0; c < 7; c++) {
        fmt_dec(v, sizeof v, blk->decimals, vals[c]);
        set_cell(b, t, r, 3 + c, v);
      }
      fmt_g(v, sizeof v, 'f', 2, row->d.skewness);
      set_cell(b, t, r, 10, v);
      fmt_g(v, sizeof v, 'f', 2, row->d.kurtosis);
      set_cell(b, t, r, 11, v);
    }
  }
}

static char *params_text(pool *p, const sp_family *fam, const json_t *params)
{
  char buf[512] = "";
  size_t n = 0;
  for (size_t k = 0; fam && k < fam->nparam && n < sizeof buf; k++) {
    const json_t *v = json_object_get(params, fam->param_names[k]);
    if (!json_is_number(v)) continue;
    n += (size_t)snprintf(buf + n, sizeof buf - n, "%s%s = %.6g", n ? ", " : "",
                          fam->param_names[k], json_number_value(v));
  }
  return pool_str(p, buf);
}

static void candidates_table(builder *b, const json_t *cands, const char *chosen,
                             const char *caption)
{
  size_t nc = json_array_size(cands);
  static const char *const head[] = {"rank", "family", "parameters", "log L", "AICc",
                                     "BIC",  "A\u00b2",  "p (A\u00b2)", "verdict"};
  sp_report_table *t = add_table(b, caption, 9, nc, head, "rllrrrrrl");
  /* Ranked candidates first, by rank; then the others in record order. */
  size_t *order = malloc((nc ? nc : 1) * sizeof *order);
  if (!order) {
    b->p.oom = 1;
    return;
  }
  size_t no = 0;
  for (long rank = 1; rank <= (long)nc; rank++)
    for (size_t i = 0; i < nc; i++) {
      const json_t *rk = json_object_get(json_array_get(cands, i), "rank");
      if (json_is_integer(rk) && json_integer_value(rk) == rank) order[no++] = i;
    }
  for (size_t i = 0; i < nc && no < nc; i++) {
    const json_t *rk = json_object_get(json_array_get(cands, i), "rank");
    if (!json_is_integer(rk) || json_integer_value(rk) < 1 || json_integer_value(rk) > (long)nc)
      order[no++] = i;
  }
  for (size_t row = 0; row < no; row++) {
    const json_t *e = json_array_get(cands, order[row]);
    const json_t *rk = json_object_get(e, "rank");
    const sp_family *fam = sp_family_find(gstr(e, "family"));
    char v[64];
    set_cell(b, t, row, 0,
             json_is_integer(rk) ? pool_fmt(&b->p, "%lld", (long long)json_integer_value(rk))
                                 : "-");
    set_cell(b, t, row, 1, fam ? fam->title : gstr(e, "family"));
    const char *status = gstr(e, "status");
    if (strcmp(status, "ok") != 0) {
      const char *why = gstr(e, "reason");
      set_cell(b, t, row, 8, pool_fmt(&b->p, "%s%s%s", status, why ? ": " : "", why ? why : ""));
      continue;
    }
    set_cell(b, t, row, 2, params_text(&b->p, fam, json_object_get(e, "params")));
    fmt_g(v, sizeof v, 'f', 2, gnum(e, "loglik"));
    set_cell(b, t, row, 3, v);
    fmt_g(v, sizeof v, 'f', 2, gnum(e, "aicc"));
    set_cell(b, t, row, 4, v);
    fmt_g(v, sizeof v, 'f', 2, gnum(e, "bic"));
    set_cell(b, t, row, 5, v);
    const json_t *a2 = json_object_get(json_object_get(e, "gof"), "A2");
    fmt_g(v, sizeof v, 'f', 3, gnum(a2, "stat"));
    set_cell(b, t, row, 6, v);
    const char *bound = gstr(a2, "bound");
    /* A no-break space keeps "< 0.01" on one line. */
    const char *rel = !bound ? "" : strcmp(bound, "below") == 0 ? "<\u00a0"
                                  : strcmp(bound, "above") == 0 ? ">\u00a0" : "";
    double p = gnum(a2, "p");
    /* Below 0.001 as "< 0.001", as 'scatterprop fit' prints it: a
     * bootstrap p-value of 1/(B + 1) says only that no replicate reached
     * the statistic, and three more digits would suggest a precision the
     * estimate does not have. */
    if (isfinite(p) && p < 0.001 && !rel[0])
      set_cell(b, t, row, 7, "<\u00a00.001");
    else
      set_cell(b, t, row, 7, isfinite(p) ? pool_fmt(&b->p, "%s%.3g", rel, p) : "-");
    const char *verdict = json_is_true(json_object_get(e, "rejected"))       ? "rejected by A\u00b2"
                          : chosen && strcmp(gstr(e, "family"), chosen) == 0 ? "chosen"
                                                                             : "";
    set_cell(b, t, row, 8, verdict);
  }
  free(order);
}

static sp_status section_fits(builder *b, const chart_env *env, const fitsrc *fits, size_t nf,
                              sp_error *err)
{
  if (nf == 0) return SP_OK;
  add_section(b, 1, "Fits");
  add_para(b, "Each candidate family was fitted by maximum likelihood and tested by "
              "Anderson-Darling A\u00b2; candidates are ranked by the record's criterion and "
              "the best one that A\u00b2 does not reject is chosen (docs/goodness-of-fit.md).");
  for (size_t k = 0; k < nf && !b->p.oom; k++) {
    const fitsrc *f = &fits[k];
    add_section(b, 2, pool_fmt(&b->p, "%s: fit record %s", f->col->name, f->written));
    const json_t *o = json_object_get(f->root, "options");
    add_para(b, "Used by model input%s %s. Chosen: %s (%s). %s", strchr(f->inputs, ',') ? "s" : "",
             f->inputs, f->rec.family->title,
             params_text(&b->p, f->rec.family, json_object_get(json_object_get(f->root, "chosen"),
                                                                "params")),
             f->rec.reason ? f->rec.reason : "");
    const char *sel = gstr(o, "select");
    const char *crit = strcmp(sel, "aicc") == 0  ? "AICc"
                       : strcmp(sel, "aic") == 0 ? "AIC"
                       : strcmp(sel, "bic") == 0 ? "BIC"
                       : strcmp(sel, "loglik") == 0 ? "log-likelihood"
                                                    : sel;
    candidates_table(b, json_object_get(f->root, "candidates"), f->rec.family->name,
                     pool_fmt(&b->p,
                              "%s: candidates ranked by %s (%zu values; A\u00b2 "
                              "rejection level %g).",
                              f->col->name, crit, f->n, gnum(o, "alpha")));
    const json_t *by = json_object_get(f->root, "by");
    if (json_is_object(by)) {
      const json_t *g = json_object_get(by, "groups");
      size_t ng = json_array_size(g);
      static const char *const head[] = {"lot", "n", "chosen", "parameters", "note"};
      sp_report_table *t = add_table(
          b, pool_fmt(&b->p, "%s: a separate fit to each lot (column %s).", f->col->name,
                      gstr(by, "column")),
          5, ng, head, "lrlll");
      for (size_t i = 0; i < ng; i++) {
        const json_t *e = json_array_get(g, i);
        const json_t *ch = json_object_get(e, "chosen");
        const sp_family *fam = json_is_object(ch) ? sp_family_find(gstr(ch, "family")) : NULL;
        set_cell(b, t, i, 0, gstr(e, "value"));
        set_cell(b, t, i, 1, pool_fmt(&b->p, "%llu", (unsigned long long)guint(e, "n")));
        set_cell(b, t, i, 2, fam ? fam->title : "-");
        set_cell(b, t, i, 3, fam ? params_text(&b->p, fam, json_object_get(ch, "params")) : "");
        const char *msg = gstr(e, "message");
        set_cell(b, t, i, 4, msg ? msg : gstr(e, "choice_reason"));
      }
    }
    sp_status st = fit_charts(b, env, f, err);
    if (st != SP_OK) return st;
  }
  return SP_OK;
}

static void section_model(builder *b, const json_t *root)
{
  const json_t *model = json_object_get(root, "model");
  add_section(b, 1, "Model");
  add_para(b, "The model file %s as it was run (SHA-256 %s):", gstr(model, "path"),
           gstr(model, "sha256"));
  add_text(b, SP_REPORT_PRE, gstr(model, "text"));
  const json_t *inputs = json_object_get(root, "inputs");
  size_t ni = json_array_size(inputs);
  static const char *const head[] = {"input", "unit", "distribution", "from"};
  sp_report_table *t = add_table(b, "The model's inputs and their distributions.", 4, ni, head,
                                 "llll");
  for (size_t i = 0; i < ni; i++) {
    const json_t *in = json_array_get(inputs, i);
    const sp_family *fam = sp_family_find(gstr(in, "family"));
    set_cell(b, t, i, 0, gstr(in, "name"));
    set_cell(b, t, i, 1, gstr(in, "unit"));
    char *d = pool_fmt(&b->p, "%s(%s)", gstr(in, "family"),
                       params_text(&b->p, fam, json_object_get(in, "params")));
    if (gnum(in, "scale") != 1 || gnum(in, "offset") != 0)
      d = pool_fmt(&b->p, "%s, then x %.6g %+.6g (unit conversion)", d, gnum(in, "scale"),
                   gnum(in, "offset"));
    set_cell(b, t, i, 2, d);
    const json_t *fr = json_object_get(in, "fit_record");
    set_cell(b, t, i, 3, json_is_object(fr) ? pool_fmt(&b->p, "fit record %s", gstr(fr, "path"))
                                            : "stated in the model");
  }
  const json_t *corr = json_object_get(root, "correlations");
  size_t nc = json_array_size(corr);
  if (nc == 0) return;
  static const char *const ch[] = {"input", "input", "Spearman rank correlation"};
  t = add_table(b, "Rank correlations between inputs (imposed through a Gaussian copula).", 3,
                nc, ch, "llr");
  for (size_t k = 0; k < nc; k++) {
    const json_t *e = json_array_get(corr, k);
    set_cell(b, t, k, 0, gstr(e, "a"));
    set_cell(b, t, k, 1, gstr(e, "b"));
    set_cell(b, t, k, 2, pool_fmt(&b->p, "%.4g", gnum(e, "spearman")));
  }
}

/* Where the run charts come from. */
typedef struct {
  const sp_runplot_set *set; /* charts of the repeated run, or NULL */
  const char *plots_dir;     /* or the folder of 'propagate --plots' */
  const chart_env *env;
} run_charts;

static const char *const plots_dir_caption[SP_RUNPLOT_NKINDS] = {
    "histogram with the coverage interval and the limits",
    "probability of exceedance P(Y > y), logarithmic axis",
    "each input's share of the squared Spearman rank correlations",
    "first-order and total-effect Sobol' indices",
    "convergence of the mean and of the interval ends with the number of samples",
    "the output against its most influential input on a fresh subsample"};

static void run_figure(builder *b, const run_charts *rc, size_t j, const char *name,
                       sp_runplot_kind kind, int sobol_expected)
{
  if (rc->set) {
    const sp_runplot_chart *c = &rc->set->charts[j * SP_RUNPLOT_NKINDS + kind];
    if (kind == SP_RUNPLOT_SOBOL && !c->drawn) return;
    if (!c->drawn) {
      add_text(b, SP_REPORT_NOTE, pool_str(&b->p, c->note));
      return;
    }
    figure_of(b, rc->env, &c->out, c->caption);
    return;
  }
  if (kind == SP_RUNPLOT_SOBOL && !sobol_expected) return;
  char stem[SP_PLOT_STEM_MAX + 1], path[SP_PLOT_PATH_MAX + 256];
  sp_plot_stem(name, stem, sizeof stem);
  snprintf(path, sizeof path, "%s/run_%s_%s.svg", rc->plots_dir, stem, sp_runplot_kind_name(kind));
  const char *cap = pool_fmt(&b->p, "%s: %s (drawn by 'propagate --plots', taken from %s).",
                             name, plots_dir_caption[kind], rc->plots_dir);
  if (readable(path))
    add_figure(b, path, cap, NULL);
  else
    add_figure(b, NULL, cap, pool_fmt(&b->p, "Not found: %s.", path));
}

static void section_results(builder *b, const json_t *root, const run_charts *rc)
{
  const json_t *rs = json_object_get(root, "results");
  const json_t *outs = json_object_get(rs, "outputs");
  const char *sem_kind = gstr(rs, "sem_kind");
  add_section(b, 1, "Results");
  add_para(b, "Values are shown to the Monte Carlo resolution: two significant digits of the "
              "standard error of the mean. The standard error is %s. Percentiles are Hyndman "
              "& Fan's definition 7 on all finite samples; coverage intervals follow JCGM "
              "101:2008, 7.7.",
           strcmp(sem_kind, "iid") == 0 ? "s/\u221aN (independent samples)"
           : strcmp(sem_kind, "replicates") == 0
               ? "the spread of the means of independent replicates or batches"
               : "s/\u221aN, an upper bound for a Latin hypercube design");
  for (size_t j = 0; j < json_array_size(outs); j++) {
    const json_t *x = json_array_get(outs, j);
    const char *name = gstr(x, "name"), *unit = gstr(x, "unit");
    add_section(b, 2, pool_fmt(&b->p, "%s [%s]", name, unit));
    int dec = mc_decimals(gnum(x, "sem"));
    static const char *const head[] = {"statistic", "value"};
    sp_report_table *t = add_table(b, pool_fmt(&b->p, "%s [%s]: statistics of the samples.",
                                               name, unit),
                                   2, 9, head, "lr");
    char v[64], a[64], c[64];
    set_cell(b, t, 0, 0, "finite samples used");
    set_cell(b, t, 0, 1, pool_fmt(&b->p, "%llu", (unsigned long long)guint(x, "n")));
    set_cell(b, t, 1, 0, "not finite, left out (NaN, +Inf, -Inf)");
    set_cell(b, t, 1, 1,
             pool_fmt(&b->p, "%llu, %llu, %llu", (unsigned long long)guint(x, "nan"),
                      (unsigned long long)guint(x, "posinf"),
                      (unsigned long long)guint(x, "neginf")));
    fmt_dec(a, sizeof a, dec, gnum(x, "mean"));
    fmt_dec(c, sizeof c, dec, gnum(x, "sem"));
    set_cell(b, t, 2, 0, "mean \u00b1 standard error of the mean");
    set_cell(b, t, 2, 1, pool_fmt(&b->p, "%s \u00b1 %s", a, c));
    fmt_dec(v, sizeof v, dec, gnum(x, "sd"));
    set_cell(b, t, 3, 0, "standard deviation");
    set_cell(b, t, 3, 1, v);
    fmt_dec(a, sizeof a, dec, gnum(x, "min"));
    fmt_dec(c, sizeof c, dec, gnum(x, "max"));
    set_cell(b, t, 4, 0, "minimum, maximum");
    set_cell(b, t, 4, 1, pool_fmt(&b->p, "%s, %s", a, c));
    fmt_g(v, sizeof v, 'f', 3, gnum(x, "skewness"));
    set_cell(b, t, 5, 0, "skewness");
    set_cell(b, t, 5, 1, v);
    fmt_g(v, sizeof v, 'f', 3, gnum(x, "excess_kurtosis"));
    set_cell(b, t, 6, 0, "excess kurtosis");
    set_cell(b, t, 6, 1, v);
    const json_t *ci = json_object_get(x, "coverage_interval");
    static const char *const ck[] = {"symmetric", "shortest"};
    static const char *const cw[] = {"probabilistically symmetric", "shortest"};
    for (int i = 0; i < 2; i++) {
      const json_t *iv = json_object_get(ci, ck[i]);
      fmt_dec(a, sizeof a, dec, anum(iv, 0));
      fmt_dec(c, sizeof c, dec, anum(iv, 1));
      set_cell(b, t, 7 + i, 0,
               pool_fmt(&b->p, "%g %% coverage interval, %s", 100 * gnum(ci, "coverage"),
                        cw[i]));
      set_cell(b, t, 7 + i, 1, pool_fmt(&b->p, "[%s, %s]", a, c));
    }
    const json_t *pct = json_object_get(x, "percentiles");
    size_t np = json_array_size(pct), rows = (np + 2) / 3;
    static const char *const ph[] = {"percentile", "value", "percentile", "value",
                                     "percentile", "value"};
    t = add_table(b, pool_fmt(&b->p, "%s [%s]: percentiles.", name, unit), 6, rows, ph,
                  "rrrrrr");
    for (size_t k = 0; k < np; k++) {
      const json_t *e = json_array_get(pct, k);
      size_t r = k % rows, cc = 2 * (k / rows);
      set_cell(b, t, r, cc, pool_fmt(&b->p, "%.6g %%", 100 * gnum(e, "p")));
      fmt_dec(v, sizeof v, dec, gnum(e, "value"));
      set_cell(b, t, r, cc + 1, v);
    }
    run_figure(b, rc, j, name, SP_RUNPLOT_HIST, 0);
    run_figure(b, rc, j, name, SP_RUNPLOT_EXCEED, 0);
    run_figure(b, rc, j, name, SP_RUNPLOT_CONV, 0);
    run_figure(b, rc, j, name, SP_RUNPLOT_SCATTER, 0);
  }
}

static void section_limits(builder *b, const json_t *root)
{
  const json_t *lims = json_object_get(json_object_get(root, "results"), "limits");
  size_t nl = json_array_size(lims);
  add_section(b, 1, "Limits");
  if (nl == 0) {
    add_para(b, "The model states no limits.");
    return;
  }
  add_para(b, "A limit states the requirement an output must meet; a sample violates it when "
              "it does not. The interval is Wilson's score interval, or the exact one-sided "
              "Clopper-Pearson bound when no sample (or every sample) violates it.");
  static const char *const head[] = {"requirement", "violations", "samples",
                                     "probability of violation", "interval", "kind"};
  sp_report_table *t = add_table(b, "Exceedance probabilities.", 6, nl, head, "lrrrrl");
  for (size_t k = 0; k < nl; k++) {
    const json_t *l = json_array_get(lims, k);
    const json_t *iv = json_object_get(l, "interval");
    char p[64], lo[64], hi[64];
    fmt_g(p, sizeof p, 'g', 4, gnum(l, "p_violation"));
    fmt_g(lo, sizeof lo, 'g', 4, anum(iv, 0));
    fmt_g(hi, sizeof hi, 'g', 4, anum(iv, 1));
    set_cell(b, t, k, 0,
             pool_fmt(&b->p, "%s %s %.6g %s", gstr(l, "output"), gstr(l, "requirement"),
                      gnum(l, "value"), gstr(l, "unit")));
    set_cell(b, t, k, 1, pool_fmt(&b->p, "%llu", (unsigned long long)guint(l, "violations")));
    set_cell(b, t, k, 2, pool_fmt(&b->p, "%llu", (unsigned long long)guint(l, "n")));
    set_cell(b, t, k, 3, p);
    set_cell(b, t, k, 4, pool_fmt(&b->p, "%g %%: [%s, %s]", 100 * gnum(l, "confidence"), lo, hi));
    set_cell(b, t, k, 5, gstr(l, "interval_kind"));
  }
}

static void section_sensitivity(builder *b, const json_t *root, const run_charts *rc)
{
  const json_t *outs = json_object_get(json_object_get(root, "results"), "outputs");
  add_section(b, 1, "Sensitivity");
  add_para(b, "Spearman's rank correlation of each input with each output, and each input's "
              "share of the sum of their squares (a ranking, not a variance decomposition, "
              "when inputs are correlated or the model is far from monotone). Sobol' indices, "
              "when computed, carry bootstrap percentile intervals.");
  for (size_t j = 0; j < json_array_size(outs); j++) {
    const json_t *x = json_array_get(outs, j);
    const json_t *sens = json_object_get(x, "sensitivity");
    size_t ni = json_array_size(sens);
    if (ni == 0) continue;
    int sob = json_object_get(json_array_get(sens, 0), "S") != NULL;
    add_section(b, 2, gstr(x, "name"));
    static const char *const head[] = {"input", "Spearman \u03c1", "share",
                                       "first-order S [interval]", "total ST [interval]"};
    sp_report_table *t = add_table(b, pool_fmt(&b->p, "%s: inputs by share.", gstr(x, "name")),
                                   sob ? 5 : 3, ni, head, sob ? "lrrrr" : "lrr");
    /* Rows by decreasing share (stable). */
    size_t *order = malloc(ni * sizeof *order);
    if (!order) {
      b->p.oom = 1;
      return;
    }
    for (size_t i = 0; i < ni; i++) {
      double v = gnum(json_array_get(sens, i), "share");
      size_t a = i;
      while (a > 0 && gnum(json_array_get(sens, order[a - 1]), "share") < v) {
        order[a] = order[a - 1];
        a--;
      }
      order[a] = i;
    }
    for (size_t r = 0; r < ni; r++) {
      const json_t *e = json_array_get(sens, order[r]);
      char v[64];
      set_cell(b, t, r, 0, gstr(e, "input"));
      fmt_g(v, sizeof v, '+', 3, gnum(e, "spearman"));
      set_cell(b, t, r, 1, v);
      double sh = gnum(e, "share");
      set_cell(b, t, r, 2, isfinite(sh) ? pool_fmt(&b->p, "%.1f %%", 100 * sh) : "-");
      static const char *const sk[] = {"S", "ST"};
      for (int s = 0; sob && s < 2; s++) {
        const json_t *ix = json_object_get(e, sk[s]);
        char a[32], lo[32], hi[32];
        fmt_g(a, sizeof a, 'f', 3, gnum(ix, "value"));
        fmt_g(lo, sizeof lo, 'f', 3, gnum(ix, "lo"));
        fmt_g(hi, sizeof hi, 'f', 3, gnum(ix, "hi"));
        set_cell(b, t, r, 3 + (size_t)s, pool_fmt(&b->p, "%s [%s, %s]", a, lo, hi));
      }
    }
    free(order);
    run_figure(b, rc, j, gstr(x, "name"), SP_RUNPLOT_SENS, 0);
    run_figure(b, rc, j, gstr(x, "name"), SP_RUNPLOT_SOBOL, sob);
  }
}

/* Compares each histogram data file of 'propagate --plots DIR' with the
 * record's counts (the plot module writes "lo hi density count" rows). */
static sp_status check_plots_dir(const json_t *root, const char *dir, const char *file,
                                 sp_error *err)
{
  const json_t *outs = json_object_get(json_object_get(root, "results"), "outputs");
  for (size_t j = 0; j < json_array_size(outs); j++) {
    const json_t *x = json_array_get(outs, j);
    char stem[SP_PLOT_STEM_MAX + 1], path[SP_PLOT_PATH_MAX + 256];
    sp_plot_stem(gstr(x, "name"), stem, sizeof stem);
    snprintf(path, sizeof path, "%s/run_%s_hist.dat", dir, stem);
    FILE *fp = fopen(path, "r");
    if (!fp) continue; /* the report says the chart is missing */
    const json_t *cnt = json_object_get(json_object_get(x, "histogram"), "counts");
    char line[1024];
    size_t bin = 0;
    sp_status st = SP_OK;
    while (st == SP_OK && fgets(line, sizeof line, fp)) {
      if (line[0] == '#' || line[0] == '\n') continue;
      double v[4];
      char *p = line, *end;
      int ok = 1;
      for (int c = 0; c < 4 && ok; c++) {
        v[c] = strtod(p, &end);
        ok = end != p;
        p = end;
      }
      if (!ok) continue;
      uint64_t want = bin < json_array_size(cnt)
                          ? (uint64_t)json_integer_value(json_array_get(cnt, bin))
                          : UINT64_MAX;
      if (!(v[3] == (double)want))
        st = sp_fail(err, SP_EDATA, "the charts in %s are not of run record %s: bin %zu of %s "
                                    "holds %.0f samples, the record %llu",
                     dir, file, bin, path, v[3], (unsigned long long)want);
      bin++;
    }
    fclose(fp);
    if (st == SP_OK && bin != json_array_size(cnt))
      st = sp_fail(err, SP_EDATA, "the charts in %s are not of run record %s: %s has %zu bins, "
                                  "the record %zu",
                   dir, file, path, bin, json_array_size(cnt));
    if (st != SP_OK) return st;
  }
  return SP_OK;
}

/* ---- the whole report -------------------------------------------------------- */

static void provenance(builder *b, const json_t *root, const char *record, const char *rsha,
                       uint64_t rsize, const fitsrc *fits, size_t nf, const char *charts,
                       const char *plots_dir)
{
  const json_t *model = json_object_get(root, "model"), *tool = json_object_get(root, "tool");
  const json_t *o = json_object_get(root, "options"), *rs = json_object_get(root, "results");
  add_input(b, "run record", record, rsha, rsize);
  add_input(b, "model", gstr(model, "path"), gstr(model, "sha256"),
            (uint64_t)strlen(gstr(model, "text")));
  for (size_t k = 0; k < nf; k++)
    add_input(b, "fit record", shown_path(&b->p, fits[k].path), fits[k].sha, fits[k].size);
  for (size_t k = 0; k < nf; k++)
    add_input(b, "data", shown_path(&b->p, fits[k].data_path), fits[k].data_sha,
              fits[k].table->size);
  add_setting(b, "run record created", gstr(root, "created_utc"));
  char buf[1024];
  snprintf(buf, sizeof buf, "scatterprop %s (revision %s, %s, GSL %s, %s)",
           gstr(tool, "version") ? gstr(tool, "version") : "?",
           gstr(tool, "git") ? gstr(tool, "git") : "?",
           gstr(tool, "compiler") ? gstr(tool, "compiler") : "?",
           gstr(tool, "gsl") ? gstr(tool, "gsl") : "?",
           gstr(tool, "system") ? gstr(tool, "system") : "?");
  add_setting(b, "run made by", buf);
  const json_t *wd = json_object_get(json_object_get(root, "provenance"), "working_directory");
  if (json_is_string(wd) && *json_string_value(wd)) add_setting(b, "run made in", json_string_value(wd));
  add_setting(b, "run command", join_command(&b->p, json_object_get(root, "command"), "scatterprop"));
  add_setting(b, "method", gstr(o, "method"));
  snprintf(buf, sizeof buf, "%llu", (unsigned long long)guint(o, "seed"));
  add_setting(b, "seed of the run", buf);
  if (gstr(o, "generator")) add_setting(b, "generator", gstr(o, "generator"));
  snprintf(buf, sizeof buf, "%llu requested, %llu taken (%s)",
           (unsigned long long)guint(o, "samples_requested"),
           (unsigned long long)guint(rs, "samples"), gstr(rs, "status"));
  add_setting(b, "samples", buf);
  snprintf(buf, sizeof buf, "%llu", (unsigned long long)guint(o, "block"));
  add_setting(b, "block size", buf);
  if (guint(o, "replicates") > 0) {
    snprintf(buf, sizeof buf, "%llu", (unsigned long long)guint(o, "replicates"));
    add_setting(b, "replicates", buf);
  }
  snprintf(buf, sizeof buf, "%g", gnum(o, "coverage"));
  add_setting(b, "coverage probability", buf);
  if (guint(o, "adaptive_digits") > 0) {
    snprintf(buf, sizeof buf, "%llu significant digits (JCGM 101:2008, 7.9): %llu batches of %llu",
             (unsigned long long)guint(o, "adaptive_digits"),
             (unsigned long long)guint(rs, "batches"), (unsigned long long)guint(rs, "batch_size"));
    add_setting(b, "adaptive stopping", buf);
  }
  if (guint(o, "sobol_samples") > 0) {
    snprintf(buf, sizeof buf, "%llu", (unsigned long long)guint(o, "sobol_samples"));
    add_setting(b, "Sobol' base samples", buf);
  }
  snprintf(buf, sizeof buf, "%llu (results do not depend on it)",
           (unsigned long long)guint(o, "threads"));
  add_setting(b, "threads of the run", buf);
  for (size_t k = 0; k < nf; k++) {
    const json_t *fo = json_object_get(fits[k].root, "options");
    const json_t *bs = json_object_get(fo, "bootstrap");
    const json_t *seed = json_object_get(bs, "seed");
    char sd[32];
    if (json_is_string(seed)) snprintf(sd, sizeof sd, "%s", json_string_value(seed));
    else snprintf(sd, sizeof sd, "%lld", (long long)json_integer_value(seed));
    snprintf(buf, sizeof buf, "select by %s, A\u00b2 level %g, p-values %s, bootstrap %llu "
                              "replicates, seed %s",
             gstr(fo, "select"), gnum(fo, "alpha"), gstr(fo, "pvalue_method"),
             (unsigned long long)guint(bs, "B"), sd);
    char key[SP_PLOT_PATH_MAX + 32];
    snprintf(key, sizeof key, "fit %s", fits[k].written);
    add_setting(b, key, buf);
  }
  add_setting(b, "charts of the run", charts);
  if (!plots_dir) {
    snprintf(buf, sizeof buf, "%d points drawn afresh with seed %llu on the streams of block "
                              "2^48 - 2 = %llu (never one of the run's blocks)",
             SP_RUNPLOT_SCATTER_DEFAULT, (unsigned long long)guint(o, "seed"),
             (unsigned long long)SP_RUNPLOT_SCATTER_BLOCK);
    add_setting(b, "scatter subsample", buf);
  }
}

static sp_status build_report(builder *b, const json_t *root, const char *record,
                              const sp_reportgen_options *opt, const chart_env *env,
                              fitsrc *fits, size_t nf, const sp_runplot_set *set, double tol,
                              sp_error *err)
{
  char rsha[SP_SHA256_HEX_LEN];
  uint64_t rsize = 0;
  sp_status st = sp_sha256_file(record, rsha, &rsize, err);
  if (st != SP_OK) return st;
  const char *charts =
      opt->plots_dir
          ? pool_fmt(&b->p, "taken from %s as 'propagate --plots' drew them; each histogram's "
                            "data was checked against the record, the other charts were not "
                            "checked", opt->plots_dir)
          : tol == 0
                ? "the run was repeated from the record (same model, fit records, seed and "
                  "options) and reproduced every recorded figure bit for bit; the charts are "
                  "drawn from the repeated run"
                : pool_fmt(&b->p, "the run was repeated from the record (same model, fit "
                                  "records, seed and options) on another build and reproduced "
                                  "every recorded figure within a relative %g; the charts are "
                                  "drawn from the repeated run",
                           tol);
  provenance(b, root, record, rsha, rsize, fits, nf, charts, opt->plots_dir);
  section_summary(b, root);
  section_data(b, fits, nf);
  if ((st = section_fits(b, env, fits, nf, err)) != SP_OK) return st;
  section_model(b, root);
  run_charts rc = {set, opt->plots_dir, env};
  section_results(b, root, &rc);
  section_limits(b, root);
  section_sensitivity(b, root, &rc);
  if (b->p.oom) return sp_fail(err, SP_ENOMEM, "out of memory building the report");
  return SP_OK;
}

/* ---- a run record and the files it names ------------------------------------ */

typedef struct {
  json_t *root;
  char *model_path; /* the model where the replay module finds it */
  char *model_dir;
  fitsrc *fits; /* one entry per distinct fit record */
  size_t nf;
} runsrc;

static void runsrc_clear(runsrc *s)
{
  free(s->model_path);
  free(s->model_dir);
  for (size_t k = 0; k < s->nf; k++)
    fitsrc_clear(&s->fits[k]);
  free(s->fits);
  json_decref(s->root);
  memset(s, 0, sizeof *s);
}

/* Reads and validates the run record (every field the report uses; the
 * model text against its SHA-256). */
static sp_status runsrc_load(runsrc *s, const char *run_record, sp_error *err)
{
  memset(s, 0, sizeof *s);
  if (!run_record || !*run_record) return sp_fail(err, SP_EUSAGE, "no run record given");
  if (!readable(run_record))
    return sp_fail(err, SP_EIO, "run record %s cannot be read: %s", run_record, strerror(errno));
  json_error_t je;
  int opened;
  s->root = load_record(run_record, "run record", &opened, &je, err);
  if (!s->root && !opened) return err ? err->code : SP_EIO;
  if (!s->root) {
    sp_fail_at(err, SP_EDATA, run_record, je.line, je.column, "run record: not JSON: %s",
               je.text);
    return sp_error_hint(err, "give the run.json that 'scatterprop propagate --out DIR' wrote");
  }
  if (!json_is_object(s->root))
    return sp_fail(err, SP_EDATA, "run record %s: not a JSON object", run_record);
  const json_t *fmt = json_object_get(s->root, "format");
  if (json_is_string(fmt) && strcmp(json_string_value(fmt), SP_RECORD_FIT_FORMAT) == 0) {
    sp_fail(err, SP_EDATA, "%s is a fit record, not a run record", run_record);
    return sp_error_hint(err,
                         "'scatterprop plot %s' draws the fit's charts; a report is made "
                         "from the run.json that 'scatterprop propagate --out DIR' wrote",
                         run_record);
  }
  checker c = {"run record", run_record, err, SP_OK};
  sp_status st = check_run_record(&c, s->root);
  if (st != SP_OK) return st;
  const json_t *model = json_object_get(s->root, "model");
  char h[SP_SHA256_HEX_LEN];
  const char *text = gstr(model, "text");
  sp_sha256_buffer(text, strlen(text), h);
  if (strcmp(h, gstr(model, "sha256")) != 0)
    return sp_fail(err, SP_EDATA,
                   "run record %s: the model text has SHA-256 %s, the record "
                   "says %s",
                   run_record, h, gstr(model, "sha256"));
  return SP_OK;
}

/* Finds the model and opens every fit record and data file the run record
 * names, checking their SHA-256. */
static sp_status runsrc_inputs(runsrc *s, const char *run_record, sp_error *err)
{
  /* The model where the replay module finds it (the recorded path, read
   * relative to the folder the run was made in, or to the record's folder
   * in an archive); the fit records are named relative to its folder. */
  const json_t *model = json_object_get(s->root, "model");
  int mexists = 0;
  s->model_path = sp_replay_locate(run_record, s->root, gstr(model, "path"), &mexists);
  s->model_dir = s->model_path ? sp_replay_dir_of(s->model_path) : NULL;
  if (!s->model_path || !s->model_dir) return sp_fail(err, SP_ENOMEM, "out of memory");
  const json_t *inputs = json_object_get(s->root, "inputs");
  size_t ni = json_array_size(inputs);
  s->fits = calloc(ni ? ni : 1, sizeof *s->fits);
  if (!s->fits) return sp_fail(err, SP_ENOMEM, "out of memory");
  sp_status st = SP_OK;
  for (size_t i = 0; i < ni && st == SP_OK; i++) {
    const json_t *in = json_array_get(inputs, i);
    const json_t *fr = json_object_get(in, "fit_record");
    if (!json_is_object(fr)) continue;
    char *fp = sp_replay_join(s->model_dir, gstr(fr, "path"));
    if (!fp) return sp_fail(err, SP_ENOMEM, "out of memory");
    size_t k = 0;
    while (k < s->nf && strcmp(s->fits[k].path, fp) != 0)
      k++;
    if (k < s->nf) {
      size_t len = strlen(s->fits[k].inputs);
      snprintf(s->fits[k].inputs + len, sizeof s->fits[k].inputs - len, ", %s", gstr(in, "name"));
    } else {
      st = open_fit(&s->fits[s->nf++], fr, fp, gstr(in, "name"), err);
    }
    free(fp);
  }
  return st;
}

/* Whether the report can be written at path, found before the run is
 * repeated: not a folder, not an existing file unless overwrite, and its
 * folder one in which a file can be made (tried with a file made and
 * removed at once: permission bits do not tell for root or a read-only
 * mount). */
static sp_status check_outpath(const char *path, int overwrite, sp_error *err)
{
  struct stat sb;
  if (stat(path, &sb) == 0) {
    if (S_ISDIR(sb.st_mode)) {
      sp_fail(err, SP_EIO, "%s is a folder; the report is one file", path);
      return sp_error_hint(err, "give --out the report's file name, e.g. %s/report.html", path);
    }
    if (!overwrite) return sp_fail(err, SP_EIO, "%s exists; give --force to replace it", path);
  }
  char d[SP_PLOT_PATH_MAX], probe[SP_PLOT_PATH_MAX + 32];
  dir_of(path, d, sizeof d);
  if (stat(d, &sb) != 0 || !S_ISDIR(sb.st_mode)) {
    sp_fail(err, SP_EIO, "%s: cannot write the report: folder %s does not exist", path, d);
    return sp_error_hint(err, "create the folder first, or give --out another file");
  }
  /* mkstemp template: six X characters, spelled out to keep markers greppable. */
  snprintf(probe, sizeof probe, "%s/.sp-report.%s", d,
           "XX"
           "XX"
           "XX");
  int fd = mkstemp(probe);
  if (fd < 0) {
    sp_fail(err, SP_EIO, "%s: cannot write the report in %s: %s", path, d, strerror(errno));
    return sp_error_hint(err, "give --out a file in a folder you can write in");
  }
  close(fd);
  unlink(probe);
  return SP_OK;
}

sp_status sp_reportgen_write(const char *run_record, const sp_reportgen_options *opt_in,
                             sp_reportgen_result *res, sp_error *err)
{
  sp_reportgen_options defaults;
  sp_reportgen_options_init(&defaults);
  const sp_reportgen_options *opt = opt_in ? opt_in : &defaults;
  if (res) memset(res, 0, sizeof *res);
  runsrc src;
  sp_status st = runsrc_load(&src, run_record, err);
  if (st != SP_OK) {
    runsrc_clear(&src);
    return st;
  }
  json_t *root = src.root;
  /* The report's path: given, or report.html beside the run record. */
  char outpath[SP_PLOT_PATH_MAX];
  char d[SP_PLOT_PATH_MAX];
  dir_of(run_record, d, sizeof d);
  int w = opt->out ? snprintf(outpath, sizeof outpath, "%s", opt->out)
                   : snprintf(outpath, sizeof outpath, "%s/report.html", d);
  if (w < 0 || (size_t)w >= sizeof outpath)
    st = sp_fail(err, SP_ELIMIT, "report path too long (%d bytes)", w);
  if (st == SP_OK) st = check_outpath(outpath, opt->overwrite, err);
  if (st == SP_OK) st = runsrc_inputs(&src, run_record, err);
  const char *model_path = src.model_path;
  fitsrc *fits = src.fits;
  size_t nf = src.nf;

  /* The run charts' source. */
  sp_run *run = NULL;
  sp_run_options ro;
  run_arrays ar = {NULL, NULL, NULL};
  double tol = 0;
  if (st == SP_OK && !opt->plots_dir) {
    st = repeat_run(root, run_record, model_path, opt->threads, NULL, &run, &ro, &ar, err);
    if (st == SP_OK) st = compare_with_record(root, run, &ro, run_record, &tol, err);
  }
  if (st == SP_OK && opt->plots_dir) st = check_plots_dir(root, opt->plots_dir, run_record, err);

  /* Charts are drawn into a private temporary folder, embedded, removed. */
  char work[SP_PLOT_PATH_MAX] = "";
  if (st == SP_OK) {
    const char *tmp = getenv("TMPDIR");
    /* mkdtemp template: six X characters, spelled out to keep markers greppable. */
    int tw = snprintf(work, sizeof work, "%s/scatterprop-report-%s",
                      tmp && *tmp ? tmp : "/tmp", "XX" "XX" "XX");
    if (tw < 0 || (size_t)tw >= sizeof work) {
      st = sp_fail(err, SP_ELIMIT, "TMPDIR is too long for a temporary folder name");
      work[0] = '\0';
    } else if (!mkdtemp(work)) {
      st = sp_fail(err, SP_EIO, "cannot create a temporary folder %s: %s", work, strerror(errno));
      work[0] = '\0';
    }
  }
  chart_env env;
  memset(&env, 0, sizeof env);
  env.workdir = work;
  env.gnuplot = opt->gnuplot;
  env.template_dir = opt->template_dir;
  sp_plot_options probe;
  sp_plot_options_init(&probe);
  probe.gnuplot = opt->gnuplot;
  char gp[SP_PLOT_PATH_MAX];
  env.have_gnuplot = sp_plot_gnuplot_found(&probe, gp, sizeof gp);
  env.no_render_note = "Not drawn: gnuplot was not found. Install gnuplot (Debian: gnuplot-nox) "
                       "and make the report again.";
  sp_runplot_set set;
  memset(&set, 0, sizeof set);
  if (st == SP_OK && run) {
    sp_runplot_options rpo;
    sp_runplot_options_init(&rpo);
    rpo.plot.outdir = work;
    rpo.plot.overwrite = 1;
    rpo.plot.gnuplot = opt->gnuplot;
    rpo.plot.template_dir = opt->template_dir;
    st = sp_runplot_draw(run, &rpo, &set, err);
  }
  builder b;
  memset(&b, 0, sizeof b);
  if (st == SP_OK)
    st = build_report(&b, root, run_record, opt, &env, fits, nf, run ? &set : NULL, tol, err);
  if (st == SP_OK) {
    sp_report r;
    memset(&r, 0, sizeof r);
    const json_t *mdl = json_object_get(root, "model");
    char *title = pool_fmt(&b.p, "Monte Carlo report: %s", gstr(mdl, "path"));
    r.title = title;
    r.created = opt->created;
    r.command = opt->command;
    r.inputs = b.inputs;
    r.ninputs = b.nin;
    r.settings = b.settings;
    r.nsettings = b.nset;
    sp_report_section *secs = calloc(b.nsec ? b.nsec : 1, sizeof *secs);
    if (!secs || b.p.oom) {
      st = sp_fail(err, SP_ENOMEM, "out of memory building the report");
    } else {
      for (size_t i = 0; i < b.nsec; i++) {
        secs[i].title = b.sec[i].title;
        secs[i].level = b.sec[i].level;
        secs[i].blocks = b.sec[i].blocks;
        secs[i].nblocks = b.sec[i].n;
      }
      r.sections = secs;
      r.nsections = b.nsec;
      st = sp_report_write_html(&r, outpath, opt->overwrite, err);
    }
    free(secs);
  }
  if (st == SP_OK && res) {
    snprintf(res->path, sizeof res->path, "%s", outpath);
    res->rerun = run != NULL;
    res->nfigures = b.nfigures;
    res->nembedded = b.nembedded;
    if (b.nembedded < b.nfigures && !env.have_gnuplot)
      snprintf(res->note, sizeof res->note, "%s", env.no_render_note);
  }
  builder_free(&b);
  sp_runplot_set_clear(&set);
  if (work[0]) remove_tree(work);
  sp_run_free(run);
  free(ar.pct);
  free(ar.hr);
  free(ar.tol);
  runsrc_clear(&src);
  return st;
}

/* ---- records of either kind, and the charts of a run ------------------------- */

sp_status sp_reportgen_record_kind(const char *path, sp_reportgen_kind *kind, sp_error *err)
{
  *kind = SP_REPORTGEN_UNKNOWN;
  if (!path || !*path) return sp_fail(err, SP_EUSAGE, "no record given");
  if (!readable(path))
    return sp_fail(err, SP_EIO, "record %s cannot be read: %s", path, strerror(errno));
  json_error_t je;
  int opened;
  json_t *root = load_record(path, "record", &opened, &je, err);
  if (!root && !opened) return err ? err->code : SP_EIO;
  const json_t *fmt = json_is_object(root) ? json_object_get(root, "format") : NULL;
  if (json_is_string(fmt) && strcmp(json_string_value(fmt), SP_RECORD_FIT_FORMAT) == 0)
    *kind = SP_REPORTGEN_FIT;
  else if (json_is_string(fmt) && strcmp(json_string_value(fmt), SP_RECORD_RUN_FORMAT) == 0)
    *kind = SP_REPORTGEN_RUN;
  json_decref(root);
  return SP_OK;
}

/* outdir made (one level) when missing. */
static sp_status make_outdir(const char *dir, sp_error *err)
{
  struct stat sb;
  if (stat(dir, &sb) == 0)
    return S_ISDIR(sb.st_mode)
               ? SP_OK
               : sp_fail(err, SP_EIO, "%s: not a folder; charts need a folder", dir);
  if (mkdir(dir, 0777) != 0 && errno != EEXIST)
    return sp_fail(err, SP_EIO, "%s: cannot create the chart folder: %s", dir, strerror(errno));
  return SP_OK;
}

sp_status sp_reportgen_plot_run(const char *run_record, const sp_runplot_options *opt, int threads,
                                sp_runplot_set *set, double *tolerance, sp_error *err)
{
  memset(set, 0, sizeof *set);
  if (tolerance) *tolerance = 0;
  if (!opt || !opt->plot.outdir || !*opt->plot.outdir)
    return sp_fail(err, SP_EUSAGE, "plot: no output folder given");
  runsrc src;
  sp_status st = runsrc_load(&src, run_record, err);
  /* The folder and templates are checked before the run is repeated. */
  if (st == SP_OK) st = sp_plot_check(&opt->plot, err);
  if (st == SP_OK) st = runsrc_inputs(&src, run_record, err);
  sp_run *run = NULL;
  sp_run_options ro;
  run_arrays ar = {NULL, NULL, NULL};
  double tol = 0;
  if (st == SP_OK) {
    st = repeat_run(src.root, run_record, src.model_path, threads, opt, &run, &ro, &ar, err);
  }
  if (st == SP_OK) {
    st = compare_with_record(src.root, run, &ro, run_record, &tol, err);
    if (st == SP_EDIFFERS)
      sp_error_hint(err, "'scatterprop replay %s' lists every difference; no chart was drawn",
                    run_record);
  }
  if (st == SP_OK) st = make_outdir(opt->plot.outdir, err);
  if (st == SP_OK) st = sp_runplot_draw(run, opt, set, err);
  if (st == SP_OK && tolerance) *tolerance = tol;
  sp_run_free(run);
  free(ar.pct);
  free(ar.hr);
  free(ar.tol);
  runsrc_clear(&src);
  return st;
}
