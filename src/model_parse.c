/* scatterprop model: the parser.
 *
 * A recursive-descent parser over one line's tokens (the grammar is in
 * docs/model-language.md).  Its recursion is bounded: every construct that
 * nests (parentheses, calls, unary signs, the right operand of '^') counts
 * one level, and past SP_MODEL_MAX_DEPTH levels the parser reports
 * "expression nested too deeply" and stops the line, so no input can
 * exhaust the stack.  Sums and products are read by loops into n-ary
 * nodes, so a long flat formula is wide, not deep.
 *
 * A line with an error is reported once and skipped; parsing resumes on
 * the next line, so every line's first syntax error is listed.  Declared
 * names are entered into the symbol table here, before any type checking,
 * so that a name used above its definition can be told apart from an
 * unknown one. */
#include "model_internal.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
  sp_model_ctx *c;
  size_t line;
  const char *s;  /* the line's text */
  size_t pos;     /* the next token */
  int depth;
  int failed;     /* an error was reported: unwind */
} parser;

static const sp_model_token *peek(const parser *p) { return &p->c->toks[p->pos]; }
static const sp_model_token *next(parser *p)
{
  const sp_model_token *t = &p->c->toks[p->pos];
  if (t->kind != SP_MODEL_TK_EOL) p->pos++;
  return t;
}
static int at(const parser *p, int kind) { return peek(p)->kind == kind; }

