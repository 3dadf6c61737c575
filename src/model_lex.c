/* scatterprop model: the lexer.
 *
 * The language is line-oriented, so the lexer turns one line at a time
 * into tokens: names, numbers, quoted strings, unit texts in brackets and
 * the operators.  '#' starts a comment that runs to the end of the line
 * (outside strings and brackets).  Numbers are read with the library's
 * strict, locale-independent sp_parse_double, so "1e400" is an error and
 * never an infinity. */
#include "model_internal.h"

#include <stdio.h>
#include <string.h>

static int is_blank(char ch) { return ch == ' ' || ch == '\t'; }
static int is_digit(char ch) { return ch >= '0' && ch <= '9'; }
static int is_name_start(char ch)
{
  return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || ch == '_';
}
static int is_name_char(char ch) { return is_name_start(ch) || is_digit(ch); }

static int push(sp_model_ctx *c, int kind, size_t off, size_t len, double num)
{
  if (sp_model_grow(c, (void **)&c->toks, &c->cap_toks, c->ntoks + 1,
                    sizeof *c->toks) != 0)
    return -1;
  sp_model_token *t = &c->toks[c->ntoks++];
  t->kind = kind;
  t->off = off;
  t->len = len;
  t->num = num;
  return 0;
}

/* Length of the UTF-8 sequence that starts with byte b, if b can start
 * one; 0 otherwise. */
static size_t utf8_len(unsigned char b)
{
  if (b >= 0xC2 && b <= 0xDF) return 2;
  if (b >= 0xE0 && b <= 0xEF) return 3;
  if (b >= 0xF0 && b <= 0xF4) return 4;
  return 0;
}

static void bad_char(sp_model_ctx *c, size_t line, const char *s, size_t len,
                     size_t i)
{
  unsigned char b = (unsigned char)s[i];
  size_t n = utf8_len(b);
  if (b >= 0x21 && b <= 0x7E) {
    sp_model_error(c, line, i, "unexpected character '%c'", s[i]);
    return;
  }
  if (n > 0 && i + n <= len) {
    size_t k = 1;
    while (k < n && ((unsigned char)s[i + k] & 0xC0) == 0x80) k++;
    if (k == n) {
      sp_model_error(c, line, i, "unexpected character '%.*s'", (int)n, s + i);
      return;
    }
  }
  sp_model_error(c, line, i, "unexpected character (byte 0x%02x)", b);
}

/* A number: digits with an optional fraction and exponent.  The text that
 * follows must not continue it (letters, digits, '_' or '.'): "2x" and
 * "1.5.3" are malformed numbers rather than two tokens. */
static int lex_number(sp_model_ctx *c, size_t line, const char *s, size_t len,
                      size_t *pi)
{
  size_t i = *pi, start = i;
  while (i < len && is_digit(s[i])) i++;
  if (i < len && s[i] == '.') {
    i++;
    while (i < len && is_digit(s[i])) i++;
  }
  if (i < len && (s[i] == 'e' || s[i] == 'E')) {
    size_t j = i + 1;
    if (j < len && (s[j] == '+' || s[j] == '-')) j++;
    if (j < len && is_digit(s[j])) {
      while (j < len && is_digit(s[j])) j++;
      i = j;
    }
  }
  size_t end = i;
  while (end < len && (is_name_char(s[end]) || s[end] == '.')) end++;
  if (end > i) {
    sp_model_error(c, line, start, "malformed number '%.*s'",
                   (int)(end - start), s + start);
    return -1;
  }
  size_t n = end - start;
  /* sp_parse_double's limit on a number's text (see docs/limits.md). */
  if (n > 127) {
    sp_model_error(c, line, start,
                   "number '%.20s...' is too long (more than 127 characters)",
                   s + start);
    return -1;
  }
  char buf[128];
  memcpy(buf, s + start, n);
  buf[n] = '\0';
  double v = 0;
  sp_error err;
  if (sp_parse_double(buf, '.', &v, &err) != SP_OK) {
    sp_model_error(c, line, start, "number '%s' is out of range", buf);
    return -1;
  }
  *pi = end;
  return push(c, SP_MODEL_TK_NUMBER, start, n, v);
}

