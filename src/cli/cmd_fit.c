/* scatterprop fit: fit distribution families to one column of an
 * inspection CSV, rank them and choose one; print the ranked table, write
 * the fit record.  Every number comes from the library. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "cli.h"
#include "scatterprop/archive.h"
#include "scatterprop/dist.h"
#include "scatterprop/fit.h"
#include "scatterprop/fitplot.h"
#include "scatterprop/ingest.h"
#include "scatterprop/record.h"

void cli_fit_help(FILE *out)
{
  fprintf(out,
          "Usage: scatterprop fit FILE.csv --column NAME [--families LIST] [--by LOT]\n"
          "                       [--select CRIT] [--fix PARAM=VALUE]... [--family FAMILY]\n"
          "                       [--pvalues MODE] [--bootstrap B] [--seed S] [--threads K]\n"
          "                       [--alpha A] [--out FIT.json] [--plots DIR] [--force] [--json]\n"
          "                       [--archive DIR]\n"
          "\n"
          "Fits each candidate family to the column by maximum likelihood, tests the fit\n"
          "(Anderson-Darling A², Kolmogorov-Smirnov D, Cramér-von Mises W²), ranks the\n"
          "candidates by an information criterion and chooses the best one that A² does\n"
          "not reject and whose estimator converged.  The table gives per candidate the\n"
          "free parameters k, log-likelihood, AICc, BIC, the three statistics with their\n"
          "p-values (a letter names the method of each), a verdict, and below them the\n"
          "parameters with standard errors; then notes, the chosen family and why.\n"
          "\n"
          "Options:\n"
          "  --column NAME     the numeric column to fit (required)\n"
          "  --families LIST   comma-separated candidates (default: the families marked\n"
          "                    'default' below; the others on request)\n"
          "  --by LOT          also fit each lot of this text column separately\n"
          "  --select CRIT     aicc (default), aic, bic or loglik\n"
          "  --fix P=V         hold parameter P at V in every family that has it\n"
          "                    (repeatable); limits such as lower/upper may also come\n"
          "                    from a '# lower: V' metadata line\n"
          "  --family FAMILY   choose this family whatever its rank (fitted even if\n"
          "                    not a default candidate); --choose is the same\n"
          "  --pvalues MODE    auto (published approximation where one exists, else\n"
          "                    bootstrap; default), bootstrap, approximation or none\n"
          "  --bootstrap B     bootstrap replicates, each refitted (default 1000)\n"
          "  --seed S          bootstrap seed (default 1)\n"
          "  --threads K       bootstrap threads (default: all); results do not depend on K\n"
          "  --alpha A         A² rejection level (default 0.05)\n"
          "  --out FIT.json    write the fit record (refuses to overwrite without --force)\n"
          "  --plots DIR       draw the fit's charts into DIR (made if missing): for the\n"
          "                    column, and with --by for each lot and pooled, a histogram\n"
          "                    with the densities of the chosen family and the two best\n"
          "                    candidates not rejected, a probability plot of the chosen\n"
          "                    family with a 95%% pointwise band, the empirical CDF with\n"
          "                    the fitted CDFs; with --by the lots side by side.  PNG and\n"
          "                    SVG need gnuplot; without it the .gp scripts and .dat data\n"
          "                    are written.  'scatterprop plot FIT.json' redraws them\n"
          "  --force           allow --out, --plots and --archive to replace existing files\n"
          "  --archive DIR     also copy the data, the record and the charts into the\n"
          "                    folder DIR, self-contained ('scatterprop replay\n"
          "                    DIR/fits/NAME.json' works wherever DIR is moved)\n"
          "  --json            print the fit record instead of the table\n"
          "  --help            show this help\n"
          "\n"
          "Families:\n");
  for (size_t i = 0; i < sp_family_count(); i++) {
    const sp_family *f = sp_family_at(i);
    if (!(f->flags & SP_FAMILY_FIT)) continue;
    fprintf(out, "  %-14s %s (", f->name, f->title);
    for (size_t p = 0; p < f->nparam; p++)
      fprintf(out, "%s%s", p ? ", " : "", f->param_names[p]);
    fprintf(out, ")%s\n", (f->flags & SP_FAMILY_CANDIDATE) ? "  default" : "");
  }
  fprintf(out, "\n"
               "Exit codes: 0 ok, 2 usage, 3 bad input data (also: every family skipped\n"
               "as unable to describe the data), 5 no family fitted because of a numerical\n"
               "failure, 6 I/O error, 130 interrupted (Ctrl-C: nothing is written).\n"
               "\n");
  cli_print_caution(out);
}

/* The distinct p-value methods of a fit, in order of first appearance;
 * each gets a letter for the table. */
