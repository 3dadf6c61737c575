/* Shared helpers for the Check suites: tolerances, assertions on text,
 * whole files read and written, a test's own folder with commands run in
 * it (sh(), cli()), and the suite runner. */
#ifndef SP_TEST_H
#define SP_TEST_H

#include <check.h>
#include <float.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>

#include <gsl/gsl_errno.h>

/* Relative tolerance check; tolerances are multiples of DBL_EPSILON or a
 * stated bound with its reason beside the call. */
#define ASSERT_REL(got, want, rtol)                                          \
  ck_assert_msg(fabs((got) - (want)) <= (rtol) * fabs(want),                 \
                "%s = %.17g, want %.17g (rtol %g)", #got, (double)(got),     \
                (double)(want), (double)(rtol))
#define ASSERT_ABS(got, want, atol)                                          \
  ck_assert_msg(fabs((got) - (want)) <= (atol),                              \
                "%s = %.17g, want %.17g (atol %g)", #got, (double)(got),     \
                (double)(want), (double)(atol))
#define EPS DBL_EPSILON

/* Log relative error (number of correct significant digits), as the NIST
 * StRD documentation defines it: LRE = -log10(|got - want| / |want|). */
static inline double sp_lre(double got, double want)
{
  if (got == want) return 17.0;
  return -log10(fabs(got - want) / fabs(want));
}

/* ---- text ----------------------------------------------------------------- */

/* Fails the test unless the NUL-terminated text holds want (ASSERT_HAS) or
 * does not hold bad (ASSERT_LACKS); a NULL text (a file that could not be
 * read) fails both.  The message names the expression and shows the text;
 * Check itself cuts a message at BUFSIZ (8 KiB with glibc). */
#define ASSERT_HAS(text, want)                                                                     \
  ck_assert_msg((text) && strstr((text), (want)), "%s lacks '%s':\n%s", #text, (want),             \
                (text) ? (text) : "(none)")
#define ASSERT_LACKS(text, bad)                                                                    \
  ck_assert_msg((text) && !strstr((text), (bad)), "%s holds '%s':\n%s", #text, (bad),              \
                (text) ? (text) : "(none)")

/* ---- files ---------------------------------------------------------------- */

/* slurp_len()'s way out: the reason on stderr, then abort(). */
static inline _Noreturn void slurp_fail(const char *path, const char *why)
{
  fprintf(stderr, "slurp: %s: %s\n", path, why);
  abort();
}

/* Reads the whole file at path into a NUL-terminated string; returns owned
 * (free()), or NULL when the file cannot be opened.  *len, when len is not
 * NULL, gets the number of bytes read, which exceeds strlen() when the file
 * holds NUL bytes.  The file is read in chunks to its end, so its size
 * need not be known first.  A read error or a failed allocation is
 * reported on stderr and aborts: that fails the test, and it works outside
 * a test too (check_bad reads its manifest in main, where a Check
 * assertion, even one that holds, ends the program). */
static inline char *slurp_len(const char *path, size_t *len)
{
  FILE *fp = fopen(path, "rb");
  if (!fp) return NULL;
  size_t cap = 4096, n = 0;
  char *s = malloc(cap);
  if (!s) slurp_fail(path, "out of memory");
  for (;;) {
    size_t got = fread(s + n, 1, cap - n - 1, fp); /* leaves room for the NUL */
    n += got;
    if (got == 0) break;
    if (cap - n < 2) {
      char *t = realloc(s, 2 * cap);
      if (!t) slurp_fail(path, "out of memory");
      s = t;
      cap *= 2;
    }
  }
  if (ferror(fp)) slurp_fail(path, "read error");
  fclose(fp);
  s[n] = '\0';
  if (len) *len = n;
  return s;
}

/* slurp_len() for text: the length is not wanted. */
static inline char *slurp(const char *path)
{
  return slurp_len(path, NULL);
}

/* Writes text to the file at path (created, or truncated); any failure
 * fails the test.  Returns path, so a call can name the file it made. */
static inline const char *write_file(const char *path, const char *text)
{
  FILE *fp = fopen(path, "wb");
  ck_assert_msg(fp != NULL, "cannot create %s", path);
  ck_assert_msg(fputs(text, fp) >= 0, "cannot write %s", path);
  ck_assert_msg(fclose(fp) == 0, "cannot write %s", path);
  return path;
}

/* ---- a test's own folder, and commands run in it ----------------------------- */

