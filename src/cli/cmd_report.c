/* scatterprop report: one self-contained HTML report of a run, from its
 * run record, the fit records and the data files they name. */
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "cli.h"
#include "scatterprop/record.h"
#include "scatterprop/reportgen.h"

void cli_report_help(FILE *out)
{
  fprintf(out,
          "Usage: scatterprop report RUN.json [--out report.html] [--force] [--plots DIR]\n"
          "                          [--threads K]\n"
          "\n"
          "Writes one HTML file (no external files, no scripts) with the provenance of the\n"
          "run (every input file with its SHA-256, seeds, options, command lines), data\n"
          "summaries, every fit's ranked candidates and charts, the model, the results with\n"
          "their Monte Carlo uncertainty, the exceedance probabilities of the limits and\n"
          "the sensitivity of each output, with the run's charts.\n"
          "\n"
          "Before anything is written, each data file is read again and its SHA-256 checked\n"
          "against its fit record, and each fit record and the model against the run\n"
          "record. The run is then repeated from the record (same seed and options) to draw\n"
          "its charts, and every recorded figure must come out the same; with --plots DIR\n"
          "the charts that 'propagate --plots DIR' drew are used instead.\n"
          "\n"
          "Options:\n"
          "  --out FILE     the report (default: report.html beside RUN.json)\n"
          "  --force        replace an existing report\n"
          "  --plots DIR    take the run's charts from DIR instead of repeating the run\n"
          "  --threads K    threads of the repeated run (default: all cores)\n"
          "  --help         show this help\n"
          "\n"
          "Charts need gnuplot; without it the report says where each chart would be.\n"
          "Paths in the records are as they were given: make the report from the folder\n"
          "the analysis ran in. docs/report.md describes the report.\n"
          "Exit codes: 0 ok, 1 the repeated run differs from the record, 2 usage, 3 bad or\n"
          "changed input (a record, a data file), 4 bad model, 5 numerical failure or too\n"
          "little memory, 6 I/O error (a file missing, the report exists).\n"
          "\n");
  cli_print_caution(out);
}

int cli_report_run(int argc, char **argv)
{
  const char *record = NULL;
  int rc = CLI_OK;
  sp_reportgen_options o;
  sp_reportgen_options_init(&o);
  for (int i = 1; i < argc && rc == CLI_OK; i++) {
    const char *v;
    int m;
    unsigned long long u;
    if ((m = cli_opt_value("report", argc, argv, &i, "--out", &v, &rc)) != 0) {
      if (m > 0) o.out = v;
    } else if ((m = cli_opt_value("report", argc, argv, &i, "--plots", &v, &rc)) != 0) {
      if (m > 0) o.plots_dir = v;
    } else if ((m = cli_opt_value("report", argc, argv, &i, "--threads", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("report", "--threads", v, &u, &rc)) {
        if (u < 1 || u > 1024) rc = cli_usage("report", "--threads takes 1 to 1024");
        o.threads = (int)u;
      }
    } else if (cli_opt_flag(argv, i, "--force")) {
      o.overwrite = 1;
    } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
      rc = cli_usage("report", "unknown option '%s'", argv[i]);
    } else if (!record) {
      record = argv[i];
    } else {
      rc = cli_usage("report", "one run record at a time (got '%s' and '%s')", record, argv[i]);
    }
  }
  if (rc == CLI_OK && !record) rc = cli_usage("report", "no run record given");
  if (rc != CLI_OK) return rc;

  /* The command line and the date shown in the report. */
  size_t len = strlen("scatterprop") + 1;
  for (int i = 0; i < argc; i++) len += strlen(argv[i]) + 1;
  char *command = malloc(len);
  if (!command) {
    fprintf(stderr, "scatterprop: error: out of memory\n");
    return CLI_NUMERIC;
  }
  strcpy(command, "scatterprop");
  for (int i = 0; i < argc; i++) {
    strcat(command, " ");
    strcat(command, argv[i]);
  }
  char created[SP_RECORD_TIME_LEN];
  sp_record_time_utc((int64_t)time(NULL), created);
  o.command = command;
  o.created = created;
  char tdir[SP_PLOT_PATH_MAX];
  sp_plot_options po;
  cli_plot_options(&po, ".", 0, tdir, sizeof tdir);
  o.template_dir = po.template_dir;

  sp_error err;
  sp_error_clear(&err);
  sp_reportgen_result res;
  if (sp_reportgen_write(record, &o, &res, &err) != SP_OK) {
    rc = cli_report(&err);
  } else {
    printf("report written to %s: %zu figure%s, %zu drawn%s\n", res.path, res.nfigures,
           res.nfigures == 1 ? "" : "s", res.nembedded,
           res.rerun ? "; the repeated run matched the record" : "");
    if (res.note[0]) printf("  %s\n", res.note);
  }
  free(command);
  return rc;
}
