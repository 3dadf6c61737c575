/* scatterprop core: errors, strict number parsing, atomic writes, SHA-256. */
#include "scatterprop/core.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <unistd.h>

#include <sha2.h>

#include "build_info.h"
#include "utf8.h"

void sp_error_clear(sp_error *err)
{
  if (!err) return;
  err->code = SP_OK;
  err->file[0] = '\0';
  err->line = 0;
  err->col = 0;
  err->msg[0] = '\0';
  err->hint[0] = '\0';
}

static sp_status fail_v(sp_error *err, sp_status code, const char *file,
                        long line, long col, const char *fmt, va_list ap)
    __attribute__((format(printf, 6, 0)));
static sp_status fail_v(sp_error *err, sp_status code, const char *file,
                        long line, long col, const char *fmt, va_list ap)
{
  if (!err) return code;
  err->code = code;
  snprintf(err->file, sizeof err->file, "%s", file ? file : "");
  err->line = line;
  err->col = col;
  vsnprintf(err->msg, sizeof err->msg, fmt, ap);
  err->hint[0] = '\0';
  return code;
}

sp_status sp_fail(sp_error *err, sp_status code, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  sp_status s = fail_v(err, code, NULL, 0, 0, fmt, ap);
  va_end(ap);
  return s;
}

sp_status sp_fail_at(sp_error *err, sp_status code, const char *file,
                     long line, long col, const char *fmt, ...)
{
  va_list ap;
  va_start(ap, fmt);
  sp_status s = fail_v(err, code, file, line, col, fmt, ap);
  va_end(ap);
  return s;
}

sp_status sp_error_hint(sp_error *err, const char *fmt, ...)
{
  if (!err) return SP_OK;
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(err->hint, sizeof err->hint, fmt, ap);
  va_end(ap);
  return err->code;
}

int sp_error_format(const sp_error *err, char *buf, size_t n)
{
  if (!err) return snprintf(buf, n, "(no error)");
  if (err->file[0] && err->line > 0 && err->col > 0)
    return snprintf(buf, n, "%s:%ld:%ld: %s", err->file, err->line, err->col, err->msg);
  if (err->file[0] && err->line > 0)
    return snprintf(buf, n, "%s:%ld: %s", err->file, err->line, err->msg);
  if (err->file[0])
    return snprintf(buf, n, "%s: %s", err->file, err->msg);
  return snprintf(buf, n, "%s", err->msg);
}

int sp_status_exit_code(sp_status s)
{
  switch (s) {
  case SP_OK: return 0;
  case SP_EDIFFERS: return 1;
  case SP_EUSAGE: return 2;
  case SP_EDATA: return 3;
  case SP_ELIMIT: return 3;
  case SP_EMODEL: return 4;
  case SP_ENUMERIC: return 5;
  case SP_ENOMEM: return 5;
  case SP_EIO: return 6;
  }
  return 5;
}

const char *sp_status_name(sp_status s)
{
  switch (s) {
  case SP_OK: return "ok";
  case SP_EDIFFERS: return "differs";
  case SP_EUSAGE: return "usage";
  case SP_EDATA: return "bad data";
  case SP_ELIMIT: return "limit exceeded";
  case SP_EMODEL: return "bad model";
  case SP_ENUMERIC: return "numerical failure";
  case SP_ENOMEM: return "out of memory";
  case SP_EIO: return "I/O error";
  }
  return "unknown";
}

/* ---- strict number parsing -------------------------------------------- */

/* Parses a decimal floating-point literal by hand-checking its shape and then
 * converting with strtod in the "C" numeric convention.  The shape check
 * makes the result independent of the process locale: strtod only ever sees
 * digits, '.', 'e', and signs, and the one locale-dependent character (the
 * radix) is rewritten to '.', which every locale we run under (the CLI never
 * calls setlocale) accepts.  A library caller that did switch LC_NUMERIC to a
 * comma locale is handled too: the rewritten text is retried with ','. */
