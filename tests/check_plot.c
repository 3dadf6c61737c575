/* Tests of the plot module: text that reaches gnuplot, template search,
 * every template filled and rendered, the data files' numbers, the
 * histogram and probability-plot arithmetic, and the failure paths
 * (gnuplot missing, failing, hanging; files in the way).
 *
 * Rendering needs gnuplot with the pngcairo and svg terminals (Debian:
 * gnuplot-nox); without it the rendering tests fail, they do not pass. */
#include <dirent.h>
#include <errno.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

#include "scatterprop/dist.h"
#include "scatterprop/plot.h"
#include "sp_test.h"

#define PLOTS_DIR SP_SOURCE_DIR "/plots"

/* ---- two families for the charts (the library's registry is not needed) */

static double nrm_logpdf(const double *t, double x) { return log(gsl_ran_gaussian_pdf(x - t[0], t[1])); }
static double nrm_P(const double *t, double x) { return gsl_cdf_gaussian_P(x - t[0], t[1]); }
static double nrm_Q(const double *t, double x) { return gsl_cdf_gaussian_Q(x - t[0], t[1]); }
static double nrm_qP(const double *t, double p) { return t[0] + gsl_cdf_gaussian_Pinv(p, t[1]); }
static double nrm_qQ(const double *t, double q) { return t[0] + gsl_cdf_gaussian_Qinv(q, t[1]); }
static const sp_family test_normal = {
    .name = "normal", .title = "Normal", .nparam = 2, .param_names = {"mu", "sigma"},
    .logpdf = nrm_logpdf, .cdf_P = nrm_P, .cdf_Q = nrm_Q, .quantile_P = nrm_qP,
    .quantile_Q = nrm_qQ};

/* theta = (shape k, scale lambda); GSL's weibull takes (a = scale, b = shape). */
static double wb_logpdf(const double *t, double x)
{
  return x < 0 ? -INFINITY : log(gsl_ran_weibull_pdf(x, t[1], t[0]));
}
static double wb_P(const double *t, double x) { return gsl_cdf_weibull_P(x, t[1], t[0]); }
static double wb_Q(const double *t, double x) { return gsl_cdf_weibull_Q(x, t[1], t[0]); }
static double wb_qP(const double *t, double p) { return gsl_cdf_weibull_Pinv(p, t[1], t[0]); }
static double wb_qQ(const double *t, double q) { return gsl_cdf_weibull_Qinv(q, t[1], t[0]); }
static const sp_family test_weibull = {
    .name = "weibull", .title = "Weibull", .nparam = 2, .param_names = {"shape", "scale"},
    .logpdf = wb_logpdf, .cdf_P = wb_P, .cdf_Q = wb_Q, .quantile_P = wb_qP,
    .quantile_Q = wb_qQ};

/* ---- helpers ------------------------------------------------------------- */

static void make_tmpdir(char *buf, size_t n)
{
  snprintf(buf, n, "/tmp/sp_plot_XXXXXX");
  ck_assert_ptr_nonnull(mkdtemp(buf));
}

/* Number of entries in dir, hidden ones included. */
static int count_entries(const char *dir)
{
  DIR *d = opendir(dir);
  ck_assert_ptr_nonnull(d);
  int n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL)
    if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) n++;
  closedir(d);
  return n;
}

static void rm_tree(const char *dir)
{
  DIR *d = opendir(dir);
  if (!d) return;
  struct dirent *e;
  while ((e = readdir(d)) != NULL) {
    if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..")) continue;
    char p[4096];
    snprintf(p, sizeof p, "%s/%s", dir, e->d_name);
    unlink(p);
  }
  closedir(d);
  rmdir(dir);
}

static int exists(const char *path)
{
  struct stat st;
  return stat(path, &st) == 0;
}

static void opts(sp_plot_options *o, const char *dir, const char *stem)
{
  sp_plot_options_init(o);
  o->outdir = dir;
  o->stem = stem;
  o->template_dir = PLOTS_DIR;
}

/* Rows of block `index` of a data file, as numbers: *rows x *cols. */
static double *read_block(const char *path, int index, size_t *rows, size_t *cols)
{
  char *s = slurp(path);
  ck_assert_ptr_nonnull(s);
  double *v = malloc(200000 * sizeof *v);
  size_t nv = 0, nr = 0, nc = 0;
  int block = 0, blanks = 0;
  for (char *line = strtok(s, "\n"); line; line = strtok(NULL, "\n")) {
    (void)blanks;
    if (line[0] == '#') {
      int k;
      if (sscanf(line, "# index %d:", &k) == 1) block = k;
      continue;
    }
    if (block != index) continue;
    size_t c = 0;
    char *p = line, *end;
    for (;;) {
      double x = strtod(p, &end);
      if (end == p) break;
      v[nv++] = x;
      c++;
      p = end;
    }
    nc = c;
    nr++;
  }
  free(s);
  *rows = nr;
  *cols = nc;
  return v;
}

static int file_starts_with(const char *path, const char *magic, size_t n)
{
  FILE *fp = fopen(path, "rb");
  if (!fp) return 0;
  char buf[16] = {0};
  size_t got = fread(buf, 1, n, fp);
  fclose(fp);
  return got == n && memcmp(buf, magic, n) == 0;
}

static void assert_rendered(const sp_plot_output *o)
{
  ck_assert_msg(o->rendered, "not rendered: %s", o->hint);
  ck_assert(exists(o->data) && exists(o->script));
  ck_assert_msg(file_starts_with(o->png, "\x89PNG\r\n\x1a\n", 8), "%s is not a PNG", o->png);
  char *svg = slurp(o->svg);
  ASSERT_HAS(svg, "<svg");
  ASSERT_HAS(svg, "</svg>");
  /* The 11 pt text scaled by 4/3 (style.gp's sp_svg_fontscale): the same
   * size as in the PNG, where pngcairo draws points at 96 px per inch. */
  ASSERT_HAS(svg, "font-size=\"14.67\"");
  free(svg);
  char *gp = slurp(o->script);
  ck_assert(strncmp(gp, "# Made by scatterprop", 21) == 0);
  ASSERT_LACKS(gp, "@VARS@");
  ASSERT_LACKS(gp, "@STYLE@");
  ASSERT_HAS(gp, "Okabe"); /* the house style was inlined */
  free(gp);
}

/* A small sample: deterministic normal-looking values (quantiles of
 * N(2, 0.004) at (i - 0.5)/n, shuffled by a stride coprime with n). */
#define NX 60
static double xs[NX];
static void fill_xs(void)
{
  for (size_t i = 0; i < NX; i++) {
    size_t j = (i * 7) % NX;
    xs[j] = 2.0 + gsl_cdf_gaussian_Pinv(((double)i + 0.5) / NX, 0.004);
  }
}

