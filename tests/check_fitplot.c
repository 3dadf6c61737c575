/* Tests of the fitplot module (every chart of a fit, from a fit result or
 * a fit record) and of the `fit --plots` and `plot` commands.
 *
 * Rendering needs gnuplot with the pngcairo and svg terminals (Debian:
 * gnuplot-nox); without it the rendering tests fail, they do not pass.
 * The data are generated normal values (fixed seeds) written with 17
 * significant digits, so the CSV reads back exactly what was drawn.
 *
 * References: the fitted curves in a chart's data file must equal the
 * registered family's own density and CDF at the file's x grid, bit for
 * bit (the chart is a picture of those functions at the fitted
 * parameters); the curve choice is checked against a hand-built ranking
 * whose expected answer is worked out in the test's comment. */
#include <dirent.h>
#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "scatterprop/fit.h"
#include "scatterprop/fitplot.h"
#include "scatterprop/ingest.h"
#include "scatterprop/plot.h"
#include "scatterprop/record.h"
#include "scatterprop/rng.h"
#include "sp_test.h"

#define PLOTS_DIR SP_SOURCE_DIR "/plots"
/* Folders and files the tests make: short paths under /tmp. */
#define DIR_MAX 256
#define PWNED "/tmp/sp_pwned"
#define PWNED2 "/tmp/sp_pwned2"

/* ---- helpers ------------------------------------------------------------- */

static void make_tmpdir(char *buf, size_t n)
{
  snprintf(buf, n, "/tmp/sp_fitplot_XXXXXX");
  ck_assert_ptr_nonnull(mkdtemp(buf));
}

static int exists(const char *path)
{
  struct stat st;
  return lstat(path, &st) == 0;
}

/* Removes dir and everything below it (two levels are all a test makes). */
static void rm_tree(const char *dir)
{
  DIR *d = opendir(dir);
  if (!d) return;
  struct dirent *e;
  while ((e = readdir(d)) != NULL) {
    if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..")) continue;
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s/%s", dir, e->d_name);
    struct stat st;
    if (lstat(p, &st) == 0 && S_ISDIR(st.st_mode)) rm_tree(p);
    else unlink(p);
  }
  closedir(d);
  rmdir(dir);
}

static int count_entries(const char *dir)
{
  DIR *d = opendir(dir);
  if (!d) return -1;
  int n = 0;
  struct dirent *e;
  while ((e = readdir(d)) != NULL)
    if (strcmp(e->d_name, ".") && strcmp(e->d_name, "..")) n++;
  closedir(d);
  return n;
}

/* A CSV of normal values: nlots lots of sizes[k] values each, lot k with
 * mean 10 + 0.1 k and sd 0.5, under the header "lot,<column> [mm]". */
static void make_csv(const char *path, const char *column, const char *const *lots,
                     const size_t *sizes, size_t nlots, uint64_t seed)
{
  FILE *fp = fopen(path, "wb");
  ck_assert_ptr_nonnull(fp);
  fprintf(fp, "# gauge: test micrometer\nlot,%s [mm]\n", column);
  sp_pcg64 g;
  sp_rng_block_stream(&g, seed, 0, 0);
  for (size_t k = 0; k < nlots; k++)
    for (size_t i = 0; i < sizes[k]; i++)
      fprintf(fp, "\"%s\",%.17g\n", lots[k], 10.0 + 0.1 * (double)k + 0.5 * sp_rng_normal(&g));
  fclose(fp);
}

static const char *const test_families[] = {"normal", "lognormal", "weibull", "gamma",
                                            "logistic"};

/* Reads t from path and fits column (with by) with the five families above
 * and approximate p-values (fast; gamma has none, so it is never rejected). */
static void fit_csv(const char *path, const char *column, const char *by, sp_table **t,
                    sp_fit_grouped *g)
{
  sp_error e;
  sp_error_clear(&e);
  sp_ingest_options io;
  sp_ingest_options_init(&io);
  ck_assert_msg(sp_table_read(path, &io, t, &e) == SP_OK, "%s", e.msg);
  sp_fit_options o;
  sp_fit_options_init(&o);
  o.families = test_families;
  o.nfamilies = sizeof test_families / sizeof test_families[0];
  o.pvalue = SP_FIT_PVALUE_APPROX;
  ck_assert_msg(sp_fit_table(*t, column, by, &o, g, &e) == SP_OK, "%s", e.msg);
}

static void chart_opts(sp_plot_options *o, const char *dir)
{
  sp_plot_options_init(o);
  o->outdir = dir;
  o->template_dir = PLOTS_DIR;
  o->gnuplot = "/usr/bin/gnuplot";
}

/* The blocks of a chart's data file: block k's rows (x, y) for two-column
 * blocks, and each block's "what" comment. */
typedef struct {
  size_t nblocks;
  char what[32][128];
  size_t nrows[32];
  double *x[32], *y[32];
} dat_file;

static void dat_read(const char *path, dat_file *d)
{
  memset(d, 0, sizeof *d);
  char *s = slurp(path);
  ck_assert_msg(s != NULL, "cannot read %s", path);
  long block = -1;
  for (char *line = strtok(s, "\n"); line; line = strtok(NULL, "\n")) {
    if (line[0] == '#') {
      long k;
      int off = 0;
      if (sscanf(line, "# index %ld: %n", &k, &off) == 1 && off > 0) {
        ck_assert_int_lt(k, 32);
        block = k;
        d->nblocks = (size_t)k + 1;
        snprintf(d->what[k], sizeof d->what[k], "%s", line + off);
        d->x[k] = malloc(4096 * sizeof(double));
        d->y[k] = malloc(4096 * sizeof(double));
      }
      continue;
    }
    ck_assert_int_ge(block, 0);
    char *end;
    double a = strtod(line, &end);
    double b = strtod(end, &end);
    size_t r = d->nrows[block]++;
    ck_assert_uint_lt(r, 4096);
    d->x[block][r] = a;
    d->y[block][r] = b;
  }
  free(s);
}

static void dat_free(dat_file *d)
{
  for (size_t k = 0; k < 32; k++) {
    free(d->x[k]);
    free(d->y[k]);
  }
}

/* The curves of chart `path` (blocks 1.. of a histogram or ECDF data file)
 * equal the family's density (kind 0) or CDF (kind 1) at the candidates
 * expected[0..n), exactly. */
