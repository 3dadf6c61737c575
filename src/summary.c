/* scatterprop summary: per-column statistics, grouped and pooled. */
#include "scatterprop/summary.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include <jansson.h>

#include "utf8.h"

void sp_groups_free(sp_group *groups, size_t ngroups)
{
  if (!groups) return;
  for (size_t i = 0; i < ngroups; i++) {
    free(groups[i].label);
    free(groups[i].rows);
  }
  free(groups);
}

/* FNV-1a, 64-bit, with its published offset basis and prime. */
static size_t label_hash(const char *s)
{
  uint64_t h = 1469598103934665603ull;
  for (; *s; s++) {
    h ^= (unsigned char)*s;
    h *= 1099511628211ull;
  }
  return (size_t)h;
}

sp_status sp_group_labels(const char *const *labels, size_t n, int skip_empty,
                          sp_group **groups, size_t *ngroups, sp_error *err)
{
  *groups = NULL;
  *ngroups = 0;
  /* Each row's group is found through a hash table of the labels (FNV-1a,
   * open addressing, at most half full; Fowler, Noll & Vo,
   * http://www.isthe.com/chongo/tech/comp/fnv/), and the rows of the groups
   * are gathered by a counting pass, so grouping is linear in the rows even
   * when every row is its own group (--by a part number; a search of the
   * group list per row made 64 000 one-row lots of fit --by take 21 s).
   * Groups keep the order in which their label first appears. */
  sp_group *g = NULL;
  size_t ng = 0, capg = 0;
  size_t *gid = malloc((n ? n : 1) * sizeof *gid);
  size_t hcap = 64;
  size_t *slot = NULL; /* group index + 1, 0 when empty */
  if (!gid) goto oom;
  slot = calloc(hcap, sizeof *slot);
  if (!slot) goto oom;
  for (size_t r = 0; r < n; r++) {
    const char *v = labels[r] ? labels[r] : "";
    gid[r] = (size_t)-1;
    if (skip_empty && !v[0]) continue;
    if (2 * (ng + 1) > hcap) { /* keep the table at most half full */
      size_t ncap = 2 * hcap;
      size_t *ns = calloc(ncap, sizeof *ns);
      if (!ns) goto oom;
      for (size_t k = 0; k < ng; k++) {
        size_t j = label_hash(g[k].label) & (ncap - 1);
        while (ns[j])
          j = (j + 1) & (ncap - 1);
        ns[j] = k + 1;
      }
      free(slot);
      slot = ns;
      hcap = ncap;
    }
    size_t j = label_hash(v) & (hcap - 1);
    while (slot[j] && strcmp(g[slot[j] - 1].label, v) != 0)
      j = (j + 1) & (hcap - 1);
    if (!slot[j]) {
      if (ng == capg) {
        size_t nc = capg ? 2 * capg : 8;
        sp_group *ngp = realloc(g, nc * sizeof *g);
        if (!ngp) goto oom;
        g = ngp;
        capg = nc;
      }
      memset(&g[ng], 0, sizeof g[ng]);
      g[ng].label = malloc(strlen(v) + 1);
      if (!g[ng].label) goto oom;
      strcpy(g[ng].label, v);
      slot[j] = ++ng;
    }
    gid[r] = slot[j] - 1;
    if (!g) goto oom; /* not reached: a slot holds a group (for the analyzer) */
    g[gid[r]].n++;
  }
  for (size_t k = 0; k < ng; k++) {
    g[k].rows = malloc((g[k].n ? g[k].n : 1) * sizeof *g[k].rows);
    if (!g[k].rows) goto oom;
    g[k].n = 0;
  }
  for (size_t r = 0; r < n; r++) {
    if (gid[r] == (size_t)-1) continue;
    sp_group *k = &g[gid[r]];
    /* allocated above for every group (not followed by the analyzer):
     * NOLINTNEXTLINE(clang-analyzer-core.NullDereference) */
    k->rows[k->n++] = r;
  }
  free(gid);
  free(slot);
  *groups = g;
  *ngroups = ng;
  return SP_OK;
oom:
  free(gid);
  free(slot);
  sp_groups_free(g, ng);
  return sp_fail(err, SP_ENOMEM, "out of memory");
}

