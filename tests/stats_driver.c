/* Reference driver for tests/stats_scipy.py: reads one number per line from
 * a file (blank lines ignored), runs sp_stats_describe and prints each field
 * as "name value" with %.17g, so the script can compare them with numpy and
 * scipy.  "stats_driver --skip REASON" prints REASON and exits 77, the ctest
 * skip code (used when no Python interpreter was found). */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>

#include "scatterprop/stats.h"

int main(int argc, char **argv)
{
  gsl_set_error_handler_off();
  if (argc == 3 && strcmp(argv[1], "--skip") == 0) {
    printf("SKIP: %s\n", argv[2]);
    return 77;
  }
  if (argc != 2) {
    fprintf(stderr, "usage: stats_driver FILE\n");
    return 2;
  }
  FILE *f = fopen(argv[1], "r");
  if (!f) {
    perror(argv[1]);
    return 1;
  }
  size_t n = 0, cap = 256;
  double *x = malloc(cap * sizeof *x);
  char line[128];
  long lineno = 0;
  while (x && fgets(line, sizeof line, f)) {
    lineno++;
    line[strcspn(line, "\r\n")] = '\0';
    if (line[0] == '\0') continue;
    sp_error err;
    double v;
    if (sp_parse_double(line, '.', &v, &err) != SP_OK) {
      fprintf(stderr, "%s:%ld: %s\n", argv[1], lineno, err.msg);
      return 1;
    }
    if (n == cap) {
      cap *= 2;
      double *g = realloc(x, cap * sizeof *x);
      if (!g) free(x);
      x = g;
    }
    if (x) x[n++] = v;
  }
  fclose(f);
  if (!x) {
    fprintf(stderr, "out of memory\n");
    return 1;
  }
  sp_describe d;
  sp_error err;
  if (sp_stats_describe(x, n, NULL, &d, &err) != SP_OK) {
    fprintf(stderr, "describe: %s\n", err.msg);
    free(x);
    return 1;
  }
  printf("n %zu\nmean %.17g\nsd %.17g\nmin %.17g\nmax %.17g\n", d.n, d.mean, d.sd,
         d.min, d.max);
  printf("q1 %.17g\nmedian %.17g\nq3 %.17g\nskewness %.17g\nkurtosis %.17g\n", d.q1,
         d.median, d.q3, d.skewness, d.kurtosis);
  free(x);
  return 0;
}
