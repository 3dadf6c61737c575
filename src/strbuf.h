/* Private: a growing, NUL-terminated text buffer for writers that build a
 * whole file or document in memory.  An allocation failure sets oom and
 * makes every later call a no-op, so a writer checks once at the end. */
#ifndef SP_STRBUF_H
#define SP_STRBUF_H

#include <stddef.h>

typedef struct {
  char *s;      /* owned; NULL until the first append */
  size_t len, cap;
  int oom;
} sp_strbuf;

void sp_strbuf_add(sp_strbuf *b, const char *s, size_t n);
void sp_strbuf_puts(sp_strbuf *b, const char *s);
void sp_strbuf_printf(sp_strbuf *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));

#endif
