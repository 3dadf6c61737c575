/* Tests of replay: a fit and a run replay identically; a changed data file,
 * model or fit record is named with both SHA-256 (exit 3); a changed result
 * in a record is listed with both values (exit 1); malformed records are
 * refused naming the field; thread counts do not change a record; the
 * comparison rules (ignored fields, tolerance, integers) on small texts.
 * The CLI runs end to end (SP_CLI_PATH) on copies of the demo data
 * (data/README.md: invented data). */
#include <jansson.h>
#include <string.h>

#include "scatterprop/replay.h"
#include "sp_test.h"

static char dir[] = "/tmp/sp_replay_XXXXXX";
/* SHA-256 by coreutils' sha256sum, independent of the library's libmd. */
static void sha256sum(const char *rel, char hex[65])
{
  char cmd[1024];
  snprintf(cmd, sizeof cmd, "sha256sum '%s'", path_in(rel));
  FILE *p = popen(cmd, "r");
  ck_assert_ptr_nonnull(p);
  ck_assert_int_eq(fscanf(p, "%64s", hex), 1);
  pclose(p);
}

/* The scenario: two demo CSVs fitted, a model in its own folder using
 * both records and a stated input, propagated. */
static void setup(void)
{
  test_dir_make(dir);
  ck_assert_int_eq(sh("mkdir in fits model && cp '%s/data/coil_dm.csv' '%s/data/shear_modulus.csv' in/",
                      SP_SOURCE_DIR, SP_SOURCE_DIR), 0);
  ck_assert_int_eq(sh(SP " fit in/coil_dm.csv --column Dm --bootstrap 40 --out fits/dm.json"), 0);
  ck_assert_int_eq(sh(SP " fit in/shear_modulus.csv --column G --by lot --bootstrap 40 "
                      "--out fits/g.json"), 0);
  write_file(path_in("model/m.spm"), "# replay test model\n"
                                     "input Dm [mm]  ~ fit(\"../fits/dm.json\")\n"
                                     "input G  [GPa] ~ fit(\"../fits/g.json\")\n"
                                     "input F  [N]   ~ normal(mean=100, sd=5)\n"
                                     "output q [GPa/mm] = G / Dm\n"
                                     "output s [N] = 2 * F\n"
                                     "limit q < 5 [GPa/mm]\n");
  ck_assert_int_eq(sh(SP " propagate model/m.spm --samples 20000 --out run --threads 2"), 0);
}

static void teardown(void)
{
  test_dir_remove(dir);
}

/* Edits a record: sets the number at a dotted path (array indices as
 * numbers) to v, or deletes the key (del), or sets a string (s). */
static void edit(const char *rel, const char *const *keys, size_t n, double v, int del,
                 const char *s)
{
  json_error_t je;
  json_t *root = json_load_file(path_in(rel), 0, &je);
  ck_assert_ptr_nonnull(root);
  json_t *o = root;
  for (size_t i = 0; i + 1 < n; i++) {
    o = json_is_array(o) ? json_array_get(o, (size_t)atoi(keys[i])) : json_object_get(o, keys[i]);
    ck_assert_ptr_nonnull(o);
  }
  if (del) ck_assert_int_eq(json_object_del(o, keys[n - 1]), 0);
  else if (s) ck_assert_int_eq(json_object_set_new(o, keys[n - 1], json_string(s)), 0);
  else ck_assert_int_eq(json_object_set_new(o, keys[n - 1], json_real(v)), 0);
  ck_assert_int_eq(json_dump_file(root, path_in(rel), JSON_INDENT(2) | JSON_REAL_PRECISION(17)), 0);
  json_decref(root);
}

static double number_at(const char *rel, const char *const *keys, size_t n)
{
  json_error_t je;
  json_t *root = json_load_file(path_in(rel), 0, &je);
  ck_assert_ptr_nonnull(root);
  json_t *o = root;
  for (size_t i = 0; i < n; i++)
    o = json_is_array(o) ? json_array_get(o, (size_t)atoi(keys[i])) : json_object_get(o, keys[i]);
  ck_assert_msg(json_is_number(o), "not a number");
  double v = json_number_value(o);
  json_decref(root);
  return v;
}

