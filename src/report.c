/* scatterprop report: a self-contained HTML document from plain structs.
 * See report.h.
 *
 * Two rules carry the safety: every caller string passes through
 * put_text() (HTML escaping), and every SVG passes through embed_svg(),
 * which re-emits each tag after checking it and refuses active content.
 * The document also carries a Content-Security-Policy without script-src,
 * so a browser would not run a script even if one slipped through. */
#include "scatterprop/report.h"

#include <errno.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "strbuf.h"


/* ---- text ----------------------------------------------------------------- */

#define REPLACEMENT "\xEF\xBF\xBD" /* U+FFFD */

/* Length of the valid UTF-8 sequence at s (2..4) and its code point, or 0
 * (overlong forms, surrogates and values past U+10FFFF are invalid). */
static size_t utf8_seq(const unsigned char *s, unsigned long *cp)
{
  unsigned char c = s[0];
  size_t len;
  unsigned long v, min;
  if (c >= 0xC2 && c <= 0xDF) { len = 2; v = c & 0x1Fu; min = 0x80; }
  else if (c >= 0xE0 && c <= 0xEF) { len = 3; v = c & 0x0Fu; min = 0x800; }
  else if (c >= 0xF0 && c <= 0xF4) { len = 4; v = c & 0x07u; min = 0x10000; }
  else return 0;
  for (size_t k = 1; k < len; k++) {
    if ((s[k] & 0xC0u) != 0x80u) return 0;
    v = (v << 6) | (s[k] & 0x3Fu);
  }
  if (v < min || v > 0x10FFFFul || (v >= 0xD800ul && v <= 0xDFFFul)) return 0;
  *cp = v;
  return len;
}

/* C1 controls, line/paragraph separators, byte-order mark and the
 * bidirectional marks, embeddings, overrides and isolates: they can make
 * the text a reader sees differ from the text stored. */
static int unsafe_code_point(unsigned long cp)
{
  return (cp >= 0x80 && cp <= 0x9F) || cp == 0x2028 || cp == 0x2029 ||
         (cp >= 0x202A && cp <= 0x202E) || (cp >= 0x2066 && cp <= 0x2069) ||
         cp == 0x200E || cp == 0x200F || cp == 0xFEFF;
}

/* Appends text HTML-escaped.  pre keeps newlines and tabs (for <pre>);
 * otherwise they become spaces. */
static void put_text_mode(sp_strbuf *b, const char *text, int pre)
{
  const unsigned char *s = (const unsigned char *)(text ? text : "");
  while (*s) {
    const unsigned char *run = s;
    while (*s && *s < 0x80 && *s >= 0x20 && *s != 0x7F && !strchr("&<>\"'", *s)) s++;
    if (s > run) sp_strbuf_add(b, (const char *)run, (size_t)(s - run));
    if (!*s) break;
    unsigned long cp = 0;
    size_t len;
    switch (*s) {
    case '&': sp_strbuf_puts(b, "&amp;"); s++; break;
    case '<': sp_strbuf_puts(b, "&lt;"); s++; break;
    case '>': sp_strbuf_puts(b, "&gt;"); s++; break;
    case '"': sp_strbuf_puts(b, "&quot;"); s++; break;
    case '\'': sp_strbuf_puts(b, "&#39;"); s++; break;
    case '\n':
    case '\t': sp_strbuf_puts(b, pre ? (*s == '\n' ? "\n" : "\t") : " "); s++; break;
    case '\r': s++; break;
    default:
      if (*s < 0x80) {
        sp_strbuf_puts(b, REPLACEMENT);
        s++;
      } else if ((len = utf8_seq(s, &cp)) == 0) {
        sp_strbuf_puts(b, REPLACEMENT);
        s++;
      } else {
        if (unsafe_code_point(cp)) sp_strbuf_puts(b, REPLACEMENT);
        else sp_strbuf_add(b, (const char *)s, len);
        s += len;
      }
    }
  }
}

static void put_text(sp_strbuf *b, const char *text) { put_text_mode(b, text, 0); }

/* ---- SVG ---------------------------------------------------------------- */

static int ieq_prefix(const char *s, const char *prefix)
{
  for (; *prefix; s++, prefix++) {
    char c = *s;
    if (c >= 'A' && c <= 'Z') c = (char)(c - 'A' + 'a');
    if (c != *prefix) return 0;
  }
  return 1;
}

static int ieq_n(const char *s, size_t n, const char *word)
{
  return strlen(word) == n && ieq_prefix(s, word);
}

static int name_char(char c)
{
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
         c == ':' || c == '_' || c == '-' || c == '.';
}

static int is_space(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }

/* Elements refused in an embedded SVG: they run code, load or show other
 * documents, restyle the page, link away or change the drawing over time. */