typedef struct {
  const char *text[3 * SP_FIT_MAX_FAMILIES];
  size_t n;
} legend;

static char legend_mark(legend *l, const char *method)
{
  if (!method || !method[0]) return ' ';
  for (size_t i = 0; i < l->n; i++)
    if (strcmp(l->text[i], method) == 0) return (char)('a' + i);
  if (l->n >= 26) return '*';
  l->text[l->n] = method;
  return (char)('a' + l->n++);
}

static void put_p(FILE *out, legend *l, const sp_fit_gof *g)
{
  if (!isfinite(g->p)) {
    /* No p-value; the legend still says why when the fit recorded it. */
    if (g->method[0]) fprintf(out, " %6s%c", "-", legend_mark(l, g->method));
    else fprintf(out, " %7s", "-");
    return;
  }
  char mark = legend_mark(l, g->method);
  if (g->p < 0.001) fprintf(out, " <0.001%c", mark);
  else if (g->bound) fprintf(out, " %c%5.3f%c", g->bound < 0 ? '<' : '>', g->p, mark);
  else fprintf(out, " %6.3f%c", g->p, mark);
}

static void put_num(FILE *out, int width, double v)
{
  if (isfinite(v)) fprintf(out, " %*.2f", width, v);
  else fprintf(out, " %*s", width, "-");
}

/* A goodness-of-fit statistic in 7 columns: 4 significant digits, "inf"
 * for an observation where the fitted F is 0 or 1. */
static void put_stat(FILE *out, double v)
{
  if (isinf(v))
    fprintf(out, " %7s", "inf");
  else if (isfinite(v))
    fprintf(out, " %7.4g", v);
  else
    fprintf(out, " %7s", "-");
}

static void put_params(FILE *out, const sp_fit_candidate *c)
{
  for (size_t p = 0; p < c->nparam; p++) {
    fprintf(out, "%s%s %.6g", p ? ", " : "", c->family->param_names[p], c->theta[p]);
    if (c->fixed[p]) fprintf(out, " (fixed)");
    else if (isfinite(c->se[p])) fprintf(out, " ± %.2g", c->se[p]);
  }
}

/* What a method's record token means, for a person reading the table. */
static const char *method_words(sp_fit_method m)
{
  switch (m) {
  case SP_FIT_METHOD_FAMILY: return "maximum likelihood, the family's closed form or Newton";
  case SP_FIT_METHOD_SIMPLEX: return "maximum likelihood, Nelder-Mead then Newton";
  case SP_FIT_METHOD_PROFILE: return "maximum likelihood, profiled over the location";
  case SP_FIT_METHOD_MPS: return "maximum product of spacings, Cheng & Amin 1983";
  case SP_FIT_METHOD_NONE: break;
  }
  return "every parameter fixed";
}

