/* scatterprop ingest: inspection CSV files into typed columns.
 *
 * The file is read in chunks and handed to libcsv one physical line at a
 * time, so that every callback knows the line it is on; libcsv itself keeps
 * the state of quoted fields across lines, which is how a quoted cell with
 * an embedded newline stays one cell.  Lines before the header are looked at
 * directly: '#' lines are metadata, blank lines are skipped.
 *
 * A data row is parsed completely into a scratch row before anything is
 * appended to the columns, so a bad row is either an error or skipped whole
 * (with skip_bad_rows), never half-kept. */
#include "scatterprop/ingest.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include <sys/stat.h>

#include <csv.h>

#include "utf8.h"

/* ---- small growable buffers -------------------------------------------- */

/* Grows *p (of *cap elements of size sz) to hold at least need elements, by
 * a factor of 1.5 so that the slack of a large column stays below half its
 * payload (large blocks are moved by mremap in glibc, so growth does not
 * double the peak). */
static int grow(void **p, size_t *cap, size_t need, size_t sz)
{
  if (need <= *cap) return 1;
  size_t c = *cap ? *cap : 16;
  while (c < need) {
    size_t next = c + c / 2 + 1;
    if (next < c) return 0;
    c = next;
  }
  if (c > SIZE_MAX / sz) return 0;
  void *q = realloc(*p, c * sz);
  if (!q) return 0;
  *p = q;
  *cap = c;
  return 1;
}

static char *dup_range(const char *s, size_t n)
{
  char *d = malloc(n + 1);
  if (!d) return NULL;
  memcpy(d, s, n);
  /* no such path: sizes are not zero here and every block is freed:
   * NOLINTNEXTLINE(clang-analyzer-unix.Malloc) */
  d[n] = '\0';
  return d;
}

static char *dup_str(const char *s) { return dup_range(s, strlen(s)); }

static int is_blank(char c) { return c == ' ' || c == '\t'; }

/* Trims blanks from both ends of [*s, *s + *n). */
static void trim(const char **s, size_t *n)
{
  while (*n > 0 && is_blank(**s)) { (*s)++; (*n)--; }
  while (*n > 0 && is_blank((*s)[*n - 1])) (*n)--;
}

/* ---- text interning for text columns ----------------------------------- */

/* A text column (a lot id, a gauge name) usually holds few distinct values
 * over many rows; each distinct string is stored once and rows point to it.
 * Open addressing with FNV-1a hashing (Fowler, Noll & Vo; see
 * http://www.isthe.com/chongo/tech/comp/fnv/). */
typedef struct {
  char **slots;
  size_t cap;   /* power of two */
  size_t count;
} intern_set;

static uint64_t fnv1a(const char *s)
{
  uint64_t h = 1469598103934665603ull;
  for (; *s; s++) { h ^= (unsigned char)*s; h *= 1099511628211ull; }
  return h;
}

static const char *intern(intern_set *t, const char *s)
{
  if (t->count * 2 >= t->cap) {
    size_t ncap = t->cap ? t->cap * 2 : 64;
    char **ns = calloc(ncap, sizeof *ns);
    if (!ns) return NULL;
    for (size_t i = 0; i < t->cap; i++) {
      if (!t->slots[i]) continue;
      size_t j = fnv1a(t->slots[i]) & (ncap - 1);
      while (ns[j]) j = (j + 1) & (ncap - 1);
      ns[j] = t->slots[i];
    }
    free(t->slots);
    t->slots = ns;
    t->cap = ncap;
  }
  size_t j = fnv1a(s) & (t->cap - 1);
  while (t->slots[j]) {
    if (strcmp(t->slots[j], s) == 0) return t->slots[j];
    j = (j + 1) & (t->cap - 1);
  }
  char *d = dup_str(s);
  if (!d) return NULL;
  t->slots[j] = d;
  t->count++;
  return d;
}

static void intern_free(intern_set *t)
{
  for (size_t i = 0; i < t->cap; i++) free(t->slots[i]);
  free(t->slots);
  t->slots = NULL;
  t->cap = t->count = 0;
}

/* ---- reader state ------------------------------------------------------ */

typedef enum { KIND_UNDECIDED, KIND_NUMERIC, KIND_TEXT } col_kind;

typedef struct {
  long keep;          /* index into the table's columns, or -1 if not kept */
  col_kind kind;
  size_t cap_values, cap_flags, cap_text;
  intern_set strings;
} col_state;

typedef struct {
  const char *name;            /* for messages */
  const sp_ingest_options *opt;
  char decimal;
  sp_table *t;
  sp_error *err;
  sp_status status;            /* first failure; stops the parse */

  /* the record being assembled by libcsv callbacks */
  char *fbuf;                  /* field bytes, each NUL-terminated */
  size_t fbuf_len, fbuf_cap;
  size_t *foff;                /* field start offsets */
  size_t nfields, cap_foff;

  long line;                   /* physical line being fed */
  long record_line;            /* line where the current record started */
  int in_record;               /* libcsv holds part of a record */
  int row_ended_this_line;
  size_t record_bytes;

  int have_header;
  size_t nfile_cols;           /* fields in the header */
  col_state *cs;

  /* scratch row, for all-or-nothing appends */
  double *rv;
  unsigned char *rf;
  const char **rt;

  size_t cap_meta, cap_skipped;
  char *carry;                 /* a pre-header line cut by a chunk's end */
  size_t ncarry, cap_carry;

  int line_ends; /* LINE_ENDS_*: decided at the first line end */
} reader;

