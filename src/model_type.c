/* scatterprop model: names, units and constant folding.
 *
 * Walks the parsed statements in file order.  Every expression node gets a
 * unit (through the units module, once, at compile time): '+', '-', min,
 * max, hypot and atan2 need convertible units and record the factor that
 * brings each operand into the first one's unit; exp, log, log10 and
 * powers with a non-constant exponent need dimensionless operands (scaled
 * to the pure number "1", so mm/m counts as 0.001); trigonometric
 * functions take radians (degrees are scaled by pi/180); '^' with a
 * constant exponent raises the unit, also by a rational power p/q; an
 * output's declared unit gives the final factor.  Numbers without a unit
 * literal are pure numbers and "adapt" in products (8 * F is in F's
 * unit).
 *
 * Constant subexpressions are folded with the interpreter's own scalar
 * expressions (sp_model_op_fold), so a folded value is bit for bit what
 * the bytecode would have computed.  A folded value that is not finite is
 * an error at the place where it first appears.
 *
 * An error marks its node "bad"; nodes above a bad one and names defined
 * from one stay silent, so one mistake is reported once. */
#include "model_internal.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Mathematical constants to 21 significant digits (more than a double
 * holds), since C11 does not define M_PI or M_E. */
#define MODEL_PI 3.14159265358979323846
#define MODEL_E 2.71828182845904523536

const sp_model_func sp_model_funcs[] = {
#define SP_MODEL_FUNC(NAME, ARITY, RULE, OP) {#NAME, ARITY, RULE, SP_MODEL_OP_##OP},
#include "model_ops.def"
};
const size_t sp_model_nfuncs = sizeof sp_model_funcs / sizeof *sp_model_funcs;

int sp_model_func_find(const char *name, size_t len)
{
  for (size_t i = 0; i < sp_model_nfuncs; i++)
    if (strlen(sp_model_funcs[i].name) == len &&
        memcmp(sp_model_funcs[i].name, name, len) == 0)
      return (int)i;
  return -1;
}

/* ---- units ------------------------------------------------------------------ */

const sp_unit *sp_model_keep_unit(sp_model_ctx *c, sp_unit *u)
{
  if (!u) return NULL;
  if (sp_model_grow(c, (void **)&c->units, &c->cap_units, c->nunits + 1,
                    sizeof *c->units) != 0) {
    sp_unit_free(u);
    return NULL;
  }
  c->units[c->nunits++] = u;
  return u;
}

static char *dupn(const char *s, size_t n)
{
  char *t = malloc(n + 1);
  if (!t) return NULL;
  memcpy(t, s, n);
  t[n] = '\0';
  return t;
}

static int is_word_char(char ch)
{
  return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || ch == '_' ||
         (ch >= '0' && ch <= '9');
}

/* The unit text with blanks trimmed (returns owned), where the word "deg"
 * (which udunits2 does not know) is spelled "degree". */
static char *unit_spelling(const char *s, size_t n)
{
  while (n > 0 && (*s == ' ' || *s == '\t')) s++, n--;
  while (n > 0 && (s[n - 1] == ' ' || s[n - 1] == '\t')) n--;
  size_t count = 0;
  for (size_t i = 0; i + 3 <= n; i++)
    if (memcmp(s + i, "deg", 3) == 0 && (i == 0 || !is_word_char(s[i - 1])) &&
        (i + 3 == n || !is_word_char(s[i + 3]) ||
         (s[i + 3] >= '0' && s[i + 3] <= '9')))
      count++;
  char *t = malloc(n + 3 * count + 1);
  if (!t) return NULL;
  size_t o = 0;
  for (size_t i = 0; i < n;) {
    if (i + 3 <= n && memcmp(s + i, "deg", 3) == 0 &&
        (i == 0 || !is_word_char(s[i - 1])) &&
        (i + 3 == n || !is_word_char(s[i + 3]) ||
         (s[i + 3] >= '0' && s[i + 3] <= '9'))) {
      memcpy(t + o, "degree", 6);
      o += 6;
      i += 3;
    } else {
      t[o++] = s[i++];
    }
  }
  t[o] = '\0';
  return t;
}

/* Parses the unit text at line:off (len bytes, inside brackets); NULL after
 * reporting an error. */
static const sp_unit *parse_unit(sp_model_ctx *c, size_t line, size_t off,
                                 size_t len)
{
  char *t = unit_spelling(sp_model_line(c, line) + off, len);
  if (!t) {
    c->oom = 1;
    return NULL;
  }
  sp_error e;
  sp_error_clear(&e);
  sp_unit *u = sp_unit_parse(t, &e);
  free(t);
  if (!u) {
    if (e.code == SP_ENOMEM) c->oom = 1;
    else sp_model_error(c, line, off, "%s", e.msg);
    return NULL;
  }
  return sp_model_keep_unit(c, u);
}

/* Reports a failed unit operation (rare: an exponent out of udunits2's
 * range) at line:off. */
static const sp_unit *unit_result(sp_model_ctx *c, sp_unit *u, sp_error *e,
                                  size_t line, size_t off)
{
  if (!u) {
    if (e->code == SP_ENOMEM) c->oom = 1;
    else sp_model_error(c, line, off, "%s", e->msg);
    return NULL;
  }
  return sp_model_keep_unit(c, u);
}

