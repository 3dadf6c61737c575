/* End-to-end tests of the scatterprop executable: exit codes, messages
 * with positions, and what a user reads.  The commands run through
 * /bin/sh in a temporary folder, with their output captured there. */
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "sp_test.h"

static char dir[] = "/tmp/sp_cli_XXXXXX";

static void setup(void)
{
  test_dir_make(dir);
}

static void teardown(void)
{
  test_dir_remove(dir);
}

START_TEST(test_help_and_caution)
{
  ck_assert_int_eq(cli("--help"), 0);
  ASSERT_HAS(out_text, "summary");
  ASSERT_HAS(out_text, "CAUTION");
  ASSERT_HAS(out_text, "qualified engineer");
  ck_assert_int_eq(cli("summary --help"), 0);
  ASSERT_HAS(out_text, "--decimal-comma");
  ASSERT_HAS(out_text, "CAUTION");
  ck_assert_int_eq(cli("--version"), 0);
  ASSERT_HAS(out_text, "scatterprop ");
}
END_TEST

START_TEST(test_usage_errors)
{
  ck_assert_int_eq(cli(" "), 2);
  ck_assert_int_eq(cli("frobnicate"), 2);
  ASSERT_HAS(err_text, "unknown command 'frobnicate'");
  ck_assert_int_eq(cli("summary"), 2);
  ASSERT_HAS(err_text, "no CSV file given");
  ck_assert_int_eq(cli("summary a.csv --bogus"), 2);
  ASSERT_HAS(err_text, "unknown option '--bogus'");
  ASSERT_HAS(err_text, "hint: see 'scatterprop summary --help'");
  ck_assert_int_eq(cli("summary a.csv --column"), 2);
  ASSERT_HAS(err_text, "option --column needs a value");
}
END_TEST

START_TEST(test_missing_file_is_io_error)
{
  ck_assert_int_eq(cli("summary /nonexistent/wire.csv"), 6);
  ASSERT_HAS(err_text, "scatterprop: error: /nonexistent/wire.csv: cannot open");
}
END_TEST

/* A FIFO without a writer would block open(2), and a device such as
 * /dev/zero never ends: every reader refuses anything but a regular file
 * before reading a byte, at once (the 'timeout 20' turns a hang into exit
 * 124, which fails the test), as an I/O error with a hint; and a file
 * beyond a reader's size limit is refused from its size. */
START_TEST(test_fifo_and_device_refused)
{
  ck_assert_int_eq(mkfifo(path_in("pipe"), 0600), 0);
  static const char *const cmds[] = {
      "summary pipe", "fit pipe --column d --out f.json", "propagate pipe --samples 100",
      "plot pipe --out charts", "replay pipe", "report pipe --out r.html",
      "propagate /dev/zero --samples 100", "summary /dev/zero"};
  for (size_t i = 0; i < sizeof cmds / sizeof cmds[0]; i++) {
    int rc = sh("timeout 20 " SP " %s", cmds[i]);
    ck_assert_msg(rc == 6, "'%s': exit %d, want 6: %s", cmds[i], rc, err_text);
    ASSERT_HAS(err_text, "is not a regular file (a pipe, a device or a socket)");
    ASSERT_HAS(err_text, "hint: copy the ");
  }
  /* Sparse files larger than a reader's limit are refused from their size
   * alone, before a byte is read (truncate(1) makes them in no time, and
   * reading 300 MiB of zeros would take seconds). */
  ck_assert_int_eq(sh("truncate -s 300M big.json && truncate -s 9M big.spm"), 0);
  ck_assert_int_eq(sh("timeout 20 " SP " plot big.json --out charts"), 3);
  ASSERT_HAS(err_text, "big.json: the fit record is larger than 268435456 bytes (it has 314572800)");
  ck_assert_int_eq(sh("timeout 20 " SP " replay big.json"), 3);
  ASSERT_HAS(err_text, "big.json: the file is larger than 268435456 bytes (it has 314572800)");
  ck_assert_int_eq(sh("timeout 20 " SP " report big.json --out r.html"), 3);
  ASSERT_HAS(err_text, "larger than 268435456 bytes (it has 314572800)");
  ck_assert_int_eq(sh("timeout 20 " SP " propagate big.spm --samples 100"), 3);
  ASSERT_HAS(err_text, "big.spm: the model is larger than 8388608 bytes (it has 9437184)");
  /* nothing written beside the pipe */
  ck_assert_int_ne(access(path_in("f.json"), F_OK), 0);
  ck_assert_int_ne(access(path_in("r.html"), F_OK), 0);
  ck_assert_int_ne(access(path_in("charts"), F_OK), 0);
}
END_TEST