static void check_curves(const char *path, int kind, const sp_fit_candidate *const *expected,
                         size_t n)
{
  dat_file d;
  dat_read(path, &d);
  ck_assert_msg(d.nblocks == 1 + n, "%s: %zu blocks, want 1 + %zu curves", path, d.nblocks, n);
  for (size_t i = 0; i < n; i++) {
    const sp_fit_candidate *c = expected[i];
    char want[128];
    snprintf(want, sizeof want, "%s of %s", kind ? "CDF" : "density", c->family->name);
    ck_assert_msg(strcmp(d.what[i + 1], want) == 0, "%s block %zu is '%s', want '%s'", path,
                  i + 1, d.what[i + 1], want);
    /* 201 points along the curve (plot.c's CURVE_POINTS), all finite for
     * these families on a grid around normal data. */
    ck_assert_uint_eq(d.nrows[i + 1], 201);
    for (size_t r = 0; r < d.nrows[i + 1]; r++) {
      double x = d.x[i + 1][r];
      /* Reference: the registered family itself at the fitted theta. */
      double ref = kind ? c->family->cdf_P(c->theta, x) : exp(c->family->logpdf(c->theta, x));
      ck_assert_msg(d.y[i + 1][r] == ref, "%s: %s at x = %.17g is %.17g, family gives %.17g",
                    path, want, x, d.y[i + 1][r], ref);
    }
  }
  dat_free(&d);
}

/* The candidates a chart should show, worked out from the fit's fields
 * independently of the module: the chosen one, then non-rejected ok ones
 * by rank, three at most. */
static size_t expected_curves(const sp_fit_result *r, const sp_fit_candidate **out)
{
  size_t n = 0;
  if (r->chosen < 0) return 0;
  out[n++] = &r->cand[r->chosen];
  for (size_t rank = 1; rank <= r->ncand && n < 3; rank++)
    for (size_t i = 0; i < r->ncand && n < 3; i++) {
      const sp_fit_candidate *c = &r->cand[i];
      if ((long)i != r->chosen && c->status == SP_FIT_OK && !c->rejected && c->rank == rank)
        out[n++] = c;
    }
  return n;
}

static const char *const exts[4] = {".png", ".svg", ".gp", ".dat"};

static void assert_chart_files(const char *dir, const char *stem, int rendered)
{
  for (int k = 0; k < 4; k++) {
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s/%s%s", dir, stem, exts[k]);
    if (k < 2 && !rendered) ck_assert_msg(!exists(p), "%s exists without rendering", p);
    else ck_assert_msg(exists(p), "%s is missing", p);
  }
}

/* A copy of text with the len bytes at p replaced by with. */
static char *splice(const char *text, const char *p, size_t len, const char *with)
{
  size_t pre = (size_t)(p - text), wl = strlen(with), tl = strlen(text);
  char *s = malloc(tl - len + wl + 1);
  memcpy(s, text, pre);
  memcpy(s + pre, with, wl);
  memcpy(s + pre + wl, p + len, tl - pre - len + 1);
  return s;
}

/* A copy of text with the value after the first `key` at or after the
 * first occurrence of `after` (or of the text's start) replaced: the
 * value is the run of [-0-9a-z.] that follows. */
static char *replace_value(const char *text, const char *after, const char *key,
                           const char *with)
{
  const char *a = after ? strstr(text, after) : text;
  ck_assert_msg(a != NULL, "no '%s' in the record", after);
  const char *k = strstr(a, key);
  ck_assert_msg(k != NULL, "no '%s' in the record", key);
  const char *v = k + strlen(key);
  size_t len = strspn(v, "-0123456789abcdefghijklmnopqrstuvwxyz.");
  ck_assert_uint_gt(len, 0);
  return splice(text, v, len, with);
}

static int files_equal(const char *a, const char *b)
{
  char *x = slurp(a), *y = slurp(b);
  int eq = x && y && strcmp(x, y) == 0;
  free(x);
  free(y);
  return eq;
}

/* ---- stems and the choice of curves --------------------------------------- */

