/* scatterprop units: a small wrapper over udunits2.
 *
 * udunits2 keeps global state (the status of the last call, the message
 * handler, and a yacc/lex parser with static tables), so every call into it
 * is made under one mutex.  Units are parsed and combined while a model is
 * compiled or a CSV header is read, never per sample, so the lock costs
 * nothing that matters.  The unit system is loaded once per process and
 * lives until the process ends. */
#include "scatterprop/units.h"

#include <errno.h>
#include <float.h>
#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>

#include <udunits2.h>

#include "utf8.h"

struct sp_unit {
  ut_unit *u;
  char *text; /* owned; what sp_unit_text returns */
};

/* ---- the unit system, loaded once ------------------------------------- */

static pthread_once_t units_once = PTHREAD_ONCE_INIT;
static pthread_mutex_t units_lock = PTHREAD_MUTEX_INITIALIZER;
static ut_system *units_system;
static ut_status units_load_status;
static int units_load_errno;
static char units_load_path[SP_ERROR_FILE_MAX];

static void units_load(void)
{
  /* udunits2 writes its diagnostics to stderr by default; the library never
   * prints, so they are dropped and our own messages say what failed.  The
   * handler is process-wide: other udunits2 users in the process are
   * silenced too. */
  ut_set_error_message_handler(ut_ignore);
  ut_status path_status;
  const char *path = ut_get_path_xml(NULL, &path_status);
  snprintf(units_load_path, sizeof units_load_path, "%s",
           path ? path : "(no path)");
  errno = 0;
  units_system = ut_read_xml(NULL);
  if (!units_system) {
    units_load_status = ut_get_status();
    units_load_errno = errno;
  }
}

sp_status sp_units_init(sp_error *err)
{
  int rc = pthread_once(&units_once, units_load);
  if (rc != 0)
    return sp_fail(err, SP_EIO, "cannot initialise the unit database: %s",
                   strerror(rc));
  if (units_system) return SP_OK;
  const char *why;
  switch (units_load_status) {
  case UT_OPEN_ARG:
  case UT_OPEN_ENV:
  case UT_OPEN_DEFAULT:
    why = units_load_errno ? strerror(units_load_errno) : "cannot open the file";
    break;
  case UT_PARSE: why = "the file is not a valid udunits2 XML database"; break;
  case UT_OS:
    why = units_load_errno ? strerror(units_load_errno) : "operating-system error";
    break;
  default: why = "udunits2 could not read it"; break;
  }
  sp_fail(err, SP_EIO, "cannot load the udunits2 unit database '%s': %s",
          units_load_path, why);
  return sp_error_hint(err, "set UDUNITS2_XML_PATH to the udunits2.xml file "
                            "(Debian: /usr/share/xml/udunits/udunits2.xml)");
}

/* ---- helpers ----------------------------------------------------------- */

static char *dup_text(const char *s, size_t len)
{
  char *t = malloc(len + 1);
  if (!t) return NULL;
  memcpy(t, s, len);
  t[len] = '\0';
  return t;
}

/* Wraps an owned ut_unit and text (both are freed on failure). */
static sp_unit *wrap(ut_unit *u, char *text, sp_error *err)
{
  sp_unit *r = malloc(sizeof *r);
  if (!r || !text) {
    free(r);
    free(text);
    pthread_mutex_lock(&units_lock);
    ut_free(u);
    pthread_mutex_unlock(&units_lock);
    sp_fail(err, SP_ENOMEM, "out of memory for a unit");
    return NULL;
  }
  r->u = u;
  r->text = text;
  return r;
}

/* Maps a udunits2 status after a failed operation ("multiply 'a' by 'b'")
 * to an error. */
static sp_unit *op_failed(ut_status st, sp_error *err, const char *what)
{
  if (st == UT_OS)
    sp_fail(err, SP_ENOMEM, "out of memory while trying to %s", what);
  else if (st == UT_BAD_ARG)
    sp_fail(err, SP_EUSAGE, "cannot %s: argument out of range", what);
  else
    sp_fail(err, SP_EDATA, "cannot %s", what);
  return NULL;
}

static int is_blank(char c) { return c == ' ' || c == '\t'; }
static int is_digit(char c) { return c >= '0' && c <= '9'; }

/* Checks that udunits2's grammar quietly misreads, before it sees the text.
 * udunits2 2.2 parses "mm)" as mm (an unmatched ')' ends the input),
 * "MPa.m1/2" as (MPa.m)/2 and "m^0.5" as m^0 times .5; all three are
 * refused here.  Returns NULL if the text is acceptable, else the reason. */
