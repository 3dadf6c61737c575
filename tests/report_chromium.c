/* Writes a sample report for the headless-browser check
 * (tests/report_chromium.sh): every chart kind rendered by gnuplot, every
 * block kind, and hostile text from "input files" in a table, a chart
 * label, a lot id, a path and the model text.
 *
 *   report_chromium OUTDIR PLOTS_DIR
 *
 * The numbers are invented for the test (quantiles of the stated
 * distributions, not random draws), so the report is the same on every
 * run.  Exit status 0 on success, 1 with a message on failure. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_randist.h>

#include "scatterprop/plot.h"
#include "scatterprop/report.h"

#define HOSTILE_COLUMN "<script>alert(1)</script>"
#define HOSTILE_LOT "\"><img src=x onerror=alert(1)>"

static double nrm_logpdf(const double *t, double x) { return log(gsl_ran_gaussian_pdf(x - t[0], t[1])); }
static double nrm_P(const double *t, double x) { return gsl_cdf_gaussian_P(x - t[0], t[1]); }
static double nrm_Q(const double *t, double x) { return gsl_cdf_gaussian_Q(x - t[0], t[1]); }
static double nrm_qP(const double *t, double p) { return t[0] + gsl_cdf_gaussian_Pinv(p, t[1]); }
static double nrm_qQ(const double *t, double q) { return t[0] + gsl_cdf_gaussian_Qinv(q, t[1]); }
static const sp_family normal = {
    .name = "normal", .title = "Normal", .nparam = 2, .logpdf = nrm_logpdf, .cdf_P = nrm_P,
    .cdf_Q = nrm_Q, .quantile_P = nrm_qP, .quantile_Q = nrm_qQ};

static double lgn_logpdf(const double *t, double x)
{
  return x <= 0 ? -INFINITY : log(gsl_ran_lognormal_pdf(x, t[0], t[1]));
}
static double lgn_P(const double *t, double x) { return x <= 0 ? 0 : gsl_cdf_lognormal_P(x, t[0], t[1]); }
static double lgn_Q(const double *t, double x) { return x <= 0 ? 1 : gsl_cdf_lognormal_Q(x, t[0], t[1]); }
static double lgn_qP(const double *t, double p) { return gsl_cdf_lognormal_Pinv(p, t[0], t[1]); }
static double lgn_qQ(const double *t, double q) { return gsl_cdf_lognormal_Qinv(q, t[0], t[1]); }
static const sp_family lognormal = {
    .name = "lognormal", .title = "Lognormal", .nparam = 2, .logpdf = lgn_logpdf,
    .cdf_P = lgn_P, .cdf_Q = lgn_Q, .quantile_P = lgn_qP, .quantile_Q = lgn_qQ};

static const char *outdir;
static sp_error err;

static int fail(const char *what)
{
  char buf[2048];
  sp_error_format(&err, buf, sizeof buf);
  fprintf(stderr, "report_chromium: %s: %s\n", what, buf);
  if (err.hint[0]) fprintf(stderr, "report_chromium: hint: %s\n", err.hint);
  return 1;
}

static void options(sp_plot_options *o, const char *stem, const char *plots)
{
  sp_plot_options_init(o);
  o->outdir = outdir;
  o->stem = stem;
  o->template_dir = plots;
  o->overwrite = 1;
}

#define NX 120
#define NY 4000

int main(int argc, char **argv)
{
  gsl_set_error_handler_off();
  if (argc != 3) {
    fprintf(stderr, "usage: report_chromium OUTDIR PLOTS_DIR\n");
    return 2;
  }
  outdir = argv[1];
  const char *plots = argv[2];

  /* Wire diameter, two lots of 60: quantiles of N(2.0005, 0.004) and
   * N(2.0035, 0.004) at (i - 0.5)/60, rounded to 0.0001 mm. */
  static double x[NX];
  for (int i = 0; i < NX; i++) {
    double mu = i < NX / 2 ? 2.0005 : 2.0035;
    double p = ((double)(i % (NX / 2)) + 0.5) / (NX / 2);
    x[i] = round((mu + gsl_cdf_gaussian_Pinv(p, 0.004)) * 1e4) / 1e4;
  }
  sp_plot_curve cands[2] = {{&normal, {2.002, 0.00425}, "normal (AICc -963.1)"},
                            {&lognormal, {log(2.002), 0.00212}, "lognormal (AICc -962.8)"}};
  sp_plot_fit fit = {.title = "wire_d: fitted candidates", .axis = {HOSTILE_COLUMN, "mm"},
                     .x = x, .n = NX, .curves = cands, .ncurves = 2, .resolution = 0.0001,
                     .band_level = 0.95};
  sp_plot_output o_hist, o_prob, o_ecdf, o_lots, o_rhist, o_exc, o_sens, o_conv, o_scat;
  sp_plot_options opt;
  options(&opt, "fit_wire_d_hist", plots);
  if (sp_plot_fit_histogram(&fit, &opt, &o_hist, &err)) return fail("histogram");
  options(&opt, "fit_wire_d_prob", plots);
  if (sp_plot_fit_probability(&fit, &opt, &o_prob, &err)) return fail("probability plot");
  options(&opt, "fit_wire_d_ecdf", plots);
  if (sp_plot_fit_ecdf(&fit, &opt, &o_ecdf, &err)) return fail("ecdf");
  sp_plot_lot lots[2] = {{"L-2611", x, NX / 2}, {HOSTILE_LOT, x + NX / 2, NX / 2}};
  sp_plot_lots lt = {.title = "wire_d by lot", .axis = {"wire_d", "mm"}, .lots = lots,
                     .nlots = 2, .pooled = &cands[0]};
  options(&opt, "fit_wire_d_lots", plots);
  if (sp_plot_fit_lots(&lt, &opt, &o_lots, &err)) return fail("lots");

  /* Shear stress: 560 MPa + 30 MPa x gamma(3) quantiles, shuffled by a
   * stride coprime with NY, and its "input" u for the scatter chart. */
  static double y[NY], u[NY];
  for (int i = 0; i < NY; i++) {
    int j = (i * 1031) % NY;
    double p = ((double)j + 0.5) / NY;
    u[i] = 2.0 + gsl_cdf_gaussian_Pinv(p, 0.004);
    y[i] = 560.0 + 30.0 * gsl_cdf_gamma_Pinv(p, 3.0, 1.0);
  }
  sp_plot_limit lim[1] = {{780.0, "limit 780 MPa"}};
  sp_plot_run_hist rh = {.title = "tau: shear stress at working load",
                            .axis = {"tau", "MPa"}, .samples = y, .n = NY,
                            .coverage = {567.3, 750.4, 0.95}, .limits = lim, .nlimits = 1};
  options(&opt, "run_tau_hist", plots);
  if (sp_plot_run_histogram(&rh, &opt, &o_rhist, &err)) return fail("run histogram");
  sp_plot_exceedance ex = {.title = "tau: exceedance", .axis = {"tau", "MPa"}, .samples = y,
                           .n = NY, .limits = lim, .nlimits = 1};
  options(&opt, "run_tau_exceed", plots);
  if (sp_plot_run_exceedance(&ex, &opt, &o_exc, &err)) return fail("exceedance");
  const char *names[4] = {"wire_d", "Dm", "load", HOSTILE_COLUMN};
  double share[4] = {0.71, 0.18, 0.08, 0.01};
  sp_plot_sensitivity se = {.title = "tau: sensitivity", .measure = "first-order index",
                            .inputs = names, .share = share, .ninputs = 4};
  options(&opt, "run_tau_sens", plots);
  if (sp_plot_run_sensitivity(&se, &opt, &o_sens, &err)) return fail("sensitivity");
  double nn[7] = {1e3, 2e3, 4e3, 8e3, 1.6e4, 3.2e4, 6.4e4};
  double mean[7] = {650.8, 649.6, 650.3, 650.1, 649.9, 650.0, 650.02};
  double mse[7] = {1.64, 1.16, 0.82, 0.58, 0.41, 0.29, 0.205};
  double lo[7] = {568.9, 567.0, 567.6, 567.2, 567.4, 567.3, 567.31};
  double hi[7] = {752.0, 749.1, 751.0, 750.2, 750.6, 750.4, 750.42};
  sp_plot_convergence cv = {.title = "tau: convergence", .axis = {"tau", "MPa"},
                            .nsamples = nn, .mean = mean, .mean_se = mse, .lo = lo, .hi = hi,
                            .level = 0.95, .npoints = 7};
  options(&opt, "run_tau_conv", plots);
  if (sp_plot_run_convergence(&cv, &opt, &o_conv, &err)) return fail("convergence");
  sp_plot_scatter sc = {.title = "tau against wire_d", .xaxis = {"wire_d", "mm"},
                        .yaxis = {"tau", "MPa"}, .x = u, .y = y, .npoints = 2000,
                        .of_total = 64000, .limits = lim, .nlimits = 1};
  options(&opt, "run_tau_scatter", plots);
  if (sp_plot_run_scatter(&sc, &opt, &o_scat, &err)) return fail("scatter");

  /* The report. */
  sp_report_input inputs[3] = {
      {"data", "data/wire_d.csv",
       "3f79bb7b435b05321651daefd374cdc681dc06faa65e374e38337b88ca046dea", 2417},
      {"data", "data/" HOSTILE_COLUMN ".csv",
       "0000000000000000000000000000000000000000000000000000000000000000", 12},
      {"model", "spring.spm",
       "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855", 0}};
  sp_report_fact settings[4] = {{"seed", "20261201"},
                                {"samples", "64000 (16 blocks of 4000)"},
                                {"method", "plain Monte Carlo"},
                                {"coverage", "95 %"}};
  const char *sum_head[6] = {"column", "lot", "n", "mean [mm]", "sd [mm]", "min [mm]"};
  const char *sum_cells[18] = {"wire_d", "L-2611", "60", "2.00050", "0.00398", "1.99370",
                               HOSTILE_COLUMN, HOSTILE_LOT, "60", "2.00350", "0.00398",
                               "1.99670", "wire_d", "(pooled)", "120", "2.00200", "0.00425",
                               "1.99370"};
  sp_report_table sum = {"Wire diameter by lot.", 6, 3, sum_head, sum_cells, "llrrrr"};
  const char *fit_head[5] = {"family", "parameters", "AICc", "A\xC2\xB2", "p (AD)"};
  const char *fit_cells[10] = {"normal", "mu = 2.00200 mm, sigma = 0.00425 mm", "-963.1",
                               "0.31", "0.55", "lognormal", "mu = 0.69415, sigma = 0.00212",
                               "-962.8", "0.33", "0.51"};
  sp_report_table fits = {"Candidates for wire_d, best first.", 5, 2, fit_head, fit_cells,
                          "llrrr"};
  const char *res_head[4] = {"statistic", "value [MPa]", "MC standard error [MPa]", "note"};
  const char *res_cells[16] = {"mean", "650.02", "0.21", "",
                               "2.5 % percentile", "567.31", "0.46", "",
                               "97.5 % percentile", "750.42", "1.1", "",
                               "standard deviation", "46.94", "0.15", ""};
  sp_report_table res = {"tau: results with their Monte Carlo uncertainty.", 4, 4, res_head,
                         res_cells, "lrrl"};
  const char *exc_head[3] = {"event", "probability", "95 % interval"};
  const char *exc_cells[3] = {"tau > 780 MPa", "0.00747", "[0.00687, 0.00811]"};
  sp_report_table exc = {"Probability of exceeding the limit.", 3, 1, exc_head, exc_cells,
                         "lrr"};
  const char *sens_head[2] = {"input", "first-order index"};
  const char *sens_cells[8] = {"wire_d", "0.71", "Dm", "0.18", "load", "0.08", HOSTILE_COLUMN,
                               "0.01"};
  sp_report_table sens = {"Sensitivity of tau.", 2, 4, sens_head, sens_cells, "lr"};

  sp_report_figure f_hist = {o_hist.svg, "Histogram of wire_d with the fitted densities.", NULL};
  sp_report_figure f_prob = {o_prob.svg, "Probability plot against the chosen normal fit.", NULL};
  sp_report_figure f_ecdf = {o_ecdf.svg, "Empirical and fitted distribution functions.", NULL};
  sp_report_figure f_lots = {o_lots.svg, "The two lots side by side.", NULL};
  sp_report_figure f_rhist = {o_rhist.svg, "Histogram of tau.", NULL};
  sp_report_figure f_exc = {o_exc.svg, "Exceedance curve of tau.", NULL};
  sp_report_figure f_sens = {o_sens.svg, "Inputs ranked by share of variance.", NULL};
  sp_report_figure f_conv = {o_conv.svg, "Convergence with the number of samples.", NULL};
  sp_report_figure f_scat = {o_scat.svg, "tau against wire_d (2000 of 64000 samples).", NULL};
  sp_report_figure f_none = {NULL, "A chart that was not rendered.",
                             "gnuplot not found; to render the chart: cd out && gnuplot x.gp"};

  sp_report_block b_data[2] = {
      {.kind = SP_REPORT_PARAGRAPH,
       .text = "Column names come from the input files and are shown as text: " HOSTILE_COLUMN},
      {.kind = SP_REPORT_TABLE, .table = &sum}};
  sp_report_block b_fit[6] = {{.kind = SP_REPORT_TABLE, .table = &fits},
                              {.kind = SP_REPORT_FIGURE, .figure = &f_hist},
                              {.kind = SP_REPORT_FIGURE, .figure = &f_prob},
                              {.kind = SP_REPORT_FIGURE, .figure = &f_ecdf},
                              {.kind = SP_REPORT_FIGURE, .figure = &f_lots},
                              {.kind = SP_REPORT_NOTE,
                               .text = "Lots differ by 0.003 mm in mean; check before pooling."}};
  sp_report_block b_model[1] = {
      {.kind = SP_REPORT_PRE,
       .text = "# spring model (sample text)\ninput d = fit(\"wire_d\")\n"
               "tau = 8 * F * Dm / (pi * d^3)   # " HOSTILE_LOT "\n"}};
  sp_report_fact run_facts[2] = {{"output", "tau [MPa]"}, {"limit", "780 MPa"}};
  sp_report_block b_res[10] = {{.kind = SP_REPORT_FACTS, .facts = run_facts, .nfacts = 2},
                               {.kind = SP_REPORT_TABLE, .table = &res},
                               {.kind = SP_REPORT_FIGURE, .figure = &f_rhist},
                               {.kind = SP_REPORT_FIGURE, .figure = &f_conv},
                               {.kind = SP_REPORT_TABLE, .table = &exc},
                               {.kind = SP_REPORT_FIGURE, .figure = &f_exc},
                               {.kind = SP_REPORT_TABLE, .table = &sens},
                               {.kind = SP_REPORT_FIGURE, .figure = &f_sens},
                               {.kind = SP_REPORT_FIGURE, .figure = &f_scat},
                               {.kind = SP_REPORT_FIGURE, .figure = &f_none}};
  sp_report_section sections[5] = {{"Data", 1, b_data, 2},
                                   {"Fits", 1, NULL, 0},
                                   {"wire_d", 2, b_fit, 6},
                                   {"Model", 1, b_model, 1},
                                   {"Results: tau", 1, b_res, 10}};
  sp_report rep = {.title = "scatterprop report: sample for the browser check",
                   .created = "2026-12-01 12:00 UTC",
                   .command = "scatterprop report --seed 20261201 spring.spm",
                   .inputs = inputs, .ninputs = 3, .settings = settings, .nsettings = 4,
                   .sections = sections, .nsections = 5};
  char path[4096];
  snprintf(path, sizeof path, "%s/report.html", outdir);
  if (sp_report_write_html(&rep, path, 1, &err)) return fail("report");
  printf("%s\n", path);
  return 0;
}