int sp_model_lex_line(sp_model_ctx *c, size_t line)
{
  const char *s = sp_model_line(c, line);
  size_t len = c->llen[line];
  c->ntoks = 0;
  size_t i = 0;
  while (i < len) {
    char ch = s[i];
    if (is_blank(ch)) {
      i++;
      continue;
    }
    if (ch == '#') break;
    if (is_name_start(ch)) {
      size_t start = i;
      while (i < len && is_name_char(s[i])) i++;
      if (i - start > SP_MODEL_MAX_NAME) {
        sp_model_error(c, line, start,
                       "name '%.20s...' is longer than %d characters",
                       s + start, SP_MODEL_MAX_NAME);
        return -1;
      }
      if (push(c, SP_MODEL_TK_NAME, start, i - start, 0) != 0) return -1;
      continue;
    }
    if (is_digit(ch) || (ch == '.' && i + 1 < len && is_digit(s[i + 1]))) {
      if (lex_number(c, line, s, len, &i) != 0) return -1;
      continue;
    }
    if (ch == '"' || ch == '[') {
      char close = ch == '"' ? '"' : ']';
      const void *q = memchr(s + i + 1, close, len - i - 1);
      if (!q) {
        if (ch == '"')
          sp_model_error(c, line, i, "unterminated string");
        else
          sp_model_error(c, line, i, "unterminated unit (no closing ']')");
        return -1;
      }
      size_t end = (size_t)((const char *)q - s) + 1;
      if (push(c, ch == '"' ? SP_MODEL_TK_STRING : SP_MODEL_TK_UNIT, i,
               end - i, 0) != 0)
        return -1;
      i = end;
      continue;
    }
    int kind;
    switch (ch) {
    case '(': kind = SP_MODEL_TK_LPAREN; break;
    case ')': kind = SP_MODEL_TK_RPAREN; break;
    case ',': kind = SP_MODEL_TK_COMMA; break;
    case '=': kind = SP_MODEL_TK_EQ; break;
    case '~': kind = SP_MODEL_TK_TILDE; break;
    case '+': kind = SP_MODEL_TK_PLUS; break;
    case '-': kind = SP_MODEL_TK_MINUS; break;
    case '*': kind = SP_MODEL_TK_STAR; break;
    case '/': kind = SP_MODEL_TK_SLASH; break;
    case '^': kind = SP_MODEL_TK_CARET; break;
    case '<': kind = SP_MODEL_TK_LT; break;
    case '>': kind = SP_MODEL_TK_GT; break;
    default:
      bad_char(c, line, s, len, i);
      return -1;
    }
    if (push(c, kind, i, 1, 0) != 0) return -1;
    i++;
  }
  return push(c, SP_MODEL_TK_EOL, len, 0, 0);
}

const char *sp_model_token_desc(const sp_model_ctx *c, size_t line,
                                const sp_model_token *t, char *buf, size_t n)
{
  const char *s = sp_model_line(c, line) + t->off;
  /* Long tokens are shown by their start. */
  int w = t->len > 40 ? 40 : (int)t->len;
  const char *more = t->len > 40 ? "..." : "";
  switch (t->kind) {
  case SP_MODEL_TK_EOL: snprintf(buf, n, "end of line"); break;
  case SP_MODEL_TK_NAME: snprintf(buf, n, "name '%.*s%s'", w, s, more); break;
  case SP_MODEL_TK_NUMBER: snprintf(buf, n, "number '%.*s%s'", w, s, more); break;
  case SP_MODEL_TK_STRING: snprintf(buf, n, "string %.*s%s", w, s, more); break;
  case SP_MODEL_TK_UNIT: snprintf(buf, n, "unit '%.*s%s'", w, s, more); break;
  default: snprintf(buf, n, "'%c'", s[0]); break;
  }
  return buf;
}