static const char *syntax_trap(const char *t)
{
  long depth = 0;
  for (const char *p = t; *p; p++) {
    if (*p == '(') depth++;
    if (*p == ')' && --depth < 0) return "unbalanced parentheses";
  }
  if (depth != 0) return "unbalanced parentheses";
  for (const char *p = t; *p; p++) {
    if (*p == '/') {
      const char *q = p + 1;
      while (is_blank(*q)) q++;
      if (is_digit(*q) || *q == '.' || *q == '+' || *q == '-')
        return "a division by a number (udunits2 reads 'm1/2' as m/2; "
               "exponents are integers)";
    }
    int caret = (*p == '^');
    int stars = (p[0] == '*' && p[1] == '*');
    if (caret || stars) {
      const char *q = p + (stars ? 2 : 1);
      if (*q == '+' || *q == '-') q++;
      while (is_digit(*q)) q++;
      if (*q == '.' && is_digit(q[1])) return "a non-integer exponent";
    }
  }
  return NULL;
}

static int is_one_text(const char *t) { return t[0] == '\0' || strcmp(t, "1") == 0; }

/* Kinds of operand text, for composing derived texts with as few
 * parentheses as keep them unambiguous. */
enum { TEXT_NAME, TEXT_NAME_POWER, TEXT_COMPLEX };

static int text_kind(const char *t)
{
  size_t i = 0;
  /* letters, '_', and any non-ASCII byte (µ, °, Ω in UTF-8) */
  while (t[i] && (t[i] == '_' || (t[i] >= 'a' && t[i] <= 'z') ||
                  (t[i] >= 'A' && t[i] <= 'Z') || (unsigned char)t[i] >= 0x80))
    i++;
  if (i == 0) return TEXT_COMPLEX;
  if (!t[i]) return TEXT_NAME;
  while (is_digit(t[i])) i++;
  return t[i] ? TEXT_COMPLEX : TEXT_NAME_POWER;
}

static char *join3(const char *a, const char *mid, const char *b, int wrap_a,
                   int wrap_b)
{
  size_t n = strlen(a) + strlen(mid) + strlen(b) + 5;
  char *t = malloc(n);
  if (!t) return NULL;
  snprintf(t, n, "%s%s%s%s%s%s%s", wrap_a ? "(" : "", a, wrap_a ? ")" : "",
           mid, wrap_b ? "(" : "", b, wrap_b ? ")" : "");
  return t;
}

/* Called with the lock held.  Non-zero when a and b are the same unit up to
 * rounding: the conversion between them is the identity within 16
 * DBL_EPSILON (a derived unit's scale carries a few roundings, e.g.
 * the cube root of (1e-3)^6). */
static int same_unit(ut_unit *a, ut_unit *b)
{
  if (ut_compare(a, b) == 0) return 1;
  if (!ut_are_convertible(a, b)) return 0;
  cv_converter *cv = ut_get_converter(a, b);
  if (!cv) return 0;
  double y0 = cv_convert_double(cv, 0.0), y1 = cv_convert_double(cv, 1.0);
  cv_free(cv);
  return fabs(y0) <= 16 * DBL_EPSILON && fabs(y1 - 1.0) <= 16 * DBL_EPSILON;
}

/* Called with the lock held.  Keeps candidate (owned) as the text of u when
 * it parses back to the same unit; otherwise returns udunits2's symbol form
 * of u.  Returns owned text or NULL when out of memory. */
static char *settle_text(ut_unit *u, char *candidate)
{
  if (candidate) {
    ut_unit *back = ut_parse(units_system, candidate, UT_UTF8);
    int same = back && same_unit(back, u);
    ut_free(back);
    if (same) return candidate;
    free(candidate);
  }
  char buf[512];
  int len = ut_format(u, buf, sizeof buf, UT_UTF8);
  if (len < 0 || (size_t)len >= sizeof buf)
    len = ut_format(u, buf, sizeof buf, UT_ASCII | UT_DEFINITION);
  if (len < 0 || (size_t)len >= sizeof buf) return dup_text("?", 1);
  return dup_text(buf, (size_t)len);
}

/* ---- public API -------------------------------------------------------- */