sp_status sp_parse_double(const char *text, char decimal_sep, double *out,
                          sp_error *err)
{
  char buf[128];
  const char *s = text;
  while (*s == ' ' || *s == '\t') s++;
  size_t len = strlen(s);
  while (len > 0 && (s[len - 1] == ' ' || s[len - 1] == '\t')) len--;
  if (len == 0) return sp_fail(err, SP_EDATA, "empty text is not a number");
  if (len >= sizeof buf)
    return sp_fail(err, SP_EDATA, "'%.*s...' is not a number (too long)", (int)sp_utf8_cut(s, 40),
                   s);

  size_t i = 0, o = 0, ndig = 0, nsep = 0;
  int ok = 1;
  if (s[i] == '+' || s[i] == '-') buf[o++] = s[i++];
  for (; i < len && ok; i++) {
    char c = s[i];
    if (c >= '0' && c <= '9') { buf[o++] = c; ndig++; }
    else if (c == decimal_sep) { if (nsep++) ok = 0; buf[o++] = '.'; }
    else if (c == 'e' || c == 'E') break;
    else ok = 0;
  }
  if (ok && ndig > 0 && i < len) { /* exponent */
    buf[o++] = 'e';
    i++;
    if (i < len && (s[i] == '+' || s[i] == '-')) buf[o++] = s[i++];
    size_t edig = 0;
    for (; i < len; i++) {
      if (s[i] >= '0' && s[i] <= '9') { buf[o++] = s[i]; edig++; }
      else { ok = 0; break; }
    }
    if (edig == 0) ok = 0;
  }
  buf[o] = '\0';
  if (!ok || ndig == 0)
    return sp_fail(err, SP_EDATA, "'%.*s' is not a number", (int)len, s);

  errno = 0;
  char *end = NULL;
  double v = strtod(buf, &end);
  if (*end != '\0') { /* a caller switched LC_NUMERIC to a comma locale */
    char *dot = strchr(buf, '.');
    if (dot) *dot = ',';
    errno = 0;
    v = strtod(buf, &end);
  }
  if (*end != '\0')
    return sp_fail(err, SP_EDATA, "'%.*s' is not a number", (int)len, s);
  if (errno == ERANGE && (v == HUGE_VAL || v == -HUGE_VAL))
    return sp_fail(err, SP_EDATA, "'%.*s' is out of the range of a double", (int)len, s);
  if (!isfinite(v))
    return sp_fail(err, SP_EDATA, "'%.*s' is not a finite number", (int)len, s);
  *out = v;
  return SP_OK;
}

sp_status sp_parse_u64(const char *text, uint64_t *out, sp_error *err)
{
  const char *s = text;
  if (!*s) return sp_fail(err, SP_EUSAGE, "empty text is not a whole number");
  uint64_t v = 0;
  for (; *s; s++) {
    if (*s < '0' || *s > '9')
      return sp_fail(err, SP_EUSAGE, "'%s' is not a whole number", text);
    unsigned d = (unsigned)(*s - '0');
    if (v > (UINT64_MAX - d) / 10)
      return sp_fail(err, SP_EUSAGE, "'%s' is too large", text);
    v = v * 10 + d;
  }
  *out = v;
  return SP_OK;
}

