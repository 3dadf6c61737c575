/* scatterprop model: the compiler driver, diagnostics, loading, the
 * accessors and input resolution.
 *
 * sp_model_compile splits the text into lines, then runs the parser over
 * every line, the type checker over every parsed statement and, when no
 * error was found, the code generator.  Errors are collected with their
 * byte positions, sorted into file order and only then turned into
 * diagnostics (column in characters, the source line or a window of it). */
#include "model_internal.h"
#include "utf8.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* ---- helpers shared by the stages ----------------------------------------------- */

int sp_model_grow(sp_model_ctx *c, void **arr, size_t *cap, size_t need,
                  size_t elem)
{
  if (need <= *cap) return 0;
  size_t n = *cap ? *cap : 8;
  while (n < need) {
    if (n > SIZE_MAX / 2 / elem) {
      if (c) c->oom = 1;
      return -1;
    }
    n *= 2;
  }
  void *p = realloc(*arr, n * elem);
  if (!p) {
    if (c) c->oom = 1;
    return -1;
  }
  *arr = p;
  *cap = n;
  return 0;
}

/* The arena hands out blocks of this many bytes (larger requests get a
 * block of their own); every node and operand list of a compile lives in
 * it and is freed at once. */
#define ARENA_BLOCK ((size_t)64 * 1024)

void *sp_model_alloc(sp_model_ctx *c, size_t size)
{
  size_t align = sizeof(max_align_t);
  size = (size + align - 1) / align * align;
  if (size == 0) size = align;
  sp_model_arena_block *b = c->arena;
  if (!b || b->cap - b->used < size) {
    size_t cap = size > ARENA_BLOCK ? size : ARENA_BLOCK;
    b = malloc(sizeof *b + cap);
    if (!b) {
      c->oom = 1;
      return NULL;
    }
    b->cap = cap;
    b->used = 0;
    b->next = c->arena;
    c->arena = b;
  }
  void *p = (char *)b->data + b->used;
  b->used += size;
  memset(p, 0, size);
  return p;
}

void sp_model_error(sp_model_ctx *c, size_t line, size_t off, const char *fmt, ...)
{
  char msg[SP_ERROR_MSG_MAX];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(msg, sizeof msg, fmt, ap);
  va_end(ap);
  if (sp_model_grow(c, (void **)&c->pd, &c->cap_pd, c->npd + 1, sizeof *c->pd) != 0)
    return;
  char *m = malloc(strlen(msg) + 1);
  if (!m) {
    c->oom = 1;
    return;
  }
  strcpy(m, msg);
  sp_model_pdiag *d = &c->pd[c->npd];
  d->line = line;
  d->off = off;
  d->seq = c->npd;
  d->msg = m;
  c->npd++;
}

/* ---- diagnostics ----------------------------------------------------------------- */

void sp_model_diags_init(sp_model_diags *d)
{
  if (!d) return;
  d->items = NULL;
  d->count = d->total = d->cap = 0;
}

void sp_model_diags_clear(sp_model_diags *d)
{
  if (!d) return;
  for (size_t i = 0; i < d->count; i++) {
    free(d->items[i].file);
    free(d->items[i].message);
    free(d->items[i].source);
  }
  free(d->items);
  sp_model_diags_init(d);
}

static int is_cont(unsigned char b) { return (b & 0xC0) == 0x80; }

/* Characters (UTF-8 code points) in s[0..n). */
static long chars(const char *s, size_t n)
{
  long k = 0;
  for (size_t i = 0; i < n; i++)
    if (!is_cont((unsigned char)s[i])) k++;
  return k;
}

int sp_model_diag_format(const sp_model_diag *d, char *buf, size_t n)
{
  if (!d) return snprintf(buf, n, "(no diagnostic)\n");
  /* The caret line copies the source's tabs, so that it lines up however
   * the terminal expands them. */
  const char *src = d->source ? d->source : "";
  size_t slen = strlen(src);
  char *pad = malloc(slen + 1);
  size_t o = 0;
  if (pad) {
    long col = 1;
    for (size_t i = 0; i < slen && col < d->source_col; i++) {
      if (is_cont((unsigned char)src[i])) continue;
      pad[o++] = src[i] == '\t' ? '\t' : ' ';
      col++;
    }
    pad[o] = '\0';
  }
  int r = snprintf(buf, n, "%s:%ld:%ld: %s\n%s\n%s^\n", d->file ? d->file : "",
                   d->line, d->col, d->message ? d->message : "", src,
                   pad ? pad : "");
  free(pad);
  return r;
}