/* udunits2 composes a derived unit's scale from its prefixes and powers in
 * floating point, so GPa.mm^4/mm^3 -> N/mm comes out as 1000.0000000000001
 * and N.mm/mm^3 -> MPa as 0.99999999999999989.  A factor within 4
 * DBL_EPSILON (relative; a few roundings of the composition) of a decimal
 * with at most 10 significant digits is taken to be that decimal.  Exact
 * factors are unchanged (they are their own nearest decimal), and a
 * factor such as pi/180 is more than 1e-10 away from every 10-digit
 * decimal, far outside the tolerance; the chance that some other genuine
 * factor falls within 4 DBL_EPSILON of a 10-digit decimal is about
 * 8 DBL_EPSILON * 1e10 = 2e-5. */
static double tidy_factor(double f)
{
  if (f == 0.0 || !isfinite(f)) return f;
  for (int digits = 1; digits <= 10; digits++) {
    char buf[40];
    snprintf(buf, sizeof buf, "%.*e", digits - 1, f);
    double g;
    sp_error e;
    if (sp_parse_double(buf, '.', &g, &e) != SP_OK) continue;
    if (fabs(g - f) <= 4 * DBL_EPSILON * fabs(f)) return g;
  }
  return f;
}

/* The affine conversion from a to b; 0, or -1 when there is none. */
static int conversion(const sp_unit *a, const sp_unit *b, double *s, double *o)
{
  if (a == b) {
    *s = 1;
    *o = 0;
    return 0;
  }
  if (!sp_unit_convertible(a, b)) return -1;
  sp_error e;
  if (sp_unit_conversion(a, b, s, o, &e) != SP_OK) return -1;
  *s = tidy_factor(*s);
  *o = tidy_factor(*o);
  return 0;
}

/* Factor that scales a dimensionless u to the pure number 1 (mm/m: 0.001,
 * degree: pi/180); -1 when u is not dimensionless. */
static int factor_to_one(const sp_model_ctx *c, const sp_unit *u, double *f)
{
  double o;
  if (u == c->one) {
    *f = 1;
    return 0;
  }
  if (!sp_unit_is_dimensionless(u)) return -1;
  if (conversion(u, c->one, f, &o) != 0 || o != 0.0) return -1;
  return 0;
}

/* A pure number: dimensionless with factor 1 (no unit literal, or one
 * such as [1]). */
static int is_plain(const sp_model_ctx *c, const sp_unit *u)
{
  double f;
  return u == c->one || (factor_to_one(c, u, &f) == 0 && f == 1.0);
}

static const char *utext(const sp_unit *u) { return sp_unit_text(u); }

/* ---- expressions ------------------------------------------------------------- */

static double fold1(int op, double x, double k)
{
  return sp_model_op_fold(op, x, 0.0, k, 0.0);
}
static double fold2(int op, double x, double y)
{
  return sp_model_op_fold(op, x, y, 0.0, 0.0);
}
/* x scaled by a conversion factor, as the code generator does it. */
static double scaled(double x, double f)
{
  return f == 1.0 ? x : fold1(SP_MODEL_OP_MUL_RC, x, f);
}

static void type_node(sp_model_ctx *c, sp_model_node *n, int want_const);

static const char *kind_phrase(int kind)
{
  switch (kind) {
  case SP_MODEL_SYM_INPUT: return "an input";
  case SP_MODEL_SYM_CONST: return "a constant";
  case SP_MODEL_SYM_LET: return "a let value";
  default: return "an output";
  }
}

/* Looks up the name at line:off (len bytes) as used on that line; NULL
 * after reporting why it cannot be used (or silently when its definition
 * had an error: *silent is then set). */
static sp_model_sym *resolve(sp_model_ctx *c, size_t line, size_t off,
                             size_t len, int *silent)
{
  const char *name = sp_model_line(c, line) + off;
  *silent = 0;
  sp_model_sym *s = sp_model_sym_find(c, name, len);
  if (!s) {
    if (sp_model_func_find(name, len) >= 0)
      sp_model_error(c, line, off,
                     "'%.*s' is a built-in function; call it as %.*s(...)",
                     (int)len, name, (int)len, name);
    else
      sp_model_error(c, line, off, "unknown name '%.*s'", (int)len, name);
    return NULL;
  }
  if (s->line > line) {
    sp_model_error(c, line, off, "'%.*s' is used before its definition (line %zu)",
                   (int)len, name, s->line + 1);
    return NULL;
  }
  if (s->line == line) {
    sp_model_error(c, line, off, "'%.*s' is used in its own definition",
                   (int)len, name);
    return NULL;
  }
  if (s->bad || !s->typed) {
    *silent = 1;
    return NULL;
  }
  return s;
}

static void type_ref(sp_model_ctx *c, sp_model_node *n, int want_const)
{
  const char *name = sp_model_line(c, n->line) + n->off;
  if ((n->len == 2 && memcmp(name, "pi", 2) == 0) ||
      (n->len == 1 && name[0] == 'e')) {
    n->builtin = n->len == 2 ? 1 : 2;
    n->unit = c->one;
    n->is_const = 1;
    n->val = n->len == 2 ? MODEL_PI : MODEL_E;
    return;
  }
  int silent;
  sp_model_sym *s = resolve(c, n->line, n->off, n->len, &silent);
  if (!s) {
    n->bad = 1;
    return;
  }
  if (want_const && !s->is_const) {
    if (s->kind == SP_MODEL_SYM_LET)
      sp_model_error(c, n->line, n->off,
                     "'%.*s' depends on inputs, so it is not a constant",
                     (int)n->len, name);
    else
      sp_model_error(c, n->line, n->off, "'%.*s' is %s, not a constant",
                     (int)n->len, name, kind_phrase(s->kind));
    n->bad = 1;
    return;
  }
  n->sym = s;
  n->unit = s->unit;
  n->is_const = s->is_const;
  n->val = s->val;
}