/* Line ends: LF or CRLF (counted at each LF), or a bare CR as old
 * spreadsheet exports write them, which the reader turns into LF before it
 * splits lines, so that line numbers and '#' lines work the same.  The kind
 * is decided at the first CR or LF of the file. */
enum { LINE_ENDS_UNDECIDED, LINE_ENDS_LF, LINE_ENDS_CR };

static const char utf8_hint[] =
    "save the file as UTF-8 (a spreadsheet's 'CSV UTF-8' export); in Latin-1 or "
    "Windows-1252 the micro and degree signs, for instance, are single bytes that are "
    "not UTF-8";

static sp_status rd_fail(reader *r, sp_status code, long line, long col, const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));
static sp_status rd_fail(reader *r, sp_status code, long line, long col, const char *fmt, ...)
{
  if (r->status != SP_OK) return r->status;
  char msg[SP_ERROR_MSG_MAX];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(msg, sizeof msg, fmt, ap);
  va_end(ap);
  r->status = sp_fail_at(r->err, code, r->name, line, col, "%.1000s", msg);
  if (code == SP_ELIMIT)
    sp_error_hint(r->err, "docs/limits.md lists the reader's limits; a quoted cell that is "
                          "never closed runs on to the end of the file and meets one of them");
  return r->status;
}

static const char *field(const reader *r, size_t i) { return r->fbuf + r->foff[i]; }

/* Header cell "name [unit]" into the column. */
static sp_status parse_header_cell(reader *r, size_t i, sp_column *c)
{
  const char *s = field(r, i);
  size_t n = strlen(s);
  trim(&s, &n);
  size_t bad = sp_utf8_check(s, n);
  if (bad < n) {
    rd_fail(r, SP_EDATA, r->record_line, (long)i + 1,
            "header cell %zu is not valid UTF-8 (byte 0x%02X at byte %zu of the cell)", i + 1,
            (unsigned char)s[bad], bad + 1);
    return sp_error_hint(r->err, "%s", utf8_hint);
  }
  /* U+FEFF inside a header cell (a second byte-order mark, left by a tool
   * that joined two files): invisible, so '--column x' would not find the
   * column 'x' that the header seems to hold. */
  for (size_t k = 0; k + 2 < n; k++)
    if ((unsigned char)s[k] == 0xEF && (unsigned char)s[k + 1] == 0xBB &&
        (unsigned char)s[k + 2] == 0xBF) {
      rd_fail(r, SP_EDATA, r->record_line, (long)i + 1,
              "header cell %zu holds an invisible byte-order mark (U+FEFF) at byte %zu", i + 1,
              k + 1);
      return sp_error_hint(r->err, "the file has a second byte-order mark (two files joined?); "
                                   "delete it with an editor that shows it, or export the file "
                                   "again");
    }
  c->header = dup_range(s, n);
  if (!c->header) return sp_fail(r->err, SP_ENOMEM, "out of memory");
  const char *open = memchr(s, '[', n);
  const char *close = n ? memchr(s, ']', n) : NULL;
  size_t name_len = n;
  if (open || close) {
    if (!open || !close || close < open || close != s + n - 1) {
      rd_fail(r, SP_EDATA, r->record_line, (long)i + 1,
              "header cell '%s': a unit goes in brackets at the end, as 'name [unit]'", c->header);
      if (r->decimal == '.' && memchr(s, ';', n))
        return sp_error_hint(r->err, "if ';' separates the cells (and ',' is the decimal "
                                     "separator), give --decimal-comma");
      if (r->decimal == ',' && memchr(s, ',', n))
        return sp_error_hint(r->err, "with --decimal-comma, ';' separates the cells; for a "
                                     "file whose cells are separated by ',', leave it out");
      return sp_error_hint(r->err, "write one unit in brackets after the name, such as "
                                   "'load [N]', and nothing after it");
    }
    name_len = (size_t)(open - s);
    const char *u = open + 1;
    size_t ulen = (size_t)(close - u);
    trim(&u, &ulen);
    c->unit_text = dup_range(u, ulen);
    if (!c->unit_text) return sp_fail(r->err, SP_ENOMEM, "out of memory");
  }
  const char *nm = s;
  trim(&nm, &name_len);
  if (name_len == 0) {
    rd_fail(r, SP_EDATA, r->record_line, (long)i + 1, "header cell %zu has no column name%s", i + 1,
            c->unit_text ? " (only a unit)" : "");
    return sp_error_hint(r->err, "every header cell needs a name, such as 'load [N]'; a "
                                 "separator at the end of the header line makes an empty "
                                 "last cell");
  }
  c->name = dup_range(nm, name_len);
  if (!c->name) return sp_fail(r->err, SP_ENOMEM, "out of memory");
  if (c->unit_text) {
    sp_error ue;
    sp_error_clear(&ue);
    c->unit = sp_unit_parse(c->unit_text, &ue);
    if (!c->unit) {
      if (ue.code == SP_EIO || ue.code == SP_ENOMEM) {
        *r->err = ue;
        r->status = ue.code;
        return ue.code;
      }
      rd_fail(r, SP_EDATA, r->record_line, (long)i + 1, "header cell '%s': %.900s", c->header,
              ue.msg);
      if (strstr(ue.msg, "unknown unit"))
        return sp_error_hint(r->err,
                             "units are udunits2 names or symbols with SI prefixes, and case "
                             "matters: mm, um, N, kN, MPa, GPa, N/mm, degC, percent");
      return sp_error_hint(r->err, "write products with '.' or a blank (N.m), quotients with "
                                   "'/' (N/mm) and integer powers as mm2 or mm^2");
    }
  }
  return SP_OK;
}