static int pdiag_cmp(const void *x, const void *y)
{
  const sp_model_pdiag *a = x, *b = y;
  if (a->line != b->line) return a->line < b->line ? -1 : 1;
  if (a->off != b->off) return a->off < b->off ? -1 : 1;
  return a->seq < b->seq ? -1 : a->seq > b->seq;
}

static char *dup0(const char *s)
{
  char *t = malloc(strlen(s) + 1);
  if (t) strcpy(t, s);
  return t;
}

/* The source text shown for an error at byte off of line: the whole line
 * when it is short, else a window around off; control characters are
 * shown as '?' (tabs are kept).  Sets *col to the caret's column in it. */
static char *source_window(const sp_model_ctx *c, size_t line, size_t off,
                           long *col)
{
  const char *s = line < c->nlines ? sp_model_line(c, line) : "";
  size_t len = line < c->nlines ? c->llen[line] : 0;
  if (off > len) off = len;
  size_t lo = 0, hi = len;
  if (len > SP_MODEL_DIAG_SOURCE_MAX) {
    size_t before = SP_MODEL_DIAG_SOURCE_MAX / 2;
    lo = off > before ? off - before : 0;
    while (lo > 0 && is_cont((unsigned char)s[lo])) lo--;
    hi = lo + SP_MODEL_DIAG_SOURCE_MAX - 6;
    if (hi > len) hi = len;
    while (hi < len && is_cont((unsigned char)s[hi])) hi++;
  }
  const char *pre = lo > 0 ? "..." : "", *post = hi < len ? "..." : "";
  char *t = malloc(hi - lo + 7);
  if (!t) return NULL;
  size_t o = 0;
  for (const char *p = pre; *p; p++) t[o++] = *p;
  for (size_t i = lo; i < hi; i++) {
    unsigned char b = (unsigned char)s[i];
    t[o++] = (b < 0x20 && b != '\t') || b == 0x7F ? '?' : (char)b;
  }
  for (const char *p = post; *p; p++) t[o++] = *p;
  t[o] = '\0';
  *col = (long)strlen(pre) + chars(s + lo, off - lo) + 1;
  return t;
}

/* Sorts the collected errors and copies them into diags (if any) and err. */
static sp_status report(sp_model_ctx *c, sp_model_diags *diags, sp_error *err)
{
  qsort(c->pd, c->npd, sizeof *c->pd, pdiag_cmp);
  for (size_t k = 0; k < c->npd && diags; k++) {
    diags->total++;
    if (diags->count >= SP_MODEL_MAX_DIAGS) continue;
    if (sp_model_grow(NULL, (void **)&diags->items, &diags->cap, diags->count + 1,
                      sizeof *diags->items) != 0)
      return sp_fail(err, SP_ENOMEM, "out of memory for the diagnostics");
    const sp_model_pdiag *p = &c->pd[k];
    sp_model_diag *d = &diags->items[diags->count];
    memset(d, 0, sizeof *d);
    d->file = dup0(c->file);
    d->line = (long)p->line + 1;
    d->col = p->line < c->nlines
                 ? chars(sp_model_line(c, p->line),
                         p->off < c->llen[p->line] ? p->off : c->llen[p->line]) + 1
                 : 1;
    d->message = dup0(p->msg);
    d->source = source_window(c, p->line, p->off, &d->source_col);
    diags->count++;
    if (!d->file || !d->message || !d->source)
      return sp_fail(err, SP_ENOMEM, "out of memory for the diagnostics");
  }
  const sp_model_pdiag *f = &c->pd[0];
  long col = f->line < c->nlines
                 ? chars(sp_model_line(c, f->line),
                         f->off < c->llen[f->line] ? f->off : c->llen[f->line]) + 1
                 : 1;
  sp_fail_at(err, SP_EMODEL, c->file, (long)f->line + 1, col, "%s", f->msg);
  if (c->npd > 1) sp_error_hint(err, "%zu errors in the model", c->npd);
  return SP_EMODEL;
}