static int type_kids(sp_model_ctx *c, sp_model_node *n, int want_const)
{
  int bad = 0;
  for (size_t k = 0; k < n->nkids; k++) {
    type_node(c, n->kids[k], want_const);
    bad |= n->kids[k]->bad;
  }
  n->conv = sp_model_alloc(c, (n->nkids ? n->nkids : 1) * sizeof *n->conv);
  if (!n->conv) return -1;
  for (size_t k = 0; k < n->nkids; k++) n->conv[k] = 1.0;
  if (bad) n->bad = 1;
  return bad ? -1 : 0;
}

static int all_const(const sp_model_node *n)
{
  for (size_t k = 0; k < n->nkids; k++)
    if (!n->kids[k]->is_const) return 0;
  return 1;
}

/* Factor that converts operand k's unit into operand 0's, for '+', '-'
 * and the two-argument functions; -1 after reporting. */
static int same_unit_factor(sp_model_ctx *c, sp_model_node *n, size_t k,
                            size_t op_off, const char *what)
{
  const sp_unit *to = n->kids[0]->unit, *from = n->kids[k]->unit;
  double s, o;
  if (conversion(from, to, &s, &o) != 0) {
    sp_model_error(c, n->line, op_off, "%s %s and %s: the units are not convertible",
                   what, utext(to), utext(from));
    return -1;
  }
  if (o != 0.0) {
    sp_model_error(c, n->line, op_off,
                   "%s %s and %s: converting between them needs an offset, "
                   "not only a factor; convert to one unit first",
                   what, utext(to), utext(from));
    return -1;
  }
  n->conv[k] = s;
  return 0;
}

static void type_sum(sp_model_ctx *c, sp_model_node *n, int want_const)
{
  if (type_kids(c, n, want_const) != 0) return;
  n->unit = n->kids[0]->unit;
  for (size_t k = 1; k < n->nkids; k++)
    if (same_unit_factor(c, n, k, n->op_off[k],
                         n->ops[k] == '+' ? "cannot add" : "cannot subtract") != 0)
      n->bad = 1;
  if (n->bad || !all_const(n)) return;
  double acc = n->kids[0]->val;
  for (size_t k = 1; k < n->nkids; k++)
    acc = fold2(n->ops[k] == '+' ? SP_MODEL_OP_ADD : SP_MODEL_OP_SUB, acc,
                scaled(n->kids[k]->val, n->conv[k]));
  n->is_const = 1;
  n->val = acc;
}

static void type_prod(sp_model_ctx *c, sp_model_node *n, int want_const)
{
  if (type_kids(c, n, want_const) != 0) return;
  const sp_unit *u = n->kids[0]->unit;
  for (size_t k = 1; k < n->nkids && u; k++) {
    const sp_unit *v = n->kids[k]->unit;
    /* A pure number adapts to the other operand's unit. */
    if (is_plain(c, v)) continue;
    sp_error e;
    sp_error_clear(&e);
    if (n->ops[k] == '*' && is_plain(c, u)) {
      u = v;
      continue;
    }
    u = unit_result(c, n->ops[k] == '*' ? sp_unit_multiply(u, v, &e)
                                        : sp_unit_divide(u, v, &e),
                    &e, n->line, n->op_off[k]);
  }
  if (!u) {
    n->bad = 1;
    return;
  }
  n->unit = u;
  if (!all_const(n)) return;
  double acc = n->kids[0]->val;
  for (size_t k = 1; k < n->nkids; k++)
    acc = fold2(n->ops[k] == '*' ? SP_MODEL_OP_MUL : SP_MODEL_OP_DIV, acc,
                n->kids[k]->val);
  n->is_const = 1;
  n->val = acc;
}

/* p as num/den with den <= 12, when it is one to within the rounding of
 * the division that produced it: p = fl(num/den) has a relative error of
 * at most DBL_EPSILON/2, and p * den one more rounding, so 4 DBL_EPSILON
 * is a safe margin that no other exponent meets by accident. */
static int as_rational(double p, long *num, long *den)
{
  for (long q = 1; q <= 12; q++) {
    double t = p * (double)q, r = nearbyint(t);
    if (fabs(t - r) <= 4 * DBL_EPSILON * fmax(1.0, fabs(t)) && fabs(r) <= 1e6) {
      *num = (long)r;
      *den = q;
      return 1;
    }
  }
  return 0;
}

