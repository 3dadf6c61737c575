/* Tests of Ctrl-C and of outputs that are written whole or not at all,
 * with real signals: propagate and fit are started as processes, sent
 * SIGINT while they run, and must exit 130 within a short time, leaving
 * no record, table, chart, archive or temporary file.  Files in the way
 * are refused before a long run; a failure after some outputs were written
 * takes them back; an output file that appears while another is written
 * under its name is kept.  The CLI runs end to end (SP_CLI_PATH) on a copy
 * of the demo data (data/README.md: invented data) and on a model made
 * slow on purpose (many transcendental calls per sample). */
#include <dirent.h>
#include <signal.h>
#include <sys/stat.h>
#include <time.h>

#include "scatterprop/core.h"
#include "sp_test.h"

static char dir[] = "/tmp/sp_interrupt_XXXXXX";

static int exists(const char *rel)
{
  struct stat st;
  return stat(path_in(rel), &st) == 0;
}

/* One input, one output of 40 terms exp(sin(.)) cos(.): about 2 us a
 * sample on one core, so 10^7 samples run for many seconds. */
static void setup(void)
{
  test_dir_make(dir);
  FILE *fp = fopen(path_in("slow.spm"), "w");
  ck_assert_ptr_nonnull(fp);
  fprintf(fp, "# slow on purpose: many transcendental calls per sample\n"
              "input x ~ normal(mean=0, sd=1)\noutput y =");
  for (int k = 1; k <= 40; k++)
    fprintf(fp, "%s exp(sin(x * %d.5)) * cos(x + %d)", k > 1 ? " +" : "", k, k);
  fprintf(fp, "\n");
  ck_assert_int_eq(fclose(fp), 0);
  ck_assert_int_eq(sh("cp '%s/data/coil_dm.csv' .", SP_SOURCE_DIR), 0);
}

static void teardown(void)
{
  test_dir_remove(dir);
}

