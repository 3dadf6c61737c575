/* scatterprop propagate: run a model file by Monte Carlo and print the
 * spread of every output, the chance of violating each limit, and which
 * input drives the spread. */
#include <errno.h>
#include <math.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "cli.h"
#include "scatterprop/archive.h"
#include "scatterprop/run.h"
#include "scatterprop/runplot.h"

void cli_propagate_help(FILE *out)
{
  fprintf(out,
          "Usage: scatterprop propagate MODEL.spm [--samples N | --tolerance DIGITS]\n"
          "         [--method mc|lhs|sobol] [--seed S] [--threads K] [--out DIR] [--force]\n"
          "         [--json] [--keep-samples] [--sobol N] [--percentiles LIST]\n"
          "         [--coverage P] [--bins N] [--plots DIR] [--dump-bytecode]\n"
          "         [--archive DIR]\n"
          "\n"
          "Propagates the model's inputs (fitted records or stated distributions) through\n"
          "its formulas, and prints for every output: mean with its Monte Carlo standard\n"
          "error, standard deviation, percentiles, the probabilistically symmetric and the\n"
          "shortest coverage intervals (JCGM 101:2008, 7.7), the probability of violating\n"
          "each limit with a 95%% interval, and each input's share of the spread.\n"
          "\n"
          "Options:\n"
          "  --samples N        Monte Carlo trials, as 250000 or 2.5e5 (default 1e6)\n"
          "  --tolerance DIGITS adaptive: batches until the mean, standard uncertainty and\n"
          "                     interval ends are stable to DIGITS significant digits\n"
          "                     (JCGM 101:2008, 7.9)\n"
          "  --method M         mc (default), lhs (Latin hypercube) or sobol (shifted\n"
          "                     Sobol' points, 10 replicates)\n"
          "  --seed S           seed of the random streams (default 1)\n"
          "  --threads K        threads (default: all cores); results do not depend on K\n"
          "  --out DIR          write run.json and the percentile and histogram tables\n"
          "  --force            allow --out (and --archive) to replace existing files\n"
          "  --archive DIR      also copy the model, its fit records, their data and the run\n"
          "                     record into the folder DIR, self-contained\n"
          "                     ('scatterprop replay DIR/run.json' works wherever it is moved)\n"
          "  --json             print the run record instead of the tables\n"
          "  --keep-samples     with --out, also write every sample (NAME.samples.csv)\n"
          "  --sobol N          also first-order and total Sobol' indices from N base\n"
          "                     samples (independent inputs only)\n"
          "  --percentiles LIST extra percentiles, comma-separated (e.g. 0.01,99.99)\n"
          "  --coverage P       coverage probability of the intervals (default 0.95)\n"
          "  --bins N           histogram bins (default 50)\n"
          "  --plots DIR        draw every output's charts into DIR with gnuplot: histogram,\n"
          "                     exceedance, sensitivity, convergence, scatter against the\n"
          "                     most influential input (keeps the samples in memory)\n"
          "  --dump-bytecode    print the compiled model and stop\n"
          "  --help             show this help\n"
          "\n"
          "The model language is described in docs/model-language.md.\n"
          "Exit codes: 0 ok, 2 usage, 3 bad data (a fit record), 4 bad model,\n"
          "5 numerical failure or too little memory, 6 I/O error, 130 interrupted.\n"
          "\n");
  cli_print_caution(out);
}

typedef struct {
  int tty;
  time_t start;
  int shown;
} progress_state;

static int on_progress(void *user, uint64_t done, uint64_t total)
{
  progress_state *p = user;
  if (p->tty && total > 0) {
    time_t now = time(NULL);
    if (p->shown || now - p->start >= 1) {
      int width = 40, k = (int)((double)width * (double)done / (double)total);
      fprintf(stderr, "\r  [%.*s%*s] %3.0f%%", k,
              "########################################", width - k, "",
              100.0 * (double)done / (double)total);
      fflush(stderr);
      p->shown = 1;
    }
  }
  return cli_interrupted();
}

