/* Tests of the report generator: key figures of a real run in the page,
 * hostile text escaped, every changed or bad input refused with a message
 * that names it (both hashes for a changed file), the repeated run
 * compared with the record, charts from a --plots folder, and the report
 * command's exit codes.  The fit records and the run record are made by
 * the scatterprop executable, as a user makes them. */
#include <dirent.h>
#include <jansson.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <gsl/gsl_cdf.h>

#include "scatterprop/plot.h"
#include "scatterprop/provenance.h"
#include "scatterprop/reportgen.h"
#include "sp_test.h"

#define HOSTILE_COLUMN "<script>alert(1)</script>"
#define HOSTILE_LOT "\"><img src=x onerror=alert(1)>"
#define HOSTILE_OUTPUT "<svg onload=alert(2)>"

static char dir[] = "/tmp/sp_reportgen_XXXXXX";
/* The data: 40 readings, the normal(10, 0.2) quantiles at (i + 0.5)/40 in
 * a scrambled order (i * 17 mod 40), in two lots; the header and one lot
 * id are hostile. */
static void write_data(void)
{
  FILE *fp = fopen(path_in("d.csv"), "wb");
  ck_assert_ptr_nonnull(fp);
  fprintf(fp, "# gauge: <b>G-1</b>\npart,lot,%s [mm]\n", HOSTILE_COLUMN);
  for (int i = 0; i < 40; i++) {
    int k = (i * 17) % 40;
    double x = 10 + 0.2 * gsl_cdf_ugaussian_Pinv((k + 0.5) / 40);
    fprintf(fp, "P%02d,%s,%.4f\n", i, i < 20 ? "A" : "\"\"\"><img src=x onerror=alert(1)>\"",
            x);
  }
  fclose(fp);
}

static void setup(void)
{
  test_dir_make(dir);
  write_data();
  /* The data path is given relative to dir (the folder the fit runs in). */
  ck_assert_int_eq(cli("fit d.csv --column '%s' --by lot --families normal,lognormal "
                       "--out fit.json",
                       HOSTILE_COLUMN),
                   0);
  write_file(path_in("m.spm"), "# <b>model</b> & \"quotes\" <script>alert(3)</script>\n"
                               "input a [mm] ~ fit(\"fit.json\")\n"
                               "input b [mm] ~ uniform(min=0, max=1)\n"
                               "output y [mm] = a + 2*b\n"
                               "limit y < 11.5 [mm]\n");
  ck_assert_int_eq(cli("propagate '%s' --samples 20000 --seed 777 --out run", path_in("m.spm")),
                   0);
}

static void teardown(void)
{
  test_dir_remove(dir);
}

/* Options without rendering (the charts' data and scripts are still made;
 * rendering is the subject of test_charts_embedded).  out is copied:
 * path_in's buffers are reused. */
static void options(sp_reportgen_options *o, const char *out)
{
  static char out_buf[1024];
  sp_reportgen_options_init(o);
  if (out) snprintf(out_buf, sizeof out_buf, "%s", out);
  o->out = out ? out_buf : NULL;
  o->gnuplot = "";
  o->template_dir = SP_SOURCE_DIR "/plots";
  o->created = "2026-12-01T00:00:00Z";
  o->command = "scatterprop report run/run.json";
}

/* The report of run/run.json written from dir (the records' relative
 * paths are relative to it, as for a user). */
static sp_status report(const sp_reportgen_options *o, sp_reportgen_result *res, sp_error *err)
{
  char cwd[1024];
  ck_assert_ptr_nonnull(getcwd(cwd, sizeof cwd));
  ck_assert_int_eq(chdir(dir), 0);
  sp_error_clear(err);
  sp_status st = sp_reportgen_write(path_in("run/run.json"), o, res, err);
  ck_assert_int_eq(chdir(cwd), 0);
  return st;
}

static json_t *load_record(void)
{
  json_error_t je;
  json_t *r = json_load_file(path_in("run/run.json"), 0, &je);
  ck_assert_ptr_nonnull(r);
  return r;
}

static void save_record(json_t *r)
{
  ck_assert_int_eq(json_dump_file(r, path_in("run/run.json"), JSON_REAL_PRECISION(17)), 0);
  json_decref(r);
}

/* Entries of a folder other than . and .. */
static size_t entries(const char *path)
{
  DIR *d = opendir(path);
  ck_assert_ptr_nonnull(d);
  size_t n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL) n += strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0;
  closedir(d);
  return n;
}

