/* Tests of the run module: a model file with stated and fitted inputs
 * through the engine, the run record, the tables, and the errors of the
 * join (units of a fit record, missing records, correlations). */
#include <jansson.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include <gsl/gsl_cdf.h>

#include "scatterprop/fit.h"
#include "scatterprop/run.h"
#include "sp_test.h"

static char dir[] = "/tmp/sp_run_XXXXXX";

static void setup(void) { test_dir_make(dir); }
static void teardown(void) { test_dir_remove(dir); }

static sp_run *open_ok(const char *path)
{
  sp_error err;
  sp_error_clear(&err);
  sp_model_diags d;
  sp_model_diags_init(&d);
  sp_run *r = NULL;
  sp_status s = sp_run_open(path, &r, &d, &err);
  char buf[2048] = "";
  if (d.count) sp_model_diag_format(&d.items[0], buf, sizeof buf);
  else sp_error_format(&err, buf, sizeof buf);
  ck_assert_msg(s == SP_OK, "open failed: %s", buf);
  sp_model_diags_clear(&d);
  return r;
}

static void execute_ok(sp_run *r, const sp_run_options *o)
{
  sp_error err;
  sp_error_clear(&err);
  sp_status s = sp_run_execute(r, o, &err);
  ck_assert_msg(s == SP_OK, "execute failed: %s", err.msg);
}

START_TEST(test_sum_of_normals_closed_form)
{
  /* Closed form: a + b with independent normals is normal(15, 0.5), and
   * P(a + b >= 16) = Q(2) (gsl_cdf_ugaussian_Q). Bounds: 5 standard errors
   * of each estimate at N = 200000. */
  const char *p = write_file(path_in("sum.spm"), "input a [mm] ~ normal(mean=10, sd=0.3)\n"
                                                 "input b [mm] ~ normal(mean=5, sd=0.4)\n"
                                                 "output s [mm] = a + b\n"
                                                 "limit s < 16 [mm]\n");
  sp_run *r = open_ok(p);
  sp_run_options o;
  sp_run_options_init(&o);
  o.engine.samples = 200000;
  o.engine.seed = 7;
  execute_ok(r, &o);
  const sp_engine_result *res = sp_run_result(r);
  double N = 200000;
  ASSERT_ABS(res->out[0].mean, 15.0, 5 * 0.5 / sqrt(N));
  ASSERT_ABS(res->out[0].sd, 0.5, 5 * 0.5 / sqrt(2 * N));
  double q = gsl_cdf_ugaussian_Q(2.0);
  ck_assert_uint_eq(res->nlimits, 1);
  ASSERT_ABS(res->exceed[0].p, q, 5 * sqrt(q * (1 - q) / N));
  ck_assert(res->exceed[0].lo < q && q < res->exceed[0].hi + 5 * sqrt(q * (1 - q) / N));
  ck_assert_ptr_null(sp_run_sobol(r));
  sp_run_free(r);
}
END_TEST

START_TEST(test_record_and_threads)
{
  /* The record is complete JSON, and bit-identical (apart from the thread
   * count it records) for 1 and 2 threads. */
  const char *p = write_file(path_in("lin.spm"), "input a [N] ~ weibull(shape=8, scale=120)\n"
                                                 "input b [mm] ~ uniform(1, 2)\n"
                                                 "output m [N.m] = a * b\n"
                                                 "limit m > 0.1 [N.m]\n"
                                                 "correlate a b 0.5\n");
  char *txt[2];
  for (int t = 0; t < 2; t++) {
    sp_run *r = open_ok(p);
    sp_run_options o;
    sp_run_options_init(&o);
    o.engine.samples = 50000;
    o.engine.threads = t + 1;
    execute_ok(r, &o);
    sp_error err;
    sp_error_clear(&err);
    char *argv[] = {"propagate", "lin.spm"};
    txt[t] = sp_run_record_json(r, &o, 2, argv, 1767225600, &err);
    ck_assert_ptr_nonnull(txt[t]);
    sp_run_free(r);
  }
  json_error_t je;
  json_t *a = json_loads(txt[0], 0, &je), *b = json_loads(txt[1], 0, &je);
  ck_assert_ptr_nonnull(a);
  ck_assert_ptr_nonnull(b);
  ck_assert_str_eq(json_string_value(json_object_get(a, "format")), "scatterprop-run");
  ck_assert_str_eq(json_string_value(json_object_get(a, "created_utc")), "2026-01-01T00:00:00Z");
  json_t *opts = json_object_get(a, "options");
  ck_assert_int_eq(json_integer_value(json_object_get(opts, "threads")), 1);
  ck_assert_int_eq(json_integer_value(json_object_get(json_object_get(b, "options"), "threads")), 2);
  json_object_del(json_object_get(a, "options"), "threads");
  json_object_del(json_object_get(b, "options"), "threads");
  ck_assert(json_equal(a, b));
  json_t *outs = json_object_get(json_object_get(a, "results"), "outputs");
  json_t *m = json_array_get(outs, 0);
  ck_assert_str_eq(json_string_value(json_object_get(m, "unit")), "N.m");
  ck_assert_int_eq((int)json_array_size(json_object_get(m, "percentiles")), 15);
  ck_assert_int_eq((int)json_array_size(json_object_get(json_object_get(m, "histogram"), "counts")), 50);
  ck_assert_int_eq((int)json_array_size(json_object_get(m, "sensitivity")), 2);
  ck_assert_ptr_nonnull(strstr(txt[0], "\"text\": \"input a [N] ~ weibull"));
  json_decref(a);
  json_decref(b);
  free(txt[0]);
  free(txt[1]);
}
END_TEST

