/* The bad-input corpus: every case of tests/bad/MANIFEST runs the
 * scatterprop executable (SP_CLI_PATH) in a fresh temporary folder that
 * holds a copy of tests/bad/, and checks
 *  - the exit code (the documented class: 2 usage, 3 data, 4 model,
 *    5 numeric, 6 I/O);
 *  - the message fragments on stderr (file:line:col where they apply) and
 *    on stdout;
 *  - that the program was not killed by a signal and did not hang (a case
 *    is killed after SP_BAD_TIMEOUT seconds, default 120);
 *  - that no file was left behind: the folder holds exactly the copied
 *    files afterwards (so no output file and no *.tmp-* temporary), unless
 *    the case names a file it creates.
 * Before any case runs, every failing case must assert a position
 * (FILE:LINE: or FILE:LINE:COL: in an err line) or say with 'nopos REASON'
 * why none applies (an option's value, a missing file, a whole column).
 * The manifest's format is described at its top.  SP_CLI_WRAPPER (for
 * example "valgrind --error-exitcode=99 --leak-check=full -q") is put
 * before the program when set, so the same cases check the error paths
 * for leaks; its words are split on blanks.  Cases marked 'slow' (the
 * multi-megabyte limit inputs) are skipped under a wrapper. */
#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "sp_test.h"

#define BAD_DIR SP_SOURCE_DIR "/tests/bad"
#define MAX_CASES 512
#define MAX_LINES 16
#define MAX_ARGS 64

typedef struct {
  char *name;
  long line;                 /* where the case starts in the manifest */
  char *run;                 /* the arguments after the program name */
  int exit_code;
  char *err[MAX_LINES];      /* fragments that stderr must contain */
  size_t nerr;
  char *out[MAX_LINES];      /* fragments that stdout must contain */
  size_t nout;
  char *noout[MAX_LINES];    /* fragments that stdout must not contain */
  size_t nnoout;
  char *gen_path[MAX_LINES]; /* files generated before the run */
  char *gen_text[MAX_LINES];
  size_t ngen;
  char *creates[MAX_LINES];  /* files the run may leave */
  size_t ncreates;
  int slow;                  /* megabytes of input: skipped under SP_CLI_WRAPPER */
  char *nopos;               /* why no err line has a position, or NULL */
} bad_case;

static bad_case cases[MAX_CASES];
static size_t ncases;

static char *dupstr(const char *s, size_t n)
{
  char *d = malloc(n + 1);
  if (!d) {
    fprintf(stderr, "check_bad: out of memory\n");
    exit(EXIT_FAILURE);
  }
  memcpy(d, s, n);
  d[n] = '\0';
  return d;
}

/* ---- the manifest ---------------------------------------------------------- */