sp_unit *sp_unit_parse(const char *text, sp_error *err)
{
  if (!text) {
    sp_fail(err, SP_EUSAGE, "no unit text given");
    return NULL;
  }
  if (sp_units_init(err) != SP_OK) return NULL;
  while (is_blank(*text)) text++;
  size_t len = strlen(text);
  while (len > 0 && is_blank(text[len - 1])) len--;
  char *t = dup_text(text, len);
  if (!t) {
    sp_fail(err, SP_ENOMEM, "out of memory for a unit");
    return NULL;
  }
  if (is_one_text(t)) {
    pthread_mutex_lock(&units_lock);
    ut_unit *one = ut_clone(ut_get_dimensionless_unit_one(units_system));
    pthread_mutex_unlock(&units_lock);
    if (!one) {
      free(t);
      sp_fail(err, SP_ENOMEM, "out of memory for a unit");
      return NULL;
    }
    return wrap(one, t, err);
  }
  /* udunits2 2.2 ends its input at a 0xFF byte ("m\xff" parses as m), so
   * bytes that are not text are refused here, never quoted back. */
  size_t bad = sp_utf8_check(t, len);
  for (size_t i = 0; i < bad; i++)
    if (((unsigned char)t[i] < 0x20 && t[i] != '\t') || t[i] == 0x7F) {
      bad = i;
      break;
    }
  if (bad < len) {
    sp_fail(err, SP_EDATA, "bad unit syntax: byte 0x%02X at position %zu of the unit is %s",
            (unsigned char)t[bad], bad + 1,
            (unsigned char)t[bad] >= 0x80 ? "not valid UTF-8" : "a control character");
    free(t);
    return NULL;
  }
  const char *trap = syntax_trap(t);
  if (trap) {
    sp_fail(err, SP_EDATA, "bad unit syntax '%s': %s", t, trap);
    free(t);
    return NULL;
  }
  pthread_mutex_lock(&units_lock);
  ut_unit *u = ut_parse(units_system, t, UT_UTF8);
  ut_status st = ut_get_status();
  pthread_mutex_unlock(&units_lock);
  if (!u) {
    /* udunits2 2.2 sometimes leaves the status at UT_SUCCESS after a syntax
     * error ("mm^^2"), so anything but an unknown name or an OS failure is
     * reported as syntax. */
    if (st == UT_UNKNOWN)
      sp_fail(err, SP_EDATA, "unknown unit '%s'", t);
    else if (st == UT_OS)
      sp_fail(err, SP_ENOMEM, "out of memory while parsing unit '%s'", t);
    else
      sp_fail(err, SP_EDATA, "bad unit syntax '%s'", t);
    free(t);
    return NULL;
  }
  return wrap(u, t, err);
}

sp_unit *sp_unit_one(sp_error *err) { return sp_unit_parse("1", err); }

void sp_unit_free(sp_unit *u)
{
  if (!u) return;
  pthread_mutex_lock(&units_lock);
  ut_free(u->u);
  pthread_mutex_unlock(&units_lock);
  free(u->text);
  free(u);
}

sp_unit *sp_unit_copy(const sp_unit *u, sp_error *err)
{
  if (!u) {
    sp_fail(err, SP_EUSAGE, "no unit to copy");
    return NULL;
  }
  pthread_mutex_lock(&units_lock);
  ut_unit *c = ut_clone(u->u);
  pthread_mutex_unlock(&units_lock);
  if (!c) {
    sp_fail(err, SP_ENOMEM, "out of memory copying unit '%s'", u->text);
    return NULL;
  }
  return wrap(c, dup_text(u->text, strlen(u->text)), err);
}

sp_unit *sp_unit_multiply(const sp_unit *a, const sp_unit *b, sp_error *err)
{
  if (!a || !b) {
    sp_fail(err, SP_EUSAGE, "no unit to multiply");
    return NULL;
  }
  char *cand;
  if (is_one_text(a->text)) cand = dup_text(b->text, strlen(b->text));
  else if (is_one_text(b->text)) cand = dup_text(a->text, strlen(a->text));
  else
    cand = join3(a->text, ".", b->text, text_kind(a->text) == TEXT_COMPLEX,
                 text_kind(b->text) == TEXT_COMPLEX);
  pthread_mutex_lock(&units_lock);
  ut_unit *u = ut_multiply(a->u, b->u);
  ut_status st = ut_get_status();
  char *text = NULL;
  if (u) text = settle_text(u, cand);
  else free(cand);
  pthread_mutex_unlock(&units_lock);
  if (!u) {
    char what[SP_ERROR_MSG_MAX / 2];
    snprintf(what, sizeof what, "multiply '%s' by '%s'", a->text, b->text);
    return op_failed(st, err, what);
  }
  return wrap(u, text, err);
}

