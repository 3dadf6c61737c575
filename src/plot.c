/* scatterprop plot: chart data and gnuplot scripts filled from the
 * templates in plots/, rendered by running gnuplot directly.  See plot.h.
 *
 * A chart is built in three steps: the chart function validates its spec
 * and writes gnuplot variable assignments (every text through
 * sp_plot_gnuplot_string, every number with 17 significant digits) and the
 * data blocks into memory; fill_template() puts the variables and the
 * house style into the template; finish() writes script and data into a
 * private staging folder, runs gnuplot there and moves the finished files
 * into the output folder. */
#include "scatterprop/plot.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <float.h>
#include <limits.h>
#include <locale.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <unistd.h>

#include <gsl/gsl_cdf.h>

#include "scatterprop/stats.h"
#include "spawn.h"
#include "strbuf.h"

/* Points along a fitted curve: 200 segments across a 900-pixel plot are
 * about 4 px each, smooth to the eye for any unimodal density. */
#define CURVE_POINTS 201
/* Fraction of the data's span added on each side of a curve, so tails are
 * seen leaving the data. */
#define CURVE_PAD 0.05
/* Histogram bins at most: 500 bins on a 900-pixel canvas are under 2 px
 * each; more could not be seen. */
#define MAX_BINS 500
/* Exceedance curves from samples: every point of the last TAIL_ALL
 * order statistics is kept; further in, a point is kept when the count
 * above it has grown by THIN_RATIO, so neighbours differ by 5 % in
 * probability (0.02 decades, about a pixel on a 600-pixel log axis over
 * nine decades). */
#define TAIL_ALL 200
#define THIN_RATIO 1.05
/* A template is a page of text; anything larger is not one. */
#define TEMPLATE_MAX ((size_t)1 << 20)
/* Seconds gnuplot gets per chart unless the caller says otherwise: a
 * chart renders in well under a second; a minute means it hangs. */
#define DEFAULT_TIMEOUT 60.0
#define DEFAULT_WIDTH 900u
#define DEFAULT_HEIGHT 600u
#define QUOTED_MAX SP_PLOT_QUOTED_MAX

/* ---- text --------------------------------------------------------------- */

/* Length of the valid UTF-8 sequence at s (2..4), or 0 when it is not one
 * (overlong forms, surrogates and code points beyond U+10FFFF are not);
 * *cp receives the code point. */
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

/* Code points beyond ASCII that are replaced: C1 controls, the line and
 * paragraph separators and the bidirectional embeddings, overrides and
 * isolates (which can make shown text differ from stored text). */
static int unsafe_code_point(unsigned long cp)
{
  return (cp >= 0x80 && cp <= 0x9F) || cp == 0x2028 || cp == 0x2029 ||
         (cp >= 0x202A && cp <= 0x202E) || (cp >= 0x2066 && cp <= 0x2069) ||
         cp == 0x200E || cp == 0x200F || cp == 0xFEFF;
}

