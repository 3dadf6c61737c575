/* scatterprop model: the interpreter.
 *
 * Each instruction runs over the whole block in one loop of its own, so the
 * per-instruction dispatch is paid once per block, not once per sample.
 * The kernels are generated from model_ops.def; their pointers are
 * restrict-qualified (the register allocator never lets a destination
 * share storage with an operand) and the loops have no calls except the
 * libm functions themselves, so the compiler can vectorise them.  The
 * scalar folder used at compile time is generated from the same
 * expressions. */
#include "model_internal.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

const sp_model_opinfo sp_model_ops[SP_MODEL_OP_COUNT] = {
#define SP_MODEL_OP(NAME, SHAPE, NCONST, MNEMONIC, EXPR) \
  {MNEMONIC, SP_MODEL_SHAPE_##SHAPE, NCONST},
#include "model_ops.def"
};

double sp_model_op_fold(int op, double x, double y, double c, double c2)
{
  switch (op) {
#define SP_MODEL_OP(NAME, SHAPE, NCONST, MNEMONIC, EXPR) \
  case SP_MODEL_OP_##NAME: return (EXPR);
#include "model_ops.def"
  default: return NAN;
  }
}

/* ---- kernels ------------------------------------------------------------------ */

typedef void (*kernel)(double *restrict d, const double *restrict ra,
                       const double *restrict rb, double c, double c2, size_t n);

/* Each kernel runs its loop in chunks of CHUNK elements with a fixed trip
 * count, then the remainder: GCC's -O2 vectoriser (the "very cheap" cost
 * model of GCC 12) only takes loops that need no epilogue, and a loop of
 * constant count 8 is one, so the chunks vectorise at -O2 without flags
 * of our own; at -O3 the plain loop would vectorise as well. */
#define CHUNK 8
#define KERNEL_LOOP(...)                                                     \
  size_t i = 0;                                                              \
  for (; i + CHUNK <= n; i += CHUNK)                                         \
    for (size_t j = 0; j < CHUNK; j++) {                                     \
      const size_t k = i + j;                                                \
      __VA_ARGS__                                                            \
    }                                                                        \
  for (size_t k = i; k < n; k++) __VA_ARGS__

#define KERNEL_RR(NAME, EXPR)                                                \
  static void k_##NAME(double *restrict d, const double *restrict ra,        \
                       const double *restrict rb, double c, double c2,       \
                       size_t n)                                             \
  {                                                                          \
    KERNEL_LOOP({                                                            \
      const double x = ra[k], y = rb[k];                                     \
      d[k] = (EXPR);                                                         \
    })                                                                       \
  }
#define KERNEL_R1(NAME, EXPR)                                                \
  static void k_##NAME(double *restrict d, const double *restrict ra,        \
                       const double *restrict rb, double c, double c2,       \
                       size_t n)                                             \
  {                                                                          \
    KERNEL_LOOP({                                                            \
      const double x = ra[k];                                                \
      d[k] = (EXPR);                                                         \
    })                                                                       \
  }
#define KERNEL_C0(NAME, EXPR)                                                \
  static void k_##NAME(double *restrict d, const double *restrict ra,        \
                       const double *restrict rb, double c, double c2,       \
                       size_t n)                                             \
  {                                                                          \
    KERNEL_LOOP({ d[k] = (EXPR); })                                          \
  }
/* In place: d is both read and written; ra and rb are not used. */
#define KERNEL_IP(NAME, EXPR)                                                \
  static void k_##NAME(double *restrict d, const double *restrict ra,        \
                       const double *restrict rb, double c, double c2,       \
                       size_t n)                                             \
  {                                                                          \
    KERNEL_LOOP({                                                            \
      const double x = d[k];                                                 \
      d[k] = (EXPR);                                                         \
    })                                                                       \
  }

#define SP_MODEL_OP(NAME, SHAPE, NCONST, MNEMONIC, EXPR) KERNEL_##SHAPE(NAME, EXPR)
#include "model_ops.def"

