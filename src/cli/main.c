/* scatterprop command-line tool: parses arguments, calls the library,
 * prints.  No numerics and no file formats live here. */
#include <errno.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_errno.h>

#include "cli.h"

static const cli_command commands[] = {
    {"summary", "check an inspection CSV and describe its numeric columns", cli_summary_run,
     cli_summary_help},
    {"fit", "fit distribution families to a column, rank them, write a fit record", cli_fit_run,
     cli_fit_help},
    {"propagate", "run a model by Monte Carlo: spread, limits, sensitivity, run record",
     cli_propagate_run, cli_propagate_help},
    {"plot", "redraw the charts of a fit or a run from its record", cli_plot_run, cli_plot_help},
    {"report", "one self-contained HTML report of a run, its fits and its data", cli_report_run,
     cli_report_help},
    {"replay", "rerun a fit or run record and compare with what it recorded", cli_replay_run,
     cli_replay_help},
};
static const size_t ncommands = sizeof commands / sizeof commands[0];

static void main_help(FILE *out)
{
  fprintf(out,
          "Usage: scatterprop COMMAND [OPTIONS]\n"
          "\n"
          "From measured scatter to a predicted spread of performance: read\n"
          "inspection CSVs, fit distributions, propagate them through a model.\n"
          "\n"
          "Commands:\n");
  for (size_t i = 0; i < ncommands; i++)
    fprintf(out, "  %-10s %s\n", commands[i].name, commands[i].summary);
  fprintf(out, "\n"
               "Run 'scatterprop COMMAND --help' for a command's options.\n"
               "Exit codes: 0 ok, 1 differs, 2 usage, 3 bad input data, 4 bad model,\n"
               "5 numerical failure, 6 I/O error, 130 interrupted (Ctrl-C; 143 for SIGTERM).\n"
               "\n");
  cli_print_caution(out);
}

/* Output that could not be written is an I/O error (exit 6), never a
 * success: 'scatterprop summary x.csv --json > out.json' on a full disk
 * must not exit 0 with half a document. */
static int finish(int rc)
{
  if (fflush(stdout) != 0 || ferror(stdout)) {
    int e = errno;
    fprintf(stderr,
            "scatterprop: error: cannot write the standard output: %s\n"
            "  hint: check the free space or the device it is redirected to\n",
            e ? strerror(e) : "write error");
    return rc == CLI_OK ? CLI_IO : rc;
  }
  return rc;
}

int main(int argc, char **argv)
{
  gsl_set_error_handler_off();
  if (argc < 2) {
    main_help(stderr);
    return CLI_USAGE;
  }
  const char *cmd = argv[1];
  if (strcmp(cmd, "--help") == 0 || strcmp(cmd, "-h") == 0 || strcmp(cmd, "help") == 0) {
    main_help(stdout);
    return finish(CLI_OK);
  }
  if (strcmp(cmd, "--version") == 0) {
    printf("scatterprop %s (git %s, %s, GSL %s)\n", sp_version(), sp_git_revision(),
           sp_build_compiler(), sp_build_gsl_version());
    return finish(CLI_OK);
  }
  for (size_t i = 0; i < ncommands; i++) {
    if (strcmp(cmd, commands[i].name) != 0) continue;
    for (int a = 2; a < argc; a++) {
      if (strcmp(argv[a], "--help") == 0 || strcmp(argv[a], "-h") == 0) {
        commands[i].help(stdout);
        return finish(CLI_OK);
      }
    }
    return finish(commands[i].run(argc - 1, argv + 1));
  }
  fprintf(stderr, "scatterprop: error: unknown command '%s'\n"
                  "  hint: run 'scatterprop --help' for the list of commands\n", cmd);
  return CLI_USAGE;
}
