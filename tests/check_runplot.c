/* Tests of the run charts: the files of every chart, the histogram's data
 * against the engine's bins, the convergence series against prefix
 * statistics computed here by other means, the fresh subsample, and the
 * errors. */
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "scatterprop/runplot.h"
#include "scatterprop/stats.h"
#include "sp_test.h"

static char dir[] = "/tmp/sp_runplot_XXXXXX";

static void setup(void) { test_dir_make(dir); }
static void teardown(void) { test_dir_remove(dir); }

static int exists(const char *path)
{
  struct stat st;
  return stat(path, &st) == 0 && st.st_size > 0;
}

/* A closed-form model: y = a + 2 b with independent a ~ normal(10, 1) and
 * b ~ uniform(0, 1); z = 3 a depends on a alone; limits on both. */
static const char *const MODEL = "input a [mm] ~ normal(mean=10, sd=1)\n"
                                 "input b [mm] ~ uniform(min=0, max=1)\n"
                                 "output y [mm] = a + 2*b\n"
                                 "output z [mm] = 3*a\n"
                                 "limit y < 13 [mm]\n"
                                 "limit z > 25 [mm]\n";

static sp_run *run_model(const char *text, uint64_t n, int keep, uint64_t sobol)
{
  write_file(path_in("m.spm"), text);
  sp_error err;
  sp_error_clear(&err);
  sp_model_diags d;
  sp_model_diags_init(&d);
  sp_run *r = NULL;
  sp_status s = sp_run_open(path_in("m.spm"), &r, &d, &err);
  ck_assert_msg(s == SP_OK, "open: %s", err.msg);
  sp_model_diags_clear(&d);
  sp_run_options o;
  sp_run_options_init(&o);
  o.engine.samples = n;
  o.engine.seed = 42;
  o.engine.keep_samples = keep;
  o.sobol_samples = sobol;
  s = sp_run_execute(r, &o, &err);
  ck_assert_msg(s == SP_OK, "execute: %s", err.msg);
  return r;
}

static void plot_options(sp_runplot_options *o, const char *outdir)
{
  sp_runplot_options_init(o);
  o->plot.outdir = outdir;
  o->plot.template_dir = SP_SOURCE_DIR "/plots";
  o->plot.overwrite = 0;
}

/* The rows of block `index` of a plot data file (blocks are separated by
 * two blank lines), ncol numbers each, into v (at most cap rows). */
static size_t read_block(const char *path, int index, size_t ncol, double *v, size_t cap)
{
  FILE *fp = fopen(path, "r");
  ck_assert_ptr_nonnull(fp);
  char line[4096];
  int block = 0, blanks = 0;
  size_t rows = 0;
  while (fgets(line, sizeof line, fp)) {
    if (line[0] == '\n') {
      if (++blanks == 2) block++;
      continue;
    }
    blanks = 0;
    if (line[0] == '#' || block != index) continue;
    char *p = line;
    ck_assert_uint_lt(rows, cap);
    for (size_t c = 0; c < ncol; c++) {
      char *end;
      v[rows * ncol + c] = strtod(p, &end);
      ck_assert_ptr_ne(end, p);
      p = end;
    }
    rows++;
  }
  fclose(fp);
  return rows;
}