START_TEST(test_key_figures)
{
  /* The charts' temporary folder is made in $TMPDIR: a private one here. */
  static char tmp[1024];
  snprintf(tmp, sizeof tmp, "%s", path_in("tmp"));
  ck_assert_int_eq(mkdir(tmp, 0755), 0);
  ck_assert_int_eq(setenv("TMPDIR", tmp, 1), 0);
  sp_reportgen_options o;
  options(&o, NULL);
  sp_reportgen_result res;
  sp_error err;
  sp_status st = report(&o, &res, &err);
  ck_assert_msg(st == SP_OK, "report: %s (%s)", err.msg, err.hint);
  ck_assert_int_eq(res.rerun, 1);
  /* Default path: report.html beside the run record. */
  ck_assert_str_eq(res.path, path_in("run/report.html"));
  char *html = slurp(res.path);
  ck_assert_ptr_nonnull(html);
  /* The figures as the record holds them, formatted here from the record
   * by the documented rule (decimals: two significant digits of sem). */
  json_t *r = load_record();
  json_t *y = json_array_get(json_object_get(json_object_get(r, "results"), "outputs"), 0);
  double mean = json_number_value(json_object_get(y, "mean"));
  double sem = json_number_value(json_object_get(y, "sem"));
  int dec = 1 - (int)floor(log10(sem));
  char want[128];
  snprintf(want, sizeof want, "%.*f \xc2\xb1 %.*f", dec, mean, dec, sem);
  ASSERT_HAS(html, want);
  json_t *lim = json_array_get(json_object_get(json_object_get(r, "results"), "limits"), 0);
  snprintf(want, sizeof want, "%.4g", json_number_value(json_object_get(lim, "p_violation")));
  ASSERT_HAS(html, want);
  ASSERT_HAS(html, "777"); /* the seed */
  ASSERT_HAS(html, json_string_value(json_object_get(json_object_get(r, "model"), "sha256")));
  json_decref(r);
  /* Every input file's SHA-256, computed here. */
  static const char *const files[] = {"m.spm", "fit.json", "d.csv", "run/run.json"};
  for (int i = 0; i < 4; i++) {
    char h[SP_SHA256_HEX_LEN];
    ck_assert_int_eq(sp_sha256_file(path_in(files[i]), h, NULL, NULL), SP_OK);
    ASSERT_HAS(html, h);
  }
  ASSERT_HAS(html, sp_caution_text());
  ASSERT_HAS(html, "scatterprop report run/run.json");
  /* Without gnuplot every figure carries the note instead of a chart. */
  ck_assert_uint_gt(res.nfigures, 5);
  ck_assert_uint_eq(res.nembedded, 0);
  ASSERT_HAS(res.note, "gnuplot");
  ASSERT_HAS(html, "gnuplot was not found");
  free(html);
  /* The temporary chart folder is gone. */
  ck_assert_uint_eq(entries(tmp), 0);
  /* An existing report is kept unless overwrite. */
  ck_assert_int_eq(report(&o, &res, &err), SP_EIO);
  ASSERT_HAS(err.msg, "exists");
  o.overwrite = 1;
  ck_assert_int_eq(report(&o, &res, &err), SP_OK);
  ck_assert_uint_eq(entries(tmp), 0);
  unsetenv("TMPDIR");
}
END_TEST

START_TEST(test_hostile_text_is_escaped)
{
  sp_reportgen_options o;
  options(&o, path_in("r.html"));
  sp_reportgen_result res;
  sp_error err;
  ck_assert_int_eq(report(&o, &res, &err), SP_OK);
  char *html = slurp(path_in("r.html"));
  ASSERT_HAS(html, "&lt;script&gt;alert(1)&lt;/script&gt;");
  ASSERT_HAS(html, "&quot;&gt;&lt;img src=x onerror=alert(1)&gt;");
  ASSERT_HAS(html, "&lt;b&gt;G-1&lt;/b&gt;");
  ASSERT_HAS(html, "# &lt;b&gt;model&lt;/b&gt; &amp; &quot;quotes&quot;");
  ASSERT_LACKS(html, "<script");
  ASSERT_LACKS(html, "<img");
  ASSERT_LACKS(html, "<b>");
  free(html);
  /* A run record edited to carry a hostile output name: the repeated run
   * notices the name differs ... */
  json_t *r = load_record();
  json_t *y = json_array_get(json_object_get(json_object_get(r, "results"), "outputs"), 0);
  json_object_set_new(y, "name", json_string(HOSTILE_OUTPUT));
  save_record(r);
  o.overwrite = 1;
  ck_assert_int_eq(report(&o, &res, &err), SP_EDIFFERS);
  ASSERT_HAS(err.msg, "results.outputs[0].name");
  /* ... and with charts from a folder (no repeated run) it is shown as
   * text. */
  static char empty[1024];
  snprintf(empty, sizeof empty, "%s", path_in("empty"));
  ck_assert_int_eq(mkdir(empty, 0755), 0);
  o.plots_dir = empty;
  sp_status st = report(&o, &res, &err);
  ck_assert_msg(st == SP_OK, "report: %s", err.msg);
  ck_assert_int_eq(res.rerun, 0);
  html = slurp(path_in("r.html"));
  ASSERT_HAS(html, "&lt;svg onload=alert(2)&gt;");
  ASSERT_LACKS(html, "<svg onload");
  ASSERT_HAS(html, "Not found: ");
  free(html);
}
END_TEST