/* Non-zero when want is the column's name or its whole header cell. */
static int named(const sp_column *c, const char *want)
{
  return c->name && c->header && want &&
         (strcmp(c->name, want) == 0 || strcmp(c->header, want) == 0);
}

static sp_status process_header(reader *r)
{
  sp_table *t = r->t;
  size_t n = r->nfields;
  if (n > SP_INGEST_MAX_COLUMNS) {
    return rd_fail(r, SP_ELIMIT, r->record_line, 1,
                   "the header has %zu columns; the limit is %d", n, SP_INGEST_MAX_COLUMNS);
  }
  t->header_line = r->record_line;
  r->nfile_cols = n;
  r->cs = calloc(n, sizeof *r->cs);
  sp_column *all = calloc(n, sizeof *all);
  if (!r->cs || !all) { free(all); return sp_fail(r->err, SP_ENOMEM, "out of memory"); }

  sp_status s = SP_OK;
  for (size_t i = 0; i < n && s == SP_OK; i++) {
    all[i].index = i;
    s = parse_header_cell(r, i, &all[i]);
  }
  for (size_t i = 0; i < n && s == SP_OK; i++)
    for (size_t j = 0; j < i && s == SP_OK; j++)
      /* set when the reader above returned SP_OK (not followed by the analyzer):
       * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
      if (strcmp(all[i].name, all[j].name) == 0) {
        s = rd_fail(r, SP_EDATA, r->record_line, (long)i + 1,
                    "column name '%s' is used twice (also header cell %zu)", all[i].name, j + 1);
        sp_error_hint(r->err, "give each column its own name (names are compared without "
                              "their units)");
      }

  /* A header of one cell that holds the other separator is almost always a
   * file read with the wrong separator (read on, it would give one text
   * column, or with --decimal-comma, silently, one column of wrong
   * numbers). */
  if (s == SP_OK && n == 1) {
    const char *h = all[0].header ? all[0].header : ""; /* set when s is SP_OK */
    if (r->decimal == '.' && strchr(h, ';')) {
      s = rd_fail(r, SP_EDATA, r->record_line, 1, "the header is one cell, '%s', that holds ';'",
                  h);
      sp_error_hint(r->err, "if ';' separates the cells (and ',' is the decimal "
                            "separator), give --decimal-comma");
    } else if (r->decimal == ',' && strchr(h, ',')) {
      s = rd_fail(r, SP_EDATA, r->record_line, 1,
                  "with --decimal-comma, ';' separates the cells, but the header is one "
                  "cell, '%s', that holds ','",
                  h);
      sp_error_hint(r->err, "for a file whose cells are separated by ',', leave out "
                            "--decimal-comma");
    }
  }
  /* Which columns to keep. */
  size_t nkeep = 0;
  for (size_t i = 0; i < n; i++) r->cs[i].keep = -1;
  if (s == SP_OK && r->opt->columns) {
    for (size_t k = 0; k < r->opt->ncolumns && s == SP_OK; k++) {
      const char *want = r->opt->columns[k];
      long found = -1;
      for (size_t i = 0; i < n; i++)
        /* set when the reader above returned SP_OK (not followed by the analyzer):
         * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
        if (strcmp(all[i].name, want) == 0 || strcmp(all[i].header, want) == 0) found = (long)i;
      if (found < 0) {
        char list[512] = "";
        for (size_t i = 0; i < n; i++) {
          size_t l = strlen(list);
          snprintf(list + l, sizeof list - l, "%s'%s'", i ? ", " : "", all[i].name);
        }
        s = sp_fail_at(r->err, SP_EDATA, r->name, r->record_line, 0,
                       "no column named '%s' in the header", want);
        sp_error_hint(r->err, "the columns are: %s", list);
        r->status = s;
      } else if (r->cs[found].keep < 0) {
        r->cs[found].keep = 0; /* numbered below, in file order */
      }
    }
  } else {
    for (size_t i = 0; i < n; i++) r->cs[i].keep = 0;
  }
  if (s == SP_OK) {
    t->cols = calloc(n ? n : 1, sizeof *t->cols);
    if (!t->cols) s = sp_fail(r->err, SP_ENOMEM, "out of memory");
  }
  for (size_t i = 0; i < n; i++) {
    if (s == SP_OK && r->cs[i].keep == 0) {
      r->cs[i].keep = (long)nkeep;
      /* allocated and checked above under the same status (not followed):
       * NOLINTNEXTLINE(clang-analyzer-core.NullDereference) */
      t->cols[nkeep++] = all[i];
      r->cs[i].kind = all[i].unit ? KIND_NUMERIC : KIND_UNDECIDED;
      /* Columns the caller reads as text (lot ids written as numbers). */
      for (size_t k = 0; !all[i].unit && k < r->opt->ntext_columns; k++)
        if (named(&all[i], r->opt->text_columns[k])) r->cs[i].kind = KIND_TEXT;
    } else {
      r->cs[i].keep = -1;
      free(all[i].name); free(all[i].header); free(all[i].unit_text);
      sp_unit_free(all[i].unit);
    }
  }
  free(all);
  t->ncols = nkeep;
  if (s != SP_OK) return s;
  r->rv = malloc((n ? n : 1) * sizeof *r->rv);
  r->rf = malloc((n ? n : 1) * sizeof *r->rf);
  r->rt = malloc((n ? n : 1) * sizeof *r->rt);
  if (!r->rv || !r->rf || !r->rt) return sp_fail(r->err, SP_ENOMEM, "out of memory");
  r->have_header = 1;
  return SP_OK;
}