static void print_fit(FILE *out, const sp_fit_result *r, const char *title)
{
  legend l = {{0}, 0};
  fprintf(out, "\n%s: n = %zu\n", title, r->n);
  int fw = 8;
  for (size_t i = 0; i < r->ncand; i++) {
    int len = (int)strlen(r->cand[i].family->name);
    if (len > fw) fw = len;
  }
  char (*verdict)[64] = calloc(r->ncand ? r->ncand : 1, sizeof *verdict);
  if (!verdict) return;
  for (size_t i = 0; i < r->ncand; i++) {
    const sp_fit_candidate *c = &r->cand[i];
    if (c->status != SP_FIT_OK) continue;
    if ((long)i == r->chosen) snprintf(verdict[i], sizeof verdict[i], "chosen");
    else if (c->rejected)
      snprintf(verdict[i], sizeof verdict[i], "rejected (%s p<%g)",
               c->judged_by == SP_FIT_GOF_W2 ? "W²" : c->judged_by == SP_FIT_GOF_D ? "D" : "A²",
               r->opt.alpha);
    else snprintf(verdict[i], sizeof verdict[i], "ok");
    if (!c->converged)
      strncat(verdict[i], ", not converged", sizeof verdict[i] - strlen(verdict[i]) - 1);
  }
  /* Two lines per fitted candidate: the numbers, then its parameters with
   * their standard errors under the family's name.  "A²" and "W²" take
   * one column each but three bytes, hence the wider fields. */
  fprintf(out, "  %4s  %-*s %2s %10s %10s %10s %8s %7s %7s %7s %8s %7s  %s\n", "rank", fw, "family",
          "k", "logL", "AICc", "BIC", "A²", "p", "D", "p", "W²", "p", "verdict");
  /* In rank order, then the unranked (skipped, failed) in candidate order. */
  for (size_t pass = 0; pass < 2; pass++) {
    for (size_t want = 1; want <= (pass == 0 ? r->ncand : 1); want++) {
      for (size_t i = 0; i < r->ncand; i++) {
        const sp_fit_candidate *c = &r->cand[i];
        if (pass == 0 && c->rank != want) continue;
        if (pass == 1 && c->rank != 0) continue;
        if (c->status != SP_FIT_OK) {
          fprintf(out, "  %4s  %-*s %s: %s\n", "-", fw, c->family->name,
                  sp_fit_status_name(c->status), c->reason);
          continue;
        }
        fprintf(out, "  %4zu  %-*s %2zu", c->rank, fw, c->family->name, c->k);
        put_num(out, 10, c->loglik);
        put_num(out, 10, c->aicc);
        put_num(out, 10, c->bic);
        for (int j = 0; j < SP_FIT_NGOF; j++) {
          put_stat(out, c->gof[j].stat);
          put_p(out, &l, &c->gof[j]);
        }
        fprintf(out, "  %s\n", verdict[i]);
        fprintf(out, "  %4s  ", "");
        put_params(out, c);
        fputc('\n', out);
      }
    }
  }
  free(verdict);
  /* What the table cannot say in a column: estimator notes (a search
   * limit, a fallback) and why a standard error is missing, for every
   * fitted candidate but the chosen one (its notes follow below). */
  int notes = 0;
  for (size_t i = 0; i < r->ncand; i++) {
    const sp_fit_candidate *c = &r->cand[i];
    if (c->status != SP_FIT_OK || (long)i == r->chosen) continue;
    int cov = !c->cov_available && c->k > 0;
    if (!c->reason[0] && !cov) continue;
    if (!notes++) fprintf(out, "\nnotes:\n");
    fprintf(out, "  %s:", c->family->name);
    if (c->reason[0]) fprintf(out, " %s%s", c->reason, cov ? ";" : "");
    if (cov) fprintf(out, " %s", c->cov_note);
    fputc('\n', out);
  }
  if (r->chosen >= 0) {
    const sp_fit_candidate *c = &r->cand[r->chosen];
    fprintf(out, "\nChosen: %s, %s; method %s (%s)%s\n", c->family->name, c->family->title,
            sp_fit_method_name(c->method), method_words(c->method),
            c->converged ? "" : ", not converged");
    fprintf(out, "  why: %s\n", r->reason);
    for (size_t p = 0; p < c->nparam; p++) {
      fprintf(out, "  %-12s %.10g", c->family->param_names[p], c->theta[p]);
      if (c->fixed[p]) fprintf(out, "  (fixed)\n");
      else if (isfinite(c->se[p]))
        fprintf(out, "  se %.4g, 95%% interval [%.6g, %.6g] (Wald, %s scale)\n", c->se[p],
                c->ci_lo[p], c->ci_hi[p], c->ci_scale[p] == SP_FIT_CI_LOG ? "log" : "linear");
      else fputc('\n', out);
    }
    if (!c->cov_available) fprintf(out, "  %s\n", c->cov_note);
    if (c->reason[0]) fprintf(out, "  note: %s\n", c->reason);
  } else {
    fprintf(out, "\nNo family chosen: %s\n", r->reason);
  }
  if (l.n > 0) {
    fprintf(out, "\np-values:\n");
    for (size_t i = 0; i < l.n; i++) fprintf(out, "  %c  %s\n", (char)('a' + i), l.text[i]);
  }
}