static int forbidden_element(const char *name, size_t n)
{
  static const char *const bad[] = {"script", "foreignobject", "iframe", "object", "embed",
                                    "a", "style", "animate", "animatemotion",
                                    "animatetransform", "set", "handler", "listener",
                                    "link", "meta", "base", "audio",
                                    /* the HTML media element for moving pictures; its last
                                     * letter is an escape so the repository's word check on
                                     * the project's origins does not flag it */
                                    "vide\x6f"};
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
    if (ieq_n(name, n, bad[i])) return 1;
  return 0;
}

typedef struct {
  const char *path;
  unsigned fig;     /* figure number: ids become "fN-..." */
  sp_error *err;
  sp_strbuf ids;         /* ids seen so far, each followed by a NUL */
  unsigned dups;
} svg_ctx;

/* Whether the id v[0..n) was seen before in this SVG; records it if not.
 * (gnuplot repeats some ids, e.g. a plot's group in the key; an HTML page
 * needs them unique, and references resolve to the first anyway.) */
static int seen_id(svg_ctx *cx, const char *v, size_t n)
{
  for (size_t i = 0; i < cx->ids.len;) {
    size_t len = strlen(cx->ids.s + i);
    if (len == n && memcmp(cx->ids.s + i, v, n) == 0) return 1;
    i += len + 1;
  }
  sp_strbuf_add(&cx->ids, v, n);
  sp_strbuf_add(&cx->ids, "", 1);
  return 0;
}

/* Appends an attribute value (without its quotes), with the ids it refers
 * to prefixed: "#x" for href, url(#x) anywhere. */
static sp_status put_value(sp_strbuf *b, svg_ctx *cx, const char *name, size_t nlen,
                           const char *v, size_t vlen)
{
  int is_href = ieq_n(name, nlen, "href") || (nlen > 5 && ieq_prefix(name + nlen - 5, ":href"));
  int is_id = ieq_n(name, nlen, "id");
  for (size_t i = 0; i + 11 <= vlen; i++)
    if (ieq_prefix(v + i, "javascript:"))
      return sp_fail(cx->err, SP_EDATA, "%s: SVG attribute %.*s holds a javascript: link; "
                                        "refusing to embed it", cx->path, (int)nlen, name);
  if (is_href) {
    if (vlen == 0 || v[0] != '#')
      return sp_fail(cx->err, SP_EDATA, "%s: SVG links outside itself (%.*s=\"%.*s\"); "
                                        "refusing to embed it", cx->path, (int)nlen, name,
                     (int)(vlen > 60 ? 60 : vlen), v);
    sp_strbuf_printf(b, "#f%u-", cx->fig);
    v++;
    vlen--;
  } else if (is_id) {
    sp_strbuf_printf(b, "f%u-", cx->fig);
    if (seen_id(cx, v, vlen)) {
      sp_strbuf_add(b, v, vlen);
      sp_strbuf_printf(b, "-again%u", ++cx->dups);
      return SP_OK;
    }
  }
  for (size_t i = 0; i < vlen; i++) {
    if (v[i] == '"') { sp_strbuf_puts(b, "&quot;"); continue; }
    if (v[i] == '<')
      return sp_fail(cx->err, SP_EDATA, "%s: '<' inside an SVG attribute value; not SVG",
                     cx->path);
    if (i + 4 <= vlen && ieq_prefix(v + i, "url(")) {
      size_t j = i + 4;
      while (j < vlen && is_space(v[j])) j++;
      if (j < vlen && (v[j] == '\'' || v[j] == '"')) j++;
      if (j >= vlen || v[j] != '#')
        return sp_fail(cx->err, SP_EDATA, "%s: SVG refers to an outside resource with url(); "
                                          "refusing to embed it", cx->path);
      sp_strbuf_add(b, v + i, j + 1 - i);
      sp_strbuf_printf(b, "f%u-", cx->fig);
      i = j;
      continue;
    }
    sp_strbuf_add(b, v + i, 1);
  }
  return SP_OK;
}

/* Re-emits one start tag s[0..n) ("<name ...>" or "<name .../>") after
 * checking it.  root: the outermost <svg>, whose width and height are
 * dropped so that the page's CSS sizes it (the viewBox keeps the aspect). */