/* base ^ ex (also pow(base, ex)), both already typed and good. */
static void type_power(sp_model_ctx *c, sp_model_node *n)
{
  sp_model_node *base = n->kids[0], *ex = n->kids[1];
  double fe;
  if (factor_to_one(c, ex->unit, &fe) != 0) {
    sp_model_error(c, ex->line, ex->off, "the exponent must be dimensionless, got %s",
                   utext(ex->unit));
    n->bad = 1;
    return;
  }
  n->conv[1] = fe;
  double fb;
  int base_dimless = factor_to_one(c, base->unit, &fb) == 0;
  if (!ex->is_const) {
    if (!base_dimless) {
      sp_model_error(c, base->line, base->off,
                     "a power with a non-constant exponent needs a "
                     "dimensionless base, got %s", utext(base->unit));
      n->bad = 1;
      return;
    }
    n->conv[0] = fb;
    n->unit = c->one;
    return;
  }
  double p = scaled(ex->val, fe);
  n->pow_exp = p;
  if (base_dimless) {
    n->conv[0] = fb;
    n->unit = c->one;
  } else if (p == 0.0) {
    n->unit = c->one;
  } else {
    long num, den;
    if (!as_rational(p, &num, &den)) {
      sp_model_error(c, ex->line, ex->off,
                     "cannot raise %s to the power %g: a quantity with a unit "
                     "takes only integer or rational exponents p/q with q <= 12",
                     utext(base->unit), p);
      n->bad = 1;
      return;
    }
    sp_error e;
    sp_error_clear(&e);
    const sp_unit *u = base->unit;
    if (num != 1) {
      if (num > 255 || num < -255) {
        sp_model_error(c, ex->line, ex->off,
                       "cannot raise %s to the power %g: the exponent of a "
                       "unit is limited to 255", utext(base->unit), p);
        n->bad = 1;
        return;
      }
      u = unit_result(c, sp_unit_raise(u, (int)num, &e), &e, ex->line, ex->off);
    }
    if (u && den != 1) {
      sp_unit *r = sp_unit_root(u, (int)den, &e);
      if (!r && e.code != SP_ENOMEM) {
        sp_model_error(c, ex->line, ex->off,
                       "cannot raise %s to the power %g (its dimensions "
                       "are not multiples of %ld)", utext(base->unit), p, den);
        n->bad = 1;
        return;
      }
      u = unit_result(c, r, &e, ex->line, ex->off);
    }
    if (!u) {
      n->bad = 1;
      return;
    }
    n->unit = u;
  }
  if (p == 0.0) {
    /* x^0 is 1 for every x (C's pow, also for NaN). */
    n->is_const = 1;
    n->val = 1.0;
  } else if (base->is_const) {
    n->is_const = 1;
    n->val = fold2(SP_MODEL_OP_POW, scaled(base->val, n->conv[0]), p);
  }
}

static void type_call(sp_model_ctx *c, sp_model_node *n, int want_const)
{
  const char *name = sp_model_line(c, n->line) + n->off;
  int f = sp_model_func_find(name, n->len);
  int bad = type_kids(c, n, want_const) != 0;
  if (f < 0) {
    if (sp_model_sym_find(c, name, n->len))
      sp_model_error(c, n->line, n->off, "'%.*s' is not a function",
                     (int)n->len, name);
    else
      sp_model_error(c, n->line, n->off, "unknown function '%.*s'", (int)n->len,
                     name);
    n->bad = 1;
    return;
  }
  n->func = f;
  const sp_model_func *fn = &sp_model_funcs[f];
  if (n->nkids != fn->arity) {
    sp_model_error(c, n->line, n->off, "%s takes %zu argument%s, got %zu",
                   fn->name, fn->arity, fn->arity == 1 ? "" : "s", n->nkids);
    n->bad = 1;
    return;
  }
  if (bad) return;
  sp_model_node *a = n->kids[0];
  double fa;
  switch (fn->rule) {
  case FUNC_SQRT:
    if (factor_to_one(c, a->unit, &fa) == 0) {
      n->conv[0] = fa;
      n->unit = c->one;
    } else {
      sp_error e;
      sp_error_clear(&e);
      sp_unit *r = sp_unit_root(a->unit, 2, &e);
      if (!r && e.code != SP_ENOMEM) {
        sp_model_error(c, a->line, a->off,
                       "cannot take the square root of %s (its dimensions are "
                       "not multiples of 2)", utext(a->unit));
        n->bad = 1;
        return;
      }
      n->unit = unit_result(c, r, &e, a->line, a->off);
    }
    break;
  case FUNC_DIMLESS:
  case FUNC_TRIG:
  case FUNC_INVTRIG:
    if (factor_to_one(c, a->unit, &fa) != 0) {
      sp_model_error(c, a->line, a->off,
                     fn->rule == FUNC_TRIG
                         ? "%s needs an angle or a dimensionless argument, got %s"
                         : "%s needs a dimensionless argument, got %s",
                     fn->name, utext(a->unit));
      n->bad = 1;
      return;
    }
    n->conv[0] = fa;
    n->unit = fn->rule == FUNC_INVTRIG ? c->rad : c->one;
    break;
  case FUNC_POW:
    type_power(c, n);
    break;
  case FUNC_SAME:
    n->unit = a->unit;
    break;
  case FUNC_MINMAX:
  case FUNC_ATAN2:
  case FUNC_HYPOT: {
    char what[48];
    snprintf(what, sizeof what, "arguments of %s:", fn->name);
    if (same_unit_factor(c, n, 1, n->kids[1]->off, what) != 0) {
      n->bad = 1;
      return;
    }
    n->unit = fn->rule == FUNC_ATAN2 ? c->rad : a->unit;
    break;
  }
  default:
    break;
  }
  if (!n->unit) n->bad = 1;
  if (n->bad || n->is_const || !all_const(n) || fn->rule == FUNC_POW) return;
  double x = scaled(a->val, n->conv[0]);
  double y = n->nkids > 1 ? scaled(n->kids[1]->val, n->conv[1]) : 0.0;
  n->is_const = 1;
  n->val = fold2(fn->op, x, y);
}

