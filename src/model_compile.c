/* scatterprop model: code generation.
 *
 * The checked statements become register code in three steps:
 *  1. Each expression is lowered in evaluation order into instructions on
 *     virtual registers, one new register per instruction (inputs and
 *     outputs have fixed registers).  Constant operands use the "_RC" /
 *     "_CR" forms (x * c, c / x, ...) instead of being broadcast, unit
 *     factors become such constants, and folding is never done by
 *     reassociation, so the code computes exactly what the formula says
 *     in the order it says it.  A power with a small integer exponent is
 *     expanded into multiplications (x^4 = (x*x)^2); 1/2 becomes sqrt.
 *     An output's unit factor is folded into its last instruction when
 *     that is a multiplication or division by a constant, else applied by
 *     one in-place "scale".
 *  2. Dead code (let values no output needs) is dropped by a backward
 *     pass.
 *  3. Virtual registers are mapped to as few workspace registers as their
 *     lifetimes allow (linear scan: a register is free after the last
 *     instruction that reads it).  An instruction's destination is always
 *     chosen while its operands are still held, so it never shares storage
 *     with an operand, which the interpreter's restrict-qualified kernels
 *     rely on. */
#include "model_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

/* Integer exponents up to this magnitude are expanded into
 * multiplications by the left-to-right binary method (x^k = (x^(k/2))^2,
 * times x when k is odd: Knuth, D.E. (1997). The Art of Computer
 * Programming, vol. 2, Seminumerical Algorithms, 3rd ed., section 4.6.3;
 * from memory).  With
 * u = DBL_EPSILON / 2, x*x is within u (relative); each further squaring
 * doubles its operand's relative error and adds u, each multiplication by
 * x adds u: x^3 is within 2u and x^4 within 3u (1.5 ulps).  Larger
 * exponents go to pow(), which glibc documents as within 1 ulp. */
#define POW_EXPAND_MAX 4

typedef struct {
  int is_const;
  double c;
  uint32_t v;
} val;

typedef struct {
  sp_model_ctx *c;
  sp_model_ins *ins;
  size_t n, cap;
  uint32_t next_v;   /* next virtual register */
  uint32_t nfixed;   /* inputs + outputs */
  uint32_t line;     /* source line of the statement (1-based) */
  int failed;
} gen;

static val vconst(double c)
{
  val r = {1, c, 0};
  return r;
}
static val vreg(uint32_t v)
{
  val r = {0, 0.0, v};
  return r;
}

static uint32_t emit_to(gen *g, int op, uint32_t d, uint32_t a, uint32_t b,
                        double k, double k2)
{
  if (g->failed) return 0;
  if (sp_model_grow(g->c, (void **)&g->ins, &g->cap, g->n + 1, sizeof *g->ins) != 0) {
    g->failed = 1;
    return 0;
  }
  sp_model_ins *i = &g->ins[g->n++];
  i->op = (uint16_t)op;
  i->line = g->line;
  i->d = d;
  i->a = a;
  i->b = b;
  i->c = k;
  i->c2 = k2;
  return d;
}

static val emit(gen *g, int op, uint32_t a, uint32_t b, double k)
{
  if (g->next_v == UINT32_MAX) {
    g->failed = 1;
    g->c->oom = 1;
    return vreg(0);
  }
  uint32_t d = g->next_v++;
  return vreg(emit_to(g, op, d, a, b, k, 0.0));
}

static double fold(int op, double x, double y, double k)
{
  return sp_model_op_fold(op, x, y, k, 0.0);
}

/* v times a unit factor f. */
static val scale_by(gen *g, val v, double f)
{
  if (f == 1.0) return v;
  if (v.is_const) return vconst(fold(SP_MODEL_OP_MUL_RC, v.c, 0, f));
  return emit(g, SP_MODEL_OP_MUL_RC, v.v, v.v, f);
}

/* A register holding v (a constant is broadcast). */
static uint32_t in_reg(gen *g, val v)
{
  if (!v.is_const) return v.v;
  return emit(g, SP_MODEL_OP_FILL, 0, 0, v.c).v;
}

static val lower(gen *g, const sp_model_node *n);