/* Writes a fit record of data x (column "d [mm]") with the normal family. */
static void write_fit_record(const char *csvname, const char *recname, const char *unit)
{
  char csv[4096];
  int n = snprintf(csv, sizeof csv, "d [%s]\n", unit);
  const double x[] = {2.01, 1.99, 2.00, 2.02, 1.98, 2.005, 1.995, 2.0, 2.01, 1.99};
  for (size_t i = 0; i < 10; i++) n += snprintf(csv + n, sizeof csv - (size_t)n, "%.4f\n", x[i]);
  const char *cpath = write_file(path_in(csvname), csv);
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read(cpath, NULL, &t, &err), SP_OK);
  sp_fit_options o;
  sp_fit_options_init(&o);
  const char *fams[] = {"normal"};
  o.families = fams;
  o.nfamilies = 1;
  o.bootstrap_B = 200;
  sp_fit_grouped g;
  memset(&g, 0, sizeof g);
  ck_assert_int_eq(sp_fit_table(t, "d", NULL, &o, &g, &err), SP_OK);
  const sp_column *c = sp_table_column(t, "d");
  sp_record_fit_source src = {t->path, t->size, t->sha256, t->meta, t->nmeta, c->name,
                              c->unit_text, NULL, 0, 0};
  char *text = NULL;
  ck_assert_int_eq(sp_record_fit_dumps(&g.pooled, &src, &text, &err), SP_OK);
  char rpath[512];
  snprintf(rpath, sizeof rpath, "%s/%s", dir, recname);
  ck_assert_int_eq(sp_record_write_text(rpath, text, 1, &err), SP_OK);
  free(text);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
}

START_TEST(test_fit_input_unit_conversion)
{
  /* The record is in mm, the input is declared in m: every draw is scaled
   * by 1e-3 (SI prefix), so the output's mean is the data's mean / 1000
   * (2.0 mm: the data above average to exactly 2.0). */
  write_fit_record("d.csv", "d.json", "mm");
  const char *p =
      write_file(path_in("m.spm"), "input d [m] ~ fit(\"d.json\")\noutput y [mm] = d\n");
  sp_run *r = open_ok(p);
  ck_assert_uint_eq(sp_run_fit_count(r), 1);
  const sp_run_fit_source *src = sp_run_fit_at(r, 0);
  ck_assert_str_eq(src->fit.family->name, "normal");
  ck_assert_uint_eq(strlen(src->sha256), 64);
  const sp_model_input *in = sp_model_input_at(sp_run_model(r), 0);
  ASSERT_REL(in->scale, 1e-3, 4 * EPS);
  sp_run_options o;
  sp_run_options_init(&o);
  o.engine.samples = 20000;
  execute_ok(r, &o);
  /* y is back in mm; the MLE sd of the data is about 0.0116 mm. */
  ASSERT_ABS(sp_run_result(r)->out[0].mean, 2.0, 5 * 0.0116 / sqrt(20000.0));
  sp_run_free(r);
}
END_TEST