static void put(FILE *out, int dec, double v)
{
  if (!isfinite(v)) fprintf(out, "-");
  else if (dec >= 0) fprintf(out, "%.*f", dec, v);
  else fprintf(out, "%.6g", v);
}

static int parse_percentiles(const char *list, double **out, size_t *n, int *rc)
{
  size_t cap = 1;
  for (const char *c = list; *c; c++) cap += *c == ',';
  double *v = malloc(cap * sizeof *v);
  char *buf = strdup(list);
  if (!v || !buf) { free(v); free(buf); *rc = CLI_NUMERIC; return 0; }
  size_t k = 0;
  for (char *tok = strtok(buf, ","); tok; tok = strtok(NULL, ",")) {
    double p;
    if (!cli_parse_double("propagate", "--percentiles", tok, &p, rc)) break;
    if (!(p > 0 && p < 100)) {
      *rc = cli_usage("propagate", "--percentiles: %s is not between 0 and 100", tok);
      break;
    }
    v[k++] = p;
  }
  free(buf);
  if (*rc != CLI_OK) { free(v); return 0; }
  free(*out); /* a repeated --percentiles replaces the earlier list */
  *out = v;
  *n = k;
  return 1;
}

static void print_output(FILE *out, const sp_run *run, size_t j)
{
  const sp_engine_result *res = sp_run_result(run);
  const sp_engine_output *o = &res->out[j];
  const sp_model_output *mo = sp_model_output_at(sp_run_model(run), j);
  int dec = sp_run_decimals(run, j);
  fprintf(out, "\n%s  [%s]\n", mo->name, mo->unit_text);
  fprintf(out, "  mean       ");
  put(out, dec, o->mean);
  fprintf(out, "  (standard error ");
  put(out, dec, o->sem);
  fprintf(out, "%s)\n", res->sem_kind == SP_ENGINE_SEM_IID_BOUND ? ", an upper bound for lhs" : "");
  fprintf(out, "  sd         ");
  put(out, dec, o->sd);
  fprintf(out, "\n  min, max   ");
  put(out, dec, o->min);
  fprintf(out, ", ");
  put(out, dec, o->max);
  fprintf(out, "\n  skewness   ");
  if (isfinite(o->skewness)) fprintf(out, "%.3f", o->skewness);
  else fprintf(out, "-");
  fprintf(out, "   excess kurtosis ");
  if (isfinite(o->kurtosis)) fprintf(out, "%.3f\n", o->kurtosis);
  else fprintf(out, "-\n");
  char lead[64];
  int nl = snprintf(lead, sizeof lead, "  %g%% coverage interval  ", 100.0 * res->coverage);
  fprintf(out, "%s[", lead);
  put(out, dec, o->sym_lo);
  fprintf(out, ", ");
  put(out, dec, o->sym_hi);
  fprintf(out, "] probabilistically symmetric\n%*s[", nl, "");
  put(out, dec, o->short_lo);
  fprintf(out, ", ");
  put(out, dec, o->short_hi);
  fprintf(out, "] shortest\n");
  if (o->nan + o->posinf + o->neginf > 0)
    fprintf(out, "  NOT FINITE: %llu NaN, %llu +Inf, %llu -Inf of %llu samples were left out of "
                 "every statistic\n",
            (unsigned long long)o->nan, (unsigned long long)o->posinf,
            (unsigned long long)o->neginf, (unsigned long long)res->samples);
  fprintf(out, "  percentiles:\n");
  for (size_t k = 0; k < res->npct; k++) {
    fprintf(out, "%s%6.3g%%  ", k % 4 == 0 ? "   " : "  ", 100.0 * res->pct_p[k]);
    char buf[64];
    double v = res->pct[j * res->npct + k];
    if (!isfinite(v)) snprintf(buf, sizeof buf, "-");
    else if (dec >= 0) snprintf(buf, sizeof buf, "%.*f", dec, v);
    else snprintf(buf, sizeof buf, "%.6g", v);
    fprintf(out, "%s", buf);
    if (k % 4 == 3 || k + 1 == res->npct) fputc('\n', out);
    else fprintf(out, "%*s", (int)(12 > strlen(buf) ? 12 - strlen(buf) : 1), "");
  }
  if (res->rank_share) {
    /* Inputs ranked by share. */
    size_t ni = res->ninputs;
    size_t *order = malloc(ni * sizeof *order);
    if (order) {
      for (size_t i = 0; i < ni; i++) order[i] = i;
      for (size_t a = 1; a < ni; a++)
        for (size_t b = a; b > 0 && res->rank_share[j * ni + order[b]] >
                                        res->rank_share[j * ni + order[b - 1]]; b--) {
          size_t t = order[b];
          order[b] = order[b - 1];
          order[b - 1] = t;
        }
      fprintf(out, "  what drives it (share of squared rank correlations; Spearman rho):\n");
      for (size_t a = 0; a < ni; a++) {
        size_t i = order[a];
        double sh = res->rank_share[j * ni + i], rho = res->rank_corr[j * ni + i];
        if (isfinite(sh) && isfinite(rho))
          fprintf(out, "    %-12s %5.1f%%   rho %+.3f\n",
                  sp_model_input_at(sp_run_model(run), i)->name, 100.0 * sh, rho);
        else
          fprintf(out, "    %-12s     -   rho -\n", sp_model_input_at(sp_run_model(run), i)->name);
      }
      free(order);
    }
  }
  const sp_engine_sobol_result *sob = sp_run_sobol(run);
  if (sob) {
    fprintf(out, "  Sobol' indices (%llu base samples, %g%% bootstrap intervals):\n",
            (unsigned long long)sob->base_samples, 100.0 * 0.95);
    for (size_t i = 0; i < sob->ninputs; i++) {
      const sp_engine_index *ix = &sob->idx[j * sob->ninputs + i];
      fprintf(out, "    %-12s first order %6.3f [%6.3f, %6.3f]   total %6.3f [%6.3f, %6.3f]\n",
              sp_model_input_at(sp_run_model(run), i)->name, ix->S, ix->S_lo, ix->S_hi, ix->ST,
              ix->ST_lo, ix->ST_hi);
    }
  }
}