sp_status sp_table_groups(const sp_table *t, const char *by, sp_group **groups,
                          size_t *ngroups, sp_error *err)
{
  *groups = NULL;
  *ngroups = 0;
  const sp_column *c = sp_table_column(t, by);
  if (!c) {
    sp_fail_at(err, SP_EDATA, t->path, t->header_line, 0,
               "no column named '%s' in the header to group by", by);
    return sp_error_hint(err, "--by takes the name of a text column such as a lot id");
  }
  if (c->kind != SP_COLUMN_TEXT) {
    sp_fail_at(err, SP_EDATA, t->path, t->header_line, (long)c->index + 1,
               "column '%s' holds numbers; --by needs a text column", c->header);
    if (c->unit_text)
      return sp_error_hint(err, "a column with a unit holds measurements; group by a column "
                                "of lot or batch ids (a header cell without a unit)");
    return sp_error_hint(err, "group by a column of lot or batch ids; ids written as numbers "
                              "are read as text when the column is named in the ingest "
                              "options' text_columns");
  }
  return sp_group_labels((const char *const *)c->text, t->nrows, 0, groups, ngroups, err);
}

int sp_summary_decimals_for(double sd)
{
  if (!(sd > 0) || !isfinite(sd)) return -1;
  int d = 2 - (int)floor(log10(sd));
  /* Fixed decimals only where they show the values: more than 12
   * decimals would print a tiny spread as zeros, and from 1e15 up a double
   * has no more integer digits to show; -1 asks for 6 significant digits. */
  if (d > 12 || sd >= 1e15) return -1;
  if (d < 0) d = 0;
  return d;
}

static sp_status summarise_rows(const sp_column *c, const size_t *rows, size_t nrows,
                                double *work, sp_summary_row *out, sp_error *err)
{
  out->column = c;
  out->rows = nrows;
  out->missing = 0;
  size_t k = 0;
  for (size_t i = 0; i < nrows; i++) {
    size_t r = rows ? rows[i] : i;
    if (c->flags[r] & SP_OBS_MISSING) { out->missing++; continue; }
    work[k++] = c->values[r];
  }
  out->has_stats = k > 0;
  if (!out->has_stats) return SP_OK;
  /* The values are copied, so describe may rearrange the copy in place. */
  return sp_stats_describe(work, k, work + k, &out->d, err);
}

void sp_summary_set_free(sp_summary_set *s)
{
  if (!s) return;
  for (size_t i = 0; i < s->nblocks; i++) free(s->blocks[i].rows);
  free(s->blocks);
  sp_groups_free(s->groups_, s->ngroups_);
  free(s);
}