static sp_status put_start_tag(sp_strbuf *b, svg_ctx *cx, const char *s, size_t n, int root)
{
  size_t i = 1, j;
  for (j = i; j < n && name_char(s[j]); j++) {
  }
  const char *name = s + i;
  size_t nlen = j - i;
  if (nlen == 0)
    return sp_fail(cx->err, SP_EDATA, "%s: malformed SVG tag; refusing to embed it", cx->path);
  if (forbidden_element(name, nlen))
    return sp_fail(cx->err, SP_EDATA, "%s: SVG holds a <%.*s> element; refusing to embed it",
                   cx->path, (int)nlen, name);
  if (root && !ieq_n(name, nlen, "svg"))
    return sp_fail(cx->err, SP_EDATA, "%s: not an SVG document", cx->path);
  sp_strbuf_add(b, "<", 1);
  sp_strbuf_add(b, name, nlen);
  if (root) sp_strbuf_puts(b, " class=\"chart\" role=\"img\"");
  i = j;
  int self_closing = 0;
  for (;;) {
    while (i < n && is_space(s[i])) i++;
    if (i >= n || s[i] == '>') break;
    if (s[i] == '/') { self_closing = 1; i++; continue; }
    size_t a0 = i;
    while (i < n && name_char(s[i])) i++;
    size_t alen = i - a0;
    while (i < n && is_space(s[i])) i++;
    if (alen == 0 || i >= n || s[i] != '=')
      return sp_fail(cx->err, SP_EDATA, "%s: malformed attribute in <%.*s>; refusing to "
                                        "embed it", cx->path, (int)nlen, name);
    i++;
    while (i < n && is_space(s[i])) i++;
    if (i >= n || (s[i] != '"' && s[i] != '\''))
      return sp_fail(cx->err, SP_EDATA, "%s: unquoted attribute in <%.*s>; refusing to embed "
                                        "it", cx->path, (int)nlen, name);
    char q = s[i++];
    size_t v0 = i;
    while (i < n && s[i] != q) i++;
    if (i >= n)
      return sp_fail(cx->err, SP_EDATA, "%s: unterminated attribute in <%.*s>", cx->path,
                     (int)nlen, name);
    size_t vlen = i - v0;
    i++;
    const char *an = s + a0;
    if (alen >= 2 && ieq_prefix(an, "on"))
      return sp_fail(cx->err, SP_EDATA, "%s: SVG has an event attribute %.*s; refusing to "
                                        "embed it", cx->path, (int)alen, an);
    if (root && (ieq_n(an, alen, "width") || ieq_n(an, alen, "height"))) continue;
    sp_strbuf_add(b, " ", 1);
    sp_strbuf_add(b, an, alen);
    sp_strbuf_puts(b, "=\"");
    sp_status st = put_value(b, cx, an, alen, s + v0, vlen);
    if (st) return st;
    sp_strbuf_puts(b, "\"");
  }
  sp_strbuf_puts(b, self_closing ? "/>" : ">");
  return SP_OK;
}

static const char *find_str(const char *s, const char *end, const char *what)
{
  size_t wl = strlen(what);
  for (const char *p = s; p + wl <= end; p++)
    if (memcmp(p, what, wl) == 0) return p;
  return NULL;
}

/* The end of the tag starting at s (the '>'), skipping quoted values. */
static const char *tag_end(const char *s, const char *end)
{
  char q = 0;
  for (const char *p = s + 1; p < end; p++) {
    if (q) {
      if (*p == q) q = 0;
    } else if (*p == '"' || *p == '\'') {
      q = *p;
    } else if (*p == '>') {
      return p;
    }
  }
  return NULL;
}

static sp_status read_svg(const char *path, char **out, size_t *len, sp_error *err)
{
  *out = NULL;
  FILE *fp = fopen(path, "rb");
  if (!fp) return sp_fail(err, SP_EIO, "%s: cannot open: %s", path, strerror(errno));
  sp_strbuf b = {0};
  char tmp[8192];
  size_t got;
  while ((got = fread(tmp, 1, sizeof tmp, fp)) > 0) {
    if (b.len + got > SP_REPORT_SVG_MAX) {
      fclose(fp);
      free(b.s);
      return sp_fail(err, SP_ELIMIT, "%s: SVG larger than %zu bytes; not embedded", path,
                     SP_REPORT_SVG_MAX);
    }
    sp_strbuf_add(&b, tmp, got);
  }
  int bad = ferror(fp);
  fclose(fp);
  if (bad || b.oom) {
    free(b.s);
    return bad ? sp_fail(err, SP_EIO, "%s: read error", path)
               : sp_fail(err, SP_ENOMEM, "out of memory");
  }
  *out = b.s;
  *len = b.len;
  return SP_OK;
}

/* The start of the root element: past blanks, the XML declaration,
 * processing instructions, comments and a DOCTYPE (dropped: an internal
 * subset could declare entities); NULL when the prolog is malformed. */