static void type_node(sp_model_ctx *c, sp_model_node *n, int want_const)
{
  if (c->oom) {
    n->bad = 1;
    return;
  }
  switch (n->kind) {
  case SP_MODEL_N_NUM:
    n->unit = n->has_unit ? parse_unit(c, n->line, n->unit_off, n->unit_len) : c->one;
    if (!n->unit) {
      n->bad = 1;
      return;
    }
    n->is_const = 1;
    n->val = n->num;
    break;
  case SP_MODEL_N_REF:
    type_ref(c, n, want_const);
    break;
  case SP_MODEL_N_NEG:
    if (type_kids(c, n, want_const) != 0) return;
    n->unit = n->kids[0]->unit;
    if (n->kids[0]->is_const) {
      n->is_const = 1;
      n->val = fold2(SP_MODEL_OP_NEG, n->kids[0]->val, 0.0);
    }
    break;
  case SP_MODEL_N_SUM:
    type_sum(c, n, want_const);
    break;
  case SP_MODEL_N_PROD:
    type_prod(c, n, want_const);
    break;
  case SP_MODEL_N_POW:
    if (type_kids(c, n, want_const) != 0) return;
    type_power(c, n);
    break;
  case SP_MODEL_N_CALL:
    type_call(c, n, want_const);
    break;
  default:
    n->bad = 1;
    break;
  }
  if (!n->bad && n->is_const && !isfinite(n->val)) {
    sp_model_error(c, n->line, n->off, "constant expression evaluates to %s",
                   isnan(n->val) ? "nan" : n->val > 0 ? "inf" : "-inf");
    n->bad = 1;
  }
  if (n->bad) n->is_const = 0;
}

/* ---- statements --------------------------------------------------------------- */

/* How a distribution parameter relates to the input's unit, by its name
 * (the families' documented parameter names, include/scatterprop/dist.h).
 * Parameters not listed are pure numbers (shapes, log-scale parameters). */
enum { PARAM_PURE, PARAM_LOCATION, PARAM_SCALE, PARAM_RATE };

static int param_class(const char *pname)
{
  static const char *const location[] = {"mean", "location", "min", "max",
                                         "mode", "lower", "upper"};
  for (size_t i = 0; i < sizeof location / sizeof *location; i++)
    if (strcmp(pname, location[i]) == 0) return PARAM_LOCATION;
  if (strcmp(pname, "sd") == 0 || strcmp(pname, "scale") == 0) return PARAM_SCALE;
  if (strcmp(pname, "rate") == 0) return PARAM_RATE;
  return PARAM_PURE;
}

/* The value of argument a for parameter pname, in the input's unit u; -1
 * after reporting. */
static int param_value(sp_model_ctx *c, const sp_model_stmt *st,
                       const sp_model_arg *a, const char *fam, const char *pname,
                       const sp_unit *u, double *out)
{
  const sp_model_node *x = a->expr;
  int cls = param_class(pname);
  double f;
  if (cls == PARAM_PURE) {
    if (factor_to_one(c, x->unit, &f) != 0) {
      sp_model_error(c, st->line, x->off,
                     "parameter '%s' of %s is a pure number, got %s", pname,
                     fam, utext(x->unit));
      return -1;
    }
    *out = scaled(x->val, f);
    return 0;
  }
  if (is_plain(c, x->unit)) {
    *out = x->val;
    return 0;
  }
  const sp_unit *target = u;
  if (cls == PARAM_RATE) {
    sp_error e;
    sp_error_clear(&e);
    target = unit_result(c, sp_unit_divide(c->one, u, &e), &e, st->line, x->off);
    if (!target) return -1;
  }
  double s, o;
  if (conversion(x->unit, target, &s, &o) != 0) {
    sp_model_error(c, st->line, x->off,
                   "parameter '%s' is in %s, which cannot be converted to %s%s",
                   pname, utext(x->unit), utext(target),
                   cls == PARAM_RATE ? "" : " (the input's unit)");
    return -1;
  }
  /* A scale or rate is a difference of values: it takes the factor only. */
  *out = cls == PARAM_LOCATION ? x->val * s + o : x->val * s;
  if (!isfinite(*out)) {
    sp_model_error(c, st->line, x->off, "parameter '%s' is out of range", pname);
    return -1;
  }
  return 0;
}

/* Where to point at when fam->check() refuses the parameters: the first
 * parameter whose name appears (as a word) in its message, or the family. */
static size_t check_position(const sp_model_stmt *st, const sp_family *fam,
                             const char *msg, const size_t *given_off)
{
  const char *body = strstr(msg, ": ");
  body = body ? body + 2 : msg;
  size_t best_at = (size_t)-1, best_off = st->fam_off;
  for (size_t k = 0; k < fam->nparam; k++) {
    const char *pn = fam->param_names[k];
    size_t n = strlen(pn);
    for (const char *q = strstr(body, pn); q; q = strstr(q + 1, pn)) {
      int left = q == body || !is_word_char(q[-1]);
      int right = !is_word_char(q[n]);
      if (left && right) {
        size_t pos = (size_t)(q - body);
        if (pos < best_at) {
          best_at = pos;
          best_off = given_off[k] != (size_t)-1 ? given_off[k] : st->fam_off;
        }
        break;
      }
    }
  }
  return best_off;
}