static sp_plot_curve two_curves[2];
static sp_plot_fit fit_spec(void)
{
  fill_xs();
  two_curves[0] = (sp_plot_curve){&test_normal, {2.0, 0.004}, "normal (best, AICc -512.3)"};
  two_curves[1] = (sp_plot_curve){&test_weibull, {500.0, 2.002}, NULL};
  sp_plot_fit f = {.title = "wire_d: fitted candidates",
                   .axis = {"wire diameter d", "mm"},
                   .x = xs, .n = NX, .curves = two_curves, .ncurves = 2,
                   .resolution = 0.0001, .band_level = 0.95};
  return f;
}

/* ---- text ------------------------------------------------------------------ */

static void check_quoted(const char *in, const char *want)
{
  char buf[SP_PLOT_QUOTED_MAX];
  size_t n = sp_plot_gnuplot_string(in, buf, sizeof buf);
  ck_assert_msg(strcmp(buf, want) == 0, "quote(%s) = %s, want %s", in ? in : "NULL", buf, want);
  ck_assert_uint_eq(n, strlen(want));
}

/* Expected strings follow the rules documented in plot.h. */
START_TEST(test_gnuplot_string_rules)
{
  check_quoted("wire_d", "'wire_d'");
  check_quoted(NULL, "''");
  check_quoted("`touch /tmp/pwned`", "'?touch /tmp/pwned?'");
  check_quoted("system('touch /tmp/pwned2')", "'system?\xE2\x80\x99touch /tmp/pwned2\xE2\x80\x99)'");
  check_quoted("SyStEm  (1)", "'SyStEm  ?1)'");
  check_quoted("a\nb\\c$d@e{f}^g\"h", "'a?b?c?d?e?f??g\xE2\x80\x9Dh'");
  check_quoted("x'\nsystem('touch /tmp/pwned3')\n#",
               "'x\xE2\x80\x99?system?\xE2\x80\x99touch /tmp/pwned3\xE2\x80\x99)?#'");
  check_quoted("\xC2\xB5m at 20 \xC2\xB0" "C", "'\xC2\xB5m at 20 \xC2\xB0" "C'");
  check_quoted("\xC0\xAF", "'?" "?'");             /* overlong '/' */
  check_quoted("a\xE2\x80\xAE" "b", "'a?b'");    /* U+202E right-to-left override */
  check_quoted("\xED\xA0\x80", "'?" "?" "?'"); /* a UTF-16 surrogate: 3 bad bytes */
  char longer[501];
  memset(longer, 'a', 500);
  longer[500] = '\0';
  char buf[SP_PLOT_QUOTED_MAX];
  size_t n = sp_plot_gnuplot_string(longer, buf, sizeof buf);
  ck_assert_uint_eq(n, 1 + SP_PLOT_LABEL_MAX + 3 + 1);
  ck_assert(strcmp(buf + n - 4, "...'") == 0);
  /* A three-byte character never gets split at the cut. */
  char wide[600] = "";
  for (int i = 0; i < 100; i++) strcat(wide, "\xE2\x82\xAC"); /* U+20AC */
  n = sp_plot_gnuplot_string(wide, buf, sizeof buf);
  ck_assert_uint_eq(n, 1 + 198 + 3 + 1);
  ck_assert_uint_eq(sp_plot_gnuplot_string("x", buf, SP_PLOT_QUOTED_MAX - 1), 0);
}
END_TEST

START_TEST(test_stem)
{
  char buf[64];
  ck_assert_str_eq(sp_plot_stem("wire_d [mm]", buf, sizeof buf), "wire_d_mm");
  ck_assert_str_eq(sp_plot_stem("../../etc/passwd", buf, sizeof buf), "etc_passwd");
  ck_assert_str_eq(sp_plot_stem("", buf, sizeof buf), "chart");
  ck_assert_str_eq(sp_plot_stem(NULL, buf, sizeof buf), "chart");
  ck_assert_str_eq(sp_plot_stem("--rm -rf", buf, sizeof buf), "rm_-rf");
  ck_assert_str_eq(sp_plot_stem("`x`;$(y)", buf, sizeof buf), "x_y");
  char small[8];
  ck_assert_str_eq(sp_plot_stem("abcdefghijkl", small, sizeof small), "abcdefg");
}
END_TEST

/* ---- template search -------------------------------------------------------- */

START_TEST(test_template_dir_search)
{
  char buf[4096];
  sp_error err;
  unsetenv("SCATTERPROP_PLOTS");
  ck_assert_int_eq(sp_plot_template_dir(PLOTS_DIR, buf, sizeof buf, &err), SP_OK);
  ck_assert_str_eq(buf, PLOTS_DIR);
  /* The environment comes first; empty and missing entries are skipped. */
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  char p[128];
  snprintf(p, sizeof p, "%s/style.gp", dir);
  write_file(p, "# style\n");
  char env[256];
  snprintf(env, sizeof env, "/nonexistent/plots::%s", dir);
  setenv("SCATTERPROP_PLOTS", env, 1);
  ck_assert_int_eq(sp_plot_template_dir(PLOTS_DIR, buf, sizeof buf, &err), SP_OK);
  ck_assert_str_eq(buf, dir);
  /* Nowhere: the error lists what was tried. */
  setenv("SCATTERPROP_PLOTS", "/nonexistent/a", 1);
  ck_assert_int_eq(sp_plot_template_dir("/nonexistent/b", buf, sizeof buf, &err), SP_EIO);
  ASSERT_HAS(err.msg, "/nonexistent/a");
  ASSERT_HAS(err.msg, "/nonexistent/b");
  ASSERT_HAS(err.hint, "SCATTERPROP_PLOTS");
  unsetenv("SCATTERPROP_PLOTS");
  unlink(p);
  rmdir(dir);
}
END_TEST

/* ---- every template ------------------------------------------------------------ */