START_TEST(test_files_of_every_chart)
{
  sp_run *r = run_model(MODEL, 20000, 1, 0);
  sp_runplot_options o;
  plot_options(&o, dir);
  sp_runplot_set set;
  sp_error err;
  sp_error_clear(&err);
  sp_status s = sp_runplot_draw(r, &o, &set, &err);
  ck_assert_msg(s == SP_OK, "draw: %s", err.msg);
  char gp[4096];
  int have_gnuplot = sp_plot_gnuplot_found(&o.plot, gp, sizeof gp);
  ck_assert_uint_eq(set.ncharts, 2 * SP_RUNPLOT_NKINDS);
  /* Every kind but Sobol' (not computed) for both outputs. */
  ck_assert_uint_eq(set.ndrawn, 2 * (SP_RUNPLOT_NKINDS - 1));
  ck_assert_uint_eq(set.nrendered, have_gnuplot ? set.ndrawn : 0);
  static const char *const outs[] = {"y", "z"};
  for (size_t k = 0; k < set.ncharts; k++) {
    const sp_runplot_chart *c = &set.charts[k];
    ck_assert_uint_eq(c->output, k / SP_RUNPLOT_NKINDS);
    ck_assert_int_eq(c->kind, (int)(k % SP_RUNPLOT_NKINDS));
    char want[512];
    snprintf(want, sizeof want, "%s/run_%s_%s.dat", dir, outs[c->output],
             sp_runplot_kind_name(c->kind));
    if (c->kind == SP_RUNPLOT_SOBOL) {
      ck_assert_int_eq(c->drawn, 0);
      ck_assert(strstr(c->note, "Sobol") != NULL);
      ck_assert(!exists(want));
      continue;
    }
    ck_assert_msg(c->drawn, "chart %zu not drawn: %s", k, c->note);
    ck_assert_str_eq(c->out.data, want);
    ck_assert(exists(c->out.data));
    ck_assert(exists(c->out.script));
    ck_assert(c->caption[0] != '\0');
    if (have_gnuplot) {
      ck_assert(exists(c->out.png));
      ck_assert(exists(c->out.svg));
    }
  }
  /* A second draw into the same folder is refused without overwrite. */
  sp_runplot_set again;
  ck_assert_int_eq(sp_runplot_draw(r, &o, &again, &err), SP_EIO);
  sp_runplot_set_clear(&again);
  /* ... before anything is drawn, even when only a file of the last chart
   * is in the way: the earlier charts are not drawn. */
  char first[4096], late[4096];
  snprintf(first, sizeof first, "%s/run_y_hist.dat", dir);
  snprintf(late, sizeof late, "%s/run_z_scatter.svg", dir);
  for (size_t k = 0; k < set.ncharts; k++) {
    const sp_runplot_chart *c = &set.charts[k];
    const char *files[4] = {c->out.data, c->out.script, c->out.png, c->out.svg};
    for (int f = 0; f < 4; f++)
      if (c->drawn && files[f][0]) unlink(files[f]);
  }
  write_file(late, "x\n");
  ck_assert_int_eq(sp_runplot_draw(r, &o, &again, &err), SP_EIO);
  ck_assert(strstr(err.msg, "run_z_scatter.svg: file exists") != NULL);
  ck_assert(!exists(first));
  ck_assert_uint_eq(again.ndrawn, 0);
  sp_runplot_set_clear(&again);
  /* The same check before a run: sp_runplot_check. */
  ck_assert_int_eq(sp_runplot_check(sp_run_model(r), &o, &err), SP_EIO);
  ck_assert(strstr(err.msg, "run_z_scatter.svg: file exists") != NULL);
  unlink(late);
  ck_assert_int_eq(sp_runplot_check(sp_run_model(r), &o, &err), SP_OK);
  o.plot.overwrite = 1;
  ck_assert_int_eq(sp_runplot_draw(r, &o, &again, &err), SP_OK);
  sp_runplot_set_clear(&again);
  sp_runplot_set_clear(&set);
  sp_run_free(r);
}
END_TEST

START_TEST(test_histogram_counts_are_the_engines)
{
  sp_run *r = run_model(MODEL, 30000, 1, 0);
  sp_runplot_options o;
  plot_options(&o, dir);
  o.plot.gnuplot = ""; /* the data file is all this test reads */
  sp_runplot_set set;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_OK);
  const sp_engine_result *res = sp_run_result(r);
  for (size_t j = 0; j < 2; j++) {
    const sp_runplot_chart *c = &set.charts[j * SP_RUNPLOT_NKINDS + SP_RUNPLOT_HIST];
    ck_assert(c->drawn);
    ck_assert_int_eq(c->out.rendered, 0);
    ck_assert(strstr(c->note, "gnuplot") != NULL);
    static double v[4 * 200];
    size_t rows = read_block(c->out.data, 0, 4, v, 200);
    ck_assert_uint_eq(rows, res->nbins);
    const sp_engine_output *eo = &res->out[j];
    double total = 0;
    for (size_t b = 0; b < rows; b++) {
      /* The counts are the engine's, bin for bin (integers, exact). */
      ck_assert_msg(v[4 * b + 3] == (double)res->hist[j * res->nbins + b],
                    "output %zu bin %zu: %g vs %llu", j, b, v[4 * b + 3],
                    (unsigned long long)res->hist[j * res->nbins + b]);
      total += v[4 * b + 3];
    }
    ck_assert(total == (double)eo->n);
    /* Edges: the range of the run's histogram, equal widths. */
    ck_assert(v[0] == eo->hist_lo);
    ck_assert(v[4 * (rows - 1) + 1] == eo->hist_hi);
    double w = (eo->hist_hi - eo->hist_lo) / (double)rows;
    for (size_t b = 0; b < rows; b++) ASSERT_REL(v[4 * b + 1] - v[4 * b], w, 1e-9);
  }
  sp_runplot_set_clear(&set);
  sp_run_free(r);
}
END_TEST