static int add_input(sp_model_ctx *c, const sp_model_stmt *st, const sp_unit *u,
                     const sp_family *fam, const double *theta)
{
  sp_model *m = c->m;
  if (sp_model_grow(c, (void **)&m->inputs, &m->cap_inputs, m->ninputs + 1,
                    sizeof *m->inputs) != 0)
    return -1;
  sp_model_input_rec *r = &m->inputs[m->ninputs];
  memset(r, 0, sizeof *r);
  const char *s = sp_model_line(c, st->line);
  sp_error e;
  r->name = dupn(s + st->name_off, st->name_len);
  if (st->has_unit) {
    size_t o = st->unit_off, n = st->unit_len;
    while (n > 0 && (s[o] == ' ' || s[o] == '\t')) o++, n--;
    while (n > 0 && (s[o + n - 1] == ' ' || s[o + n - 1] == '\t')) n--;
    r->unit_text = dupn(s + o, n);
  } else {
    r->unit_text = dupn("1", 1);
  }
  r->unit = sp_unit_copy(u, &e);
  if (st->is_fit) {
    r->fit_path = dupn(s + st->path_off, st->path_len);
    const char *slash = strrchr(c->file, '/');
    if (s[st->path_off] == '/' || !slash) {
      r->fit_resolved = dupn(s + st->path_off, st->path_len);
    } else {
      size_t dl = (size_t)(slash - c->file) + 1;
      r->fit_resolved = malloc(dl + st->path_len + 1);
      if (r->fit_resolved) {
        memcpy(r->fit_resolved, c->file, dl);
        memcpy(r->fit_resolved + dl, s + st->path_off, st->path_len);
        r->fit_resolved[dl + st->path_len] = '\0';
      }
    }
  }
  m->ninputs++;
  if (!r->name || !r->unit_text || !r->unit ||
      (st->is_fit && (!r->fit_path || !r->fit_resolved))) {
    c->oom = 1;
    return -1;
  }
  r->pub.name = r->name;
  r->pub.unit_text = r->unit_text;
  r->pub.unit = r->unit;
  r->pub.family = fam;
  for (size_t k = 0; k < SP_FAMILY_MAX_PARAMS; k++)
    r->pub.theta[k] = fam && k < fam->nparam ? theta[k] : 0.0;
  r->pub.scale = 1.0;
  r->pub.offset = 0.0;
  r->pub.fit_path = r->fit_path;
  r->pub.fit_path_resolved = r->fit_resolved;
  r->pub.line = (long)st->line + 1;
  return 0;
}

static void type_input(sp_model_ctx *c, sp_model_stmt *st)
{
  const char *s = sp_model_line(c, st->line);
  int ok = 1;
  const sp_unit *u = st->has_unit ? parse_unit(c, st->line, st->unit_off, st->unit_len)
                                  : c->one;
  if (!u) ok = 0;
  const sp_family *fam = NULL;
  double theta[SP_FAMILY_MAX_PARAMS] = {0};
  if (!st->is_fit) {
    char fname[SP_MODEL_MAX_NAME + 1];
    snprintf(fname, sizeof fname, "%.*s", (int)st->fam_len, s + st->fam_off);
    fam = sp_family_find(fname);
    /* The arguments are checked even when the family is unknown, so
     * that the errors inside them are reported too. */
    for (size_t k = 0; k < st->nargs; k++) {
      type_node(c, st->args[k].expr, 1);
      if (st->args[k].expr->bad) ok = 0;
    }
    if (!fam) {
      sp_model_error(c, st->line, st->fam_off, "unknown distribution family '%s'",
                     fname);
      st->sym->bad = 1;
      return;
    }
    if (!(fam->flags & SP_FAMILY_PROPAGATE)) {
      sp_model_error(c, st->line, st->fam_off,
                     "family '%s' cannot be used for a model input", fname);
      st->sym->bad = 1;
      return;
    }
    size_t given_off[SP_FAMILY_MAX_PARAMS];
    for (size_t k = 0; k < SP_FAMILY_MAX_PARAMS; k++) {
      given_off[k] = (size_t)-1;
      theta[k] = k < fam->nparam ? fam->param_defaults[k] : 0.0;
    }
    for (size_t k = 0; k < st->nargs; k++) {
      const sp_model_arg *a = &st->args[k];
      long idx;
      if (a->named) {
        char pname[SP_MODEL_MAX_NAME + 1];
        snprintf(pname, sizeof pname, "%.*s", (int)a->name_len, s + a->name_off);
        idx = sp_family_param_index(fam, pname);
        if (idx < 0) {
          char list[256] = "";
          for (size_t j = 0; j < fam->nparam; j++) {
            size_t l = strlen(list);
            snprintf(list + l, sizeof list - l, "%s%s", j ? ", " : "",
                     fam->param_names[j]);
          }
          sp_model_error(c, st->line, a->name_off,
                         "unknown parameter '%s' for %s (its parameters are %s)",
                         pname, fam->name, list);
          ok = 0;
          continue;
        }
      } else {
        idx = (long)k;
        if (k >= fam->nparam) {
          sp_model_error(c, st->line, a->off,
                         "too many parameters for %s (it takes %zu)", fam->name,
                         fam->nparam);
          ok = 0;
          break;
        }
      }
      if (given_off[idx] != (size_t)-1) {
        sp_model_error(c, st->line, a->off, "parameter '%s' is given twice",
                       fam->param_names[idx]);
        ok = 0;
        continue;
      }
      given_off[idx] = a->off;
      /* Without a valid unit for the input there is nothing to convert
       * into; its error is already reported. */
      if (a->expr->bad || !u) continue;
      if (param_value(c, st, a, fam->name, fam->param_names[idx], u,
                      &theta[idx]) != 0)
        ok = 0;
    }
    if (ok) {
      for (size_t k = 0; k < fam->nparam; k++)
        if (given_off[k] == (size_t)-1 && isnan(theta[k])) {
          sp_model_error(c, st->line, st->fam_off,
                         "missing required parameter '%s' for %s",
                         fam->param_names[k], fam->name);
          ok = 0;
        }
    }
    if (ok) {
      sp_error e;
      sp_error_clear(&e);
      if (fam->check(theta, &e) != SP_OK) {
        sp_model_error(c, st->line, check_position(st, fam, e.msg, given_off),
                       "%s", e.msg);
        ok = 0;
      }
    }
  }
  if (!ok) {
    st->sym->bad = 1;
    return;
  }
  if (add_input(c, st, u, fam, theta) != 0) return;
  st->sym->index = c->m->ninputs - 1;
  st->sym->unit = u;
  st->sym->typed = 1;
  st->ok = 1;
}

