/* Tests of --archive: the layout, the rewritten paths and model, an
 * archive that replays after it is moved and its originals deleted,
 * records never overwritten without --force, inputs that changed since
 * their record refused, shared file names kept apart.  The CLI runs end
 * to end (SP_CLI_PATH) on copies of the demo data (data/README.md:
 * invented data); file hashes are checked with coreutils' sha256sum,
 * independent of the library. */
#include <jansson.h>
#include <string.h>
#include <sys/stat.h>

#include "scatterprop/archive.h"
#include "sp_test.h"

static char dir[] = "/tmp/sp_archive_XXXXXX";
static int exists(const char *rel)
{
  struct stat st;
  return stat(path_in(rel), &st) == 0;
}

static void sha256sum(const char *rel, char hex[65])
{
  char cmd[1024];
  snprintf(cmd, sizeof cmd, "sha256sum '%s'", path_in(rel));
  FILE *p = popen(cmd, "r");
  ck_assert_ptr_nonnull(p);
  ck_assert_int_eq(fscanf(p, "%64s", hex), 1);
  pclose(p);
}

static json_t *load(const char *rel)
{
  json_error_t je;
  json_t *r = json_load_file(path_in(rel), 0, &je);
  ck_assert_msg(r != NULL, "%s: %s", rel, je.text);
  return r;
}

/* Two data files fitted from the top folder, the model one folder down. */
static void setup(void)
{
  test_dir_make(dir);
  ck_assert_int_eq(sh("mkdir -p src/in src/fits src/model && cp '%s/data/coil_dm.csv' "
                      "'%s/data/shear_modulus.csv' src/in/", SP_SOURCE_DIR, SP_SOURCE_DIR), 0);
  ck_assert_int_eq(sh("cd src && " SP " fit in/coil_dm.csv --column Dm --bootstrap 40 "
                      "--out fits/dm.json"), 0);
  ck_assert_int_eq(sh("cd src && " SP " fit in/shear_modulus.csv --column G --bootstrap 40 "
                      "--out fits/g.json"), 0);
  write_file(path_in("src/model/m.spm"), "# archive test model\n"
                                         "input Dm [mm]  ~ fit(\"../fits/dm.json\")   # coil\n"
                                         "input G  [GPa] ~ fit( \"../fits/g.json\" )\n"
                                         "output q [GPa/mm] = G / Dm\n");
}

static void teardown(void)
{
  test_dir_remove(dir);
}

START_TEST(test_fit_archive_moves)
{
  ck_assert_int_eq(sh("cd src && " SP " fit in/coil_dm.csv --column Dm --bootstrap 40 "
                      "--archive ../A"), 0);
  ASSERT_HAS(out_text, "archive written to ../A/");
  ck_assert(exists("A/fits/Dm.json"));
  ck_assert(exists("A/data/coil_dm.csv"));
  ck_assert(exists("A/MANIFEST.sha256"));
  /* The data are copied byte for byte. */
  char a[65], b[65];
  sha256sum("src/in/coil_dm.csv", a);
  sha256sum("A/data/coil_dm.csv", b);
  ck_assert_str_eq(a, b);
  /* The record names its data relative to itself, and says what it
   * rewrote. */
  json_t *r = load("A/fits/Dm.json");
  ck_assert_str_eq(json_string_value(json_object_get(json_object_get(r, "data"), "path")),
                   "../data/coil_dm.csv");
  json_t *rw = json_array_get(json_object_get(json_object_get(r, "archive"), "rewritten"), 0);
  ck_assert_str_eq(json_string_value(json_object_get(rw, "field")), "data.path");
  ck_assert_str_eq(json_string_value(json_object_get(rw, "from")), "in/coil_dm.csv");
  json_decref(r);
  /* Moved, originals gone, replayed from elsewhere. */
  ck_assert_int_eq(sh("mkdir far && mv A far/B && rm -rf src"), 0);
  ck_assert_int_eq(sh("cd / && " SP " replay '%s/far/B/fits/Dm.json'", dir), 0);
  ASSERT_HAS(out_text, "identical");
  /* The manifest checks with coreutils. */
  ck_assert_int_eq(sh("cd far/B && sha256sum -c --quiet MANIFEST.sha256"), 0);
}
END_TEST