static int cmp(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* Checks series s against prefix statistics of y[0..n) computed by other
 * means: the mean in long double, the sd by sp_stats_describe, the
 * interval ends by a full sort and sp_engine_symmetric_index. */
static void check_series_from(const double *y, uint64_t n, double p, const sp_runplot_series *s,
                              int skip)
{
  double *pre = malloc((size_t)n * sizeof *pre);
  ck_assert_ptr_nonnull(pre);
  size_t k = 0;
  for (uint64_t N = (uint64_t)SP_RUNPLOT_CONV_FIRST << skip;; N *= 2) {
    if (N > n) N = n;
    size_t m = 0;
    long double sum = 0;
    for (uint64_t i = 0; i < N; i++)
      if (isfinite(y[i])) {
        pre[m++] = y[i];
        sum += y[i];
      }
    ck_assert_uint_lt(k, s->npoints);
    ck_assert(s->nsamples[k] == (double)N);
    ck_assert(s->nfinite[k] == (double)m);
    ASSERT_REL(s->mean[k], (double)(sum / m), 1e-13);
    sp_describe d;
    ck_assert_int_eq(sp_stats_describe(pre, m, NULL, &d, NULL), SP_OK);
    ASSERT_REL(s->mean_se[k], d.sd / sqrt((double)m), 1e-12);
    qsort(pre, m, sizeof *pre, cmp);
    size_t ilo, ihi;
    ck_assert(sp_engine_symmetric_index(m, p, &ilo, &ihi));
    ck_assert_msg(s->lo[k] == pre[ilo] && s->hi[k] == pre[ihi],
                  "point %zu: [%.17g, %.17g], sorted prefix gives [%.17g, %.17g]", k, s->lo[k],
                  s->hi[k], pre[ilo], pre[ihi]);
    k++;
    if (N >= n) break;
  }
  ck_assert_uint_eq(k, s->npoints);
  free(pre);
}

static void check_series(const double *y, uint64_t n, double p, const sp_runplot_series *s)
{
  check_series_from(y, n, p, s, 0);
}

START_TEST(test_convergence_equals_prefix_statistics)
{
  /* 50000 samples: points 1000, 2000, ..., 32000 and 50000. */
  sp_run *r = run_model(MODEL, 50000, 1, 0);
  const sp_engine_result *res = sp_run_result(r);
  for (size_t j = 0; j < 2; j++) {
    const double *y = res->samples_kept + j * res->samples;
    sp_runplot_series s;
    sp_error err;
    sp_error_clear(&err);
    ck_assert_int_eq(sp_runplot_convergence(y, res->samples, res->coverage, &s, &err), SP_OK);
    ck_assert_uint_eq(s.npoints, 7);
    check_series(y, res->samples, res->coverage, &s);
    /* The last point is the whole run: its interval is the engine's. */
    ck_assert(s.lo[6] == res->out[j].sym_lo);
    ck_assert(s.hi[6] == res->out[j].sym_hi);
    ASSERT_REL(s.mean[6], res->out[j].mean, 1e-13);
    sp_runplot_series_clear(&s);
  }
  sp_run_free(r);
}
END_TEST

START_TEST(test_convergence_skips_non_finite_and_short_prefixes)
{
  /* High-entropy values (an LCG, Knuth's MMIX constants (from memory),
   * mapped to (0, 1)) with NaN and infinities sprinkled in. */
  enum { N = 9000 };
  static double y[N];
  uint64_t x = 12345;
  for (size_t i = 0; i < N; i++) {
    x = x * 6364136223846793005u + 1442695040888963407u;
    y[i] = (double)(x >> 11) * 0x1p-53;
    if (i % 97 == 5) y[i] = NAN;
    if (i % 211 == 7) y[i] = i % 2 ? INFINITY : -INFINITY;
  }
  sp_runplot_series s;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_runplot_convergence(y, N, 0.9, &s, &err), SP_OK);
  ck_assert_uint_eq(s.npoints, 5); /* 1000, 2000, 4000, 8000, 9000 */
  check_series(y, N, 0.9, &s);
  sp_runplot_series_clear(&s);
  /* 99.9 %: JCGM 101 7.7.1 takes r = (1 - p) m / 2 rounded half up (as
   * sp_engine_symmetric_index does), which must be >= 1, so m >= 1/(1 - p)
   * = 1000 finite values; the first point has about 985 (NaN and
   * infinities left out) and is skipped. */
  size_t ilo, ihi;
  ck_assert(!sp_engine_symmetric_index(985, 0.999, &ilo, &ihi));
  ck_assert_int_eq(sp_runplot_convergence(y, N, 0.999, &s, &err), SP_OK);
  ck_assert_uint_eq(s.npoints, 4);
  ck_assert(s.nsamples[0] == 2000);
  check_series_from(y, N, 0.999, &s, 1);
  sp_runplot_series_clear(&s);
  /* Fewer samples than the first point: one point, the whole run. */
  ck_assert_int_eq(sp_runplot_convergence(y, 500, 0.9, &s, &err), SP_OK);
  ck_assert_uint_eq(s.npoints, 1);
  ck_assert(s.nsamples[0] == 500);
  sp_runplot_series_clear(&s);
  ck_assert_int_eq(sp_runplot_convergence(y, N, 1.0, &s, &err), SP_EUSAGE);
  ck_assert_int_eq(sp_runplot_convergence(NULL, 0, 0.95, &s, &err), SP_OK);
  ck_assert_uint_eq(s.npoints, 0);
  sp_runplot_series_clear(&s);
}
END_TEST