START_TEST(test_tampered_data_is_refused)
{
  char before[SP_SHA256_HEX_LEN], after[SP_SHA256_HEX_LEN];
  ck_assert_int_eq(sp_sha256_file(path_in("d.csv"), before, NULL, NULL), SP_OK);
  /* One reading changed after the fit. */
  char *text = slurp(path_in("d.csv"));
  char *p = strstr(text, "P07,");
  ck_assert_ptr_nonnull(p);
  p = strchr(p, '\n') - 1;
  *p = *p == '9' ? '8' : '9';
  write_file(path_in("d.csv"), text);
  free(text);
  ck_assert_int_eq(sp_sha256_file(path_in("d.csv"), after, NULL, NULL), SP_OK);
  ck_assert_str_ne(before, after);
  sp_reportgen_options o;
  options(&o, path_in("r.html"));
  sp_error err;
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "d.csv");
  ASSERT_HAS(err.msg, before);
  ASSERT_HAS(err.msg, after);
  ck_assert_int_ne(access(path_in("r.html"), F_OK), 0);
  /* The command says the same and exits 3. */
  ck_assert_int_eq(cli("report run/run.json"), 3);
  ASSERT_HAS(err_text, before);
  ASSERT_HAS(err_text, after);
}
END_TEST

START_TEST(test_changed_fit_record_and_model_are_refused)
{
  char rec[SP_SHA256_HEX_LEN], now[SP_SHA256_HEX_LEN];
  ck_assert_int_eq(sp_sha256_file(path_in("fit.json"), rec, NULL, NULL), SP_OK);
  char *text = slurp(path_in("fit.json"));
  write_file(path_in("fit.json"), text);
  FILE *fp = fopen(path_in("fit.json"), "ab");
  fputs("\n", fp);
  fclose(fp);
  ck_assert_int_eq(sp_sha256_file(path_in("fit.json"), now, NULL, NULL), SP_OK);
  sp_reportgen_options o;
  options(&o, path_in("r.html"));
  sp_error err;
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "fit record");
  ASSERT_HAS(err.msg, rec);
  ASSERT_HAS(err.msg, now);
  write_file(path_in("fit.json"), text);
  free(text);
  ck_assert_int_eq(report(&o, NULL, &err), SP_OK);
  /* The model changed: a comment added. */
  text = slurp(path_in("m.spm"));
  char *more = malloc(strlen(text) + 16);
  sprintf(more, "%s# edited\n", text);
  write_file(path_in("m.spm"), more);
  free(more);
  o.overwrite = 1;
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "model");
  ASSERT_HAS(err.msg, "changed since the run");
  write_file(path_in("m.spm"), text);
  free(text);
}
END_TEST

START_TEST(test_repeated_run_must_match)
{
  /* One recorded figure moved by one unit in the last place.  Under
   * valgrind, whose virtual processor reports other features than the one
   * the record was made on, the repeated run is compared within the
   * replay tolerance (1e-9 relative) as for another build: there the
   * figure is moved by 1e-6 relative instead. */
  json_t *r = load_record();
  sp_provenance pv;
  sp_provenance_get(&pv);
  const char *cpu = json_string_value(
      json_object_get(json_object_get(json_object_get(r, "provenance"), "os"), "cpu_features"));
  const int same_cpu = cpu && strcmp(cpu, pv.cpu_features) == 0;
  json_t *y = json_array_get(json_object_get(json_object_get(r, "results"), "outputs"), 0);
  double sd = json_number_value(json_object_get(y, "sd"));
  json_object_set_new(y, "sd", json_real(same_cpu ? nextafter(sd, INFINITY) : sd * (1 + 1e-6)));
  save_record(r);
  sp_reportgen_options o;
  options(&o, path_in("r.html"));
  sp_error err;
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDIFFERS);
  ASSERT_HAS(err.msg, "results.outputs[0].sd");
  ASSERT_HAS(err.hint, "--plots");
  ck_assert_int_eq(cli("report run/run.json"), 1);
  /* A histogram count. */
  r = load_record();
  y = json_array_get(json_object_get(json_object_get(r, "results"), "outputs"), 0);
  json_object_set_new(y, "sd", json_real(sd));
  json_t *cnt = json_object_get(json_object_get(y, "histogram"), "counts");
  json_array_set_new(cnt, 7, json_integer(json_integer_value(json_array_get(cnt, 7)) + 1));
  save_record(r);
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDIFFERS);
  ASSERT_HAS(err.msg, "histogram.counts[7]");
}
END_TEST