static double now(void)
{
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* Starts the program with argv (argv[0] is ignored) in test_dir, stdout and
 * stderr into out.txt and err.txt; ignore_int: with SIGINT ignored, as a
 * background job of a non-interactive shell starts. */
static pid_t start(const char *const *argv, int ignore_int)
{
  pid_t pid = fork();
  ck_assert_int_ge(pid, 0);
  if (pid == 0) {
    if (chdir(test_dir) != 0) _exit(125);
    if (!freopen("out.txt", "w", stdout) || !freopen("err.txt", "w", stderr)) _exit(125);
    signal(SIGINT, ignore_int ? SIG_IGN : SIG_DFL);
    execv(SP_CLI_PATH, (char *const *)(uintptr_t)argv);
    _exit(126);
  }
  return pid;
}

/* Waits up to limit seconds for pid; returns its wait status, and the
 * seconds it took in *took.  A process still running after limit is
 * killed and fails the test. */
static int finish(pid_t pid, double limit, double *took)
{
  double t0 = now();
  int st = 0;
  for (;;) {
    pid_t w = waitpid(pid, &st, WNOHANG);
    ck_assert_int_ge(w, 0);
    if (w == pid) break;
    if (now() - t0 > limit) {
      kill(pid, SIGKILL);
      waitpid(pid, &st, 0);
      ck_abort_msg("still running %.1f s after the signal", limit);
    }
    struct timespec nap = {0, 10 * 1000 * 1000};
    nanosleep(&nap, NULL);
  }
  *took = now() - t0;
  free(err_text);
  err_text = slurp(path_in("err.txt"));
  return st;
}

static void pause_s(double s)
{
  struct timespec t = {(time_t)s, (long)((s - (double)(time_t)s) * 1e9)};
  nanosleep(&t, NULL);
}

/* Nothing in test_dir but what setup made and the command's out/err. */
static void only_inputs_left(void)
{
  DIR *d = opendir(test_dir);
  ck_assert_ptr_nonnull(d);
  for (struct dirent *e; (e = readdir(d)) != NULL;) {
    const char *n = e->d_name;
    if (!strcmp(n, ".") || !strcmp(n, "..") || !strcmp(n, "slow.spm") ||
        !strcmp(n, "coil_dm.csv") || !strcmp(n, "out.txt") || !strcmp(n, "err.txt"))
      continue;
    closedir(d);
    ck_abort_msg("'%s' was left behind", n);
  }
  closedir(d);
}

/* Ctrl-C during a long propagate: it stops at the next block (one block
 * of 4096 samples is about 10 ms here; 3 s allows for a loaded machine and
 * for freeing the sample arrays), writes nothing and exits 130.  SIGTERM
 * (kill, a batch system's time limit) does the same and exits 143
 * (128 + the signal, as a shell reports a process the signal ended:
 * common practice, no source). */
static void interrupt_propagate_with(const char *threads, int sig)
{
  const char *argv[] = {"scatterprop", "propagate", "slow.spm", "--samples", "10000000",
                        "--threads",   threads,     "--out",    "run",       "--archive",
                        "A",           "--plots",   "P",        NULL};
  pid_t pid = start(argv, 0);
  pause_s(1.0);
  ck_assert_int_eq(kill(pid, sig), 0);
  double took;
  int st = finish(pid, 20, &took);
  ck_assert_msg(WIFEXITED(st), "propagate did not exit (signal %d)",
                WIFSIGNALED(st) ? WTERMSIG(st) : 0);
  ck_assert_int_eq(WEXITSTATUS(st), 128 + sig);
  ck_assert_msg(took < 3.0, "stopped %.2f s after Ctrl-C", took);
  ASSERT_HAS(err_text, "interrupted after ");
  ASSERT_HAS(err_text, "nothing was written");
  ck_assert(!exists("run") && !exists("A") && !exists("P"));
  only_inputs_left();
}

START_TEST(test_propagate_one_thread)
{
  interrupt_propagate_with("1", SIGINT);
}
END_TEST

START_TEST(test_propagate_two_threads)
{
  interrupt_propagate_with("2", SIGINT);
}
END_TEST

START_TEST(test_propagate_terminated)
{
  interrupt_propagate_with("2", SIGTERM);
}
END_TEST


/* A bootstrap of 10^6 refitted replicates runs for minutes; Ctrl-C (exit
 * 130) or SIGTERM (exit 143) ends it at once with nothing written. */
static void interrupt_fit(int sig)
{
  const char *argv[] = {"scatterprop", "fit",       "coil_dm.csv", "--column",
                        "Dm",          "--pvalues", "bootstrap",   "--bootstrap",
                        "1000000",     "--out",     "f.json",      "--archive",
                        "A",           "--plots",   "P",           NULL};
  pid_t pid = start(argv, 0);
  pause_s(1.0);
  ck_assert_int_eq(kill(pid, sig), 0);
  double took;
  int st = finish(pid, 20, &took);
  ck_assert(WIFEXITED(st));
  ck_assert_int_eq(WEXITSTATUS(st), 128 + sig);
  ck_assert_msg(took < 1.0, "stopped %.2f s after the signal", took);
  ASSERT_HAS(err_text, "interrupted; nothing was written");
  only_inputs_left();
}

START_TEST(test_fit_interrupted)
{
  interrupt_fit(SIGINT);
}
END_TEST

START_TEST(test_fit_terminated)
{
  interrupt_fit(SIGTERM);
}
END_TEST

START_TEST(test_ignored_sigint_kept)
{
  /* Started with SIGINT ignored (nohup, `cmd &` in a script), the program
   * keeps ignoring it and finishes. */
  const char *argv[] = {"scatterprop", "propagate", "slow.spm", "--samples", "300000",
                        "--threads",   "1",         "--out",    "run",       NULL};
  pid_t pid = start(argv, 1);
  pause_s(0.2);
  kill(pid, SIGINT);
  double took;
  int st = finish(pid, 120, &took);
  ck_assert(WIFEXITED(st));
  ck_assert_int_eq(WEXITSTATUS(st), 0);
  ck_assert(exists("run/run.json"));
}
END_TEST

START_TEST(test_refused_before_the_run)
{
  /* A table of --out in the way: refused at once, not after 10^7 samples,
   * and nothing else is written. */
  ck_assert_int_eq(sh("mkdir run && echo old > run/y.histogram.csv"), 0);
  double t0 = now();
  ck_assert_int_eq(cli("propagate slow.spm --samples 10000000 --threads 1 --out run"), 6);
  ck_assert_msg(now() - t0 < 5.0, "refused only after %.1f s", now() - t0);
  ASSERT_HAS(err_text, "run/y.histogram.csv: file exists; refusing to overwrite it");
  ASSERT_HAS(err_text, "hint: give --force");
  ck_assert_int_eq(sh("ls run | wc -l"), 0);
  ASSERT_HAS(out_text, "1\n");
  /* A non-empty archive folder, likewise. */
  ck_assert_int_eq(sh("mkdir A && touch A/mine"), 0);
  ck_assert_int_eq(cli("propagate slow.spm --samples 10000000 --archive A"), 6);
  ASSERT_HAS(err_text, "not empty");
  ck_assert(!exists("run/run.json"));
  /* fit: an existing record, and a record in a folder that is not there. */
  ck_assert_int_eq(sh("echo '{}' > f.json"), 0);
  ck_assert_int_eq(cli("fit coil_dm.csv --column Dm --bootstrap 1000000 --out f.json"), 6);
  ASSERT_HAS(err_text, "f.json: file exists");
  ck_assert_int_eq(cli("fit coil_dm.csv --column Dm --bootstrap 1000000 --out no/f.json"), 6);
  ASSERT_HAS(err_text, "the folder no does not exist");
  ASSERT_HAS(err_text, "hint: make the folder first");
}
END_TEST

START_TEST(test_failure_takes_back)
{
  /* A chart in the way is refused before the run: nothing is written and
   * the file in the way is kept as it was. */
  ck_assert_int_eq(sh("mkdir P && echo old > P/run_y_hist.dat"), 0);
  ck_assert_int_eq(cli("propagate slow.spm --samples 20000 --out run --plots P"), 6);
  ASSERT_HAS(err_text, "P/run_y_hist.dat: file exists");
  ASSERT_LACKS(err_text, "removed again");
  ck_assert(!exists("run"));
  ck_assert_int_eq(sh("ls P"), 0);
  ck_assert_str_eq(out_text, "run_y_hist.dat\n");
  char *old = slurp(path_in("P/run_y_hist.dat"));
  ck_assert_str_eq(old, "old\n");
  free(old);
  /* A chart that fails after the record and tables were written (here a
   * template missing from the template folder, found only when that chart
   * is filled): they are removed again, and the folders made for them. */
  /* The templates from the source tree, not from $SCATTERPROP_PLOTS: ctest
   * sets that, but CI's valgrind step runs the suite without ctest. */
  ck_assert_int_eq(sh("mkdir T && cp '" SP_SOURCE_DIR "/plots/style.gp' '" SP_SOURCE_DIR
                      "/plots/run_hist.gp' '" SP_SOURCE_DIR "/plots/fit_hist.gp' T/"),
                   0);
  ck_assert_int_eq(sh("SCATTERPROP_PLOTS=\"$PWD/T\" " SP
                      " propagate slow.spm --samples 20000 --out run --plots R"),
                   6);
  ASSERT_HAS(err_text, "run_exceed.gp");
  ASSERT_HAS(err_text, "removed again");
  ck_assert(!exists("run"));
  ck_assert(!exists("R"));
  /* The same for fit: the record goes when its charts cannot be drawn. */
  ck_assert_int_eq(sh("SCATTERPROP_PLOTS=\"$PWD/T\" " SP
                      " fit coil_dm.csv --column Dm --pvalues approximation --out f.json "
                      "--plots R"),
                   6);
  ASSERT_HAS(err_text, "removed again");
  ck_assert(!exists("f.json"));
  ck_assert(!exists("R"));
  /* A chart in the way of fit is refused before the fit. */
  ck_assert_int_eq(sh("echo old > P/fit_Dm_hist.dat"), 0);
  ck_assert_int_eq(cli("fit coil_dm.csv --column Dm --pvalues approximation --out f.json "
                       "--plots P"),
                   6);
  ASSERT_HAS(err_text, "P/fit_Dm_hist.dat: file exists");
  ASSERT_LACKS(err_text, "removed again");
  ck_assert(!exists("f.json"));
  /* With nothing in the way all is written. */
  ck_assert_int_eq(cli("propagate slow.spm --samples 20000 --out run --plots Q --archive A"), 0);
  ck_assert(exists("run/run.json") && exists("run/y.percentiles.csv") &&
            exists("Q/run_y_hist.dat") && exists("A/run.json"));
}
END_TEST

START_TEST(test_outfile_never_replaces)
{
  /* A file that appears under the name while the output is written (another
   * process) is kept, and the output is refused. */
  sp_error err;
  sp_error_clear(&err);
  const char *p = path_in("rec.json");
  sp_outfile *f = sp_outfile_open(p, 0, &err);
  ck_assert_ptr_nonnull(f);
  fputs("new\n", sp_outfile_stream(f));
  write_file(p, "theirs\n");
  ck_assert_int_eq(sp_outfile_commit(f, &err), SP_EIO);
  ASSERT_HAS(err.msg, "refusing to overwrite");
  char *t = slurp(p);
  ck_assert_str_eq(t, "theirs\n");
  free(t);
  /* No temporary file is left; with overwrite the new bytes replace it. */
  ck_assert_int_eq(sh("ls | grep -c tmp-"), 1);
  ck_assert_int_eq(sp_file_write_atomic(p, "new\n", 4, 1, &err), SP_OK);
  t = slurp(p);
  ck_assert_str_eq(t, "new\n");
  free(t);
  ck_assert_int_eq(sp_file_write_atomic(p, "x\n", 2, 0, &err), SP_EIO);
}
END_TEST

static Suite *suite(void)
{
  Suite *s = suite_create("interrupt");
  TCase *t = tcase_create("interrupt");
  tcase_add_checked_fixture(t, setup, teardown);
  tcase_set_timeout(t, 120);
  tcase_add_test(t, test_propagate_one_thread);
  tcase_add_test(t, test_propagate_two_threads);
  tcase_add_test(t, test_propagate_terminated);
  tcase_add_test(t, test_fit_terminated);
  tcase_add_test(t, test_fit_interrupted);
  tcase_add_test(t, test_ignored_sigint_kept);
  tcase_add_test(t, test_refused_before_the_run);
  tcase_add_test(t, test_failure_takes_back);
  tcase_add_test(t, test_outfile_never_replaces);
  suite_add_tcase(s, t);
  return s;
}

int main(void)
{
  return sp_run_suite(suite());
}