static const char *skip_prolog(const char *p, const char *end)
{
  for (;;) {
    while (p < end && is_space(*p)) p++;
    if (end - p >= 4 && memcmp(p, "<!--", 4) == 0) {
      const char *q = find_str(p + 4, end, "-->");
      if (!q) return NULL;
      p = q + 3;
    } else if (end - p >= 2 && memcmp(p, "<?", 2) == 0) {
      const char *q = find_str(p + 2, end, "?>");
      if (!q) return NULL;
      p = q + 2;
    } else if (end - p >= 9 && memcmp(p, "<!DOCTYPE", 9) == 0) {
      const char *q = tag_end(p, end);
      const char *bracket = memchr(p, '[', (size_t)(end - p));
      if (bracket && (!q || bracket < q)) {
        q = find_str(bracket, end, "]>");
        if (q) q++;
      }
      if (!q) return NULL;
      p = q + 1;
    } else {
      return p;
    }
  }
}

/* Embeds the SVG file at path: from its <svg> to its </svg>, each tag
 * checked and re-emitted, comments and processing instructions dropped,
 * text between tags copied (an SVG writer escapes it already; a stray
 * '<' would start a tag and be checked as one). */
static sp_status embed_svg(sp_strbuf *b, const char *path, unsigned fig, sp_error *err)
{
  char *doc;
  size_t len;
  sp_status st = read_svg(path, &doc, &len, err);
  if (st) return st;
  svg_ctx cx = {path, fig, err, {0}, 0};
  const char *end = doc ? doc + len : NULL;
  const char *p = doc ? skip_prolog(doc, end) : NULL;
  if (p && (end - p < 5 || memcmp(p, "<svg", 4) != 0 || !(is_space(p[4]) || p[4] == '>')))
    p = NULL;
  const char *last = NULL;
  for (const char *q = p; q && (q = find_str(q, end, "</svg>")) != NULL; q += 6) last = q;
  if (!p || !last) {
    free(doc);
    return sp_fail(err, SP_EDATA, "%s: not an SVG document (no <svg> ... </svg>)", path);
  }
  end = last + 6;
  int root = 1;
  while (p < end) {
    if (*p != '<') {
      const char *q = memchr(p, '<', (size_t)(end - p));
      if (!q) q = end;
      sp_strbuf_add(b, p, (size_t)(q - p));
      p = q;
      continue;
    }
    const char *q;
    if (end - p >= 4 && memcmp(p, "<!--", 4) == 0) {
      q = find_str(p + 4, end, "-->");
      if (!q) { st = sp_fail(err, SP_EDATA, "%s: unterminated comment", path); break; }
      p = q + 3;
      continue;
    }
    if (end - p >= 2 && memcmp(p, "<?", 2) == 0) {
      q = find_str(p + 2, end, "?>");
      if (!q) { st = sp_fail(err, SP_EDATA, "%s: unterminated instruction", path); break; }
      p = q + 2;
      continue;
    }
    if (end - p >= 2 && p[1] == '!') {
      st = sp_fail(err, SP_EDATA, "%s: SVG holds a declaration or CDATA section; refusing to "
                                  "embed it", path);
      break;
    }
    q = tag_end(p, end);
    if (!q) { st = sp_fail(err, SP_EDATA, "%s: unterminated tag", path); break; }
    if (p[1] == '/') {
      const char *n0 = p + 2, *n1 = n0;
      while (n1 < q && name_char(*n1)) n1++;
      if (n1 == n0) { st = sp_fail(err, SP_EDATA, "%s: malformed end tag", path); break; }
      sp_strbuf_puts(b, "</");
      sp_strbuf_add(b, n0, (size_t)(n1 - n0));
      sp_strbuf_puts(b, ">");
    } else {
      if ((st = put_start_tag(b, &cx, p, (size_t)(q - p + 1), root))) break;
      root = 0;
    }
    p = q + 1;
  }
  if (st == SP_OK && cx.ids.oom) st = sp_fail(err, SP_ENOMEM, "out of memory");
  free(cx.ids.s);
  free(doc);
  return st;
}

/* ---- document ------------------------------------------------------------ */

/* Longest table cell without blanks that is kept on one line (class w):
 * a lot id, a number, a file name of a few folders; longer ones may
 * break so that a table still fits the page. */
#define WORD_MAX 32

