/* scatterprop command-line tool: parses arguments, calls the library,
 * prints.  No numerics and no file formats live here. */
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_errno.h>

#include "scatterprop/core.h"

int main(int argc, char **argv)
{
  gsl_set_error_handler_off();
  if (argc > 1 && strcmp(argv[1], "--version") == 0) {
    printf("scatterprop %s\n", sp_version());
    return 0;
  }
  fprintf(stderr, "scatterprop: error: no command given\n");
  return 2;
}