static void open_fails(const char *path, sp_status code, long line, const char *want)
{
  sp_error err;
  sp_error_clear(&err);
  sp_model_diags d;
  sp_model_diags_init(&d);
  sp_run *r = NULL;
  sp_status s = sp_run_open(path, &r, &d, &err);
  ck_assert_int_eq(s, code);
  ck_assert_ptr_null(r);
  ck_assert_msg(strstr(err.msg, want) != NULL, "message '%s' lacks '%s'", err.msg, want);
  ck_assert_int_eq(err.line, line);
  sp_model_diags_clear(&d);
}

START_TEST(test_fit_input_errors)
{
  write_fit_record("load.csv", "load.json", "N");
  const char *p = write_file(path_in("bad.spm"), "# a force record for a length\n"
                                                 "input d [mm] ~ fit(\"load.json\")\n"
                                                 "output y [mm] = d\n");
  open_fails(p, SP_EMODEL, 2, "fit record load.json is in N, which cannot be converted to mm");
  p = write_file(path_in("missing.spm"), "input d [mm] ~ fit(\"nope.json\")\noutput y [mm] = d\n");
  open_fails(p, SP_EIO, 1, "input d:");
  write_file(path_in("broken.json"), "{\"format\": \"scatterprop-fit\"}");
  p = write_file(path_in("broken.spm"), "input d [mm] ~ fit(\"broken.json\")\noutput y [mm] = d\n");
  open_fails(p, SP_EDATA, 1, "input d:");
}
END_TEST

START_TEST(test_correlation_not_positive_definite)
{
  /* rho(a,b) = rho(b,c) = 0.9 and rho(a,c) = -0.9 cannot hold together. */
  const char *p =
      write_file(path_in("pd.spm"), "input a [1] ~ normal(0, 1)\ninput b [1] ~ normal(0, 1)\n"
                                    "input c [1] ~ normal(0, 1)\noutput s [1] = a + b + c\n"
                                    "correlate a b 0.9\ncorrelate b c 0.9\n"
                                    "correlate a c -0.9\n");
  sp_run *r = open_ok(p);
  sp_run_options o;
  sp_run_options_init(&o);
  o.engine.samples = 1000;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_run_execute(r, &o, &err), SP_EMODEL);
  ck_assert_ptr_nonnull(strstr(err.msg, "positive definite"));
  ck_assert_int_eq(err.line, 5);
  sp_run_free(r);
}
END_TEST

START_TEST(test_tables_atomic_and_refused)
{
  const char *p =
      write_file(path_in("t.spm"), "input a [mm] ~ uniform(0, 1)\noutput y [mm] = 2 * a\n");
  sp_run *r = open_ok(p);
  sp_run_options o;
  sp_run_options_init(&o);
  o.engine.samples = 1000;
  o.engine.keep_samples = 1;
  execute_ok(r, &o);
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_run_write_tables(r, dir, 1, 0, &err), SP_OK);
  char path[600];
  snprintf(path, sizeof path, "%s/y.percentiles.csv", dir);
  FILE *fp = fopen(path, "r");
  ck_assert_ptr_nonnull(fp);
  char line[256];
  int rows = 0;
  double p50 = NAN;
  while (fgets(line, sizeof line, fp)) {
    double pc, v;
    if (sscanf(line, "%lf,%lf", &pc, &v) == 2) {
      rows++;
      if (pc == 50) p50 = v;
    }
  }
  fclose(fp);
  ck_assert_int_eq(rows, 15);
  /* Exact: the median of 2U is 1; 5 standard errors of a median of 1000
   * uniforms on [0, 2]: 5 * 2 * 0.5 / sqrt(1000). */
  ASSERT_ABS(p50, 1.0, 5 * 1.0 / sqrt(1000.0));
  snprintf(path, sizeof path, "%s/y.samples.csv", dir);
  struct stat st;
  ck_assert_int_eq(stat(path, &st), 0);
  /* A second write without overwrite is refused and leaves no temp file. */
  ck_assert_int_eq(sp_run_write_tables(r, dir, 1, 0, &err), SP_EIO);
  ck_assert_ptr_nonnull(strstr(err.msg, "refusing to overwrite"));
  char cmd[700];
  snprintf(cmd, sizeof cmd, "ls '%s' | grep -q tmp-", dir);
  ck_assert_int_ne(system(cmd), 0);
  ck_assert_int_eq(sp_run_write_tables(r, dir, 1, 1, &err), SP_OK);
  sp_run_free(r);
}
END_TEST

