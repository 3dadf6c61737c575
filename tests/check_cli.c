/* End-to-end tests of the scatterprop executable: exit codes, messages
 * with positions, and what a user reads.  The commands run through
 * /bin/sh with their output captured in temporary files. */
#include <stdarg.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>

#include "sp_test.h"

static char out_path[] = "/tmp/sp_cli_out_XXXXXX";
static char err_path[] = "/tmp/sp_cli_err_XXXXXX";
static char *out_text, *err_text;

static char *slurp(const char *path)
{
  FILE *fp = fopen(path, "rb");
  if (!fp) return NULL;
  fseek(fp, 0, SEEK_END);
  long n = ftell(fp);
  fseek(fp, 0, SEEK_SET);
  char *s = malloc((size_t)n + 1);
  size_t got = fread(s, 1, (size_t)n, fp);
  s[got] = '\0';
  fclose(fp);
  return s;
}

/* Runs the CLI with the given argument text; returns its exit code and
 * leaves stdout/stderr in out_text/err_text. */
static int run(const char *fmt, ...) __attribute__((format(printf, 1, 2)));
static int run(const char *fmt, ...)
{
  char args[4096], cmd[8192];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(args, sizeof args, fmt, ap);
  va_end(ap);
  snprintf(cmd, sizeof cmd, "'%s' %s >'%s' 2>'%s' </dev/null", SP_CLI_PATH, args, out_path,
           err_path);
  int st = system(cmd);
  free(out_text);
  free(err_text);
  out_text = slurp(out_path);
  err_text = slurp(err_path);
  ck_assert_msg(WIFEXITED(st), "command did not exit normally: %s", cmd);
  return WEXITSTATUS(st);
}

static void write_file(const char *path, const char *text)
{
  FILE *fp = fopen(path, "wb");
  ck_assert_ptr_nonnull(fp);
  fputs(text, fp);
  fclose(fp);
}

#define ASSERT_HAS(text, want)                                                               \
  ck_assert_msg((text) && strstr((text), (want)), "output lacks '%s':\n%s", (want),           \
                (text) ? (text) : "(none)")

static void setup(void)
{
  int fd = mkstemp(out_path);
  close(fd);
  fd = mkstemp(err_path);
  close(fd);
}

static void teardown(void)
{
  unlink(out_path);
  unlink(err_path);
  free(out_text);
  free(err_text);
  out_text = err_text = NULL;
  memcpy(out_path + strlen(out_path) - 6, "XXXXXX", 6);
  memcpy(err_path + strlen(err_path) - 6, "XXXXXX", 6);
}

START_TEST(test_help_and_caution)
{
  ck_assert_int_eq(run("--help"), 0);
  ASSERT_HAS(out_text, "summary");
  ASSERT_HAS(out_text, "CAUTION");
  ASSERT_HAS(out_text, "qualified engineer");
  ck_assert_int_eq(run("summary --help"), 0);
  ASSERT_HAS(out_text, "--decimal-comma");
  ASSERT_HAS(out_text, "CAUTION");
  ck_assert_int_eq(run("--version"), 0);
  ASSERT_HAS(out_text, "scatterprop ");
}
END_TEST

START_TEST(test_usage_errors)
{
  ck_assert_int_eq(run(" "), 2);
  ck_assert_int_eq(run("frobnicate"), 2);
  ASSERT_HAS(err_text, "unknown command 'frobnicate'");
  ck_assert_int_eq(run("summary"), 2);
  ASSERT_HAS(err_text, "no CSV file given");
  ck_assert_int_eq(run("summary a.csv --bogus"), 2);
  ASSERT_HAS(err_text, "unknown option '--bogus'");
  ASSERT_HAS(err_text, "hint: see 'scatterprop summary --help'");
  ck_assert_int_eq(run("summary a.csv --column"), 2);
  ASSERT_HAS(err_text, "option --column needs a value");
}
END_TEST