sp_unit *sp_unit_divide(const sp_unit *a, const sp_unit *b, sp_error *err)
{
  if (!a || !b) {
    sp_fail(err, SP_EUSAGE, "no unit to divide");
    return NULL;
  }
  char *cand;
  if (is_one_text(b->text)) cand = dup_text(a->text, strlen(a->text));
  else
    cand = join3(is_one_text(a->text) ? "1" : a->text, "/", b->text,
                 !is_one_text(a->text) && text_kind(a->text) == TEXT_COMPLEX,
                 text_kind(b->text) == TEXT_COMPLEX);
  pthread_mutex_lock(&units_lock);
  ut_unit *u = ut_divide(a->u, b->u);
  ut_status st = ut_get_status();
  char *text = NULL;
  if (u) text = settle_text(u, cand);
  else free(cand);
  pthread_mutex_unlock(&units_lock);
  if (!u) {
    char what[SP_ERROR_MSG_MAX / 2];
    snprintf(what, sizeof what, "divide '%s' by '%s'", a->text, b->text);
    return op_failed(st, err, what);
  }
  return wrap(u, text, err);
}

sp_unit *sp_unit_raise(const sp_unit *a, int power, sp_error *err)
{
  if (!a) {
    sp_fail(err, SP_EUSAGE, "no unit to raise");
    return NULL;
  }
  char *cand;
  if (power == 0) cand = dup_text("1", 1);
  else if (power == 1 || is_one_text(a->text)) cand = dup_text(a->text, strlen(a->text));
  else {
    char p[16];
    snprintf(p, sizeof p, "^%d", power);
    cand = join3(a->text, p, "", text_kind(a->text) != TEXT_NAME, 0);
  }
  pthread_mutex_lock(&units_lock);
  ut_unit *u = ut_raise(a->u, power);
  ut_status st = ut_get_status();
  char *text = NULL;
  if (u) text = settle_text(u, cand);
  else free(cand);
  pthread_mutex_unlock(&units_lock);
  if (!u) {
    char what[SP_ERROR_MSG_MAX / 2];
    snprintf(what, sizeof what, "raise '%s' to the power %d", a->text, power);
    return op_failed(st, err, what);
  }
  return wrap(u, text, err);
}

/* The text of the n-th root when a's text is an integer power "X^k" or
 * "Xk" (X a name) with n dividing k; NULL otherwise.  Returns owned. */
static char *root_text(const char *t, int n)
{
  size_t len = strlen(t), i = len;
  while (i > 0 && is_digit(t[i - 1])) i--;
  if (i == len || len - i > 6) return NULL;
  long k = strtol(t + i, NULL, 10);
  size_t base_len = i;
  if (i > 0 && t[i - 1] == '^') base_len = i - 1;
  else if (text_kind(t) != TEXT_NAME_POWER) return NULL;
  if (base_len == 0 || k % n != 0) return NULL;
  long e = k / n;
  size_t cap = base_len + 24;
  char *r = malloc(cap);
  if (!r) return NULL;
  if (e == 1) snprintf(r, cap, "%.*s", (int)base_len, t);
  else snprintf(r, cap, "%.*s^%ld", (int)base_len, t, e);
  return r;
}

sp_unit *sp_unit_root(const sp_unit *a, int n, sp_error *err)
{
  if (!a) {
    sp_fail(err, SP_EUSAGE, "no unit to take a root of");
    return NULL;
  }
  if (n < 1) {
    sp_fail(err, SP_EUSAGE, "root %d of unit '%s': the root must be at least 1",
            n, a->text);
    return NULL;
  }
  char *cand = n == 1 || is_one_text(a->text) ? dup_text(a->text, strlen(a->text))
                                              : root_text(a->text, n);
  pthread_mutex_lock(&units_lock);
  ut_unit *u = ut_root(a->u, n);
  ut_status st = ut_get_status();
  char *text = NULL;
  if (u) text = settle_text(u, cand);
  else free(cand);
  pthread_mutex_unlock(&units_lock);
  if (!u) {
    if (st == UT_MEANINGLESS) {
      char buf[256];
      sp_unit_format(a, buf, sizeof buf);
      sp_fail(err, SP_EDATA,
              "cannot take root %d of unit '%s' (%s): its dimensions are not "
              "multiples of %d", n, a->text, buf, n);
      return NULL;
    }
    char what[SP_ERROR_MSG_MAX / 2];
    snprintf(what, sizeof what, "take root %d of unit '%s'", n, a->text);
    return op_failed(st, err, what);
  }
  return wrap(u, text, err);
}

const char *sp_unit_text(const sp_unit *u) { return u ? u->text : ""; }