START_TEST(test_bad_number_position)
{
  char path[] = "/tmp/wire_XXXXXX";
  int fd = mkstemp(path);
  close(fd);
  write_file(path, "# gauge: MC-07\npart,lot,wire_d [mm]\nS1,L1,2.001\nS2,L1,O.52\n");
  ck_assert_int_eq(cli("summary %s", path), 3);
  char want[256];
  snprintf(want, sizeof want, "%s:4:3: 'O.52' is not a number (column \"wire_d [mm]\")", path);
  ASSERT_HAS(err_text, want);
  ASSERT_HAS(err_text, "hint:");
  /* With --skip-bad-rows the row is skipped and listed. */
  ck_assert_int_eq(cli("summary %s --skip-bad-rows", path), 0);
  ASSERT_HAS(out_text, "1 row skipped");
  snprintf(want, sizeof want, "%s:4:3:", path);
  ASSERT_HAS(out_text, want);
  unlink(path);
}
END_TEST

/* A statistic that rounds to zero prints without a sign: three evenly
 * spaced readings have skewness 0 exactly in theory, -1e-16 or so in
 * floating point. */
START_TEST(test_no_negative_zero)
{
  char path[] = "/tmp/even_XXXXXX";
  int fd = mkstemp(path);
  close(fd);
  write_file(path, "d [mm]\n1.5\n1.6\n1.7\n");
  ck_assert_int_eq(cli("summary %s", path), 0);
  ASSERT_HAS(out_text, "1.700   0.00      -");
  ASSERT_LACKS(out_text, " -0.00 ");
  unlink(path);
}
END_TEST

START_TEST(test_demo_summary_by_lot)
{
  ck_assert_int_eq(cli("summary '%s/data/wire_d.csv' --column wire_d --by lot", SP_SOURCE_DIR), 0);
  ASSERT_HAS(out_text, "wire_d  [mm]  by lot");
  ASSERT_HAS(out_text, "W24-117");
  ASSERT_HAS(out_text, "W24-131");
  ASSERT_HAS(out_text, "(pooled)");
  ASSERT_HAS(out_text, "gauge: MC-07");
  ASSERT_HAS(out_text, "sha256 ");
  ASSERT_HAS(out_text, "CAUTION");
  /* The lot column is text: grouping by a numeric column is refused. */
  ck_assert_int_eq(cli("summary '%s/data/wire_d.csv' --by wire_d", SP_SOURCE_DIR), 3);
  /* at its header cell: line 5 (after four '#' lines), cell 3 */
  ASSERT_HAS(err_text, "wire_d.csv:5:3: column 'wire_d [mm]' holds numbers; --by needs a text column");
  ck_assert_int_eq(cli("summary '%s/data/wire_d.csv' --column diameter", SP_SOURCE_DIR), 3);
  ASSERT_HAS(err_text, "wire_d.csv:5: no column named 'diameter'");
  ASSERT_HAS(err_text, "the columns are: 'part', 'lot', 'wire_d'");
}
END_TEST

START_TEST(test_missing_values_counted)
{
  ck_assert_int_eq(cli("summary '%s/data/assembly_load.csv' --json", SP_SOURCE_DIR), 0);
  ASSERT_HAS(out_text, "\"format\": \"scatterprop-summary\"");
  ASSERT_HAS(out_text, "\"missing\": 1");
  ASSERT_HAS(out_text, "\"n\": 199");
  ASSERT_HAS(out_text, "\"unit\": \"N\"");
}
END_TEST

START_TEST(test_summary_of_text_column_refused)
{
  ck_assert_int_eq(cli("summary '%s/data/wire_d.csv' --column lot", SP_SOURCE_DIR), 3);
  ASSERT_HAS(err_text, "wire_d.csv:5:2: column 'lot' holds text, not numbers");
}
END_TEST

