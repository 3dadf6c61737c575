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
  /* The report is read into locals and cleared first, so that a failed
   * check leaks nothing (valgrind runs the suites without fork). */
  const size_t ninputs = rep.ninputs, ndiffs = rep.ndiffs_total, compared = rep.compared;
  const int differs = rep.build_differs;
  const double tol = rep.tolerance;
  char note[sizeof rep.build_note];
  snprintf(note, sizeof note, "%s", rep.build_note);
  sp_replay_report_clear(&rep);
  ck_assert_uint_eq(ninputs, 1);
  ck_assert_uint_eq(ndiffs, 0);
  /* The record was made by the command-line tool on this machine, so the
   * build is the same.  The one fact that may differ is the processor's
   * features when this suite runs under valgrind, whose virtual processor
   * reports fewer (AVX-512, say): the replay rightly names that and
   * compares within its tolerance. */
  if (differs) {
    ck_assert_msg(strncmp(note, "processor features ", 19) == 0 && !strchr(note, ';'),
                  "build differs: %s", note);
    ck_assert(tol > 0);
  } else {
    ck_assert(tol == 0);
  }
  /* Every candidate's numbers are compared: more than a hundred values. */
  ck_assert_uint_gt(compared, 100);
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

/* The record text with the fields that say how and when it was made, not
 * what, taken out: the time stamp, the command line and the thread count
 * asked for.  Everything else, build facts included, must be the same. */
static json_t *what_was_made(const char *text)
{
  json_error_t je;
  json_t *r = json_loads(text, 0, &je);
  ck_assert_msg(r != NULL, "not JSON: %s", je.text);
  json_object_del(r, "created_utc");
  json_object_del(r, "command");
  json_object_del(json_object_get(r, "options"), "threads");
  return r;
}

START_TEST(test_threads_identical_records)
{
  /* Records of 1 and 4 threads, as whole JSON trees: identical apart from
   * the time stamp, the command line and options.threads. */
  ck_assert_int_eq(sh(SP " propagate model/m.spm --samples 30000 --threads 1 --out r1"), 0);
  ck_assert_int_eq(sh(SP " propagate model/m.spm --samples 30000 --threads 4 --out r4"), 0);
  char *a = slurp(path_in("r1/run.json")), *b = slurp(path_in("r4/run.json"));
  ASSERT_HAS(b, "\"threads\": 4");
  json_t *ta = what_was_made(a), *tb = what_was_made(b);
  ck_assert_msg(json_equal(ta, tb), "run records of 1 and 4 threads differ");
  json_decref(ta);
  json_decref(tb);
  free(a);
  free(b);
  /* The tables too, byte for byte. */
  ck_assert_int_eq(sh("cmp r1/q.percentiles.csv r4/q.percentiles.csv && "
                      "cmp r1/q.histogram.csv r4/q.histogram.csv"), 0);
  ck_assert_int_eq(sh(SP " fit in/shear_modulus.csv --column G --by lot --pvalues bootstrap "
                      "--bootstrap 60 --threads 1 --out f1.json"), 0);
  ck_assert_int_eq(sh(SP " fit in/shear_modulus.csv --column G --by lot --pvalues bootstrap "
                      "--bootstrap 60 --threads 4 --out f4.json"), 0);
  a = slurp(path_in("f1.json"));
  b = slurp(path_in("f4.json"));
  ta = what_was_made(a);
  tb = what_was_made(b);
  ck_assert_msg(json_equal(ta, tb), "fit records of 1 and 4 threads differ");
  json_decref(ta);
  json_decref(tb);
  free(a);
  free(b);
  /* Each replays on the other thread count. */
  ck_assert_int_eq(sh(SP " replay r1/run.json --threads 4"), 0);
  ck_assert_int_eq(sh(SP " replay f4.json --threads 1"), 0);
  ASSERT_HAS(out_text, "bit for bit");
}
END_TEST

