/* scatterprop plot: redraw the charts of a fit from its fit record alone
 * (the data file named in the record is read again and must still have the
 * recorded SHA-256), or those of a run from its run record (the run is
 * repeated and must reproduce the record).  Also the chart helpers that
 * `fit --plots` and `propagate --plots` share. */
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "scatterprop/fitplot.h"
#include "scatterprop/reportgen.h"
#include "scatterprop/runplot.h"

void cli_plot_help(FILE *out)
{
  fprintf(out, "Usage: scatterprop plot FIT.json [--out DIR] [--data FILE.csv] [--force]\n"
               "       scatterprop plot RUN.json [--out DIR] [--threads K] [--force]\n"
               "\n"
               "Redraws the charts of a fit or of a run from its record alone.\n"
               "\n"
               "A fit record (written by 'scatterprop fit --out FIT.json'): for the column, and\n"
               "with lots for each lot and for all lots pooled, a histogram with the densities\n"
               "of the chosen family and the two best candidates not rejected, a probability\n"
               "plot of the chosen family with its reference line and 95%% pointwise band, and\n"
               "the empirical CDF with the fitted CDFs; with lots, the lots' empirical CDFs side\n"
               "by side.  The data file named in the record is read again (a relative name is\n"
               "also looked for beside the record); its SHA-256 must equal the record's.\n"
               "\n"
               "A run record (the run.json of 'scatterprop propagate --out DIR'): per output,\n"
               "the histogram with the coverage interval and the limits, the exceedance curve\n"
               "on a log axis, the sensitivity bars, the convergence of the mean and of the\n"
               "interval ends, and a scatter against the most influential input.  The record\n"
               "holds statistics, not samples, so the run is repeated from it (the model, fit\n"
               "records and data files must still have their recorded SHA-256; the recorded\n"
               "seed and options are used) and must reproduce every recorded figure; nothing\n"
               "is drawn otherwise (exit 1).\n"
               "\n"
               "The charts are the same as those of 'fit --plots DIR' and 'propagate --plots\n"
               "DIR'.  Each chart leaves STEM.dat and STEM.gp, and with gnuplot on the PATH\n"
               "STEM.png and STEM.svg; without gnuplot the scripts are written and a line\n"
               "tells how to render them.  Templates are looked for in $SCATTERPROP_PLOTS,\n"
               "beside the program in ../share/scatterprop/plots, then in ../plots (a build\n"
               "folder inside the source tree).\n"
               "\n"
               "Options:\n"
               "  --out DIR        folder for the charts (default: the current folder; made\n"
               "                   if missing)\n"
               "  --data FILE.csv  fit records only: the data file, when it has moved since\n"
               "                   the fit\n"
               "  --threads K      run records only: threads of the repeated run (default: all\n"
               "                   cores; the results do not depend on it)\n"
               "  --force          replace existing chart files (otherwise nothing is drawn\n"
               "                   when one exists)\n"
               "  --help           show this help\n"
               "\n"
               "Exit codes: 0 ok, 1 the repeated run does not reproduce the run record, 2\n"
               "usage, 3 bad record or changed input (a SHA-256 that differs from the\n"
               "record's), 4 the run's model no longer compiles, 5 numerical failure or out\n"
               "of memory, 6 I/O error (a missing record or input file, existing charts, a\n"
               "folder that cannot be written, gnuplot failing).\n"
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

void cli_runplot_print(FILE *out, const sp_runplot_set *set, const char *dir)
{
  fprintf(out, "\ncharts: %zu drawn into %s/ (%zu rendered to PNG and SVG)\n", set->ndrawn, dir,
          set->nrendered);
  const char *hint = NULL;
  size_t unrendered = 0;
  for (size_t k = 0; k < set->ncharts; k++) {
    const sp_runplot_chart *c = &set->charts[k];
    if (c->drawn && !c->out.rendered) {
      if (!hint) hint = c->note;
      unrendered++;
    } else if (!c->drawn && c->kind != SP_RUNPLOT_SOBOL) {
      fprintf(out, "  %s\n", c->note);
    }
  }
  /* One line says how to render them all, as for a fit's charts. */
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
  int force = 0, threads = 0, rc = CLI_OK;
  for (int i = 1; i < argc && rc == CLI_OK; i++) {
    const char *v;
    int m;
    unsigned long long u;
    if ((m = cli_opt_value("plot", argc, argv, &i, "--out", &v, &rc)) != 0) {
      if (m > 0) outdir = v;
    } else if ((m = cli_opt_value("plot", argc, argv, &i, "--data", &v, &rc)) != 0) {
      if (m > 0) data = v;
    } else if ((m = cli_opt_value("plot", argc, argv, &i, "--threads", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("plot", "--threads", v, &u, &rc)) {
        if (u < 1 || u > 1024)
          rc = cli_usage("plot", "--threads takes 1 to 1024");
        else
          threads = (int)u;
      }
    } else if (cli_opt_flag(argv, i, "--force")) {
      force = 1;
    } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
      rc = cli_usage("plot", "unknown option '%s'", argv[i]);
    } else if (!record) {
      record = argv[i];
    } else {
      rc = cli_usage("plot", "one record at a time (got '%s' and '%s')", record, argv[i]);
    }
  }
  if (rc == CLI_OK && !record) rc = cli_usage("plot", "no fit or run record given");
  if (rc == CLI_OK && !*outdir) rc = cli_usage("plot", "--out: empty folder name");
  if (rc != CLI_OK) return rc;

  sp_error err;
  sp_error_clear(&err);
  /* A run record goes to the run's charts; anything else to the fit record
   * reader, whose messages say what is wrong with a file that is not a
   * fit record (a missing file, not JSON, the field that is wrong). */
  sp_reportgen_kind kind;
  if (sp_reportgen_record_kind(record, &kind, &err) != SP_OK) kind = SP_REPORTGEN_UNKNOWN;
  sp_error_clear(&err);
  if (kind == SP_REPORTGEN_FIT && threads)
    return cli_usage("plot", "--threads applies to run records; %s is a fit record", record);
  if (kind == SP_REPORTGEN_RUN && data)
    return cli_usage("plot",
                     "--data applies to fit records; %s is a run record (its fit "
                     "records name their data)",
                     record);

  if (kind == SP_REPORTGEN_RUN) {
    sp_runplot_options po;
    sp_runplot_options_init(&po);
    char tdir[SP_PLOT_PATH_MAX];
    cli_plot_options(&po.plot, outdir, force, tdir, sizeof tdir);
    sp_runplot_set set;
    double tol = 0;
    sp_status st = sp_reportgen_plot_run(record, &po, threads, &set, &tol, &err);
    if (st != SP_OK) {
      rc = cli_report(&err);
    } else {
      if (tol == 0)
        printf("%s: run repeated from the record; every recorded figure reproduced bit for "
               "bit\n",
               record);
      else
        printf("%s: run repeated from the record (made by another build); every recorded "
               "figure reproduced within a relative %g\n",
               record, tol);
      cli_runplot_print(stdout, &set, outdir);
    }
    sp_runplot_set_clear(&set);
    return rc;
  }

  sp_plot_options po;
  char tdir[SP_PLOT_PATH_MAX];
  cli_plot_options(&po, outdir, force, tdir, sizeof tdir);
  sp_fitplot_charts charts;
  sp_status st = sp_fitplot_redraw(record, data, &po, &charts, &err);
  if (st == SP_EDATA && kind == SP_REPORTGEN_UNKNOWN && !err.hint[0])
    sp_error_hint(&err, "give a fit record (written by 'scatterprop fit --out FIT.json') or a "
                        "run record (the run.json of 'scatterprop propagate --out DIR')");
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