static void fail_at(parser *p, size_t off, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
static void fail_at(parser *p, size_t off, const char *fmt, ...)
{
  if (p->failed) return;
  char msg[SP_ERROR_MSG_MAX];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(msg, sizeof msg, fmt, ap);
  va_end(ap);
  sp_model_error(p->c, p->line, off, "%s", msg);
  p->failed = 1;
}

/* "expected WHAT but found <the next token>". */
static void expected(parser *p, const char *what)
{
  char d[96];
  const sp_model_token *t = peek(p);
  fail_at(p, t->off, "expected %s but found %s", what,
          sp_model_token_desc(p->c, p->line, t, d, sizeof d));
}

static int tok_is(const parser *p, const sp_model_token *t, const char *word)
{
  size_t n = strlen(word);
  return t->kind == SP_MODEL_TK_NAME && t->len == n &&
         memcmp(p->s + t->off, word, n) == 0;
}

static sp_model_node *new_node(parser *p, int kind, size_t off)
{
  sp_model_node *n = sp_model_alloc(p->c, sizeof *n);
  if (!n) {
    p->failed = 1;
    return NULL;
  }
  n->kind = kind;
  n->line = p->line;
  n->off = off;
  n->func = -1;
  return n;
}

/* Copies a temporary operand list into the arena. */
static int settle_kids(parser *p, sp_model_node *n, sp_model_node **kids,
                       const char *ops, const size_t *op_off, size_t nk)
{
  n->nkids = nk;
  if (nk == 0) return 0;
  n->kids = sp_model_alloc(p->c, nk * sizeof *n->kids);
  if (!n->kids) return -1;
  memcpy(n->kids, kids, nk * sizeof *kids);
  if (ops) {
    n->ops = sp_model_alloc(p->c, nk);
    n->op_off = sp_model_alloc(p->c, nk * sizeof *n->op_off);
    if (!n->ops || !n->op_off) return -1;
    memcpy(n->ops, ops, nk);
    memcpy(n->op_off, op_off, nk * sizeof *op_off);
  }
  return 0;
}

static int enter(parser *p, size_t off)
{
  if (++p->depth > SP_MODEL_MAX_DEPTH) {
    fail_at(p, off, "expression nested too deeply (more than %d levels)",
            SP_MODEL_MAX_DEPTH);
    return -1;
  }
  return 0;
}

static sp_model_node *parse_expr(parser *p);
static sp_model_node *parse_unary(parser *p);

/* '(' expr { ',' expr } ')' after a function's name, into n's operands. */
static int parse_call_args(parser *p, sp_model_node *n)
{
  size_t cap = 0, nk = 0;
  sp_model_node **kids = NULL;
  next(p); /* '(' */
  if (!at(p, SP_MODEL_TK_RPAREN)) {
    for (;;) {
      sp_model_node *a = parse_expr(p);
      if (!a) break;
      if (sp_model_grow(p->c, (void **)&kids, &cap, nk + 1, sizeof *kids) != 0) {
        p->failed = 1;
        break;
      }
      kids[nk++] = a;
      if (at(p, SP_MODEL_TK_COMMA)) {
        next(p);
        continue;
      }
      if (!at(p, SP_MODEL_TK_RPAREN)) expected(p, "',' or ')'");
      break;
    }
  }
  if (!p->failed) {
    next(p); /* ')' */
    if (settle_kids(p, n, kids, NULL, NULL, nk) != 0) p->failed = 1;
  }
  free(kids);
  return p->failed ? -1 : 0;
}

/* A unit in brackets may follow only a number. */
static void no_unit_here(parser *p)
{
  if (at(p, SP_MODEL_TK_UNIT))
    fail_at(p, peek(p)->off,
            "a unit in brackets can follow only a number (write 2 [mm], or "
            "multiply by 1 [mm])");
}

static sp_model_node *parse_primary(parser *p)
{
  const sp_model_token *t = peek(p);
  if (t->kind == SP_MODEL_TK_NUMBER) {
    next(p);
    sp_model_node *n = new_node(p, SP_MODEL_N_NUM, t->off);
    if (!n) return NULL;
    n->num = t->num;
    n->len = t->len;
    if (at(p, SP_MODEL_TK_UNIT)) {
      const sp_model_token *u = next(p);
      n->has_unit = 1;
      n->unit_off = u->off + 1;
      n->unit_len = u->len - 2;
    }
    return n;
  }
  if (t->kind == SP_MODEL_TK_NAME) {
    next(p);
    if (at(p, SP_MODEL_TK_LPAREN)) {
      if (enter(p, peek(p)->off) != 0) return NULL;
      sp_model_node *n = new_node(p, SP_MODEL_N_CALL, t->off);
      if (!n) return NULL;
      n->len = t->len;
      if (parse_call_args(p, n) != 0) return NULL;
      p->depth--;
      no_unit_here(p);
      return p->failed ? NULL : n;
    }
    sp_model_node *n = new_node(p, SP_MODEL_N_REF, t->off);
    if (!n) return NULL;
    n->len = t->len;
    no_unit_here(p);
    return p->failed ? NULL : n;
  }
  if (t->kind == SP_MODEL_TK_LPAREN) {
    if (enter(p, t->off) != 0) return NULL;
    next(p);
    sp_model_node *n = parse_expr(p);
    if (!n) return NULL;
    if (!at(p, SP_MODEL_TK_RPAREN)) {
      expected(p, "')'");
      return NULL;
    }
    next(p);
    p->depth--;
    no_unit_here(p);
    return p->failed ? NULL : n;
  }
  expected(p, "an expression");
  return NULL;
}

/* power := primary [ '^' unary ]: right-associative (a^b^c = a^(b^c)),
 * and the exponent may carry a sign (2^-1). */
static sp_model_node *parse_power(parser *p)
{
  sp_model_node *base = parse_primary(p);
  if (!base || !at(p, SP_MODEL_TK_CARET)) return base;
  const sp_model_token *op = next(p);
  if (enter(p, op->off) != 0) return NULL;
  sp_model_node *ex = parse_unary(p);
  if (!ex) return NULL;
  p->depth--;
  sp_model_node *n = new_node(p, SP_MODEL_N_POW, base->off);
  if (!n) return NULL;
  sp_model_node *kids[2] = {base, ex};
  if (settle_kids(p, n, kids, NULL, NULL, 2) != 0) {
    p->failed = 1;
    return NULL;
  }
  n->len = op->off; /* where the '^' is, for messages */
  return n;
}

/* unary := ('-' | '+') unary | power.  Because '^' is inside power,
 * -x^2 is -(x^2). */
static sp_model_node *parse_unary(parser *p)
{
  const sp_model_token *t = peek(p);
  if (t->kind != SP_MODEL_TK_MINUS && t->kind != SP_MODEL_TK_PLUS)
    return parse_power(p);
  next(p);
  if (enter(p, t->off) != 0) return NULL;
  sp_model_node *kid = parse_unary(p);
  if (!kid) return NULL;
  p->depth--;
  if (t->kind == SP_MODEL_TK_PLUS) return kid;
  sp_model_node *n = new_node(p, SP_MODEL_N_NEG, t->off);
  if (!n) return NULL;
  if (settle_kids(p, n, &kid, NULL, NULL, 1) != 0) {
    p->failed = 1;
    return NULL;
  }
  return n;
}

/* One n-ary level: operands from sub, separated by the two operator kinds
 * k1 (spelled c1) and k2 (c2). */
static sp_model_node *parse_chain(parser *p, int nkind,
                                  sp_model_node *(*sub)(parser *), int k1,
                                  char c1, int k2, char c2)
{
  sp_model_node *first = sub(p);
  if (!first || (!at(p, k1) && !at(p, k2))) return first;
  size_t cap = 0, nk = 0, cap_o = 0, cap_f = 0;
  sp_model_node **kids = NULL;
  char *ops = NULL;
  size_t *offs = NULL;
  sp_model_node *n = NULL;
  int ok = 1;
  sp_model_node *operand = first;
  char op = c1;
  size_t off = first->off;
  for (;;) {
    if (sp_model_grow(p->c, (void **)&kids, &cap, nk + 1, sizeof *kids) != 0 ||
        sp_model_grow(p->c, (void **)&ops, &cap_o, nk + 1, 1) != 0 ||
        sp_model_grow(p->c, (void **)&offs, &cap_f, nk + 1, sizeof *offs) != 0) {
      p->failed = 1;
      ok = 0;
      break;
    }
    kids[nk] = operand;
    ops[nk] = op;
    offs[nk] = off;
    nk++;
    if (!at(p, k1) && !at(p, k2)) break;
    const sp_model_token *t = next(p);
    op = t->kind == k1 ? c1 : c2;
    off = t->off;
    operand = sub(p);
    if (!operand) {
      ok = 0;
      break;
    }
  }
  if (ok) {
    n = new_node(p, nkind, first->off);
    if (n && settle_kids(p, n, kids, ops, offs, nk) != 0) {
      p->failed = 1;
      n = NULL;
    }
  }
  free(kids);
  free(ops);
  free(offs);
  return n;
}

static sp_model_node *parse_product(parser *p)
{
  return parse_chain(p, SP_MODEL_N_PROD, parse_unary, SP_MODEL_TK_STAR, '*',
                     SP_MODEL_TK_SLASH, '/');
}

static sp_model_node *parse_expr(parser *p)
{
  return parse_chain(p, SP_MODEL_N_SUM, parse_product, SP_MODEL_TK_PLUS, '+',
                     SP_MODEL_TK_MINUS, '-');
}

/* ---- names ------------------------------------------------------------------ */

static const char *const keywords[] = {"input", "const", "let", "output",
                                       "limit", "correlate", "fit"};

static size_t name_hash(const char *s, size_t n, size_t size)
{
  /* FNV-1a, 64-bit, with its published offset basis and prime: Fowler,
   * G., Noll, L.C., Vo, K.-P., Eastlake, D., Hansen, T. The FNV
   * Non-Cryptographic Hash Algorithm. IETF Internet-Draft
   * draft-eastlake-fnv (from memory; the hash dates from Fowler, Noll and
   * Vo, 1991). */
  uint64_t h = 14695981039346656037u;
  for (size_t i = 0; i < n; i++) {
    h ^= (unsigned char)s[i];
    h *= 1099511628211u;
  }
  return (size_t)(h % size);
}

sp_model_sym *sp_model_sym_find(const sp_model_ctx *c, const char *name,
                                size_t len)
{
  if (!c->hash) return NULL;
  for (sp_model_sym *s = c->hash[name_hash(name, len, c->hash_size)]; s;
       s = s->next)
    if (s->len == len && memcmp(s->name, name, len) == 0) return s;
  return NULL;
}

/* Checks that the statement's name may be declared and declares it;
 * NULL after an error. */
static sp_model_sym *declare(parser *p, const sp_model_token *t, int kind)
{
  sp_model_ctx *c = p->c;
  const char *name = p->s + t->off;
  for (size_t k = 0; k < sizeof keywords / sizeof *keywords; k++)
    if (tok_is(p, t, keywords[k])) {
      fail_at(p, t->off, "'%s' is a keyword and cannot be a name", keywords[k]);
      return NULL;
    }
  if (sp_model_func_find(name, t->len) >= 0) {
    fail_at(p, t->off, "'%.*s' is a built-in function and cannot be a name",
            (int)t->len, name);
    return NULL;
  }
  if (tok_is(p, t, "pi") || tok_is(p, t, "e")) {
    fail_at(p, t->off, "'%.*s' is a built-in constant and cannot be a name",
            (int)t->len, name);
    return NULL;
  }
  sp_model_sym *old = sp_model_sym_find(c, name, t->len);
  if (old) {
    fail_at(p, t->off, "duplicate name '%.*s' (first defined on line %zu)",
            (int)t->len, name, old->line + 1);
    return NULL;
  }
  if (!c->hash) {
    /* Sized from the number of lines: at most one name a line. */
    c->hash_size = c->nlines < 64 ? 64 : c->nlines * 2;
    c->hash = calloc(c->hash_size, sizeof *c->hash);
    if (!c->hash) {
      c->oom = 1;
      p->failed = 1;
      return NULL;
    }
  }
  sp_model_sym *s = sp_model_alloc(c, sizeof *s);
  if (!s || sp_model_grow(c, (void **)&c->syms, &c->cap_syms, c->nsyms + 1,
                          sizeof *c->syms) != 0) {
    p->failed = 1;
    return NULL;
  }
  s->kind = kind;
  s->name = name;
  s->len = t->len;
  s->line = p->line;
  size_t h = name_hash(name, t->len, c->hash_size);
  s->next = c->hash[h];
  c->hash[h] = s;
  c->syms[c->nsyms++] = s;
  return s;
}

/* ---- statements --------------------------------------------------------------- */

static int expect_name(parser *p, const char *what, const sp_model_token **t)
{
  if (!at(p, SP_MODEL_TK_NAME)) {
    expected(p, what);
    return -1;
  }
  *t = next(p);
  return 0;
}

static void optional_unit(parser *p, sp_model_stmt *st)
{
  if (!at(p, SP_MODEL_TK_UNIT)) return;
  const sp_model_token *u = next(p);
  st->has_unit = 1;
  st->unit_off = u->off + 1;
  st->unit_len = u->len - 2;
}

static int expect_kind(parser *p, int kind, const char *what)
{
  if (!at(p, kind)) {
    expected(p, what);
    return -1;
  }
  next(p);
  return 0;
}

/* family(arg, ...) or fit("path") after '~'. */
static int parse_dist(parser *p, sp_model_stmt *st)
{
  const sp_model_token *f;
  if (expect_name(p, "a distribution (a family name or fit)", &f) != 0)
    return -1;
  st->fam_off = f->off;
  st->fam_len = f->len;
  if (!at(p, SP_MODEL_TK_LPAREN)) {
    expected(p, "'('");
    return -1;
  }
  if (tok_is(p, f, "fit")) {
    next(p);
    st->is_fit = 1;
    if (!at(p, SP_MODEL_TK_STRING)) {
      expected(p, "a quoted path");
      return -1;
    }
    const sp_model_token *s = next(p);
    st->path_off = s->off + 1;
    st->path_len = s->len - 2;
    if (st->path_len == 0) {
      fail_at(p, s->off, "fit() needs the path of a fit record");
      return -1;
    }
    return expect_kind(p, SP_MODEL_TK_RPAREN, "')'");
  }
  if (enter(p, peek(p)->off) != 0) return -1;
  next(p); /* '(' */
  /* The arguments are collected in a malloc'ed list and copied into the
   * arena at the end, so that the statement owns nothing. */
  size_t cap = 0, nargs = 0;
  sp_model_arg *args = NULL;
  int seen_named = 0, ok = 1;
  if (!at(p, SP_MODEL_TK_RPAREN)) {
    for (;;) {
      sp_model_arg a;
      memset(&a, 0, sizeof a);
      a.off = peek(p)->off;
      if (at(p, SP_MODEL_TK_NAME) &&
          p->c->toks[p->pos + 1].kind == SP_MODEL_TK_EQ) {
        const sp_model_token *nm = next(p);
        next(p); /* '=' */
        a.named = 1;
        a.name_off = nm->off;
        a.name_len = nm->len;
        seen_named = 1;
      } else if (seen_named) {
        fail_at(p, a.off, "a positional parameter cannot follow a named one");
        ok = 0;
        break;
      }
      a.expr = parse_expr(p);
      if (!a.expr ||
          sp_model_grow(p->c, (void **)&args, &cap, nargs + 1, sizeof *args) != 0) {
        p->failed = 1;
        ok = 0;
        break;
      }
      args[nargs++] = a;
      if (at(p, SP_MODEL_TK_COMMA)) {
        next(p);
        continue;
      }
      if (!at(p, SP_MODEL_TK_RPAREN)) {
        expected(p, "',' or ')'");
        ok = 0;
      }
      break;
    }
  }
  if (ok && nargs > 0) {
    st->args = sp_model_alloc(p->c, nargs * sizeof *args);
    if (st->args) {
      memcpy(st->args, args, nargs * sizeof *args);
      st->nargs = nargs;
    } else {
      p->failed = 1;
      ok = 0;
    }
  }
  free(args);
  if (!ok) return -1;
  st->close_off = peek(p)->off;
  next(p); /* ')' */
  p->depth--;
  return 0;
}

static void parse_statement(parser *p, sp_model_stmt *st)
{
  const sp_model_token *kw = next(p);
  const sp_model_token *name = NULL;
  if (tok_is(p, kw, "input")) {
    st->kind = SP_MODEL_ST_INPUT;
    if (expect_name(p, "the input's name", &name) != 0) return;
    st->sym = declare(p, name, SP_MODEL_SYM_INPUT);
    if (p->failed) return;
    optional_unit(p, st);
    if (expect_kind(p, SP_MODEL_TK_TILDE, "'~'") != 0) return;
    if (parse_dist(p, st) != 0) return;
  } else if (tok_is(p, kw, "const") || tok_is(p, kw, "let")) {
    int is_const = tok_is(p, kw, "const");
    st->kind = is_const ? SP_MODEL_ST_CONST : SP_MODEL_ST_LET;
    if (expect_name(p, is_const ? "the constant's name" : "the value's name",
                    &name) != 0)
      return;
    st->sym = declare(p, name, is_const ? SP_MODEL_SYM_CONST : SP_MODEL_SYM_LET);
    if (p->failed) return;
    if (expect_kind(p, SP_MODEL_TK_EQ, "'='") != 0) return;
    st->expr = parse_expr(p);
  } else if (tok_is(p, kw, "output")) {
    st->kind = SP_MODEL_ST_OUTPUT;
    if (expect_name(p, "the output's name", &name) != 0) return;
    st->sym = declare(p, name, SP_MODEL_SYM_OUTPUT);
    if (p->failed) return;
    optional_unit(p, st);
    if (expect_kind(p, SP_MODEL_TK_EQ, "'='") != 0) return;
    st->expr = parse_expr(p);
  } else if (tok_is(p, kw, "limit")) {
    st->kind = SP_MODEL_ST_LIMIT;
    if (expect_name(p, "the name of an output", &name) != 0) return;
    if (!at(p, SP_MODEL_TK_LT) && !at(p, SP_MODEL_TK_GT)) {
      expected(p, "'<' or '>'");
      return;
    }
    st->dir = next(p)->kind == SP_MODEL_TK_LT ? '<' : '>';
    st->expr = parse_expr(p);
  } else if (tok_is(p, kw, "correlate")) {
    st->kind = SP_MODEL_ST_CORRELATE;
    const sp_model_token *b;
    if (expect_name(p, "the name of an input", &name) != 0) return;
    if (expect_name(p, "the name of a second input", &b) != 0) return;
    st->name2_off = b->off;
    st->name2_len = b->len;
    st->expr = parse_expr(p);
  } else if (kw->kind == SP_MODEL_TK_NAME) {
    fail_at(p, kw->off,
            "unknown statement '%.*s' (expected input, const, let, output, "
            "limit or correlate)", (int)kw->len, p->s + kw->off);
    return;
  } else {
    p->pos--;
    expected(p, "a statement");
    return;
  }
  if (p->failed) return;
  if (name) {
    st->name_off = name->off;
    st->name_len = name->len;
  }
  if (!at(p, SP_MODEL_TK_EOL)) {
    char d[96];
    const sp_model_token *t = peek(p);
    fail_at(p, t->off, "unexpected %s after the end of the statement",
            sp_model_token_desc(p->c, p->line, t, d, sizeof d));
  }
}

/* A line that could not be lexed may still have declared a name before the
 * bad character ("input x ~ fit(\"unterminated"): the name is entered,
 * marked bad, so that its uses are not reported as unknown. */
static void declare_after_lex_error(sp_model_ctx *c, size_t line)
{
  if (c->ntoks < 2 || c->toks[1].kind != SP_MODEL_TK_NAME) return;
  parser p = {c, line, sp_model_line(c, line), 0, 0, 0};
  static const struct { const char *word; int kind; } decl[] = {
      {"input", SP_MODEL_SYM_INPUT}, {"const", SP_MODEL_SYM_CONST},
      {"let", SP_MODEL_SYM_LET}, {"output", SP_MODEL_SYM_OUTPUT}};
  for (size_t k = 0; k < sizeof decl / sizeof *decl; k++) {
    if (!tok_is(&p, &c->toks[0], decl[k].word)) continue;
    const sp_model_token *t = &c->toks[1];
    const char *name = p.s + t->off;
    /* Only a name that declare() would accept without a message. */
    for (size_t j = 0; j < sizeof keywords / sizeof *keywords; j++)
      if (tok_is(&p, t, keywords[j])) return;
    if (sp_model_func_find(name, t->len) >= 0 || tok_is(&p, t, "pi") ||
        tok_is(&p, t, "e") || sp_model_sym_find(c, name, t->len))
      return;
    sp_model_sym *s = declare(&p, t, decl[k].kind);
    if (s) s->bad = 1;
    return;
  }
}

void sp_model_parse(sp_model_ctx *c)
{
  for (size_t line = 0; line < c->nlines && !c->oom; line++) {
    if (sp_model_lex_line(c, line) != 0) {
      declare_after_lex_error(c, line);
      continue;
    }
    if (c->toks[0].kind == SP_MODEL_TK_EOL) continue;
    parser p = {c, line, sp_model_line(c, line), 0, 0, 0};
    sp_model_stmt st;
    memset(&st, 0, sizeof st);
    st.line = line;
    parse_statement(&p, &st);
    if (p.failed) {
      /* The name stays declared, marked bad, so that later uses of it are
       * not reported again. */
      if (st.sym) st.sym->bad = 1;
      continue;
    }
    if (sp_model_grow(c, (void **)&c->stmts, &c->cap_stmts, c->nstmts + 1,
                      sizeof *c->stmts) != 0)
      return;
    c->stmts[c->nstmts++] = st;
  }
}