/* A bad row: an error, or with skip_bad_rows, an entry in the skipped list. */
static sp_status bad_row(reader *r, long col, sp_error *cell_err)
{
  if (!r->opt->skip_bad_rows) {
    r->status = cell_err->code;
    *r->err = *cell_err;
    return r->status;
  }
  sp_table *t = r->t;
  if (!grow((void **)&t->skipped, &r->cap_skipped, t->nskipped + 1, sizeof *t->skipped))
    return sp_fail(r->err, SP_ENOMEM, "out of memory");
  sp_skipped_row *k = &t->skipped[t->nskipped];
  k->line = r->record_line;
  k->col = col;
  k->reason = dup_str(cell_err->msg);
  if (!k->reason) return sp_fail(r->err, SP_ENOMEM, "out of memory");
  t->nskipped++;
  return SP_OK;
}

static int is_missing(const char *s, size_t n)
{
  return n == 0 || (n == 2 && s[0] == 'N' && s[1] == 'A');
}

/* Non-zero when the cell is a number followed by a unit ("2.01 mm",
 * "120N", "5 %"): letters, '%' and non-ASCII bytes (a micro or degree
 * sign) after a part that reads as a number. */
static int unit_in_cell(const char *s, size_t n, char decimal)
{
  size_t k = n;
  while (k > 0 && (is_blank(s[k - 1]) || s[k - 1] == '%' || (unsigned char)s[k - 1] >= 0x80 ||
                   (s[k - 1] >= 'a' && s[k - 1] <= 'z') || (s[k - 1] >= 'A' && s[k - 1] <= 'Z')))
    k--;
  if (k == n || k == 0 || k > 64) return 0;
  char num[65];
  memcpy(num, s, k);
  num[k] = '\0';
  double v;
  return sp_parse_double(num, decimal, &v, NULL) == SP_OK;
}

static const char comment_hint[] =
    "'#' lines are metadata only before the header; after it they are rows: delete this "
    "line or move it above the header";

