/* scatterprop replay: field-by-field comparison of a recorded and a
 * replayed record, with the ignore lists of each kind of record. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "replay_internal.h"

/* Fields not compared, as paths with "[]" for any array index.  A field
 * listed here is skipped with everything below it. */
static const char *const ignore_common[] = {
  "created_utc",  /* when, not what */
  "command",      /* how the program was called: other paths, --threads, --archive */
  "caution",      /* a fixed paragraph of the tool's text */
  "tool",         /* build facts: checked by sp_replay_check_build instead */
  "provenance",   /* build, libraries, machine, folder: likewise */
  "archive",      /* what an archive rewrote */
  "options.threads",
};
static const char *const ignore_fit[] = {
  "data.path",    /* where the CSV was; its size and SHA-256 are compared */
};
static const char *const ignore_run[] = {
  "model.path",   /* where the model was; its SHA-256 and text are compared */
  "inputs[].fit_record.resolved",
  "inputs[].fit_record.data_path",
};
/* Fields a record written before they were added lacks: compared when
 * the record has them. */
static const char *const optional_fit[] = {
  "options.bootstrap.generator",
  "options.bootstrap.stream_rule",
  "options.bootstrap.rule",
};

typedef struct {
  sp_replay_kind kind;
  double tol;
  sp_replay_report *rep;
  sp_error *err;
  int oom;
  /* The path being visited, and the same with "[]" for every index. */
  char path[1024];
  char pattern[1024];
} walker;

static int listed(const char *const *list, size_t n, const char *pattern)
{
  for (size_t i = 0; i < n; i++)
    if (strcmp(list[i], pattern) == 0) return 1;
  return 0;
}

#define NLIST(a) (sizeof a / sizeof a[0])

static int ignored(const walker *w)
{
  if (listed(ignore_common, NLIST(ignore_common), w->pattern)) return 1;
  if (w->kind == SP_REPLAY_FIT) return listed(ignore_fit, NLIST(ignore_fit), w->pattern);
  return listed(ignore_run, NLIST(ignore_run), w->pattern);
}

static int optional_field(const walker *w)
{
  return w->kind == SP_REPLAY_FIT && listed(optional_fit, NLIST(optional_fit), w->pattern);
}

/* JSON text of a value for the report, cut to a readable length. */
static char *value_text(const json_t *v)
{
  if (!v) return strdup("(absent)");
  char *t = json_dumps(v, JSON_ENCODE_ANY | JSON_COMPACT | JSON_REAL_PRECISION(17));
  if (!t) return NULL;
  /* Objects and arrays (a changed shape) can be long: 120 characters show
   * the start, which is enough to recognise them. */
  const size_t cut = 120;
  if (strlen(t) > cut) strcpy(t + cut - 3, "...");
  return t;
}

static void add_diff(walker *w, const json_t *a, const json_t *b, double rel)
{
  sp_replay_diff_kind kind = !a                                 ? SP_REPLAY_DIFF_NOT_RECORDED
                             : !b                               ? SP_REPLAY_DIFF_NOT_REPLAYED
                             : json_typeof(a) != json_typeof(b) ? SP_REPLAY_DIFF_TYPE
                                                                : SP_REPLAY_DIFF_VALUE;
  sp_replay_report *rep = w->rep;
  rep->ndiffs_total++;
  if (rep->ndiffs >= SP_REPLAY_MAX_DIFFS) return;
  if (rep->ndiffs % 16 == 0) {
    sp_replay_diff *nd = realloc(rep->diffs, (rep->ndiffs + 16) * sizeof *nd);
    if (!nd) {
      w->oom = 1;
      return;
    }
    rep->diffs = nd;
  }
  sp_replay_diff *d = &rep->diffs[rep->ndiffs];
  d->path = strdup(w->path);
  d->recorded = value_text(a);
  d->replayed = value_text(b);
  d->rel = rel;
  d->kind = kind;
  if (!d->path || !d->recorded || !d->replayed) {
    free(d->path);
    free(d->recorded);
    free(d->replayed);
    w->oom = 1;
    return;
  }
  rep->ndiffs++;
}

static int numbers_equal(const json_t *a, const json_t *b, double tol, double *rel)
{
  /* An integer where the writer puts a real (or the reverse) is another
   * type, even when the values agree: 1000000.0 for a count. */
  if (json_typeof(a) != json_typeof(b)) {
    double x = json_number_value(a), y = json_number_value(b), m = fmax(fabs(x), fabs(y));
    *rel = m > 0 ? fabs(x - y) / m : 0.0;
    return 0;
  }
  if (json_is_integer(a) && json_is_integer(b)) {
    json_int_t x = json_integer_value(a), y = json_integer_value(b);
    double dx = (double)x, dy = (double)y;
    double m = fmax(fabs(dx), fabs(dy));
    *rel = m > 0 ? fabs(dx - dy) / m : 0.0;
    /* Integers are counts, seeds and sizes: equal or not, whatever tol. */
    return x == y;
  }
  double x = json_number_value(a), y = json_number_value(b);
  double m = fmax(fabs(x), fabs(y));
  *rel = m > 0 ? fabs(x - y) / m : 0.0;
  if (x == y) return 1;
  return fabs(x - y) <= tol * m;
}

static void visit(walker *w, const json_t *a, const json_t *b);