START_TEST(test_mistyped_fields)
{
  /* A seed as the string "7": only seeds of 2^63 and more are strings. */
  ck_assert_int_eq(sh("cp run/run.json run/s.json"), 0);
  const char *seed[] = {"options", "seed"};
  edit("run/s.json", seed, 2, 0, 0, "1");
  ck_assert_int_eq(sh(SP " replay run/s.json"), 3);
  ASSERT_HAS(err_text, "field 'options.seed' must be a non-negative integer");
  ASSERT_HAS(err_text, "got \"1\"");
  ASSERT_HAS(err_text, "hint: the record was edited or damaged");
  /* A result of another type, a result missing, a field added, a count
   * written as a real: this build writes none of them, so the record is
   * refused (exit 3) naming the field, not compared. */
  const char *mean[] = {"results", "outputs", "0", "mean"};
  ck_assert_int_eq(sh("cp run/run.json run/t.json && cp run/run.json run/m.json && "
                      "cp run/run.json run/x.json && cp run/run.json run/n.json"), 0);
  edit("run/t.json", mean, 4, 0, 0, "4.85");
  ck_assert_int_eq(sh(SP " replay run/t.json"), 3);
  ASSERT_HAS(err_text, "field 'results.outputs[0].mean' must be a real number");
  ASSERT_HAS(err_text, "got \"4.85\"");
  edit("run/m.json", mean, 4, 0, 1, NULL);
  ck_assert_int_eq(sh(SP " replay run/m.json"), 3);
  ASSERT_HAS(err_text, "field 'results.outputs[0].mean' is missing");
  const char *extra[] = {"results", "bogus"};
  edit("run/x.json", extra, 2, 1.5, 0, NULL);
  ck_assert_int_eq(sh(SP " replay run/x.json"), 3);
  ASSERT_HAS(err_text, "field 'results.bogus' is not one this build writes");
  const char *n[] = {"results", "outputs", "0", "n"};
  edit("run/n.json", n, 4, 20000, 0, NULL); /* json_real: 20000.0 */
  ck_assert_int_eq(sh(SP " replay run/n.json"), 3);
  ASSERT_HAS(err_text, "field 'results.outputs[0].n' must be an integer");
  /* In a fit record too. */
  const char *ll[] = {"candidates", "0", "loglik"};
  edit("fits/dm.json", ll, 3, 0, 0, "high");
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 3);
  ASSERT_HAS(err_text, "field 'candidates[0].loglik' must be a number");
  /* A result the fit record reader does not check: the choice's reason. */
  const char *why[] = {"choice_reason"};
  ck_assert_int_eq(sh("cp fits/g.json fits/w.json"), 0);
  edit("fits/w.json", why, 1, 3, 0, NULL);
  ck_assert_int_eq(sh(SP " replay fits/w.json"), 3);
  ASSERT_HAS(err_text, "field 'choice_reason' must be a string");
}
END_TEST

START_TEST(test_moved_without_its_folder)
{
  /* A record and its CSV moved together, away from the folder the record
   * was made in: found beside the record. */
  ck_assert_int_eq(sh("mkdir a && cp in/coil_dm.csv a/ && cd a && " SP " fit coil_dm.csv "
                      "--column Dm --bootstrap 20 --out r.json"), 0);
  ck_assert_int_eq(sh("mv a b && " SP " replay b/r.json"), 0);
  ASSERT_HAS(out_text, "identical");
  /* Gone: the message says where it was looked for, with a hint. */
  ck_assert_int_eq(sh("rm b/coil_dm.csv && " SP " replay b/r.json"), 3);
  char want[1200];
  snprintf(want, sizeof want, "looked for coil_dm.csv at %s/a/coil_dm.csv (the folder it was "
           "made in), coil_dm.csv (the current folder), b/coil_dm.csv (the record's folder)",
           dir);
  ASSERT_HAS(err_text, want);
  ASSERT_HAS(err_text, "an input file is missing, so nothing was rerun");
  ASSERT_HAS(err_text, "hint: copy the file");
}
END_TEST