static sp_status process_row(reader *r)
{
  sp_table *t = r->t;
  sp_error ce;
  sp_error_clear(&ce);
  const char *first = r->nfields ? field(r, 0) : "";
  while (is_blank(*first))
    first++;
  int comment = *first == '#';
  if (r->nfields != r->nfile_cols) {
    long col = (long)(r->nfields < r->nfile_cols ? r->nfields : r->nfile_cols + 1);
    if (col < 1) col = 1;
    sp_fail_at(&ce, SP_EDATA, r->name, r->record_line, col,
               "this row has %zu field%s, the header has %zu", r->nfields,
               r->nfields == 1 ? "" : "s", r->nfile_cols);
    if (comment)
      sp_error_hint(&ce, "%s", comment_hint);
    else if (r->decimal == '.' && r->nfields > r->nfile_cols)
      sp_error_hint(&ce, "a ragged row often means an unquoted separator inside a cell: "
                         "quote such cells, or if ',' is the decimal separator (1,5) and ';' "
                         "separates the cells, give --decimal-comma; give --skip-bad-rows to "
                         "skip such rows");
    else
      sp_error_hint(&ce, "a ragged row often means an unquoted separator inside a cell, "
                         "or a missing cell; give --skip-bad-rows to skip such rows");
    return bad_row(r, col, &ce);
  }
  /* Parse every kept cell into the scratch row first. */
  for (size_t i = 0; i < r->nfile_cols; i++) {
    col_state *c = &r->cs[i];
    if (c->keep < 0) continue;
    char *s = r->fbuf + r->foff[i];
    size_t n = strlen(s);
    while (n > 0 && is_blank(*s)) { s++; n--; }
    while (n > 0 && is_blank(s[n - 1])) n--;
    s[n] = '\0';
    r->rf[i] = SP_OBS_OK;
    r->rt[i] = NULL;
    if (is_missing(s, n)) {
      r->rf[i] = SP_OBS_MISSING;
      r->rv[i] = NAN;
      continue;
    }
    const sp_column *col = &t->cols[c->keep];
    double v;
    sp_error pe;
    sp_error_clear(&pe);
    /* A number is ASCII, so only text and bad cells need the UTF-8 check. */
    if (c->kind != KIND_TEXT && sp_parse_double(s, r->decimal, &v, &pe) == SP_OK) {
      r->rv[i] = v;
      continue;
    }
    size_t bad = sp_utf8_check(s, n);
    if (bad < n) {
      sp_fail_at(&ce, SP_EDATA, r->name, r->record_line, (long)i + 1,
                 "the cell is not valid UTF-8 (byte 0x%02X at byte %zu of the cell; column "
                 "\"%s\")",
                 (unsigned char)s[bad], bad + 1, col->header);
      sp_error_hint(&ce, "%s", utf8_hint);
      return bad_row(r, (long)i + 1, &ce);
    }
    if (c->kind != KIND_NUMERIC) { /* text, or becomes text */
      r->rt[i] = s;
      continue;
    }
    sp_fail_at(&ce, SP_EDATA, r->name, r->record_line, (long)i + 1, "%s (column \"%s\")",
               pe.msg, col->header);
    if (comment)
      sp_error_hint(&ce, "%s", comment_hint);
    else if (r->decimal == '.' && memchr(s, ';', n))
      sp_error_hint(&ce, "if ';' separates the cells (and ',' is the decimal separator), "
                         "give --decimal-comma");
    else if (r->decimal == '.' && memchr(s, ',', n) && memchr(s, '.', n))
      sp_error_hint(&ce, "thousands separators are not read: write 1234.5, not 1,234.5");
    else if (r->decimal == '.' && memchr(s, ',', n))
      sp_error_hint(&ce, "if ',' is the decimal separator (and ';' separates cells), "
                         "give --decimal-comma");
    else if (unit_in_cell(s, n, r->decimal))
      sp_error_hint(&ce,
                    "a unit goes in the header cell ('%s [unit]'), not after each "
                    "reading",
                    col->name);
    else if (r->decimal == ',' && memchr(s, '.', n))
      sp_error_hint(&ce, "with --decimal-comma, '.' is not accepted in numbers "
                         "(it may be a thousands separator in this export)");
    else
      sp_error_hint(&ce, "write a missing reading as an empty cell or NA; "
                         "give --skip-bad-rows to skip rows with bad cells");
    return bad_row(r, (long)i + 1, &ce);
  }

  /* Commit: decide kinds and append. */
  size_t row = t->nrows;
  for (size_t i = 0; i < r->nfile_cols; i++) {
    col_state *c = &r->cs[i];
    if (c->keep < 0) continue;
    sp_column *col = &t->cols[c->keep];
    if (c->kind == KIND_UNDECIDED && r->rf[i] == SP_OBS_OK) {
      if (r->rt[i]) {
        /* The first reading is text: the column is a text column, and the
         * rows so far (all missing) become empty strings. */
        c->kind = KIND_TEXT;
        col->kind = SP_COLUMN_TEXT;
        if (!grow((void **)&col->text, &c->cap_text, row + 1, sizeof *col->text))
          return sp_fail(r->err, SP_ENOMEM, "out of memory");
        const char *empty = intern(&c->strings, "");
        if (!empty) return sp_fail(r->err, SP_ENOMEM, "out of memory");
        for (size_t k = 0; k < row; k++) col->text[k] = (char *)(uintptr_t)empty;
        free(col->values); col->values = NULL; c->cap_values = 0;
        free(col->flags); col->flags = NULL; c->cap_flags = 0;
      } else {
        c->kind = KIND_NUMERIC;
      }
    }
    if (c->kind == KIND_TEXT) {
      if (!grow((void **)&col->text, &c->cap_text, row + 1, sizeof *col->text))
        return sp_fail(r->err, SP_ENOMEM, "out of memory");
      const char *v = intern(&c->strings, r->rt[i] ? r->rt[i] : "");
      if (!v) return sp_fail(r->err, SP_ENOMEM, "out of memory");
      col->text[row] = (char *)(uintptr_t)v;
    } else {
      if (!grow((void **)&col->values, &c->cap_values, row + 1, sizeof *col->values) ||
          !grow((void **)&col->flags, &c->cap_flags, row + 1, sizeof *col->flags))
        return sp_fail(r->err, SP_ENOMEM, "out of memory");
      col->values[row] = r->rv[i];
      col->flags[row] = r->rf[i];
    }
    if (r->rf[i] == SP_OBS_MISSING) col->nmissing++;
  }
  t->nrows = row + 1;
  return SP_OK;
}

/* ---- libcsv callbacks --------------------------------------------------- */

static void on_field(void *s, size_t len, void *data)
{
  reader *r = data;
  if (r->status != SP_OK) return;
  if (len > SP_INGEST_MAX_FIELD_BYTES) {
    rd_fail(r, SP_ELIMIT, r->record_line, (long)r->nfields + 1,
            "a cell is longer than the limit of %u bytes", SP_INGEST_MAX_FIELD_BYTES);
    return;
  }
  if (r->nfields >= SP_INGEST_MAX_COLUMNS + 1) {
    rd_fail(r, SP_ELIMIT, r->record_line, (long)r->nfields + 1,
            "a row has more than %d fields", SP_INGEST_MAX_COLUMNS);
    return;
  }
  if (!grow((void **)&r->foff, &r->cap_foff, r->nfields + 1, sizeof *r->foff) ||
      !grow((void **)&r->fbuf, &r->fbuf_cap, r->fbuf_len + len + 1, 1)) {
    r->status = sp_fail(r->err, SP_ENOMEM, "out of memory");
    return;
  }
  r->foff[r->nfields++] = r->fbuf_len;
  if (len) memcpy(r->fbuf + r->fbuf_len, s, len);
  r->fbuf[r->fbuf_len + len] = '\0';
  /* A NUL byte inside a cell would silently cut the text short. */
  if (len && memchr(s, '\0', len)) {
    rd_fail(r, SP_EDATA, r->record_line, (long)r->nfields,
            "a cell contains a NUL byte (is this a text file?)");
    sp_error_hint(r->err, "a CSV file is text; a file saved as UTF-16 ('Unicode text') has "
                          "a NUL in every other byte: save it as UTF-8");
    return;
  }
  r->fbuf_len += len + 1;
}

static void on_row(int c, void *data)
{
  reader *r = data;
  (void)c;
  if (r->status == SP_OK) {
    if (!r->have_header) process_header(r);
    else process_row(r);
  }
  r->nfields = 0;
  r->fbuf_len = 0;
  r->record_bytes = 0;
  r->row_ended_this_line = 1;
}