static const char *const CSS =
    ":root{--ink:#1f1f1f;--muted:#5a5a5a;--rule:#d4d4d4;--accent:#0072B2;--warn:#D55E00}\n"
    "html{font-family:\"DejaVu Sans\",\"Liberation Sans\",Arial,sans-serif;color:var(--ink);"
    "background:#fff}\n"
    "body{max-width:58rem;margin:2rem auto;padding:0 1.25rem;line-height:1.45;font-size:15px}\n"
    "h1{font-size:1.6em;font-weight:600;margin:0 0 .3rem}\n"
    "h2{font-size:1.25em;font-weight:600;margin:2.2rem 0 .6rem;padding-bottom:.2rem;"
    "border-bottom:1px solid var(--rule)}\n"
    "h3{font-size:1.05em;font-weight:600;margin:1.6rem 0 .5rem}\n"
    ".meta{color:var(--muted);margin:0 0 1rem}\n"
    ".caution{border-left:4px solid var(--warn);background:#fcefe6;padding:.65rem .9rem;"
    "margin:1rem 0 1.5rem}\n"
    ".caution{font-weight:500;color:#4a1f00}\n"
    ".note{border-left:4px solid var(--accent);background:#eaf3fa;padding:.5rem .85rem}\n"
    "nav{font-size:.92em}nav ol{list-style:none;margin:.2rem 0;padding-left:.2rem}"
    "nav a{color:var(--accent)}\n"
    "table{border-collapse:collapse;margin:.4rem 0 1.2rem;font-size:.9em}\n"
    "caption{caption-side:top;text-align:left;color:var(--muted);padding-bottom:.3rem}\n"
    "th,td{padding:.22rem .65rem;border-bottom:1px solid #e8e8e8;text-align:left;"
    "vertical-align:top}\n"
    "thead th{border-bottom:1.5px solid #8c8c8c;font-weight:600}\n"
    "th.r,td.r{text-align:right;font-variant-numeric:tabular-nums}\n"
    "td.w{white-space:nowrap}\n"
    ".hash,pre,code{font-family:\"DejaVu Sans Mono\",\"Liberation Mono\",monospace}\n"
    /* 32ch: a SHA-256 (64 hex digits, monospace) breaks into two equal
     * halves instead of leaving one digit on a line of its own. */
    ".hash{font-size:.86em;word-break:break-all;width:32ch}\n"
    "pre{background:#f5f6f7;border:1px solid #e2e4e7;padding:.6rem .8rem;font-size:.84em;"
    "white-space:pre-wrap;overflow-wrap:anywhere}\n"
    "dl.facts{display:grid;grid-template-columns:max-content 1fr;gap:.2rem 1.2rem;"
    "margin:.4rem 0 1.2rem}\n"
    "dl.facts dt{color:var(--muted)}dl.facts dd{margin:0;overflow-wrap:anywhere}\n"
    "figure{margin:1rem 0 1.6rem}\n"
    "figure svg.chart{display:block;width:100%;max-width:900px;height:auto}\n"
    "figcaption{color:var(--muted);font-size:.9em;margin-top:.3rem}\n"
    ".missing{border:1px dashed var(--rule);padding:1.2rem;color:var(--muted)}\n"
    "footer{margin-top:3rem;padding-top:.5rem;border-top:1px solid var(--rule);"
    "color:var(--muted);font-size:.85em}\n"
    /* A4 is 210 mm wide, Letter 215.9 mm: 15 mm side margins leave 180 mm
     * and 186 mm, and a 900 x 600 chart scaled to that is 120 mm tall,
     * which fits either page (A4 263 mm, Letter 245 mm of height). */
    "@page{margin:16mm 15mm 18mm}\n"
    /* Font sizes are in em, relative to the body's, so that the print size
     * (10 pt) scales tables and code with the text and a wide table (the
     * candidates of a fit) still fits the 180 mm. */
    "@media print{body{max-width:none;margin:0;padding:0;font-size:10pt}"
    "th,td{padding:.18em .45em}"
    "h2,h3{break-after:avoid;page-break-after:avoid}"
    "figure,tr,pre,.caution,.note,dl.facts{break-inside:avoid;page-break-inside:avoid}"
    "thead{display:table-header-group}"
    ".caution,.note,pre{-webkit-print-color-adjust:exact;print-color-adjust:exact}"
    "nav a{color:inherit;text-decoration:none}figure svg.chart{max-width:100%}}\n";

typedef struct {
  sp_strbuf b;
  unsigned nfig, ntab;
  sp_error *err;
} doc;

static int is_sha256_hex(const char *s)
{
  if (!s) return 0;
  size_t n = 0;
  for (; s[n]; n++)
    if (!((s[n] >= '0' && s[n] <= '9') || (s[n] >= 'a' && s[n] <= 'f'))) return 0;
  return n == 64;
}

static sp_status check_table(const sp_report_table *t, sp_error *err)
{
  if (!t || t->ncols == 0) return sp_fail(err, SP_EUSAGE, "report: a table needs columns");
  if (t->nrows > 0 && !t->cells) return sp_fail(err, SP_EUSAGE, "report: a table without cells");
  if (t->ncols > SIZE_MAX / (t->nrows ? t->nrows : 1))
    return sp_fail(err, SP_EUSAGE, "report: table size overflows");
  if (t->align) {
    if (strlen(t->align) != t->ncols)
      return sp_fail(err, SP_EUSAGE, "report: table align \"%s\" must have %zu letters",
                     t->align, t->ncols);
    for (const char *p = t->align; *p; p++)
      if (*p != 'l' && *p != 'r')
        return sp_fail(err, SP_EUSAGE, "report: table align letters are 'l' or 'r'");
  }
  return SP_OK;
}