int sp_unit_format(const sp_unit *u, char *buf, size_t n)
{
  if (!u) return snprintf(buf, n, "(no unit)");
  char tmp[512];
  pthread_mutex_lock(&units_lock);
  int len = ut_format(u->u, tmp, sizeof tmp, UT_ASCII | UT_DEFINITION);
  if (len < 0 || (size_t)len >= sizeof tmp)
    len = ut_format(u->u, tmp, sizeof tmp, UT_UTF8 | UT_DEFINITION);
  pthread_mutex_unlock(&units_lock);
  if (len < 0 || (size_t)len >= sizeof tmp) return snprintf(buf, n, "%s", u->text);
  return snprintf(buf, n, "%s", tmp);
}

int sp_unit_convertible(const sp_unit *a, const sp_unit *b)
{
  if (!a || !b) return 0;
  pthread_mutex_lock(&units_lock);
  int c = ut_are_convertible(a->u, b->u);
  pthread_mutex_unlock(&units_lock);
  return c != 0;
}

int sp_unit_is_dimensionless(const sp_unit *u)
{
  if (!u) return 0;
  pthread_mutex_lock(&units_lock);
  int c = ut_are_convertible(u->u, ut_get_dimensionless_unit_one(units_system));
  pthread_mutex_unlock(&units_lock);
  return c != 0;
}

/* Probe points for the affine check: any non-affine converter (a
 * logarithmic unit, for one) misses the line through its value at 0 at
 * one of them. */
static const double affine_probe[] = {1.0, 2.0, -3.0, 10.0};

sp_status sp_unit_conversion(const sp_unit *a, const sp_unit *b, double *scale,
                             double *offset, sp_error *err)
{
  if (!a || !b || !scale || !offset)
    return sp_fail(err, SP_EUSAGE, "sp_unit_conversion: missing argument");
  char fa[256], fb[256];
  pthread_mutex_lock(&units_lock);
  cv_converter *cv = ut_are_convertible(a->u, b->u) ? ut_get_converter(a->u, b->u) : NULL;
  ut_status st = ut_get_status();
  double y0 = 0, y1 = 0, yl = 0, l = 1, yp[sizeof affine_probe / sizeof *affine_probe];
  if (cv) {
    y0 = cv_convert_double(cv, 0.0);
    y1 = cv_convert_double(cv, 1.0);
    /* scale = y(1) - y(0) loses the digits of the offset's magnitude (for
     * degF -> K, y(0) = 255.37...); measure the slope over a longer span
     * l = 2^k with scale * l about 2^27 |offset|, so it keeps the full 53
     * bits.  l is a power of two, so the division by it is exact. */
    if (y0 != 0.0 && isfinite(y0) && isfinite(y1) && y1 != y0) {
      int k = ilogb(y0) - ilogb(y1 - y0) + 27;
      if (k > 0 && k < 900) {
        l = ldexp(1.0, k);
        yl = cv_convert_double(cv, l);
      }
    }
    for (size_t i = 0; i < sizeof affine_probe / sizeof *affine_probe; i++)
      yp[i] = cv_convert_double(cv, affine_probe[i]);
    cv_free(cv);
  }
  pthread_mutex_unlock(&units_lock);
  if (!cv) {
    if (st == UT_OS) return sp_fail(err, SP_ENOMEM, "out of memory for a unit converter");
    sp_unit_format(a, fa, sizeof fa);
    sp_unit_format(b, fb, sizeof fb);
    return sp_fail(err, SP_EDATA, "cannot convert '%s' (%s) to '%s' (%s)",
                   a->text, fa, b->text, fb);
  }
  double s = y1 - y0;
  if (l > 1.0 && isfinite(yl)) s = (yl - y0) / l;
  int affine = isfinite(y0) && isfinite(s) && s != 0.0;
  for (size_t i = 0; affine && i < sizeof affine_probe / sizeof *affine_probe; i++) {
    double x = affine_probe[i], line = s * x + y0;
    /* A converter that is affine in exact arithmetic evaluates each probe
     * with a few roundings, each at most DBL_EPSILON / 2 of the terms'
     * magnitudes; 64 DBL_EPSILON is far above that and far below any
     * curvature of a logarithmic scale. */
    if (!isfinite(yp[i]) ||
        fabs(yp[i] - line) > 64 * DBL_EPSILON * (fabs(s * x) + fabs(y0)))
      affine = 0;
  }
  if (!affine)
    return sp_fail(err, SP_EDATA,
                   "the conversion from '%s' to '%s' is not affine "
                   "(value_b = scale * value_a + offset); logarithmic units "
                   "cannot be converted here", a->text, b->text);
  *scale = s;
  *offset = y0;
  return SP_OK;
}