static void type_const(sp_model_ctx *c, sp_model_stmt *st)
{
  type_node(c, st->expr, 1);
  if (st->expr->bad) {
    st->sym->bad = 1;
    return;
  }
  sp_model *m = c->m;
  if (sp_model_grow(c, (void **)&m->consts, &m->cap_consts, m->nconsts + 1,
                    sizeof *m->consts) != 0)
    return;
  sp_model_const_rec *r = &m->consts[m->nconsts++];
  memset(r, 0, sizeof *r);
  sp_error e;
  r->name = dupn(sp_model_line(c, st->line) + st->name_off, st->name_len);
  r->unit_text = dupn(utext(st->expr->unit), strlen(utext(st->expr->unit)));
  r->unit = sp_unit_copy(st->expr->unit, &e);
  if (!r->name || !r->unit_text || !r->unit) {
    c->oom = 1;
    return;
  }
  r->pub.name = r->name;
  r->pub.value = st->expr->val;
  r->pub.unit_text = r->unit_text;
  r->pub.unit = r->unit;
  r->pub.line = (long)st->line + 1;
  st->sym->unit = st->expr->unit;
  st->sym->is_const = 1;
  st->sym->val = st->expr->val;
  st->sym->index = m->nconsts - 1;
  st->sym->typed = 1;
  st->ok = 1;
}

static void type_let(sp_model_ctx *c, sp_model_stmt *st)
{
  type_node(c, st->expr, 0);
  if (st->expr->bad) {
    st->sym->bad = 1;
    return;
  }
  st->sym->unit = st->expr->unit;
  st->sym->is_const = st->expr->is_const;
  st->sym->val = st->expr->val;
  st->sym->typed = 1;
  st->ok = 1;
}

static void type_output(sp_model_ctx *c, sp_model_stmt *st)
{
  type_node(c, st->expr, 0);
  const sp_unit *du = st->has_unit
                          ? parse_unit(c, st->line, st->unit_off, st->unit_len)
                          : NULL;
  if (st->expr->bad || (st->has_unit && !du)) {
    st->sym->bad = 1;
    return;
  }
  const sp_unit *iu = st->expr->unit;
  if (!du) du = iu;
  double s, o;
  if (conversion(iu, du, &s, &o) != 0) {
    sp_model_error(c, st->line, st->expr->off,
                   "expression is in %s, which cannot be converted to %s",
                   utext(iu), utext(du));
    st->sym->bad = 1;
    return;
  }
  st->out_scale = s;
  st->out_offset = o;
  sp_model *m = c->m;
  if (sp_model_grow(c, (void **)&m->outputs, &m->cap_outputs, m->noutputs + 1,
                    sizeof *m->outputs) != 0)
    return;
  sp_model_output_rec *r = &m->outputs[m->noutputs++];
  memset(r, 0, sizeof *r);
  const char *line = sp_model_line(c, st->line);
  sp_error e;
  r->name = dupn(line + st->name_off, st->name_len);
  if (st->has_unit) {
    size_t off = st->unit_off, n = st->unit_len;
    while (n > 0 && (line[off] == ' ' || line[off] == '\t')) off++, n--;
    while (n > 0 && (line[off + n - 1] == ' ' || line[off + n - 1] == '\t')) n--;
    r->unit_text = dupn(line + off, n);
  } else {
    r->unit_text = dupn(utext(iu), strlen(utext(iu)));
  }
  r->unit = sp_unit_copy(du, &e);
  if (!r->name || !r->unit_text || !r->unit) {
    c->oom = 1;
    return;
  }
  r->pub.name = r->name;
  r->pub.unit_text = r->unit_text;
  r->pub.unit = r->unit;
  r->pub.line = (long)st->line + 1;
  st->out_index = m->noutputs - 1;
  st->sym->index = st->out_index;
  st->sym->unit = du;
  st->sym->is_const = 0;
  st->sym->typed = 1;
  st->ok = 1;
}