static val lower_sum(gen *g, const sp_model_node *n)
{
  val acc = scale_by(g, lower(g, n->kids[0]), n->conv[0]);
  for (size_t k = 1; k < n->nkids && !g->failed; k++) {
    val v = scale_by(g, lower(g, n->kids[k]), n->conv[k]);
    int plus = n->ops[k] == '+';
    if (acc.is_const && v.is_const)
      acc = vconst(fold(plus ? SP_MODEL_OP_ADD : SP_MODEL_OP_SUB, acc.c, v.c, 0));
    else if (v.is_const) /* x - c is x + (-c) exactly in IEEE arithmetic */
      acc = emit(g, SP_MODEL_OP_ADD_RC, acc.v, acc.v, plus ? v.c : -v.c);
    else if (acc.is_const)
      acc = plus ? emit(g, SP_MODEL_OP_ADD_RC, v.v, v.v, acc.c)
                 : emit(g, SP_MODEL_OP_SUB_CR, v.v, v.v, acc.c);
    else
      acc = emit(g, plus ? SP_MODEL_OP_ADD : SP_MODEL_OP_SUB, acc.v, v.v, 0);
  }
  return acc;
}

static val lower_prod(gen *g, const sp_model_node *n)
{
  val acc = lower(g, n->kids[0]);
  for (size_t k = 1; k < n->nkids && !g->failed; k++) {
    val v = lower(g, n->kids[k]);
    int times = n->ops[k] == '*';
    if (acc.is_const && v.is_const)
      acc = vconst(fold(times ? SP_MODEL_OP_MUL : SP_MODEL_OP_DIV, acc.c, v.c, 0));
    else if (v.is_const)
      acc = emit(g, times ? SP_MODEL_OP_MUL_RC : SP_MODEL_OP_DIV_RC, acc.v, acc.v, v.c);
    else if (acc.is_const)
      acc = times ? emit(g, SP_MODEL_OP_MUL_RC, v.v, v.v, acc.c)
                  : emit(g, SP_MODEL_OP_DIV_CR, v.v, v.v, acc.c);
    else
      acc = emit(g, times ? SP_MODEL_OP_MUL : SP_MODEL_OP_DIV, acc.v, v.v, 0);
  }
  return acc;
}

/* x^k for an integer 1 <= k <= POW_EXPAND_MAX by binary powering. */
static val int_power(gen *g, uint32_t x, long k)
{
  if (k == 1) return vreg(x);
  val h = int_power(g, x, k / 2);
  val sq = emit(g, SP_MODEL_OP_SQR, h.v, h.v, 0);
  if (k % 2 == 0) return sq;
  return emit(g, SP_MODEL_OP_MUL, sq.v, x, 0);
}

static val lower_power(gen *g, const sp_model_node *n)
{
  const sp_model_node *bn = n->kids[0], *en = n->kids[1];
  if (!en->is_const) {
    val e = scale_by(g, lower(g, en), n->conv[1]);
    val b = scale_by(g, lower(g, bn), n->conv[0]);
    if (b.is_const) return emit(g, SP_MODEL_OP_POW_CR, e.v, e.v, b.c);
    return emit(g, SP_MODEL_OP_POW, b.v, e.v, 0);
  }
  double p = n->pow_exp;
  val b = scale_by(g, lower(g, bn), n->conv[0]);
  double r = nearbyint(p);
  if (r == p && fabs(p) <= POW_EXPAND_MAX) {
    val x = int_power(g, b.v, (long)fabs(p));
    return p < 0 ? emit(g, SP_MODEL_OP_DIV_CR, x.v, x.v, 1.0) : x;
  }
  if (p == 0.5) return emit(g, SP_MODEL_OP_SQRT, b.v, b.v, 0);
  if (p == -0.5) {
    val s = emit(g, SP_MODEL_OP_SQRT, b.v, b.v, 0);
    return emit(g, SP_MODEL_OP_DIV_CR, s.v, s.v, 1.0);
  }
  return emit(g, SP_MODEL_OP_POW_RC, b.v, b.v, p);
}

static val lower_call(gen *g, const sp_model_node *n)
{
  const sp_model_func *fn = &sp_model_funcs[n->func];
  if (fn->rule == FUNC_POW) return lower_power(g, n);
  val a = scale_by(g, lower(g, n->kids[0]), n->conv[0]);
  if (fn->arity == 1) return emit(g, fn->op, a.v, a.v, 0);
  val b = scale_by(g, lower(g, n->kids[1]), n->conv[1]);
  if (fn->op == SP_MODEL_OP_MIN || fn->op == SP_MODEL_OP_MAX) {
    int rc = fn->op == SP_MODEL_OP_MIN ? SP_MODEL_OP_MIN_RC : SP_MODEL_OP_MAX_RC;
    /* min(c, x) is min(x, c): constants are finite, so only x can be the
     * NaN that both forms pass on. */
    if (b.is_const) return emit(g, rc, a.v, a.v, b.c);
    if (a.is_const) return emit(g, rc, b.v, b.v, a.c);
  }
  uint32_t ra = in_reg(g, a), rb = in_reg(g, b);
  return emit(g, fn->op, ra, rb, 0);
}