/* ---- compiling --------------------------------------------------------------------- */

static void ctx_free(sp_model_ctx *c)
{
  for (size_t k = 0; k < c->npd; k++) free(c->pd[k].msg);
  free(c->pd);
  while (c->arena) {
    sp_model_arena_block *n = c->arena->next;
    free(c->arena);
    c->arena = n;
  }
  free(c->hash);
  free(c->syms);
  free(c->stmts);
  for (size_t k = 0; k < c->nunits; k++) sp_unit_free(c->units[k]);
  free(c->units);
  free(c->toks);
  free(c->lstart);
  free(c->llen);
}

/* Splits the text at '\n' (a final '\r' of a line is dropped). */
static sp_status split_lines(sp_model_ctx *c, sp_error *err)
{
  size_t n = 1;
  for (size_t i = 0; i < c->len; i++)
    if (c->text[i] == '\n' && i + 1 < c->len) n++;
  if (n > SP_MODEL_MAX_LINES)
    return sp_fail_at(err, SP_ELIMIT, c->file, (long)SP_MODEL_MAX_LINES + 1, 0,
                      "the model has more than %d lines", SP_MODEL_MAX_LINES);
  c->lstart = malloc(n * sizeof *c->lstart);
  c->llen = malloc(n * sizeof *c->llen);
  if (!c->lstart || !c->llen)
    return sp_fail(err, SP_ENOMEM, "out of memory for the model's lines");
  size_t start = 0, k = 0;
  for (size_t i = 0; i <= c->len && k < n; i++) {
    if (i == c->len || c->text[i] == '\n') {
      size_t l = i - start;
      if (l > 0 && c->text[start + l - 1] == '\r') l--;
      c->lstart[k] = start;
      c->llen[k] = l;
      k++;
      start = i + 1;
    }
  }
  c->nlines = k;
  return SP_OK;
}

void sp_model_destroy(sp_model *m)
{
  if (!m) return;
  for (size_t i = 0; i < m->ninputs; i++) {
    free(m->inputs[i].name);
    free(m->inputs[i].unit_text);
    free(m->inputs[i].fit_path);
    free(m->inputs[i].fit_resolved);
    sp_unit_free(m->inputs[i].unit);
  }
  for (size_t j = 0; j < m->noutputs; j++) {
    free(m->outputs[j].name);
    free(m->outputs[j].unit_text);
    sp_unit_free(m->outputs[j].unit);
  }
  for (size_t k = 0; k < m->nconsts; k++) {
    free(m->consts[k].name);
    free(m->consts[k].unit_text);
    sp_unit_free(m->consts[k].unit);
  }
  free(m->inputs);
  free(m->outputs);
  free(m->consts);
  free(m->limits);
  free(m->corrs);
  free(m->code);
  free(m->path);
  free(m);
}

void sp_model_free(sp_model *m) { sp_model_destroy(m); }