static void print_limits(FILE *out, const sp_run *run)
{
  const sp_engine_result *res = sp_run_result(run);
  if (res->nlimits == 0) return;
  fprintf(out, "\nlimits:\n");
  for (size_t k = 0; k < res->nlimits; k++) {
    const sp_engine_exceed *e = &res->exceed[k];
    const sp_model_output *mo = sp_model_output_at(sp_run_model(run), (size_t)e->output);
    if (e->n == 0) {
      fprintf(out, "  %s %s %g [%s]: no sample has a finite value of %s, so its probability "
                   "is unknown\n", mo->name, e->direction == SP_ENGINE_BELOW ? "<" : ">",
              e->value, mo->unit_text, mo->name);
      continue;
    }
    fprintf(out, "  %s %s %g [%s]: violated by %llu of %llu samples, P = %.3g", mo->name,
            e->direction == SP_ENGINE_BELOW ? "<" : ">", e->value, mo->unit_text,
            (unsigned long long)e->violations, (unsigned long long)e->n, e->p);
    if (e->one_sided && e->violations == 0)
      fprintf(out, " (95%% upper bound %.2g, one-sided Clopper-Pearson)\n", e->hi);
    else
      fprintf(out, " (95%% interval %.3g to %.3g, %s)\n", e->lo, e->hi,
              e->one_sided ? "one-sided Clopper-Pearson" : "Wilson score");
    if (e->n < res->samples)
      fprintf(out, "    %llu samples whose %s is not finite are left out of this count\n",
              (unsigned long long)(res->samples - e->n), mo->name);
  }
}

