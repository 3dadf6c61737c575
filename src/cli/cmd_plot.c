/* scatterprop plot: redraw the charts of a fit from its fit record alone
 * (the data file named in the record is read again and must still have the
 * recorded SHA-256).  Also the chart helpers that `fit --plots` shares. */
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "scatterprop/fitplot.h"

void cli_plot_help(FILE *out)
{
  fprintf(out,
          "Usage: scatterprop plot FIT.json [--out DIR] [--data FILE.csv] [--force]\n"
          "\n"
          "Redraws every chart of a fit from its fit record (written by 'scatterprop fit\n"
          "--out FIT.json'): for the column, and with lots for each lot and for all lots\n"
          "pooled, a histogram with the densities of the chosen family and the two best\n"
          "candidates not rejected, a probability plot of the chosen family with its\n"
          "reference line and 95%% pointwise band, and the empirical CDF with the fitted\n"
          "CDFs; with lots, the lots' empirical CDFs side by side.  The charts are the\n"
          "same as those of 'scatterprop fit --plots DIR'.\n"
          "\n"
          "The data file named in the record is read again (a relative name is also\n"
          "looked for beside the record); its SHA-256 must equal the record's.\n"
          "\n"
          "Each chart leaves STEM.dat and STEM.gp, and with gnuplot on the PATH STEM.png\n"
          "and STEM.svg; without gnuplot the scripts are written and a line tells how to\n"
          "render them.  Templates are looked for in $SCATTERPROP_PLOTS, beside the\n"
          "program in ../share/scatterprop/plots, then in ../plots (a build folder inside\n"
          "the source tree).\n"
          "\n"
          "Options:\n"
          "  --out DIR        folder for the charts (default: the current folder; made\n"
          "                   if missing)\n"
          "  --data FILE.csv  the data file, when it has moved since the fit\n"
          "  --force          replace existing chart files (otherwise nothing is drawn\n"
          "                   when one exists)\n"
          "  --help           show this help\n"
          "\n"
          "Exit codes: 0 ok, 2 usage, 3 bad record or data file (a SHA-256 that differs\n"
          "from the record's), 5 numerical failure, 6 I/O error (a missing record or\n"
          "data file, existing charts, gnuplot failing).\n"
          "\n");
  cli_print_caution(out);
}

void cli_plot_options(sp_plot_options *o, const char *dir, int force, char *tdir, size_t n)
{
  sp_plot_options_init(o);
  o->outdir = dir;
  o->overwrite = force;
  /* Last place for the templates: <folder of the program>/../plots, the
   * source tree's plots/ when the program was built in a folder directly
   * inside the source tree (build/scatterprop, as `make` does). */
  tdir[0] = '\0';
  char exe[SP_PLOT_PATH_MAX];
  ssize_t got = readlink("/proc/self/exe", exe, sizeof exe - 1);
  if (got > 0) {
    exe[got] = '\0';
    char *slash = strrchr(exe, '/');
    if (slash) {
      *slash = '\0';
      if (snprintf(tdir, n, "%s/../plots", exe) >= (int)n) tdir[0] = '\0';
    }
  }
  o->template_dir = tdir[0] ? tdir : NULL;
}

void cli_plot_print(FILE *out, const sp_fitplot_charts *c, const char *dir)
{
  size_t w = 0;
  for (size_t i = 0; i < c->ncharts; i++) {
    size_t len = strlen(c->charts[i].stem);
    if (len > w) w = len;
  }
  fprintf(out, "charts in %s: %zu drawn", dir, c->ndrawn);
  if (c->ndrawn) {
    if (c->nrendered == c->ndrawn) fprintf(out, " (.png .svg .gp .dat each)");
    else if (c->nrendered == 0) fprintf(out, " (.gp .dat each, not rendered)");
    else fprintf(out, " (%zu rendered)", c->nrendered);
  }
  fprintf(out, "\n");
  const char *hint = NULL;
  size_t unrendered = 0;
  for (size_t i = 0; i < c->ncharts; i++) {
    const sp_fitplot_chart *ch = &c->charts[i];
    if (ch->drawn) {
      fprintf(out, "  %-*s  %s, %s\n", (int)w, ch->stem, sp_fitplot_kind_name(ch->kind),
              ch->subject);
      if (!ch->out.rendered) {
        if (!hint) hint = ch->out.hint;
        unrendered++;
      }
    } else {
      fprintf(out, "  %-*s  %s, %s: not drawn: %s\n", (int)w, ch->stem,
              sp_fitplot_kind_name(ch->kind), ch->subject, ch->note);
    }
  }
  if (hint && hint[0]) {
    if (unrendered > 1)
      fprintf(out, "hint: %s (and likewise for the other %zu scripts)\n", hint, unrendered - 1);
    else
      fprintf(out, "hint: %s\n", hint);
  }
}

int cli_plot_run(int argc, char **argv)
{
  const char *record = NULL, *outdir = ".", *data = NULL;
  int force = 0, rc = CLI_OK;
  for (int i = 1; i < argc && rc == CLI_OK; i++) {
    const char *v;
    int m;
    if ((m = cli_opt_value("plot", argc, argv, &i, "--out", &v, &rc)) != 0) {
      if (m > 0) outdir = v;
    } else if ((m = cli_opt_value("plot", argc, argv, &i, "--data", &v, &rc)) != 0) {
      if (m > 0) data = v;
    } else if (cli_opt_flag(argv, i, "--force")) {
      force = 1;
    } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
      rc = cli_usage("plot", "unknown option '%s'", argv[i]);
    } else if (!record) {
      record = argv[i];
    } else {
      rc = cli_usage("plot", "one fit record at a time (got '%s' and '%s')", record, argv[i]);
    }
  }
  if (rc == CLI_OK && !record) rc = cli_usage("plot", "no fit record given");
  if (rc == CLI_OK && !*outdir) rc = cli_usage("plot", "--out: empty folder name");
  if (rc != CLI_OK) return rc;

  sp_plot_options po;
  char tdir[SP_PLOT_PATH_MAX];
  cli_plot_options(&po, outdir, force, tdir, sizeof tdir);
  sp_fitplot_charts charts;
  sp_error err;
  sp_error_clear(&err);
  sp_status st = sp_fitplot_redraw(record, data, &po, &charts, &err);
  if (st != SP_OK) {
    rc = cli_report(&err);
    if (charts.ndrawn) cli_plot_print(stderr, &charts, outdir);
  } else {
    printf("%s: charts redrawn; the data file's SHA-256 matches the record\n", record);
    cli_plot_print(stdout, &charts, outdir);
  }
  sp_fitplot_charts_free(&charts);
  return rc;
}