START_TEST(test_every_template_renders)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  sp_plot_fit f = fit_spec();

  opts(&o, dir, "fit_wire_d_hist");
  ck_assert_msg(sp_plot_fit_histogram(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);
  opts(&o, dir, "fit_wire_d_prob");
  ck_assert_msg(sp_plot_fit_probability(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);
  opts(&o, dir, "fit_wire_d_ecdf");
  ck_assert_msg(sp_plot_fit_ecdf(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);

  sp_plot_lot lots[2] = {{"L1", xs, NX / 2}, {"L2", xs + NX / 2, NX / 2}};
  sp_plot_lots ls = {.title = "wire_d by lot", .axis = {"wire_d", "mm"}, .lots = lots,
                     .nlots = 2, .pooled = &two_curves[0]};
  opts(&o, dir, "fit_wire_d_lots");
  ck_assert_msg(sp_plot_fit_lots(&ls, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);

  /* Output samples: a deterministic, skewed set (exponential quantiles). */
  enum { NS = 2000 };
  static double ys[NS], us[NS];
  for (size_t i = 0; i < NS; i++) {
    double p = ((double)((i * 613) % NS) + 0.5) / NS;
    us[i] = p;
    ys[i] = 500.0 + 40.0 * gsl_cdf_exponential_Pinv(p, 1.0);
  }
  sp_plot_limit lim[2] = {{650.0, "stress limit 650 MPa"}, {700.0, "proof 700 MPa"}};
  sp_plot_run_hist oh = {.title = "tau: shear stress at working load",
                            .axis = {"tau", "MPa"}, .samples = ys, .n = NS,
                            .coverage = {502.0, 647.6, 0.95}, .limits = lim, .nlimits = 2};
  opts(&o, dir, "run_tau_hist");
  ck_assert_msg(sp_plot_run_histogram(&oh, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);

  sp_plot_exceedance ex = {.title = "tau: exceedance", .axis = {"tau", "MPa"}, .samples = ys,
                           .n = NS, .limits = lim, .nlimits = 1};
  opts(&o, dir, "run_tau_exceed");
  ck_assert_msg(sp_plot_run_exceedance(&ex, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);
  /* The log axis in one notation: 1, 10^-1, 10^-2, 10^-3 (n = 2000 reaches
   * 1/2000), never gnuplot's mix of 0.001 and 1e-04. */
  char *svg = slurp(out.svg);
  ASSERT_HAS(svg, ">10\xE2\x81\xBB\xC2\xB9<"); /* 10⁻¹ */
  ASSERT_HAS(svg, ">10\xE2\x81\xBB\xC2\xB3<"); /* 10⁻³ */
  ASSERT_LACKS(svg, ">0.001<");
  ASSERT_LACKS(svg, "e-0");
  free(svg);

  const char *names[3] = {"wire_d", "Dm", "G"};
  double share[3] = {0.62, 0.25, 0.09}, total[3] = {0.64, 0.27, 0.10};
  sp_plot_sensitivity se = {.title = "tau: sensitivity", .measure = "first-order index",
                            .inputs = names, .share = share, .share_total = total,
                            .measure_total = "total-effect index", .ninputs = 3};
  opts(&o, dir, "run_tau_sens");
  ck_assert_msg(sp_plot_run_sensitivity(&se, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);
  /* The value beside each bar is set off by an offset, not a leading
   * blank, which SVG text would collapse (the label would touch the bar). */
  svg = slurp(out.svg);
  ASSERT_HAS(svg, ">62.0 %<");
  ASSERT_LACKS(svg, "> 62.0 %<");
  free(svg);

  double nn[6] = {1e3, 2e3, 4e3, 8e3, 1.6e4, 3.2e4};
  double mean[6] = {541, 539.5, 540.2, 540.1, 539.9, 540.0};
  double mse[6] = {1.3, 0.9, 0.65, 0.46, 0.32, 0.23};
  double lo[6] = {503, 502.1, 502.3, 502.0, 502.1, 502.0};
  double hi[6] = {651, 648, 647.2, 647.9, 647.5, 647.6};
  sp_plot_convergence cv = {.title = "tau: convergence", .axis = {"tau", "MPa"},
                            .nsamples = nn, .mean = mean, .mean_se = mse, .lo = lo, .hi = hi,
                            .level = 0.95, .npoints = 6};
  opts(&o, dir, "run_tau_conv");
  ck_assert_msg(sp_plot_run_convergence(&cv, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);

  sp_plot_scatter sc = {.title = "tau against wire_d", .xaxis = {"u(wire_d)", ""},
                        .yaxis = {"tau", "MPa"}, .x = us, .y = ys, .npoints = NS,
                        .of_total = 100000, .limits = lim, .nlimits = 1};
  opts(&o, dir, "run_tau_scatter");
  ck_assert_msg(sp_plot_run_scatter(&sc, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);

  /* Nine charts, four files each, and no staging folder left behind. */
  ck_assert_int_eq(count_entries(dir), 36);
  rm_tree(dir);
}
END_TEST

/* ---- hostile text ---------------------------------------------------------------- */

START_TEST(test_hostile_labels_neutralised)
{
  const char *marks[] = {"/tmp/pwned", "/tmp/pwned2", "/tmp/pwned3", "/tmp/pwned4"};
  for (int i = 0; i < 4; i++) unlink(marks[i]);
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  fill_xs();
  /* The last two would run if quoting were naive: a quote and a newline
   * end the string and start a command; a quote and '.' concatenate a
   * system() call into the label. */
  sp_plot_curve cv[2] = {
      {&test_normal, {2.0, 0.004}, "x'\nsystem('touch /tmp/pwned3')\n#"},
      {&test_normal, {2.0, 0.005}, "'.system('touch /tmp/pwned4').'"}};
  sp_plot_fit f = {.title = "system('touch /tmp/pwned2')",
                   .axis = {"`touch /tmp/pwned`", "mm"}, .x = xs, .n = NX,
                   .curves = cv, .ncurves = 2};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "hostile");
  ck_assert_msg(sp_plot_fit_histogram(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  assert_rendered(&out);
  for (int i = 0; i < 4; i++) ck_assert_msg(!exists(marks[i]), "%s was created", marks[i]);
  char *gp = slurp(out.script);
  ASSERT_HAS(gp, "sp_xlabel = '?touch /tmp/pwned? [mm]'");
  ASSERT_HAS(gp, "sp_title = 'system?\xE2\x80\x99touch /tmp/pwned2\xE2\x80\x99)'");
  ASSERT_LACKS(gp, "`");
  ASSERT_LACKS(gp, "system(");
  free(gp);
  char *svg = slurp(out.svg);
  ASSERT_HAS(svg, "?touch /tmp/pwned? [mm]");
  ASSERT_HAS(svg, "system?\xE2\x80\x99touch /tmp/pwned2\xE2\x80\x99)");
  free(svg);
  rm_tree(dir);
}
END_TEST

/* ---- numbers ---------------------------------------------------------------------- */

START_TEST(test_data_full_precision)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  /* Values whose shortest round-trip forms need 17 digits (0.1 + 0.2 =
   * 0.30000000000000004 in IEEE 754 binary64, a closed form), and the
   * extremes of the exponent range. */
  double x[5] = {0.1 + 0.2, 1.0 / 3.0, 1e-300, -2.5e300, 4.9406564584124654e-324};
  double y[5] = {2.0 / 3.0, -0.1, 123456789.123456789, 5e-324, 1.7976931348623157e308};
  sp_plot_scatter sc = {.xaxis = {"x", ""}, .yaxis = {"y", ""}, .x = x, .y = y, .npoints = 5};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "precision");
  o.gnuplot = ""; /* only the data matter here */
  ck_assert_msg(sp_plot_run_scatter(&sc, &o, &out, &err) == SP_OK, "%s", err.msg);
  char *text = slurp(out.data);
  ASSERT_HAS(text, "0.30000000000000004 0.66666666666666663\n");
  free(text);
  size_t rows, cols;
  double *v = read_block(out.data, 0, &rows, &cols);
  ck_assert_uint_eq(rows, 5);
  ck_assert_uint_eq(cols, 2);
  for (size_t i = 0; i < 5; i++) {
    ck_assert_msg(v[2 * i] == x[i], "x[%zu] read back as %.17g, wrote %.17g", i, v[2 * i], x[i]);
    ck_assert_msg(v[2 * i + 1] == y[i], "y[%zu] read back as %.17g", i, v[2 * i + 1]);
  }
  free(v);
  rm_tree(dir);
}
END_TEST

/* Freedman-Diaconis bins on x = 1..100: type-7 quartiles 25.75 and 75.25
 * (Hyndman & Fan 1996 definition 7: h = 99 p, interpolating), IQR 49.5,
 * h = 2 * 49.5 / 100^(1/3) = 21.33, so ceil(99 / 21.33) = 5 bins of width
 * 99 / 5 = 19.8, holding 20 values each (closed form).  With resolution 1
 * the width rounds up to 22 and the edges sit at half-integers from 0.5:
 * bins of 22, 22, 22, 22 and 12 values (closed form). */
START_TEST(test_histogram_bins_closed_form)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  double x[100];
  for (int i = 0; i < 100; i++) x[i] = (double)(100 - i);
  sp_plot_fit f = {.axis = {"count", ""}, .x = x, .n = 100};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "bins");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_fit_histogram(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  size_t rows, cols;
  double *v = read_block(out.data, 0, &rows, &cols);
  ck_assert_uint_eq(rows, 5);
  ck_assert_uint_eq(cols, 4);
  for (size_t k = 0; k < 5; k++) {
    ASSERT_REL(v[4 * k], 1.0 + 19.8 * (double)k, 8 * EPS);
    ck_assert(v[4 * k + 3] == 20.0);
    ASSERT_REL(v[4 * k + 2], 20.0 / (100.0 * 19.8), 16 * EPS);
  }
  free(v);
  f.resolution = 1.0;
  opts(&o, dir, "bins_res");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_fit_histogram(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  v = read_block(out.data, 0, &rows, &cols);
  ck_assert_uint_eq(rows, 5);
  const double want[5] = {22, 22, 22, 22, 12};
  for (size_t k = 0; k < 5; k++) {
    ck_assert(v[4 * k] == 0.5 + 22.0 * (double)k);
    ck_assert(v[4 * k + 3] == want[k]);
  }
  free(v);
  /* An outlier far out makes Freedman-Diaconis ask for 100000 bins: the
   * chart gets at most 500, still covering every value, and with the
   * resolution 0.001 the width stays a whole number of steps. */
  static double w[1001];
  for (int i = 0; i < 1000; i++) w[i] = i / 1000.0;
  w[1000] = 10000.0;
  f.x = w;
  f.n = 1001;
  f.resolution = 0.001;
  opts(&o, dir, "bins_capped");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_fit_histogram(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  v = read_block(out.data, 0, &rows, &cols);
  ck_assert_msg(rows >= 400 && rows <= 500, "%zu bins", rows);
  double total = 0;
  for (size_t k = 0; k < rows; k++) total += v[4 * k + 3];
  ck_assert(total == 1001.0);
  ck_assert(v[4 * (rows - 1) + 1] > 10000.0);
  double steps = (v[1] - v[0]) / 0.001;
  ASSERT_ABS(steps, round(steps), 1e-6);
  free(v);
  rm_tree(dir);
}
END_TEST

/* Probability plot of n = 5 values against N(10, 2): the quantile at
 * (i - 0.5)/n is 10 + 2 z with z = scipy.stats.norm.ppf([0.1, 0.3, 0.5,
 * 0.7, 0.9]) (scipy 1.10.1) = -1.2815515655446004, -0.5244005127080409, 0,
 * 0.5244005127080407, 1.2815515655446004; the 95 % band for i = 1, 3, 5 is
 * 10 + 2 norm.ppf(beta.ppf(0.025 | 0.975, i, n - i + 1)) with the z
 * values (scipy 1.10.1) -2.572334405147734 / 0.05473134160068948,
 * -1.0509847383934472 / 1.050984738393447, -0.05473134160068976 /
 * 2.572334405147733. */
START_TEST(test_probability_plot_values)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  double x[5] = {12.0, 7.5, 10.2, 9.1, 13.9};
  sp_plot_curve cv = {&test_normal, {10.0, 2.0}, NULL};
  sp_plot_fit f = {.axis = {"load", "N"}, .x = x, .n = 5, .curves = &cv, .ncurves = 1,
                   .band_level = 0.95};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "prob");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_fit_probability(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  const double z[5] = {-1.2815515655446004, -0.5244005127080409, 0.0, 0.5244005127080407,
                       1.2815515655446004};
  const double sorted[5] = {7.5, 9.1, 10.2, 12.0, 13.9};
  size_t rows, cols;
  double *v = read_block(out.data, 0, &rows, &cols);
  ck_assert_uint_eq(rows, 5);
  ck_assert_uint_eq(cols, 3);
  for (size_t i = 0; i < 5; i++) {
    /* GSL's normal quantile is good to a few ulps of z; 10 + 2z adds one
     * rounding. */
    ASSERT_ABS(v[3 * i], 10.0 + 2.0 * z[i], 32 * EPS * 10.0);
    ck_assert(v[3 * i + 1] == sorted[i]);
    ASSERT_REL(v[3 * i + 2], ((double)i + 0.5) / 5.0, EPS);
  }
  free(v);
  v = read_block(out.data, 1, &rows, &cols);
  ck_assert_uint_eq(rows, 5);
  const double blo[3] = {-2.572334405147734, -1.0509847383934472, -0.05473134160068976};
  const double bhi[3] = {0.05473134160068948, 1.050984738393447, 2.572334405147733};
  const size_t at[3] = {0, 2, 4};
  for (size_t k = 0; k < 3; k++) {
    /* GSL's beta inverse iterates to about 1e-12 relative in p, so the
     * ends agree with scipy to 1e-9 in x. */
    ASSERT_ABS(v[3 * at[k] + 1], 10.0 + 2.0 * blo[k], 1e-9);
    ASSERT_ABS(v[3 * at[k] + 2], 10.0 + 2.0 * bhi[k], 1e-9);
  }
  free(v);
  char *gp = slurp(out.script);
  ASSERT_HAS(gp, "(i - 0.5)/n");
  ASSERT_HAS(gp, "95 % pointwise band");
  free(gp);
  rm_tree(dir);
}
END_TEST

/* Exceedance from samples: with ties {1, 1, 2, 3} the empirical P(Y > y)
 * is 2/4 at 1 and 1/4 at 2 (closed form); with 100000 distinct values the
 * last 200 points are all kept and the rest thinned. */
START_TEST(test_exceedance_points)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  double t[4] = {3, 1, 2, 1};
  sp_plot_exceedance ex = {.axis = {"y", ""}, .samples = t, .n = 4};
  opts(&o, dir, "ties");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_run_exceedance(&ex, &o, &out, &err) == SP_OK, "%s", err.msg);
  size_t rows, cols;
  double *v = read_block(out.data, 0, &rows, &cols);
  ck_assert_uint_eq(rows, 2);
  ck_assert(v[0] == 1.0 && v[1] == 0.5 && v[2] == 2.0 && v[3] == 0.25);
  free(v);

  enum { N = 100000 };
  static double big[N];
  for (size_t i = 0; i < N; i++) big[i] = (double)(N - 1 - i);
  ex.samples = big;
  ex.n = N;
  opts(&o, dir, "thin");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_run_exceedance(&ex, &o, &out, &err) == SP_OK, "%s", err.msg);
  v = read_block(out.data, 0, &rows, &cols);
  /* 200 tail points plus at most log(N/200)/log(1.05) + 2 = 130 others. */
  ck_assert_msg(rows >= 200 && rows <= 332, "%zu rows", rows);
  ck_assert(v[0] == 0.0 && v[1] == (double)(N - 1) / N);
  ck_assert(v[2 * (rows - 1)] == (double)(N - 2) && v[2 * (rows - 1) + 1] == 1.0 / N);
  for (size_t r = 1; r < rows; r++) {
    ck_assert(v[2 * r] > v[2 * (r - 1)]);
    ck_assert(v[2 * r + 1] < v[2 * (r - 1) + 1]);
    /* Away from the tail the counts above two neighbours differ by the
     * first integer step of at least 5 %: below 1.05 (1 + 1/m). */
    double m = v[2 * r + 1] * N;
    ck_assert_msg(m <= 200.5 || v[2 * (r - 1) + 1] / v[2 * r + 1] <= 1.05 * (1 + 1 / m) + 1e-12,
                  "gap at row %zu", r);
  }
  for (size_t k = 1; k <= 200; k++)
    ck_assert(v[2 * (rows - k) + 1] == (double)k / N);
  free(v);
  rm_tree(dir);
}
END_TEST

START_TEST(test_sensitivity_ranked)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  const char *names[4] = {"a", "b", "c", "d"};
  double share[4] = {0.1, 0.6, 0.3, 0.3};
  sp_plot_sensitivity se = {.inputs = names, .share = share, .ninputs = 4};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "sens");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_run_sensitivity(&se, &o, &out, &err) == SP_OK, "%s", err.msg);
  char *gp = slurp(out.script);
  ASSERT_HAS(gp, "array input_name[4] = ['b', 'c', 'd', 'a']"); /* ties keep their order */
  ASSERT_HAS(gp, "has_total = 0");
  free(gp);
  size_t rows, cols;
  double *v = read_block(out.data, 0, &rows, &cols);
  ck_assert_uint_eq(rows, 4);
  ck_assert_uint_eq(cols, 4);
  const double rank_share[4][2] = {{1, 0.6}, {2, 0.3}, {3, 0.3}, {4, 0.1}};
  for (size_t r = 0; r < 4; r++) {
    ck_assert(v[4 * r] == rank_share[r][0] && v[4 * r + 1] == rank_share[r][1]);
    ck_assert(isnan(v[4 * r + 2]));                 /* no second measure */
    ck_assert(v[4 * r + 3] == rank_share[r][1]);    /* value written at the bar's end */
  }
  free(v);
  rm_tree(dir);
}
END_TEST


/* Every registered family through the fit charts, with data placed
 * exactly at the family's own quantiles Q(p_i), p_i = (i - 0.5)/n: the
 * probability plot must then put every point on y = x (the plot takes
 * quantile_Q of 1 - p_i above the median, so this also checks that each
 * family's two tails agree), inside its band; densities and CDFs must be
 * finite, >= 0 and <= 1.  Parameters are plain valid values per family. */
static const struct {
  const char *name;
  double theta[SP_FAMILY_MAX_PARAMS];
} family_params[] = {
    {"beta", {2, 3, 0, 1}},          {"exponential", {0.5}},
    {"exponential2", {0.5, 3}},      {"gamma", {3, 2}},
    {"gumbel_max", {10, 2}},         {"gumbel_min", {10, 2}},
    {"logistic", {10, 2}},           {"loglogistic", {4, 10}},
    {"lognormal", {1, 0.25}},        {"normal", {10, 2}},
    {"triangular", {0, 3, 10}},      {"truncnormal", {10, 2, 7, 15}},
    {"uniform", {2, 5}},             {"weibull", {2, 10}},
    {"weibull3", {2, 10, 5}},
};

START_TEST(test_registered_families)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  enum { N = 40 };
  for (size_t k = 0; k < sizeof family_params / sizeof family_params[0]; k++) {
    const sp_family *fam = sp_family_find(family_params[k].name);
    ck_assert_msg(fam != NULL, "family %s is not registered", family_params[k].name);
    sp_plot_curve cv = {fam, {0}, NULL};
    memcpy(cv.theta, family_params[k].theta, sizeof cv.theta);
    double x[N];
    for (int i = 0; i < N; i++) x[i] = fam->quantile_P(cv.theta, ((double)i + 0.5) / N);
    sp_plot_fit f = {.axis = {fam->name, "u"}, .x = x, .n = N, .curves = &cv, .ncurves = 1,
                     .band_level = 0.9};
    sp_plot_options o;
    sp_plot_output out;
    sp_error err;
    char stem[64];
    snprintf(stem, sizeof stem, "prob_%s", fam->name);
    opts(&o, dir, stem);
    ck_assert_msg(sp_plot_fit_probability(&f, &o, &out, &err) == SP_OK, "%s: %s", fam->name,
                  err.msg);
    ck_assert_msg(out.rendered, "%s: %s", fam->name, out.hint);
    size_t rows, cols, brows, bcols;
    double *v = read_block(out.data, 0, &rows, &cols);
    double *b = read_block(out.data, 1, &brows, &bcols);
    ck_assert_uint_eq(rows, N);
    ck_assert_uint_eq(brows, N);
    for (size_t i = 0; i < N; i++) {
      double scale = fmax(fabs(v[3 * i + 1]), 1.0);
      /* Q_P(p) and Q_Q(1 - p) agree to the accuracy of the family's
       * inversions (1e-9 relative is far below a pixel). */
      ck_assert_msg(fabs(v[3 * i] - v[3 * i + 1]) <= 1e-9 * scale, "%s: point %zu off the line: "
                    "%.17g vs %.17g", fam->name, i, v[3 * i], v[3 * i + 1]);
      ck_assert_msg(b[3 * i] == v[3 * i], "%s: band row %zu", fam->name, i);
      ck_assert_msg(b[3 * i + 1] <= v[3 * i] + 1e-9 * scale &&
                        v[3 * i] <= b[3 * i + 2] + 1e-9 * scale,
                    "%s: band [%g, %g] misses %g", fam->name, b[3 * i + 1], b[3 * i + 2],
                    v[3 * i]);
    }
    free(v);
    free(b);
    for (int kind = 0; kind < 2; kind++) {
      snprintf(stem, sizeof stem, "%s_%s", kind ? "ecdf" : "hist", fam->name);
      opts(&o, dir, stem);
      o.gnuplot = "";
      sp_status st = kind ? sp_plot_fit_ecdf(&f, &o, &out, &err)
                          : sp_plot_fit_histogram(&f, &o, &out, &err);
      ck_assert_msg(st == SP_OK, "%s: %s", fam->name, err.msg);
      v = read_block(out.data, 1, &rows, &cols);
      ck_assert_msg(rows > 100, "%s: %zu curve points", fam->name, rows);
      for (size_t i = 0; i < rows; i++)
        ck_assert_msg(isfinite(v[2 * i + 1]) && v[2 * i + 1] >= 0 &&
                          (kind == 0 || v[2 * i + 1] <= 1),
                      "%s: curve value %g", fam->name, v[2 * i + 1]);
      free(v);
    }
  }
  rm_tree(dir);
}
END_TEST