START_TEST(test_bad_records)
{
  sp_reportgen_options o;
  options(&o, path_in("r.html"));
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_reportgen_write(path_in("none.json"), &o, NULL, &err), SP_EIO);
  ASSERT_HAS(err.msg, "none.json");
  write_file(path_in("bad.json"), "{\"format\": ");
  ck_assert_int_eq(sp_reportgen_write(path_in("bad.json"), &o, NULL, &err), SP_EDATA);
  ck_assert_int_eq(sp_reportgen_write(path_in("fit.json"), &o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "is a fit record, not a run record");
  ASSERT_HAS(err.hint, "'scatterprop plot ");
  /* Each case edits the original record. */
  char *orig = slurp(path_in("run/run.json"));
  json_t *r = load_record();
  json_object_set_new(r, "version", json_integer(2));
  save_record(r);
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "version 2");
  write_file(path_in("run/run.json"), orig);
  r = load_record();
  json_t *y = json_array_get(json_object_get(json_object_get(r, "results"), "outputs"), 0);
  json_object_set_new(y, "mean", json_string("big"));
  save_record(r);
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "'results.outputs[0].mean' must be a number");
  write_file(path_in("run/run.json"), orig);
  r = load_record();
  y = json_array_get(json_object_get(json_object_get(r, "results"), "outputs"), 0);
  json_object_del(y, "percentiles");
  save_record(r);
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "'results.outputs[0].percentiles' is missing");
  /* The model text no longer matches its hash. */
  write_file(path_in("run/run.json"), orig);
  r = load_record();
  json_t *m = json_object_get(r, "model");
  json_object_set_new(m, "text", json_string("output y [mm] = 1 [mm]\n"));
  save_record(r);
  ck_assert_int_eq(report(&o, NULL, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "model text");
  /* The original record still makes a report. */
  write_file(path_in("run/run.json"), orig);
  free(orig);
  ck_assert_int_eq(report(&o, NULL, &err), SP_OK);
}
END_TEST

