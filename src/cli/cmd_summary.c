/* scatterprop summary: written by the ingest work (next commit). */
#include "cli.h"

void cli_summary_help(FILE *out)
{
  fprintf(out, "Usage: scatterprop summary FILE.csv\n");
}

int cli_summary_run(int argc, char **argv)
{
  return cli_usage("summary", "summary is being written");
}