START_TEST(test_fit_roundtrip)
{
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 0);
  ASSERT_HAS(out_text, "identical");
  ASSERT_HAS(out_text, "bit for bit");
  /* One line, as the command promises. */
  ck_assert_ptr_eq(strchr(out_text, '\n'), out_text + strlen(out_text) - 1);
  ck_assert_int_eq(sh(SP " replay fits/g.json --threads 1"), 0);
  /* The library's view of the same replay. */
  sp_replay_report rep;
  sp_error err;
  sp_error_clear(&err);
  sp_status s = sp_replay(path_in("fits/dm.json"), NULL, &rep, &err);
  ck_assert_msg(s == SP_OK, "replay: %s", err.msg);
  ck_assert_int_eq(rep.kind, SP_REPLAY_FIT);
  ck_assert_uint_eq(rep.ninputs, 1);
  ck_assert_uint_eq(rep.ndiffs_total, 0);
  ck_assert_int_eq(rep.build_differs, 0);
  ck_assert(rep.tolerance == 0);
  /* Every candidate's numbers are compared: more than a hundred values. */
  ck_assert_uint_gt(rep.compared, 100);
  sp_replay_report_clear(&rep);
}
END_TEST

START_TEST(test_run_roundtrip)
{
  ck_assert_int_eq(sh(SP " replay run/run.json"), 0);
  ASSERT_HAS(out_text, "identical");
  /* model, two fit records, two data files */
  ASSERT_HAS(out_text, "5 input files unchanged");
  /* From another folder: the record names its files by the folder it was
   * made in. */
  ck_assert_int_eq(sh("cd / && " SP " replay '%s/run/run.json' --threads 3", dir), 0);
  /* The largest seed, 2^64 - 1, is recorded as its digits and replays. */
  ck_assert_int_eq(sh(SP " propagate model/m.spm --samples 5000 --seed 18446744073709551615 "
                      "--json > big.json"), 0);
  char *big = slurp(path_in("big.json"));
  ASSERT_HAS(big, "\"seed\": \"18446744073709551615\"");
  free(big);
  ck_assert_int_eq(sh(SP " replay big.json"), 0);
  sp_replay_report rep;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_replay(path_in("run/run.json"), NULL, &rep, &err), SP_OK);
  ck_assert_int_eq(rep.kind, SP_REPLAY_RUN);
  ck_assert_uint_eq(rep.ninputs, 5);
  ck_assert_uint_eq(rep.nbad, 0);
  sp_replay_report_clear(&rep);
}
END_TEST

START_TEST(test_tampered_csv)
{
  char before[65], after[65];
  sha256sum("in/coil_dm.csv", before);
  /* One byte: the first value's last digit (15.955 -> 15.956). */
  ck_assert_int_eq(sh("sed -i 's/^S0001,15.955$/S0001,15.956/' in/coil_dm.csv"), 0);
  sha256sum("in/coil_dm.csv", after);
  ck_assert_str_ne(before, after);
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 3);
  ASSERT_HAS(err_text, "changed: data");
  ASSERT_HAS(err_text, "in/coil_dm.csv");
  char want[128];
  snprintf(want, sizeof want, "recorded sha256 %s", before);
  ASSERT_HAS(err_text, want);
  snprintf(want, sizeof want, "actual   sha256 %s", after);
  ASSERT_HAS(err_text, want);
  /* Through the run: the data of a fit record. */
  ck_assert_int_eq(sh(SP " replay run/run.json"), 3);
  ASSERT_HAS(err_text, "changed: data of fit record");
  ASSERT_HAS(err_text, want);
}
END_TEST

START_TEST(test_tampered_model_and_fit_record)
{
  char before[65];
  sha256sum("model/m.spm", before);
  ck_assert_int_eq(sh("echo '# an added comment' >> model/m.spm"), 0);
  ck_assert_int_eq(sh(SP " replay run/run.json"), 3);
  ASSERT_HAS(err_text, "changed: model:");
  ASSERT_HAS(err_text, before);
  ck_assert_int_eq(sh("sed -i '$d' model/m.spm"), 0); /* the comment removed again */
  ck_assert_int_eq(sh(SP " replay run/run.json"), 0);
  /* A fit record: one trailing blank changes its hash, not its content. */
  ck_assert_int_eq(sh("echo ' ' >> fits/g.json"), 0);
  ck_assert_int_eq(sh(SP " replay run/run.json"), 3);
  ASSERT_HAS(err_text, "changed: fit record of input G");
  ASSERT_HAS(err_text, "fits/g.json");
  ck_assert_int_eq(sh("truncate -s -2 fits/g.json"), 0); /* the " \n" removed again */
  ck_assert_int_eq(sh(SP " replay run/run.json"), 0);
  /* The model text inside the record, edited without its hash. */
  const char *k[] = {"model", "text"};
  edit("run/run.json", k, 2, 0, 0, "input F [N] ~ normal(mean=1, sd=1)\noutput s [N] = F\n");
  ck_assert_int_eq(sh(SP " replay run/run.json"), 3);
  ASSERT_HAS(err_text, "changed: model text inside the record");
}
END_TEST