/* With --by: one line per lot and the pooled line, each with the pooled
 * choice fitted to that lot, so that lot-to-lot differences in its
 * parameters show side by side. */
static void print_lots(FILE *out, const sp_fit_grouped *g, const char *by)
{
  const sp_fit_result *pr = &g->pooled;
  if (pr->chosen < 0 || g->ngroups == 0) return;
  const sp_family *fam = pr->cand[pr->chosen].family;
  int lw = (int)strlen(by) > 6 ? (int)strlen(by) : 6;
  for (size_t i = 0; i < g->ngroups; i++) {
    int len = (int)strlen(g->groups[i].label);
    if (len > lw) lw = len;
  }
  fprintf(out, "\nLots at a glance: %s (the pooled choice) fitted to each %s\n", fam->name, by);
  /* "A² p": five bytes in four columns */
  fprintf(out, "  %-*s %6s  %-13s %9s  %s\n", lw, by, "n", "own choice", "A² p",
          "parameters (± se)");
  for (size_t i = 0; i <= g->ngroups; i++) {
    const sp_fit_result *r = i < g->ngroups ? &g->groups[i].fit : pr;
    const char *label = i < g->ngroups ? g->groups[i].label : "pooled";
    if (i < g->ngroups && g->groups[i].status != SP_OK) {
      fprintf(out, "  %-*s %6s  not fitted: %s\n", lw, label, "-", g->groups[i].message);
      continue;
    }
    fprintf(out, "  %-*s %6zu  ", lw, label, r->n);
    fprintf(out, "%-13s", r->chosen >= 0 ? r->cand[r->chosen].family->name : "-");
    const sp_fit_candidate *c = NULL;
    for (size_t j = 0; j < r->ncand; j++)
      if (r->cand[j].family == fam) c = &r->cand[j];
    if (!c || c->status != SP_FIT_OK) {
      fprintf(out, " %8s  %s\n", "-", c ? c->reason : "not a candidate");
      continue;
    }
    const sp_fit_gof *a = &c->gof[SP_FIT_GOF_A2];
    if (!isfinite(a->p))
      fprintf(out, " %8s", "-");
    else if (a->p < 0.001)
      fprintf(out, " %8s", "<0.001");
    else if (a->bound)
      fprintf(out, " %c%7.3f", a->bound < 0 ? '<' : '>', a->p);
    else
      fprintf(out, " %8.3f", a->p);
    fprintf(out, "  ");
    put_params(out, c);
    fprintf(out, "%s\n", c->converged ? "" : " (not converged)");
  }
}

static int split_families(const char *list, char **buf, const char ***names, size_t *n)
{
  size_t len = strlen(list);
  *buf = malloc(len + 1);
  *names = calloc(len / 2 + 2, sizeof **names);
  if (!*buf || !*names) return 0;
  memcpy(*buf, list, len + 1);
  *n = 0;
  for (char *s = *buf; *s;) {
    char *e = strchr(s, ',');
    if (e) *e = '\0';
    if (*s) (*names)[(*n)++] = s;
    if (!e) break;
    s = e + 1;
  }
  return 1;
}

/* --archive: the record (named as --out names it, else COLUMN.json), its
 * data and the charts drawn (their files under charts/). */
static sp_status archive_fit(const char *dir, const char *text, const char *outpath,
                             const char *column, const sp_fitplot_charts *charts, int force,
                             sp_error *err)
{
  char name[SP_FIT_TEXT_MAX];
  const char *base = outpath ? strrchr(outpath, '/') : NULL;
  snprintf(name, sizeof name, "%s%s", outpath ? (base ? base + 1 : outpath) : column,
           outpath ? "" : ".json");
  sp_archive_extra *ex = calloc(4 * charts->ncharts + 1, sizeof *ex);
  if (!ex) return sp_fail(err, SP_ENOMEM, "out of memory");
  size_t n = 0;
  for (size_t i = 0; i < charts->ncharts; i++) {
    const sp_fitplot_chart *c = &charts->charts[i];
    if (!c->drawn) continue;
    const char *files[4] = {c->out.data, c->out.script, c->out.rendered ? c->out.png : "",
                            c->out.rendered ? c->out.svg : ""};
    for (int k = 0; k < 4; k++)
      if (files[k][0]) ex[n++] = (sp_archive_extra){files[k], "charts"};
  }
  sp_status s = sp_archive_fit(dir, text, name, ex, n, force, err);
  free(ex);
  return s;
}