START_TEST(test_summary_options)
{
  /* Lots numbered 117 and 131 group with --by: the column is read as text. */
  write_file(path_in("lots.csv"), "lot,d [mm]\n117,1\n131,2\n117,3\n131,5\n");
  ck_assert_int_eq(cli("summary lots.csv --by lot"), 0);
  ASSERT_HAS(out_text, "text columns (not described): lot\n");
  ASSERT_HAS(out_text, "  117          2    0    2.00    1.41");
  ASSERT_HAS(out_text, "  131          2    0    3.50    2.12");
  /* A column asked for twice is described once. */
  ck_assert_int_eq(cli("summary lots.csv --column d --column 'd [mm]'"), 0);
  ck_assert_ptr_null(strstr(strstr(out_text, "d  [mm]") + 1, "d  [mm]"));
  /* Usage errors: an empty name, --by twice. */
  ck_assert_int_eq(cli("summary lots.csv --column ''"), 2);
  ASSERT_HAS(err_text, "--column needs a column name");
  ck_assert_int_eq(cli("summary lots.csv --by lot --by d"), 2);
  ASSERT_HAS(err_text, "--by is given twice ('lot', 'd')");
  /* A folder is an I/O error with a hint. */
  ck_assert_int_eq(cli("summary ."), 6);
  ASSERT_HAS(err_text, "scatterprop: error: .: is a folder, not a CSV file\n  hint: ");
  /* --decimal-comma: ';' separates cells, ',' is the decimal sign. */
  write_file(path_in("dc.csv"), "d [mm];F [N]\n1,5;2,5\n3,0;NA\n");
  ck_assert_int_eq(cli("summary dc.csv --decimal-comma --json"), 0);
  ASSERT_HAS(out_text, "\"mean\": 2.25");
  ASSERT_HAS(out_text, "\"missing\": 1");
  ck_assert_int_eq(cli("summary dc.csv"), 3);
  ASSERT_HAS(err_text, "give --decimal-comma");
  /* Long lot ids are printed whole (cut at 24 characters, these two would
   * read the same), and a UTF-8 id is padded by characters, not bytes. */
  write_file(path_in("long.csv"), "lot,d [mm]\nSUPPLIER-A-2024-11-03-COIL-0001,1\n"
                                  "SUPPLIER-A-2024-11-03-COIL-0002,2\nCharge-\xC3\x84,3\n");
  ck_assert_int_eq(cli("summary long.csv --by lot"), 0);
  ASSERT_HAS(out_text, "  SUPPLIER-A-2024-11-03-COIL-0001     1    0");
  ASSERT_HAS(out_text, "  SUPPLIER-A-2024-11-03-COIL-0002     1    0");
  ASSERT_HAS(out_text, "  Charge-\xC3\x84"
                       "                            1    0"); /* 23 + 5 blanks */
  /* Output that cannot be written is an I/O error, not a success. */
  if (access("/dev/full", W_OK) == 0) {
    ck_assert_int_eq(cli("summary lots.csv --json >/dev/full"), 6);
    ASSERT_HAS(err_text, "scatterprop: error: cannot write the standard output: ");
    ck_assert_int_eq(cli("--help >/dev/full"), 6);
  }
}
END_TEST

START_TEST(test_fit_numbered_lots)
{
  /* Lots numbered 117 and 131 (no unit) group in fit as in summary, and the
   * record's readers (replay, plot, a model's fit(), report) read the lot
   * column the same way. */
  write_file(path_in("lots.csv"),
             "lot,d [mm]\n117,2.001\n117,2.004\n117,1.998\n117,2.000\n117,2.003\n"
             "117,1.999\n131,2.006\n131,2.008\n131,2.003\n131,2.007\n131,2.004\n"
             "131,2.009\n");
  ck_assert_int_eq(cli("fit lots.csv --column d --by lot --families normal --pvalues none "
                       "--out f.json"),
                   0);
  ASSERT_HAS(out_text, "lot = 117: n = 6");
  ASSERT_HAS(out_text, "lot = 131: n = 6");
  ck_assert_int_eq(cli("replay f.json"), 0);
  ASSERT_HAS(out_text, "identical");
  ck_assert_int_eq(cli("plot f.json --out P"), 0);
  write_file(path_in("m.spm"), "input d [mm] ~ fit(\"f.json\")\noutput y [mm] = 2 * d\n");
  ck_assert_int_eq(cli("propagate m.spm --samples 2000 --out run"), 0);
  ck_assert_int_eq(cli("report run/run.json --out r.html"), 0);
  char *html = slurp(path_in("r.html"));
  ck_assert_ptr_nonnull(html);
  ASSERT_HAS(html, "131");
  free(html);
}
END_TEST

static Suite *cli_suite(void)
{
  Suite *s = suite_create("cli");
  TCase *tc = tcase_create("summary");
  tcase_set_timeout(tc, 120); /* the end-to-end tests run several commands */
  tcase_add_checked_fixture(tc, setup, teardown);
  tcase_add_test(tc, test_help_and_caution);
  tcase_add_test(tc, test_usage_errors);
  tcase_add_test(tc, test_fifo_and_device_refused);
  tcase_add_test(tc, test_missing_file_is_io_error);
  tcase_add_test(tc, test_bad_number_position);
  tcase_add_test(tc, test_no_negative_zero);
  tcase_add_test(tc, test_demo_summary_by_lot);
  tcase_add_test(tc, test_missing_values_counted);
  tcase_add_test(tc, test_summary_of_text_column_refused);
  tcase_add_test(tc, test_summary_options);
  tcase_add_test(tc, test_fit_numbered_lots);
  suite_add_tcase(s, tc);
  return s;
}

int main(void) { return sp_run_suite(cli_suite()); }
