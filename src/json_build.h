/* Private: small jansson builders shared by the record writers.  Each
 * records an allocation failure (or invalid UTF-8) in w->bad instead of
 * failing at once, so a writer builds its whole tree and checks once. */
#ifndef SP_JSON_BUILD_H
#define SP_JSON_BUILD_H

#include <math.h>

#include <jansson.h>

/* Seventeen significant digits round-trip every double (IEEE 754-2008,
 * clause 5.12.2: 17 decimal digits suffice for binary64). */
#define REC_DUMP_FLAGS (JSON_INDENT(2) | JSON_PRESERVE_ORDER | JSON_REAL_PRECISION(17))

/* json_t builders that record an allocation failure in *bad instead of
 * crashing; the final dump checks it. */
typedef struct {
  int bad;
} wctx;

static inline json_t *num(wctx *w, double v)
{
  if (!isfinite(v)) return json_null();
  json_t *j = json_real(v);
  if (!j) w->bad = 1;
  return j;
}

static inline json_t *str(wctx *w, const char *s)
{
  if (!s) return json_null();
  json_t *j = json_string(s);
  if (!j) w->bad = 1; /* also invalid UTF-8 */
  return j;
}

static inline json_t *integer(wctx *w, long long v)
{
  json_t *j = json_integer((json_int_t)v);
  if (!j) w->bad = 1;
  return j;
}

static inline void set(wctx *w, json_t *o, const char *key, json_t *v)
{
  if (!o || !v || json_object_set_new(o, key, v) != 0) {
    w->bad = 1;
    json_decref(v);
  }
}

static inline void push(wctx *w, json_t *a, json_t *v)
{
  if (!a || !v || json_array_append_new(a, v) != 0) {
    w->bad = 1;
    json_decref(v);
  }
}

static inline json_t *obj(wctx *w)
{
  json_t *o = json_object();
  if (!o) w->bad = 1;
  return o;
}

static inline json_t *arr(wctx *w)
{
  json_t *a = json_array();
  if (!a) w->bad = 1;
  return a;
}

#endif