/* ---- failure paths ------------------------------------------------------------------ */

START_TEST(test_without_gnuplot)
{
  char dir[64], empty[64];
  make_tmpdir(dir, sizeof dir);
  make_tmpdir(empty, sizeof empty);
  sp_plot_fit f = fit_spec();
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  /* 1. An explicit path that does not exist. */
  opts(&o, dir, "fit_wire_d_hist");
  o.gnuplot = "/nonexistent/bin/gnuplot";
  ck_assert_msg(sp_plot_fit_histogram(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  ck_assert_int_eq(out.rendered, 0);
  ASSERT_HAS(out.hint, "gnuplot not found");
  ASSERT_HAS(out.hint, "gnuplot fit_wire_d_hist.gp");
  ASSERT_HAS(out.hint, dir);
  ck_assert(exists(out.script) && exists(out.data));
  ck_assert_str_eq(out.png, "");
  char p[256];
  snprintf(p, sizeof p, "%s/fit_wire_d_hist.png", dir);
  ck_assert(!exists(p));
  ck_assert_int_eq(count_entries(dir), 2);
  /* The script written then renders on its own, as the hint says. */
  char cmd[512];
  snprintf(cmd, sizeof cmd, "cd '%s' && gnuplot fit_wire_d_hist.gp 2>/dev/null", dir);
  ck_assert_int_eq(system(cmd), 0);
  ck_assert(file_starts_with(p, "\x89PNG", 4));

  /* 2. Looked up on a PATH without it. */
  const char *old = getenv("PATH");
  char saved[4096];
  snprintf(saved, sizeof saved, "%s", old ? old : "");
  setenv("PATH", empty, 1);
  opts(&o, dir, "fit_wire_d_ecdf");
  ck_assert_msg(sp_plot_fit_ecdf(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  setenv("PATH", saved, 1);
  ck_assert_int_eq(out.rendered, 0);
  ASSERT_HAS(out.hint, "gnuplot not found; to render the chart: cd ");
  ASSERT_HAS(out.hint, "&& gnuplot fit_wire_d_ecdf.gp");

  /* 3. Rendering not asked for. */
  opts(&o, dir, "fit_wire_d_prob");
  o.gnuplot = "";
  ck_assert_msg(sp_plot_fit_probability(&f, &o, &out, &err) == SP_OK, "%s", err.msg);
  ASSERT_HAS(out.hint, "rendering not requested");
  rm_tree(dir);
  rmdir(empty);
}
END_TEST

/* Makes a template folder with the real style and one chart template
 * replaced by text. */
static void broken_templates(char *dir, size_t n, const char *kind, const char *text)
{
  make_tmpdir(dir, n);
  char p[256];
  char *style = slurp(PLOTS_DIR "/style.gp");
  ck_assert_ptr_nonnull(style);
  snprintf(p, sizeof p, "%s/style.gp", dir);
  write_file(p, style);
  free(style);
  snprintf(p, sizeof p, "%s/%s.gp", dir, kind);
  write_file(p, text);
  setenv("SCATTERPROP_PLOTS", dir, 1);
}

START_TEST(test_gnuplot_error_reported)
{
  char tdir[64], dir[64];
  broken_templates(tdir, sizeof tdir, "fit_hist",
                   "@VARS@\n@STYLE@\n"
                   "set terminal pngcairo\nset output sp_stem . '.png'\n"
                   "plot sp_data index 0 using 1:3 with nonsense_style\n");
  make_tmpdir(dir, sizeof dir);
  sp_plot_fit f = fit_spec();
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "fit_wire_d_hist");
  ck_assert_int_eq(sp_plot_fit_histogram(&f, &o, &out, &err), SP_EIO);
  ASSERT_HAS(err.msg, "gnuplot failed on chart fit_wire_d_hist");
  ASSERT_HAS(err.msg, "fit_hist.gp");
  ASSERT_HAS(err.msg, "nonsense_style");       /* gnuplot echoes the line ... */
  ASSERT_HAS(err.msg, "fit_wire_d_hist.gp\" line"); /* ... and says where */
  ck_assert_int_eq(out.rendered, 0);
  /* No partial output, no staging folder. */
  ck_assert_int_eq(count_entries(dir), 0);
  unsetenv("SCATTERPROP_PLOTS");
  rm_tree(dir);
  rm_tree(tdir);
}
END_TEST

START_TEST(test_unknown_placeholder)
{
  char tdir[64], dir[64];
  broken_templates(tdir, sizeof tdir, "fit_ecdf", "@VARS@\n@STYLE@\nset title @TITLE@\n");
  make_tmpdir(dir, sizeof dir);
  sp_plot_fit f = fit_spec();
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "x");
  ck_assert_int_eq(sp_plot_fit_ecdf(&f, &o, &out, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "unknown placeholder @TITLE@");
  ck_assert_int_eq(err.line, 3);
  ck_assert_int_eq(err.col, 11);
  ck_assert_int_eq(count_entries(dir), 0);
  rm_tree(tdir);
  broken_templates(tdir, sizeof tdir, "fit_ecdf", "@VARS@\nplot x\n");
  ck_assert_int_eq(sp_plot_fit_ecdf(&f, &o, &out, &err), SP_EDATA);
  ASSERT_HAS(err.msg, "lacks its @STYLE@ line");
  unsetenv("SCATTERPROP_PLOTS");
  rm_tree(dir);
  rm_tree(tdir);
}
END_TEST

START_TEST(test_gnuplot_timeout)
{
  char tdir[64], dir[64];
  broken_templates(tdir, sizeof tdir, "run_scatter",
                   "@VARS@\n@STYLE@\nset terminal svg\nset output sp_stem . '.svg'\n"
                   "plot x\npause 30\n");
  make_tmpdir(dir, sizeof dir);
  double x[2] = {1, 2}, y[2] = {3, 4};
  sp_plot_scatter sc = {.x = x, .y = y, .npoints = 2};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "slow");
  o.timeout = 0.5;
  struct timespec t0, t1;
  clock_gettime(CLOCK_MONOTONIC, &t0);
  ck_assert_int_eq(sp_plot_run_scatter(&sc, &o, &out, &err), SP_EIO);
  clock_gettime(CLOCK_MONOTONIC, &t1);
  double secs = (double)(t1.tv_sec - t0.tv_sec) + 1e-9 * (double)(t1.tv_nsec - t0.tv_nsec);
  ASSERT_HAS(err.msg, "did not finish chart slow within 0.5 s");
  ck_assert_msg(secs < 10.0, "took %g s", secs);
  ck_assert_int_eq(count_entries(dir), 0);
  unsetenv("SCATTERPROP_PLOTS");
  rm_tree(dir);
  rm_tree(tdir);
}
END_TEST

START_TEST(test_overwrite)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  double x[2] = {1, 2}, y[2] = {3, 4};
  sp_plot_scatter sc = {.x = x, .y = y, .npoints = 2};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "again");
  ck_assert_msg(sp_plot_run_scatter(&sc, &o, &out, &err) == SP_OK, "%s", err.msg);
  ck_assert_int_eq(sp_plot_run_scatter(&sc, &o, &out, &err), SP_EIO);
  ASSERT_HAS(err.msg, "file exists");
  y[1] = 5;
  o.overwrite = 1;
  ck_assert_msg(sp_plot_run_scatter(&sc, &o, &out, &err) == SP_OK, "%s", err.msg);
  char *text = slurp(out.data);
  ASSERT_HAS(text, "2 5\n");
  free(text);
  /* Rewritten without rendering: the old pictures go, they no longer match. */
  o.gnuplot = "";
  ck_assert_msg(sp_plot_run_scatter(&sc, &o, &out, &err) == SP_OK, "%s", err.msg);
  ck_assert_int_eq(count_entries(dir), 2);
  rm_tree(dir);
}
END_TEST

