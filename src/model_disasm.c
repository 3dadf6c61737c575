/* scatterprop model: the disassembler (behind the CLI's --dump-bytecode).
 *
 * One instruction a line:
 *      3  mul_rc     r7 <- r0, 8                  ; line 8
 * with a header that names the input and output registers.  Constants are
 * printed with 17 significant digits, so the listing shows the exact
 * values the code uses (folded constants and unit factors included). */
#include "model_internal.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

typedef struct {
  char *s;
  size_t len, cap;
  int oom;
} strbuf;

static void put(strbuf *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void put(strbuf *b, const char *fmt, ...)
{
  if (b->oom) return;
  for (;;) {
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(b->s ? b->s + b->len : NULL, b->s ? b->cap - b->len : 0,
                      fmt, ap);
    va_end(ap);
    if (n < 0) {
      b->oom = 1;
      return;
    }
    if (b->s && b->len + (size_t)n < b->cap) {
      b->len += (size_t)n;
      return;
    }
    size_t cap = b->cap ? b->cap : 1024;
    while (cap <= b->len + (size_t)n) cap *= 2;
    char *t = realloc(b->s, cap);
    if (!t) {
      b->oom = 1;
      return;
    }
    b->s = t;
    b->cap = cap;
  }
}

char *sp_model_disassemble(const sp_model *m, sp_error *err)
{
  if (!m) {
    sp_fail(err, SP_EUSAGE, "sp_model_disassemble: no model");
    return NULL;
  }
  strbuf b = {NULL, 0, 0, 0};
  put(&b, "; model %s\n; sha256 %s\n", m->path, m->sha256);
  put(&b, "; %zu inputs, %zu outputs, %zu temporaries, %zu instructions\n",
      m->ninputs, m->noutputs, m->ntemps, m->ncode);
  for (size_t i = 0; i < m->ninputs; i++)
    put(&b, "; r%zu = input %s [%s]\n", i, m->inputs[i].name,
        m->inputs[i].unit_text);
  for (size_t j = 0; j < m->noutputs; j++)
    put(&b, "; r%zu = output %s [%s]\n", m->ninputs + j, m->outputs[j].name,
        m->outputs[j].unit_text);
  if (m->ntemps > 0)
    put(&b, "; r%zu..r%zu = temporaries\n", m->ninputs + m->noutputs,
        m->nregs - 1);
  for (size_t k = 0; k < m->ncode; k++) {
    const sp_model_ins *i = &m->code[k];
    const sp_model_opinfo *info = &sp_model_ops[i->op];
    char ops[160];
    int n = 0;
    switch (info->shape) {
    case SP_MODEL_SHAPE_RR: n = snprintf(ops, sizeof ops, "r%u, r%u", i->a, i->b); break;
    case SP_MODEL_SHAPE_R1: n = snprintf(ops, sizeof ops, "r%u", i->a); break;
    case SP_MODEL_SHAPE_IP: n = snprintf(ops, sizeof ops, "r%u", i->d); break;
    default: ops[0] = '\0'; break;
    }
    if (n < 0) n = 0;
    if (info->nconst >= 1)
      n += snprintf(ops + n, sizeof ops - (size_t)n, "%s%.17g", n ? ", " : "", i->c);
    if (info->nconst >= 2 && (size_t)n < sizeof ops)
      snprintf(ops + n, sizeof ops - (size_t)n, ", %.17g", i->c2);
    char dst[24];
    snprintf(dst, sizeof dst, "r%u", i->d);
    put(&b, "%6zu  %-10s %-5s <- %-28s ; line %u\n", k, info->mnemonic, dst, ops,
        i->line);
  }
  if (b.oom) {
    free(b.s);
    sp_fail(err, SP_ENOMEM, "out of memory for the disassembly");
    return NULL;
  }
  return b.s;
}