/* ---- the CLI, end to end ------------------------------------------------- */

/* The commands below run with 2>&1: their stdout and stderr, together as a
 * terminal shows them, are in out_text. */

START_TEST(test_cli_propagate)
{
  write_file(path_in("ok.spm"),
             "input F [N] ~ normal(mean=100, sd=5)\ninput A [mm^2] ~ uniform(9, 11)\n"
             "output s [MPa] = F / A\nlimit s < 12 [MPa]\n");
  ck_assert_int_eq(cli("propagate ok.spm --samples 20000 --out res 2>&1"), 0);
  ASSERT_HAS(out_text, "s  [MPa]");
  ASSERT_HAS(out_text, "coverage interval");
  ASSERT_HAS(out_text, "s < 12 [MPa]: violated by");
  ASSERT_HAS(out_text, "CAUTION");
  char path[600];
  snprintf(path, sizeof path, "%s/res/run.json", dir);
  struct stat st;
  ck_assert_int_eq(stat(path, &st), 0);
  /* Existing outputs are kept without --force (exit 6), replaced with it. */
  ck_assert_int_eq(cli("propagate ok.spm --samples 20000 --out res 2>&1"), 6);
  ASSERT_HAS(out_text, "refusing to overwrite");
  ck_assert_int_eq(cli("propagate ok.spm --samples 20000 --out res --force 2>&1"), 0);
  /* Same seed, same numbers: two --json runs print identical results. */
  ck_assert_int_eq(cli("propagate ok.spm --samples 5000 --json --threads 1 2>&1"), 0);
  ASSERT_HAS(out_text, "\"results\"");
  char *a = strdup(out_text);
  ck_assert_ptr_nonnull(a);
  ck_assert_int_eq(cli("propagate ok.spm --samples 5000 --json --threads 2 2>&1"), 0);
  ck_assert_str_eq(strstr(a, "\"results\""), strstr(out_text, "\"results\""));
  free(a);
  /* The bytecode. */
  ck_assert_int_eq(cli("propagate ok.spm --dump-bytecode 2>&1"), 0);
  ASSERT_HAS(out_text, "output s");
}
END_TEST

START_TEST(test_cli_propagate_errors)
{
  write_file(path_in("bad.spm"), "input F [N] ~ normal(mean=100, sd=5)\noutput s [MPa] = F / Dn\n"
                                 "output t [mm] = F\n");
  ck_assert_int_eq(cli("propagate bad.spm 2>&1"), 4);
  ASSERT_HAS(out_text, "bad.spm:2:22: unknown name 'Dn'");
  ASSERT_HAS(out_text, "^");
  ASSERT_HAS(out_text, "bad.spm:3:"); /* every error, not only the first */
  ck_assert_int_eq(cli("propagate nothere.spm 2>&1"), 6);
  ck_assert_int_eq(cli("propagate 2>&1"), 2);
  ck_assert_int_eq(cli("propagate bad.spm --samples 0 2>&1"), 2);
  ck_assert_int_eq(cli("propagate bad.spm --samples 10 --tolerance 2 2>&1"), 2);
  ck_assert_int_eq(cli("propagate bad.spm --method quantum 2>&1"), 2);
  ck_assert_int_eq(cli("propagate --help 2>&1"), 0);
  ASSERT_HAS(out_text, "CAUTION");
}
END_TEST

static Suite *run_suite(void)
{
  Suite *s = suite_create("run");
  TCase *tc = tcase_create("run");
  tcase_add_checked_fixture(tc, setup, teardown);
  tcase_set_timeout(tc, 120);
  tcase_add_test(tc, test_sum_of_normals_closed_form);
  tcase_add_test(tc, test_record_and_threads);
  tcase_add_test(tc, test_fit_input_unit_conversion);
  tcase_add_test(tc, test_fit_input_errors);
  tcase_add_test(tc, test_correlation_not_positive_definite);
  tcase_add_test(tc, test_tables_atomic_and_refused);
  tcase_add_test(tc, test_cli_propagate);
  tcase_add_test(tc, test_cli_propagate_errors);
  suite_add_tcase(s, tc);
  return s;
}

int main(void) { return sp_run_suite(run_suite()); }