START_TEST(test_check_before_work)
{
  char dir[64], sub[128], file[128];
  make_tmpdir(dir, sizeof dir);
  sp_plot_options o;
  sp_error err;
  /* An existing folder, and one that can be made in it: ready, and the
   * check leaves nothing behind (not even the missing folder). */
  opts(&o, dir, "x");
  ck_assert_msg(sp_plot_check(&o, &err) == SP_OK, "%s", err.msg);
  snprintf(sub, sizeof sub, "%s/charts", dir);
  o.outdir = sub;
  ck_assert_msg(sp_plot_check(&o, &err) == SP_OK, "%s", err.msg);
  ck_assert_int_eq(count_entries(dir), 0);
  /* A file where the folder should be, or in its path. */
  snprintf(file, sizeof file, "%s/afile", dir);
  write_file(file, "x\n");
  o.outdir = file;
  ck_assert_int_eq(sp_plot_check(&o, &err), SP_EIO);
  ASSERT_HAS(err.msg, "afile: not a folder");
  snprintf(sub, sizeof sub, "%s/afile/charts", dir);
  o.outdir = sub;
  ck_assert_int_eq(sp_plot_check(&o, &err), SP_EIO);
  ASSERT_HAS(err.msg, "afile is not a folder");
  /* A parent that does not exist: the folder is made one level deep. */
  snprintf(sub, sizeof sub, "%s/no/charts", dir);
  ck_assert_int_eq(sp_plot_check(&o, &err), SP_EIO);
  ASSERT_HAS(err.msg, "/no does not exist");
  /* A folder nothing can be made in, even by root: /proc. */
  o.outdir = "/proc";
  ck_assert_int_eq(sp_plot_check(&o, &err), SP_EIO);
  ASSERT_HAS(err.msg, "/proc: cannot write charts there");
  o.outdir = "/proc/sp-charts";
  ck_assert_int_eq(sp_plot_check(&o, &err), SP_EIO);
  ASSERT_HAS(err.msg, "/proc/sp-charts: cannot create the chart folder in /proc");
  /* No templates: found before any work too. */
  const char *env = getenv("SCATTERPROP_PLOTS");
  char *saved = env ? strdup(env) : NULL;
  setenv("SCATTERPROP_PLOTS", dir, 1);
  o.outdir = dir;
  o.template_dir = dir;
  ck_assert_int_eq(sp_plot_check(&o, &err), SP_EIO);
  ASSERT_HAS(err.msg, "gnuplot templates not found");
  if (saved)
    setenv("SCATTERPROP_PLOTS", saved, 1);
  else
    unsetenv("SCATTERPROP_PLOTS");
  free(saved);
  o.outdir = NULL;
  ck_assert_int_eq(sp_plot_check(&o, &err), SP_EUSAGE);
  ck_assert_int_eq(count_entries(dir), 1);
  rm_tree(dir);
}
END_TEST