START_TEST(test_charts_embedded)
{
  sp_plot_options po;
  sp_plot_options_init(&po);
  char gp[4096];
  if (!sp_plot_gnuplot_found(&po, gp, sizeof gp)) return; /* nothing to embed without it */
  sp_reportgen_options o;
  options(&o, path_in("r.html"));
  o.gnuplot = NULL;
  sp_reportgen_result res;
  sp_error err;
  sp_status st = report(&o, &res, &err);
  ck_assert_msg(st == SP_OK, "report: %s", err.msg);
  ck_assert_uint_eq(res.nembedded, res.nfigures);
  ck_assert_str_eq(res.note, "");
  char *html = slurp(path_in("r.html"));
  size_t n = 0;
  for (const char *p = html; (p = strstr(p, "<svg class=\"chart\"")) != NULL; p++) n++;
  ck_assert_uint_eq(n, res.nfigures);
  free(html);
  /* Charts from a --plots folder: embedded from there, no repeated run. */
  ck_assert_int_eq(cli("propagate '%s' --samples 20000 --seed 777 --out run --force "
                       "--plots pl",
                       path_in("m.spm")),
                   0);
  static char pl[1024];
  snprintf(pl, sizeof pl, "%s", path_in("pl"));
  o.plots_dir = pl;
  o.overwrite = 1;
  ck_assert_int_eq(report(&o, &res, &err), SP_OK);
  ck_assert_int_eq(res.rerun, 0);
  ck_assert_uint_eq(res.nembedded, res.nfigures);
  html = slurp(path_in("r.html"));
  ASSERT_HAS(html, "taken from");
  free(html);
  /* A histogram of another run is refused. */
  ck_assert_int_eq(cli("propagate '%s' --samples 20000 --seed 778 --plots pl --force",
                       path_in("m.spm")),
                   0);
  ck_assert_int_eq(report(&o, &res, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "not of run record");
}
END_TEST

START_TEST(test_from_another_folder_and_an_archive)
{
  /* The records name m.spm, fit.json and d.csv relative to dir, where the
   * analysis ran; from another folder they are found through the folder
   * the records were made in (provenance.working_directory). */
  sp_reportgen_options o;
  options(&o, path_in("elsewhere.html"));
  sp_error err;
  sp_error_clear(&err);
  char cwd[1024];
  ck_assert_ptr_nonnull(getcwd(cwd, sizeof cwd));
  ck_assert_int_eq(chdir("/"), 0);
  sp_reportgen_result res;
  sp_status st = sp_reportgen_write(path_in("run/run.json"), &o, &res, &err);
  ck_assert_int_eq(chdir(cwd), 0);
  ck_assert_msg(st == SP_OK, "report: %s", err.msg);
  ck_assert_int_eq(res.rerun, 1);
  /* An archive (propagate --archive) holds copies named relative to it. */
  ck_assert_int_eq(cli("propagate m.spm --samples 20000 --seed 777 --archive arch"), 0);
  options(&o, path_in("archived.html"));
  ck_assert_int_eq(chdir("/"), 0);
  st = sp_reportgen_write(path_in("arch/run.json"), &o, &res, &err);
  ck_assert_int_eq(chdir(cwd), 0);
  ck_assert_msg(st == SP_OK, "report: %s", err.msg);
  char *html = slurp(path_in("archived.html"));
  ASSERT_HAS(html, path_in("arch/fits/"));
  free(html);
}
END_TEST

START_TEST(test_model_without_fits)
{
  write_file(path_in("s.spm"), "input p [N] ~ normal(mean=100, sd=5)\noutput q [N] = 2*p\n");
  ck_assert_int_eq(cli("propagate s.spm --samples 5000 --seed 3 --out run2"), 0);
  sp_reportgen_options o;
  options(&o, NULL);
  sp_error err;
  sp_error_clear(&err);
  char cwd[1024];
  ck_assert_ptr_nonnull(getcwd(cwd, sizeof cwd));
  ck_assert_int_eq(chdir(dir), 0);
  sp_status st = sp_reportgen_write("run2/run.json", &o, NULL, &err);
  ck_assert_int_eq(chdir(cwd), 0);
  ck_assert_msg(st == SP_OK, "report: %s", err.msg);
  char *html = slurp(path_in("run2/report.html"));
  ASSERT_HAS(html, "every distribution is stated in the model");
  ASSERT_HAS(html, "The model states no limits.");
  free(html);
}
END_TEST

START_TEST(test_command)
{
  /* Exit codes: 6 for a missing record, 3 for a bad one, 2 for usage. */
  ck_assert_int_eq(cli("report missing.json"), 6);
  ASSERT_HAS(err_text, "missing.json");
  write_file(path_in("bad.json"), "[1, 2");
  ck_assert_int_eq(cli("report bad.json"), 3);
  ck_assert_int_eq(cli("report"), 2);
  ck_assert_int_eq(cli("report run/run.json --bogus"), 2);
  ck_assert_int_eq(cli("report run/run.json --threads 0"), 2);
  ck_assert_int_eq(cli("report --help"), 0);
  ASSERT_HAS(out_text, "Usage: scatterprop report RUN.json");
  ck_assert_int_eq(cli("report run/run.json --out r.html --threads 2"), 0);
  ASSERT_HAS(out_text, "report written to r.html");
  ASSERT_HAS(out_text, "the repeated run matched the record");
  ck_assert_int_eq(cli("report run/run.json --out r.html"), 6);
  ASSERT_HAS(err_text, "--force");
  ck_assert_int_eq(cli("report run/run.json --out r.html --force"), 0);
  char *html = slurp(path_in("r.html"));
  ASSERT_HAS(html, "scatterprop report run/run.json --out r.html --force");
  free(html);
}
END_TEST

/* Whether two files hold the same bytes. */
static int same_file(const char *a, const char *b)
{
  size_t na = 0, nb = 0;
  char *x = slurp_len(a, &na), *y = slurp_len(b, &nb);
  int same = x && y && na == nb && memcmp(x, y, na) == 0;
  free(x);
  free(y);
  return same;
}

START_TEST(test_plot_run_record)
{
  /* The run's charts drawn while it ran ... */
  ck_assert_int_eq(cli("propagate m.spm --samples 20000 --seed 777 --out run2 --plots p1"), 0);
  /* ... and again from its record alone: the run is repeated and the charts
   * are the same data and scripts, byte for byte. */
  ck_assert_msg(cli("plot run2/run.json --out p2 --threads 1") == 0, "%s", err_text);
  ASSERT_HAS(out_text, "run repeated from the record; every recorded figure reproduced bit for "
                       "bit");
  ASSERT_HAS(out_text, "charts: 5 drawn into p2/");
  static const char *const kinds[] = {"hist", "exceed", "sens", "conv", "scatter"};
  for (size_t k = 0; k < 5; k++) {
    for (int e = 0; e < 2; e++) {
      char rel1[64], rel2[64];
      snprintf(rel1, sizeof rel1, "p1/run_y_%s.%s", kinds[k], e ? "gp" : "dat");
      snprintf(rel2, sizeof rel2, "p2/run_y_%s.%s", kinds[k], e ? "gp" : "dat");
      ck_assert_msg(same_file(path_in(rel1), path_in(rel2)), "%s and %s differ", rel1, rel2);
    }
  }
  /* Without gnuplot: the data and scripts, and one line on how to render
   * them. */
  ck_assert_msg(sh("PATH=/nonexistent " SP " plot run2/run.json --out p5") == 0, "%s", err_text);
  ASSERT_HAS(out_text, "charts: 5 drawn into p5/ (0 rendered to PNG and SVG)");
  ASSERT_HAS(out_text, "hint: gnuplot not found; to render the chart: cd p5 && gnuplot "
                       "run_y_hist.gp (and likewise for the other 4 scripts)");
  ck_assert_int_eq(access(path_in("p5/run_y_conv.gp"), F_OK), 0);
  ck_assert_int_ne(access(path_in("p5/run_y_conv.png"), F_OK), 0);
  /* Charts in the way: nothing drawn, exit 6, before the run is repeated;
   * --force replaces them. */
  ck_assert_int_eq(cli("plot run2/run.json --out p2"), 6);
  ASSERT_HAS(err_text, "p2/run_y_hist.dat: file exists");
  ASSERT_HAS(err_text, "--force");
  ck_assert_int_eq(cli("plot run2/run.json --out p2 --force"), 0);
  /* A folder that cannot be made: exit 6, naming it. */
  write_file(path_in("afile"), "x\n");
  ck_assert_int_eq(cli("plot run2/run.json --out afile/charts"), 6);
  ASSERT_HAS(err_text, "afile/charts: cannot create the chart folder");
  /* A record whose figures the run does not reproduce: exit 1, no chart. */
  json_error_t je;
  json_t *r = json_load_file(path_in("run2/run.json"), 0, &je);
  ck_assert_ptr_nonnull(r);
  json_t *y = json_array_get(json_object_get(json_object_get(r, "results"), "outputs"), 0);
  json_object_set_new(y, "mean", json_real(json_number_value(json_object_get(y, "mean")) * 1.001));
  ck_assert_int_eq(json_dump_file(r, path_in("run2/run.json"), JSON_REAL_PRECISION(17)), 0);
  json_decref(r);
  ck_assert_int_eq(cli("plot run2/run.json --out p3"), 1);
  ASSERT_HAS(err_text, "results.outputs[0].mean");
  ASSERT_HAS(err_text, "no chart was drawn");
  ck_assert_int_ne(access(path_in("p3"), F_OK), 0);
}
END_TEST

START_TEST(test_plot_and_report_on_the_wrong_file)
{
  /* Not a record at all: exit 3, the fit record reader's message (the
   * field or the JSON position) and a hint naming both kinds. */
  write_file(path_in("x.json"), "{\"a\": 1}\n");
  ck_assert_int_eq(cli("plot x.json"), 3);
  ASSERT_HAS(err_text, "x.json:1:1: fit record: field 'format' is missing");
  ASSERT_HAS(err_text, "hint: give a fit record");
  ASSERT_HAS(err_text, "or a run record");
  write_file(path_in("bad.json"), "{\"format\": ");
  ck_assert_int_eq(cli("plot bad.json"), 3);
  ASSERT_HAS(err_text, "bad.json:1:");
  ASSERT_HAS(err_text, "not valid JSON");
  ASSERT_HAS(err_text, "hint: give a fit record");
  write_file(path_in("other.json"), "{\"format\": \"someone-else\", \"version\": 1}\n");
  ck_assert_int_eq(cli("plot other.json"), 3);
  ASSERT_HAS(err_text, "someone-else");
  ASSERT_HAS(err_text, "hint: give a fit record");
  ck_assert_int_eq(cli("plot missing.json"), 6);
  ASSERT_HAS(err_text, "missing.json");
  ck_assert_int_eq(access(path_in("charts"), F_OK), -1);
  /* The kind of each record. */
  sp_reportgen_kind kind;
  sp_error err;
  ck_assert_int_eq(sp_reportgen_record_kind(path_in("fit.json"), &kind, &err), SP_OK);
  ck_assert_int_eq(kind, SP_REPORTGEN_FIT);
  ck_assert_int_eq(sp_reportgen_record_kind(path_in("run/run.json"), &kind, &err), SP_OK);
  ck_assert_int_eq(kind, SP_REPORTGEN_RUN);
  ck_assert_int_eq(sp_reportgen_record_kind(path_in("other.json"), &kind, &err), SP_OK);
  ck_assert_int_eq(kind, SP_REPORTGEN_UNKNOWN);
  ck_assert_int_eq(sp_reportgen_record_kind(path_in("bad.json"), &kind, &err), SP_OK);
  ck_assert_int_eq(kind, SP_REPORTGEN_UNKNOWN);
  ck_assert_int_eq(sp_reportgen_record_kind(path_in("missing.json"), &kind, &err), SP_EIO);
  /* Options of the other kind of record: usage errors. */
  ck_assert_int_eq(cli("plot fit.json --threads 2"), 2);
  ck_assert_int_eq(cli("plot run/run.json --data d.csv"), 2);
  /* A report of a fit record: exit 3, and the hint says what to do. */
  ck_assert_int_eq(cli("report fit.json"), 3);
  ASSERT_HAS(err_text, "fit.json is a fit record, not a run record");
  ASSERT_HAS(err_text, "'scatterprop plot fit.json'");
  ck_assert_int_ne(access(path_in("report.html"), F_OK), 0);
  /* An existing report is kept without --force, byte for byte. */
  write_file(path_in("kept.html"), "mine\n");
  ck_assert_int_eq(cli("report run/run.json --out kept.html"), 6);
  ASSERT_HAS(err_text, "kept.html exists");
  char *kept = slurp(path_in("kept.html"));
  ck_assert_str_eq(kept, "mine\n");
  free(kept);
  /* A folder given as the report, or a report in a folder that does not
   * exist or cannot be written: found before the run is repeated. */
  ck_assert_int_eq(mkdir(path_in("adir"), 0755), 0);
  ck_assert_int_eq(cli("report run/run.json --out adir --force"), 6);
  ASSERT_HAS(err_text, "adir is a folder; the report is one file");
  ck_assert_int_eq(cli("report run/run.json --out nodir/r.html"), 6);
  ASSERT_HAS(err_text, "folder nodir does not exist");
  ck_assert_int_eq(cli("report run/run.json --out /proc/r.html"), 6);
  ASSERT_HAS(err_text, "cannot write the report in /proc");
  ASSERT_LACKS(out_text, "repeated run");
}
END_TEST

START_TEST(test_propagate_plots_checked_before_the_run)
{
  /* Charts in the way, or a chart folder that cannot be made, are found
   * before the run: exit 6 and no run record. */
  ck_assert_int_eq(cli("propagate m.spm --samples 2000 --out run3 --plots p4"), 0);
  ck_assert_int_eq(cli("propagate m.spm --samples 2000 --out run4 --plots p4"), 6);
  ASSERT_HAS(err_text, "p4/run_y_hist.dat: file exists");
  ck_assert_int_ne(access(path_in("run4"), F_OK), 0);
  write_file(path_in("afile"), "x\n");
  ck_assert_int_eq(cli("propagate m.spm --samples 2000 --out run4 --plots afile"), 6);
  ASSERT_HAS(err_text, "afile: not a folder");
  ck_assert_int_eq(cli("propagate m.spm --samples 2000 --out run4 --plots afile/sub"), 6);
  ASSERT_HAS(err_text, "afile/sub: cannot create the chart folder");
  ck_assert_int_ne(access(path_in("run4"), F_OK), 0);
}
END_TEST

/* s as one word for sh(): single-quoted, each ' as '\'' (the test's own
 * shell must not run the hostile text either; if it did, the markers
 * below would show it). */
static const char *shq(const char *s)
{
  static char buf[4][2048];
  static int k;
  k = (k + 1) % 4;
  size_t n = 0;
  buf[k][n++] = '\'';
  for (; *s && n < sizeof buf[k] - 6; s++) {
    if (*s == '\'') {
      memcpy(buf[k] + n, "'\\''", 4);
      n += 4;
    } else {
      buf[k][n++] = *s;
    }
  }
  buf[k][n++] = '\'';
  buf[k][n] = '\0';
  return buf[k];
}

/* Whether a marker (a file named pwned_*, as the commands in the hostile
 * texts below would name it) exists below path.  Chart stems made from
 * those texts start with fit_ or run_. */
static int marker_below(const char *path)
{
  DIR *d = opendir(path);
  if (!d) return 0;
  int found = 0;
  struct dirent *e;
  while (!found && (e = readdir(d)) != NULL) {
    if (strcmp(e->d_name, ".") == 0 || strcmp(e->d_name, "..") == 0) continue;
    if (strncmp(e->d_name, "pwned_", 6) == 0) found = 1;
    char sub[2048];
    snprintf(sub, sizeof sub, "%s/%s", path, e->d_name);
    struct stat sb;
    if (!found && lstat(sub, &sb) == 0 && S_ISDIR(sb.st_mode)) found = marker_below(sub);
  }
  closedir(d);
  return found;
}

START_TEST(test_hostile_files_end_to_end)
{
  /* Every text a user's files can carry, trying gnuplot's back-quotes and
   * system() (and a shell's $( )): the data file's name, its metadata, the
   * column header, the lot ids (one with a newline), the fit record's
   * name, the model's file name.  Markers are absolute paths in the test
   * folder, so a command run in gnuplot's staging folder (removed after
   * each chart) would still leave its mark. */
  char mk[8][512];
  static const char *const tag[8] = {"meta1", "meta2", "head1", "head2",
                                     "lot1",  "lot2",  "lot3",  "lot4"};
  for (int i = 0; i < 8; i++)
    snprintf(mk[i], sizeof mk[i], "%s/pwned_%s", dir, tag[i]);
  const char *csv = "$(touch pwned_f)`touch pwned_g`.csv";
  FILE *fp = fopen(path_in(csv), "wb");
  ck_assert_ptr_nonnull(fp);
  fprintf(fp, "# gauge: `touch %s` system('touch %s') \"quoted\" 'single'\n", mk[0], mk[1]);
  char column[1200];
  snprintf(column, sizeof column, "`touch %s` system(\"touch %s\") x", mk[2], mk[3]);
  fprintf(fp, "lot,\"`touch %s` system(\"\"touch %s\"\") x [mm]\"\n", mk[2], mk[3]);
  for (int i = 0; i < 40; i++) {
    int k = (i * 17) % 40;
    double x = 10 + 0.2 * gsl_cdf_ugaussian_Pinv((k + 0.5) / 40);
    if (i < 20)
      fprintf(fp, "\"A`touch %s`$(touch %s)\",%.4f\n", mk[4], mk[5], x);
    else
      fprintf(fp, "\"B\nsystem('touch %s') @x %s\",%.4f\n", mk[6], mk[7], x);
  }
  fclose(fp);
  const char *rec = "`touch pwned_r`.json";
  const char *model = "$(touch pwned_m).spm";
  char mtext[512];
  snprintf(mtext, sizeof mtext,
           "input a [mm] ~ fit(\"%s\")\n"
           "input b [mm] ~ uniform(min=0, max=1)\n"
           "output y [mm] = a + 2*b\n"
           "limit y < 11.5 [mm]\n",
           rec);
  write_file(path_in(model), mtext);

  ck_assert_msg(sh(SP " fit %s --column %s --by lot --families normal,lognormal --pvalues none "
                      "--out %s --plots fc",
                   shq(csv), shq(column), shq(rec)) == 0,
                "fit: %s", err_text);
  ASSERT_HAS(out_text, "charts in fc: 10 drawn (.png .svg .gp .dat each)");
  ck_assert_msg(sh(SP " plot %s --out fc2", shq(rec)) == 0, "plot: %s", err_text);
  ck_assert_msg(sh(SP " propagate %s --samples 20000 --seed 3 --out run5 --plots rc", shq(model)) ==
                    0,
                "propagate: %s", err_text);
  ASSERT_HAS(out_text, "charts: 5 drawn into rc/ (5 rendered to PNG and SVG)");
  ck_assert_msg(cli("plot run5/run.json --out rc2") == 0, "plot run: %s", err_text);
  ck_assert_msg(cli("report run5/run.json") == 0, "report: %s", err_text);
  ASSERT_HAS(out_text, "9 figures, 9 drawn");

  /* Nothing ran: no marker anywhere. */
  for (int i = 0; i < 8; i++)
    ck_assert_msg(access(mk[i], F_OK) != 0, "%s was created: text from a file ran", mk[i]);
  ck_assert_msg(!marker_below(dir), "a pwned_* file was created below %s", dir);
  /* The scripts hold the texts neutralised: no back-quote, no system( and
   * no @ anywhere outside the template's own comments. */
  DIR *d = opendir(path_in("fc"));
  ck_assert_ptr_nonnull(d);
  struct dirent *e;
  size_t scripts = 0;
  while ((e = readdir(d)) != NULL) {
    size_t len = strlen(e->d_name);
    if (len < 3 || strcmp(e->d_name + len - 3, ".gp") != 0) continue;
    char rel[600];
    snprintf(rel, sizeof rel, "fc/%s", e->d_name);
    char *gp = slurp(path_in(rel));
    ck_assert_msg(!strchr(gp, '`'), "%s holds a back-quote", rel);
    ASSERT_LACKS(gp, "system(");
    ASSERT_LACKS(gp, "$(");
    ASSERT_HAS(gp, "?touch ");
    free(gp);
    scripts++;
  }
  closedir(d);
  ck_assert_uint_eq(scripts, 10);
  /* The report shows them as text. */
  char *html = slurp(path_in("run5/report.html"));
  ASSERT_HAS(html, "$(touch pwned_m).spm");
  ASSERT_HAS(html, "`touch pwned_g`.csv");
  ASSERT_HAS(html, "system(&quot;touch ");
  ASSERT_HAS(html, "system(&#39;touch ");
  ASSERT_LACKS(html, "<script");
  free(html);
}
END_TEST

/* A fit grouped by a column not named "lot": the report shows the column's
 * own charts (pooled) and the groups side by side, never a group's charts
 * (those are 'scatterprop plot's), and says what a group is. */
START_TEST(test_groups_of_another_name)
{
  FILE *fp = fopen(path_in("s.csv"), "wb");
  ck_assert_ptr_nonnull(fp);
  fprintf(fp, "station,F [N]\n");
  for (int i = 0; i < 60; i++) {
    int k = (i * 23) % 60;
    fprintf(fp, "%s,%.3f\n", i % 3 == 0 ? "S1" : i % 3 == 1 ? "S2" : "S3",
            100 + 5 * gsl_cdf_ugaussian_Pinv((k + 0.5) / 60));
  }
  fclose(fp);
  ck_assert_msg(cli("fit s.csv --column F --by station --families normal --pvalues none "
                    "--out s.json") == 0,
                "fit: %s", err_text);
  write_file(path_in("s.spm"), "input f [N] ~ fit(\"s.json\")\n"
                               "output y [N] = 2*f\n");
  ck_assert_msg(cli("propagate s.spm --samples 5000 --out srun") == 0, "propagate: %s", err_text);
  ck_assert_msg(cli("report srun/run.json") == 0, "report: %s", err_text);
  /* 3 pooled charts and the groups side by side; 5 of the run */
  ASSERT_HAS(out_text, "9 figures, 9 drawn");
  char *html = slurp(path_in("srun/report.html"));
  ASSERT_HAS(html, "empirical CDF of each station, with the chosen fit");
  ASSERT_HAS(html, "histogram of the 60 values");
  ASSERT_LACKS(html, "station S1");
  free(html);
}
END_TEST

static Suite *suite(void)
{
  Suite *s = suite_create("reportgen");
  TCase *t = tcase_create("reportgen");
  tcase_add_checked_fixture(t, setup, teardown);
  tcase_set_timeout(t, 120);
  tcase_add_test(t, test_key_figures);
  tcase_add_test(t, test_hostile_text_is_escaped);
  tcase_add_test(t, test_tampered_data_is_refused);
  tcase_add_test(t, test_changed_fit_record_and_model_are_refused);
  tcase_add_test(t, test_repeated_run_must_match);
  tcase_add_test(t, test_bad_records);
  tcase_add_test(t, test_charts_embedded);
  tcase_add_test(t, test_from_another_folder_and_an_archive);
  tcase_add_test(t, test_model_without_fits);
  tcase_add_test(t, test_command);
  tcase_add_test(t, test_plot_run_record);
  tcase_add_test(t, test_plot_and_report_on_the_wrong_file);
  tcase_add_test(t, test_propagate_plots_checked_before_the_run);
  tcase_add_test(t, test_hostile_files_end_to_end);
  tcase_add_test(t, test_groups_of_another_name);
  suite_add_tcase(s, t);
  return s;
}

int main(void) { return sp_run_suite(suite()); }