sp_status sp_summary_build(const sp_table *t, const char *const *columns, size_t ncolumns,
                           const char *by, sp_summary_set **out, sp_error *err)
{
  *out = NULL;
  sp_summary_set *s = calloc(1, sizeof *s);
  if (!s) return sp_fail(err, SP_ENOMEM, "out of memory");
  s->table = t;
  s->by = by;
  sp_status st = SP_OK;
  double *work = NULL;
  if (by) {
    st = sp_table_groups(t, by, &s->groups_, &s->ngroups_, err);
    if (st != SP_OK) goto done;
  }
  /* The columns to describe. */
  const sp_column **cols = calloc(t->ncols ? t->ncols : 1, sizeof *cols);
  if (!cols) { st = sp_fail(err, SP_ENOMEM, "out of memory"); goto done; }
  size_t nc = 0;
  if (ncolumns > 0) {
    for (size_t i = 0; i < ncolumns; i++) {
      const sp_column *c = sp_table_column(t, columns[i]);
      if (!c) {
        st = sp_fail_at(err, SP_EDATA, t->path, t->header_line, 0,
                        "no column named '%s' in the header", columns[i]);
        break;
      }
      int seen = 0;
      for (size_t k = 0; k < nc; k++)
        seen |= cols[k] == c;
      if (seen) continue; /* named twice (by name and by header, say): described once */
      if (c->kind != SP_COLUMN_NUMERIC) {
        st = sp_fail_at(err, SP_EDATA, t->path, t->header_line, (long)c->index + 1,
                        "column '%s' holds text, not numbers", c->header);
        sp_error_hint(err, "its first reading is not a number; a unit in the header "
                           "('%s [mm]') makes a column numeric, so a bad reading is then "
                           "reported with its line", c->name);
        break;
      }
      cols[nc++] = c;
    }
  } else {
    for (size_t i = 0; i < t->ncols; i++)
      if (t->cols[i].kind == SP_COLUMN_NUMERIC) cols[nc++] = &t->cols[i];
  }
  if (st == SP_OK && nc == 0) {
    st = sp_fail_at(err, SP_EDATA, t->path, t->header_line, 0,
                    "no numeric column to describe in the header");
    /* Name the text columns and what made each one text. */
    char list[600] = "";
    size_t l = 0;
    for (size_t i = 0; i < t->ncols && l + 1 < sizeof list; i++) {
      const sp_column *c = &t->cols[i];
      if (c->kind != SP_COLUMN_TEXT) continue;
      const char *first = "";
      for (size_t k = 0; k < c->n && !first[0]; k++)
        first = c->text[k];
      size_t fl = strlen(first);
      int w;
      if (by && sp_table_column(t, by) == c)
        w = snprintf(list + l, sizeof list - l, "%s'%s' (the --by column)", l ? ", " : "",
                     c->header);
      else
        w = snprintf(list + l, sizeof list - l, "%s'%s' (first reading '%.*s')", l ? ", " : "",
                     c->header, (int)sp_utf8_cut(first, fl < 40 ? fl : 40), first);
      if (w < 0) break;
      l += (size_t)w;
    }
    if (l >= sizeof list) l = sizeof list - 1;
    list[sp_utf8_cut(list, l)] = '\0';
    if (l)
      sp_error_hint(err,
                    "the text columns are %s; a unit in the header ('name [mm]') makes "
                    "a column numeric, so that a bad reading is reported with its line",
                    list);
    else
      sp_error_hint(err, "give --column NAME for the column to describe");
  }
  if (st == SP_OK) {
    s->blocks = calloc(nc, sizeof *s->blocks);
    work = malloc((2 * t->nrows + 1) * sizeof *work);
    if (!s->blocks || !work) st = sp_fail(err, SP_ENOMEM, "out of memory");
  }
  for (size_t b = 0; b < nc && st == SP_OK; b++) {
    sp_summary_block *blk = &s->blocks[b];
    s->nblocks++;
    /* allocated and checked above under the same status (not followed):
     * NOLINTNEXTLINE(clang-analyzer-core.NullDereference) */
    blk->column = cols[b];
    blk->nrows = s->ngroups_ + 1;
    blk->rows = calloc(blk->nrows, sizeof *blk->rows);
    if (!blk->rows) { st = sp_fail(err, SP_ENOMEM, "out of memory"); break; }
    for (size_t g = 0; g < s->ngroups_ && st == SP_OK; g++) {
      st = summarise_rows(cols[b], s->groups_[g].rows, s->groups_[g].n, work, &blk->rows[g], err);
      blk->rows[g].group = s->groups_[g].label;
    }
    if (st == SP_OK) {
      sp_summary_row *pooled = &blk->rows[s->ngroups_];
      st = summarise_rows(cols[b], NULL, t->nrows, work, pooled, err);
      pooled->group = NULL;
      blk->decimals = pooled->has_stats ? sp_summary_decimals_for(pooled->d.sd) : -1;
    }
  }
  free(cols);
done:
  free(work);
  if (st != SP_OK) {
    sp_summary_set_free(s);
    return st;
  }
  *out = s;
  return SP_OK;
}

/* JSON numbers: NaN has no JSON form, so undefined statistics are null. */
static json_t *num(double v) { return isfinite(v) ? json_real(v) : json_null(); }

/* A JSON string.  jansson refuses text that is not UTF-8 (json_string
 * returns NULL, and the member would silently go missing); the reader
 * refuses such cells, but a file name or a message cut short can still
 * hold a stray byte, which becomes '?'. */
static json_t *str(const char *s)
{
  json_t *j = json_string(s);
  if (j) return j;
  size_t n = strlen(s);
  char *c = malloc(n + 1);
  if (!c) return NULL;
  memcpy(c, s, n + 1);
  for (size_t i = sp_utf8_check(c, n); i < n; i += 1 + sp_utf8_check(c + i + 1, n - i - 1))
    c[i] = '?';
  j = json_string(c);
  free(c);
  return j;
}