START_TEST(test_bad_specs)
{
  char dir[64];
  make_tmpdir(dir, sizeof dir);
  sp_plot_fit f = fit_spec();
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  opts(&o, dir, "bad");
  o.gnuplot = "";
  f.n = 1;
  ck_assert_int_eq(sp_plot_fit_histogram(&f, &o, &out, &err), SP_EUSAGE);
  f = fit_spec();
  xs[3] = NAN;
  ck_assert_int_eq(sp_plot_fit_histogram(&f, &o, &out, &err), SP_EUSAGE);
  ASSERT_HAS(err.msg, "x[3]");
  f = fit_spec();
  f.ncurves = 0;
  ck_assert_int_eq(sp_plot_fit_probability(&f, &o, &out, &err), SP_EUSAGE);
  f = fit_spec();
  sp_plot_curve nofam = {NULL, {0}, NULL};
  f.curves = &nofam;
  f.ncurves = 1;
  ck_assert_int_eq(sp_plot_fit_ecdf(&f, &o, &out, &err), SP_EUSAGE);
  f = fit_spec();
  o.stem = "../escape";
  ck_assert_int_eq(sp_plot_fit_ecdf(&f, &o, &out, &err), SP_EUSAGE);
  o.stem = ".hidden";
  ck_assert_int_eq(sp_plot_fit_ecdf(&f, &o, &out, &err), SP_EUSAGE);
  o.stem = "ok";
  o.outdir = "/nonexistent/folder";
  ck_assert_int_eq(sp_plot_fit_ecdf(&f, &o, &out, &err), SP_EIO);
  o.outdir = dir;
  const char *names[1] = {"a"};
  double share[1] = {1.5};
  sp_plot_sensitivity se = {.inputs = names, .share = share, .ninputs = 1};
  ck_assert_int_eq(sp_plot_run_sensitivity(&se, &o, &out, &err), SP_EUSAGE);
  double nn[2] = {100, 50}, m[2] = {1, 2};
  sp_plot_convergence cv = {.nsamples = nn, .mean = m, .npoints = 2};
  ck_assert_int_eq(sp_plot_run_convergence(&cv, &o, &out, &err), SP_EUSAGE);
  double same[3] = {4, 4, 4};
  sp_plot_exceedance ex = {.samples = same, .n = 3};
  ck_assert_int_eq(sp_plot_run_exceedance(&ex, &o, &out, &err), SP_EUSAGE);
  ck_assert_int_eq(count_entries(dir), 0);
  rm_tree(dir);
}
END_TEST