static void type_limit(sp_model_ctx *c, sp_model_stmt *st)
{
  int silent;
  sp_model_sym *s = resolve(c, st->line, st->name_off, st->name_len, &silent);
  const char *name = sp_model_line(c, st->line) + st->name_off;
  if (s && s->kind != SP_MODEL_SYM_OUTPUT) {
    sp_model_error(c, st->line, st->name_off,
                   "'%.*s' is %s, not an output (limits apply to outputs)",
                   (int)st->name_len, name, kind_phrase(s->kind));
    s = NULL;
  }
  type_node(c, st->expr, 1);
  if (!s || st->expr->bad) return;
  const sp_unit *ou = c->m->outputs[s->index].unit;
  double v = st->expr->val, sc, of;
  if (!is_plain(c, st->expr->unit)) {
    if (conversion(st->expr->unit, ou, &sc, &of) != 0) {
      sp_model_error(c, st->line, st->expr->off,
                     "the limit is in %s, which cannot be converted to %s (the "
                     "unit of '%.*s')", utext(st->expr->unit),
                     c->m->outputs[s->index].unit_text, (int)st->name_len, name);
      return;
    }
    v = v * sc + of;
  }
  sp_model *m = c->m;
  sp_model_limit_dir dir = st->dir == '<' ? SP_MODEL_LIMIT_BELOW : SP_MODEL_LIMIT_ABOVE;
  for (size_t k = 0; k < m->nlimits; k++)
    if (m->limits[k].output == s->index && m->limits[k].dir == dir) {
      sp_model_error(c, st->line, st->name_off,
                     "'%.*s' already has a '%c' limit (line %ld)",
                     (int)st->name_len, name, st->dir, m->limits[k].line);
      return;
    }
  if (sp_model_grow(c, (void **)&m->limits, &m->cap_limits, m->nlimits + 1,
                    sizeof *m->limits) != 0)
    return;
  sp_model_limit *l = &m->limits[m->nlimits++];
  l->output = s->index;
  l->dir = dir;
  l->value = v;
  l->line = (long)st->line + 1;
  st->ok = 1;
}

static sp_model_sym *correlated_input(sp_model_ctx *c, const sp_model_stmt *st,
                                      size_t off, size_t len)
{
  int silent;
  sp_model_sym *s = resolve(c, st->line, off, len, &silent);
  if (s && s->kind != SP_MODEL_SYM_INPUT) {
    sp_model_error(c, st->line, off,
                   "'%.*s' is %s, not an input (correlate takes two inputs)",
                   (int)len, sp_model_line(c, st->line) + off, kind_phrase(s->kind));
    return NULL;
  }
  return s;
}

static void type_correlate(sp_model_ctx *c, sp_model_stmt *st)
{
  sp_model_sym *a = correlated_input(c, st, st->name_off, st->name_len);
  sp_model_sym *b = correlated_input(c, st, st->name2_off, st->name2_len);
  const char *line = sp_model_line(c, st->line);
  if (a && b && a == b) {
    sp_model_error(c, st->line, st->name2_off, "cannot correlate '%.*s' with itself",
                   (int)st->name_len, line + st->name_off);
    a = NULL;
  }
  type_node(c, st->expr, 1);
  if (!a || !b || st->expr->bad) return;
  double f;
  if (factor_to_one(c, st->expr->unit, &f) != 0) {
    sp_model_error(c, st->line, st->expr->off,
                   "a correlation is a pure number, got %s", utext(st->expr->unit));
    return;
  }
  double rho = scaled(st->expr->val, f);
  if (!(fabs(rho) < 1.0)) {
    sp_model_error(c, st->line, st->expr->off,
                   "a correlation must lie strictly between -1 and 1, got %g", rho);
    return;
  }
  sp_model *m = c->m;
  for (size_t k = 0; k < m->ncorrs; k++) {
    const sp_model_correlation *q = &m->corrs[k];
    if ((q->i == a->index && q->j == b->index) ||
        (q->i == b->index && q->j == a->index)) {
      sp_model_error(c, st->line, st->name_off,
                     "'%.*s' and '%.*s' are already correlated (line %ld)",
                     (int)st->name_len, line + st->name_off, (int)st->name2_len,
                     line + st->name2_off, q->line);
      return;
    }
  }
  if (sp_model_grow(c, (void **)&m->corrs, &m->cap_corrs, m->ncorrs + 1,
                    sizeof *m->corrs) != 0)
    return;
  sp_model_correlation *q = &m->corrs[m->ncorrs++];
  q->i = a->index;
  q->j = b->index;
  q->rho = rho;
  q->line = (long)st->line + 1;
  st->ok = 1;
}

void sp_model_typecheck(sp_model_ctx *c)
{
  sp_error e;
  c->one = sp_model_keep_unit(c, sp_unit_one(&e));
  c->rad = sp_model_keep_unit(c, sp_unit_parse("rad", &e));
  if (!c->one || !c->rad) {
    c->oom = 1;
    return;
  }
  for (size_t i = 0; i < c->nstmts && !c->oom; i++) {
    sp_model_stmt *st = &c->stmts[i];
    c->cur_stmt = i;
    switch (st->kind) {
    case SP_MODEL_ST_INPUT: type_input(c, st); break;
    case SP_MODEL_ST_CONST: type_const(c, st); break;
    case SP_MODEL_ST_LET: type_let(c, st); break;
    case SP_MODEL_ST_OUTPUT: type_output(c, st); break;
    case SP_MODEL_ST_LIMIT: type_limit(c, st); break;
    case SP_MODEL_ST_CORRELATE: type_correlate(c, st); break;
    default: break;
    }
  }
  /* Only reported on its own: with other errors, a missing output is
   * usually one of them. */
  if (c->m->noutputs == 0 && c->npd == 0 && !c->oom)
    sp_model_error(c, 0, 0, "the model defines no output");
}