static void load_manifest(void)
{
  size_t len;
  char *text = slurp_len(BAD_DIR "/MANIFEST", &len);
  if (!text) {
    fprintf(stderr, "check_bad: cannot read %s/MANIFEST\n", BAD_DIR);
    exit(EXIT_FAILURE);
  }
  bad_case *c = NULL;
  long lineno = 0;
  for (char *p = text; *p;) {
    char *e = strchr(p, '\n');
    size_t n = e ? (size_t)(e - p) : strlen(p);
    char *line = dupstr(p, n);
    p += n + (e ? 1 : 0);
    lineno++;
    if (line[0] == '#' || line[0] == '\0') {
      if (line[0] == '\0') c = NULL;
      free(line);
      continue;
    }
    char *sp = strchr(line, ' ');
    const char *key = line, *val = "";
    if (sp) {
      *sp = '\0';
      val = sp + 1;
      while (*val == ' ') val++;
    }
    if (strcmp(key, "case") == 0) {
      if (ncases >= MAX_CASES) {
        fprintf(stderr, "check_bad: more than %d cases\n", MAX_CASES);
        exit(EXIT_FAILURE);
      }
      c = &cases[ncases++];
      memset(c, 0, sizeof *c);
      c->name = dupstr(val, strlen(val));
      c->line = lineno;
      c->exit_code = -1;
    } else if (!c) {
      fprintf(stderr, "check_bad: MANIFEST:%ld: '%s' outside a case\n", lineno, key);
      exit(EXIT_FAILURE);
    } else if (strcmp(key, "run") == 0) {
      c->run = dupstr(val, strlen(val));
    } else if (strcmp(key, "exit") == 0) {
      c->exit_code = atoi(val);
    } else if (strcmp(key, "err") == 0 && c->nerr < MAX_LINES) {
      c->err[c->nerr++] = dupstr(val, strlen(val));
    } else if (strcmp(key, "out") == 0 && c->nout < MAX_LINES) {
      c->out[c->nout++] = dupstr(val, strlen(val));
    } else if (strcmp(key, "noout") == 0 && c->nnoout < MAX_LINES) {
      c->noout[c->nnoout++] = dupstr(val, strlen(val));
    } else if (strcmp(key, "nopos") == 0) {
      if (!*val) {
        fprintf(stderr, "check_bad: MANIFEST:%ld: nopos needs a reason\n", lineno);
        exit(EXIT_FAILURE);
      }
      c->nopos = dupstr(val, strlen(val));
    } else if (strcmp(key, "slow") == 0) {
      c->slow = 1;
    } else if (strcmp(key, "creates") == 0 && c->ncreates < MAX_LINES) {
      c->creates[c->ncreates++] = dupstr(val, strlen(val));
    } else if (strcmp(key, "gen") == 0 && c->ngen < MAX_LINES) {
      const char *s2 = strchr(val, ' ');
      if (!s2) {
        fprintf(stderr, "check_bad: MANIFEST:%ld: gen needs a path and a text\n", lineno);
        exit(EXIT_FAILURE);
      }
      c->gen_path[c->ngen] = dupstr(val, (size_t)(s2 - val));
      c->gen_text[c->ngen++] = dupstr(s2 + 1, strlen(s2 + 1));
    } else {
      fprintf(stderr, "check_bad: MANIFEST:%ld: unknown key '%s'\n", lineno, key);
      exit(EXIT_FAILURE);
    }
    free(line);
  }
  free(text);
  for (size_t i = 0; i < ncases; i++)
    if (!cases[i].run || cases[i].exit_code < 0) {
      fprintf(stderr, "check_bad: MANIFEST:%ld: case %s needs 'run' and 'exit'\n",
              cases[i].line, cases[i].name);
      exit(EXIT_FAILURE);
    }
}

/* Does s hold a position, "FILE:LINE:" (FILE not ending in a blank)? */
static int has_position(const char *s)
{
  for (const char *p = strchr(s, ':'); p; p = strchr(p + 1, ':')) {
    if (p == s || p[-1] == ' ') continue;
    size_t nd = strspn(p + 1, "0123456789");
    if (nd > 0 && p[1 + nd] == ':') return 1;
  }
  return 0;
}

/* Every failing case says where, or why it cannot. */
static void check_positions(void)
{
  for (size_t i = 0; i < ncases; i++) {
    const bad_case *c = &cases[i];
    if (c->exit_code == 0) continue;
    int pos = 0;
    for (size_t k = 0; k < c->nerr && !pos; k++) pos = has_position(c->err[k]);
    if (pos && c->nopos) {
      fprintf(stderr, "check_bad: MANIFEST:%ld: case %s has a position and a 'nopos'\n", c->line,
              c->name);
      exit(EXIT_FAILURE);
    }
    if (!pos && !c->nopos) {
      fprintf(stderr,
              "check_bad: MANIFEST:%ld: case %s fails (exit %d) but no err line has a "
              "FILE:LINE: position; add one, or a 'nopos REASON' line\n",
              c->line, c->name, c->exit_code);
      exit(EXIT_FAILURE);
    }
  }
}

/* ---- generated files ----------------------------------------------------------
 * The text of a 'gen' line, with escapes \n \t \r \\ \0 and repetitions
 * %{COUNT:TEXT%} (TEXT with the same escapes, no nesting). */

static void put_escaped(FILE *fp, const char *s, size_t n)
{
  for (size_t i = 0; i < n; i++) {
    if (s[i] == '\\' && i + 1 < n) {
      char c = s[++i];
      fputc(c == 'n' ? '\n' : c == 't' ? '\t' : c == 'r' ? '\r' : c == '0' ? '\0' : c, fp);
    } else {
      fputc(s[i], fp);
    }
  }
}

static void generate(const char *path, const char *spec)
{
  FILE *fp = fopen(path, "wb");
  ck_assert_msg(fp != NULL, "cannot create %s", path);
  const char *s = spec;
  while (*s) {
    const char *r = strstr(s, "%{");
    if (!r) {
      put_escaped(fp, s, strlen(s));
      break;
    }
    put_escaped(fp, s, (size_t)(r - s));
    char *colon;
    long count = strtol(r + 2, &colon, 10);
    const char *end = strstr(r, "%}");
    ck_assert_msg(*colon == ':' && end != NULL, "bad repetition in gen %s", path);
    for (long k = 0; k < count; k++) put_escaped(fp, colon + 1, (size_t)(end - colon - 1));
    s = end + 2;
  }
  ck_assert_int_eq(fclose(fp), 0);
}