sp_status sp_parse_count(const char *text, uint64_t *out, sp_error *err)
{
  if (!strpbrk(text, "eE.")) return sp_parse_u64(text, out, err);
  const char *s = text;
  uint64_t v = 0;
  int ndig = 0, frac = 0, seen_dot = 0;
  for (; *s && *s != 'e' && *s != 'E'; s++) {
    if (*s == '.' && !seen_dot) {
      seen_dot = 1;
      continue;
    }
    if (*s < '0' || *s > '9')
      return sp_fail(err, SP_EUSAGE, "'%s' is not a whole number", text);
    unsigned d = (unsigned)(*s - '0');
    if (v > (UINT64_MAX - d) / 10) return sp_fail(err, SP_EUSAGE, "'%s' is too large", text);
    v = v * 10 + d;
    ndig++;
    frac += seen_dot;
  }
  if (ndig == 0) return sp_fail(err, SP_EUSAGE, "'%s' is not a whole number", text);
  long e = 0;
  if (*s) {
    s++;
    if (*s == '+') s++;
    if (!*s) return sp_fail(err, SP_EUSAGE, "'%s' is not a whole number", text);
    for (; *s; s++) {
      if (*s < '0' || *s > '9')
        return sp_fail(err, SP_EUSAGE, "'%s' is not a whole number", text);
      e = e * 10 + (*s - '0');
      if (e > 1000) return sp_fail(err, SP_EUSAGE, "'%s' is too large", text);
    }
  }
  long net = e - frac;
  for (; net < 0; net++) {
    if (v % 10 != 0)
      return sp_fail(err, SP_EUSAGE, "'%s' is not a whole number", text);
    v /= 10;
  }
  for (; net > 0 && v != 0; net--) {
    if (v > UINT64_MAX / 10) return sp_fail(err, SP_EUSAGE, "'%s' is too large", text);
    v *= 10;
  }
  *out = v;
  return SP_OK;
}

/* ---- atomic output files ---------------------------------------------- */

struct sp_outfile {
  FILE *fp;
  char *path;
  char *tmp;
  int overwrite;
};

sp_outfile *sp_outfile_open(const char *path, int overwrite, sp_error *err)
{
  struct stat st;
  if (!overwrite && stat(path, &st) == 0) {
    sp_fail(err, SP_EIO, "%s: file exists; refusing to overwrite it", path);
    sp_error_hint(err, "give --force to replace it, or choose another name");
    return NULL;
  }
  sp_outfile *f = calloc(1, sizeof *f);
  if (!f) { sp_fail(err, SP_ENOMEM, "out of memory"); return NULL; }
  size_t n = strlen(path);
  f->path = malloc(n + 1);
  f->tmp = malloc(n + 16);
  if (!f->path || !f->tmp) {
    sp_fail(err, SP_ENOMEM, "out of memory");
    free(f->path); free(f->tmp); free(f);
    return NULL;
  }
  memcpy(f->path, path, n + 1);
  f->overwrite = overwrite;
  /* mkstemp template: six X characters, spelled out to keep markers greppable. */
  snprintf(f->tmp, n + 16, "%s.tmp-%s", path, "XX" "XX" "XX");
  int fd = mkstemp(f->tmp);
  if (fd < 0) {
    sp_fail(err, SP_EIO, "%s: cannot create: %s", path, strerror(errno));
    free(f->path); free(f->tmp); free(f);
    return NULL;
  }
  fchmod(fd, 0644);
  f->fp = fdopen(fd, "wb");
  if (!f->fp) {
    sp_fail(err, SP_EIO, "%s: cannot open: %s", path, strerror(errno));
    close(fd); unlink(f->tmp);
    free(f->path); free(f->tmp); free(f);
    return NULL;
  }
  return f;
}

FILE *sp_outfile_stream(sp_outfile *f) { return f ? f->fp : NULL; }

static void outfile_release(sp_outfile *f)
{
  free(f->path);
  free(f->tmp);
  free(f);
}

/* Syncs the folder that holds path, so that a rename into it is on disk.
 * Best effort: some file systems refuse fsync on a folder (EINVAL), and
 * the file itself was synced already. */
static void sync_parent(const char *path)
{
  const char *slash = strrchr(path, '/');
  char dir[4096];
  if (!slash)
    snprintf(dir, sizeof dir, ".");
  else if (slash == path)
    snprintf(dir, sizeof dir, "/");
  else if ((size_t)(slash - path) < sizeof dir)
    snprintf(dir, sizeof dir, "%.*s", (int)(slash - path), path);
  else
    return;
  int fd = open(dir, O_RDONLY);
  if (fd < 0) return;
  (void)fsync(fd);
  close(fd);
}

/* Puts tmp in place at path without ever replacing a file there: link(2)
 * fails with EEXIST when one appeared since sp_outfile_open looked.  A file
 * system without hard links falls back to a last look and rename(2).
 * Returns 0 or an errno value (EEXIST: refused). */
