/* Shared pieces of the command-line tool. */
#include "cli.h"

#include <dirent.h>
#include <signal.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

int cli_report(const sp_error *err)
{
  char buf[SP_ERROR_MSG_MAX + SP_ERROR_FILE_MAX + 64];
  sp_error_format(err, buf, sizeof buf);
  fprintf(stderr, "scatterprop: error: %s\n", buf);
  if (err->hint[0]) fprintf(stderr, "  hint: %s\n", err->hint);
  return sp_status_exit_code(err->code);
}

int cli_usage(const char *command, const char *fmt, ...)
{
  va_list ap;
  fprintf(stderr, "scatterprop: error: ");
  va_start(ap, fmt);
  vfprintf(stderr, fmt, ap);
  va_end(ap);
  fprintf(stderr, "\n  hint: see 'scatterprop %s --help'\n", command ? command : "");
  return CLI_USAGE;
}

int cli_opt_value(const char *command, int argc, char **argv, int *i,
                  const char *name, const char **value, int *rc)
{
  const char *a = argv[*i];
  size_t n = strlen(name);
  if (strncmp(a, name, n) != 0) return 0;
  if (a[n] == '=') { *value = a + n + 1; return 1; }
  if (a[n] != '\0') return 0;
  if (*i + 1 >= argc) {
    *rc = cli_usage(command, "option %s needs a value", name);
    return -1;
  }
  *i += 1;
  *value = argv[*i];
  return 1;
}

int cli_opt_flag(char **argv, int i, const char *name)
{
  return strcmp(argv[i], name) == 0;
}

int cli_parse_double(const char *command, const char *opt, const char *text,
                     double *out, int *rc)
{
  sp_error e;
  sp_error_clear(&e);
  if (sp_parse_double(text, '.', out, &e) != SP_OK) {
    *rc = cli_usage(command, "%s: %s", opt, e.msg);
    return 0;
  }
  return 1;
}

int cli_parse_u64(const char *command, const char *opt, const char *text,
                  unsigned long long *out, int *rc)
{
  sp_error e;
  sp_error_clear(&e);
  uint64_t v;
  if (sp_parse_count(text, &v, &e) != SP_OK) {
    *rc = cli_usage(command, "%s: %s", opt, e.msg);
    return 0;
  }
  *out = (unsigned long long)v;
  return 1;
}

void cli_print_caution(FILE *out)
{
  /* Wrap the library's paragraph at 76 columns. */
  const char *s = sp_caution_text();
  size_t col = 0;
  while (*s) {
    const char *w = s;
    while (*w && *w != ' ') w++;
    size_t len = (size_t)(w - s);
    if (col > 0 && col + 1 + len > 76) { fputc('\n', out); col = 0; }
    else if (col > 0) { fputc(' ', out); col++; }
    fwrite(s, 1, len, out);
    col += len;
    s = *w ? w + 1 : w;
  }
  fputc('\n', out);
}

/* ---- Ctrl-C ---------------------------------------------------------------- */

static volatile sig_atomic_t sigint_held, sigint_seen;

/* SIGINT (Ctrl-C), SIGTERM (kill, a batch system's time limit) and SIGHUP
 * (the terminal closed) end a command the same way; sigint_seen holds the
 * signal's number. */
static void on_sigint(int sig)
{
  sigint_seen = sig;
  if (sigint_held) return;
  /* Only async-signal-safe calls here: write(2) and _exit(2). */
  static const char msg[] = "\nscatterprop: interrupted; nothing was written\n";
  ssize_t w = write(2, msg, sizeof msg - 1);
  (void)w;
  _exit(128 + sig);
}