START_TEST(test_fit_archive_charts)
{
  /* The charts of --plots go to charts/, byte for byte (the .gp and .dat
   * files are written with or without gnuplot). */
  ck_assert_int_eq(sh("cd src && " SP " fit in/coil_dm.csv --column Dm --pvalues approximation "
                      "--plots P --archive ../A"), 0);
  char a[65], b[65];
  sha256sum("src/P/fit_Dm_hist.gp", a);
  sha256sum("A/charts/fit_Dm_hist.gp", b);
  ck_assert_str_eq(a, b);
  sha256sum("src/P/fit_Dm_prob.dat", a);
  sha256sum("A/charts/fit_Dm_prob.dat", b);
  ck_assert_str_eq(a, b);
  char *m = slurp(path_in("A/MANIFEST.sha256"));
  ASSERT_HAS(m, "  charts/fit_Dm_ecdf.dat\n");
  free(m);
  ck_assert_int_eq(sh(SP " replay A/fits/Dm.json"), 0);
}
END_TEST

START_TEST(test_run_archive_moves)
{
  ck_assert_int_eq(sh("cd src && " SP " propagate model/m.spm --samples 20000 --out run "
                      "--archive ../A"), 0);
  ck_assert(exists("A/run.json"));
  ck_assert(exists("A/model.spm"));
  ck_assert(exists("A/fits/dm.json"));
  ck_assert(exists("A/fits/g.json"));
  ck_assert(exists("A/data/coil_dm.csv"));
  ck_assert(exists("A/data/shear_modulus.csv"));
  /* The model's fit() paths now point inside the archive, the rest of
   * each line is kept. */
  char *m = slurp(path_in("A/model.spm"));
  ASSERT_HAS(m, "input Dm [mm]  ~ fit(\"fits/dm.json\")   # coil\n");
  ASSERT_HAS(m, "input G  [GPa] ~ fit( \"fits/g.json\" )\n");
  ck_assert_ptr_null(strstr(m, "../fits"));
  free(m);
  /* The archived run record names the archived model by its new hash
   * and keeps the old one in its archive object. */
  char orig[65], now[65];
  sha256sum("src/model/m.spm", orig);
  sha256sum("A/model.spm", now);
  json_t *r = load("A/run.json");
  json_t *model = json_object_get(r, "model");
  ck_assert_str_eq(json_string_value(json_object_get(model, "path")), "model.spm");
  ck_assert_str_eq(json_string_value(json_object_get(model, "sha256")), now);
  json_t *rws = json_object_get(json_object_get(r, "archive"), "rewritten");
  int found = 0;
  for (size_t i = 0; i < json_array_size(rws); i++) {
    json_t *x = json_array_get(rws, i);
    if (strcmp(json_string_value(json_object_get(x, "field")), "model.sha256") == 0) {
      ck_assert_str_eq(json_string_value(json_object_get(x, "from")), orig);
      found = 1;
    }
  }
  ck_assert(found);
  /* Each input's fit record is named by the archived copy's hash. */
  json_t *fr = json_object_get(json_array_get(json_object_get(r, "inputs"), 0), "fit_record");
  char fsha[65];
  sha256sum("A/fits/dm.json", fsha);
  ck_assert_str_eq(json_string_value(json_object_get(fr, "sha256")), fsha);
  json_decref(r);
  /* The run record in --out and the archived one replay; then move the
   * archive, delete the originals, replay it. */
  ck_assert_int_eq(sh("cd src && " SP " replay run/run.json"), 0);
  ck_assert_int_eq(sh("mkdir x && mv A x/moved && rm -rf src"), 0);
  ck_assert_int_eq(sh("cd x && " SP " replay moved/run.json"), 0);
  ASSERT_HAS(out_text, "identical");
  ASSERT_HAS(out_text, "5 input files unchanged");
  /* Each fit record inside replays too. */
  ck_assert_int_eq(sh(SP " replay x/moved/fits/g.json"), 0);
  /* A byte changed inside the archive is named. */
  ck_assert_int_eq(sh("sed -i 's/^T01,W24-117,79.08$/T01,W24-117,79.09/' "
                      "x/moved/data/shear_modulus.csv"), 0);
  ck_assert_int_eq(sh(SP " replay x/moved/run.json"), 3);
  ASSERT_HAS(err_text, "changed: data of fit record");
  ASSERT_HAS(err_text, "shear_modulus.csv");
}
END_TEST