/* ---- metadata lines ----------------------------------------------------- */

static sp_status add_meta(reader *r, const char *s, size_t n)
{
  sp_table *t = r->t;
  size_t bad = sp_utf8_check(s, n);
  if (bad < n) {
    rd_fail(r, SP_EDATA, r->line, 1,
            "this '#' metadata line is not valid UTF-8 (byte 0x%02X at byte %zu of the line)",
            (unsigned char)s[bad], bad + 1);
    return sp_error_hint(r->err, "%s", utf8_hint);
  }
  s++; n--; /* the '#' */
  trim(&s, &n);
  const char *colon = memchr(s, ':', n);
  const char *k = s, *v = s;
  size_t kn = 0, vn = n;
  if (colon) {
    kn = (size_t)(colon - s);
    v = colon + 1;
    vn = n - kn - 1;
    trim(&k, &kn);
    trim(&v, &vn);
    /* "# note: ..." keys are single words; a colon later in free text is
     * not a key separator. */
    for (size_t i = 0; i < kn; i++)
      if (k[i] == ' ' && kn > 40) { kn = 0; v = s; vn = n; break; }
  }
  if (!grow((void **)&t->meta, &r->cap_meta, t->nmeta + 1, sizeof *t->meta))
    return sp_fail(r->err, SP_ENOMEM, "out of memory");
  sp_meta *m = &t->meta[t->nmeta];
  m->key = dup_range(k, kn);
  m->value = dup_range(v, vn);
  m->line = r->line;
  if (!m->key || !m->value) {
    free(m->key); free(m->value);
    return sp_fail(r->err, SP_ENOMEM, "out of memory");
  }
  t->nmeta++;
  return SP_OK;
}

/* ---- the line feeder ---------------------------------------------------- */

/* Hands one physical line (including its '\n', if any) to libcsv, or, before
 * the header, to the metadata reader. */
static void feed_line(reader *r, struct csv_parser *p, const char *s, size_t n, int complete)
{
  if (r->status != SP_OK) return;
  if (!r->have_header && !r->in_record) {
    size_t k = 0;
    while (k < n && (is_blank(s[k]) || s[k] == '\r' || s[k] == '\n')) k++;
    if (k == n && complete) { r->line++; return; } /* blank line */
    if (s[0] == '#' && complete) {                 /* metadata */
      size_t m = n;
      while (m > 0 && (s[m - 1] == '\n' || s[m - 1] == '\r')) m--;
      sp_status ms = add_meta(r, s, m);
      if (ms != SP_OK) {
        r->status = ms;
        return;
      }
      r->line++;
      return;
    }
  }
  if (!r->in_record) r->record_line = r->line;
  r->row_ended_this_line = 0;
  r->record_bytes += n;
  if (r->record_bytes > SP_INGEST_MAX_RECORD_BYTES) {
    rd_fail(r, SP_ELIMIT, r->record_line, 1,
            "a row is longer than the limit of %u bytes (an unclosed quote?)",
            SP_INGEST_MAX_RECORD_BYTES);
    return;
  }
  if (csv_parse(p, s, n, on_field, on_row, r) != n && r->status == SP_OK) {
    int e = csv_error(p);
    if (e == CSV_EPARSE) {
      rd_fail(r, SP_EDATA, r->line, (long)r->nfields + 1,
              "malformed quoting: a quote inside an unquoted cell, or text after a "
              "closing quote");
      sp_error_hint(r->err, "a cell with a quote in it is itself quoted, and the quote "
                            "doubled: \"12\"\" gauge\" reads as 12\" gauge");
    } else
      r->status = sp_fail(r->err, SP_ENOMEM, "%s: %s", r->name, csv_strerror(e));
    return;
  }
  if (!complete) { r->in_record = 1; return; }
  /* After a complete line, libcsv holds part of a record unless the line's
   * own end finished one (a quoted cell may run on to the next line). */
  int blank = 1;
  for (size_t k = 0; k < n; k++)
    if (s[k] != '\r' && s[k] != '\n') { blank = 0; break; }
  if (r->row_ended_this_line && r->nfields == 0) r->in_record = 0;
  else if (blank && !r->in_record) r->in_record = 0;
  else r->in_record = 1;
  r->line++;
}

static void reader_init(reader *r, const char *name, const sp_ingest_options *opt,
                        sp_table *t, sp_error *err)
{
  memset(r, 0, sizeof *r);
  r->name = name;
  r->opt = opt;
  r->decimal = opt->decimal_comma ? ',' : '.';
  r->t = t;
  r->err = err;
  r->line = 1;
}

static void reader_free(reader *r)
{
  if (r->cs)
    for (size_t i = 0; i < r->nfile_cols; i++) intern_free(&r->cs[i].strings);
  free(r->cs);
  free(r->carry);
  free(r->fbuf);
  free(r->foff);
  free(r->rv);
  free(r->rf);
  free(r->rt);
}