void cli_sigint_install(void)
{
  static const int sigs[] = {SIGINT, SIGTERM, SIGHUP};
  for (size_t i = 0; i < sizeof sigs / sizeof sigs[0]; i++) {
    /* A program started with a signal ignored (nohup, a background job of
     * a non-interactive shell) keeps ignoring it, as the shell intended. */
    struct sigaction old;
    if (sigaction(sigs[i], NULL, &old) == 0 && old.sa_handler == SIG_IGN) continue;
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_sigint;
    sigemptyset(&sa.sa_mask);
    /* one signal at a time: a second one while the first is noted waits */
    for (size_t j = 0; j < sizeof sigs / sizeof sigs[0]; j++) sigaddset(&sa.sa_mask, sigs[j]);
    sigaction(sigs[i], &sa, NULL);
  }
}

void cli_sigint_hold(int hold)
{
  sigint_held = hold ? 1 : 0;
  /* An interrupt noted while held and not acted on stays noted. */
}

int cli_interrupted(void)
{
  return sigint_seen != 0;
}

int cli_interrupt_code(void)
{
  return sigint_seen ? 128 + sigint_seen : CLI_INTERRUPTED;
}

/* ---- all-or-nothing outputs -------------------------------------------------- */

static void created_add(cli_created *c, const char *path)
{
  if (c->n == c->cap) {
    size_t cap = c->cap ? 2 * c->cap : 16;
    char **np = realloc(c->paths, cap * sizeof *np);
    if (!np) {
      c->oom = 1;
      return;
    }
    c->paths = np;
    c->cap = cap;
  }
  char *d = strdup(path);
  if (!d) {
    c->oom = 1;
    return;
  }
  c->paths[c->n++] = d;
}

void cli_created_note(cli_created *c, const char *path)
{
  struct stat st;
  if (lstat(path, &st) == 0) return; /* there before: never ours to remove */
  created_add(c, path);
}

static int cmp_str(const void *a, const void *b)
{
  return strcmp(*(char *const *)a, *(char *const *)b);
}

void cli_created_snapshot(cli_created *c, const char *dir)
{
  for (size_t i = 0; i < c->nbefore; i++)
    free(c->before[i]);
  free(c->before);
  c->before = NULL;
  c->nbefore = 0;
  DIR *d = opendir(dir);
  if (!d) return; /* no folder: nothing in it was there before */
  size_t cap = 0;
  for (struct dirent *e; (e = readdir(d)) != NULL;) {
    if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0) continue;
    if (c->nbefore == cap) {
      cap = cap ? 2 * cap : 64;
      char **nb = realloc(c->before, cap * sizeof *nb);
      if (!nb) {
        c->oom = 1;
        break;
      }
      c->before = nb;
    }
    size_t len = strlen(dir) + strlen(e->d_name) + 2;
    char *p = malloc(len);
    if (!p) {
      c->oom = 1;
      break;
    }
    snprintf(p, len, "%s/%s", dir, e->d_name);
    c->before[c->nbefore++] = p;
  }
  closedir(d);
  if (c->nbefore) qsort(c->before, c->nbefore, sizeof *c->before, cmp_str);
}

void cli_created_note_new(cli_created *c, const char *path)
{
  if (!path || !path[0]) return;
  /* A snapshot that could not be taken whole cannot tell new from old:
   * keep the file rather than risk removing one that was there. */
  if (c->oom) return;
  const char *key = path;
  if (c->nbefore && bsearch(&key, c->before, c->nbefore, sizeof *c->before, cmp_str)) return;
  created_add(c, path);
}

size_t cli_created_undo(cli_created *c)
{
  size_t removed = 0;
  for (size_t i = c->n; i-- > 0;) {
    struct stat st;
    if (lstat(c->paths[i], &st) != 0) continue;
    int ok = S_ISDIR(st.st_mode) ? rmdir(c->paths[i]) == 0 : unlink(c->paths[i]) == 0;
    removed += ok;
  }
  return removed;
}

void cli_created_free(cli_created *c)
{
  for (size_t i = 0; i < c->n; i++)
    free(c->paths[i]);
  free(c->paths);
  for (size_t i = 0; i < c->nbefore; i++)
    free(c->before[i]);
  free(c->before);
  memset(c, 0, sizeof *c);
}