static val lower(gen *g, const sp_model_node *n)
{
  if (n->is_const) return vconst(n->val);
  if (g->failed) return vconst(0);
  switch (n->kind) {
  case SP_MODEL_N_REF: {
    const sp_model_sym *s = n->sym;
    if (s->kind == SP_MODEL_SYM_INPUT) return vreg((uint32_t)s->index);
    if (s->kind == SP_MODEL_SYM_OUTPUT)
      return vreg((uint32_t)(g->c->m->ninputs + s->index));
    return vreg(s->vreg);
  }
  case SP_MODEL_N_NEG: {
    val a = lower(g, n->kids[0]);
    return emit(g, SP_MODEL_OP_NEG, a.v, a.v, 0);
  }
  case SP_MODEL_N_SUM: return lower_sum(g, n);
  case SP_MODEL_N_PROD: return lower_prod(g, n);
  case SP_MODEL_N_POW: return lower_power(g, n);
  case SP_MODEL_N_CALL: return lower_call(g, n);
  default: return vconst(n->val);
  }
}

/* Writes v into output register o, applying the unit conversion
 * value * s + off once.  first_ins is where the output's own code starts,
 * so that only an instruction of this expression is retargeted. */
static void store_output(gen *g, val v, uint32_t o, double s, double off,
                         size_t first_ins)
{
  if (v.is_const) {
    double x = v.c;
    if (s != 1.0 || off != 0.0) x = sp_model_op_fold(SP_MODEL_OP_MULADD_RC, x, 0, s, off);
    emit_to(g, SP_MODEL_OP_FILL, o, 0, 0, x, 0);
    return;
  }
  int conv = s != 1.0 || off != 0.0;
  sp_model_ins *last = g->n > first_ins ? &g->ins[g->n - 1] : NULL;
  if (last && last->d == v.v && v.v >= g->nfixed) {
    /* The value is this expression's fresh temporary, made by the last
     * instruction: let that instruction write the output directly. */
    last->d = o;
    if (!conv) return;
    if (off == 0.0 && last->op == SP_MODEL_OP_MUL_RC && isfinite(last->c * s)) {
      last->c *= s;
      return;
    }
    if (off == 0.0 && last->op == SP_MODEL_OP_DIV_RC && isfinite(last->c / s) &&
        last->c / s != 0.0) {
      last->c /= s;
      return;
    }
    if (off == 0.0) emit_to(g, SP_MODEL_OP_SCALE, o, o, o, s, 0);
    else emit_to(g, SP_MODEL_OP_AFFINE, o, o, o, s, off);
    return;
  }
  if (!conv) emit_to(g, SP_MODEL_OP_COPY, o, v.v, v.v, 0, 0);
  else if (off == 0.0) emit_to(g, SP_MODEL_OP_MUL_RC, o, v.v, v.v, s, 0);
  else emit_to(g, SP_MODEL_OP_MULADD_RC, o, v.v, v.v, s, off);
}

/* Registers an instruction reads, as (count, list). */
static int reads(const sp_model_ins *i, uint32_t r[2])
{
  switch (sp_model_ops[i->op].shape) {
  case SP_MODEL_SHAPE_RR: r[0] = i->a; r[1] = i->b; return 2;
  case SP_MODEL_SHAPE_R1: r[0] = i->a; return 1;
  case SP_MODEL_SHAPE_IP: r[0] = i->d; return 1;
  default: return 0;
  }
}