static sp_status finish(reader *r, struct csv_parser *p)
{
  sp_table *t = r->t;
  if (r->status == SP_OK) {
    r->row_ended_this_line = 0;
    if (csv_fini(p, on_field, on_row, r) != 0 && r->status == SP_OK) {
      rd_fail(r, SP_EDATA, r->record_line, (long)r->nfields + 1,
              "a quoted cell is never closed (it starts on this line)");
      sp_error_hint(r->err, "a cell that starts with '\"' ends with '\"'; a quote inside a "
                            "quoted cell is doubled (\"\")");
    }
  }
  if (r->status == SP_OK && !r->have_header) {
    r->status = sp_fail_at(r->err, SP_EDATA, r->name, 0, 0,
                           "no header line: the file is empty or holds only comments");
    sp_error_hint(r->err, "the first line that is not a '#' comment must name the columns");
  }
  /* Shrink columns to their size and hand the string pools to the table. */
  if (r->cs) {
    for (size_t i = 0; i < r->nfile_cols; i++) {
      col_state *c = &r->cs[i];
      if (c->keep < 0) continue;
      sp_column *col = &t->cols[c->keep];
      col->n = t->nrows;
      if (c->kind == KIND_UNDECIDED) c->kind = KIND_NUMERIC; /* all missing */
      col->kind = c->kind == KIND_TEXT ? SP_COLUMN_TEXT : SP_COLUMN_NUMERIC;
      if (col->kind == SP_COLUMN_NUMERIC && t->nrows > 0) {
        /* A column that was all missing so far has no arrays yet. */
        if (!col->values) {
          col->values = malloc(t->nrows * sizeof *col->values);
          col->flags = malloc(t->nrows);
          if (!col->values || !col->flags) {
            r->status = sp_fail(r->err, SP_ENOMEM, "out of memory");
            continue;
          }
          for (size_t k = 0; k < t->nrows; k++) { col->values[k] = NAN; col->flags[k] = SP_OBS_MISSING; }
        } else {
          double *v = realloc(col->values, t->nrows * sizeof *v);
          if (v) col->values = v;
          unsigned char *f = realloc(col->flags, t->nrows);
          if (f) col->flags = f;
        }
      }
      /* The distinct strings move to the table, which frees them. */
      if (c->strings.count) {
        char **all = realloc(t->strings_, (t->nstrings_ + c->strings.count) * sizeof *all);
        if (!all) { r->status = sp_fail(r->err, SP_ENOMEM, "out of memory"); continue; }
        t->strings_ = all;
        for (size_t k = 0; k < c->strings.cap; k++)
          if (c->strings.slots[k]) t->strings_[t->nstrings_++] = c->strings.slots[k];
      }
      free(c->strings.slots);
      c->strings.slots = NULL;
      c->strings.cap = c->strings.count = 0;
    }
  }
  return r->status;
}

void sp_ingest_options_init(sp_ingest_options *o)
{
  memset(o, 0, sizeof *o);
}

static sp_table *table_new(const char *name)
{
  sp_table *t = calloc(1, sizeof *t);
  if (!t) return NULL;
  t->path = dup_str(name);
  if (!t->path) { free(t); return NULL; }
  return t;
}

/* Feeds a chunk, split at newlines.  Before the header, a line cut by the
 * chunk's end is carried over to the next chunk, so that a '#' line is
 * always seen whole; after the header, libcsv keeps the state itself. */
static void feed_chunk(reader *r, struct csv_parser *p, const char *buf, size_t n)
{
  size_t pos = 0;
  while (pos < n && r->status == SP_OK) {
    const char *nl = memchr(buf + pos, '\n', n - pos);
    size_t end = nl ? (size_t)(nl - buf) + 1 : n;
    if (r->ncarry > 0 || (!nl && !r->have_header && !r->in_record)) {
      if (!grow((void **)&r->carry, &r->cap_carry, r->ncarry + (end - pos), 1)) {
        r->status = sp_fail(r->err, SP_ENOMEM, "out of memory");
        return;
      }
      memcpy(r->carry + r->ncarry, buf + pos, end - pos);
      r->ncarry += end - pos;
      if (r->ncarry > SP_INGEST_MAX_RECORD_BYTES) {
        rd_fail(r, SP_ELIMIT, r->line, 1, "a line is longer than the limit of %u bytes",
                SP_INGEST_MAX_RECORD_BYTES);
        return;
      }
      if (nl) {
        size_t m = r->ncarry;
        r->ncarry = 0;
        feed_line(r, p, r->carry, m, 1);
      }
    } else {
      feed_line(r, p, buf + pos, end - pos, nl != NULL);
    }
    pos = end;
  }
}

/* At the end of the input: a carried last line without its newline. */
static void feed_rest(reader *r, struct csv_parser *p)
{
  if (r->ncarry == 0 || r->status != SP_OK) return;
  size_t m = r->ncarry;
  r->ncarry = 0;
  feed_line(r, p, r->carry, m, 1);
  /* no such path: sizes are not zero here and every block is freed:
   * NOLINTNEXTLINE(clang-analyzer-unix.Malloc) */
}

/* Hands one chunk of the input (writable, hashed already) to the reader:
 * skips a UTF-8 byte-order mark at the start, refuses a UTF-16 one, and
 * turns bare CR line ends into LF (a quoted cell's own bare CRs too, which
 * in such a file cannot be told from line ends). */
