/* Prints every family's functions on a grid, for tests/dist_scipy.py to
 * compare with scipy.stats.
 *
 * Usage: dist_driver              prints the grid (format below);
 *        dist_driver --skip WHY   prints WHY and exits 77 (ctest "skipped"),
 *                                 used when no python3 was found.
 *
 * Format, one record per line, numbers with 17 significant digits:
 *   F <family> <nparam> <theta...>     a parameter set; the lines below
 *                                      belong to it
 *   X <x> <logpdf> <cdf_P> <cdf_Q>     x on a grid of quantiles
 *   U <p> <quantile_P(p)> <quantile_Q(p)>
 *   M <mean> <variance> */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_errno.h>

#include "scatterprop/dist.h"

typedef struct {
  const char *name;
  double theta[SP_FAMILY_MAX_PARAMS];
} pset;

/* Parameter sets chosen to cover small, moderate and large shapes and
 * truncation near the mean, one-sided, and far in either tail. */
static const pset sets[] = {
  {"normal", {0.0, 1.0}},
  {"normal", {-3.5, 2.25}},
  {"lognormal", {0.0, 1.0}},
  {"lognormal", {2.3, 0.25}},
  {"weibull", {1.5, 2.0}},
  {"weibull", {0.5, 1000.0}},
  {"weibull", {8.0, 1.0}},
  {"weibull3", {2.2, 3.0, 10.0}},
  {"gamma", {0.5, 2.0}},
  {"gamma", {3.7, 0.8}},
  {"gamma", {50.0, 1.5}},
  {"gamma", {0.05, 1.0}},
  {"exponential", {0.5}},
  {"exponential2", {2.0, 5.0}},
  {"gumbel_max", {1.0, 2.0}},
  {"gumbel_min", {-2.0, 0.5}},
  {"logistic", {0.5, 1.5}},
  {"loglogistic", {3.0, 2.0}},
  {"loglogistic", {1.5, 10.0}},
  {"uniform", {-1.0, 3.0}},
  {"truncnormal", {0.0, 1.0, -1.0, 2.0}},
  {"truncnormal", {0.0, 1.0, 3.0, INFINITY}},
  {"truncnormal", {0.0, 1.0, 8.0, 9.0}},
  {"truncnormal", {1.0, 2.0, -INFINITY, -4.0}},
  {"truncnormal", {5.0, 1.0, -INFINITY, INFINITY}},
  {"triangular", {0.0, 1.0, 4.0}},
  {"triangular", {0.0, 0.0, 1.0}},
  {"beta", {2.0, 3.0, 0.0, 1.0}},
  {"beta", {0.5, 0.5, -1.0, 2.0}},
  {"beta", {0.2, 7.0, 0.0, 10.0}},
  {"beta", {30.0, 40.0, 0.0, 1.0}},
};

static const double tails[] = {1e-200, 1e-50, 1e-12, 1e-6, 1e-3, 0.05, 0.25, 0.5};
static const double probs[] = {1e-200, 1e-50, 1e-12, 1e-6, 1e-3, 0.05, 0.25,
                               0.5,    0.75,  0.95,  0.999};

static void print_x(const sp_family *f, const double *t, double x)
{
  if (!isfinite(x)) return;
  printf("X %.17g %.17g %.17g %.17g\n", x, f->logpdf(t, x), f->cdf_P(t, x),
         f->cdf_Q(t, x));
}

int main(int argc, char **argv)
{
  if (argc >= 2 && strcmp(argv[1], "--skip") == 0) {
    printf("skipped: %s\n", argc >= 3 ? argv[2] : "no reason given");
    return 77;
  }
  gsl_set_error_handler_off();
  for (size_t i = 0; i < sizeof sets / sizeof sets[0]; i++) {
    const sp_family *f = sp_family_find(sets[i].name);
    if (!f) {
      fprintf(stderr, "dist_driver: unknown family %s\n", sets[i].name);
      return 1;
    }
    const double *t = sets[i].theta;
    if (f->check(t, NULL) != SP_OK) {
      fprintf(stderr, "dist_driver: %s: parameters rejected\n", f->name);
      return 1;
    }
    printf("F %s %zu", f->name, f->nparam);
    for (size_t k = 0; k < f->nparam; k++) printf(" %.17g", t[k]);
    printf("\n");
    for (size_t k = 0; k < sizeof tails / sizeof tails[0]; k++) {
      print_x(f, t, f->quantile_P(t, tails[k]));
      print_x(f, t, f->quantile_Q(t, tails[k]));
    }
    for (size_t k = 0; k < sizeof probs / sizeof probs[0]; k++)
      printf("U %.17g %.17g %.17g\n", probs[k], f->quantile_P(t, probs[k]),
             f->quantile_Q(t, probs[k]));
    printf("M %.17g %.17g\n", f->mean(t), f->variance(t));
  }
  return 0;
}