sp_status sp_model_compile(const char *path_for_messages, const char *text,
                           size_t len, sp_model **out, sp_model_diags *diags,
                           sp_error *err)
{
  if (out) *out = NULL;
  if (!out || (!text && len > 0))
    return sp_fail(err, SP_EUSAGE, "sp_model_compile: missing argument");
  const char *file = path_for_messages ? path_for_messages : "";
  if (len > SP_MODEL_MAX_BYTES)
    return sp_fail_at(err, SP_ELIMIT, file, 0, 0,
                      "the model is larger than %zu bytes", SP_MODEL_MAX_BYTES);
  sp_status st = sp_units_init(err);
  if (st != SP_OK) return st;

  sp_model_ctx c;
  memset(&c, 0, sizeof c);
  c.file = file;
  c.text = text ? text : "";
  c.len = len;
  st = split_lines(&c, err);
  if (st != SP_OK) {
    ctx_free(&c);
    return st;
  }
  /* The text reaches messages, terminals and the run record's JSON: an
   * ill-formed byte (a Latin-1 export) is refused at its line and column
   * (in characters) before anything is parsed, and never printed back. */
  size_t bad = sp_utf8_check(c.text, c.len);
  if (bad < c.len) {
    long line = 1, col = 1;
    for (size_t i = 0; i < bad; i++) {
      if (c.text[i] == '\n') {
        line++;
        col = 1;
      } else if (((unsigned char)c.text[i] & 0xC0) != 0x80) {
        col++;
      }
    }
    unsigned byte = (unsigned char)c.text[bad];
    ctx_free(&c);
    sp_fail_at(err, SP_EMODEL, file, line, col, "the model is not valid UTF-8 (byte 0x%02X)",
               byte);
    return sp_error_hint(err, "save the model as UTF-8; a Latin-1 or Windows-1252 editor writes "
                              "'\u00b5' and '\u00b0' as single bytes 0xB5 and 0xB0");
  }
  c.m = calloc(1, sizeof *c.m);
  if (!c.m) {
    ctx_free(&c);
    return sp_fail(err, SP_ENOMEM, "out of memory for a model");
  }
  c.m->path = dup0(file);
  sp_sha256_buffer(c.text, len, c.m->sha256);

  if (c.m->path) sp_model_parse(&c);
  if (c.m->path && !c.oom) sp_model_typecheck(&c);
  if (c.m->path && !c.oom && c.npd == 0) sp_model_codegen(&c);

  if (!c.m->path || c.oom) {
    st = sp_fail(err, SP_ENOMEM, "out of memory while compiling '%s'", file);
  } else if (c.npd > 0) {
    st = report(&c, diags, err);
  } else {
    *out = c.m;
    c.m = NULL;
    st = SP_OK;
  }
  sp_model_destroy(c.m);
  ctx_free(&c);
  return st;
}

sp_status sp_model_load(const char *path, sp_model **out, sp_model_diags *diags,
                        sp_error *err)
{
  if (out) *out = NULL;
  if (!path || !out) return sp_fail(err, SP_EUSAGE, "sp_model_load: missing argument");
  /* Size-checked before a byte is read; not a pipe or a device. */
  sp_error local;
  sp_error_clear(&local);
  FILE *f = sp_file_open_input(path, "model", SP_MODEL_MAX_BYTES, err ? err : &local);
  if (!f) return err ? err->code : local.code;
  /* Read at most one byte past the limit, so an oversized file is told
   * apart without reading it all. */
  size_t cap = 64 * 1024, len = 0;
  char *buf = malloc(cap);
  if (!buf) {
    fclose(f);
    return sp_fail(err, SP_ENOMEM, "out of memory reading '%s'", path);
  }
  for (;;) {
    if (len == cap) {
      if (cap > SP_MODEL_MAX_BYTES) break;
      size_t ncap = cap * 2;
      char *t = realloc(buf, ncap);
      if (!t) {
        free(buf);
        fclose(f);
        return sp_fail(err, SP_ENOMEM, "out of memory reading '%s'", path);
      }
      buf = t;
      cap = ncap;
    }
    size_t r = fread(buf + len, 1, cap - len, f);
    len += r;
    if (r == 0) break;
  }
  int bad = ferror(f);
  int e = errno;
  fclose(f);
  if (bad) {
    free(buf);
    return sp_fail(err, SP_EIO, "cannot read model file '%s': %s", path, strerror(e));
  }
  if (len > SP_MODEL_MAX_BYTES) {
    free(buf);
    return sp_fail_at(err, SP_ELIMIT, path, 0, 0,
                      "the model file is larger than %zu bytes", SP_MODEL_MAX_BYTES);
  }
  sp_status st = sp_model_compile(path, buf, len, out, diags, err);
  free(buf);
  return st;
}

/* ---- accessors ----------------------------------------------------------------------- */

const char *sp_model_path(const sp_model *m) { return m ? m->path : ""; }
const char *sp_model_sha256(const sp_model *m) { return m ? m->sha256 : ""; }

