/* Field positions in a JSON text (json_locate.h).  The scanner is
 * iterative (no recursion, whatever the nesting) and checks every bound:
 * it may be handed a file that changed since it was parsed. */
#include "json_locate.h"

#include <stdint.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "scatterprop/core.h"

typedef struct {
  const char *p, *end;
  long line, col;
} cursor;

static void adv(cursor *c)
{
  if (c->p >= c->end) return;
  unsigned char ch = (unsigned char)*c->p++;
  if (ch == '\n') {
    c->line++;
    c->col = 1;
  } else if (c->p >= c->end || ((unsigned char)*c->p & 0xC0) != 0x80) {
    /* the last byte of a character: the next one starts a column */
    c->col++;
  }
}

static void skip_ws(cursor *c)
{
  while (c->p < c->end && (*c->p == ' ' || *c->p == '\t' || *c->p == '\n' || *c->p == '\r'))
    adv(c);
}

static int skip_string(cursor *c)
{
  if (c->p >= c->end || *c->p != '"') return 0;
  adv(c);
  while (c->p < c->end) {
    if (*c->p == '\\') {
      adv(c);
      adv(c);
    } else if (*c->p == '"') {
      adv(c);
      return 1;
    } else {
      adv(c);
    }
  }
  return 0;
}

static int skip_value(cursor *c)
{
  if (c->p >= c->end) return 0;
  if (*c->p == '"') return skip_string(c);
  if (*c->p == '{' || *c->p == '[') {
    size_t depth = 0;
    while (c->p < c->end) {
      char ch = *c->p;
      if (ch == '"') {
        if (!skip_string(c)) return 0;
        continue;
      }
      if (ch == '{' || ch == '[') depth++;
      if (ch == '}' || ch == ']') {
        depth--;
        if (depth == 0) {
          adv(c);
          return 1;
        }
      }
      adv(c);
    }
    return 0;
  }
  while (c->p < c->end && !strchr(",}] \t\n\r", *c->p)) adv(c);
  return 1;
}

/* Past one element of an array or member of an object (its value, the
 * comma after it and the blanks around): 0 when the value is malformed. */
static int skip_item(cursor *c)
{
  if (!skip_value(c)) return 0;
  skip_ws(c);
  if (c->p < c->end && *c->p == ',') adv(c);
  skip_ws(c);
  return 1;
}

static unsigned hex4(const char *s)
{
  unsigned v = 0;
  for (int i = 0; i < 4; i++) {
    char h = s[i];
    v <<= 4;
    if (h >= '0' && h <= '9') v |= (unsigned)(h - '0');
    else if (h >= 'a' && h <= 'f') v |= (unsigned)(h - 'a' + 10);
    else if (h >= 'A' && h <= 'F') v |= (unsigned)(h - 'A' + 10);
    else return 0x110000; /* not hex: matches no key */
  }
  return v;
}