START_TEST(test_stems)
{
  char b[SP_PLOT_STEM_MAX + 1];
  ck_assert_str_eq(sp_fitplot_stem("wire_d", NULL, 0, "hist", b, sizeof b), "fit_wire_d_hist");
  ck_assert_str_eq(sp_fitplot_stem("wire d", "W24/117", 0, "prob", b, sizeof b),
                   "fit_wire_d_lot_W24_117_prob");
  ck_assert_str_eq(sp_fitplot_stem("wire_d", "ignored", 1, "ecdf", b, sizeof b),
                   "fit_wire_d_pooled_ecdf");
  ck_assert_str_eq(sp_fitplot_stem("wire_d", NULL, 0, NULL, b, sizeof b), "fit_wire_d");
  ck_assert_str_eq(sp_fitplot_stem("`touch " PWNED "`", NULL, 0, "hist", b, sizeof b),
                   "fit_touch_tmp_sp_pwned_hist");
  /* Nothing usable left: sp_plot_stem's "chart". */
  ck_assert_str_eq(sp_fitplot_stem("$(;)", "'", 0, "lots", b, sizeof b),
                   "fit_chart_lot_chart_lots");
  /* Long names are cut piecewise, so the kind suffix survives. */
  char lng[400];
  memset(lng, 'a', sizeof lng - 1);
  lng[sizeof lng - 1] = '\0';
  sp_fitplot_stem(lng, lng, 0, "hist", b, sizeof b);
  ck_assert_uint_eq(strlen(b), 4 + SP_FITPLOT_STEM_COLUMN + 5 + SP_FITPLOT_STEM_LOT + 5);
  ck_assert_uint_le(strlen(b) + 4, SP_PLOT_STEM_MAX);
  ck_assert_str_eq(b + strlen(b) - 5, "_hist");
  ck_assert_uint_eq(strspn(b, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_-"),
                    strlen(b));
}
END_TEST

START_TEST(test_pick_order)
{
  /* Five candidates: idx 0 rank 1 but rejected; idx 3 rank 2, chosen
   * (say, forced); idx 1 rank 3; idx 4 rank 4; idx 2 skipped (unranked).
   * Expected curves: idx 3 (chosen), then idx 1 (rank 3), idx 4 (rank 4):
   * the rejected rank-1 candidate and the skipped one are left out. */
  const sp_family *nf = sp_family_find("normal");
  ck_assert_ptr_nonnull(nf);
  sp_fit_candidate c[5];
  memset(c, 0, sizeof c);
  const size_t rank[5] = {1, 3, 0, 2, 4};
  for (int i = 0; i < 5; i++) {
    c[i].family = nf;
    c[i].status = i == 2 ? SP_FIT_SKIPPED : SP_FIT_OK;
    c[i].theta[0] = 10.0 + i;
    c[i].theta[1] = 1.0;
    c[i].rank = rank[i];
  }
  c[0].rejected = 1;
  sp_fit_result r;
  memset(&r, 0, sizeof r);
  r.ncand = 5;
  r.cand = c;
  r.chosen = 3;
  sp_fitplot_fit f;
  sp_fitplot_pick(&r, &f);
  ck_assert_uint_eq(f.ncurves, 3);
  ck_assert_int_eq(f.curves[0].chosen, 1);
  ck_assert_double_eq(f.curves[0].theta[0], 13.0);
  ck_assert_uint_eq(f.curves[0].rank, 2);
  ck_assert_double_eq(f.curves[1].theta[0], 11.0);
  ck_assert_int_eq(f.curves[1].chosen, 0);
  ck_assert_double_eq(f.curves[2].theta[0], 14.0);
  /* Reject idx 1 too: only idx 3 and idx 4 remain. */
  c[1].rejected = 1;
  sp_fitplot_pick(&r, &f);
  ck_assert_uint_eq(f.ncurves, 2);
  ck_assert_double_eq(f.curves[1].theta[0], 14.0);
  /* No chosen family: no curves, and the note quotes the reason. */
  r.chosen = -1;
  snprintf(r.reason, sizeof r.reason, "every candidate failed");
  sp_fitplot_pick(&r, &f);
  ck_assert_uint_eq(f.ncurves, 0);
  ASSERT_HAS(f.note, "every candidate failed");
}
END_TEST

/* ---- drawing from a fit ----------------------------------------------------- */

static const char *const three_lots[] = {"A-1", "B-2", "C-3"};
static const size_t three_sizes[] = {40, 35, 30};

START_TEST(test_draw_all_charts)
{
  unsetenv("SCATTERPROP_PLOTS");
  char dir[64], out[DIR_MAX], csv[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/thick.csv", dir);
  snprintf(out, sizeof out, "%s/charts", dir); /* made by the module */
  make_csv(csv, "thickness", three_lots, three_sizes, 3, 11);
  sp_table *t = NULL;
  sp_fit_grouped g;
  fit_csv(csv, "thickness", "lot", &t, &g);
  ck_assert_uint_eq(g.ngroups, 3);

  sp_fitplot_plan plan;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_msg(sp_fitplot_plan_from_fit(&g, "thickness", "mm", "lot", &plan, &e) == SP_OK,
                "%s", e.msg);
  ck_assert_uint_eq(plan.nlots, 3);
  sp_plot_options po;
  chart_opts(&po, out);
  sp_fitplot_charts ch;
  ck_assert_msg(sp_fitplot_draw(&plan, t, &po, &ch, &e) == SP_OK, "%s", e.msg);
  /* 3 charts for each lot and for the pool, one lots chart. */
  ck_assert_uint_eq(ch.ncharts, 3 * 4 + 1);
  ck_assert_uint_eq(ch.ndrawn, 13);
  ck_assert_uint_eq(ch.nrendered, 13);
  ck_assert_int_eq(count_entries(out), 4 * 13);

  static const char *const kinds[3] = {"hist", "prob", "ecdf"};
  for (size_t k = 0; k <= 3; k++) {
    const sp_fit_result *r = k < 3 ? &g.groups[k].fit : &g.pooled;
    char base[128];
    if (k < 3) snprintf(base, sizeof base, "fit_thickness_lot_%s", three_lots[k]);
    else snprintf(base, sizeof base, "fit_thickness_pooled");
    for (int j = 0; j < 3; j++) {
      char stem[160];
      snprintf(stem, sizeof stem, "%s_%s", base, kinds[j]);
      ck_assert_str_eq(ch.charts[3 * k + (size_t)j].stem, stem);
      assert_chart_files(out, stem, 1);
    }
    const sp_fit_candidate *want[3];
    size_t nw = expected_curves(r, want);
    ck_assert_uint_ge(nw, 2); /* normal data: several families fit */
    char p[PATH_MAX];
    snprintf(p, sizeof p, "%s/%s_hist.dat", out, base);
    check_curves(p, 0, want, nw);
    snprintf(p, sizeof p, "%s/%s_ecdf.dat", out, base);
    check_curves(p, 1, want, nw);
    /* The probability plot is of the chosen family, named in its axis. */
    snprintf(p, sizeof p, "%s/%s_prob.gp", out, base);
    char *gp = slurp(p);
    char lab[160];
    snprintf(lab, sizeof lab, "'%s quantile at (i - 0.5)/n [mm]'", want[0]->family->title);
    ASSERT_HAS(gp, lab);
    ASSERT_HAS(gp, "sp_ylabel = 'ordered thickness [mm]'");
    ASSERT_HAS(gp, "has_band = 1");
    free(gp);
  }
  assert_chart_files(out, "fit_thickness_lots", 1);
  ck_assert_str_eq(ch.charts[12].stem, "fit_thickness_lots");
  /* The lots chart: one ECDF block per lot with each lot's size, then the
   * pooled chosen CDF, exactly. */
  char p[PATH_MAX];
  snprintf(p, sizeof p, "%s/fit_thickness_lots.dat", out);
  dat_file d;
  dat_read(p, &d);
  ck_assert_uint_eq(d.nblocks, 4);
  for (size_t k = 0; k < 3; k++) {
    /* Start, one riser per value (no ties in continuous data), end. */
    ck_assert_uint_eq(d.nrows[k], three_sizes[k] + 2);
    ck_assert_double_eq(d.y[k][d.nrows[k] - 2], 1.0);
  }
  const sp_fit_candidate *pc = &g.pooled.cand[g.pooled.chosen];
  for (size_t r = 0; r < d.nrows[3]; r++)
    ck_assert(d.y[3][r] == pc->family->cdf_P(pc->theta, d.x[3][r]));
  dat_free(&d);
  snprintf(p, sizeof p, "%s/fit_thickness_lots.gp", out);
  char *gp = slurp(p);
  ASSERT_HAS(gp, "'A-1 (n = 40)'");
  ASSERT_HAS(gp, "sp_xlabel = 'thickness [mm]'");
  free(gp);

  /* Drawing again is refused before anything is touched ... */
  sp_fitplot_charts ch2;
  ck_assert_int_eq(sp_fitplot_draw(&plan, t, &po, &ch2, &e), SP_EIO);
  ASSERT_HAS(e.msg, "file exists");
  ASSERT_HAS(e.hint, "--force");
  ck_assert_uint_eq(ch2.ndrawn, 0);
  sp_fitplot_charts_free(&ch2);
  /* ... unless overwriting is asked for (not rendered again: that was
   * shown above, and the old pictures must then go). */
  po.overwrite = 1;
  po.gnuplot = "";
  sp_error_clear(&e);
  ck_assert_msg(sp_fitplot_draw(&plan, t, &po, &ch2, &e) == SP_OK, "%s", e.msg);
  ck_assert_uint_eq(ch2.ndrawn, 13);
  ck_assert_uint_eq(ch2.nrendered, 0);
  assert_chart_files(out, "fit_thickness_lots", 0);
  sp_fitplot_charts_free(&ch2);

  sp_fitplot_charts_free(&ch);
  sp_fitplot_plan_clear(&plan);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  rm_tree(dir);
}
END_TEST

START_TEST(test_without_gnuplot)
{
  char dir[64], csv[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/x.csv", dir);
  const char *lots[1] = {"only"};
  const size_t sizes[1] = {25};
  make_csv(csv, "x", lots, sizes, 1, 5);
  sp_table *t = NULL;
  sp_fit_grouped g;
  fit_csv(csv, "x", NULL, &t, &g);
  sp_fitplot_plan plan;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_int_eq(sp_fitplot_plan_from_fit(&g, "x", NULL, NULL, &plan, &e), SP_OK);
  sp_plot_options po;
  chart_opts(&po, dir);
  po.gnuplot = "/nonexistent/gnuplot";
  sp_fitplot_charts ch;
  ck_assert_msg(sp_fitplot_draw(&plan, t, &po, &ch, &e) == SP_OK, "%s", e.msg);
  /* Without lots: three charts of the column, no lots chart. */
  ck_assert_uint_eq(ch.ncharts, 3);
  ck_assert_uint_eq(ch.ndrawn, 3);
  ck_assert_uint_eq(ch.nrendered, 0);
  ck_assert_str_eq(ch.charts[0].stem, "fit_x_hist");
  ck_assert_str_eq(ch.charts[1].stem, "fit_x_prob");
  ck_assert_str_eq(ch.charts[2].stem, "fit_x_ecdf");
  for (int k = 0; k < 3; k++) {
    assert_chart_files(dir, ch.charts[k].stem, 0);
    ASSERT_HAS(ch.charts[k].out.hint, "gnuplot not found");
    ASSERT_HAS(ch.charts[k].out.hint, ch.charts[k].stem);
  }
  sp_fitplot_charts_free(&ch);
  sp_fitplot_plan_clear(&plan);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  rm_tree(dir);
}
END_TEST

START_TEST(test_small_lots_and_clashing_stems)
{
  /* Lot "A 1" and lot "A_1" make the same stem; the later one gets "_2".
   * Lot "one" has a single value: its charts are left out with a note,
   * but it still appears in the lots chart. */
  char dir[64], csv[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/x.csv", dir);
  const char *lots[3] = {"A 1", "A_1", "one"};
  const size_t sizes[3] = {20, 20, 1};
  make_csv(csv, "x", lots, sizes, 3, 9);
  /* A missing reading in lot "A 1" and a reading without a lot id: the
   * first is dropped everywhere, the second counts in the pool only, as
   * the fit counted them (the module checks its counts against the fit's
   * and fails otherwise). */
  FILE *fp = fopen(csv, "ab");
  ck_assert_ptr_nonnull(fp);
  fputs("\"A 1\",\n\"\",10.25\n", fp);
  fclose(fp);
  sp_table *t = NULL;
  sp_fit_grouped g;
  fit_csv(csv, "x", "lot", &t, &g);
  sp_fitplot_plan plan;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_int_eq(sp_fitplot_plan_from_fit(&g, "x", "mm", "lot", &plan, &e), SP_OK);
  sp_plot_options po;
  chart_opts(&po, dir);
  po.gnuplot = "";
  sp_fitplot_charts ch;
  ck_assert_msg(sp_fitplot_draw(&plan, t, &po, &ch, &e) == SP_OK, "%s", e.msg);
  ck_assert_uint_eq(ch.ncharts, 3 * 4 + 1);
  ck_assert_str_eq(ch.charts[0].stem, "fit_x_lot_A_1_hist");
  ck_assert_str_eq(ch.charts[3].stem, "fit_x_lot_A_1_2_hist");
  ck_assert_str_eq(ch.charts[6].stem, "fit_x_lot_one_hist");
  for (int k = 6; k < 9; k++) {
    ck_assert_int_eq(ch.charts[k].drawn, 0);
    ASSERT_HAS(ch.charts[k].note, "1 value; a chart needs 2 or more");
  }
  ck_assert_uint_eq(ch.ndrawn, 3 * 3 + 1);
  ck_assert_uint_eq(g.pooled.n, 42);
  ck_assert_uint_eq(g.groups[0].fit.n, 20);
  char p[PATH_MAX];
  snprintf(p, sizeof p, "%s/fit_x_pooled_hist.gp", dir);
  char *hg = slurp(p);
  ASSERT_HAS(hg, "'data (n = 42)'");
  free(hg);
  snprintf(p, sizeof p, "%s/fit_x_lot_one_hist.dat", dir);
  ck_assert(!exists(p));
  snprintf(p, sizeof p, "%s/fit_x_lots.gp", dir);
  char *gp = slurp(p);
  ASSERT_HAS(gp, "'one (n = 1)'");
  free(gp);
  sp_fitplot_charts_free(&ch);
  sp_fitplot_plan_clear(&plan);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  rm_tree(dir);
}
END_TEST

START_TEST(test_many_lots_paged)
{
  /* Eleven lots: the lots chart is split into pages of SP_PLOT_LOTS_MAX
   * (8): lots 1-8 and 9-11. */
  char dir[64], csv[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/x.csv", dir);
  const char *lots[11] = {"L1", "L2", "L3", "L4", "L5", "L6", "L7", "L8", "L9", "L10", "L11"};
  size_t sizes[11];
  for (int k = 0; k < 11; k++) sizes[k] = 6;
  make_csv(csv, "x", lots, sizes, 11, 4);
  sp_table *t = NULL;
  sp_fit_grouped g;
  fit_csv(csv, "x", "lot", &t, &g);
  sp_fitplot_plan plan;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_int_eq(sp_fitplot_plan_from_fit(&g, "x", "mm", "lot", &plan, &e), SP_OK);
  sp_plot_options po;
  chart_opts(&po, dir);
  po.gnuplot = "";
  sp_fitplot_charts ch;
  ck_assert_msg(sp_fitplot_draw(&plan, t, &po, &ch, &e) == SP_OK, "%s", e.msg);
  ck_assert_uint_eq(ch.ncharts, 3 * 12 + 2);
  ck_assert_str_eq(ch.charts[36].stem, "fit_x_lots1");
  ck_assert_str_eq(ch.charts[37].stem, "fit_x_lots2");
  ck_assert_str_eq(ch.charts[37].subject, "lots 9-11 of 11");
  char p[PATH_MAX];
  snprintf(p, sizeof p, "%s/fit_x_lots2.gp", dir);
  char *gp = slurp(p);
  ASSERT_HAS(gp, "nlots = 3");
  ASSERT_HAS(gp, "'L11 (n = 6)'");
  free(gp);
  sp_fitplot_charts_free(&ch);
  sp_fitplot_plan_clear(&plan);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  rm_tree(dir);
}
END_TEST

START_TEST(test_hostile_names)
{
  unlink(PWNED);
  unlink(PWNED2);
  char dir[64], csv[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/x.csv", dir);
  const char *lots[2] = {"$(touch " PWNED2 ")", "system('touch " PWNED2 "')"};
  const size_t sizes[2] = {15, 15};
  make_csv(csv, "`touch " PWNED "`", lots, sizes, 2, 21);
  sp_table *t = NULL;
  sp_fit_grouped g;
  fit_csv(csv, "`touch " PWNED "`", "lot", &t, &g);
  sp_fitplot_plan plan;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_int_eq(
      sp_fitplot_plan_from_fit(&g, "`touch " PWNED "`", "mm", "lot", &plan, &e), SP_OK);
  sp_plot_options po;
  chart_opts(&po, dir);
  sp_fitplot_charts ch;
  ck_assert_msg(sp_fitplot_draw(&plan, t, &po, &ch, &e) == SP_OK, "%s", e.msg);
  ck_assert_uint_eq(ch.nrendered, 10); /* gnuplot ran every script */
  ck_assert_msg(!exists(PWNED), "%s was created: a column name ran as a command", PWNED);
  ck_assert_msg(!exists(PWNED2), "%s was created: a lot id ran as a command", PWNED2);
  /* Every file name in the folder is plain. */
  DIR *d = opendir(dir);
  struct dirent *de;
  while ((de = readdir(d)) != NULL) {
    if (de->d_name[0] == '.') continue;
    ck_assert_msg(strspn(de->d_name, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ"
                                     "0123456789_-.") == strlen(de->d_name),
                  "unsafe file name '%s'", de->d_name);
  }
  closedir(d);
  ck_assert_str_eq(ch.charts[0].stem, "fit_touch_tmp_sp_pwned_lot_touch_tmp_sp_pwned2_hist");
  /* The label is shown, neutralised (plot.h's filter). */
  char p[PATH_MAX];
  snprintf(p, sizeof p, "%s/fit_touch_tmp_sp_pwned_lots.gp", dir);
  char *gp = slurp(p);
  ASSERT_HAS(gp, "'?touch /tmp/sp_pwned? [mm]'");
  ASSERT_HAS(gp, "system?");
  free(gp);
  sp_fitplot_charts_free(&ch);
  sp_fitplot_plan_clear(&plan);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  rm_tree(dir);
}
END_TEST

/* ---- drawing from a record ----------------------------------------------------- */

/* Writes the fit record of g (made from the table t) to rec. */
static void write_record(const char *rec, const sp_table *t, const char *column, const char *by,
                         const sp_fit_grouped *g)
{
  const sp_column *c = sp_table_column(t, column);
  sp_record_fit_source src = {t->path, t->size, t->sha256, t->meta, t->nmeta, c->name,
                              c->unit_text, by, g->pooled_missing, 0};
  char *text = NULL;
  sp_error e;
  sp_error_clear(&e);
  sp_status st = by ? sp_record_fit_grouped_dumps(g, &src, &text, &e)
                    : sp_record_fit_dumps(&g->pooled, &src, &text, &e);
  ck_assert_msg(st == SP_OK, "%s", e.msg);
  ck_assert_msg(sp_record_write_text(rec, text, 1, &e) == SP_OK, "%s", e.msg);
  free(text);
}

START_TEST(test_redraw_from_record)
{
  unsetenv("SCATTERPROP_PLOTS");
  char dir[64], csv[DIR_MAX], rec[DIR_MAX], d1[DIR_MAX], d2[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/thick.csv", dir);
  snprintf(rec, sizeof rec, "%s/fit.json", dir);
  snprintf(d1, sizeof d1, "%s/from_fit", dir);
  snprintf(d2, sizeof d2, "%s/from_record", dir);
  make_csv(csv, "thickness", three_lots, three_sizes, 3, 12);
  sp_table *t = NULL;
  sp_fit_grouped g;
  fit_csv(csv, "thickness", "lot", &t, &g);
  write_record(rec, t, "thickness", "lot", &g);

  /* The plan read back equals the plan from the fit, curve for curve. */
  sp_fitplot_plan pf, pr;
  sp_record_fit rf;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_int_eq(sp_fitplot_plan_from_fit(&g, "thickness", "mm", "lot", &pf, &e), SP_OK);
  ck_assert_msg(sp_fitplot_plan_read(rec, &pr, &rf, &e) == SP_OK, "%s", e.msg);
  ck_assert_str_eq(pr.column, "thickness");
  ck_assert_str_eq(pr.unit, "mm");
  ck_assert_str_eq(pr.group_column, "lot");
  ck_assert_str_eq(rf.sha256, t->sha256);
  ck_assert_uint_eq(pr.nlots, 3);
  for (size_t k = 0; k <= 3; k++) {
    const sp_fitplot_fit *a = k < 3 ? &pf.lots[k].fit : &pf.pooled;
    const sp_fitplot_fit *b = k < 3 ? &pr.lots[k].fit : &pr.pooled;
    if (k < 3) ck_assert_str_eq(pr.lots[k].label, three_lots[k]);
    ck_assert_uint_eq(a->n, b->n);
    ck_assert_uint_eq(a->ncurves, b->ncurves);
    for (size_t i = 0; i < a->ncurves; i++) {
      ck_assert_ptr_eq(a->curves[i].family, b->curves[i].family);
      ck_assert_uint_eq(a->curves[i].rank, b->curves[i].rank);
      ck_assert_int_eq(a->curves[i].chosen, b->curves[i].chosen);
      for (size_t q = 0; q < a->curves[i].family->nparam; q++)
        ck_assert(a->curves[i].theta[q] == b->curves[i].theta[q]);
    }
  }
  sp_record_fit_clear(&rf);
  sp_fitplot_plan_clear(&pr);

  /* Charts from the fit and from the record alone: the same bytes. */
  sp_plot_options po;
  chart_opts(&po, d1);
  po.gnuplot = "";
  sp_fitplot_charts c1, c2;
  ck_assert_msg(sp_fitplot_draw(&pf, t, &po, &c1, &e) == SP_OK, "%s", e.msg);
  po.outdir = d2;
  ck_assert_msg(sp_fitplot_redraw(rec, NULL, &po, &c2, &e) == SP_OK, "%s", e.msg);
  ck_assert_uint_eq(c1.ncharts, c2.ncharts);
  ck_assert_uint_eq(c2.ndrawn, 13);
  for (size_t i = 0; i < c1.ncharts; i++) {
    ck_assert_str_eq(c1.charts[i].stem, c2.charts[i].stem);
    ck_assert_msg(files_equal(c1.charts[i].out.data, c2.charts[i].out.data), "%s differs",
                  c2.charts[i].out.data);
    ck_assert_msg(files_equal(c1.charts[i].out.script, c2.charts[i].out.script), "%s differs",
                  c2.charts[i].out.script);
  }
  sp_fitplot_charts_free(&c1);
  sp_fitplot_charts_free(&c2);

  /* A relative data path is also looked for beside the record. */
  char cwd[PATH_MAX];
  ck_assert_ptr_nonnull(getcwd(cwd, sizeof cwd));
  ck_assert_int_eq(chdir(dir), 0);
  sp_table *tr = NULL;
  sp_ingest_options io;
  sp_ingest_options_init(&io);
  ck_assert_int_eq(sp_table_read("thick.csv", &io, &tr, &e), SP_OK);
  char rel[DIR_MAX];
  snprintf(rel, sizeof rel, "%s/rel.json", dir);
  write_record(rel, tr, "thickness", "lot", &g);
  sp_table_free(tr);
  ck_assert_int_eq(chdir("/"), 0);
  po.outdir = d2;
  po.overwrite = 1;
  ck_assert_msg(sp_fitplot_redraw(rel, NULL, &po, &c2, &e) == SP_OK, "%s", e.msg);
  sp_fitplot_charts_free(&c2);
  ck_assert_int_eq(chdir(cwd), 0);

  /* One byte of the data file changed: refused with both hashes. */
  char *text = slurp(csv);
  char *last = strrchr(text, '\n');
  while (last > text && !(last[0] >= '0' && last[0] <= '9')) last--;
  *last = (char)(*last == '9' ? '0' : *last + 1);
  write_file(csv, text);
  free(text);
  char hex[SP_SHA256_HEX_LEN];
  ck_assert_int_eq(sp_sha256_file(csv, hex, NULL, &e), SP_OK);
  ck_assert_str_ne(hex, t->sha256);
  char d3[DIR_MAX];
  snprintf(d3, sizeof d3, "%s/tampered", dir);
  po.outdir = d3;
  sp_error_clear(&e);
  ck_assert_int_eq(sp_fitplot_redraw(rec, NULL, &po, &c2, &e), SP_EDATA);
  ASSERT_HAS(e.msg, "SHA-256");
  ASSERT_HAS(e.msg, hex);
  ASSERT_HAS(e.msg, t->sha256);
  ASSERT_HAS(e.msg, csv);
  ck_assert_uint_eq(c2.ndrawn, 0);
  ck_assert(!exists(d3));
  sp_fitplot_charts_free(&c2);

  sp_fitplot_plan_clear(&pf);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  rm_tree(dir);
}
END_TEST

START_TEST(test_record_errors)
{
  char dir[64], csv[DIR_MAX], rec[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/x.csv", dir);
  snprintf(rec, sizeof rec, "%s/fit.json", dir);
  const char *lots[2] = {"P", "Q"};
  const size_t sizes[2] = {20, 20};
  make_csv(csv, "x", lots, sizes, 2, 8);
  sp_table *t = NULL;
  sp_fit_grouped g;
  fit_csv(csv, "x", "lot", &t, &g);
  write_record(rec, t, "x", "lot", &g);
  char *good = slurp(rec);
  sp_fitplot_plan plan;
  sp_error e;
  sp_error_clear(&e);

  /* Missing record. */
  ck_assert_int_eq(sp_fitplot_plan_read("/nonexistent/fit.json", &plan, NULL, &e), SP_EIO);
  ASSERT_HAS(e.msg, "/nonexistent/fit.json");

  /* A rank that is not an integer (a field only this module reads). */
  char *bad = replace_value(good, NULL, "\"rank\": ", "\"x\"");
  ck_assert_int_eq(sp_fitplot_plan_parse("bad.json", bad, strlen(bad), &plan, NULL, &e),
                   SP_EDATA);
  ASSERT_HAS(e.msg, "fit record: field 'candidates[");
  ASSERT_HAS(e.msg, "].rank' must be null or an integer");
  {
    /* at the bad value: its line and column, counted here */
    const char *v = strstr(bad, "\"rank\": \"x\"") + strlen("\"rank\": ");
    long line = 1, col = 1;
    for (const char *q = bad; q < v; q++) {
      if (*q == '\n') {
        line++;
        col = 1;
      } else if (((unsigned char)*q & 0xC0) != 0x80) {
        col++; /* characters, not bytes */
      }
    }
    ck_assert_str_eq(e.file, "bad.json");
    ck_assert_int_eq(e.line, line);
    ck_assert_int_eq(e.col, col);
  }
  free(bad);

  /* A lot's n that is negative. */
  bad = replace_value(good, "\"value\": \"P\"", "\"n\": ", "-20");
  ck_assert_int_eq(sp_fitplot_plan_parse("bad.json", bad, strlen(bad), &plan, NULL, &e),
                   SP_EDATA);
  ASSERT_HAS(e.msg, "field 'by.groups[0].n' must be a non-negative integer");
  free(bad);

  /* A field the record reader checks: its message passes through. */
  bad = strdup(good);
  char *r = strstr(bad, "\"sha256\": \"");
  ck_assert_ptr_nonnull(r);
  r[11] = 'G';
  ck_assert_int_eq(sp_fitplot_plan_parse("bad.json", bad, strlen(bad), &plan, NULL, &e),
                   SP_EDATA);
  ASSERT_HAS(e.msg, "field 'data.sha256'");
  free(bad);

  /* A data file that has gone: SP_EIO naming both places tried. */
  char moved[DIR_MAX];
  snprintf(moved, sizeof moved, "%s/moved", dir);
  ck_assert_int_eq(mkdir(moved, 0700), 0);
  snprintf(moved, sizeof moved, "%s/moved/x.csv", dir);
  ck_assert_int_eq(rename(csv, moved), 0);
  sp_plot_options po;
  chart_opts(&po, dir);
  po.gnuplot = "";
  sp_fitplot_charts ch;
  ck_assert_int_eq(sp_fitplot_redraw(rec, NULL, &po, &ch, &e), SP_EIO);
  ASSERT_HAS(e.msg, csv);
  ASSERT_HAS(e.hint, "--data");
  sp_fitplot_charts_free(&ch);
  /* Given explicitly, the moved file is accepted (same SHA-256). */
  sp_error_clear(&e);
  ck_assert_msg(sp_fitplot_redraw(rec, moved, &po, &ch, &e) == SP_OK,
                "%s", e.msg);
  ck_assert_uint_eq(ch.ndrawn, 10);
  sp_fitplot_charts_free(&ch);

  free(good);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  rm_tree(dir);
}
END_TEST

/* ---- the commands ------------------------------------------------------------- */

/* The folder the commands run in, where their output is captured. */
static char cli_dir[] = "/tmp/sp_fitplot_cli_XXXXXX";

static void cli_setup(void)
{
  test_dir_make(cli_dir);
  /* The source tree's templates, wherever the build folder is. */
  setenv("SCATTERPROP_PLOTS", PLOTS_DIR, 1);
}

static void cli_teardown(void)
{
  test_dir_remove(cli_dir);
}

/* The program with no gnuplot on the PATH (it is run by its full path):
 * sh(NOGP " plot ..."). */
#define NOGP "PATH=/nonexistent " SP

static const char *const two_lots[] = {"K1", "K2"};
static const size_t two_sizes[] = {30, 25};

START_TEST(test_cli_fit_plots_and_plot)
{
  char dir[64], csv[DIR_MAX], rec[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/w.csv", dir);
  snprintf(rec, sizeof rec, "%s/fit.json", dir);
  make_csv(csv, "wire_d", two_lots, two_sizes, 2, 31);
  ck_assert_int_eq(cli("fit '%s' --column wire_d --by lot --families normal,lognormal,"
                       "weibull --pvalues approximation --out '%s' --plots '%s/a'",
                       csv, rec, dir),
                   0);
  ASSERT_HAS(out_text, "fit record written to");
  char want[PATH_MAX];
  snprintf(want, sizeof want, "charts in %s/a: 10 drawn (.png .svg .gp .dat each)", dir);
  ASSERT_HAS(out_text, want);
  ASSERT_HAS(out_text, "fit_wire_d_lot_K1_hist  histogram, lot K1");
  ASSERT_HAS(out_text, "fit_wire_d_pooled_prob");
  ASSERT_HAS(out_text, "fit_wire_d_lots");
  char a[DIR_MAX];
  snprintf(a, sizeof a, "%s/a", dir);
  assert_chart_files(a, "fit_wire_d_lot_K2_ecdf", 1);
  assert_chart_files(a, "fit_wire_d_lots", 1);
  ck_assert_int_eq(count_entries(a), 40);

  /* The same charts from the record alone (rendering was shown above; the
   * runs below leave gnuplot out, for speed). */
  ck_assert_int_eq(sh(NOGP " plot '%s' --out '%s/b'", rec, dir), 0);
  ASSERT_HAS(out_text, "SHA-256 matches the record");
  snprintf(want, sizeof want, "charts in %s/b: 10 drawn", dir);
  ASSERT_HAS(out_text, want);
  static const char *const stems[] = {"fit_wire_d_lot_K1_hist", "fit_wire_d_lot_K2_prob",
                                      "fit_wire_d_pooled_ecdf", "fit_wire_d_lots"};
  for (int k = 0; k < 4; k++) {
    char p1[PATH_MAX], p2[PATH_MAX];
    snprintf(p1, sizeof p1, "%s/a/%s.dat", dir, stems[k]);
    snprintf(p2, sizeof p2, "%s/b/%s.dat", dir, stems[k]);
    ck_assert_msg(files_equal(p1, p2), "%s and %s differ", p1, p2);
  }
  /* Existing outputs are refused without --force, replaced with it. */
  ck_assert_int_eq(sh(NOGP " plot '%s' --out '%s/b'", rec, dir), 6);
  ASSERT_HAS(err_text, "file exists; refusing to overwrite it");
  ASSERT_HAS(err_text, "--force");
  ck_assert_int_eq(sh(NOGP " plot '%s' --out '%s/b' --force", rec, dir), 0);
  ck_assert_int_eq(
      sh(NOGP " fit '%s' --column wire_d --by lot --pvalues none --plots '%s/a'", csv, dir), 6);
  ASSERT_HAS(err_text, "file exists");

  /* Without gnuplot: scripts and data, and one hint line. */
  ck_assert_int_eq(sh(NOGP " plot '%s' --out '%s/c'", rec, dir), 0);
  ASSERT_HAS(out_text, "(.gp .dat each, not rendered)");
  ASSERT_HAS(out_text, "hint: gnuplot not found; to render the chart: cd ");
  ASSERT_HAS(out_text, "(and likewise for the other 9 scripts)");
  snprintf(a, sizeof a, "%s/c", dir);
  assert_chart_files(a, "fit_wire_d_pooled_hist", 0);

  /* --json keeps stdout for the record; the chart list goes to stderr. */
  ck_assert_int_eq(
      sh(NOGP " fit '%s' --column wire_d --pvalues none --json --plots '%s/d'", csv, dir), 0);
  ck_assert_int_eq(out_text[0], '{');
  ASSERT_HAS(err_text, "fit_wire_d_hist");
  rm_tree(dir);
}
END_TEST

START_TEST(test_cli_plot_errors)
{
  char dir[64], csv[DIR_MAX], rec[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/w.csv", dir);
  snprintf(rec, sizeof rec, "%s/fit.json", dir);
  make_csv(csv, "wire_d", two_lots, two_sizes, 2, 32);
  ck_assert_int_eq(cli("fit '%s' --column wire_d --pvalues none --out '%s'", csv, rec), 0);

  ck_assert_int_eq(cli("plot"), 2);
  ASSERT_HAS(err_text, "no fit or run record given");
  ck_assert_int_eq(cli("plot '%s' --bogus", rec), 2);
  ASSERT_HAS(err_text, "unknown option '--bogus'");
  ck_assert_int_eq(cli("plot --help"), 0);
  ASSERT_HAS(out_text, "Usage: scatterprop plot FIT.json");
  ASSERT_HAS(out_text, "CAUTION");
  ck_assert_int_eq(cli("--help"), 0);
  ASSERT_HAS(out_text, "plot ");
  ck_assert_int_eq(cli("fit --help"), 0);
  ASSERT_HAS(out_text, "--plots DIR");

  /* Missing record: I/O error, exit 6. */
  ck_assert_int_eq(cli("plot '%s/none.json' --out '%s/x'", dir, dir), 6);
  ASSERT_HAS(err_text, ": cannot open: ");

  /* A bad field: bad data, exit 3, the field named. */
  char *text = slurp(rec);
  char *bad = replace_value(text, NULL, "\"rejected\": ", "\"no\"");
  char badrec[DIR_MAX];
  snprintf(badrec, sizeof badrec, "%s/bad.json", dir);
  write_file(badrec, bad);
  ck_assert_int_eq(cli("plot '%s' --out '%s/x'", badrec, dir), 3);
  {
    /* FILE:LINE:COL of the bad value, counted here */
    const char *v = strstr(bad, "\"rejected\": \"no\"") + strlen("\"rejected\": ");
    long line = 1, col = 1;
    for (const char *q = bad; q < v; q++) {
      if (*q == '\n') {
        line++;
        col = 1;
      } else if (((unsigned char)*q & 0xC0) != 0x80) {
        col++; /* characters, not bytes */
      }
    }
    char want[DIR_MAX + 128];
    snprintf(want, sizeof want,
             "%s:%ld:%ld: fit record: field 'candidates[0].rejected' must be true or false",
             badrec, line, col);
    ASSERT_HAS(err_text, want);
  }
  free(bad);

  bad = replace_value(text, NULL, "\"rank\": ", "0"); /* rank 0: out of range */
  write_file(badrec, bad);
  free(bad);
  free(text);
  ck_assert_int_eq(cli("plot '%s' --out '%s/x'", badrec, dir), 3);
  ASSERT_HAS(err_text, "].rank' must be null or an integer from 1 to");

  /* Tampered data: exit 3 with both hashes and the file named. */
  text = slurp(csv);
  char *p = strstr(text, "\"K1\",1");
  ck_assert_ptr_nonnull(p);
  p[6] = p[6] == '9' ? '8' : '9';
  write_file(csv, text);
  free(text);
  ck_assert_int_eq(cli("plot '%s' --out '%s/x'", rec, dir), 3);
  ASSERT_HAS(err_text, "SHA-256");
  ASSERT_HAS(err_text, csv);
  ASSERT_HAS(err_text, "the file is not the one fitted");
  snprintf(badrec, sizeof badrec, "%s/x", dir);
  ck_assert(!exists(badrec));

  /* A chart folder that cannot be used is found before the fit: exit 6,
   * and no fit record is written. */
  char rec2[DIR_MAX], file[DIR_MAX];
  snprintf(rec2, sizeof rec2, "%s/fit2.json", dir);
  snprintf(file, sizeof file, "%s/afile", dir);
  write_file(file, "x\n");
  ck_assert_int_eq(
      cli("fit '%s' --column wire_d --pvalues none --out '%s' --plots '%s/sub'", rec, rec2, file),
      6);
  ASSERT_HAS(err_text, "afile/sub: cannot create the chart folder");
  ASSERT_HAS(err_text, "is not a folder");
  ck_assert(!exists(rec2));
  ck_assert_int_eq(
      cli("fit '%s' --column wire_d --pvalues none --out '%s' --plots '%s'", rec, rec2, file), 6);
  ASSERT_HAS(err_text, "afile: not a folder");
  ck_assert(!exists(rec2));
  /* Charts in the way: found before the record is written. */
  char charts[DIR_MAX], chart[DIR_MAX + 32];
  snprintf(charts, sizeof charts, "%s/charts", dir);
  ck_assert_int_eq(mkdir(charts, 0755), 0);
  snprintf(chart, sizeof chart, "%s/fit_wire_d_ecdf.svg", charts);
  write_file(chart, "x\n");
  ck_assert_int_eq(
      cli("fit '%s' --column wire_d --pvalues none --out '%s' --plots '%s'", csv, rec2, charts), 6);
  ASSERT_HAS(err_text, "fit_wire_d_ecdf.svg: file exists");
  ck_assert(!exists(rec2));
  snprintf(chart, sizeof chart, "%s/fit_wire_d_hist.dat", charts);
  ck_assert(!exists(chart));
  /* An existing record: refused before the fit (with --force replaced). */
  write_file(rec2, "mine\n");
  ck_assert_int_eq(cli("fit '%s' --column wire_d --pvalues none --out '%s'", csv, rec2), 6);
  ASSERT_HAS(err_text, "fit2.json: file exists; refusing to overwrite it");
  ASSERT_LACKS(out_text, "rank");
  char *mine = slurp(rec2);
  ck_assert_str_eq(mine, "mine\n");
  free(mine);
  rm_tree(dir);
}
END_TEST

START_TEST(test_cli_templates_beside_build)
{
  /* Without SCATTERPROP_PLOTS the program looks in <its folder>/../plots:
   * found when the build folder sits directly in the source tree, else
   * the error lists the folders tried. */
  unsetenv("SCATTERPROP_PLOTS");
  char dir[64], csv[DIR_MAX];
  make_tmpdir(dir, sizeof dir);
  snprintf(csv, sizeof csv, "%s/w.csv", dir);
  make_csv(csv, "wire_d", two_lots, two_sizes, 1, 33);
  char bin[DIR_MAX], up[DIR_MAX];
  snprintf(bin, sizeof bin, "%s", SP_CLI_PATH);
  *strrchr(bin, '/') = '\0';
  snprintf(up, sizeof up, "%.200s/..", bin);
  struct stat a, b;
  int beside = stat(up, &a) == 0 && stat(SP_SOURCE_DIR, &b) == 0 && a.st_dev == b.st_dev &&
               a.st_ino == b.st_ino;
  int rc = sh(NOGP " fit '%s' --column wire_d --pvalues none --plots '%s/p'", csv, dir);
  if (beside) {
    ck_assert_msg(rc == 0, "exit %d: %s", rc, err_text);
    ASSERT_HAS(out_text, "charts in");
  } else {
    ck_assert_int_eq(rc, 6);
    ASSERT_HAS(err_text, "gnuplot templates not found");
    ASSERT_HAS(err_text, "/../plots");
  }
  rm_tree(dir);
}
END_TEST

static Suite *fitplot_suite(void)
{
  Suite *s = suite_create("fitplot");
  TCase *tc = tcase_create("library");
  tcase_add_test(tc, test_stems);
  tcase_add_test(tc, test_pick_order);
  tcase_add_test(tc, test_draw_all_charts);
  tcase_add_test(tc, test_without_gnuplot);
  tcase_add_test(tc, test_small_lots_and_clashing_stems);
  tcase_add_test(tc, test_many_lots_paged);
  tcase_add_test(tc, test_hostile_names);
  tcase_add_test(tc, test_redraw_from_record);
  tcase_add_test(tc, test_record_errors);
  suite_add_tcase(s, tc);
  TCase *tcli = tcase_create("cli");
  tcase_add_checked_fixture(tcli, cli_setup, cli_teardown);
  tcase_add_test(tcli, test_cli_fit_plots_and_plot);
  tcase_add_test(tcli, test_cli_plot_errors);
  tcase_add_test(tcli, test_cli_templates_beside_build);
  suite_add_tcase(s, tcli);
  return s;
}

int main(void) { return sp_run_suite(fitplot_suite()); }