size_t sp_model_input_count(const sp_model *m) { return m ? m->ninputs : 0; }
const sp_model_input *sp_model_input_at(const sp_model *m, size_t i)
{
  return m && i < m->ninputs ? &m->inputs[i].pub : NULL;
}
long sp_model_input_find(const sp_model *m, const char *name)
{
  for (size_t i = 0; m && name && i < m->ninputs; i++)
    if (strcmp(m->inputs[i].name, name) == 0) return (long)i;
  return -1;
}

size_t sp_model_output_count(const sp_model *m) { return m ? m->noutputs : 0; }
const sp_model_output *sp_model_output_at(const sp_model *m, size_t j)
{
  return m && j < m->noutputs ? &m->outputs[j].pub : NULL;
}
long sp_model_output_find(const sp_model *m, const char *name)
{
  for (size_t j = 0; m && name && j < m->noutputs; j++)
    if (strcmp(m->outputs[j].name, name) == 0) return (long)j;
  return -1;
}

size_t sp_model_limit_count(const sp_model *m) { return m ? m->nlimits : 0; }
const sp_model_limit *sp_model_limit_at(const sp_model *m, size_t k)
{
  return m && k < m->nlimits ? &m->limits[k] : NULL;
}

size_t sp_model_correlation_count(const sp_model *m) { return m ? m->ncorrs : 0; }
const sp_model_correlation *sp_model_correlation_at(const sp_model *m, size_t k)
{
  return m && k < m->ncorrs ? &m->corrs[k] : NULL;
}

size_t sp_model_const_count(const sp_model *m) { return m ? m->nconsts : 0; }
const sp_model_const *sp_model_const_at(const sp_model *m, size_t k)
{
  return m && k < m->nconsts ? &m->consts[k].pub : NULL;
}

size_t sp_model_code_size(const sp_model *m) { return m ? m->ncode : 0; }
size_t sp_model_register_count(const sp_model *m) { return m ? m->nregs : 0; }
size_t sp_model_temp_count(const sp_model *m) { return m ? m->ntemps : 0; }

/* ---- inputs ----------------------------------------------------------------------------- */

sp_status sp_model_set_input_dist(sp_model *m, size_t input, const sp_family *fam,
                                  const double *theta, double scale, double offset,
                                  sp_error *err)
{
  if (!m || !fam || !theta)
    return sp_fail(err, SP_EUSAGE, "sp_model_set_input_dist: missing argument");
  if (input >= m->ninputs)
    return sp_fail(err, SP_EUSAGE, "input %zu does not exist (the model has %zu)",
                   input, m->ninputs);
  const char *name = m->inputs[input].name;
  if (!(fam->flags & SP_FAMILY_PROPAGATE))
    return sp_fail(err, SP_EUSAGE, "family '%s' cannot be used for input '%s'",
                   fam->name, name);
  if (!isfinite(scale) || scale == 0.0)
    return sp_fail(err, SP_EUSAGE,
                   "input '%s': the conversion scale must be finite and non-zero, "
                   "got %g", name, scale);
  if (!isfinite(offset))
    return sp_fail(err, SP_EUSAGE,
                   "input '%s': the conversion offset must be finite, got %g",
                   name, offset);
  if (fam->nparam > SP_FAMILY_MAX_PARAMS)
    return sp_fail(err, SP_EUSAGE, "family '%s' has too many parameters", fam->name);
  sp_status st = fam->check(theta, err);
  if (st != SP_OK) return st;
  sp_model_input *in = &m->inputs[input].pub;
  in->family = fam;
  for (size_t k = 0; k < SP_FAMILY_MAX_PARAMS; k++)
    in->theta[k] = k < fam->nparam ? theta[k] : 0.0;
  in->scale = scale;
  in->offset = offset;
  return SP_OK;
}

sp_status sp_model_check_inputs(const sp_model *m, sp_error *err)
{
  if (!m) return sp_fail(err, SP_EUSAGE, "sp_model_check_inputs: no model");
  for (size_t i = 0; i < m->ninputs; i++)
    if (!m->inputs[i].pub.family)
      return sp_fail_at(err, SP_EMODEL, m->path, m->inputs[i].pub.line, 0,
                        "input '%s': its distribution fit(\"%s\") has not been "
                        "resolved", m->inputs[i].name,
                        m->inputs[i].fit_path ? m->inputs[i].fit_path : "");
  return SP_OK;
}