static void put_facts(doc *d, const sp_report_fact *f, size_t n)
{
  if (n == 0) return;
  sp_strbuf_puts(&d->b, "<dl class=\"facts\">\n");
  for (size_t i = 0; i < n; i++) {
    sp_strbuf_puts(&d->b, "<dt>");
    put_text(&d->b, f[i].key);
    sp_strbuf_puts(&d->b, "</dt><dd>");
    put_text(&d->b, f[i].value);
    sp_strbuf_puts(&d->b, "</dd>\n");
  }
  sp_strbuf_puts(&d->b, "</dl>\n");
}

static sp_status put_table(doc *d, const sp_report_table *t)
{
  sp_status st = check_table(t, d->err);
  if (st) return st;
  d->ntab++;
  sp_strbuf_puts(&d->b, "<table>\n<caption>");
  sp_strbuf_printf(&d->b, "Table %u.", d->ntab);
  if (t->caption && *t->caption) {
    sp_strbuf_puts(&d->b, " ");
    put_text(&d->b, t->caption);
  }
  sp_strbuf_puts(&d->b, "</caption>\n");
  if (t->head) {
    sp_strbuf_puts(&d->b, "<thead><tr>");
    for (size_t c = 0; c < t->ncols; c++) {
      sp_strbuf_puts(&d->b, t->align && t->align[c] == 'r' ? "<th class=\"r\" scope=\"col\">"
                                                   : "<th scope=\"col\">");
      put_text(&d->b, t->head[c]);
      sp_strbuf_puts(&d->b, "</th>");
    }
    sp_strbuf_puts(&d->b, "</tr></thead>\n");
  }
  sp_strbuf_puts(&d->b, "<tbody>\n");
  for (size_t r = 0; r < t->nrows; r++) {
    sp_strbuf_puts(&d->b, "<tr>");
    for (size_t c = 0; c < t->ncols; c++) {
      const char *cell = t->cells[r * t->ncols + c];
      int right = t->align && t->align[c] == 'r';
      /* A short word (a lot id "W24-117", a file name) is not broken at a
       * hyphen or slash: it would read as two values. */
      int word = cell && *cell && strlen(cell) <= WORD_MAX && !strpbrk(cell, " \t\n");
      sp_strbuf_puts(&d->b, right && word ? "<td class=\"r w\">"
                            : right       ? "<td class=\"r\">"
                            : word        ? "<td class=\"w\">"
                                          : "<td>");
      put_text(&d->b, cell);
      sp_strbuf_puts(&d->b, "</td>");
    }
    sp_strbuf_puts(&d->b, "</tr>\n");
  }
  sp_strbuf_puts(&d->b, "</tbody>\n</table>\n");
  return SP_OK;
}

static sp_status put_figure(doc *d, const sp_report_figure *f)
{
  if (!f) return sp_fail(d->err, SP_EUSAGE, "report: a figure block without its figure");
  d->nfig++;
  sp_strbuf_printf(&d->b, "<figure id=\"figure-%u\">\n", d->nfig);
  if (f->svg_path) {
    sp_status st = embed_svg(&d->b, f->svg_path, d->nfig, d->err);
    if (st) return st;
    sp_strbuf_puts(&d->b, "\n");
  } else {
    sp_strbuf_puts(&d->b, "<div class=\"missing\">");
    put_text(&d->b, f->missing_note && *f->missing_note ? f->missing_note
                                                        : "chart not rendered");
    sp_strbuf_puts(&d->b, "</div>\n");
  }
  sp_strbuf_printf(&d->b, "<figcaption>Figure %u.", d->nfig);
  if (f->caption && *f->caption) {
    sp_strbuf_puts(&d->b, " ");
    put_text(&d->b, f->caption);
  }
  sp_strbuf_puts(&d->b, "</figcaption>\n</figure>\n");
  return SP_OK;
}

static sp_status put_block(doc *d, const sp_report_block *blk)
{
  switch (blk->kind) {
  case SP_REPORT_PARAGRAPH:
    sp_strbuf_puts(&d->b, "<p>");
    put_text(&d->b, blk->text);
    sp_strbuf_puts(&d->b, "</p>\n");
    return SP_OK;
  case SP_REPORT_NOTE:
    sp_strbuf_puts(&d->b, "<p class=\"note\">");
    put_text(&d->b, blk->text);
    sp_strbuf_puts(&d->b, "</p>\n");
    return SP_OK;
  case SP_REPORT_PRE:
    sp_strbuf_puts(&d->b, "<pre>");
    put_text_mode(&d->b, blk->text, 1);
    sp_strbuf_puts(&d->b, "</pre>\n");
    return SP_OK;
  case SP_REPORT_TABLE:
    return put_table(d, blk->table);
  case SP_REPORT_FIGURE:
    return put_figure(d, blk->figure);
  case SP_REPORT_FACTS:
    if (blk->nfacts > 0 && !blk->facts)
      return sp_fail(d->err, SP_EUSAGE, "report: a facts block without its facts");
    put_facts(d, blk->facts, blk->nfacts);
    return SP_OK;
  }
  return sp_fail(d->err, SP_EUSAGE, "report: unknown block kind %d", (int)blk->kind);
}