static const kernel kernels[SP_MODEL_OP_COUNT] = {
#define SP_MODEL_OP(NAME, SHAPE, NCONST, MNEMONIC, EXPR) k_##NAME,
#include "model_ops.def"
};

/* ---- workspace ------------------------------------------------------------------- */

/* Each temporary register starts on a 64-byte boundary (a cache line, and
 * the widest vector register on x86-64), so the block is padded to a
 * multiple of 8 doubles. */
#define WS_ALIGN 64
#define WS_PAD (WS_ALIGN / sizeof(double))

struct sp_model_ws {
  const sp_model *m;
  size_t block, stride;
  double *mem;
  const double **rd; /* every register, for reading */
  double **wr;       /* outputs and temporaries, for writing */
};

sp_model_ws *sp_model_ws_alloc(const sp_model *m, size_t block, sp_error *err)
{
  if (!m) {
    sp_fail(err, SP_EUSAGE, "sp_model_ws_alloc: no model");
    return NULL;
  }
  if (block == 0) {
    sp_fail(err, SP_EUSAGE, "a workspace needs a block of at least 1 sample");
    return NULL;
  }
  if (block > (SIZE_MAX / sizeof(double) - WS_PAD)) {
    sp_fail(err, SP_ENOMEM, "a block of %zu samples is too large", block);
    return NULL;
  }
  size_t stride = (block + WS_PAD - 1) / WS_PAD * WS_PAD;
  if (m->ntemps > 0 && stride > SIZE_MAX / sizeof(double) / m->ntemps) {
    sp_fail(err, SP_ENOMEM, "a workspace of %zu registers of %zu samples is too "
                            "large", m->ntemps, block);
    return NULL;
  }
  sp_model_ws *w = calloc(1, sizeof *w);
  if (!w) {
    sp_fail(err, SP_ENOMEM, "out of memory for a model workspace");
    return NULL;
  }
  w->m = m;
  w->block = block;
  w->stride = stride;
  size_t nregs = m->nregs ? m->nregs : 1;
  w->rd = calloc(nregs, sizeof *w->rd);
  w->wr = calloc(nregs, sizeof *w->wr);
  if (m->ntemps > 0)
    w->mem = aligned_alloc(WS_ALIGN, m->ntemps * stride * sizeof(double));
  if (!w->rd || !w->wr || (m->ntemps > 0 && !w->mem)) {
    sp_model_ws_free(w);
    sp_fail(err, SP_ENOMEM,
            "out of memory for a model workspace (%zu registers of %zu samples)",
            m->ntemps, block);
    return NULL;
  }
  size_t base = m->ninputs + m->noutputs;
  for (size_t t = 0; t < m->ntemps; t++) {
    w->wr[base + t] = w->mem + t * stride;
    w->rd[base + t] = w->wr[base + t];
  }
  return w;
}

void sp_model_ws_free(sp_model_ws *w)
{
  if (!w) return;
  free(w->mem);
  free(w->rd);
  free(w->wr);
  free(w);
}

size_t sp_model_ws_block(const sp_model_ws *w) { return w ? w->block : 0; }

void sp_model_eval(const sp_model *m, sp_model_ws *w, const double *const *in,
                   size_t n, double *const *out)
{
  if (!m || !w || n == 0) return;
  for (size_t s = 0; s < n; s += w->block) {
    size_t len = n - s < w->block ? n - s : w->block;
    for (size_t i = 0; i < m->ninputs; i++) w->rd[i] = in[i] + s;
    for (size_t j = 0; j < m->noutputs; j++) {
      w->wr[m->ninputs + j] = out[j] + s;
      w->rd[m->ninputs + j] = out[j] + s;
    }
    for (size_t k = 0; k < m->ncode; k++) {
      const sp_model_ins *i = &m->code[k];
      kernels[i->op](w->wr[i->d], w->rd[i->a], w->rd[i->b], i->c, i->c2, len);
    }
  }
}