/* Drops dead instructions, then maps temporaries to workspace registers. */
static int allocate(gen *g)
{
  sp_model_ctx *c = g->c;
  size_t nv = g->next_v;
  unsigned char *needed = calloc(nv ? nv : 1, 1);
  size_t *last_use = malloc((nv ? nv : 1) * sizeof *last_use);
  uint32_t *phys = malloc((nv ? nv : 1) * sizeof *phys);
  uint32_t *free_stack = malloc((nv ? nv : 1) * sizeof *free_stack);
  if (!needed || !last_use || !phys || !free_stack) {
    free(needed);
    free(last_use);
    free(phys);
    free(free_stack);
    c->oom = 1;
    return -1;
  }
  /* 1. Backward liveness: output writes are needed, and so is whatever a
   * needed instruction reads. */
  for (size_t k = g->n; k-- > 0;) {
    sp_model_ins *i = &g->ins[k];
    int live = i->d < g->nfixed || needed[i->d];
    if (!live) {
      i->op = UINT16_MAX;
      continue;
    }
    uint32_t r[2];
    int nr = reads(i, r);
    for (int j = 0; j < nr; j++) needed[r[j]] = 1;
  }
  size_t w = 0;
  for (size_t k = 0; k < g->n; k++)
    if (g->ins[k].op != UINT16_MAX) g->ins[w++] = g->ins[k];
  g->n = w;
  /* 2. Last reader of each temporary. */
  for (size_t v = 0; v < nv; v++) last_use[v] = (size_t)-1;
  for (size_t k = 0; k < g->n; k++) {
    uint32_t r[2];
    int nr = reads(&g->ins[k], r);
    for (int j = 0; j < nr; j++) last_use[r[j]] = k;
  }
  /* 3. Linear scan over the straight-line code (Poletto, M., Sarkar, V.
   * (1999). Linear scan register allocation. ACM Transactions on
   * Programming Languages and Systems 21(5), 895-913; from memory): a
   * lifetime runs from the defining instruction to the last reader, and
   * never spills, since the workspace grows to whatever is needed. */
  size_t nfree = 0, ntemps = 0;
  for (size_t k = 0; k < g->n; k++) {
    sp_model_ins *i = &g->ins[k];
    uint32_t r[2];
    int nr = reads(i, r);
    if (i->d >= g->nfixed && sp_model_ops[i->op].shape != SP_MODEL_SHAPE_IP) {
      uint32_t p = nfree > 0 ? free_stack[--nfree] : (uint32_t)ntemps++;
      phys[i->d] = p;
    }
    for (int j = 0; j < nr; j++) {
      if (r[j] < g->nfixed || last_use[r[j]] != k) continue;
      if (j == 1 && r[1] == r[0]) continue;
      free_stack[nfree++] = phys[r[j]];
    }
    /* Rewrite the operands to final register numbers. */
    uint32_t base = g->nfixed;
    int shape = sp_model_ops[i->op].shape;
    if (shape == SP_MODEL_SHAPE_RR || shape == SP_MODEL_SHAPE_R1) {
      if (i->a >= base) i->a = base + phys[i->a];
      if (shape == SP_MODEL_SHAPE_RR && i->b >= base) i->b = base + phys[i->b];
      if (shape == SP_MODEL_SHAPE_R1) i->b = i->a;
    } else {
      i->a = i->b = 0;
    }
    if (i->d >= base) i->d = base + phys[i->d];
    if (shape == SP_MODEL_SHAPE_IP) i->a = i->b = i->d;
  }
  free(needed);
  free(last_use);
  free(phys);
  free(free_stack);
  c->m->ntemps = ntemps;
  c->m->nregs = g->nfixed + ntemps;
  return 0;
}

void sp_model_codegen(sp_model_ctx *c)
{
  sp_model *m = c->m;
  gen g;
  memset(&g, 0, sizeof g);
  g.c = c;
  g.nfixed = (uint32_t)(m->ninputs + m->noutputs);
  g.next_v = g.nfixed;
  for (size_t k = 0; k < c->nstmts && !g.failed; k++) {
    const sp_model_stmt *st = &c->stmts[k];
    g.line = (uint32_t)(st->line + 1);
    if (st->kind == SP_MODEL_ST_LET && !st->expr->is_const) {
      val v = lower(&g, st->expr);
      st->sym->vreg = v.v;
      st->sym->has_vreg = 1;
    } else if (st->kind == SP_MODEL_ST_OUTPUT) {
      size_t first = g.n;
      val v = lower(&g, st->expr);
      store_output(&g, v, (uint32_t)(m->ninputs + st->out_index), st->out_scale,
                   st->out_offset, first);
    }
  }
  if (g.failed || allocate(&g) != 0) {
    c->oom = 1;
    free(g.ins);
    return;
  }
  m->code = g.ins;
  m->ncode = g.n;
}