START_TEST(test_missing_input)
{
  ck_assert_int_eq(sh("rm in/shear_modulus.csv"), 0);
  ck_assert_int_eq(sh(SP " replay fits/g.json"), 3);
  ASSERT_HAS(err_text, "missing: data");
  ASSERT_HAS(err_text, "shear_modulus.csv");
  ck_assert_int_eq(sh(SP " replay run/run.json"), 3);
  ASSERT_HAS(err_text, "missing: data of fit record");
  ck_assert_int_eq(sh("rm model/m.spm"), 0);
  ck_assert_int_eq(sh(SP " replay run/run.json"), 3);
  ASSERT_HAS(err_text, "missing: model");
}
END_TEST

START_TEST(test_edited_result)
{
  const char *k[] = {"results", "outputs", "0", "mean"};
  double was = number_at("run/run.json", k, 4);
  double now = was * (1 + 1e-6);
  edit("run/run.json", k, 4, now, 0, NULL);
  ck_assert_int_eq(sh(SP " replay run/run.json"), 1);
  char want[256];
  snprintf(want, sizeof want, "results.outputs[0].mean: recorded %.17g, replayed %.17g", now, was);
  /* jansson prints 17 significant digits the way printf's %.17g does. */
  ASSERT_HAS(out_text, want);
  ASSERT_HAS(out_text, "relative difference 1e-06");
  ASSERT_HAS(out_text, "1 of ");
  /* A fit record's candidate. */
  const char *f[] = {"candidates", "0", "loglik"};
  double ll = number_at("fits/dm.json", f, 3);
  edit("fits/dm.json", f, 3, ll + 1, 0, NULL);
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 1);
  ASSERT_HAS(out_text, "candidates[0].loglik: recorded");
  /* The edited record no longer matches its hash in the run record. */
  ck_assert_int_eq(sh(SP " replay run/run.json"), 3);
}
END_TEST

START_TEST(test_malformed_records)
{
  ck_assert_int_eq(sh("cp run/run.json run/bad1.json && cp run/run.json run/bad2.json"), 0);
  const char *seed[] = {"options", "seed"};
  edit("run/bad1.json", seed, 2, 0, 1, NULL);
  ck_assert_int_eq(sh(SP " replay run/bad1.json"), 3);
  ASSERT_HAS(err_text, "field 'options.seed' is missing");
  const char *n[] = {"options", "samples_requested"};
  edit("run/bad2.json", n, 2, 0, 0, "many");
  ck_assert_int_eq(sh(SP " replay run/bad2.json"), 3);
  ASSERT_HAS(err_text, "field 'options.samples_requested' must be a non-negative integer");
  const char *b[] = {"options", "bootstrap"};
  edit("fits/dm.json", b, 2, 0, 1, NULL);
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 3);
  ASSERT_HAS(err_text, "field 'options.bootstrap' is missing");
  const char *col[] = {"data", "column"};
  edit("fits/g.json", col, 2, 7, 0, NULL);
  ck_assert_int_eq(sh(SP " replay fits/g.json"), 3);
  ASSERT_HAS(err_text, "field 'data.column' must be a string");
  ck_assert_int_eq(sh("echo '{\"format\": \"something\"}' > odd.json"), 0);
  ck_assert_int_eq(sh(SP " replay odd.json"), 3);
  ASSERT_HAS(err_text, "field 'format' must be");
  ck_assert_int_eq(sh("echo '{' > broken.json"), 0);
  ck_assert_int_eq(sh(SP " replay broken.json"), 3);
  ck_assert_int_eq(sh(SP " replay nothing.json"), 6);
  ck_assert_int_eq(sh(SP " replay"), 2);
  ck_assert_int_eq(sh(SP " replay run/run.json --tolerance -1"), 2);
}
END_TEST