/* Stand-ins for gnuplot (small shell scripts run as the program) reach
 * the paths a real gnuplot rarely takes. */
static void fake_program(const char *path, const char *text)
{
  write_file(path, text);
  ck_assert_int_eq(chmod(path, 0755), 0);
}

START_TEST(test_gnuplot_stand_ins)
{
  char dir[64], bin[64];
  make_tmpdir(dir, sizeof dir);
  make_tmpdir(bin, sizeof bin);
  double x[2] = {1, 2}, y[2] = {3, 4};
  sp_plot_scatter sc = {.x = x, .y = y, .npoints = 2};
  sp_plot_options o;
  sp_plot_output out;
  sp_error err;
  char prog[128];
  /* Cannot be executed (its interpreter does not exist). */
  snprintf(prog, sizeof prog, "%s/noexec", bin);
  fake_program(prog, "#!/nonexistent/interpreter\n");
  opts(&o, dir, "s1");
  o.gnuplot = prog;
  ck_assert_int_eq(sp_plot_run_scatter(&sc, &o, &out, &err), SP_EIO);
  ASSERT_HAS(err.msg, "cannot run it");
  ASSERT_HAS(err.msg, "noexec");
  /* Succeeds but draws nothing. */
  snprintf(prog, sizeof prog, "%s/lazy", bin);
  fake_program(prog, "#!/bin/sh\nexit 0\n");
  o.gnuplot = prog;
  ck_assert_int_eq(sp_plot_run_scatter(&sc, &o, &out, &err), SP_EIO);
  ASSERT_HAS(err.msg, "gnuplot made no s1.png/s1.svg");
  /* Fails after a flood of output: the message keeps the end of it, and
   * the run is not stalled by a full pipe. */
  snprintf(prog, sizeof prog, "%s/noisy", bin);
  fake_program(prog, "#!/bin/sh\ni=0\nwhile [ $i -lt 5000 ]; do\n"
                     "  echo \"warning line $i of a long and noisy output\" >&2\n"
                     "  i=$((i+1))\ndone\necho 'final: the real error' >&2\nexit 3\n");
  o.gnuplot = prog;
  ck_assert_int_eq(sp_plot_run_scatter(&sc, &o, &out, &err), SP_EIO);
  ASSERT_HAS(err.msg, "exit status 3");
  ASSERT_HAS(err.msg, "final: the real error");
  /* Killed by a signal. */
  snprintf(prog, sizeof prog, "%s/crash", bin);
  fake_program(prog, "#!/bin/sh\nkill -SEGV $$\n");
  o.gnuplot = prog;
  ck_assert_int_eq(sp_plot_run_scatter(&sc, &o, &out, &err), SP_EIO);
  ASSERT_HAS(err.msg, "signal 11");
  ck_assert_int_eq(count_entries(dir), 0);
  rm_tree(dir);
  rm_tree(bin);
}
END_TEST