START_TEST(test_never_overwritten)
{
  /* An existing fit record is refused without --force and kept. */
  char before[65], after[65];
  sha256sum("src/fits/dm.json", before);
  ck_assert_int_eq(sh("cd src && " SP " fit in/coil_dm.csv --column Dm --seed 9 "
                      "--bootstrap 40 --out fits/dm.json"), 6);
  ASSERT_HAS(err_text, "refusing to overwrite");
  sha256sum("src/fits/dm.json", after);
  ck_assert_str_eq(before, after);
  /* An archive folder that holds files is refused without --force. */
  ck_assert_int_eq(sh("cd src && " SP " propagate model/m.spm --samples 5000 --archive ../A"), 0);
  sha256sum("A/run.json", before);
  ck_assert_int_eq(sh("cd src && " SP " propagate model/m.spm --samples 5000 --seed 3 "
                      "--archive ../A"), 6);
  ASSERT_HAS(err_text, "not empty");
  sha256sum("A/run.json", after);
  ck_assert_str_eq(before, after);
  ck_assert_int_eq(sh("cd src && " SP " propagate model/m.spm --samples 5000 --seed 3 "
                      "--archive ../A --force"), 0);
  sha256sum("A/run.json", after);
  ck_assert_str_ne(before, after);
  ck_assert_int_eq(sh(SP " replay A/run.json"), 0);
  /* An empty folder is taken as it is; no temporary folder is left. */
  ck_assert_int_eq(sh("mkdir E && cd src && " SP " propagate model/m.spm --samples 5000 "
                      "--archive ../E"), 0);
  ck_assert(exists("E/run.json"));
  ck_assert_int_eq(sh("ls | grep -c tmp-"), 1); /* grep finds nothing: exit 1 */
  /* A folder whose parent is missing: nothing is made. */
  ck_assert_int_eq(sh("cd src && " SP " propagate model/m.spm --samples 5000 "
                      "--archive ../no/such/A"), 6);
  ck_assert(!exists("no"));
}
END_TEST

START_TEST(test_force_replaces_whole)
{
  /* --force replaces an earlier archive as a whole: the second run uses one
   * fit record only, and the first one's other record, data and charts are
   * gone (the manifest lists every file there is). */
  ck_assert_int_eq(sh("cd src && " SP " propagate model/m.spm --samples 5000 --plots P "
                      "--archive ../A"),
                   0);
  ck_assert(exists("A/fits/g.json") && exists("A/charts/run_q_hist.dat"));
  write_file(path_in("src/model/one.spm"), "input Dm [mm] ~ fit(\"../fits/dm.json\")\n"
                                           "output d2 [mm] = 2 * Dm\n");
  ck_assert_int_eq(sh("cd src && " SP " propagate model/one.spm --samples 5000 --archive ../A "
                      "--force"),
                   0);
  ck_assert(!exists("A/fits/g.json") && !exists("A/data/shear_modulus.csv") && !exists("A/charts"));
  ck_assert_int_eq(sh("cd A && find . -type f | sort"), 0);
  ck_assert_str_eq(out_text, "./MANIFEST.sha256\n./data/coil_dm.csv\n./fits/dm.json\n"
                             "./model.spm\n./run.json\n");
  ck_assert_int_eq(sh("cd A && sha256sum -c --quiet MANIFEST.sha256"), 0);
  ck_assert_int_eq(sh(SP " replay A/run.json"), 0);
  ck_assert_int_eq(sh("ls | grep -c -e tmp- -e old-"), 1); /* nothing left beside it */
  /* A file of the user's in it: refused even with --force, before the run,
   * and the folder is kept as it was. */
  ck_assert_int_eq(sh("echo mine > A/notes.txt && cd src && " SP " propagate model/m.spm "
                      "--samples 5000 --archive ../A --force"),
                   6);
  ASSERT_HAS(err_text, "holds notes.txt, which is not part of the archive");
  ck_assert(exists("A/notes.txt") && exists("A/fits/dm.json"));
  /* A folder that is not an archive at all, likewise. */
  ck_assert_int_eq(sh("mkdir H && echo mine > H/x && cd src && " SP " fit in/coil_dm.csv "
                      "--column Dm --bootstrap 40 --archive ../H --force"),
                   6);
  ASSERT_HAS(err_text, "no archive manifest");
  ck_assert_int_eq(sh("ls H"), 0);
  ck_assert_str_eq(out_text, "x\n");
}
END_TEST

