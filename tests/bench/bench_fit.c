/* Fit benchmark driver (run by tests/bench/bench_fit.py, which times scipy
 * on the same data in the same run and prints the ratios).
 *
 *   bench_fit weibull FILE     2-parameter Weibull MLE of the raw float64
 *                              values in FILE (native byte order); prints
 *                              the best of 5 wall-clock times and the fit
 *   bootstrap FILE B THREADS   weibull fit of FILE, then the parametric
 *                              bootstrap of A^2, D, W^2 with B refitted
 *                              replicates on THREADS threads; prints the
 *                              best of 3 times and the p-values */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include <gsl/gsl_errno.h>

#include "scatterprop/fit.h"

static double now(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static double *read_f64(const char *path, size_t *n)
{
  FILE *f = fopen(path, "rb");
  if (!f) return NULL;
  fseek(f, 0, SEEK_END);
  long len = ftell(f);
  fseek(f, 0, SEEK_SET);
  *n = (size_t)len / sizeof(double);
  double *x = malloc(*n * sizeof *x);
  if (x && fread(x, sizeof *x, *n, f) != *n) {
    free(x);
    x = NULL;
  }
  fclose(f);
  return x;
}

int main(int argc, char **argv)
{
  gsl_set_error_handler_off();
  if (argc < 3) {
    fprintf(stderr, "usage: bench_fit weibull FILE | bench_fit bootstrap FILE B THREADS\n");
    return 2;
  }
  size_t n = 0;
  double *x = read_f64(argv[2], &n);
  if (!x || n < 2) {
    fprintf(stderr, "bench_fit: cannot read %s\n", argv[2]);
    return 6;
  }
  const sp_family *w = sp_family_find("weibull");
  sp_error e;
  sp_error_clear(&e);
  if (strcmp(argv[1], "weibull") == 0) {
    double best = INFINITY, th[2] = {NAN, NAN};
    for (int r = 0; r < 5; r++) {
      int fixed[2] = {0, 0};
      sp_fit_mle_info info;
      double t0 = now();
      if (sp_fit_mle(w, x, n, fixed, th, &info, &e) != SP_OK) {
        fprintf(stderr, "bench_fit: %s\n", e.msg);
        return 5;
      }
      double t = now() - t0;
      if (t < best) best = t;
    }
    printf("n %zu seconds %.6f shape %.12g scale %.12g\n", n, best, th[0], th[1]);
  } else if (strcmp(argv[1], "bootstrap") == 0 && argc == 5) {
    size_t B = (size_t)strtoull(argv[3], NULL, 10);
    int threads = atoi(argv[4]);
    const char *fams[1] = {"weibull"};
    sp_fit_options o;
    sp_fit_options_init(&o);
    o.families = fams;
    o.nfamilies = 1;
    o.pvalue = SP_FIT_PVALUE_NONE;
    sp_fit_result r;
    if (sp_fit_run(x, n, &o, &r, &e) != SP_OK || r.cand[0].status != SP_FIT_OK) {
      fprintf(stderr, "bench_fit: %s\n", e.msg);
      return 5;
    }
    double best = INFINITY;
    for (int rep = 0; rep < 3; rep++) {
      double t0 = now();
      if (sp_fit_bootstrap(&r.cand[0], n, B, 1, 0, threads, NULL, &e) != SP_OK) {
        fprintf(stderr, "bench_fit: %s\n", e.msg);
        return 5;
      }
      double t = now() - t0;
      if (t < best) best = t;
    }
    printf("n %zu B %zu threads %d seconds %.6f A2 %.6g p %.6g D_p %.6g W2_p %.6g\n", n, B,
           threads, best, r.cand[0].gof[0].stat, r.cand[0].gof[0].p, r.cand[0].gof[1].p,
           r.cand[0].gof[2].p);
    sp_fit_result_clear(&r);
  } else {
    fprintf(stderr, "bench_fit: unknown mode '%s'\n", argv[1]);
    return 2;
  }
  free(x);
  return 0;
}