START_TEST(test_missing_file_is_io_error)
{
  ck_assert_int_eq(run("summary /nonexistent/wire.csv"), 6);
  ASSERT_HAS(err_text, "scatterprop: error: /nonexistent/wire.csv: cannot open");
}
END_TEST

START_TEST(test_bad_number_position)
{
  char path[] = "/tmp/wire_XXXXXX";
  int fd = mkstemp(path);
  close(fd);
  write_file(path, "# gauge: MC-07\npart,lot,wire_d [mm]\nS1,L1,2.001\nS2,L1,O.52\n");
  ck_assert_int_eq(run("summary %s", path), 3);
  char want[256];
  snprintf(want, sizeof want, "%s:4:3: 'O.52' is not a number (column \"wire_d [mm]\")", path);
  ASSERT_HAS(err_text, want);
  ASSERT_HAS(err_text, "hint:");
  /* With --skip-bad-rows the row is skipped and listed. */
  ck_assert_int_eq(run("summary %s --skip-bad-rows", path), 0);
  ASSERT_HAS(out_text, "1 row skipped");
  snprintf(want, sizeof want, "%s:4:3:", path);
  ASSERT_HAS(out_text, want);
  unlink(path);
}
END_TEST

START_TEST(test_demo_summary_by_lot)
{
  ck_assert_int_eq(run("summary '%s/data/wire_d.csv' --column wire_d --by lot", SP_SOURCE_DIR), 0);
  ASSERT_HAS(out_text, "wire_d  [mm]  by lot");
  ASSERT_HAS(out_text, "W24-117");
  ASSERT_HAS(out_text, "W24-131");
  ASSERT_HAS(out_text, "(pooled)");
  ASSERT_HAS(out_text, "gauge: MC-07");
  ASSERT_HAS(out_text, "sha256 ");
  ASSERT_HAS(out_text, "CAUTION");
  /* The lot column is text: grouping by a numeric column is refused. */
  ck_assert_int_eq(run("summary '%s/data/wire_d.csv' --by wire_d", SP_SOURCE_DIR), 3);
  ASSERT_HAS(err_text, "holds numbers; --by needs a text column");
  ck_assert_int_eq(run("summary '%s/data/wire_d.csv' --column diameter", SP_SOURCE_DIR), 3);
  ASSERT_HAS(err_text, "no column named 'diameter'");
  ASSERT_HAS(err_text, "the columns are: 'part', 'lot', 'wire_d'");
}
END_TEST

START_TEST(test_missing_values_counted)
{
  ck_assert_int_eq(run("summary '%s/data/assembly_load.csv' --json", SP_SOURCE_DIR), 0);
  ASSERT_HAS(out_text, "\"format\": \"scatterprop-summary\"");
  ASSERT_HAS(out_text, "\"missing\": 1");
  ASSERT_HAS(out_text, "\"n\": 199");
  ASSERT_HAS(out_text, "\"unit\": \"N\"");
}
END_TEST

START_TEST(test_summary_of_text_column_refused)
{
  ck_assert_int_eq(run("summary '%s/data/wire_d.csv' --column lot", SP_SOURCE_DIR), 3);
  ASSERT_HAS(err_text, "column 'lot' holds text, not numbers");
}
END_TEST

static Suite *cli_suite(void)
{
  Suite *s = suite_create("cli");
  TCase *tc = tcase_create("summary");
  tcase_add_checked_fixture(tc, setup, teardown);
  tcase_add_test(tc, test_help_and_caution);
  tcase_add_test(tc, test_usage_errors);
  tcase_add_test(tc, test_missing_file_is_io_error);
  tcase_add_test(tc, test_bad_number_position);
  tcase_add_test(tc, test_demo_summary_by_lot);
  tcase_add_test(tc, test_missing_values_counted);
  tcase_add_test(tc, test_summary_of_text_column_refused);
  suite_add_tcase(s, tc);
  return s;
}

int main(void) { return sp_run_suite(cli_suite()); }