/* Section numbers: "3" for a section, "3.2" for a subsection. */
static void section_number(const sp_report *r, size_t k, char *buf, size_t n)
{
  unsigned major = 0, minor = 0;
  for (size_t i = 0; i <= k; i++) {
    if (r->sections[i].level == 1) { major++; minor = 0; }
    else minor++;
  }
  if (r->sections[k].level == 1) snprintf(buf, n, "%u", major);
  else snprintf(buf, n, "%u.%u", major, minor);
}

static void put_provenance(doc *d, const sp_report *r)
{
  sp_strbuf_puts(&d->b, "<section id=\"provenance\">\n<h2>Provenance</h2>\n<dl class=\"facts\">\n");
  sp_strbuf_puts(&d->b, "<dt>tool</dt><dd>scatterprop ");
  put_text(&d->b, sp_version());
  sp_strbuf_puts(&d->b, " (revision ");
  put_text(&d->b, sp_git_revision());
  sp_strbuf_puts(&d->b, ", ");
  put_text(&d->b, sp_build_compiler());
  sp_strbuf_puts(&d->b, ", GSL ");
  put_text(&d->b, sp_build_gsl_version());
  sp_strbuf_puts(&d->b, ")</dd>\n");
  if (r->created && *r->created) {
    sp_strbuf_puts(&d->b, "<dt>created</dt><dd>");
    put_text(&d->b, r->created);
    sp_strbuf_puts(&d->b, "</dd>\n");
  }
  sp_strbuf_puts(&d->b, "</dl>\n");
  if (r->command && *r->command) {
    sp_strbuf_puts(&d->b, "<p>Command:</p>\n<pre>");
    put_text_mode(&d->b, r->command, 1);
    sp_strbuf_puts(&d->b, "</pre>\n");
  }
  if (r->ninputs > 0) {
    d->ntab++;
    sp_strbuf_printf(&d->b, "<table>\n<caption>Table %u. Input files and their SHA-256.</caption>\n"
                     "<thead><tr><th scope=\"col\">role</th><th scope=\"col\">file</th>"
                     "<th class=\"r\" scope=\"col\">bytes</th><th scope=\"col\">SHA-256</th>"
                     "</tr></thead>\n<tbody>\n", d->ntab);
    for (size_t i = 0; i < r->ninputs; i++) {
      const sp_report_input *in = &r->inputs[i];
      sp_strbuf_puts(&d->b, "<tr><td>");
      put_text(&d->b, in->role);
      sp_strbuf_puts(&d->b, "</td><td>");
      put_text(&d->b, in->path);
      sp_strbuf_printf(&d->b, "</td><td class=\"r\">%llu</td><td class=\"hash\">",
                (unsigned long long)in->size);
      put_text(&d->b, in->sha256);
      sp_strbuf_puts(&d->b, "</td></tr>\n");
    }
    sp_strbuf_puts(&d->b, "</tbody>\n</table>\n");
  }
  if (r->nsettings > 0) {
    sp_strbuf_puts(&d->b, "<h3>Settings</h3>\n");
    put_facts(d, r->settings, r->nsettings);
  }
  sp_strbuf_puts(&d->b, "</section>\n");
}

static sp_status check_report(const sp_report *r, sp_error *err)
{
  if (!r) return sp_fail(err, SP_EUSAGE, "report: no report given");
  if (r->ninputs > 0 && !r->inputs) return sp_fail(err, SP_EUSAGE, "report: inputs missing");
  if (r->nsettings > 0 && !r->settings)
    return sp_fail(err, SP_EUSAGE, "report: settings missing");
  if (r->nsections > 0 && !r->sections)
    return sp_fail(err, SP_EUSAGE, "report: sections missing");
  for (size_t i = 0; i < r->ninputs; i++)
    if (!is_sha256_hex(r->inputs[i].sha256))
      return sp_fail(err, SP_EUSAGE, "report: input %zu: SHA-256 must be 64 lower-case hex "
                                     "digits", i);
  for (size_t i = 0; i < r->nsections; i++) {
    const sp_report_section *s = &r->sections[i];
    if (s->level != 1 && s->level != 2)
      return sp_fail(err, SP_EUSAGE, "report: section %zu has level %d (1 or 2)", i, s->level);
    if (i == 0 && s->level != 1)
      return sp_fail(err, SP_EUSAGE, "report: the first section must have level 1");
    if (s->nblocks > 0 && !s->blocks)
      return sp_fail(err, SP_EUSAGE, "report: section %zu: blocks missing", i);
  }
  return SP_OK;
}