static void feed_input(reader *r, struct csv_parser *p, char *b, size_t n, int first)
{
  if (first) {
    if (n >= 3 && memcmp(b, "\xEF\xBB\xBF", 3) == 0) {
      b += 3;
      n -= 3;
    } else if (n >= 2 && (memcmp(b, "\xFF\xFE", 2) == 0 || memcmp(b, "\xFE\xFF", 2) == 0)) {
      rd_fail(r, SP_EDATA, 1, 1,
              "the file is UTF-16 text (it starts with a UTF-16 "
              "byte-order mark), not UTF-8");
      sp_error_hint(r->err, "save it as UTF-8 (a spreadsheet's 'CSV UTF-8' export)");
      return;
    }
  }
  if (r->line_ends == LINE_ENDS_UNDECIDED) {
    for (size_t i = 0; i < n; i++) {
      if (b[i] == '\n') {
        r->line_ends = LINE_ENDS_LF;
        break;
      }
      /* A CR at the chunk's end is decided by the next chunk's first byte;
       * until then it is fed as is (libcsv ends a row at a CR either way). */
      if (b[i] == '\r' && i + 1 < n) {
        r->line_ends = b[i + 1] == '\n' ? LINE_ENDS_LF : LINE_ENDS_CR;
        break;
      }
    }
  }
  if (r->line_ends == LINE_ENDS_CR)
    for (char *q = memchr(b, '\r', n); q; q = memchr(q + 1, '\r', n - (size_t)(q + 1 - b)))
      *q = '\n';
  feed_chunk(r, p, b, n);
}

static sp_status read_common(const char *name, FILE *fp, const char *data, size_t len,
                             const sp_ingest_options *opt_in, sp_table **out, sp_error *err)
{
  sp_ingest_options defaults;
  sp_ingest_options_init(&defaults);
  const sp_ingest_options *opt = opt_in ? opt_in : &defaults;
  *out = NULL;
  sp_table *t = table_new(name);
  if (!t) return sp_fail(err, SP_ENOMEM, "out of memory");
  reader r;
  reader_init(&r, name, opt, t, err);
  struct csv_parser p;
  if (csv_init(&p, CSV_STRICT | CSV_STRICT_FINI | CSV_APPEND_NULL) != 0) {
    sp_table_free(t);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  if (opt->decimal_comma) csv_set_delim(&p, ';');

  /* A file is read in chunks of 1 MiB; a buffer is copied through the same
   * chunks, so both take one path (the reader writes into its chunk). */
  sp_sha256_ctx sha;
  sp_sha256_init(&sha);
  uint64_t total = 0;
  size_t cap = 1 << 20, off = 0;
  char *buf = malloc(cap);
  if (!buf) r.status = sp_fail(err, SP_ENOMEM, "out of memory");
  for (int first = 1; buf; first = 0) {
    size_t got;
    if (fp) {
      got = fread(buf, 1, cap, fp);
    } else {
      got = len - off < cap ? len - off : cap;
      if (got) memcpy(buf, data + off, got);
      off += got;
    }
    if (got == 0) break;
    /* The hash covers the whole file even when parsing stopped early. */
    sp_sha256_update(&sha, buf, got);
    total += got;
    if (r.status == SP_OK) feed_input(&r, &p, buf, got, first);
  }
  if (r.status == SP_OK && fp && ferror(fp))
    r.status = sp_fail(err, SP_EIO, "%s: read failed: %s", name, strerror(errno));
  free(buf);
  feed_rest(&r, &p);
  sp_sha256_final(&sha, t->sha256);
  t->size = total;
  sp_status s = finish(&r, &p);
  csv_free(&p);
  reader_free(&r);
  if (s != SP_OK) {
    sp_table_free(t);
    return s;
  }
  *out = t;
  return SP_OK;
}

sp_status sp_table_read(const char *path, const sp_ingest_options *opt, sp_table **out,
                        sp_error *err)
{
  *out = NULL;
  /* A regular file only: the record keeps its hash and size, and replay
   * reads it again (a FIFO would also block here without a writer). */
  sp_error local;
  sp_error_clear(&local);
  FILE *fp = sp_file_open_input(path, "CSV file", 0, err ? err : &local);
  if (!fp) return err ? err->code : local.code;
  sp_status s = read_common(path, fp, NULL, 0, opt, out, err);
  fclose(fp);
  return s;
}

sp_status sp_table_read_buffer(const char *name, const char *data, size_t len,
                               const sp_ingest_options *opt, sp_table **out, sp_error *err)
{
  *out = NULL;
  return read_common(name, NULL, data, len, opt, out, err);
}

void sp_table_free(sp_table *t)
{
  if (!t) return;
  for (size_t i = 0; i < t->ncols; i++) {
    sp_column *c = &t->cols[i];
    free(c->name);
    free(c->header);
    free(c->unit_text);
    sp_unit_free(c->unit);
    free(c->values);
    free(c->flags);
    free(c->text);
  }
  for (size_t i = 0; i < t->nstrings_; i++) free(t->strings_[i]);
  free(t->strings_);
  free(t->cols);
  for (size_t i = 0; i < t->nmeta; i++) { free(t->meta[i].key); free(t->meta[i].value); }
  free(t->meta);
  for (size_t i = 0; i < t->nskipped; i++) free(t->skipped[i].reason);
  free(t->skipped);
  free(t->path);
  free(t);
}

const sp_column *sp_table_column(const sp_table *t, const char *name)
{
  for (size_t i = 0; i < t->ncols; i++)
    if (strcmp(t->cols[i].name, name) == 0 || strcmp(t->cols[i].header, name) == 0)
      return &t->cols[i];
  return NULL;
}

const char *sp_table_meta(const sp_table *t, const char *key)
{
  for (size_t i = 0; i < t->nmeta; i++)
    if (strcmp(t->meta[i].key, key) == 0) return t->meta[i].value;
  return NULL;
}