static Suite *plot_suite(void)
{
  Suite *s = suite_create("plot");
  TCase *t = tcase_create("text");
  tcase_add_test(t, test_gnuplot_string_rules);
  tcase_add_test(t, test_stem);
  tcase_add_test(t, test_template_dir_search);
  suite_add_tcase(s, t);
  t = tcase_create("charts");
  tcase_set_timeout(t, 60);
  tcase_add_test(t, test_every_template_renders);
  tcase_add_test(t, test_hostile_labels_neutralised);
  tcase_add_test(t, test_data_full_precision);
  tcase_add_test(t, test_histogram_bins_closed_form);
  tcase_add_test(t, test_probability_plot_values);
  tcase_add_test(t, test_exceedance_points);
  tcase_add_test(t, test_sensitivity_ranked);
  tcase_add_test(t, test_registered_families);
  suite_add_tcase(s, t);
  t = tcase_create("failures");
  tcase_set_timeout(t, 60);
  tcase_add_test(t, test_without_gnuplot);
  tcase_add_test(t, test_gnuplot_error_reported);
  tcase_add_test(t, test_unknown_placeholder);
  tcase_add_test(t, test_gnuplot_timeout);
  tcase_add_test(t, test_overwrite);
  tcase_add_test(t, test_check_before_work);
  tcase_add_test(t, test_gnuplot_stand_ins);
  tcase_add_test(t, test_bad_specs);
  suite_add_tcase(s, t);
  return s;
}

int main(void) { return sp_run_suite(plot_suite()); }