START_TEST(test_convergence_chart_data)
{
  sp_run *r = run_model(MODEL, 20000, 1, 0);
  sp_runplot_options o;
  plot_options(&o, dir);
  o.plot.gnuplot = "";
  sp_runplot_set set;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_OK);
  const sp_engine_result *res = sp_run_result(r);
  sp_runplot_series s;
  ck_assert_int_eq(sp_runplot_convergence(res->samples_kept, res->samples, res->coverage, &s,
                                          &err), SP_OK);
  const sp_runplot_chart *c = &set.charts[SP_RUNPLOT_CONV];
  static double v[3 * 64];
  /* Block 0: n mean; block 2: n lo hi (written with 17 digits). */
  ck_assert_uint_eq(read_block(c->out.data, 0, 2, v, 64), s.npoints);
  for (size_t k = 0; k < s.npoints; k++) {
    ck_assert(v[2 * k] == s.nsamples[k]);
    ck_assert(v[2 * k + 1] == s.mean[k]);
  }
  ck_assert_uint_eq(read_block(c->out.data, 2, 3, v, 64), s.npoints);
  for (size_t k = 0; k < s.npoints; k++) {
    ck_assert(v[3 * k + 1] == s.lo[k]);
    ck_assert(v[3 * k + 2] == s.hi[k]);
  }
  sp_runplot_series_clear(&s);
  sp_runplot_set_clear(&set);
  sp_run_free(r);
}
END_TEST

/* Spearman's rho of x, y (no ties) by ranks from a full sort. */
static double spearman(const double *x, const double *y, size_t n)
{
  double *rx = malloc(n * sizeof *rx), *ry = malloc(n * sizeof *ry);
  double (*pair)[2] = malloc(n * sizeof *pair);
  ck_assert(rx && ry && pair);
  for (int t = 0; t < 2; t++) {
    const double *v = t ? y : x;
    double *rk = t ? ry : rx;
    for (size_t i = 0; i < n; i++) {
      pair[i][0] = v[i];
      pair[i][1] = (double)i;
    }
    qsort(pair, n, sizeof *pair, cmp);
    for (size_t i = 0; i < n; i++) rk[(size_t)pair[i][1]] = (double)i;
  }
  double d2 = 0;
  for (size_t i = 0; i < n; i++) d2 += (rx[i] - ry[i]) * (rx[i] - ry[i]);
  free(rx);
  free(ry);
  free(pair);
  /* rho = 1 - 6 sum d^2 / (n (n^2 - 1)), the closed form without ties of
   * Spearman, C. (1904). The proof and measurement of association between
   * two things. American Journal of Psychology 15(1), 72-101. */
  return 1 - 6 * d2 / ((double)n * ((double)n * n - 1));
}

