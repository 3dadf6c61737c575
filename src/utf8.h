/* Private: UTF-8 validation for text that reaches messages, terminals and
 * JSON (jansson refuses invalid UTF-8, and udunits2 2.2 reads a 0xFF byte
 * as the end of its input).
 *
 * The well-formed byte sequences are those of RFC 3629 (Yergeau 2003,
 * "UTF-8, a transformation format of ISO 10646"), section 4: no overlong
 * forms, no surrogates (U+D800..U+DFFF), nothing above U+10FFFF. */
#ifndef SP_UTF8_H
#define SP_UTF8_H

#include <stddef.h>

/* Returns n when s[0..n) is well-formed UTF-8, else the offset of the
 * first byte of the first ill-formed sequence. */
static inline size_t sp_utf8_check(const char *s, size_t n)
{
  const unsigned char *p = (const unsigned char *)s;
  size_t i = 0;
  while (i < n) {
    unsigned c = p[i];
    if (c < 0x80) {
      i++;
      continue;
    }
    size_t len;
    unsigned lo = 0x80, hi = 0xBF; /* allowed range of the second byte */
    if (c >= 0xC2 && c <= 0xDF)
      len = 2;
    else if (c == 0xE0) {
      len = 3;
      lo = 0xA0;
    } else if (c == 0xED) {
      len = 3;
      hi = 0x9F;
    } else if (c >= 0xE1 && c <= 0xEF)
      len = 3;
    else if (c == 0xF0) {
      len = 4;
      lo = 0x90;
    } else if (c >= 0xF1 && c <= 0xF3)
      len = 4;
    else if (c == 0xF4) {
      len = 4;
      hi = 0x8F;
    } else
      return i;
    if (n - i < len || p[i + 1] < lo || p[i + 1] > hi) return i;
    for (size_t k = 2; k < len; k++)
      if (p[i + k] < 0x80 || p[i + k] > 0xBF) return i;
    i += len;
  }
  return n;
}

/* The length of the longest prefix of s[0..n) that does not end inside a
 * multi-byte sequence (for cutting well-formed text short). */
static inline size_t sp_utf8_cut(const char *s, size_t n)
{
  const unsigned char *p = (const unsigned char *)s;
  size_t k = n;
  while (k > 0 && (p[k - 1] & 0xC0) == 0x80)
    k--; /* continuation bytes */
  if (k == 0) return n;
  unsigned lead = p[k - 1];
  size_t len = lead < 0x80 ? 1 : lead >= 0xF0 ? 4 : lead >= 0xE0 ? 3 : lead >= 0xC0 ? 2 : 1;
  return (n - (k - 1) >= len) ? n : k - 1;
}

#endif /* SP_UTF8_H */