/* ---- folders --------------------------------------------------------------- */

static void copy_tree(const char *from, const char *to)
{
  DIR *d = opendir(from);
  ck_assert_msg(d != NULL, "cannot open %s", from);
  struct dirent *de;
  while ((de = readdir(d)) != NULL) {
    if (de->d_name[0] == '.' || strcmp(de->d_name, "MANIFEST") == 0) continue;
    char a[4096], b[4096];
    snprintf(a, sizeof a, "%s/%s", from, de->d_name);
    snprintf(b, sizeof b, "%s/%s", to, de->d_name);
    struct stat st;
    ck_assert_int_eq(stat(a, &st), 0);
    if (S_ISDIR(st.st_mode)) {
      ck_assert_int_eq(mkdir(b, 0755), 0);
      copy_tree(a, b);
    } else {
      size_t n;
      char *data = slurp_len(a, &n);
      ck_assert_ptr_nonnull(data);
      FILE *fp = fopen(b, "wb");
      ck_assert_ptr_nonnull(fp);
      ck_assert_uint_eq(fwrite(data, 1, n, fp), n);
      ck_assert_int_eq(fclose(fp), 0);
      chmod(b, st.st_mode & 0777);
      free(data);
    }
  }
  closedir(d);
}

/* Appends every path under dir (relative to root, folders ending in '/')
 * to a newline-separated list. */
static void list_tree(const char *root, const char *rel, char **list, size_t *len, size_t *cap)
{
  char dir[4096];
  snprintf(dir, sizeof dir, "%s%s%s", root, rel[0] ? "/" : "", rel);
  DIR *d = opendir(dir);
  if (!d) return;
  struct dirent *de;
  while ((de = readdir(d)) != NULL) {
    if (strcmp(de->d_name, ".") == 0 || strcmp(de->d_name, "..") == 0) continue;
    char r2[4096], full[8192];
    snprintf(r2, sizeof r2, "%s%s%s", rel, rel[0] ? "/" : "", de->d_name);
    snprintf(full, sizeof full, "%s/%s", root, r2);
    struct stat st;
    int isdir = lstat(full, &st) == 0 && S_ISDIR(st.st_mode);
    size_t n = strlen(r2) + 3;
    while (*len + n + 1 > *cap) *list = realloc(*list, *cap *= 2);
    *len += (size_t)sprintf(*list + *len, "%s%s\n", r2, isdir ? "/" : "");
    if (isdir) list_tree(root, r2, list, len, cap);
  }
  closedir(d);
}

static char *tree_listing(const char *root)
{
  size_t cap = 4096, len = 0;
  char *list = malloc(cap);
  list[0] = '\0';
  list_tree(root, "", &list, &len, &cap);
  return list;
}

static int listed(const char *list, const char *path)
{
  size_t n = strlen(path);
  for (const char *p = list; *p;) {
    const char *e = strchr(p, '\n');
    if ((size_t)(e - p) == n && strncmp(p, path, n) == 0) return 1;
    p = e + 1;
  }
  return 0;
}

static void remove_tree(const char *path)
{
  struct stat st;
  if (lstat(path, &st) != 0) return;
  if (S_ISDIR(st.st_mode)) {
    DIR *d = opendir(path);
    struct dirent *de;
    while (d && (de = readdir(d)) != NULL) {
      if (strcmp(de->d_name, ".") == 0 || strcmp(de->d_name, "..") == 0) continue;
      char sub[4096];
      snprintf(sub, sizeof sub, "%s/%s", path, de->d_name);
      remove_tree(sub);
    }
    if (d) closedir(d);
    rmdir(path);
  } else {
    unlink(path);
  }
}

/* ---- running ---------------------------------------------------------------- */

static size_t split_words(char *s, char **argv, size_t max)
{
  size_t n = 0;
  for (char *t = strtok(s, " \t"); t && n < max; t = strtok(NULL, " \t")) argv[n++] = t;
  return n;
}

/* Runs argv in dir with stdout/stderr into the given files; returns the
 * wait status, or -1 after killing a run that exceeded the timeout. */