START_TEST(test_threads_identical)
{
  ck_assert_int_eq(sh(SP " propagate model/m.spm --samples 30000 --threads 1 --json > t1.json"), 0);
  ck_assert_int_eq(sh(SP " propagate model/m.spm --samples 30000 --threads 4 --json > t4.json"), 0);
  ck_assert_int_eq(sh(SP " propagate model/m.spm --samples 30000 --seed 2 --json > s2.json"), 0);
  char *a = slurp(path_in("t1.json")), *b = slurp(path_in("t4.json")), *c = slurp(path_in("s2.json"));
  /* The texts differ (command, threads; perhaps the time stamp) ... */
  ck_assert_str_ne(a, b);
  sp_replay_report rep;
  sp_error err;
  sp_error_clear(&err);
  /* ... but nothing else, bit for bit. */
  sp_status s = sp_replay_compare(a, strlen(a), b, strlen(b), 0, &rep, &err);
  ck_assert_msg(s == SP_OK, "threads 1 and 4 differ: %s", rep.ndiffs ? rep.diffs[0].path : err.msg);
  ck_assert_uint_gt(rep.compared, 200);
  sp_replay_report_clear(&rep);
  /* Another seed does differ, so the comparison can fail. */
  ck_assert_int_eq(sp_replay_compare(a, strlen(a), c, strlen(c), 0, &rep, &err), SP_EDIFFERS);
  ck_assert_uint_gt(rep.ndiffs_total, 10);
  sp_replay_report_clear(&rep);
  free(a);
  free(b);
  free(c);
  /* The fit's bootstrap on 1 and 4 threads. */
  ck_assert_int_eq(sh(SP " fit in/shear_modulus.csv --column G --pvalues bootstrap --bootstrap 60 "
                      "--threads 1 --json > f1.json"), 0);
  ck_assert_int_eq(sh(SP " fit in/shear_modulus.csv --column G --pvalues bootstrap --bootstrap 60 "
                      "--threads 4 --json > f4.json"), 0);
  a = slurp(path_in("f1.json"));
  b = slurp(path_in("f4.json"));
  s = sp_replay_compare(a, strlen(a), b, strlen(b), 0, &rep, &err);
  ck_assert_msg(s == SP_OK, "fit threads 1 and 4 differ: %s", rep.ndiffs ? rep.diffs[0].path : err.msg);
  sp_replay_report_clear(&rep);
  free(a);
  free(b);
}
END_TEST

START_TEST(test_compare_rules)
{
  /* Closed forms: the relative difference of 1 and 1 + 2^-40 is
   * 2^-40 / (1 + 2^-40). */
  const char *a = "{\"format\": \"scatterprop-run\", \"version\": 1, \"created_utc\": \"x\","
                  " \"options\": {\"threads\": 1}, \"results\": {\"v\": 1.0, \"n\": 100,"
                  " \"list\": [1, 2]}}";
  const char *b = "{\"format\": \"scatterprop-run\", \"version\": 1, \"created_utc\": \"y\","
                  " \"options\": {\"threads\": 8}, \"results\": {\"v\": 1.0000000000009095,"
                  " \"n\": 100, \"list\": [1, 2]}}";
  sp_replay_report rep;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_replay_compare(a, strlen(a), b, strlen(b), 0, &rep, &err), SP_EDIFFERS);
  ck_assert_uint_eq(rep.ndiffs_total, 1);
  ck_assert_str_eq(rep.diffs[0].path, "results.v");
  ck_assert_str_eq(rep.diffs[0].recorded, "1.0");
  ASSERT_REL(rep.diffs[0].rel, ldexp(1, -40) / (1 + ldexp(1, -40)), 4 * EPS);
  /* format, version, v, n, list[0], list[1]: the ignored created_utc and
   * options.threads are not counted */
  ck_assert_uint_eq(rep.compared, 6);
  sp_replay_report_clear(&rep);
  ck_assert_int_eq(sp_replay_compare(a, strlen(a), b, strlen(b), 1e-9, &rep, &err), SP_OK);
  sp_replay_report_clear(&rep);
  ck_assert_int_eq(sp_replay_compare(a, strlen(a), b, strlen(b), 1e-13, &rep, &err), SP_EDIFFERS);
  sp_replay_report_clear(&rep);
  /* Integers are exact whatever the tolerance; a missing element is
   * listed as absent. */
  const char *c = "{\"format\": \"scatterprop-run\", \"version\": 1, \"options\": {},"
                  " \"results\": {\"v\": 1.0,"
                  " \"n\": 101, \"list\": [1]}}";
  ck_assert_int_eq(sp_replay_compare(a, strlen(a), c, strlen(c), 0.5, &rep, &err), SP_EDIFFERS);
  ck_assert_uint_eq(rep.ndiffs_total, 2);
  ck_assert_str_eq(rep.diffs[0].path, "results.n");
  ck_assert_str_eq(rep.diffs[1].path, "results.list[1]");
  ck_assert_str_eq(rep.diffs[1].replayed, "(absent)");
  sp_replay_report_clear(&rep);
  /* Two kinds of record. */
  const char *d = "{\"format\": \"scatterprop-fit\", \"version\": 1}";
  ck_assert_int_eq(sp_replay_compare(a, strlen(a), d, strlen(d), 0, &rep, &err), SP_EDATA);
  sp_replay_report_clear(&rep);
}
END_TEST