START_TEST(test_subsample)
{
  write_file(path_in("c.spm"), "input a [mm] ~ normal(mean=10, sd=1)\n"
                               "input b [mm] ~ lognormal(meanlog=0, sdlog=0.5)\n"
                               "output y [mm] = a + 2*b\n"
                               "correlate a b 0.6\n");
  sp_error err;
  sp_error_clear(&err);
  sp_run *r = NULL;
  ck_assert_int_eq(sp_run_open(path_in("c.spm"), &r, NULL, &err), SP_OK);
  const sp_model *m = sp_run_model(r);
  enum { N = 4000 };
  static double a[N], b[N], y[N], a2[N], b2[N], y2[N];
  double *in[2] = {a, b}, *out[1] = {y}, *in2[2] = {a2, b2}, *out2[1] = {y2};
  ck_assert_int_eq(sp_runplot_subsample(m, 9, N, in, out, &err), SP_OK);
  ck_assert_int_eq(sp_runplot_subsample(m, 9, N, in2, out2, &err), SP_OK);
  ck_assert(memcmp(a, a2, sizeof a) == 0 && memcmp(y, y2, sizeof y) == 0);
  double sa = 0, sb = 0;
  for (size_t i = 0; i < N; i++) {
    /* The model on the drawn inputs. */
    ASSERT_REL(y[i], a[i] + 2 * b[i], 4 * EPS);
    sa += a[i];
    sb += log(b[i]);
  }
  /* Marginals: means of a and of ln b within 5 standard errors of the
   * stated 10 and 0 (sd 1 and 0.5, closed form). */
  ASSERT_ABS(sa / N, 10.0, 5 * 1.0 / sqrt(N));
  ASSERT_ABS(sb / N, 0.0, 5 * 0.5 / sqrt(N));
  /* The copula: Spearman's rho near the stated 0.6; its standard error is
   * below 1/sqrt(n - 1) (the value under independence, Kendall & Stuart
   * (from memory)), so 5/sqrt(n - 1) bounds it. */
  ASSERT_ABS(spearman(a, b, N), 0.6, 5 / sqrt(N - 1.0));
  /* Another seed gives other draws. */
  ck_assert_int_eq(sp_runplot_subsample(m, 10, N, in2, out2, &err), SP_OK);
  ck_assert(memcmp(a, a2, sizeof a) != 0);
  ck_assert_int_eq(sp_runplot_subsample(m, 9, 0, in2, out2, &err), SP_EUSAGE);
  sp_run_free(r);
}
END_TEST

START_TEST(test_subsample_is_not_the_runs)
{
  /* The run's first block draws input 0 from sp_rng_block_stream(seed, 0,
   * 0); the subsample's from block SP_RUNPLOT_SCATTER_BLOCK. */
  sp_run *r = run_model("input a [mm] ~ normal(mean=0, sd=1)\noutput y [mm] = a\n", 5000, 1, 0);
  const sp_engine_result *res = sp_run_result(r);
  static double a[2000], y[2000];
  double *in[1] = {a}, *out[1] = {y};
  sp_error err;
  ck_assert_int_eq(sp_runplot_subsample(sp_run_model(r), 42, 2000, in, out, &err), SP_OK);
  size_t same = 0;
  for (size_t i = 0; i < 2000; i++) same += y[i] == res->samples_kept[i];
  ck_assert_uint_eq(same, 0);
  /* The same family sampler on that stream gives the same values. */
  sp_pcg64 g;
  sp_rng_block_stream(&g, 42, SP_RUNPLOT_SCATTER_BLOCK, 0);
  static double want[2000];
  const sp_model_input *mi = sp_model_input_at(sp_run_model(r), 0);
  mi->family->sample(mi->theta, &g, want, 2000);
  ck_assert(memcmp(want, a, sizeof a) == 0);
  sp_run_free(r);
}
END_TEST