int cli_fit_run(int argc, char **argv)
{
  const char *file = NULL, *column = NULL, *by = NULL, *families = NULL, *outpath = NULL;
  const char *archive = NULL;
  const char *plotdir = NULL;
  int json = 0, force = 0, rc = CLI_OK;
  sp_fit_options o;
  sp_fit_options_init(&o);
  sp_error err;
  sp_error_clear(&err);
  for (int i = 1; i < argc && rc == CLI_OK; i++) {
    const char *v;
    int m;
    unsigned long long u;
    if ((m = cli_opt_value("fit", argc, argv, &i, "--column", &v, &rc)) != 0) {
      if (m > 0) column = v;
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--families", &v, &rc)) != 0) {
      if (m > 0) families = v;
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--by", &v, &rc)) != 0) {
      if (m > 0) by = v;
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--select", &v, &rc)) != 0) {
      if (m > 0 && sp_fit_select_parse(v, &o.select, &err) != SP_OK)
        rc = cli_usage("fit", "--select: %s", err.msg);
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--pvalues", &v, &rc)) != 0) {
      if (m > 0 && sp_fit_pvalue_mode_parse(v, &o.pvalue, &err) != SP_OK)
        rc = cli_usage("fit", "--pvalues: %s", err.msg);
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--fix", &v, &rc)) != 0) {
      if (m > 0 && sp_fit_options_fix_parse(&o, v, &err) != SP_OK)
        rc = cli_usage("fit", "--fix: %s", err.msg);
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--family", &v, &rc)) != 0 ||
               (m = cli_opt_value("fit", argc, argv, &i, "--choose", &v, &rc)) != 0) {
      if (m > 0) o.force_family = v;
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--bootstrap", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("fit", "--bootstrap", v, &u, &rc)) {
        if (u < 1 || u > 100000000ULL) rc = cli_usage("fit", "--bootstrap: B must be 1..1e8");
        else o.bootstrap_B = (size_t)u;
      }
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--seed", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("fit", "--seed", v, &u, &rc)) o.seed = u;
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--threads", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("fit", "--threads", v, &u, &rc)) {
        if (u < 1 || u > 1024) rc = cli_usage("fit", "--threads: K must be 1..1024");
        else o.threads = (int)u;
      }
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--alpha", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_double("fit", "--alpha", v, &o.alpha, &rc) &&
          !(o.alpha > 0 && o.alpha < 1))
        rc = cli_usage("fit", "--alpha: must be between 0 and 1, got %s", v);
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--out", &v, &rc)) != 0) {
      if (m > 0) outpath = v;
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--plots", &v, &rc)) != 0) {
      if (m > 0 && !*v) rc = cli_usage("fit", "--plots: empty folder name");
      else if (m > 0) plotdir = v;
    } else if ((m = cli_opt_value("fit", argc, argv, &i, "--archive", &v, &rc)) != 0) {
      if (m > 0) archive = v;
    } else if (cli_opt_flag(argv, i, "--force")) {
      force = 1;
    } else if (cli_opt_flag(argv, i, "--json")) {
      json = 1;
    } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
      rc = cli_usage("fit", "unknown option '%s'", argv[i]);
    } else if (!file) {
      file = argv[i];
    } else {
      rc = cli_usage("fit", "one CSV file at a time (got '%s' and '%s')", file, argv[i]);
    }
  }
  if (rc == CLI_OK && !file) rc = cli_usage("fit", "no CSV file given");
  if (rc == CLI_OK && !column) rc = cli_usage("fit", "--column NAME is required");
  if (rc != CLI_OK) return rc;

  char *fambuf = NULL;
  const char **famnames = NULL;
  if (families) {
    size_t nf = 0;
    if (!split_families(families, &fambuf, &famnames, &nf)) {
      free(fambuf);
      free(famnames);
      fprintf(stderr, "scatterprop: error: out of memory\n");
      return CLI_NUMERIC;
    }
    if (nf == 0) {
      free(fambuf);
      free(famnames);
      return cli_usage("fit", "--families: empty list");
    }
    o.families = famnames;
    o.nfamilies = nf;
  }

  /* Files in the way are refused before the fit (a bootstrap can take
   * minutes), not after it. */
  struct stat ost;
  if (outpath && !force && stat(outpath, &ost) == 0) {
    sp_fail(&err, SP_EIO, "%s: file exists; refusing to overwrite it", outpath);
    sp_error_hint(&err, "give --force to replace it, or choose another name");
    rc = cli_report(&err);
  } else if (outpath) {
    const char *slash = strrchr(outpath, '/');
    if (slash && slash > outpath) {
      char parent[4096];
      snprintf(parent, sizeof parent, "%.*s", (int)(slash - outpath), outpath);
      if (stat(parent, &ost) != 0 || !S_ISDIR(ost.st_mode)) {
        sp_fail(&err, SP_EIO, "%s: cannot write the fit record: the folder %s does not exist",
                outpath, parent);
        sp_error_hint(&err, "make the folder first (mkdir -p), or choose another --out");
        rc = cli_report(&err);
      }
    }
  }
  if (rc == CLI_OK && archive && sp_archive_check(archive, force, &err) != SP_OK)
    rc = cli_report(&err);
  /* A chart folder that cannot be used is found before the fit, not after
   * it (and before the record is written). */
  if (rc == CLI_OK && plotdir) {
    sp_plot_options cpo;
    char ctdir[SP_PLOT_PATH_MAX];
    cli_plot_options(&cpo, plotdir, force, ctdir, sizeof ctdir);
    if (sp_plot_check(&cpo, &err) != SP_OK) rc = cli_report(&err);
  }
  if (rc != CLI_OK) {
    free(fambuf);
    free(famnames);
    return rc;
  }
  /* Ctrl-C ends the fit at once (nothing is written yet); the writing of
   * the outputs holds it. */
  cli_sigint_install();
  cli_created made;
  memset(&made, 0, sizeof made);

  sp_ingest_options io;
  sp_ingest_options_init(&io);
  /* The lot column is read as text when it has no unit (lots numbered 117,
   * 131), as summary reads it. */
  if (by) {
    io.text_columns = &by;
    io.ntext_columns = 1;
  }
  sp_table *t = NULL;
  sp_fit_grouped g;
  memset(&g, 0, sizeof g);
  char *text = NULL;
  sp_fitplot_plan plan;
  memset(&plan, 0, sizeof plan);
  sp_fitplot_charts charts;
  memset(&charts, 0, sizeof charts);
  if (sp_table_read(file, &io, &t, &err) != SP_OK ||
      sp_fit_table(t, column, by, &o, &g, &err) != SP_OK) {
    rc = cli_report(&err);
    goto done;
  }
  const sp_column *col = sp_table_column(t, column);
  sp_record_fit_source src = {t->path, t->size, t->sha256, t->meta, t->nmeta, col->name,
                              col->unit_text, by, g.pooled_missing, (int64_t)time(NULL)};
  if (json || outpath || archive) {
    sp_status st = by ? sp_record_fit_grouped_dumps_cmd(&g, &src, argc, argv, &text, &err)
                      : sp_record_fit_dumps_cmd(&g.pooled, &src, argc, argv, &text, &err);
    if (st != SP_OK) {
      rc = cli_report(&err);
      goto done;
    }
  }
  /* Charts that would be refused (files in the way) are found before the
   * record is written, so a refusal leaves nothing behind. */
  sp_plot_options po;
  char tdir[SP_PLOT_PATH_MAX];
  if (plotdir) {
    cli_plot_options(&po, plotdir, force, tdir, sizeof tdir);
    if (sp_fitplot_plan_from_fit(&g, col->name, col->unit_text, by, &plan, &err) != SP_OK ||
        sp_fitplot_check(&plan, t, &po, &err) != SP_OK) {
      rc = cli_report(&err);
      goto done;
    }
  }
  /* The outputs, all or nothing: an interrupt now waits until they are
   * written, and a failure takes back what this command had made. */
  cli_sigint_hold(1);
  /* A record without a chosen family is of no use to a model (the reader
   * refuses it): nothing is written, and the exit code says why. */
  if (outpath && g.pooled.chosen >= 0) {
    cli_created_note(&made, outpath);
    if (sp_record_write_text(outpath, text, force, &err) != SP_OK) {
      if (err.code == SP_EIO && !force && strstr(err.msg, "file exists"))
        sp_error_hint(&err, "give --force to replace it, or choose another name");
      else if (err.code == SP_EIO && !err.hint[0])
        sp_error_hint(&err, "check that the folder of %s exists and is writable", outpath);
      rc = cli_report(&err);
      goto undo;
    }
  }
  if (plotdir) {
    cli_created_note(&made, plotdir);
    cli_created_snapshot(&made, plotdir);
    sp_status ps = sp_fitplot_draw(&plan, t, &po, &charts, &err);
    for (size_t i = 0; i < charts.ncharts; i++) {
      const sp_plot_output *co = &charts.charts[i].out;
      cli_created_note_new(&made, co->data);
      cli_created_note_new(&made, co->script);
      cli_created_note_new(&made, co->png);
      cli_created_note_new(&made, co->svg);
    }
    if (ps != SP_OK) {
      rc = cli_report(&err);
      goto undo;
    }
  }
  if (archive && archive_fit(archive, text, outpath, column, &charts, force, &err) != SP_OK) {
    rc = cli_report(&err);
    goto undo;
  }
  if (json) {
    printf("%s\n", text);
    /* The JSON text stays alone on stdout. */
    if (plotdir) cli_plot_print(stderr, &charts, plotdir);
  } else {
    printf("%s: column %s", t->path, col->name);
    if (col->unit_text) printf(" [%s]", col->unit_text);
    printf(", %zu value%s used, %zu missing\n", g.pooled.n, g.pooled.n == 1 ? "" : "s",
           g.pooled_missing);
    printf("sha256 %s, %llu bytes\n", t->sha256, (unsigned long long)t->size);
    for (size_t i = 0; i < g.ngroups; i++) {
      char title[SP_FIT_TEXT_MAX + 64];
      snprintf(title, sizeof title, "%s = %s", by, g.groups[i].label);
      if (g.groups[i].status != SP_OK) {
        printf("\n%s: not fitted: %s\n", title, g.groups[i].message);
        continue;
      }
      print_fit(stdout, &g.groups[i].fit, title);
    }
    print_fit(stdout, &g.pooled, by ? "pooled" : col->name);
    if (by) print_lots(stdout, &g, by);
    if (outpath && g.pooled.chosen >= 0) printf("\nfit record written to %s\n", outpath);
    if (plotdir) {
      printf("\n");
      cli_plot_print(stdout, &charts, plotdir);
    }
    if (archive) printf("archive written to %s/\n", archive);
    printf("\n");
    cli_print_caution(stdout);
  }
  if (g.pooled.chosen < 0) {
    /* Every family skipped (the data lie outside their supports, are all
     * equal, ...) is a data problem; a family that failed numerically
     * makes it a numerical one. */
    int failed = 0;
    for (size_t i = 0; i < g.pooled.ncand; i++)
      failed |= g.pooled.cand[i].status == SP_FIT_FAILED;
    fprintf(stderr, "scatterprop: error: %s: column %s: no family chosen: %s\n",
            t->path, col->name, g.pooled.reason);
    fprintf(stderr, "  hint: the table gives each family's reason%s%s\n",
            outpath ? "; nothing was written to " : "", outpath ? outpath : "");
    rc = failed ? CLI_NUMERIC : CLI_DATA;
  }
  if (rc == CLI_OK && cli_interrupted()) {
    fprintf(stderr, "scatterprop: interrupted while the outputs were being written; they "
                    "were completed first\n");
    rc = cli_interrupt_code();
  }
  goto done;
undo : {
  size_t removed = cli_created_undo(&made);
  if (removed)
    fprintf(stderr,
            "scatterprop: the %zu file%s and folder%s this fit had written were "
            "removed again\n",
            removed, removed == 1 ? "" : "s", removed == 1 ? "" : "s");
  if (cli_interrupted()) {
    fprintf(stderr, "scatterprop: interrupted while writing the outputs\n");
    rc = cli_interrupt_code();
  }
}
done:
  cli_created_free(&made);
  sp_fitplot_charts_free(&charts);
  sp_fitplot_plan_clear(&plan);
  free(text);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  free(fambuf);
  free(famnames);
  return rc;
}