START_TEST(test_other_build)
{
  /* A record that names another compiler is compared within 1e-9. */
  const char *k[] = {"tool", "compiler"};
  edit("fits/dm.json", k, 2, 0, 0, "GNU 1.0.0");
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 0);
  ASSERT_HAS(err_text, "note:");
  ASSERT_HAS(err_text, "compiler GNU 1.0.0 -> ");
  ASSERT_HAS(out_text, "within relative 1e-09");
  /* A change below the tolerance passes, one above it is listed. */
  const char *f[] = {"candidates", "0", "loglik"};
  double ll = number_at("fits/dm.json", f, 3);
  edit("fits/dm.json", f, 3, ll * (1 + 1e-12), 0, NULL);
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 0);
  edit("fits/dm.json", f, 3, ll * (1 + 1e-7), 0, NULL);
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 1);
  /* --tolerance 0 insists on the bits. */
  edit("fits/dm.json", f, 3, ll * (1 + 1e-12), 0, NULL);
  ck_assert_int_eq(sh(SP " replay fits/dm.json --tolerance 0"), 1);
  ASSERT_HAS(out_text, "bit for bit");
}
END_TEST

START_TEST(test_old_fit_record)
{
  /* A fit record from before provenance was added (version 1 all the
   * same): its new fields deleted, it still replays, within the other-build
   * tolerance since it does not name its compiler and libraries. */
  const char *del[][3] = {{"provenance", NULL, NULL}, {"command", NULL, NULL},
                          {"tool", "compiler", NULL}, {"tool", "gsl", NULL},
                          {"tool", "system", NULL}, {"options", "threads", NULL},
                          {"options", "bootstrap", "generator"},
                          {"options", "bootstrap", "stream_rule"},
                          {"options", "bootstrap", "rule"}};
  for (size_t i = 0; i < sizeof del / sizeof del[0]; i++) {
    size_t n = del[i][2] ? 3 : del[i][1] ? 2 : 1;
    edit("fits/dm.json", del[i], n, 0, 1, NULL);
  }
  char *t = slurp(path_in("fits/dm.json"));
  ck_assert_ptr_null(strstr(t, "provenance"));
  free(t);
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 0);
  ASSERT_HAS(err_text, "does not name the compiler and libraries");
  ASSERT_HAS(out_text, "within relative 1e-09");
}
END_TEST

static Suite *suite(void)
{
  Suite *s = suite_create("replay");
  TCase *t = tcase_create("replay");
  tcase_add_checked_fixture(t, setup, teardown);
  tcase_set_timeout(t, 120);
  tcase_add_test(t, test_fit_roundtrip);
  tcase_add_test(t, test_run_roundtrip);
  tcase_add_test(t, test_tampered_csv);
  tcase_add_test(t, test_tampered_model_and_fit_record);
  tcase_add_test(t, test_missing_input);
  tcase_add_test(t, test_edited_result);
  tcase_add_test(t, test_malformed_records);
  tcase_add_test(t, test_threads_identical);
  tcase_add_test(t, test_other_build);
  tcase_add_test(t, test_old_fit_record);
  suite_add_tcase(s, t);
  TCase *c = tcase_create("compare");
  tcase_add_test(c, test_compare_rules);
  suite_add_tcase(s, c);
  return s;
}

int main(void) { return sp_run_suite(suite()); }