START_TEST(test_scatter_uses_the_most_influential_input)
{
  sp_run *r = run_model(MODEL, 10000, 1, 0);
  sp_runplot_options o;
  plot_options(&o, dir);
  o.plot.gnuplot = "";
  o.scatter_points = 500;
  sp_runplot_set set;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_OK);
  /* z = 3 a: its scatter is against a, every point on the line. */
  const sp_runplot_chart *c = &set.charts[SP_RUNPLOT_NKINDS + SP_RUNPLOT_SCATTER];
  ck_assert(c->drawn);
  ck_assert(strstr(c->caption, "most influential input a") != NULL);
  static double v[2 * 600];
  ck_assert_uint_eq(read_block(c->out.data, 0, 2, v, 600), 500);
  for (size_t i = 0; i < 500; i++) ASSERT_REL(v[2 * i + 1], 3 * v[2 * i], 4 * EPS);
  /* The title says it is a subsample. */
  FILE *fp = fopen(c->out.script, "r");
  ck_assert_ptr_nonnull(fp);
  char line[1024];
  int found = 0;
  while (fgets(line, sizeof line, fp))
    if (strstr(line, "sp_title") && strstr(line, "subsample of 500 points")) found = 1;
  fclose(fp);
  ck_assert(found);
  sp_runplot_set_clear(&set);
  sp_run_free(r);
}
END_TEST

START_TEST(test_sobol_chart_and_constant_output)
{
  sp_run *r = run_model("input a [mm] ~ normal(mean=10, sd=1)\n"
                        "input b [mm] ~ normal(mean=0, sd=2)\n"
                        "output y [mm] = a + b\n"
                        "output k [mm] = 0*a + 5 [mm]\n",
                        8000, 1, 1000);
  sp_runplot_options o;
  plot_options(&o, dir);
  o.plot.gnuplot = "";
  o.prefix = "t-1";
  sp_runplot_set set;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_OK);
  ck_assert(set.charts[SP_RUNPLOT_SOBOL].drawn);
  ck_assert(exists(path_in("t-1_y_sobol.gp")));
  /* The constant output has no histogram and no exceedance curve, and
   * says why. */
  const sp_runplot_chart *k = &set.charts[SP_RUNPLOT_NKINDS];
  ck_assert_int_eq(k[SP_RUNPLOT_HIST].drawn, 0);
  ck_assert(strstr(k[SP_RUNPLOT_HIST].note, "single value") != NULL);
  ck_assert_int_eq(k[SP_RUNPLOT_EXCEED].drawn, 0);
  ck_assert(!exists(path_in("t-1_k_hist.dat")));
  sp_runplot_set_clear(&set);
  sp_run_free(r);
}
END_TEST

START_TEST(test_errors)
{
  sp_runplot_options o;
  plot_options(&o, dir);
  sp_runplot_set set;
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_runplot_draw(NULL, &o, &set, &err), SP_EUSAGE);
  sp_run *r = run_model(MODEL, 3000, 0, 0);
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_EUSAGE);
  ck_assert(strstr(err.msg, "keep_samples") != NULL);
  sp_run_free(r);
  r = run_model(MODEL, 3000, 1, 0);
  o.prefix = "../x";
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_EUSAGE);
  o.prefix = "run";
  o.scatter_points = SP_PLOT_SCATTER_MAX + 1;
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_EUSAGE);
  o.scatter_points = 0;
  o.plot.outdir = path_in("missing");
  ck_assert_int_eq(sp_runplot_draw(r, &o, &set, &err), SP_EIO);
  sp_runplot_set_clear(&set);
  ck_assert_str_eq(sp_runplot_kind_name(SP_RUNPLOT_CONV), "conv");
  ck_assert_ptr_null(sp_runplot_kind_name(SP_RUNPLOT_NKINDS));
  sp_run_free(r);
}
END_TEST

static Suite *suite(void)
{
  Suite *s = suite_create("runplot");
  TCase *t = tcase_create("runplot");
  tcase_add_checked_fixture(t, setup, teardown);
  tcase_set_timeout(t, 120);
  tcase_add_test(t, test_files_of_every_chart);
  tcase_add_test(t, test_histogram_counts_are_the_engines);
  tcase_add_test(t, test_convergence_equals_prefix_statistics);
  tcase_add_test(t, test_convergence_skips_non_finite_and_short_prefixes);
  tcase_add_test(t, test_convergence_chart_data);
  tcase_add_test(t, test_subsample);
  tcase_add_test(t, test_subsample_is_not_the_runs);
  tcase_add_test(t, test_scatter_uses_the_most_influential_input);
  tcase_add_test(t, test_sobol_chart_and_constant_output);
  tcase_add_test(t, test_errors);
  suite_add_tcase(s, t);
  return s;
}

int main(void) { return sp_run_suite(suite()); }