/* Draws the run's charts into dir. */
static int draw_plots(const sp_run *run, const char *dir, int force, sp_runplot_set *set)
{
  sp_error err;
  sp_error_clear(&err);
  char tdir[SP_PLOT_PATH_MAX];
  sp_runplot_options po;
  sp_runplot_options_init(&po);
  cli_plot_options(&po.plot, dir, force, tdir, sizeof tdir);
  return sp_runplot_draw(run, &po, set, &err) == SP_OK ? CLI_OK : cli_report(&err);
}

/* Archives the run with its charts (data, script and pictures of each). */
static sp_status archive_run(const char *dir, const char *record, const sp_runplot_set *set,
                             int force, sp_error *err)
{
  sp_archive_extra *ex = calloc(4 * set->ncharts + 1, sizeof *ex);
  if (!ex) return sp_fail(err, SP_ENOMEM, "out of memory");
  size_t n = 0;
  for (size_t i = 0; i < set->ncharts; i++) {
    const sp_runplot_chart *c = &set->charts[i];
    if (!c->drawn) continue;
    const char *files[4] = {c->out.data, c->out.script, c->out.rendered ? c->out.png : "",
                            c->out.rendered ? c->out.svg : ""};
    for (int k = 0; k < 4; k++)
      if (files[k][0]) ex[n++] = (sp_archive_extra){files[k], "charts"};
  }
  sp_status s = sp_archive_run(dir, record, ex, n, force, err);
  free(ex);
  return s;
}

static int mkdir_p(const char *dir, sp_error *err)
{
  struct stat st;
  if (stat(dir, &st) == 0) {
    if (S_ISDIR(st.st_mode)) return 1;
    sp_fail(err, SP_EIO, "%s: exists and is not a folder", dir);
    return 0;
  }
  if (mkdir(dir, 0755) != 0) {
    sp_fail(err, SP_EIO, "%s: cannot create the folder: %s", dir, strerror(errno));
    return 0;
  }
  return 1;
}

/* Without --force: CLI_OK when none of the files --out would get exists,
 * else the error naming the first (before the run, so none is wasted). */
static int check_out_free(const sp_run *run, const char *outdir, int keep_samples)
{
  sp_error e;
  sp_error_clear(&e);
  char path[4096];
  struct stat st;
  snprintf(path, sizeof path, "%s/run.json", outdir);
  int taken = stat(path, &st) == 0;
  const char *kinds[] = {"percentiles", "histogram", "samples"};
  for (size_t j = 0; !taken && j < sp_model_output_count(sp_run_model(run)); j++)
    for (int k = 0; !taken && k < (keep_samples ? 3 : 2); k++) {
      if (sp_run_table_path(run, outdir, j, kinds[k], path, sizeof path, &e) != SP_OK)
        return cli_report(&e);
      taken = stat(path, &st) == 0;
    }
  if (!taken) return CLI_OK;
  sp_fail(&e, SP_EIO, "%s: file exists; refusing to overwrite it", path);
  sp_error_hint(&e, "give --force to replace the run's files, or choose another --out");
  return cli_report(&e);
}