START_TEST(test_library_versions)
{
  /* Another jansson at run time, and a record without libcsv's version:
   * both are said, and numbers are compared within the tolerance. */
  const char *jl[] = {"provenance", "libraries", "jansson", "loaded"};
  edit("fits/dm.json", jl, 4, 0, 0, "2.13");
  const char *csv[] = {"provenance", "libraries", "libcsv"};
  edit("fits/dm.json", csv, 3, 0, 1, NULL);
  const char *cpu[] = {"provenance", "os", "cpu_features"};
  edit("fits/dm.json", cpu, 3, 0, 0, "sse2");
  ck_assert_int_eq(sh(SP " replay fits/dm.json"), 0);
  ASSERT_HAS(err_text, "processor features sse2 -> ");
  ASSERT_HAS(err_text, "jansson loaded 2.13 -> ");
  ASSERT_HAS(err_text, "libcsv not recorded (this build: ");
  ASSERT_HAS(out_text, "within relative 1e-09");
}
END_TEST

START_TEST(test_build_facts)
{
  json_error_t je;
  json_t *r = json_load_file(path_in("run/run.json"), 0, &je);
  ck_assert_ptr_nonnull(r);
  json_t *lib = json_object_get(json_object_get(r, "provenance"), "libraries");
  /* udunits2's version as its pkg-config file states it (the same source
   * the build uses; skipped where pkg-config does not know udunits). */
  if (sh("pkg-config --modversion udunits") == 0) {
    out_text[strcspn(out_text, "\n")] = '\0';
    const char *u = json_string_value(json_object_get(lib, "udunits2"));
    ck_assert_msg(u && strncmp(u, out_text, strlen(out_text)) == 0, "udunits2 '%s', want %s",
                  u ? u : "(none)", out_text);
  }
  /* The revision this program was built from: a commit of this checkout's
   * history (HEAD, or an earlier one when a commit came after the build),
   * "-dirty" when tracked files had changes at the build. */
  if (sh("git -C '%s' rev-parse --short=12 HEAD", SP_SOURCE_DIR) == 0) {
    const char *g = json_string_value(json_object_get(json_object_get(r, "tool"), "git"));
    ck_assert_ptr_nonnull(g);
    ck_assert_msg(strlen(g) >= 12 && strspn(g, "0123456789abcdef") == 12 &&
                      (g[12] == '\0' || strcmp(g + 12, "-dirty") == 0),
                  "git '%s'", g);
    ck_assert_msg(sh("git -C '%s' merge-base --is-ancestor %.12s HEAD", SP_SOURCE_DIR, g) == 0,
                  "git '%s' is not HEAD or an ancestor of it", g);
  }
  /* The processor's features, against the kernel's list of them. */
  const char *feat = json_string_value(
      json_object_get(json_object_get(json_object_get(r, "provenance"), "os"), "cpu_features"));
  ck_assert_ptr_nonnull(feat);
  if (sh("uname -m | grep -qx x86_64 && test -r /proc/cpuinfo") == 0) {
    const char *flags[] = {"sse2", "avx2", "fma"};
    for (int i = 0; i < 3; i++) {
      int has = sh("grep -m1 '^flags' /proc/cpuinfo | grep -qw %s", flags[i]) == 0;
      ck_assert_msg(has == (strstr(feat, flags[i]) != NULL), "cpu_features '%s', %s %s", feat,
                    flags[i], has ? "present" : "absent");
    }
  }
  /* The command line, the seed, the generator and the stream rule, the
   * model text and its SHA-256 (by coreutils), time stamps in UTC. */
  json_t *cmd = json_object_get(r, "command");
  ck_assert_str_eq(json_string_value(json_array_get(cmd, 0)), "propagate");
  ck_assert_str_eq(json_string_value(json_array_get(cmd, 1)), "model/m.spm");
  json_t *opt = json_object_get(r, "options");
  ck_assert_int_eq(json_integer_value(json_object_get(opt, "seed")), 1);
  ASSERT_HAS(json_string_value(json_object_get(opt, "generator")), "pcg64");
  ASSERT_HAS(json_string_value(json_object_get(opt, "stream_rule")), "splitmix64");
  char sha[65];
  sha256sum("model/m.spm", sha);
  json_t *model = json_object_get(r, "model");
  ck_assert_str_eq(json_string_value(json_object_get(model, "sha256")), sha);
  char *text = slurp(path_in("model/m.spm"));
  ck_assert_str_eq(json_string_value(json_object_get(model, "text")), text);
  free(text);
  const char *t = json_string_value(json_object_get(r, "created_utc"));
  ck_assert_msg(t && strlen(t) == 20 && t[4] == '-' && t[10] == 'T' && t[19] == 'Z',
                "created_utc '%s' is not ISO 8601 UTC", t ? t : "(none)");
  json_decref(r);
}
END_TEST