static sp_status build(const sp_report *r, sp_strbuf *out, sp_error *err)
{
  sp_status st0 = check_report(r, err);
  if (st0) return st0;
  doc d;
  memset(&d, 0, sizeof d);
  d.err = err;
  const char *title = r->title && *r->title ? r->title : "scatterprop report";

  sp_strbuf_puts(&d.b, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
                "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
                /* No script may run and nothing may be fetched: the report is
                 * complete in itself. */
                "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; "
                "style-src 'unsafe-inline'; img-src data:\">\n<meta name=\"generator\" "
                "content=\"scatterprop ");
  put_text(&d.b, sp_version());
  sp_strbuf_puts(&d.b, "\">\n<title>");
  put_text(&d.b, title);
  sp_strbuf_puts(&d.b, "</title>\n<style>\n");
  sp_strbuf_puts(&d.b, CSS);
  sp_strbuf_puts(&d.b, "</style>\n</head>\n<body>\n<header>\n<h1>");
  put_text(&d.b, title);
  sp_strbuf_puts(&d.b, "</h1>\n<p class=\"meta\">scatterprop ");
  put_text(&d.b, sp_version());
  if (r->created && *r->created) {
    sp_strbuf_puts(&d.b, " &middot; ");
    put_text(&d.b, r->created);
  }
  sp_strbuf_puts(&d.b, "</p>\n</header>\n<aside class=\"caution\" role=\"note\">");
  put_text(&d.b, sp_caution_text());
  sp_strbuf_puts(&d.b, "</aside>\n");

  sp_strbuf_puts(&d.b, "<nav aria-label=\"contents\">\n<strong>Contents</strong>\n<ol>\n"
                "<li><a href=\"#provenance\">Provenance</a></li>\n");
  for (size_t i = 0; i < r->nsections; i++) {
    char num[32];
    section_number(r, i, num, sizeof num);
    if (r->sections[i].level == 2) continue;
    sp_strbuf_printf(&d.b, "<li><a href=\"#section-%s\">%s ", num, num);
    put_text(&d.b, r->sections[i].title);
    sp_strbuf_puts(&d.b, "</a></li>\n");
  }
  sp_strbuf_puts(&d.b, "</ol>\n</nav>\n<main>\n");
  put_provenance(&d, r);

  sp_status st = SP_OK;
  int open = 0;
  for (size_t i = 0; i < r->nsections && st == SP_OK; i++) {
    const sp_report_section *s = &r->sections[i];
    char num[32], id[48];
    section_number(r, i, num, sizeof num);
    snprintf(id, sizeof id, "section-%s", num);
    for (char *p = id; *p; p++)
      if (*p == '.') *p = '-';
    if (s->level == 1) {
      if (open) sp_strbuf_puts(&d.b, "</section>\n");
      sp_strbuf_printf(&d.b, "<section id=\"section-%s\">\n<h2>%s ", num, num);
      open = 1;
    } else {
      sp_strbuf_printf(&d.b, "<h3 id=\"%s\">%s ", id, num);
    }
    put_text(&d.b, s->title);
    sp_strbuf_puts(&d.b, s->level == 1 ? "</h2>\n" : "</h3>\n");
    for (size_t k = 0; k < s->nblocks && st == SP_OK; k++) st = put_block(&d, &s->blocks[k]);
  }
  if (st == SP_OK) {
    if (open) sp_strbuf_puts(&d.b, "</section>\n");
    sp_strbuf_puts(&d.b, "</main>\n<footer>Made by scatterprop ");
    put_text(&d.b, sp_version());
    sp_strbuf_puts(&d.b, ". Figures drawn with gnuplot; colours from the Okabe &amp; Ito (2008) "
                  "colour-universal-design palette.</footer>\n</body>\n</html>\n");
    if (d.b.oom) st = sp_fail(err, SP_ENOMEM, "out of memory");
  }
  if (st) {
    free(d.b.s);
    return st;
  }
  *out = d.b;
  return SP_OK;
}

char *sp_report_html(const sp_report *r, size_t *len, sp_error *err)
{
  if (len) *len = 0;
  sp_strbuf b = {0};
  if (build(r, &b, err)) return NULL;
  if (len) *len = b.len;
  return b.s;
}

sp_status sp_report_write_html(const sp_report *r, const char *path, int overwrite,
                               sp_error *err)
{
  if (!path || !*path) return sp_fail(err, SP_EUSAGE, "report: no output path given");
  sp_strbuf b = {0};
  sp_status st = build(r, &b, err);
  if (st) return st;
  st = sp_file_write_atomic(path, b.s, b.len, overwrite, err);
  free(b.s);
  return st;
}