static int ascii_kept(unsigned char c)
{
  if ((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9')) return 1;
  return c != '\0' && strchr(" _-.,:;/()[]+*=%#!?~|<>&", c) != NULL;
}

/* Whether the kept text ends in "system" (any case), blanks ignored. */
static int ends_in_system(const char *s, size_t len)
{
  while (len > 0 && s[len - 1] == ' ') len--;
  static const char word[] = "system";
  size_t w = sizeof word - 1;
  if (len < w) return 0;
  for (size_t k = 0; k < w; k++) {
    char c = s[len - w + k];
    if (c >= 'A' && c <= 'Z') c = (char)(c - 'A' + 'a');
    if (c != word[k]) return 0;
  }
  return 1;
}

size_t sp_plot_gnuplot_string(const char *text, char *buf, size_t n)
{
  if (!buf || n < QUOTED_MAX) return 0;
  size_t pos = 0;
  buf[pos++] = '\'';
  const char *content = buf + 1;
  size_t clen = 0;
  const unsigned char *s = (const unsigned char *)(text ? text : "");
  while (*s) {
    char piece[4];
    size_t plen = 1, adv = 1;
    unsigned long cp = 0;
    if (*s < 0x80) {
      /* a byte buffer with its own length, not a string:
       * NOLINTNEXTLINE(bugprone-not-null-terminated-result) */
      if (*s == '\'') { memcpy(piece, "\xE2\x80\x99", 3); plen = 3; }      /* U+2019 */
      /* a byte buffer with its own length, not a string:
       * NOLINTNEXTLINE(bugprone-not-null-terminated-result) */
      else if (*s == '"') { memcpy(piece, "\xE2\x80\x9D", 3); plen = 3; }  /* U+201D */
      else if (*s == '(' && ends_in_system(content, clen)) piece[0] = '?';
      else piece[0] = ascii_kept(*s) ? (char)*s : '?';
    } else {
      size_t len = utf8_seq(s, &cp);
      if (len == 0 || unsafe_code_point(cp)) {
        piece[0] = '?';
        adv = len ? len : 1;
      } else {
        memcpy(piece, s, len);
        plen = adv = len;
      }
    }
    if (clen + plen > SP_PLOT_LABEL_MAX) {
      memcpy(buf + pos, "...", 3);
      pos += 3;
      break;
    }
    memcpy(buf + pos, piece, plen);
    pos += plen;
    clen += plen;
    s += adv;
  }
  buf[pos++] = '\'';
  buf[pos] = '\0';
  return pos;
}

char *sp_plot_stem(const char *text, char *buf, size_t n)
{
  if (!buf || n == 0) return buf;
  size_t cap = n - 1 < SP_PLOT_STEM_MAX ? n - 1 : SP_PLOT_STEM_MAX;
  size_t pos = 0;
  int pending = 0;
  for (const unsigned char *s = (const unsigned char *)(text ? text : ""); *s && pos < cap; s++) {
    int ok = (*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || (*s >= '0' && *s <= '9') ||
             *s == '_' || *s == '-';
    if (!ok) {
      pending = pos > 0;
      continue;
    }
    if (pos == 0 && (*s == '_' || *s == '-')) continue;
    if (pending && pos + 1 < cap) buf[pos++] = '_';
    pending = 0;
    buf[pos++] = (char)*s;
  }
  while (pos > 0 && (buf[pos - 1] == '_' || buf[pos - 1] == '-')) pos--;
  if (pos == 0) {
    snprintf(buf, n, "%s", "chart");
    return buf;
  }
  buf[pos] = '\0';
  return buf;
}

static int stem_valid(const char *stem)
{
  if (!stem || !*stem || stem[0] == '.' || stem[0] == '-') return 0;
  size_t len = strlen(stem);
  if (len > SP_PLOT_STEM_MAX) return 0;
  for (const char *p = stem; *p; p++) {
    char c = *p;
    if (!((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
          c == '_' || c == '.' || c == '-'))
      return 0;
  }
  return 1;
}


/* A number with 17 significant digits (round-trips every double) and a
 * '.' as decimal separator whatever the C locale says.  In a script
 * (as_float), integral values get ".0" so gnuplot computes with them in
 * floating point, not integer arithmetic. */
static void format_num(char *buf, size_t n, double v, int as_float)
{
  if (isnan(v)) { snprintf(buf, n, "NaN"); return; }
  snprintf(buf, n, "%.17g", v);
  const char *dp = localeconv()->decimal_point;
  if (dp && dp[0] && dp[0] != '.' && dp[1] == '\0') {
    for (char *p = buf; *p; p++)
      if (*p == dp[0]) *p = '.';
  }
  if (as_float && !strpbrk(buf, ".eEn")) {
    size_t len = strlen(buf);
    if (len + 3 <= n) memcpy(buf + len, ".0", 3);
  }
}

static void sb_num(sp_strbuf *b, double v, int as_float)
{
  char tmp[40];
  format_num(tmp, sizeof tmp, v, as_float);
  sp_strbuf_puts(b, tmp);
}

static void sb_free(sp_strbuf *b)
{
  free(b->s);
  b->s = NULL;
  b->len = b->cap = 0;
}

/* ---- a chart under construction ---------------------------------------- */

typedef struct {
  const char *kind;     /* template name without ".gp" */
  sp_strbuf vars;            /* gnuplot assignments */
  sp_strbuf data;            /* the data file */
  size_t nblocks;
  size_t block_rows;    /* rows in the current block */
  size_t block_cols;    /* columns of the current block */
} chart;

static void ch_init(chart *c, const char *kind)
{
  memset(c, 0, sizeof *c);
  c->kind = kind;
}

static void ch_free(chart *c)
{
  sb_free(&c->vars);
  sb_free(&c->data);
}

static void ch_str(chart *c, const char *name, const char *text)
{
  char q[QUOTED_MAX];
  sp_plot_gnuplot_string(text, q, sizeof q);
  sp_strbuf_printf(&c->vars, "%s = %s\n", name, q);
}

static void ch_num(chart *c, const char *name, double v)
{
  sp_strbuf_printf(&c->vars, "%s = ", name);
  sb_num(&c->vars, v, 1);
  sp_strbuf_puts(&c->vars, "\n");
}

static void ch_int(chart *c, const char *name, long v)
{
  sp_strbuf_printf(&c->vars, "%s = %ld\n", name, v);
}

/* Arrays: gnuplot has no empty arrays, so n == 0 declares one dummy
 * element (templates loop over the separate count). */
static void ch_array_begin(chart *c, const char *name, size_t n)
{
  sp_strbuf_printf(&c->vars, "array %s[%zu] = [", name, n ? n : 1);
}

static void ch_array_str(chart *c, size_t i, const char *text)
{
  char q[QUOTED_MAX];
  sp_plot_gnuplot_string(text, q, sizeof q);
  sp_strbuf_printf(&c->vars, "%s%s", i ? ", " : "", q);
}

static void ch_array_num(chart *c, size_t i, double v)
{
  if (i) sp_strbuf_puts(&c->vars, ", ");
  sb_num(&c->vars, v, 1);
}

static void ch_array_end(chart *c, size_t n, const char *dummy)
{
  sp_strbuf_printf(&c->vars, "%s]\n", n ? "" : dummy);
}

/* Closes the current block; an empty block gets one row of NaN, which
 * gnuplot reads as undefined, so that "index k" still counts it. */
static void ch_close_block(chart *c)
{
  if (c->nblocks == 0 || c->block_rows > 0) return;
  for (size_t k = 0; k < c->block_cols; k++) sp_strbuf_puts(&c->data, k ? " NaN" : "NaN");
  sp_strbuf_puts(&c->data, "\n");
}

static void ch_block(chart *c, const char *what, const char *columns)
{
  ch_close_block(c);
  if (c->nblocks) sp_strbuf_puts(&c->data, "\n\n");
  sp_strbuf_printf(&c->data, "# index %zu: %s\n# columns: %s\n", c->nblocks, what, columns);
  size_t cols = 0;
  for (const char *p = columns; *p;) {
    while (*p == ' ') p++;
    if (!*p) break;
    cols++;
    while (*p && *p != ' ') p++;
  }
  c->nblocks++;
  c->block_rows = 0;
  c->block_cols = cols;
}

static void ch_row(chart *c, size_t k, const double *v)
{
  for (size_t i = 0; i < k; i++) {
    if (i) sp_strbuf_puts(&c->data, " ");
    sb_num(&c->data, v[i], 0);
  }
  sp_strbuf_puts(&c->data, "\n");
  c->block_rows++;
}

static void ch_row2(chart *c, double a, double b)
{
  double v[2] = {a, b};
  ch_row(c, 2, v);
}

static void ch_row3(chart *c, double a, double b, double d)
{
  double v[3] = {a, b, d};
  ch_row(c, 3, v);
}

/* ---- files and folders --------------------------------------------------- */

static sp_status join_path(char *out, size_t n, const char *dir, const char *name,
                           const char *ext, sp_error *err)
{
  int w = snprintf(out, n, "%s/%s%s", dir, name, ext);
  if (w < 0 || (size_t)w >= n)
    return sp_fail(err, SP_ELIMIT, "%s/%s%s: path longer than %zu bytes", dir, name, ext,
                   n - 1);
  return SP_OK;
}

static int file_exists(const char *path)
{
  struct stat st;
  return lstat(path, &st) == 0;
}

static int regular_file(const char *path)
{
  struct stat st;
  return stat(path, &st) == 0 && S_ISREG(st.st_mode);
}

static sp_status read_text(const char *path, char **out, sp_error *err)
{
  *out = NULL;
  FILE *fp = fopen(path, "rb");
  if (!fp) return sp_fail(err, SP_EIO, "%s: cannot open: %s", path, strerror(errno));
  sp_strbuf b = {0};
  char tmp[4096];
  size_t got;
  while ((got = fread(tmp, 1, sizeof tmp, fp)) > 0) {
    sp_strbuf_add(&b, tmp, got);
    if (b.len > TEMPLATE_MAX) {
      fclose(fp);
      sb_free(&b);
      return sp_fail(err, SP_ELIMIT, "%s: larger than %zu bytes; not a template", path,
                     TEMPLATE_MAX);
    }
  }
  int bad = ferror(fp);
  fclose(fp);
  if (bad) {
    sb_free(&b);
    return sp_fail(err, SP_EIO, "%s: read error", path);
  }
  if (b.oom) {
    sb_free(&b);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  if (!b.s) sp_strbuf_add(&b, "", 0);
  if (b.oom) return sp_fail(err, SP_ENOMEM, "out of memory");
  *out = b.s;
  return SP_OK;
}

/* Writes a new file (it must not exist) and syncs it. */
static sp_status write_new_file(const char *path, const char *data, size_t n, sp_error *err)
{
  int fd = open(path, O_WRONLY | O_CREAT | O_EXCL, 0644);
  if (fd < 0) return sp_fail(err, SP_EIO, "%s: cannot create: %s", path, strerror(errno));
  size_t done = 0;
  while (done < n) {
    ssize_t w = write(fd, data + done, n - done);
    if (w < 0) {
      if (errno == EINTR) continue;
      int e = errno;
      close(fd);
      return sp_fail(err, SP_EIO, "%s: write failed: %s", path, strerror(e));
    }
    done += (size_t)w;
  }
  if (fsync(fd) != 0 || close(fd) != 0)
    return sp_fail(err, SP_EIO, "%s: write failed: %s", path, strerror(errno));
  return SP_OK;
}

static void sync_file(const char *path)
{
  int fd = open(path, O_RDONLY);
  if (fd < 0) return;
  fsync(fd);
  close(fd);
}

/* Removes a staging folder and whatever is in it (it holds only files we
 * or gnuplot made). */
static void remove_staging(const char *dir)
{
  DIR *d = opendir(dir);
  if (d) {
    struct dirent *e;
    while ((e = readdir(d)) != NULL) {
      if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0) continue;
      char p[SP_PLOT_PATH_MAX];
      int w = snprintf(p, sizeof p, "%s/%s", dir, e->d_name);
      if (w > 0 && (size_t)w < sizeof p) unlink(p);
    }
    closedir(d);
  }
  rmdir(dir);
}

/* ---- templates ------------------------------------------------------------ */

/* Whether dir holds the house style (the mark of a template folder). */
static int template_dir_ok(const char *dir, size_t len)
{
  char p[SP_PLOT_PATH_MAX];
  int w = snprintf(p, sizeof p, "%.*s/style.gp", (int)len, dir);
  return w > 0 && (size_t)w < sizeof p && regular_file(p);
}

static sp_status take_dir(const char *dir, size_t len, char *buf, size_t n, sp_error *err)
{
  if (len + 1 > n) return sp_fail(err, SP_ELIMIT, "template folder path too long");
  memcpy(buf, dir, len);
  buf[len] = '\0';
  return SP_OK;
}

sp_status sp_plot_template_dir(const char *fallback, char *buf, size_t n, sp_error *err)
{
  sp_strbuf tried = {0};
  const char *env = getenv("SCATTERPROP_PLOTS");
  if (env && *env) {
    for (const char *p = env;;) {
      const char *end = strchr(p, ':');
      size_t len = end ? (size_t)(end - p) : strlen(p);
      if (len > 0) {
        if (template_dir_ok(p, len)) {
          sb_free(&tried);
          return take_dir(p, len, buf, n, err);
        }
        sp_strbuf_printf(&tried, "%s%.*s", tried.len ? ", " : "", (int)len, p);
      }
      if (!end) break;
      p = end + 1;
    }
  }
  /* Beside an installed program: <prefix>/bin/scatterprop finds
   * <prefix>/share/scatterprop/plots.  /proc/self/exe is Linux's name for
   * the running program; elsewhere this step is skipped. */
  char exe[SP_PLOT_PATH_MAX];
  ssize_t got = readlink("/proc/self/exe", exe, sizeof exe - 1);
  if (got > 0) {
    exe[got] = '\0';
    char *slash = strrchr(exe, '/');
    if (slash) {
      *slash = '\0';
      char cand[SP_PLOT_PATH_MAX];
      int w = snprintf(cand, sizeof cand, "%s/../share/scatterprop/plots", exe);
      if (w > 0 && (size_t)w < sizeof cand) {
        if (template_dir_ok(cand, (size_t)w)) {
          sb_free(&tried);
          return take_dir(cand, (size_t)w, buf, n, err);
        }
        sp_strbuf_printf(&tried, "%s%s", tried.len ? ", " : "", cand);
      }
    }
  }
  if (fallback && *fallback) {
    if (template_dir_ok(fallback, strlen(fallback))) {
      sb_free(&tried);
      return take_dir(fallback, strlen(fallback), buf, n, err);
    }
    sp_strbuf_printf(&tried, "%s%s", tried.len ? ", " : "", fallback);
  }
  sp_fail(err, SP_EIO, "gnuplot templates not found (no style.gp in: %s)",
          tried.s ? tried.s : "no folder given");
  sb_free(&tried);
  return sp_error_hint(err, "set SCATTERPROP_PLOTS to the folder holding the plots/*.gp "
                            "templates");
}

/* Whether the line is exactly the placeholder (blanks around allowed). */
static int line_is(const char *line, size_t len, const char *ph)
{
  while (len > 0 && (line[0] == ' ' || line[0] == '\t')) { line++; len--; }
  while (len > 0 && (line[len - 1] == ' ' || line[len - 1] == '\t' || line[len - 1] == '\r'))
    len--;
  return len == strlen(ph) && memcmp(line, ph, len) == 0;
}

/* Fills a template: the line "@VARS@" becomes vars, "@STYLE@" becomes the
 * style text; any other "@NAME@" (upper case) is an error, so a template
 * and this code cannot drift apart silently.  gnuplot's own macros
 * (@name in lower case) pass through. */
static sp_status fill_template(const char *tpl, const char *tpl_path, const char *style,
                               const char *header, const char *vars, sp_strbuf *out, sp_error *err)
{
  int seen_vars = 0, seen_style = 0;
  long lineno = 0;
  sp_strbuf_puts(out, header);
  for (const char *p = tpl; *p;) {
    const char *nl = strchr(p, '\n');
    size_t len = nl ? (size_t)(nl - p) : strlen(p);
    lineno++;
    if (line_is(p, len, "@VARS@")) {
      sp_strbuf_puts(out, vars);
      seen_vars = 1;
    } else if (line_is(p, len, "@STYLE@")) {
      sp_strbuf_puts(out, style);
      if (out->len && out->s[out->len - 1] != '\n') sp_strbuf_puts(out, "\n");
      seen_style = 1;
    } else {
      for (size_t i = 0; i < len; i++) {
        if (p[i] != '@') continue;
        size_t j = i + 1;
        while (j < len && ((p[j] >= 'A' && p[j] <= 'Z') || p[j] == '_' ||
                           (j > i + 1 && p[j] >= '0' && p[j] <= '9')))
          j++;
        if (j > i + 1 && j < len && p[j] == '@')
          return sp_fail_at(err, SP_EDATA, tpl_path, lineno, (long)i + 1,
                            "unknown placeholder %.*s (only @VARS@ and @STYLE@ lines are "
                            "filled)", (int)(j - i + 1), p + i);
      }
      sp_strbuf_add(out, p, len);
      sp_strbuf_puts(out, "\n");
    }
    p += len;
    if (*p == '\n') p++;
  }
  if (!seen_vars || !seen_style)
    return sp_fail(err, SP_EDATA, "%s: template lacks its %s line", tpl_path,
                   seen_vars ? "@STYLE@" : "@VARS@");
  if (out->oom) return sp_fail(err, SP_ENOMEM, "out of memory");
  return SP_OK;
}

/* ---- rendering ------------------------------------------------------------ */

void sp_plot_options_init(sp_plot_options *opt)
{
  memset(opt, 0, sizeof *opt);
}

int sp_plot_gnuplot_found(const sp_plot_options *opt, char *buf, size_t n)
{
  const char *name = opt ? opt->gnuplot : NULL;
  if (name && !*name) return 0;
  return sp_spawn_find_program(name ? name : "gnuplot", buf, n);
}

char *sp_plot_count_text(unsigned long long v, char *buf, size_t n)
{
  char digits[24];
  int nd = snprintf(digits, sizeof digits, "%llu", v);
  if (n < SP_PLOT_COUNT_MAX) {
    if (n) buf[0] = '\0';
    return buf;
  }
  size_t o = 0;
  for (int i = 0; i < nd; i++) {
    /* A thin space before each group of three, from 10 000 up. */
    if (v >= 10000 && i > 0 && (nd - i) % 3 == 0) {
      memcpy(buf + o, "\xE2\x80\x89", 3);
      o += 3;
    }
    buf[o++] = digits[i];
  }
  buf[o] = '\0';
  return buf;
}

sp_status sp_plot_check(const sp_plot_options *opt, sp_error *err)
{
  if (!opt || !opt->outdir || !*opt->outdir)
    return sp_fail(err, SP_EUSAGE, "charts: no output folder given");
  char tdir[SP_PLOT_PATH_MAX];
  sp_status st = sp_plot_template_dir(opt->template_dir, tdir, sizeof tdir, err);
  if (st) return st;
  /* The folder that must take a new entry: outdir itself, or, when it does
   * not exist yet, the folder it would be made in. */
  const char *dir = opt->outdir;
  char parent[SP_PLOT_PATH_MAX];
  struct stat sb;
  if (stat(dir, &sb) == 0) {
    if (!S_ISDIR(sb.st_mode)) {
      sp_fail(err, SP_EIO, "%s: not a folder; charts need a folder", dir);
      return sp_error_hint(err, "name a folder for the charts (it is made if missing)");
    }
  } else if (errno == ENOENT || errno == ENOTDIR) {
    int w = snprintf(parent, sizeof parent, "%s", dir);
    if (w < 0 || (size_t)w >= sizeof parent)
      return sp_fail(err, SP_ELIMIT, "%s: output folder path too long", dir);
    size_t len = (size_t)w;
    while (len > 1 && parent[len - 1] == '/')
      parent[--len] = '\0';
    char *slash = strrchr(parent, '/');
    if (!slash)
      snprintf(parent, sizeof parent, ".");
    else if (slash == parent)
      parent[1] = '\0';
    else
      *slash = '\0';
    if (stat(parent, &sb) != 0) {
      sp_fail(err, SP_EIO, "%s: cannot create the chart folder: %s does not exist", dir, parent);
      return sp_error_hint(err, "the chart folder is made one level deep; create %s first", parent);
    }
    if (!S_ISDIR(sb.st_mode)) {
      sp_fail(err, SP_EIO, "%s: cannot create the chart folder: %s is not a folder", dir, parent);
      return sp_error_hint(err, "name a folder for the charts (it is made if missing)");
    }
    dir = parent;
  } else {
    return sp_fail(err, SP_EIO, "%s: cannot use it as the chart folder: %s", dir, strerror(errno));
  }
  /* Whether an entry can be made there is known only by making one (the
   * permission bits do not tell for root, read-only mounts, /proc): a
   * staging folder of the kind each chart uses, removed at once. */
  char probe[SP_PLOT_PATH_MAX];
  int w = snprintf(probe, sizeof probe, "%s/.sp-check.sp-%s", dir,
                   "XX"
                   "XX"
                   "XX"); /* mkdtemp template */
  if (w < 0 || (size_t)w >= sizeof probe)
    return sp_fail(err, SP_ELIMIT, "%s: output folder path too long", dir);
  if (!mkdtemp(probe)) {
    if (dir == parent)
      sp_fail(err, SP_EIO, "%s: cannot create the chart folder in %s: %s", opt->outdir, dir,
              strerror(errno));
    else
      sp_fail(err, SP_EIO, "%s: cannot write charts there: %s", dir, strerror(errno));
    return sp_error_hint(err, "choose a folder you can write in");
  }
  rmdir(probe);
  return SP_OK;
}

/* A folder name as a shell word for a hint the user may paste: left bare
 * when it is plainly safe, else single-quoted; control characters shown
 * as '?'. */
static void shell_word(const char *s, char *buf, size_t n)
{
  int plain = *s != '\0';
  for (const char *p = s; *p; p++)
    if (!((*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') || (*p >= '0' && *p <= '9') ||
          strchr("_./-+,:@%", *p)))
      plain = 0;
  size_t pos = 0;
  if (!plain && pos + 1 < n) buf[pos++] = '\'';
  for (const unsigned char *p = (const unsigned char *)s; *p && pos + 5 < n; p++) {
    if (*p == '\'' && !plain) {
      memcpy(buf + pos, "'\\''", 4);
      pos += 4;
    } else {
      buf[pos++] = (*p < 0x20 || *p == 0x7F) ? '?' : (char)*p;
    }
  }
  if (!plain && pos + 1 < n) buf[pos++] = '\'';
  buf[pos] = '\0';
}

/* Quotes the tail of gnuplot's output into the error message: its last
 * lines say which line failed and why. */
static void output_tail(const sp_spawn_result *r, char *buf, size_t n)
{
  const char *s = r->output ? r->output : "";
  size_t len = strlen(s);
  while (len > 0 && (s[len - 1] == '\n' || s[len - 1] == ' ' || s[len - 1] == '\r')) len--;
  size_t start = 0;
  if (len + 1 > n) {
    start = len - (n - 1);
    while (start < len && s[start] != '\n') start++;
    if (start < len) start++;
  }
  size_t k = 0;
  for (size_t i = start; i < len && k + 1 < n; i++) {
    unsigned char c = (unsigned char)s[i];
    buf[k++] = (c < 0x20 && c != '\n' && c != '\t') ? '?' : (char)c;
  }
  buf[k] = '\0';
  if (k == 0) snprintf(buf, n, "(no message)");
}

static sp_status finish(chart *c, const sp_plot_options *opt, sp_plot_output *out,
                        sp_error *err)
{
  memset(out, 0, sizeof *out);
  ch_close_block(c);
  if (c->vars.oom || c->data.oom) return sp_fail(err, SP_ENOMEM, "out of memory");
  if (!opt || !opt->outdir || !*opt->outdir)
    return sp_fail(err, SP_EUSAGE, "plot: no output folder given");
  if (!stem_valid(opt->stem))
    return sp_fail(err, SP_EUSAGE,
                   "plot: file stem '%s' is not a plain name ([A-Za-z0-9_.-], at most %d "
                   "bytes, not starting with '.' or '-')",
                   opt->stem ? opt->stem : "(null)", SP_PLOT_STEM_MAX);
  const char *stem = opt->stem;
  unsigned width = opt->width ? opt->width : DEFAULT_WIDTH;
  unsigned height = opt->height ? opt->height : DEFAULT_HEIGHT;
  double timeout = opt->timeout > 0 ? opt->timeout : DEFAULT_TIMEOUT;

  char tdir[SP_PLOT_PATH_MAX];
  sp_status st = sp_plot_template_dir(opt->template_dir, tdir, sizeof tdir, err);
  if (st) return st;
  char tpl_path[SP_PLOT_PATH_MAX], style_path[SP_PLOT_PATH_MAX];
  if ((st = join_path(tpl_path, sizeof tpl_path, tdir, c->kind, ".gp", err))) return st;
  if ((st = join_path(style_path, sizeof style_path, tdir, "style", ".gp", err))) return st;

  char final[4][SP_PLOT_PATH_MAX];
  static const char *const ext[4] = {".dat", ".gp", ".png", ".svg"};
  for (int k = 0; k < 4; k++)
    if ((st = join_path(final[k], sizeof final[k], opt->outdir, stem, ext[k], err))) return st;
  for (int k = 0; k < 4; k++) {
    if (!opt->overwrite && file_exists(final[k])) {
      sp_fail(err, SP_EIO, "%s: file exists; refusing to overwrite it", final[k]);
      return sp_error_hint(err, "give --force to replace it, or choose another name");
    }
  }

  char *tpl = NULL, *style = NULL;
  if ((st = read_text(tpl_path, &tpl, err))) return st;
  if ((st = read_text(style_path, &style, err))) { free(tpl); return st; }

  sp_strbuf vars = {0}, script = {0}, header = {0};
  char q[QUOTED_MAX];
  sp_strbuf_printf(&header,
            "# Made by scatterprop %s from the template %s.gp.\n"
            "# To redraw (after restyling, say), run in this folder:  gnuplot %s.gp\n"
            "# It reads %s.dat and writes %s.png and %s.svg.\n",
            sp_version(), c->kind, stem, stem, stem, stem);
  sp_strbuf_puts(&vars, "# ---- chart variables (text from the input files is quoted data)\n");
  snprintf(q, sizeof q, "%s", stem);
  sp_strbuf_printf(&vars, "sp_stem = '%s'\nsp_data = '%s.dat'\n", q, q);
  sp_strbuf_printf(&vars, "sp_width = %u\nsp_height = %u\n", width, height);
  sp_strbuf_puts(&vars, c->vars.s ? c->vars.s : "");
  sp_strbuf_puts(&vars, "# ---- end of chart variables\n");
  if (vars.oom || header.oom) {
    st = sp_fail(err, SP_ENOMEM, "out of memory");
    goto done;
  }
  if ((st = fill_template(tpl, tpl_path, style, header.s, vars.s, &script, err))) goto done;

  char gnuplot[SP_PLOT_PATH_MAX];
  int render = sp_plot_gnuplot_found(opt, gnuplot, sizeof gnuplot);

  /* Stage everything in a private folder beside the outputs (same file
   * system, so the final moves are renames). */
  char stage[SP_PLOT_PATH_MAX];
  int w = snprintf(stage, sizeof stage, "%s/.%s.sp-%s", opt->outdir, stem, "XX" "XX" "XX"); /* mkdtemp template */
  if (w < 0 || (size_t)w >= sizeof stage) {
    st = sp_fail(err, SP_ELIMIT, "%s: output folder path too long", opt->outdir);
    goto done;
  }
  if (!mkdtemp(stage)) {
    st = sp_fail(err, SP_EIO, "%s: cannot create a staging folder there: %s", opt->outdir,
                 strerror(errno));
    goto done;
  }
  char staged[4][SP_PLOT_PATH_MAX];
  for (int k = 0; k < 4; k++)
    if ((st = join_path(staged[k], sizeof staged[k], stage, stem, ext[k], err))) goto unstage;
  if ((st = write_new_file(staged[0], c->data.s, c->data.len, err))) goto unstage;
  if ((st = write_new_file(staged[1], script.s, script.len, err))) goto unstage;

  int nfiles = 2;
  if (render) {
    char a0[] = "gnuplot", a1[] = "-d", a2[SP_PLOT_STEM_MAX + 8];
    snprintf(a2, sizeof a2, "%s.gp", stem);
    /* -d: no ~/.gnuplot or system gnuplotrc, so the look is the template's. */
    char *argv[] = {a0, a1, a2, NULL};
    sp_spawn_result r;
    st = sp_spawn_run(gnuplot, argv, stage, timeout, &r, err);
    if (st) {
      sp_spawn_result_free(&r);
      goto unstage;
    }
    char tail[640];
    output_tail(&r, tail, sizeof tail);
    if (r.timed_out) {
      st = sp_fail(err, SP_EIO, "gnuplot did not finish chart %s within %g s (template %s); "
                               "it was stopped", stem, timeout, tpl_path);
    } else if (!r.exited || r.exit_status != 0) {
      char how[64];
      if (r.exited) snprintf(how, sizeof how, "exit status %d", r.exit_status);
      else snprintf(how, sizeof how, "signal %d", r.signal);
      st = sp_fail(err, SP_EIO, "gnuplot failed on chart %s (%s; template %s):\n%s", stem,
                   how, tpl_path, tail);
      sp_error_hint(err, "gnuplot's line numbers count lines of the filled script: the "
                         "template's lines plus its variables and style");
    } else if (!regular_file(staged[2]) || !regular_file(staged[3])) {
      st = sp_fail(err, SP_EIO, "gnuplot made no %s.png/%s.svg for chart %s (template %s "
                               "must set output to sp_stem.'.png' and sp_stem.'.svg'):\n%s",
                   stem, stem, stem, tpl_path, tail);
    }
    sp_spawn_result_free(&r);
    if (st) goto unstage;
    sync_file(staged[2]);
    sync_file(staged[3]);
    nfiles = 4;
  }

  /* Move into place; on a failure, take back what was moved (none of it
   * existed before unless overwrite was given). */
  for (int k = 0; k < nfiles; k++) {
    if (rename(staged[k], final[k]) != 0) {
      int e = errno;
      for (int j = 0; j < k; j++) unlink(final[j]);
      st = sp_fail(err, SP_EIO, "%s: cannot move into place: %s", final[k], strerror(e));
      goto unstage;
    }
  }
  /* Without a rendering, older pictures of this chart would no longer
   * match its data: remove them (only reachable with overwrite). */
  if (!render) {
    unlink(final[2]);
    unlink(final[3]);
  }
  memcpy(out->data, final[0], sizeof out->data);
  memcpy(out->script, final[1], sizeof out->script);
  if (render) {
    memcpy(out->png, final[2], sizeof out->png);
    memcpy(out->svg, final[3], sizeof out->svg);
    out->rendered = 1;
  } else {
    char dirword[SP_PLOT_PATH_MAX / 2];
    shell_word(opt->outdir, dirword, sizeof dirword);
    /* A hint cut short by a very long folder name is still a hint. */
    int hw = snprintf(out->hint, sizeof out->hint,
                     "%s; to render the chart: cd %s && gnuplot %s.gp",
                     opt->gnuplot && !*opt->gnuplot ? "rendering not requested"
                                                    : "gnuplot not found",
                     dirword, stem);
    if (hw < 0) out->hint[0] = '\0';
  }
  st = SP_OK;
unstage:
  remove_staging(stage);
done:
  free(tpl);
  free(style);
  sb_free(&vars);
  sb_free(&script);
  sb_free(&header);
  return st;
}

/* ---- shared chart helpers ------------------------------------------------- */

static int cmp_double(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

static sp_status check_finite(const double *x, size_t n, const char *what, sp_error *err)
{
  if (!x && n > 0) return sp_fail(err, SP_EUSAGE, "plot: no %s given", what);
  for (size_t i = 0; i < n; i++)
    if (!isfinite(x[i]))
      return sp_fail(err, SP_EUSAGE, "plot: %s[%zu] = %g is not a finite number", what, i,
                     x[i]);
  return SP_OK;
}

static sp_status sorted_copy(const double *x, size_t n, double **out, sp_error *err)
{
  *out = malloc((n ? n : 1) * sizeof **out);
  if (!*out) return sp_fail(err, SP_ENOMEM, "out of memory");
  memcpy(*out, x, n * sizeof *x);
  qsort(*out, n, sizeof **out, cmp_double);
  return SP_OK;
}

/* "quantity [unit]", or the quantity alone. */
static void axis_text(const sp_plot_axis *a, const char *fallback, char *buf, size_t n)
{
  const char *q = a && a->quantity && *a->quantity ? a->quantity : fallback;
  if (a && a->unit && *a->unit) snprintf(buf, n, "%s [%s]", q, a->unit);
  else snprintf(buf, n, "%s", q);
}

/* "prefix quantity [unit]". */
static void axis_text_pre(const char *prefix, const sp_plot_axis *a, char *buf, size_t n)
{
  char t[2 * SP_PLOT_LABEL_MAX];
  axis_text(a, "value", t, sizeof t);
  snprintf(buf, n, "%s%s", prefix, t);
}

/* The axis label of a density: "probability density [1/unit]", the unit
 * in parentheses when it is a compound ("1/(N m)"). */
static void density_text(const sp_plot_axis *a, char *buf, size_t n)
{
  const char *u = a ? a->unit : NULL;
  if (!u || !*u) {
    snprintf(buf, n, "probability density");
    return;
  }
  int compound = strpbrk(u, " /*.^") != NULL || strstr(u, "\xC2\xB7") != NULL;
  snprintf(buf, n, compound ? "probability density [1/(%s)]" : "probability density [1/%s]", u);
}

static const char *curve_label(const sp_plot_curve *c)
{
  if (c->label && *c->label) return c->label;
  if (c->family->title && *c->family->title) return c->family->title;
  return c->family->name;
}

static sp_status check_curve(const sp_plot_curve *c, size_t i, sp_error *err)
{
  if (!c->family)
    return sp_fail(err, SP_EUSAGE, "plot: curve %zu has no distribution family", i);
  const sp_family *f = c->family;
  if (!f->logpdf || !f->cdf_P)
    return sp_fail(err, SP_EUSAGE, "plot: family %s lacks a density or a CDF",
                   f->name ? f->name : "(unnamed)");
  for (size_t k = 0; k < f->nparam && k < SP_FAMILY_MAX_PARAMS; k++)
    if (!isfinite(c->theta[k]))
      return sp_fail(err, SP_EUSAGE, "plot: curve %zu (%s): parameter %zu is not finite", i,
                     f->name ? f->name : "?", k);
  if (f->check) return f->check(c->theta, err);
  return SP_OK;
}

static sp_status check_fit_spec(const sp_plot_fit *s, size_t min_curves, sp_error *err)
{
  if (!s) return sp_fail(err, SP_EUSAGE, "plot: no chart spec given");
  if (s->n < 2) return sp_fail(err, SP_EUSAGE, "plot: %zu values; a fit chart needs 2 or more",
                               s->n);
  sp_status st = check_finite(s->x, s->n, "x", err);
  if (st) return st;
  if (s->ncurves < min_curves)
    return sp_fail(err, SP_EUSAGE, "plot: a probability plot needs the chosen fit (curves[0])");
  if (s->ncurves > 0 && !s->curves) return sp_fail(err, SP_EUSAGE, "plot: no curves given");
  for (size_t i = 0; i < s->ncurves; i++)
    if ((st = check_curve(&s->curves[i], i, err))) return st;
  if (!(s->resolution >= 0) || !isfinite(s->resolution))
    return sp_fail(err, SP_EUSAGE, "plot: resolution %g must be >= 0", s->resolution);
  if (!(s->band_level >= 0 && s->band_level < 1))
    return sp_fail(err, SP_EUSAGE, "plot: band level %g outside [0, 1)", s->band_level);
  if (s->nbins > MAX_BINS)
    return sp_fail(err, SP_ELIMIT, "plot: %zu bins asked; at most %d are drawn", s->nbins,
                   MAX_BINS);
  return SP_OK;
}

static sp_status check_limits(const sp_plot_limit *lim, size_t n, sp_error *err)
{
  if (n > 0 && !lim) return sp_fail(err, SP_EUSAGE, "plot: no limits given");
  for (size_t i = 0; i < n; i++)
    if (!isfinite(lim[i].value))
      return sp_fail(err, SP_EUSAGE, "plot: limit %zu is not a finite number", i);
  return SP_OK;
}

static void ch_limits(chart *c, const sp_plot_limit *lim, size_t n)
{
  ch_int(c, "nlim", (long)n);
  ch_array_begin(c, "lim_value", n);
  for (size_t i = 0; i < n; i++) ch_array_num(c, i, lim[i].value);
  ch_array_end(c, n, "NaN");
  ch_array_begin(c, "lim_title", n);
  for (size_t i = 0; i < n; i++) ch_array_str(c, i, lim[i].label);
  ch_array_end(c, n, "''");
}

static void ch_title(chart *c, const char *title, const sp_plot_axis *a)
{
  const char *t = title && *title ? title : (a && a->quantity ? a->quantity : "");
  ch_str(c, "sp_title", t);
}

/* ---- histograms ------------------------------------------------------------ */

typedef struct {
  double *edges;   /* nb + 1 */
  double *counts;  /* nb */
  size_t nb;
  double total;
} bins;

static void bins_free(bins *b)
{
  free(b->edges);
  free(b->counts);
  b->edges = NULL;
  b->counts = NULL;
}

/* Bins for the sorted values x[0..n).  The width follows
 *   Freedman, D. and Diaconis, P. (1981). On the histogram as a density
 *   estimator: L2 theory. Zeitschrift fur Wahrscheinlichkeitstheorie und
 *   verwandte Gebiete 57(4), 453-476:  h = 2 IQR n^(-1/3),
 * and, when the interquartile range is 0, the number of bins of
 *   Sturges, H.A. (1926). The choice of a class interval. Journal of the
 *   American Statistical Association 21(153), 65-66:  k = ceil(log2 n) + 1.
 * With a resolution r > 0 (values on a lattice of step r), the width is
 * rounded up to a whole number of steps and the edges lie half a step off
 * the lattice, so every bin holds the same number of lattice values
 * (otherwise bins alternate between k and k + 1 of them and the histogram
 * shows a false ripple). */
static sp_status make_bins(const double *x, size_t n, size_t nreq, double res, bins *b,
                           sp_error *err)
{
  memset(b, 0, sizeof *b);
  double lo = x[0], hi = x[n - 1], range = hi - lo;
  double h;
  if (res > 0 && !isfinite(range / res)) res = 0; /* no lattice a chart could show */
  size_t nb;
  if (!(range > 0)) {
    /* Every value equal: one bin, one resolution step wide, or a
     * thousandth of the value (narrow against it, yet a visible bar), or
     * 1 for a sample of zeros. */
    h = res > 0 ? res : (lo != 0 ? fabs(lo) * 1e-3 : 1.0);
    lo -= h / 2;
    nb = 1;
  } else {
    if (nreq > 0) {
      h = range / (double)nreq;
    } else {
      double iqr = sp_quantile_sorted(x, n, 0.75) - sp_quantile_sorted(x, n, 0.25);
      h = 2.0 * iqr / cbrt((double)n);
      if (!(h > 0)) h = range / (ceil(log2((double)n)) + 1.0);
    }
    if (h < range / MAX_BINS) h = range / MAX_BINS;
    if (res > 0) {
      h = ceil(h / res) * res;
      lo -= res / 2;
      nb = (size_t)ceil((range + res) / h);
      /* Too many bins after rounding: take the smallest whole number of
       * steps that needs no more than MAX_BINS (one more step covers a
       * rounding of the division), so the bins still cover every value. */
      if (nb > MAX_BINS) {
        h = ceil((range + res) / MAX_BINS / res) * res;
        nb = (size_t)ceil((range + res) / h);
        if (nb > MAX_BINS) {
          h += res;
          nb = (size_t)ceil((range + res) / h);
        }
      }
    } else {
      nb = nreq > 0 ? nreq : (size_t)ceil(range / h);
      if (nb < 1) nb = 1;
      if (nb > MAX_BINS) nb = MAX_BINS;
      h = range / (double)nb;
    }
  }
  b->edges = malloc((nb + 1) * sizeof *b->edges);
  b->counts = calloc(nb, sizeof *b->counts);
  if (!b->edges || !b->counts) {
    bins_free(b);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  for (size_t k = 0; k <= nb; k++) b->edges[k] = lo + (double)k * h;
  for (size_t i = 0; i < n; i++) {
    double d = floor((x[i] - lo) / h);
    size_t k = d < 0 ? 0 : (d >= (double)nb ? nb - 1 : (size_t)d);
    b->counts[k] += 1;
  }
  b->nb = nb;
  b->total = (double)n;
  return SP_OK;
}

static void ch_bins(chart *c, const bins *b)
{
  ch_block(c, "histogram bins", "lo hi density count");
  for (size_t k = 0; k < b->nb; k++) {
    double w = b->edges[k + 1] - b->edges[k];
    double v[4] = {b->edges[k], b->edges[k + 1], b->counts[k] / (b->total * w), b->counts[k]};
    ch_row(c, 4, v);
  }
}

/* A curve block: kind 0 the density, 1 the CDF, over [a, b]. */
static void ch_curve(chart *c, const sp_plot_curve *cv, int kind, double a, double b)
{
  char what[QUOTED_MAX + 32];
  snprintf(what, sizeof what, "%s of %s", kind ? "CDF" : "density",
           cv->family->name ? cv->family->name : "?");
  ch_block(c, what, kind ? "x cdf" : "x pdf");
  for (int i = 0; i < CURVE_POINTS; i++) {
    double x = a + (b - a) * (double)i / (CURVE_POINTS - 1);
    double y = kind ? cv->family->cdf_P(cv->theta, x) : exp(cv->family->logpdf(cv->theta, x));
    if (isfinite(y)) ch_row2(c, x, y);
  }
}

static void ch_candidates(chart *c, const sp_plot_fit *s)
{
  ch_int(c, "ncurves", (long)s->ncurves);
  ch_array_begin(c, "cand_title", s->ncurves);
  for (size_t i = 0; i < s->ncurves; i++) ch_array_str(c, i, curve_label(&s->curves[i]));
  ch_array_end(c, s->ncurves, "''");
}

sp_status sp_plot_fit_histogram(const sp_plot_fit *spec, const sp_plot_options *opt,
                                sp_plot_output *out, sp_error *err)
{
  sp_status st = check_fit_spec(spec, 0, err);
  if (st) return st;
  double *xs;
  if ((st = sorted_copy(spec->x, spec->n, &xs, err))) return st;
  bins b;
  st = make_bins(xs, spec->n, spec->nbins, spec->resolution, &b, err);
  free(xs);
  if (st) return st;

  chart c;
  ch_init(&c, "fit_hist");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  ch_title(&c, spec->title, &spec->axis);
  axis_text(&spec->axis, "value", t, sizeof t);
  ch_str(&c, "sp_xlabel", t);
  density_text(&spec->axis, t, sizeof t);
  ch_str(&c, "sp_ylabel", t);
  char cnt[SP_PLOT_COUNT_MAX];
  snprintf(t, sizeof t, "data (n = %s)", sp_plot_count_text(spec->n, cnt, sizeof cnt));
  ch_str(&c, "bars_title", t);
  ch_candidates(&c, spec);
  ch_bins(&c, &b);
  double span = b.edges[b.nb] - b.edges[0];
  double a = b.edges[0] - CURVE_PAD * span, e = b.edges[b.nb] + CURVE_PAD * span;
  for (size_t i = 0; i < spec->ncurves; i++) ch_curve(&c, &spec->curves[i], 0, a, e);
  bins_free(&b);
  st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

/* ---- probability plot ------------------------------------------------------ */

/* The fitted quantile at lower-tail probability p whose complement is q
 * (both given exactly): quantile_P for p <= 1/2, quantile_Q of q above,
 * so each tail keeps its precision. */
static double fitted_quantile(const sp_family *f, const double *theta, double p, double q)
{
  if (p <= 0.5 || !f->quantile_Q) return f->quantile_P(theta, p);
  return f->quantile_Q(theta, q);
}

/* Probability plot with a pointwise band.  For n uniforms the i-th
 * smallest, U_(i), follows Beta(i, n - i + 1) (David, H.A. and Nagaraja,
 * H.N. (2003). Order Statistics, 3rd ed. Wiley, section 2.2; from memory),
 * and 1 - U_(i) follows Beta(n - i + 1, i).  The band for x_(i) is the
 * fitted quantile function applied to the alpha/2 and 1 - alpha/2 points
 * of U_(i), each computed with the tail of the beta that keeps the
 * precision (gsl_cdf_beta_Pinv / _Qinv).  Plotting positions are Hazen's
 * (i - 0.5)/n (Hazen, A. (1914). Storage to be provided in impounding
 * reservoirs for municipal water supply. Transactions of the American
 * Society of Civil Engineers 77, 1539-1640; from memory): they do not
 * favour one family, which a chart comparing families needs. */
sp_status sp_plot_fit_probability(const sp_plot_fit *spec, const sp_plot_options *opt,
                                  sp_plot_output *out, sp_error *err)
{
  sp_status st = check_fit_spec(spec, 1, err);
  if (st) return st;
  const sp_plot_curve *cv = &spec->curves[0];
  const sp_family *f = cv->family;
  if (!f->quantile_P)
    return sp_fail(err, SP_EUSAGE, "plot: family %s has no quantile function", f->name);
  double *xs;
  if ((st = sorted_copy(spec->x, spec->n, &xs, err))) return st;
  size_t n = spec->n;
  double *theo = malloc(n * sizeof *theo);
  if (!theo) {
    free(xs);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  double dn = (double)n;
  for (size_t i = 1; i <= n; i++) {
    double p = ((double)i - 0.5) / dn, q = ((double)(n - i) + 0.5) / dn;
    theo[i - 1] = fitted_quantile(f, cv->theta, p, q);
    if (!isfinite(theo[i - 1])) {
      free(xs);
      free(theo);
      return sp_fail(err, SP_ENUMERIC, "plot: the %s quantile at p = %g is not finite", f->name,
                     p);
    }
  }

  chart c;
  ch_init(&c, "fit_prob");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  ch_title(&c, spec->title, &spec->axis);
  snprintf(t, sizeof t, "%s quantile at (i - 0.5)/n",
           f->title && *f->title ? f->title : (f->name ? f->name : "fitted"));
  sp_plot_axis qa = {t, spec->axis.unit};
  char lab[3 * SP_PLOT_LABEL_MAX + 64];
  axis_text(&qa, "quantile", lab, sizeof lab);
  ch_str(&c, "sp_xlabel", lab);
  axis_text_pre("ordered ", &spec->axis, lab, sizeof lab);
  ch_str(&c, "sp_ylabel", lab);
  char cnt[SP_PLOT_COUNT_MAX];
  snprintf(t, sizeof t, "data (n = %s)", sp_plot_count_text(n, cnt, sizeof cnt));
  ch_str(&c, "points_title", t);
  ch_str(&c, "line_title", "y = x (data as fitted)");
  int has_band = spec->band_level > 0;
  ch_int(&c, "has_band", has_band);
  snprintf(t, sizeof t, "%g %% pointwise band", 100 * spec->band_level);
  ch_str(&c, "band_title", t);

  ch_block(&c, "ordered data at the fitted quantiles", "quantile x_(i) p_i");
  for (size_t i = 0; i < n; i++) ch_row3(&c, theo[i], xs[i], ((double)i + 0.5) / dn);
  ch_block(&c, "pointwise band", "quantile lower upper");
  if (has_band) {
    double a = (1.0 - spec->band_level) / 2.0;
    for (size_t i = 1; i <= n; i++) {
      double ai = (double)i, bi = (double)(n - i + 1);
      double uL = gsl_cdf_beta_Pinv(a, ai, bi), cL = gsl_cdf_beta_Qinv(a, bi, ai);
      double uU = gsl_cdf_beta_Qinv(a, ai, bi), cU = gsl_cdf_beta_Pinv(a, bi, ai);
      double lo = fitted_quantile(f, cv->theta, uL, cL);
      double hi = fitted_quantile(f, cv->theta, uU, cU);
      /* A band end the family cannot reach (a bounded support, a beta
       * quantile GSL could not find) is left out rather than invented. */
      if (isfinite(lo) && isfinite(hi)) ch_row3(&c, theo[i - 1], lo, hi);
    }
  }
  ch_block(&c, "the line y = x", "x y");
  /* no such path: sizes are not zero here and every block is freed:
   * NOLINTNEXTLINE(clang-analyzer-unix.Malloc) */
  double lo = fmin(theo[0], xs[0]), hi = fmax(theo[n - 1], xs[n - 1]);
  ch_row2(&c, lo, lo);
  ch_row2(&c, hi, hi);
  free(xs);
  free(theo);
  st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

/* ---- empirical distribution functions --------------------------------------- */

/* Right-continuous ECDF steps of sorted x[0..n) for gnuplot's "steps"
 * (horizontal, then vertical): a start at (a, 0), (x_(i), i/n) for each
 * value, and an end at (b, 1). */
static void ch_ecdf(chart *c, const char *what, const double *xs, size_t n, double a, double b)
{
  ch_block(c, what, "x F_n");
  ch_row2(c, a, 0.0);
  for (size_t i = 0; i < n; i++) {
    if (i + 1 < n && xs[i + 1] == xs[i]) continue; /* ties: one riser */
    ch_row2(c, xs[i], (double)(i + 1) / (double)n);
  }
  ch_row2(c, b, 1.0);
}

sp_status sp_plot_fit_ecdf(const sp_plot_fit *spec, const sp_plot_options *opt,
                           sp_plot_output *out, sp_error *err)
{
  sp_status st = check_fit_spec(spec, 0, err);
  if (st) return st;
  double *xs;
  if ((st = sorted_copy(spec->x, spec->n, &xs, err))) return st;
  size_t n = spec->n;
  double span = xs[n - 1] - xs[0];
  if (!(span > 0)) span = xs[0] != 0 ? fabs(xs[0]) : 1.0;
  double a = xs[0] - CURVE_PAD * span, b = xs[n - 1] + CURVE_PAD * span;

  chart c;
  ch_init(&c, "fit_ecdf");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  ch_title(&c, spec->title, &spec->axis);
  axis_text(&spec->axis, "value", t, sizeof t);
  ch_str(&c, "sp_xlabel", t);
  ch_str(&c, "sp_ylabel", "cumulative probability");
  char cnt[SP_PLOT_COUNT_MAX];
  snprintf(t, sizeof t, "empirical (n = %s)", sp_plot_count_text(n, cnt, sizeof cnt));
  ch_str(&c, "steps_title", t);
  ch_candidates(&c, spec);
  ch_ecdf(&c, "empirical distribution function", xs, n, a, b);
  for (size_t i = 0; i < spec->ncurves; i++) ch_curve(&c, &spec->curves[i], 1, a, b);
  free(xs);
  st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

sp_status sp_plot_fit_lots(const sp_plot_lots *spec, const sp_plot_options *opt,
                           sp_plot_output *out, sp_error *err)
{
  if (!spec || !spec->lots || spec->nlots == 0)
    return sp_fail(err, SP_EUSAGE, "plot: no lots given");
  if (spec->nlots > SP_PLOT_LOTS_MAX)
    return sp_fail(err, SP_ELIMIT, "plot: %zu lots; a chart shows at most %d", spec->nlots,
                   SP_PLOT_LOTS_MAX);
  sp_status st;
  double lo = INFINITY, hi = -INFINITY;
  for (size_t k = 0; k < spec->nlots; k++) {
    const sp_plot_lot *l = &spec->lots[k];
    if (l->n == 0) return sp_fail(err, SP_EUSAGE, "plot: lot %zu has no values", k);
    if ((st = check_finite(l->x, l->n, "lot value", err))) return st;
    for (size_t i = 0; i < l->n; i++) {
      lo = fmin(lo, l->x[i]);
      hi = fmax(hi, l->x[i]);
    }
  }
  if (spec->pooled && (st = check_curve(spec->pooled, 0, err))) return st;
  double span = hi - lo;
  if (!(span > 0)) span = lo != 0 ? fabs(lo) : 1.0;
  double a = lo - CURVE_PAD * span, b = hi + CURVE_PAD * span;

  chart c;
  ch_init(&c, "fit_lots");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  ch_title(&c, spec->title, &spec->axis);
  axis_text(&spec->axis, "value", t, sizeof t);
  ch_str(&c, "sp_xlabel", t);
  ch_str(&c, "sp_ylabel", "cumulative probability");
  ch_int(&c, "nlots", (long)spec->nlots);
  ch_array_begin(&c, "lot_title", spec->nlots);
  for (size_t k = 0; k < spec->nlots; k++) {
    char lab[SP_PLOT_LABEL_MAX + 32];
    char cnt[SP_PLOT_COUNT_MAX];
    snprintf(lab, sizeof lab, "%s (n = %s)",
             spec->lots[k].label && *spec->lots[k].label ? spec->lots[k].label : "(no id)",
             sp_plot_count_text(spec->lots[k].n, cnt, sizeof cnt));
    ch_array_str(&c, k, lab);
  }
  ch_array_end(&c, spec->nlots, "''");
  ch_int(&c, "has_pooled", spec->pooled != NULL);
  if (spec->pooled) {
    snprintf(t, sizeof t, "pooled fit: %s", curve_label(spec->pooled));
    ch_str(&c, "pooled_title", t);
  } else {
    ch_str(&c, "pooled_title", "");
  }
  for (size_t k = 0; k < spec->nlots && st == SP_OK; k++) {
    double *xs;
    if ((st = sorted_copy(spec->lots[k].x, spec->lots[k].n, &xs, err))) break;
    ch_ecdf(&c, "lot", xs, spec->lots[k].n, a, b);
    free(xs);
  }
  if (st == SP_OK && spec->pooled) ch_curve(&c, spec->pooled, 1, a, b);
  if (st == SP_OK) st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

/* ---- outputs of a run ------------------------------------------------------- */

sp_status sp_plot_run_histogram(const sp_plot_run_hist *spec, const sp_plot_options *opt,
                                sp_plot_output *out, sp_error *err)
{
  if (!spec) return sp_fail(err, SP_EUSAGE, "plot: no chart spec given");
  sp_status st;
  bins b;
  memset(&b, 0, sizeof b);
  if (spec->samples) {
    if (spec->n < 2) return sp_fail(err, SP_EUSAGE, "plot: %zu samples; need 2 or more", spec->n);
    if (spec->nbins > MAX_BINS)
      return sp_fail(err, SP_ELIMIT, "plot: %zu bins asked; at most %d are drawn", spec->nbins,
                     MAX_BINS);
    if ((st = check_finite(spec->samples, spec->n, "samples", err))) return st;
    double *xs;
    if ((st = sorted_copy(spec->samples, spec->n, &xs, err))) return st;
    st = make_bins(xs, spec->n, spec->nbins, 0.0, &b, err);
    free(xs);
    if (st) return st;
  } else {
    if (!spec->edges || !spec->counts || spec->nbins == 0)
      return sp_fail(err, SP_EUSAGE, "plot: give samples, or edges and counts of a histogram");
    if ((st = check_finite(spec->edges, spec->nbins + 1, "edges", err))) return st;
    if ((st = check_finite(spec->counts, spec->nbins, "counts", err))) return st;
    double total = 0;
    for (size_t k = 0; k < spec->nbins; k++) {
      if (!(spec->edges[k + 1] > spec->edges[k]))
        return sp_fail(err, SP_EUSAGE, "plot: histogram edges not ascending at bin %zu", k);
      if (spec->counts[k] < 0)
        return sp_fail(err, SP_EUSAGE, "plot: histogram count %zu is negative", k);
      total += spec->counts[k];
    }
    if (!(total > 0)) return sp_fail(err, SP_EUSAGE, "plot: the histogram is empty");
    b.edges = malloc((spec->nbins + 1) * sizeof *b.edges);
    b.counts = malloc(spec->nbins * sizeof *b.counts);
    if (!b.edges || !b.counts) {
      bins_free(&b);
      return sp_fail(err, SP_ENOMEM, "out of memory");
    }
    memcpy(b.edges, spec->edges, (spec->nbins + 1) * sizeof *b.edges);
    memcpy(b.counts, spec->counts, spec->nbins * sizeof *b.counts);
    b.nb = spec->nbins;
    b.total = total;
  }
  const sp_plot_interval *cov = &spec->coverage;
  int has_cov = cov->level > 0;
  if (has_cov && !(cov->level < 1 && isfinite(cov->lo) && isfinite(cov->hi) && cov->lo <= cov->hi)) {
    bins_free(&b);
    return sp_fail(err, SP_EUSAGE, "plot: coverage interval [%g, %g] at level %g is not valid",
                   cov->lo, cov->hi, cov->level);
  }
  if ((st = check_limits(spec->limits, spec->nlimits, err))) {
    bins_free(&b);
    return st;
  }

  chart c;
  ch_init(&c, "run_hist");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  ch_title(&c, spec->title, &spec->axis);
  axis_text(&spec->axis, "output", t, sizeof t);
  ch_str(&c, "sp_xlabel", t);
  density_text(&spec->axis, t, sizeof t);
  ch_str(&c, "sp_ylabel", t);
  char cnt[SP_PLOT_COUNT_MAX];
  snprintf(t, sizeof t, "%s (n = %s)", spec->samples ? "samples" : "binned samples",
           sp_plot_count_text((unsigned long long)b.total, cnt, sizeof cnt));
  ch_str(&c, "bars_title", t);
  ch_int(&c, "has_cov", has_cov);
  ch_num(&c, "cov_lo", has_cov ? cov->lo : 0.0);
  ch_num(&c, "cov_hi", has_cov ? cov->hi : 0.0);
  snprintf(t, sizeof t, "%g %% coverage interval [%.6g, %.6g]", 100 * cov->level, cov->lo,
           cov->hi);
  ch_str(&c, "cov_title", has_cov ? t : "");
  ch_limits(&c, spec->limits, spec->nlimits);
  ch_bins(&c, &b);
  bins_free(&b);
  st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

sp_status sp_plot_run_exceedance(const sp_plot_exceedance *spec, const sp_plot_options *opt,
                                 sp_plot_output *out, sp_error *err)
{
  if (!spec) return sp_fail(err, SP_EUSAGE, "plot: no chart spec given");
  sp_status st;
  if ((st = check_limits(spec->limits, spec->nlimits, err))) return st;
  chart c;
  ch_init(&c, "run_exceed");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  if (spec->samples) {
    if (spec->n < 2) return sp_fail(err, SP_EUSAGE, "plot: %zu samples; need 2 or more", spec->n);
    if ((st = check_finite(spec->samples, spec->n, "samples", err))) return st;
    double *xs;
    if ((st = sorted_copy(spec->samples, spec->n, &xs, err))) return st;
    size_t n = spec->n;
    if (xs[0] == xs[n - 1]) {
      double v = xs[0];
      free(xs);
      return sp_fail(err, SP_EUSAGE, "plot: all %zu samples equal %g: no exceedance curve to "
                                     "draw", n, v);
    }
    ch_block(&c, "empirical exceedance (n - i)/n at the i-th smallest value", "y P(Y>y)");
    /* At the value xs[j] (the last of its ties), m = n - 1 - j values lie
     * above it.  Walk upwards and keep a point when it is in the tail or
     * its m has shrunk by THIN_RATIO since the last kept one. */
    double last = INFINITY;
    for (size_t j = 0; j + 1 < n; j++) {
      if (xs[j + 1] == xs[j]) continue;
      size_t m = n - 1 - j;
      if (m <= TAIL_ALL || (double)m * THIN_RATIO <= last) {
        ch_row2(&c, xs[j], (double)m / (double)n);
        last = (double)m;
      }
    }
    free(xs);
    char cnt[SP_PLOT_COUNT_MAX];
    snprintf(t, sizeof t, "empirical, n = %s", sp_plot_count_text(n, cnt, sizeof cnt));
  } else {
    if (!spec->values || !spec->exceedance || spec->npoints < 2)
      return sp_fail(err, SP_EUSAGE, "plot: give samples, or 2 or more values with their "
                                     "exceedance probabilities");
    if ((st = check_finite(spec->values, spec->npoints, "values", err))) return st;
    for (size_t i = 0; i < spec->npoints; i++) {
      double q = spec->exceedance[i];
      if (!(q > 0 && q < 1))
        return sp_fail(err, SP_EUSAGE, "plot: exceedance[%zu] = %g is outside (0, 1)", i, q);
      if (i > 0 && !(spec->values[i] >= spec->values[i - 1]))
        return sp_fail(err, SP_EUSAGE, "plot: values not ascending at %zu", i);
    }
    ch_block(&c, "exceedance table", "y P(Y>y)");
    for (size_t i = 0; i < spec->npoints; i++) ch_row2(&c, spec->values[i], spec->exceedance[i]);
    snprintf(t, sizeof t, "from %zu percentiles", spec->npoints);
  }
  ch_str(&c, "curve_title", t);
  ch_title(&c, spec->title, &spec->axis);
  axis_text(&spec->axis, "output", t, sizeof t);
  ch_str(&c, "sp_xlabel", t);
  ch_str(&c, "sp_ylabel", "probability of exceedance P(Y > y)");
  ch_limits(&c, spec->limits, spec->nlimits);
  st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

sp_status sp_plot_run_sensitivity(const sp_plot_sensitivity *spec, const sp_plot_options *opt,
                                  sp_plot_output *out, sp_error *err)
{
  if (!spec || !spec->inputs || !spec->share || spec->ninputs == 0)
    return sp_fail(err, SP_EUSAGE, "plot: no inputs given for a sensitivity chart");
  size_t n = spec->ninputs;
  if (n > SP_PLOT_INPUTS_MAX)
    return sp_fail(err, SP_ELIMIT, "plot: %zu inputs; a sensitivity chart shows at most %d", n,
                   SP_PLOT_INPUTS_MAX);
  double vmax = 0;
  for (size_t i = 0; i < n; i++) {
    double v = spec->share[i], w = spec->share_total ? spec->share_total[i] : 0.0;
    if (!(v >= 0 && v <= 1) || !(w >= 0 && w <= 1))
      return sp_fail(err, SP_EUSAGE, "plot: share of input %zu outside [0, 1]", i);
    vmax = fmax(vmax, fmax(v, w));
  }
  /* Rank by share, largest first; ties keep the caller's order
   * (insertion sort: stable, and n <= SP_PLOT_INPUTS_MAX). */
  size_t order[SP_PLOT_INPUTS_MAX];
  for (size_t i = 0; i < n; i++) {
    size_t j = i;
    while (j > 0 && spec->share[order[j - 1]] < spec->share[i]) {
      order[j] = order[j - 1];
      j--;
    }
    order[j] = i;
  }
  chart c;
  ch_init(&c, "run_sens");
  ch_str(&c, "sp_title", spec->title ? spec->title : "sensitivity");
  ch_str(&c, "sp_xlabel", "share of the output's variance [%]");
  ch_int(&c, "ninputs", (long)n);
  ch_array_begin(&c, "input_name", n);
  for (size_t r = 0; r < n; r++) ch_array_str(&c, r, spec->inputs[order[r]]);
  ch_array_end(&c, n, "''");
  ch_str(&c, "share_title", spec->measure && *spec->measure ? spec->measure : "share of variance");
  ch_int(&c, "has_total", spec->share_total != NULL);
  ch_str(&c, "total_title",
         spec->measure_total && *spec->measure_total ? spec->measure_total : "second measure");
  /* Room right of the longest bar for its value label (up to 115 % so a
   * bar near 100 % keeps its label; the axis tics stop at 100). */
  ch_num(&c, "sp_xmax", fmin(115.0, ceil(100.0 * vmax * 1.2 / 5.0) * 5.0 + 5.0));
  ch_block(&c, "inputs by rank", "rank share share_total label_at");
  for (size_t r = 0; r < n; r++) {
    double sh = spec->share[order[r]];
    double tot = spec->share_total ? spec->share_total[order[r]] : NAN;
    double v[4] = {(double)(r + 1), sh, tot, spec->share_total ? fmax(sh, tot) : sh};
    ch_row(&c, 4, v);
  }
  sp_status st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

sp_status sp_plot_run_convergence(const sp_plot_convergence *spec, const sp_plot_options *opt,
                                  sp_plot_output *out, sp_error *err)
{
  if (!spec || !spec->nsamples || !spec->mean || spec->npoints == 0)
    return sp_fail(err, SP_EUSAGE, "plot: no convergence series given");
  size_t n = spec->npoints;
  sp_status st;
  if ((st = check_finite(spec->nsamples, n, "nsamples", err))) return st;
  if ((st = check_finite(spec->mean, n, "mean", err))) return st;
  if (spec->mean_se && (st = check_finite(spec->mean_se, n, "mean_se", err))) return st;
  if ((spec->lo == NULL) != (spec->hi == NULL))
    return sp_fail(err, SP_EUSAGE, "plot: give both interval ends or neither");
  if (spec->lo && ((st = check_finite(spec->lo, n, "lo", err)) ||
                   (st = check_finite(spec->hi, n, "hi", err))))
    return st;
  for (size_t i = 0; i < n; i++)
    if (!(spec->nsamples[i] > 0) || (i > 0 && !(spec->nsamples[i] > spec->nsamples[i - 1])))
      return sp_fail(err, SP_EUSAGE, "plot: sample counts must be positive and ascending (at "
                                     "point %zu)", i);
  chart c;
  ch_init(&c, "run_conv");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  ch_title(&c, spec->title, &spec->axis);
  ch_str(&c, "sp_xlabel", "number of samples");
  axis_text(&spec->axis, "output", t, sizeof t);
  ch_str(&c, "sp_ylabel", t);
  ch_str(&c, "mean_title", "mean");
  ch_int(&c, "has_se", spec->mean_se != NULL);
  ch_str(&c, "se_title", "mean \u00b1 2 standard errors");
  ch_int(&c, "has_interval", spec->lo != NULL);
  if (spec->level > 0 && spec->level < 1)
    snprintf(t, sizeof t, "ends of the %g %% interval", 100 * spec->level);
  else
    snprintf(t, sizeof t, "interval ends");
  ch_str(&c, "interval_title", t);
  ch_block(&c, "mean", "n mean");
  for (size_t i = 0; i < n; i++) ch_row2(&c, spec->nsamples[i], spec->mean[i]);
  ch_block(&c, "mean -+ 2 standard errors", "n lower upper");
  if (spec->mean_se)
    for (size_t i = 0; i < n; i++)
      ch_row3(&c, spec->nsamples[i], spec->mean[i] - 2 * spec->mean_se[i],
              spec->mean[i] + 2 * spec->mean_se[i]);
  ch_block(&c, "interval ends", "n lo hi");
  if (spec->lo)
    for (size_t i = 0; i < n; i++) ch_row3(&c, spec->nsamples[i], spec->lo[i], spec->hi[i]);
  st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}

sp_status sp_plot_run_scatter(const sp_plot_scatter *spec, const sp_plot_options *opt,
                              sp_plot_output *out, sp_error *err)
{
  if (!spec || !spec->x || !spec->y || spec->npoints == 0)
    return sp_fail(err, SP_EUSAGE, "plot: no points given for a scatter chart");
  if (spec->npoints > SP_PLOT_SCATTER_MAX)
    return sp_fail(err, SP_ELIMIT, "plot: %zu points; a scatter chart shows at most %d "
                                   "(subsample first)", spec->npoints, SP_PLOT_SCATTER_MAX);
  sp_status st;
  if ((st = check_finite(spec->x, spec->npoints, "x", err))) return st;
  if ((st = check_finite(spec->y, spec->npoints, "y", err))) return st;
  if ((st = check_limits(spec->limits, spec->nlimits, err))) return st;
  chart c;
  ch_init(&c, "run_scatter");
  char t[2 * SP_PLOT_LABEL_MAX + 64];
  ch_title(&c, spec->title, &spec->yaxis);
  axis_text(&spec->xaxis, "input", t, sizeof t);
  ch_str(&c, "sp_xlabel", t);
  axis_text(&spec->yaxis, "output", t, sizeof t);
  ch_str(&c, "sp_ylabel", t);
  char c1[SP_PLOT_COUNT_MAX], c2[SP_PLOT_COUNT_MAX];
  if (spec->of_total > spec->npoints)
    snprintf(t, sizeof t, "%s of %s samples", sp_plot_count_text(spec->npoints, c1, sizeof c1),
             sp_plot_count_text(spec->of_total, c2, sizeof c2));
  else
    snprintf(t, sizeof t, "%s samples", sp_plot_count_text(spec->npoints, c1, sizeof c1));
  ch_str(&c, "points_title", t);
  ch_limits(&c, spec->limits, spec->nlimits);
  ch_block(&c, "samples", "x y");
  for (size_t i = 0; i < spec->npoints; i++) ch_row2(&c, spec->x[i], spec->y[i]);
  st = finish(&c, opt, out, err);
  ch_free(&c);
  return st;
}