int cli_propagate_run(int argc, char **argv)
{
  const char *model = NULL, *outdir = NULL, *plotdir = NULL, *archive = NULL;
  int rc = CLI_OK, json = 0, force = 0, dump = 0, have_samples = 0, keep_samples = 0;
  double *pcts = NULL;
  size_t npcts = 0;
  sp_run_options ro;
  sp_run_options_init(&ro);
  ro.engine.samples = 1000000;
  ro.engine.seed = 1;
  for (int i = 1; i < argc && rc == CLI_OK; i++) {
    const char *v;
    int m;
    unsigned long long u;
    double d;
    if ((m = cli_opt_value("propagate", argc, argv, &i, "--samples", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("propagate", "--samples", v, &u, &rc)) {
        if (u == 0) rc = cli_usage("propagate", "--samples must be at least 1");
        ro.engine.samples = u;
        have_samples = 1;
      }
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--tolerance", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("propagate", "--tolerance", v, &u, &rc)) {
        if (u < 1 || u > 6)
          rc = cli_usage("propagate", "--tolerance takes 1 to 6 significant digits, got %s", v);
        ro.engine.adaptive_digits = (unsigned)u;
      }
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--method", &v, &rc)) != 0) {
      sp_error e;
      sp_error_clear(&e);
      if (m > 0 && sp_engine_method_find(v, &ro.engine.method, &e) != SP_OK)
        rc = cli_usage("propagate", "--method: %s (mc, lhs or sobol)", e.msg);
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--seed", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("propagate", "--seed", v, &u, &rc)) ro.engine.seed = u;
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--threads", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("propagate", "--threads", v, &u, &rc)) {
        if (u < 1 || u > 1024) rc = cli_usage("propagate", "--threads takes 1 to 1024");
        ro.engine.threads = (int)u;
      }
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--out", &v, &rc)) != 0) {
      if (m > 0) outdir = v;
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--sobol", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("propagate", "--sobol", v, &u, &rc)) {
        if (u < 100) rc = cli_usage("propagate", "--sobol needs at least 100 base samples");
        ro.sobol_samples = u;
      }
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--percentiles", &v, &rc)) != 0) {
      if (m > 0) parse_percentiles(v, &pcts, &npcts, &rc);
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--coverage", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_double("propagate", "--coverage", v, &d, &rc)) {
        if (!(d > 0 && d < 1)) rc = cli_usage("propagate", "--coverage must lie in (0, 1)");
        ro.engine.coverage = d;
      }
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--bins", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("propagate", "--bins", v, &u, &rc)) {
        if (u < 1 || u > 100000) rc = cli_usage("propagate", "--bins takes 1 to 100000");
        ro.engine.hist_bins = (size_t)u;
      }
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--plots", &v, &rc)) != 0) {
      if (m > 0) plotdir = v;
    } else if ((m = cli_opt_value("propagate", argc, argv, &i, "--archive", &v, &rc)) != 0) {
      if (m > 0) archive = v;
    } else if (cli_opt_flag(argv, i, "--json")) {
      json = 1;
    } else if (cli_opt_flag(argv, i, "--force")) {
      force = 1;
    } else if (cli_opt_flag(argv, i, "--keep-samples")) {
      keep_samples = 1;
    } else if (cli_opt_flag(argv, i, "--dump-bytecode")) {
      dump = 1;
    } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
      rc = cli_usage("propagate", "unknown option '%s'", argv[i]);
    } else if (!model) {
      model = argv[i];
    } else {
      rc = cli_usage("propagate", "one model file at a time (got '%s' and '%s')", model, argv[i]);
    }
  }
  if (rc == CLI_OK && !model) rc = cli_usage("propagate", "no model file given");
  if (rc == CLI_OK && have_samples && ro.engine.adaptive_digits)
    rc = cli_usage("propagate", "give --samples or --tolerance, not both");
  if (rc == CLI_OK && keep_samples && !outdir)
    rc = cli_usage("propagate", "--keep-samples needs --out DIR");
  if (rc != CLI_OK) { free(pcts); return rc; }
  ro.engine.percentiles = pcts;
  ro.engine.npercentiles = npcts;
  /* The charts need every sample too; only --keep-samples writes them out. */
  ro.engine.keep_samples = keep_samples || plotdir != NULL;
  /* Ctrl-C from here on ends the program at once (nothing is written yet);
   * the run and the writing of its outputs hold it (below). */
  cli_sigint_install();

  sp_error err;
  sp_error_clear(&err);
  sp_model_diags diags;
  sp_model_diags_init(&diags);
  sp_run *run = NULL;
  if (sp_run_open(model, &run, &diags, &err) != SP_OK) {
    if (diags.count > 0) {
      char buf[4096];
      for (size_t k = 0; k < diags.count; k++) {
        sp_model_diag_format(&diags.items[k], buf, sizeof buf);
        fprintf(stderr, "scatterprop: error: %s", buf);
      }
      if (diags.total > diags.count)
        fprintf(stderr, "scatterprop: ... and %zu more errors\n", diags.total - diags.count);
      fprintf(stderr, "  hint: the model language is described in docs/model-language.md\n");
      rc = CLI_MODEL;
    } else {
      rc = cli_report(&err);
    }
    sp_model_diags_clear(&diags);
    free(pcts);
    return rc;
  }
  sp_model_diags_clear(&diags);
  if (dump) {
    char *dis = sp_model_disassemble(sp_run_model(run), &err);
    if (!dis) rc = cli_report(&err);
    else { fputs(dis, stdout); free(dis); }
    sp_run_free(run);
    free(pcts);
    return rc;
  }
  /* Refuse files in the way before the run, not after it: the record and
   * every table of --out (the model names them), the archive folder, a
   * chart folder that cannot be used and charts in the way. */
  if (outdir && !force) rc = check_out_free(run, outdir, keep_samples);
  if (rc == CLI_OK && archive && sp_archive_check(archive, force, &err) != SP_OK)
    rc = cli_report(&err);
  if (rc == CLI_OK && plotdir) {
    sp_runplot_options cpo;
    sp_runplot_options_init(&cpo);
    char ctdir[SP_PLOT_PATH_MAX];
    cli_plot_options(&cpo.plot, plotdir, force, ctdir, sizeof ctdir);
    if (sp_runplot_check(sp_run_model(run), &cpo, &err) != SP_OK) rc = cli_report(&err);
  }
  if (rc != CLI_OK) {
    sp_run_free(run);
    free(pcts);
    return rc;
  }
  progress_state ps = {isatty(2), time(NULL), 0};
  ro.engine.progress = on_progress;
  ro.engine.progress_user = &ps;
  /* A cancelled run is not written: its summaries would be thrown away. */
  ro.engine.discard_cancelled = 1;
  cli_sigint_hold(1);
  sp_status st = sp_run_execute(run, &ro, &err);
  if (ps.shown) fprintf(stderr, "\r%60s\r", "");
  if (st != SP_OK && !cli_interrupted()) {
    rc = cli_report(&err);
  } else if (cli_interrupted() || sp_run_result(run)->status == SP_ENGINE_CANCELLED) {
    fprintf(stderr, "scatterprop: interrupted after %llu samples; nothing was written\n",
            (unsigned long long)sp_run_result(run)->samples);
    rc = cli_interrupt_code();
  }
  if (rc != CLI_OK) {
    sp_run_free(run);
    free(pcts);
    return rc;
  }

  /* The outputs, all or nothing: an interrupt now waits until they are
   * written; a failure takes back what this command had made. */
  cli_created made;
  memset(&made, 0, sizeof made);
  char *record = sp_run_record_json(run, &ro, argc, argv, (int64_t)time(NULL), &err);
  if (!record) rc = cli_report(&err);
  /* The folder is made only now, so that a run refused or failed leaves
   * nothing behind. */
  if (rc == CLI_OK && outdir) {
    cli_created_note(&made, outdir);
    if (!mkdir_p(outdir, &err)) rc = cli_report(&err);
  }
  if (rc == CLI_OK && outdir) {
    char path[4096];
    for (size_t j = 0; j < sp_model_output_count(sp_run_model(run)); j++) {
      const char *kinds[] = {"percentiles", "histogram", "samples"};
      for (int k = 0; k < (keep_samples ? 3 : 2); k++)
        if (sp_run_table_path(run, outdir, j, kinds[k], path, sizeof path, &err) == SP_OK)
          cli_created_note(&made, path);
    }
    snprintf(path, sizeof path, "%s/run.json", outdir);
    cli_created_note(&made, path);
    if (sp_run_write_tables(run, outdir, keep_samples, force, &err) != SP_OK ||
        sp_file_write_atomic(path, record, strlen(record), force, &err) != SP_OK)
      rc = cli_report(&err);
  }
  sp_runplot_set plots;
  memset(&plots, 0, sizeof plots);
  if (rc == CLI_OK && plotdir) {
    cli_created_note(&made, plotdir);
    if (!mkdir_p(plotdir, &err)) rc = cli_report(&err);
  }
  if (rc == CLI_OK && plotdir) {
    cli_created_snapshot(&made, plotdir);
    rc = draw_plots(run, plotdir, force, &plots);
    for (size_t i = 0; i < plots.ncharts; i++) {
      const sp_plot_output *po = &plots.charts[i].out;
      cli_created_note_new(&made, po->data);
      cli_created_note_new(&made, po->script);
      cli_created_note_new(&made, po->png);
      cli_created_note_new(&made, po->svg);
    }
  }
  /* The archive comes last: it is made whole or not at all by itself. */
  if (rc == CLI_OK && archive && archive_run(archive, record, &plots, force, &err) != SP_OK)
    rc = cli_report(&err);
  if (rc != CLI_OK) {
    size_t removed = cli_created_undo(&made);
    if (removed)
      fprintf(stderr,
              "scatterprop: the %zu file%s and folder%s this run had written were "
              "removed again\n",
              removed, removed == 1 ? "" : "s", removed == 1 ? "" : "s");
    if (cli_interrupted()) {
      fprintf(stderr, "scatterprop: interrupted while writing the outputs\n");
      rc = cli_interrupt_code();
    }
  }
  cli_created_free(&made);
  if (rc == CLI_OK) {
    if (json) {
      printf("%s\n", record);
      if (plotdir) cli_runplot_print(stderr, &plots, plotdir);
    } else {
      const sp_engine_result *res = sp_run_result(run);
      const sp_model *m = sp_run_model(run);
      printf("%s: %zu input%s, %zu output%s; model sha256 %s\n", model,
             sp_model_input_count(m), sp_model_input_count(m) == 1 ? "" : "s",
             sp_model_output_count(m), sp_model_output_count(m) == 1 ? "" : "s",
             sp_model_sha256(m));
      for (size_t i = 0; i < sp_model_input_count(m); i++) {
        const sp_model_input *in = sp_model_input_at(m, i);
        printf("  input %-10s [%s] %s(", in->name, in->unit_text, in->family->name);
        for (size_t p = 0; p < in->family->nparam; p++)
          printf("%s%s=%.6g", p ? ", " : "", in->family->param_names[p], in->theta[p]);
        printf(")");
        if (in->fit_path) printf(" from %s", in->fit_path);
        if (in->scale != 1 || in->offset != 0) printf(", x %.6g%+.6g", in->scale, in->offset);
        printf("\n");
      }
      printf("method %s, seed %llu, %llu samples%s", sp_engine_method_name(res->method),
             (unsigned long long)res->seed, (unsigned long long)res->samples,
             res->status == SP_ENGINE_NOT_STABILISED ? " (NOT stabilised: cap reached)" : "");
      if (res->batches) printf(" in %llu batches of %llu", (unsigned long long)res->batches,
                               (unsigned long long)res->batch_size);
      printf("\n");
      for (size_t j = 0; j < res->noutputs; j++) print_output(stdout, run, j);
      print_limits(stdout, run);
      if (outdir) printf("\nrun record and tables written to %s/\n", outdir);
      if (plotdir) cli_runplot_print(stdout, &plots, plotdir);
      if (archive) printf("archive written to %s/\n", archive);
      printf("\nValues are shown to the Monte Carlo resolution (two digits of the standard\n"
             "error of the mean). Percentiles: Hyndman & Fan definition 7 on every finite\n"
             "sample.\n\n");
      cli_print_caution(stdout);
    }
  }
  if (rc == CLI_OK && cli_interrupted()) {
    fprintf(stderr, "scatterprop: interrupted while the outputs were being written; they "
                    "were completed first\n");
    rc = cli_interrupt_code();
  }
  sp_runplot_set_clear(&plots);
  free(record);
  sp_run_free(run);
  free(pcts);
  return rc;
}