START_TEST(test_git_revision_script)
{
  /* cmake/git_revision.cmake on a repository of its own: the commit, then
   * "-dirty" with a tracked file changed, then the next commit; the header
   * is left alone (same time stamp) when the revision is unchanged, so an
   * unchanged revision rebuilds nothing.  Skipped without git or cmake. */
  if (sh("command -v git && command -v cmake") != 0) return;
  const char *g = "git -c user.name=t -c user.email=t@t";
  ck_assert_int_eq(sh("mkdir repo && cd repo && git init -q && echo a > f && git add f && "
                      "%s commit -q -m one",
                      g),
                   0);
  char run[1024];
  snprintf(run, sizeof run,
           "cmake -DSRC=repo -DOUT=rev.h -P '%s/cmake/git_revision.cmake' && "
           "cat rev.h",
           SP_SOURCE_DIR);
  ck_assert_int_eq(sh("%s", run), 0);
  char *h1 = strdup(out_text);
  ck_assert_int_eq(sh("git -C repo rev-parse --short=12 HEAD"), 0);
  out_text[12] = '\0';
  char want[64];
  snprintf(want, sizeof want, "#define SP_BUILD_GIT_REVISION \"%s\"\n", out_text);
  ASSERT_HAS(h1, want);
  /* Unchanged: the file is not rewritten. */
  ck_assert_int_eq(sh("touch -d '2000-01-01' rev.h && %s >/dev/null && "
                      "test \"$(date -r rev.h +%%Y)\" = 2000",
                      run),
                   0);
  /* A tracked file changed: -dirty; an untracked file alone does not count. */
  ck_assert_int_eq(sh("echo b >> repo/f && %s", run), 0);
  snprintf(want + strlen(want) - 2, sizeof want - strlen(want) + 2, "-dirty\"\n");
  ASSERT_HAS(out_text, want);
  ck_assert_int_eq(sh("cd repo && %s commit -q -am two && echo u > untracked", g), 0);
  ck_assert_int_eq(sh("%s", run), 0);
  ASSERT_LACKS(out_text, "-dirty");
  ck_assert_str_ne(out_text, h1);
  free(h1);
  /* Not a git checkout: "unknown". */
  ck_assert_int_eq(sh("mkdir plain && cmake -DSRC=plain -DOUT=p.h -P "
                      "'%s/cmake/git_revision.cmake' && cat p.h",
                      SP_SOURCE_DIR),
                   0);
  ASSERT_HAS(out_text, "\"unknown\"");
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
  tcase_add_test(t, test_threads_identical_records);
  tcase_add_test(t, test_mistyped_fields);
  tcase_add_test(t, test_moved_without_its_folder);
  tcase_add_test(t, test_library_versions);
  tcase_add_test(t, test_build_facts);
  tcase_add_test(t, test_git_revision_script);
  suite_add_tcase(s, t);
  TCase *c = tcase_create("compare");
  tcase_add_test(c, test_compare_rules);
  suite_add_tcase(s, c);
  return s;
}

int main(void) { return sp_run_suite(suite()); }