START_TEST(test_changed_input_refused)
{
  /* The CSV changes after its fit: the archive would not replay. */
  ck_assert_int_eq(sh("echo 'S9999,16.000' >> src/in/coil_dm.csv"), 0);
  ck_assert_int_eq(sh("cd src && " SP " propagate model/m.spm --samples 5000 --archive ../A"), 3);
  ASSERT_HAS(err_text, "changed since");
  ASSERT_HAS(err_text, "coil_dm.csv");
  ck_assert(!exists("A"));
  ck_assert_int_eq(sh("ls | grep -c tmp-"), 1);
}
END_TEST

START_TEST(test_shared_names)
{
  /* Two records called x.json in two folders, and one record used by two
   * inputs: three inputs, two archived records. */
  ck_assert_int_eq(sh("mkdir -p src/fits/a src/fits/b && cp src/fits/dm.json src/fits/a/x.json"
                      " && cp src/fits/g.json src/fits/b/x.json"), 0);
  write_file(path_in("src/model/two.spm"), "input Dm [mm] ~ fit(\"../fits/a/x.json\")\n"
                                           "input G [GPa] ~ fit(\"../fits/b/x.json\")\n"
                                           "input D2 [mm] ~ fit(\"../fits/a/x.json\")\n"
                                           "output q [GPa/mm] = G / (Dm + D2)\n");
  ck_assert_int_eq(sh("cd src && " SP " propagate model/two.spm --samples 5000 --archive ../A"), 0);
  char *m = slurp(path_in("A/model.spm"));
  ASSERT_HAS(m, "fit(\"fits/x.json\")\ninput G");
  ASSERT_HAS(m, "fit(\"fits/x-2.json\")");
  ASSERT_HAS(m, "input D2 [mm] ~ fit(\"fits/x.json\")");
  free(m);
  ck_assert(!exists("A/fits/x-3.json"));
  /* One data file per distinct content. */
  ck_assert(exists("A/data/coil_dm.csv"));
  ck_assert(exists("A/data/shear_modulus.csv"));
  ck_assert_int_eq(sh("mv A B && " SP " replay B/run.json"), 0);
}
END_TEST

START_TEST(test_library_refusals)
{
  sp_error err;
  sp_error_clear(&err);
  char *rec = slurp(path_in("src/fits/dm.json"));
  ck_assert_ptr_nonnull(rec);
  /* Extras may not land in the archive's own folders. */
  char csv[600];
  snprintf(csv, sizeof csv, "%s", path_in("src/in/coil_dm.csv"));
  sp_archive_extra ex = {csv, "data"};
  ck_assert_int_eq(sp_archive_fit(path_in("A"), rec, "dm.json", &ex, 1, 0, &err), SP_EUSAGE);
  ck_assert(!exists("A"));
  /* A run record is not a fit record, and the reverse. */
  ck_assert_int_eq(sp_archive_run(path_in("A"), rec, NULL, 0, 0, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "not a run record");
  /* From the library the data path is relative to the process's folder
   * or the record's working folder: here the latter (src). */
  ex.folder = "charts";
  sp_status st = sp_archive_fit(path_in("A"), rec, "dm.json", &ex, 1, 0, &err);
  ck_assert_msg(st == SP_OK, "archive: %s", err.msg);
  ck_assert(exists("A/charts/coil_dm.csv"));
  ck_assert(exists("A/fits/dm.json"));
  free(rec);
}
END_TEST

static Suite *suite(void)
{
  Suite *s = suite_create("archive");
  TCase *t = tcase_create("archive");
  tcase_add_checked_fixture(t, setup, teardown);
  tcase_set_timeout(t, 120);
  tcase_add_test(t, test_fit_archive_moves);
  tcase_add_test(t, test_fit_archive_charts);
  tcase_add_test(t, test_run_archive_moves);
  tcase_add_test(t, test_never_overwritten);
  tcase_add_test(t, test_force_replaces_whole);
  tcase_add_test(t, test_changed_input_refused);
  tcase_add_test(t, test_shared_names);
  tcase_add_test(t, test_library_refusals);
  suite_add_tcase(s, t);
  return s;
}

int main(void) { return sp_run_suite(suite()); }