char *sp_summary_json(const sp_summary_set *s, sp_error *err)
{
  const sp_table *t = s->table;
  json_t *root = json_object();
  json_t *meta = json_array();
  json_t *skipped = json_array();
  json_t *cols = json_array();
  if (!root || !meta || !skipped || !cols) goto oom;
  json_object_set_new(root, "format", str("scatterprop-summary"));
  json_object_set_new(root, "version", json_integer(1));
  json_object_set_new(root, "tool_version", str(sp_version()));
  json_object_set_new(root, "file", str(t->path));
  json_object_set_new(root, "size", json_integer((json_int_t)t->size));
  json_object_set_new(root, "sha256", str(t->sha256));
  for (size_t i = 0; i < t->nmeta; i++) {
    json_t *m = json_object();
    json_object_set_new(m, "key", str(t->meta[i].key));
    json_object_set_new(m, "value", str(t->meta[i].value));
    json_object_set_new(m, "line", json_integer(t->meta[i].line));
    json_array_append_new(meta, m);
  }
  json_object_set_new(root, "metadata", meta);
  json_object_set_new(root, "rows", json_integer((json_int_t)t->nrows));
  for (size_t i = 0; i < t->nskipped; i++) {
    json_t *k = json_object();
    json_object_set_new(k, "line", json_integer(t->skipped[i].line));
    json_object_set_new(k, "column", json_integer(t->skipped[i].col));
    json_object_set_new(k, "reason", str(t->skipped[i].reason));
    json_array_append_new(skipped, k);
  }
  json_object_set_new(root, "skipped_rows", skipped);
  json_object_set_new(root, "group_by", s->by ? str(s->by) : json_null());
  json_t *text_cols = json_array();
  for (size_t i = 0; text_cols && i < t->ncols; i++)
    if (t->cols[i].kind == SP_COLUMN_TEXT) json_array_append_new(text_cols, str(t->cols[i].name));
  json_object_set_new(root, "text_columns", text_cols);
  for (size_t b = 0; b < s->nblocks; b++) {
    const sp_summary_block *blk = &s->blocks[b];
    json_t *c = json_object();
    json_t *groups = json_array();
    json_object_set_new(c, "name", str(blk->column->name));
    json_object_set_new(c, "unit",
                        blk->column->unit_text ? str(blk->column->unit_text) : json_null());
    for (size_t g = 0; g < blk->nrows; g++) {
      const sp_summary_row *r = &blk->rows[g];
      json_t *o = json_object();
      json_object_set_new(o, "group", r->group ? str(r->group) : json_null());
      json_object_set_new(o, "rows", json_integer((json_int_t)r->rows));
      json_object_set_new(o, "missing", json_integer((json_int_t)r->missing));
      json_object_set_new(o, "n", json_integer((json_int_t)(r->has_stats ? r->d.n : 0)));
      double nanv = NAN;
      const sp_describe *d = &r->d;
      json_object_set_new(o, "mean", num(r->has_stats ? d->mean : nanv));
      json_object_set_new(o, "sd", num(r->has_stats ? d->sd : nanv));
      json_object_set_new(o, "min", num(r->has_stats ? d->min : nanv));
      json_object_set_new(o, "q1", num(r->has_stats ? d->q1 : nanv));
      json_object_set_new(o, "median", num(r->has_stats ? d->median : nanv));
      json_object_set_new(o, "q3", num(r->has_stats ? d->q3 : nanv));
      json_object_set_new(o, "max", num(r->has_stats ? d->max : nanv));
      json_object_set_new(o, "skewness", num(r->has_stats ? d->skewness : nanv));
      json_object_set_new(o, "excess_kurtosis", num(r->has_stats ? d->kurtosis : nanv));
      json_array_append_new(groups, o);
    }
    json_object_set_new(c, "groups", groups);
    json_array_append_new(cols, c);
  }
  json_object_set_new(root, "columns", cols);
  json_object_set_new(root, "definitions",
                      str("sd with n-1; skewness m3/m2^1.5 and excess kurtosis "
                          "m4/m2^2-3 (NIST/SEMATECH e-Handbook 1.3.5.11); quartiles "
                          "Hyndman & Fan (1996) definition 7"));
  char *txt = json_dumps(root, JSON_INDENT(2) | JSON_PRESERVE_ORDER | JSON_REAL_PRECISION(17));
  json_decref(root);
  if (!txt) sp_fail(err, SP_ENOMEM, "out of memory");
  return txt;
oom:
  json_decref(root); json_decref(meta); json_decref(skipped); json_decref(cols);
  sp_fail(err, SP_ENOMEM, "out of memory");
  return NULL;
}