static int place_new(const char *tmp, const char *path)
{
  if (link(tmp, path) == 0) {
    unlink(tmp);
    return 0;
  }
  int e = errno;
  if (e == EEXIST) return EEXIST;
  if (e != EPERM && e != ENOTSUP && e != EOPNOTSUPP && e != EMLINK && e != EXDEV) return e;
  struct stat st;
  if (lstat(path, &st) == 0) return EEXIST;
  return rename(tmp, path) == 0 ? 0 : errno;
}

sp_status sp_outfile_commit(sp_outfile *f, sp_error *err)
{
  if (!f) return sp_fail(err, SP_EUSAGE, "sp_outfile_commit: no file");
  int bad = ferror(f->fp) != 0;
  if (fflush(f->fp) != 0) bad = 1;
  if (!bad && fsync(fileno(f->fp)) != 0) bad = 1;
  int saved = errno;
  if (fclose(f->fp) != 0) { bad = 1; saved = errno; }
  if (!bad) {
    int e = f->overwrite ? (rename(f->tmp, f->path) == 0 ? 0 : errno) : place_new(f->tmp, f->path);
    if (e == EEXIST && !f->overwrite) {
      unlink(f->tmp);
      sp_fail(err, SP_EIO,
              "%s: file exists (made while this one was written); refusing to "
              "overwrite it",
              f->path);
      sp_error_hint(err, "give --force to replace it, or choose another name");
      outfile_release(f);
      return SP_EIO;
    }
    if (e != 0) {
      bad = 1;
      saved = e;
    }
  }
  if (bad) {
    unlink(f->tmp);
    sp_fail(err, SP_EIO, "%s: write failed: %s", f->path, strerror(saved));
    outfile_release(f);
    return SP_EIO;
  }
  sync_parent(f->path);
  outfile_release(f);
  return SP_OK;
}

void sp_outfile_abort(sp_outfile *f)
{
  if (!f) return;
  fclose(f->fp);
  unlink(f->tmp);
  outfile_release(f);
}

sp_status sp_file_write_atomic(const char *path, const void *data, size_t n,
                               int overwrite, sp_error *err)
{
  sp_outfile *f = sp_outfile_open(path, overwrite, err);
  if (!f) return err ? err->code : SP_EIO;
  if (n > 0 && fwrite(data, 1, n, f->fp) != n) {
    int e = errno;
    sp_outfile_abort(f);
    return sp_fail(err, SP_EIO, "%s: write failed: %s", path, strerror(e));
  }
  return sp_outfile_commit(f, err);
}

/* ---- SHA-256 ------------------------------------------------------------ */

static void hex_digest(const uint8_t d[SHA256_DIGEST_LENGTH], char hex[SP_SHA256_HEX_LEN])
{
  static const char digits[] = "0123456789abcdef";
  for (int i = 0; i < SHA256_DIGEST_LENGTH; i++) {
    hex[2 * i] = digits[d[i] >> 4];
    hex[2 * i + 1] = digits[d[i] & 15];
  }
  hex[64] = '\0';
}

_Static_assert(sizeof(sp_sha256_ctx) >= sizeof(SHA2_CTX),
               "sp_sha256_ctx must hold libmd's SHA2_CTX");

void sp_sha256_init(sp_sha256_ctx *c) { SHA256Init((SHA2_CTX *)(void *)c); }

void sp_sha256_update(sp_sha256_ctx *c, const void *data, size_t n)
{
  SHA256Update((SHA2_CTX *)(void *)c, data, n);
}

void sp_sha256_final(sp_sha256_ctx *c, char hex[SP_SHA256_HEX_LEN])
{
  uint8_t d[SHA256_DIGEST_LENGTH];
  SHA256Final(d, (SHA2_CTX *)(void *)c);
  hex_digest(d, hex);
}

void sp_sha256_buffer(const void *data, size_t n, char hex[SP_SHA256_HEX_LEN])
{
  SHA2_CTX ctx;
  uint8_t d[SHA256_DIGEST_LENGTH];
  SHA256Init(&ctx);
  SHA256Update(&ctx, data, n);
  SHA256Final(d, &ctx);
  hex_digest(d, hex);
}