/* Appends ".key" or "[i]" to both paths; returns the old lengths. */
static void push_key(walker *w, const char *key, size_t *lp, size_t *lq)
{
  *lp = strlen(w->path);
  *lq = strlen(w->pattern);
  snprintf(w->path + *lp, sizeof w->path - *lp, "%s%s", *lp ? "." : "", key);
  snprintf(w->pattern + *lq, sizeof w->pattern - *lq, "%s%s", *lq ? "." : "", key);
}

static void push_index(walker *w, size_t i, size_t *lp, size_t *lq)
{
  *lp = strlen(w->path);
  *lq = strlen(w->pattern);
  snprintf(w->path + *lp, sizeof w->path - *lp, "[%zu]", i);
  snprintf(w->pattern + *lq, sizeof w->pattern - *lq, "[]");
}

static void pop(walker *w, size_t lp, size_t lq)
{
  w->path[lp] = '\0';
  w->pattern[lq] = '\0';
}

static void visit_object(walker *w, const json_t *a, const json_t *b)
{
  const char *key;
  json_t *va;
  json_object_foreach((json_t *)(uintptr_t)a, key, va) {
    size_t lp, lq;
    push_key(w, key, &lp, &lq);
    if (!ignored(w)) visit(w, va, json_object_get(b, key));
    pop(w, lp, lq);
  }
  json_t *vb;
  json_object_foreach((json_t *)(uintptr_t)b, key, vb) {
    if (json_object_get(a, key)) continue;
    size_t lp, lq;
    push_key(w, key, &lp, &lq);
    if (!ignored(w) && !optional_field(w)) {
      w->rep->compared++;
      add_diff(w, NULL, vb, NAN);
    }
    pop(w, lp, lq);
  }
}

static void visit(walker *w, const json_t *a, const json_t *b)
{
  if (w->oom) return;
  if (!b) {
    w->rep->compared++;
    add_diff(w, a, NULL, NAN);
    return;
  }
  if (json_is_object(a) && json_is_object(b)) {
    visit_object(w, a, b);
    return;
  }
  if (json_is_array(a) && json_is_array(b)) {
    size_t na = json_array_size(a), nb = json_array_size(b), n = na > nb ? na : nb;
    for (size_t i = 0; i < n && !w->oom; i++) {
      size_t lp, lq;
      push_index(w, i, &lp, &lq);
      const json_t *x = json_array_get(a, i), *y = json_array_get(b, i);
      if (!x) {
        w->rep->compared++;
        add_diff(w, NULL, y, NAN);
      } else {
        visit(w, x, y);
      }
      pop(w, lp, lq);
    }
    return;
  }
  w->rep->compared++;
  if (json_is_number(a) && json_is_number(b)) {
    double rel;
    if (!numbers_equal(a, b, w->tol, &rel)) add_diff(w, a, b, rel);
    return;
  }
  if (json_is_string(a) && json_is_string(b)) {
    if (strcmp(json_string_value(a), json_string_value(b)) != 0) add_diff(w, a, b, NAN);
    return;
  }
  if (json_typeof(a) == json_typeof(b) && (json_is_null(a) || json_is_boolean(a))) return;
  add_diff(w, a, b, NAN);
}

sp_status sp_replay_compare_trees(const json_t *recorded, const json_t *replayed,
                                  sp_replay_kind kind, double tolerance,
                                  sp_replay_report *rep, sp_error *err)
{
  walker w;
  memset(&w, 0, sizeof w);
  w.kind = kind;
  w.tol = tolerance;
  w.rep = rep;
  w.err = err;
  visit(&w, recorded, replayed);
  if (w.oom) return sp_fail(err, SP_ENOMEM, "replay: out of memory comparing the records");
  return SP_OK;
}

static const char *type_name(const char *json_text)
{
  switch (json_text[0]) {
  case '"':
    return "a string";
  case '{':
    return "an object";
  case '[':
    return "an array";
  case 't':
  case 'f':
    return "a boolean";
  case 'n':
    return "null";
  default:
    return strpbrk(json_text, ".eE") ? "a real number" : "an integer";
  }
}

sp_status sp_replay_refuse_malformed(const char *kind, const char *record,
                                     const sp_replay_report *rep, sp_error *err)
{
  if (rep->build_differs) return SP_OK;
  for (size_t i = 0; i < rep->ndiffs; i++) {
    const sp_replay_diff *d = &rep->diffs[i];
    if (d->kind == SP_REPLAY_DIFF_NOT_RECORDED) {
      sp_fail(err, SP_EDATA,
              "%s record %s: field '%s' is missing (this build writes it: "
              "%s)",
              kind, record, d->path, d->replayed);
    } else if (d->kind == SP_REPLAY_DIFF_NOT_REPLAYED) {
      sp_fail(err, SP_EDATA,
              "%s record %s: field '%s' is not one this build writes (it "
              "holds %s)",
              kind, record, d->path, d->recorded);
    } else if (d->kind == SP_REPLAY_DIFF_TYPE) {
      sp_fail(err, SP_EDATA,
              "%s record %s: field '%s' must be %s, as this build writes it "
              "(%s), got %s",
              kind, record, d->path, type_name(d->replayed), d->replayed, d->recorded);
    } else {
      continue;
    }
    return sp_error_hint(err, "the record was edited or damaged after it was made: take "
                              "the original (an archive's MANIFEST.sha256 gives its hash)");
  }
  return SP_OK;
}