static int run_in(const char *dir, char **argv, const char *out, const char *err, int timeout)
{
  pid_t pid = fork();
  ck_assert_int_ge(pid, 0);
  if (pid == 0) {
    int fi = open("/dev/null", O_RDONLY);
    int fo = open(out, O_WRONLY | O_CREAT | O_TRUNC, 0644);
    int fe = open(err, O_WRONLY | O_CREAT | O_TRUNC, 0644);
    if (fi < 0 || fo < 0 || fe < 0 || chdir(dir) != 0) _exit(126);
    dup2(fi, 0);
    dup2(fo, 1);
    dup2(fe, 2);
    execvp(argv[0], argv);
    _exit(127);
  }
  int st = 0;
  struct timespec t0, now, nap = {0, 10000000};
  clock_gettime(CLOCK_MONOTONIC, &t0);
  for (;;) {
    pid_t w = waitpid(pid, &st, WNOHANG);
    if (w == pid) return st;
    ck_assert_int_eq(w, 0);
    clock_gettime(CLOCK_MONOTONIC, &now);
    if (now.tv_sec - t0.tv_sec > timeout) {
      kill(pid, SIGKILL);
      waitpid(pid, &st, 0);
      return -1;
    }
    nanosleep(&nap, NULL);
  }
}

START_TEST(test_case)
{
  const bad_case *c = &cases[_i];
  const char *wrapper = getenv("SP_CLI_WRAPPER");
  /* The limit cases feed megabytes to the tool; under a wrapper such as
   * valgrind, or in the sanitizer build (SP_BAD_SKIP_SLOW, set by
   * tests/CMakeLists.txt), they take minutes.  The plain build runs them. */
  const char *skip = getenv("SP_BAD_SKIP_SLOW");
  if (c->slow && ((wrapper && *wrapper) || (skip && *skip == '1'))) return;
  char tmpl[] = "/tmp/sp_bad_XXXXXX";
  ck_assert_ptr_nonnull(mkdtemp(tmpl));
  char dir[4096], out[4096], err[4096];
  snprintf(dir, sizeof dir, "%s/work", tmpl);
  snprintf(out, sizeof out, "%s/stdout", tmpl);
  snprintf(err, sizeof err, "%s/stderr", tmpl);
  ck_assert_int_eq(mkdir(dir, 0755), 0);
  copy_tree(BAD_DIR, dir);
  for (size_t g = 0; g < c->ngen; g++) {
    char path[8192];
    snprintf(path, sizeof path, "%s/%s", dir, c->gen_path[g]);
    generate(path, c->gen_text[g]);
  }
  char *before = tree_listing(dir);

  char *words = dupstr(c->run, strlen(c->run));
  char *wrap = NULL;
  char *argv[MAX_ARGS + 2];
  size_t argc = 0;
  if (wrapper && *wrapper) {
    wrap = dupstr(wrapper, strlen(wrapper));
    argc = split_words(wrap, argv, MAX_ARGS / 2);
  }
  argv[argc++] = (char *)SP_CLI_PATH;
  argc += split_words(words, argv + argc, MAX_ARGS - argc);
  argv[argc] = NULL;
  const char *tv = getenv("SP_BAD_TIMEOUT");
  int timeout = tv && atoi(tv) > 0 ? atoi(tv) : 120;
  int st = run_in(dir, argv, out, err, timeout);
  char *otext = slurp(out), *etext = slurp(err);

  ck_assert_msg(st != -1, "case %s (MANIFEST:%ld) did not finish within %d s", c->name, c->line,
                timeout);
  ck_assert_msg(!WIFSIGNALED(st), "case %s (MANIFEST:%ld) was killed by signal %d:\n%.2000s",
                c->name, c->line, WIFSIGNALED(st) ? WTERMSIG(st) : 0, etext);
  ck_assert_msg(WIFEXITED(st) && WEXITSTATUS(st) == c->exit_code,
                "case %s (MANIFEST:%ld): exit %d, want %d; stderr:\n%.2000s", c->name, c->line,
                WIFEXITED(st) ? WEXITSTATUS(st) : -1, c->exit_code, etext);
  for (size_t k = 0; k < c->nerr; k++)
    ck_assert_msg(strstr(etext, c->err[k]) != NULL,
                  "case %s (MANIFEST:%ld): stderr lacks '%s':\n%.2000s", c->name, c->line, c->err[k],
                  etext);
  /* A failure always says so, in the tool's form. */
  if (c->exit_code != 0)
    ck_assert_msg(strstr(etext, "scatterprop: error: ") != NULL,
                  "case %s (MANIFEST:%ld): no 'scatterprop: error: ' line:\n%.2000s", c->name,
                  c->line, etext);
  /* A failed summary of a CSV file, and every usage error, also says
   * what to do about it. */
  if (c->exit_code != 0 && (strncmp(c->run, "summary ", 8) == 0 || c->exit_code == 2))
    ck_assert_msg(strstr(etext, "\n  hint: ") != NULL, "case %s (MANIFEST:%ld): no hint:\n%.2000s",
                  c->name, c->line, etext);
  for (size_t k = 0; k < c->nout; k++)
    ck_assert_msg(strstr(otext, c->out[k]) != NULL,
                  "case %s (MANIFEST:%ld): stdout lacks '%s':\n%.2000s", c->name, c->line, c->out[k],
                  otext);
  for (size_t k = 0; k < c->nnoout; k++)
    ck_assert_msg(strstr(otext, c->noout[k]) == NULL,
                  "case %s (MANIFEST:%ld): stdout has '%s':\n%.2000s", c->name, c->line,
                  c->noout[k], otext);
  /* Nothing left behind: the same files as before, apart from those the
   * case names. */
  char *after = tree_listing(dir);
  for (const char *p = after; *p;) {
    const char *e = strchr(p, '\n');
    char *path = dupstr(p, (size_t)(e - p));
    int allowed = listed(before, path);
    for (size_t k = 0; k < c->ncreates && !allowed; k++)
      allowed = strcmp(path, c->creates[k]) == 0 ||
                (strncmp(path, c->creates[k], strlen(c->creates[k])) == 0 &&
                 c->creates[k][strlen(c->creates[k]) - 1] == '/');
    ck_assert_msg(allowed, "case %s (MANIFEST:%ld) left '%s' behind%s", c->name, c->line, path,
                  strstr(path, ".tmp-") ? " (a temporary file)" : "");
    free(path);
    p = e + 1;
  }
  free(after);
  free(before);
  free(otext);
  free(etext);
  free(words);
  free(wrap);
  remove_tree(tmpl);
}
END_TEST