FILE *sp_file_open_input(const char *path, const char *what, uint64_t max_bytes,
                         sp_error *err)
{
  /* O_NONBLOCK: opening a FIFO for reading would otherwise wait for a
   * writer.  It is cleared again before the file is read. */
  int fd = open(path, O_RDONLY | O_NONBLOCK | O_CLOEXEC);
  if (fd < 0) {
    int e = errno;
    sp_fail(err, SP_EIO, "%s: cannot open: %s", path, strerror(e));
    if (e == ENOENT)
      sp_error_hint(err, "check the path (it is relative to the current folder)");
    else if (e == EACCES)
      sp_error_hint(err, "the file's permissions do not let you read it");
    return NULL;
  }
  struct stat st;
  if (fstat(fd, &st) != 0) {
    int e = errno;
    close(fd);
    sp_fail(err, SP_EIO, "%s: cannot open: %s", path, strerror(e));
    return NULL;
  }
  if (S_ISDIR(st.st_mode)) {
    close(fd);
    sp_fail(err, SP_EIO, "%s: is a folder, not a %s", path, what);
    sp_error_hint(err, "give the path of a %s", what);
    return NULL;
  }
  if (!S_ISREG(st.st_mode)) {
    close(fd);
    sp_fail(err, SP_EIO, "%s: is not a regular file (a pipe, a device or a socket)", path);
    sp_error_hint(err, "copy the %s to a regular file first: a pipe or a device cannot be "
                       "size-checked, hashed for the records or read again by replay", what);
    return NULL;
  }
  if (max_bytes > 0 && (uint64_t)st.st_size > max_bytes) {
    close(fd);
    sp_fail(err, SP_ELIMIT, "%s: the %s is larger than %llu bytes (it has %llu)", path, what,
            (unsigned long long)max_bytes, (unsigned long long)st.st_size);
    sp_error_hint(err, "docs/limits.md lists the limits; is this the file you meant?");
    return NULL;
  }
  int fl = fcntl(fd, F_GETFL);
  FILE *fp = fl < 0 || fcntl(fd, F_SETFL, fl & ~O_NONBLOCK) < 0 ? NULL : fdopen(fd, "rb");
  if (!fp) {
    int e = errno;
    close(fd);
    sp_fail(err, SP_EIO, "%s: cannot open: %s", path, strerror(e));
  }
  return fp;
}

sp_status sp_sha256_file(const char *path, char hex[SP_SHA256_HEX_LEN],
                         uint64_t *size, sp_error *err)
{
  sp_error local;
  sp_error_clear(&local);
  sp_error *e0 = err ? err : &local;
  FILE *fp = sp_file_open_input(path, "file", 0, e0);
  if (!fp) return e0->code;
  SHA2_CTX ctx;
  SHA256Init(&ctx);
  unsigned char buf[1 << 16];
  uint64_t total = 0;
  size_t got;
  while ((got = fread(buf, 1, sizeof buf, fp)) > 0) {
    SHA256Update(&ctx, buf, got);
    total += got;
  }
  int bad = ferror(fp);
  int e = errno;
  fclose(fp);
  if (bad) return sp_fail(err, SP_EIO, "%s: read failed: %s", path, strerror(e));
  uint8_t d[SHA256_DIGEST_LENGTH];
  SHA256Final(d, &ctx);
  hex_digest(d, hex);
  if (size) *size = total;
  return SP_OK;
}

/* ---- version ----------------------------------------------------------- */

const char *sp_version(void) { return SP_BUILD_VERSION; }
const char *sp_git_revision(void) { return SP_BUILD_GIT_REVISION; }
const char *sp_build_compiler(void) { return SP_BUILD_COMPILER; }
const char *sp_build_gsl_version(void) { return SP_BUILD_GSL_VERSION; }

const char *sp_caution_text(void)
{
  return "CAUTION: these are statistical estimates from sampled data and an "
         "assumed model, not a design approval. Follow the applicable codes and "
         "standards, and have a qualified engineer review every result before "
         "it informs a structural decision.";
}