/* Does the string at c (a key) decode to want[0..n)?  Advances past it. */
static int key_is(cursor *c, const char *want, size_t n, int *ok)
{
  *ok = 0;
  if (c->p >= c->end || *c->p != '"') return 0;
  adv(c);
  size_t k = 0;
  int same = 1;
  while (c->p < c->end && *c->p != '"') {
    char out[4] = {0};
    size_t m = 1;
    if (*c->p == '\\') {
      adv(c);
      if (c->p >= c->end) return 0;
      char e = *c->p;
      adv(c);
      if (e == 'u') {
        if (c->end - c->p < 4) return 0;
        unsigned u = hex4(c->p);
        for (int i = 0; i < 4; i++) adv(c);
        if (u >= 0xD800 && u < 0xDC00 && c->end - c->p >= 6 && c->p[0] == '\\' &&
            c->p[1] == 'u') {
          unsigned lo = hex4(c->p + 2);
          if (lo >= 0xDC00 && lo < 0xE000) {
            u = 0x10000 + ((u - 0xD800) << 10) + (lo - 0xDC00);
            for (int i = 0; i < 6; i++) adv(c);
          }
        }
        if (u < 0x80) {
          out[0] = (char)u;
        } else if (u < 0x800) {
          out[0] = (char)(0xC0 | (u >> 6));
          out[1] = (char)(0x80 | (u & 0x3F));
          m = 2;
        } else if (u < 0x10000) {
          out[0] = (char)(0xE0 | (u >> 12));
          out[1] = (char)(0x80 | ((u >> 6) & 0x3F));
          out[2] = (char)(0x80 | (u & 0x3F));
          m = 3;
        } else if (u < 0x110000) {
          out[0] = (char)(0xF0 | (u >> 18));
          out[1] = (char)(0x80 | ((u >> 12) & 0x3F));
          out[2] = (char)(0x80 | ((u >> 6) & 0x3F));
          out[3] = (char)(0x80 | (u & 0x3F));
          m = 4;
        } else {
          same = 0;
          m = 0;
        }
      } else {
        const char *from = "\"\\/bfnrt", *to = "\"\\/\b\f\n\r\t";
        const char *q = strchr(from, e);
        if (!q || e == '\0') return 0;
        out[0] = to[q - from];
      }
    } else {
      out[0] = *c->p;
      adv(c);
    }
    if (k + m > n || memcmp(want + k, out, m) != 0) same = 0;
    k += m;
  }
  if (c->p >= c->end) return 0;
  adv(c);
  *ok = 1;
  return same && k == n;
}

int sp_json_locate(const char *text, size_t len, const char *path, long *line, long *col)
{
  cursor c = {text, text + len, 1, 1};
  skip_ws(&c);
  if (c.p >= c.end) return 0;
  const char *s = path;
  while (*s) {
    /* the next component: [N] or a key up to '.' or '[' */
    long here_line = c.line, here_col = c.col;
    int found = 0;
    if (*s == '[') {
      char *e;
      unsigned long idx = strtoul(s + 1, &e, 10);
      if (e == s + 1 || *e != ']' || *c.p != '[') return 0;
      s = e + 1;
      adv(&c);
      skip_ws(&c);
      for (unsigned long i = 0; c.p < c.end && *c.p != ']'; i++) {
        if (i == idx) {
          found = 1;
          break;
        }
        if (!skip_item(&c)) return 0;
      }
    } else {
      size_t n = strcspn(s, ".[");
      if (*c.p != '{') return 0;
      adv(&c);
      skip_ws(&c);
      while (c.p < c.end && *c.p != '}') {
        int ok;
        int match = key_is(&c, s, n, &ok);
        if (!ok) return 0;
        skip_ws(&c);
        if (c.p >= c.end || *c.p != ':') return 0;
        adv(&c);
        skip_ws(&c);
        if (match) {
          found = 1;
          break;
        }
        if (!skip_item(&c)) return 0;
      }
      s += n;
    }
    if (!found || c.p >= c.end) {
      *line = here_line;
      *col = here_col;
      return 2;
    }
    if (*s == '.') s++;
  }
  *line = c.line;
  *col = c.col;
  return 1;
}

int sp_json_locate_file(const char *file, const char *path, long *line, long *col)
{
  /* Opened as every input is (a regular file, size-checked, never a FIFO
   * that would block): the file may have changed since it was parsed. */
  sp_error e;
  sp_error_clear(&e);
  FILE *fp = sp_file_open_input(file, "record", (uint64_t)256 << 20, &e);
  if (!fp) return 0;
  struct stat st;
  if (fstat(fileno(fp), &st) != 0 || st.st_size < 0) {
    fclose(fp);
    return 0;
  }
  size_t n = (size_t)st.st_size;
  char *buf = malloc(n + 1);
  if (!buf) {
    fclose(fp);
    return 0;
  }
  size_t got = fread(buf, 1, n, fp);
  fclose(fp);
  int r = sp_json_locate(buf, got, path, line, col);
  free(buf);
  return r;
}
