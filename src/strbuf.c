/* Private: a growing text buffer (see strbuf.h). */
#include "strbuf.h"

#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void sp_strbuf_add(sp_strbuf *b, const char *s, size_t n)
{
  if (b->oom) return;
  if (b->len + n + 1 > b->cap) {
    size_t cap = b->cap ? b->cap : 1024;
    while (cap < b->len + n + 1) {
      if (cap > SIZE_MAX / 2) { b->oom = 1; return; }
      cap *= 2;
    }
    char *ns = realloc(b->s, cap);
    if (!ns) { b->oom = 1; return; }
    b->s = ns;
    b->cap = cap;
  }
  memcpy(b->s + b->len, s, n);
  b->len += n;
  b->s[b->len] = '\0';
}

void sp_strbuf_puts(sp_strbuf *b, const char *s) { sp_strbuf_add(b, s, strlen(s)); }

void sp_strbuf_printf(sp_strbuf *b, const char *fmt, ...)
{
  char tmp[512];
  va_list ap;
  va_start(ap, fmt);
  int w = vsnprintf(tmp, sizeof tmp, fmt, ap);
  va_end(ap);
  if (w < 0) { b->oom = 1; return; }
  if ((size_t)w < sizeof tmp) { sp_strbuf_add(b, tmp, (size_t)w); return; }
  char *big = malloc((size_t)w + 1);
  if (!big) { b->oom = 1; return; }
  va_start(ap, fmt);
  vsnprintf(big, (size_t)w + 1, fmt, ap);
  va_end(ap);
  sp_strbuf_add(b, big, (size_t)w);
  free(big);
}