START_TEST(test_manifest_covers_files)
{
  /* Every file of the corpus is used by some case (so none rots unseen),
   * and there are at least 60 of them. */
  char *files = tree_listing(BAD_DIR);
  size_t nfiles = 0;
  for (const char *p = files; *p;) {
    const char *e = strchr(p, '\n');
    char *path = dupstr(p, (size_t)(e - p));
    p = e + 1;
    if (path[strlen(path) - 1] == '/' || strcmp(path, "MANIFEST") == 0 ||
        strcmp(path, "README.md") == 0) {
      free(path);
      continue;
    }
    nfiles++;
    int used = 0;
    for (size_t i = 0; i < ncases && !used; i++) used = strstr(cases[i].run, path) != NULL;
    /* a fit record is used through the model that names it */
    size_t n = strlen(path);
    if (!used && n > 5 && strcmp(path + n - 5, ".json") == 0) {
      const char *base = strrchr(path, '/') ? strrchr(path, '/') + 1 : path;
      char dirpath[4096];
      snprintf(dirpath, sizeof dirpath, "%.*s", (int)(base - path), path);
      char *models = tree_listing(BAD_DIR);
      for (const char *q = models; *q && !used;) {
        const char *qe = strchr(q, '\n');
        char *m = dupstr(q, (size_t)(qe - q));
        q = qe + 1;
        if (strlen(m) > 4 && strcmp(m + strlen(m) - 4, ".spm") == 0) {
          char full[8192];
          snprintf(full, sizeof full, "%s/%s", BAD_DIR, m);
          char *text = slurp(full);
          char quoted[4096];
          snprintf(quoted, sizeof quoted, "\"%s\"", base);
          if (text && strstr(text, quoted)) {
            for (size_t i = 0; i < ncases && !used; i++) used = strstr(cases[i].run, m) != NULL;
          }
          free(text);
        }
        free(m);
      }
      free(models);
    }
    ck_assert_msg(used, "tests/bad/%s is used by no case of the MANIFEST", path);
    free(path);
  }
  free(files);
  ck_assert_msg(nfiles >= 60, "the corpus has %zu files, want at least 60", nfiles);
}
END_TEST

int main(void)
{
  load_manifest();
  check_positions();
  Suite *s = suite_create("bad");
  TCase *tc = tcase_create("corpus");
  tcase_set_timeout(tc, 300);
  tcase_add_test(tc, test_manifest_covers_files);
  tcase_add_loop_test(tc, test_case, 0, (int)ncases);
  suite_add_tcase(s, tc);
  return sp_run_suite(s);
}