/* The folder the running test works in; path_in(), sh() and cli() are
 * relative to it.  A suite keeps a mkdtemp() template of its own
 * ("/tmp/sp_<suite>_XXXXXX"), calls test_dir_make() on it in its setup and
 * test_dir_remove() in its teardown. */
static const char *test_dir;

/* What the last sh() or cli() wrote on stdout and stderr (owned here: each
 * call replaces them, test_dir_remove() frees them); NULL when not read. */
static char *out_text, *err_text;

/* Makes the folder from the template tmpl (its last six characters
 * "XXXXXX") and makes it test_dir. */
static inline void test_dir_make(char *tmpl)
{
  ck_assert_msg(mkdtemp(tmpl) != NULL, "mkdtemp %s failed", tmpl);
  test_dir = tmpl;
}

/* Removes the folder dir and all below it (rm -rf), puts the template's
 * "XXXXXX" back so that the next setup can make a fresh folder, and frees
 * out_text and err_text. */
static inline void test_dir_remove(char *dir)
{
  char cmd[1024];
  ck_assert_int_lt(snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir), (int)sizeof cmd);
  ck_assert_int_eq(system(cmd), 0);
  memcpy(dir + strlen(dir) - 6, "XXXXXX", 6);
  test_dir = NULL;
  free(out_text);
  free(err_text);
  out_text = err_text = NULL;
}

/* test_dir "/" rel, in one of four buffers used in turn, so that up to four
 * results can be used together (in one call's arguments, say). */
static inline const char *path_in(const char *rel)
{
  static char path[4][1024];
  static int k;
  k = (k + 1) % 4;
  ck_assert_ptr_nonnull(test_dir);
  ck_assert_int_lt(snprintf(path[k], sizeof path[k], "%s/%s", test_dir, rel), (int)sizeof path[k]);
  return path[k];
}

/* Runs a command line (printf-style) through /bin/sh in test_dir as
 *   cd 'test_dir' && { LINE; } >out.txt 2>err.txt </dev/null
 * and returns its exit status, with out.txt and err.txt read into
 * out_text and err_text (the files of the previous command are deleted
 * first, so nothing stale is read).  A line too long for the buffer, or a command that did
 * not exit normally (killed by a signal), fails the test. */
static inline int sh(const char *fmt, ...) __attribute__((format(printf, 1, 2)));
static inline int sh(const char *fmt, ...)
{
  char line[4096], cmd[8192];
  va_list ap;
  va_start(ap, fmt);
  int n = vsnprintf(line, sizeof line, fmt, ap);
  va_end(ap);
  ck_assert_msg(n >= 0 && (size_t)n < sizeof line, "command line too long: %.200s", line);
  ck_assert_ptr_nonnull(test_dir);
  n = snprintf(cmd, sizeof cmd, "cd '%s' && { %s; } >out.txt 2>err.txt </dev/null", test_dir, line);
  ck_assert_msg(n >= 0 && (size_t)n < sizeof cmd, "command line too long: %.200s", line);
  free(out_text);
  free(err_text);
  out_text = err_text = NULL;
  unlink(path_in("out.txt"));
  unlink(path_in("err.txt"));
  int st = system(cmd);
  out_text = slurp(path_in("out.txt"));
  err_text = slurp(path_in("err.txt"));
  ck_assert_msg(st != -1 && WIFEXITED(st), "command did not exit normally: %s", line);
  return WEXITSTATUS(st);
}

#ifdef SP_CLI_PATH /* the suites' CMake definition: the executable's path */
/* The scatterprop executable, quoted for a command line: sh(SP " fit ..."). */
#define SP "'" SP_CLI_PATH "'"

/* Runs the scatterprop executable with the given argument text (printf-
 * style) in test_dir: sh(SP " ARGS"). */
static inline int cli(const char *fmt, ...) __attribute__((format(printf, 1, 2)));
static inline int cli(const char *fmt, ...)
{
  char args[4096];
  va_list ap;
  va_start(ap, fmt);
  int n = vsnprintf(args, sizeof args, fmt, ap);
  va_end(ap);
  ck_assert_msg(n >= 0 && (size_t)n < sizeof args, "argument text too long: %.200s", args);
  return sh(SP " %s", args);
}
#endif

/* Runs a suite and returns the process exit status. */
static inline int sp_run_suite(Suite *s)
{
  gsl_set_error_handler_off();
  SRunner *sr = srunner_create(s);
  srunner_run_all(sr, CK_NORMAL);
  int failed = srunner_ntests_failed(sr);
  srunner_free(sr);
  return failed == 0 ? EXIT_SUCCESS : EXIT_FAILURE;
}

#endif
