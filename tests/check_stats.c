/* Tests for the stats module: describe, selection, quantiles.
 *
 * Sources of reference values:
 *  - NIST Statistical Reference Datasets, Univariate Summary Statistics
 *    (https://www.itl.nist.gov/div898/strd/univ/): certified mean and
 *    standard deviation of NumAcc1-4 and PiDigits (tests/data/strd_*.csv,
 *    certified values in each file's comment lines);
 *  - closed forms computed by hand (stated beside each check);
 *  - numpy 1.24.2 np.percentile(..., method='linear') for the quantiles;
 *  - a full sort (qsort) for every selection.
 * The live comparison with scipy over random datasets is tests/stats_scipy.py
 * (registered by tests/stats.cmake). */
#include "sp_test.h"

#include <stdint.h>
#include <string.h>

#include "scatterprop/stats.h"

/* ---- helpers ------------------------------------------------------------- */

/* splitmix64: Steele, G.L., Lea, D. & Flood, C.H. (2014), "Fast splittable
 * pseudorandom number generators", OOPSLA 2014, 453-472.  Fixed seeds make
 * every run see the same high-entropy inputs. */
static uint64_t splitmix64(uint64_t *s)
{
  uint64_t z = (*s += 0x9e3779b97f4a7c15u);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9u;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebu;
  return z ^ (z >> 31);
}

/* uniform on [0, 1) with 53 random bits */
static double unif(uint64_t *s) { return (double)(splitmix64(s) >> 11) * 0x1p-53; }

static int cmp_double(const void *pa, const void *pb)
{
  double a = *(const double *)pa, b = *(const double *)pb;
  return (a > b) - (a < b);
}

static sp_describe describe_ok(const double *x, size_t n)
{
  sp_describe d;
  sp_error err;
  sp_error_clear(&err);
  sp_status st = sp_stats_describe(x, n, NULL, &d, &err);
  ck_assert_msg(st == SP_OK, "describe failed: %s", err.msg);
  return d;
}

/* Reads a one-column CSV of tests/data: '#' comment lines, a header line,
 * then one number per line.  Returns owned values and their count. */
static double *read_column(const char *name, size_t *n)
{
  char path[1024];
  snprintf(path, sizeof path, "%s/%s", SP_TEST_DATA_DIR, name);
  FILE *f = fopen(path, "r");
  ck_assert_msg(f != NULL, "cannot open %s", path);
  size_t cap = 1024, len = 0;
  double *v = malloc(cap * sizeof *v);
  ck_assert_ptr_nonnull(v);
  char line[256];
  int header_seen = 0;
  long lineno = 0;
  while (fgets(line, sizeof line, f)) {
    lineno++;
    line[strcspn(line, "\r\n")] = '\0';
    if (line[0] == '#' || line[0] == '\0') continue;
    if (!header_seen) {
      header_seen = 1;
      continue;
    }
    sp_error err;
    double x;
    ck_assert_msg(sp_parse_double(line, '.', &x, &err) == SP_OK, "%s:%ld: %s",
                  path, lineno, err.msg);
    if (len == cap) {
      cap *= 2;
      v = realloc(v, cap * sizeof *v);
      ck_assert_ptr_nonnull(v);
    }
    v[len++] = x;
  }
  fclose(f);
  *n = len;
  return v;
}

/* ---- NIST StRD ------------------------------------------------------------- */

typedef struct {
  const char *file;
  size_t n;
  double mean, sd;         /* certified values (NIST StRD) */
  double min_lre_mean, min_lre_sd;
} strd_case;

/* The LRE bounds are what a correct double-precision two-pass algorithm
 * can promise, not what this one happened to reach:
 *  - NumAcc1 and PiDigits are exactly representable in a few bits, so the
 *    mean and s are accurate to the last bits: bound 13 for s of PiDigits
 *    (its certified s is itself given to 15 digits), 14 for NumAcc1;
 *  - NumAcc2 (1.2 +- 0.1): the values are not exact binary fractions, but
 *    their representation errors are tiny next to the spread: 13;
 *  - NumAcc3 (1000000.2 +- 0.1) and NumAcc4 (10000000.2 +- 0.1): each
 *    stored value is off by up to half an ulp (5.8e-11 near 1e6, 9.3e-10
 *    near 1e7), i.e. up to 5.8e-10 and 9.3e-9 of the deviation 0.1, so s
 *    of the data as stored differs from the certified s from about the
 *    10th and 9th digit on: bounds 9 and 8.  Their means stay accurate to
 *    ~15 digits.
 * Measured when this test was written (two-pass with Neumaier sums):
 * LRE of the mean 17 (exact) for all five; LRE of s: NumAcc1 17 (exact),
 * NumAcc2 15.56, NumAcc3 9.46, NumAcc4 8.25, PiDigits 15.21.  The test
 * prints them. */
static const strd_case strd_cases[] = {
    {"strd_numacc1.csv", 3, 10000002.0, 1.0, 14, 14},
    {"strd_numacc2.csv", 1001, 1.2, 0.1, 14, 13},
    {"strd_numacc3.csv", 1001, 1000000.2, 0.1, 14, 9},
    {"strd_numacc4.csv", 1001, 10000000.2, 0.1, 14, 8},
    {"strd_pidigits.csv", 5000, 4.5348, 2.86733906028871, 14, 13},
};

START_TEST(test_strd)
{
  const strd_case *c = &strd_cases[_i];
  size_t n;
  double *x = read_column(c->file, &n);
  ck_assert_uint_eq(n, c->n);
  sp_describe d = describe_ok(x, n);
  double lm = sp_lre(d.mean, c->mean), ls = sp_lre(d.sd, c->sd);
  printf("%-18s LRE mean %5.2f  sd %5.2f\n", c->file, lm, ls);
  ck_assert_msg(lm >= c->min_lre_mean, "%s: LRE of mean %.2f < %.0f (mean %.17g)",
                c->file, lm, c->min_lre_mean, d.mean);
  ck_assert_msg(ls >= c->min_lre_sd, "%s: LRE of sd %.2f < %.0f (sd %.17g)", c->file,
                ls, c->min_lre_sd, d.sd);
  free(x);
}
END_TEST

/* ---- describe: closed forms and edge cases --------------------------------- */

START_TEST(test_describe_closed_form)
{
  /* x = 1, 2, 3, 4, 10: mean 4, deviations -3 -2 -1 0 6, so
   * sum d^2 = 50, s = sqrt(50/4); m2 = 10, m3 = 180/5 = 36,
   * m4 = 1394/5 = 278.8; g1 = 36 / 10^1.5, g2 = 278.8/100 - 3 = -0.212;
   * definition 7 quartiles of 5 sorted values are x(1), x(2), x(3)
   * (0-based): 2, 3, 4.  (Closed forms by hand.) */
  const double x[] = {4, 10, 1, 3, 2};
  double work[5];
  sp_describe d;
  sp_error err;
  ck_assert_int_eq(sp_stats_describe(x, 5, work, &d, &err), SP_OK);
  ck_assert_uint_eq(d.n, 5);
  ASSERT_REL(d.mean, 4.0, EPS);
  ASSERT_REL(d.sd, sqrt(12.5), 2 * EPS);
  ck_assert(d.min == 1.0 && d.max == 10.0);
  ck_assert(d.q1 == 2.0 && d.median == 3.0 && d.q3 == 4.0);
  ASSERT_REL(d.skewness, 36.0 / pow(10.0, 1.5), 4 * EPS);
  ASSERT_REL(d.kurtosis, -0.212, 64 * EPS); /* 2.788 - 3 cancels 4 bits */
  /* the input is not modified */
  ck_assert(x[0] == 4 && x[1] == 10 && x[2] == 1 && x[3] == 3 && x[4] == 2);
}
END_TEST

START_TEST(test_describe_edges)
{
  sp_describe d;
  sp_error err;
  sp_error_clear(&err);
  const double one = 3.5;
  ck_assert_int_eq(sp_stats_describe(&one, 0, NULL, &d, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "no values to describe");

  const double bad[] = {1.0, NAN, 2.0};
  ck_assert_int_eq(sp_stats_describe(bad, 3, NULL, &d, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "value 2 of 3 is not finite");
  const double badinf[] = {1.0, 2.0, -INFINITY};
  ck_assert_int_eq(sp_stats_describe(badinf, 3, NULL, &d, &err), SP_EDATA);

  /* n = 1: mean and quartiles are the value, no spread or shape. */
  d = describe_ok(&one, 1);
  ck_assert(d.mean == 3.5 && d.min == 3.5 && d.max == 3.5);
  ck_assert(d.q1 == 3.5 && d.median == 3.5 && d.q3 == 3.5);
  ck_assert(isnan(d.sd) && isnan(d.skewness) && isnan(d.kurtosis));

  /* n = 2: s = |a - b| / sqrt(2); skewness needs n >= 3 (header). */
  const double two[] = {1.0, 4.0};
  d = describe_ok(two, 2);
  ASSERT_REL(d.mean, 2.5, EPS);
  ASSERT_REL(d.sd, 3.0 / sqrt(2.0), 2 * EPS);
  ASSERT_REL(d.q1, 1.75, EPS); /* 1 + 0.25 x 3 */
  ASSERT_REL(d.q3, 3.25, EPS);
  ck_assert(isnan(d.skewness) && isnan(d.kurtosis));

  /* n = 3: skewness defined, kurtosis needs n >= 4.  x = 0, 0, 3: mean 1,
   * d = -1 -1 2, m2 = 2, m3 = 2, g1 = 2 / 2^1.5 = 1/sqrt(2). */
  const double three[] = {0.0, 3.0, 0.0};
  d = describe_ok(three, 3);
  ASSERT_REL(d.skewness, 1.0 / sqrt(2.0), 4 * EPS);
  ck_assert(isnan(d.kurtosis));

  /* all values equal: sd exactly 0, shape undefined */
  double eq[100];
  for (size_t i = 0; i < 100; i++) eq[i] = 0.1;
  d = describe_ok(eq, 100);
  ck_assert(d.mean == 0.1 && d.sd == 0.0 && d.median == 0.1);
  ck_assert(isnan(d.skewness) && isnan(d.kurtosis));

  /* symmetric data have zero skewness: -2 -1 0 1 2 exactly; kurtosis
   * m4/m2^2 - 3 = (34/5)/(2^2) - 3 = -1.3 (closed form). */
  const double sym[] = {2, -1, 0, 1, -2};
  d = describe_ok(sym, 5);
  ck_assert(d.mean == 0.0 && d.skewness == 0.0);
  ASSERT_REL(d.kurtosis, -1.3, 4 * EPS);
}
END_TEST

START_TEST(test_describe_extremes)
{
  /* Values within a few ulps of DBL_MAX: DBL_MAX - k ulp for k = 0..4 with
   * ulp = 2^971.  mean = DBL_MAX - 2 ulp, s = sqrt(var{0,1,2,3,4}) ulp =
   * sqrt(2.5) x 2^971 (closed form).  The naive sum overflows. */
  double x[5];
  const double ulp = ldexp(1.0, 971);
  for (int k = 0; k < 5; k++) x[k] = DBL_MAX - k * ulp;
  sp_describe d = describe_ok(x, 5);
  ck_assert(d.mean == DBL_MAX - 2 * ulp);
  ASSERT_REL(d.sd, sqrt(2.5) * ulp, 4 * EPS);
  ck_assert(d.median == DBL_MAX - 2 * ulp);
  ck_assert(isfinite(d.skewness) && fabs(d.skewness) < 1e-15);
  ASSERT_REL(d.kurtosis, 34.0 / 5.0 / 4.0 - 3.0, 8 * EPS); /* as above: -1.3 */

  /* {DBL_MAX, DBL_MAX/2}: mean 0.75 DBL_MAX, s = (DBL_MAX/2)/sqrt(2). */
  const double y[] = {DBL_MAX, DBL_MAX / 2};
  d = describe_ok(y, 2);
  ASSERT_REL(d.mean, 0.75 * DBL_MAX, EPS);
  ASSERT_REL(d.sd, DBL_MAX / 2 / sqrt(2.0), 2 * EPS);
  ASSERT_REL(d.q1, 0.625 * DBL_MAX, EPS);
  ASSERT_REL(d.q3, 0.875 * DBL_MAX, EPS);

  /* Opposite signs near DBL_MAX: s = sqrt(2) DBL_MAX does not fit; the
   * quartiles exist (the difference b - a overflows and is avoided). */
  const double z[] = {-DBL_MAX, DBL_MAX};
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_stats_describe(z, 2, NULL, &d, &err), SP_ENUMERIC);
  ck_assert_msg(strstr(err.msg, "exceeds the range of a double") != NULL, "%s", err.msg);
  double zc[2] = {DBL_MAX, -DBL_MAX};
  ASSERT_ABS(sp_quantile_select(zc, 2, 0.5), 0.0, 0.0);
  ASSERT_REL(sp_quantile_sorted(z, 2, 0.25), -0.5 * DBL_MAX, EPS);
  /* {-M, 0, M}: s^2 = 2 M^2 / 2, so s = M = DBL_MAX just fits, and the
   * median is 0 (closed forms). */
  const double z3[] = {-DBL_MAX, 0.0, DBL_MAX};
  d = describe_ok(z3, 3);
  ck_assert(d.mean == 0.0 && d.median == 0.0 && d.skewness == 0.0);
  ASSERT_REL(d.sd, DBL_MAX, 2 * EPS);
  ASSERT_REL(d.q1, -0.5 * DBL_MAX, EPS);

  /* Subnormal data: k x 2^-1030, k = 1..5.  Squares of these underflow to
   * zero in unscaled arithmetic; the result s = sqrt(2.5) x 2^-1030 is
   * itself subnormal with 44 significant bits, hence rtol 2^-43. */
  double t[5];
  for (int k = 0; k < 5; k++) t[k] = (k + 1) * ldexp(1.0, -1030);
  d = describe_ok(t, 5);
  ck_assert(d.mean == 3 * ldexp(1.0, -1030));
  ASSERT_REL(d.sd, sqrt(2.5) * ldexp(1.0, -1030), 0x1p-43);
  ASSERT_REL(d.kurtosis, -1.3, 8 * EPS);

  /* Shift invariance at a large offset: 1e15 + {1, 2, 3, 4, 10} has the same
   * s, skewness and kurtosis as the closed-form case above (all values and
   * the mean 1e15 + 4 are exact doubles). */
  const double u[] = {1e15 + 4, 1e15 + 10, 1e15 + 1, 1e15 + 3, 1e15 + 2};
  d = describe_ok(u, 5);
  ck_assert(d.mean == 1e15 + 4);
  ASSERT_REL(d.sd, sqrt(12.5), 2 * EPS);
  ASSERT_REL(d.skewness, 36.0 / pow(10.0, 1.5), 4 * EPS);
}
END_TEST

/* ---- selection ------------------------------------------------------------- */

enum { PAT_RANDOM, PAT_SORTED, PAT_REVERSED, PAT_EQUAL, PAT_ORGAN, PAT_FEW,
       PAT_KILLER, PAT_COUNT };
static const char *pat_name[] = {"random", "sorted", "reversed", "all-equal",
                                 "organ-pipe", "few-distinct", "median-3-killer"};

/* Fills a[0..n) with a pattern.  PAT_KILLER is the median-of-3 killer
 * sequence of Musser (1997) for even n, construction from memory:
 * 1, k+2, 3, k+4, ..., then 2, 4, ..., 2k (k = n/2).  Against this
 * implementation it drives most
 * selections into the heap fallback (measured with an instrumented build
 * while writing this test: 36 of the 64 k at n = 64, 960 of 1000 k at
 * n = 1000), so the fallback is exercised here. */
static void fill(double *a, size_t n, int pat, uint64_t *seed)
{
  size_t h = n / 2;
  for (size_t i = 0; i < n; i++) {
    switch (pat) {
    case PAT_RANDOM: a[i] = unif(seed) * 2.0 - 1.0; break;
    case PAT_SORTED: a[i] = (double)i; break;
    case PAT_REVERSED: a[i] = (double)(n - i); break;
    case PAT_EQUAL: a[i] = 42.0; break;
    case PAT_ORGAN: a[i] = (double)(i < h ? i : n - i); break;
    case PAT_FEW: a[i] = (double)(splitmix64(seed) % 3); break;
    case PAT_KILLER:
      if (n % 2 == 0) {
        a[i] = i < h ? (i % 2 == 0 ? (double)(i + 1) : (double)(h + i + 1))
                     : (double)(2 * (i - h + 1));
      } else a[i] = (double)i;
      break;
    }
  }
}

/* Checks sp_select(a, n, k) against the sorted copy: the value, the
 * partition property, and that a is still a permutation of the input. */
static void check_select(const double *orig, const double *sorted, double *a, size_t n,
                         size_t k, const char *what)
{
  memcpy(a, orig, n * sizeof *a);
  double v = sp_select(a, n, k);
  ck_assert_msg(v == sorted[k] && a[k] == sorted[k],
                "%s n=%zu k=%zu: got %g, want %g", what, n, k, v, sorted[k]);
  /* plain loops: each Check assertion costs a write to the runner */
  size_t bad = n;
  for (size_t i = 0; i < n && bad == n; i++)
    if (i < k ? !(a[i] <= a[k]) : i > k && !(a[i] >= a[k])) bad = i;
  ck_assert_msg(bad == n, "%s n=%zu k=%zu: a[%zu] = %g on the wrong side of a[k] = %g",
                what, n, k, bad, bad < n ? a[bad] : 0.0, a[k]);
  qsort(a, n, sizeof *a, cmp_double);
  ck_assert_msg(memcmp(a, sorted, n * sizeof *a) == 0, "%s n=%zu k=%zu: not a permutation",
                what, n, k);
}

START_TEST(test_select_small_every_k)
{
  uint64_t seed = 0x5eed0001u;
  const size_t extra[] = {64, 100, 127, 128};
  for (size_t t = 0; t < 40 + sizeof extra / sizeof *extra; t++) {
    size_t n = t < 40 ? t + 1 : extra[t - 40];
    double *orig = malloc(n * sizeof *orig), *sorted = malloc(n * sizeof *sorted),
           *a = malloc(n * sizeof *a);
    for (int pat = 0; pat < PAT_COUNT; pat++) {
      fill(orig, n, pat, &seed);
      memcpy(sorted, orig, n * sizeof *orig);
      qsort(sorted, n, sizeof *sorted, cmp_double);
      for (size_t k = 0; k < n; k++) check_select(orig, sorted, a, n, k, pat_name[pat]);
    }
    free(orig);
    free(sorted);
    free(a);
  }
  double x = 1.0;
  ck_assert(isnan(sp_select(&x, 1, 1)) && x == 1.0);
  ck_assert(isnan(sp_select(NULL, 0, 0)));
}
END_TEST

START_TEST(test_select_large_sampled_k)
{
  uint64_t seed = 0x5eed0002u;
  const size_t sizes[] = {10007, 200000};
  for (size_t t = 0; t < 2; t++) {
    size_t n = sizes[t];
    double *orig = malloc(n * sizeof *orig), *sorted = malloc(n * sizeof *sorted),
           *a = malloc(n * sizeof *a);
    for (int pat = 0; pat < PAT_COUNT; pat++) {
      fill(orig, n, pat, &seed);
      memcpy(sorted, orig, n * sizeof *orig);
      qsort(sorted, n, sizeof *sorted, cmp_double);
      size_t ks[12] = {0, 1, n / 4, n / 2, n / 2 + 1, 3 * n / 4, n - 2, n - 1};
      for (size_t i = 8; i < 12; i++) ks[i] = splitmix64(&seed) % n;
      for (size_t i = 0; i < 12; i++) check_select(orig, sorted, a, n, ks[i], pat_name[pat]);
    }
    free(orig);
    free(sorted);
    free(a);
  }
}
END_TEST

/* Many equal values must not make selection slow: 2 million values of
 * three kinds, each order statistic known by counting, then 2 million equal
 * values.  A partition that sends all values equal to the pivot to one side
 * degrades towards quadratic time here; the test's timeout catches it. */
START_TEST(test_select_ties_fast)
{
  const size_t n = 2000000;
  double *a = malloc(n * sizeof *a);
  uint64_t seed = 0x5eed0003u;
  size_t count[3] = {0, 0, 0};
  for (size_t i = 0; i < n; i++) {
    unsigned v = (unsigned)(splitmix64(&seed) % 3);
    a[i] = (double)v;
    count[v]++;
  }
  const size_t ks[] = {0, count[0] - 1, count[0], count[0] + count[1] - 1,
                       count[0] + count[1], n / 2, n - 1};
  for (size_t i = 0; i < sizeof ks / sizeof *ks; i++) {
    double want = ks[i] < count[0] ? 0.0 : ks[i] < count[0] + count[1] ? 1.0 : 2.0;
    ck_assert(sp_select(a, n, ks[i]) == want);
  }
  for (size_t i = 0; i < n; i++) a[i] = 7.0;
  ck_assert(sp_select(a, n, n / 3) == 7.0);
  free(a);
}
END_TEST

/* ---- quantiles --------------------------------------------------------------- */

START_TEST(test_quantile_numpy)
{
  /* Computed with numpy 1.24.2:
   *   x = [3.1, -0.4, 2.7, 8.9, 1.0, 5.5, 2.7, 12.25, -3.0, 4.4, 0.35]
   *   np.percentile(x, q, method='linear') for the q below.
   * numpy divides q by 100 first, so p = q / 100.0 here too. */
  const double x[] = {3.1, -0.4, 2.7, 8.9, 1.0, 5.5, 2.7, 12.25, -3.0, 4.4, 0.35};
  const struct {
    double q, want;
  } cases[] = {
      {0, -3.0}, {1, -2.74}, {10, -0.4}, {25, 0.675}, {33, 1.5100000000000005},
      {50, 2.7}, {66, 3.880000000000001}, {75, 4.95}, {90, 8.9},
      {99, 11.915000000000001}, {100, 12.25},
  };
  const size_t n = sizeof x / sizeof *x;
  double sorted[sizeof x / sizeof *x], a[sizeof x / sizeof *x];
  memcpy(sorted, x, sizeof x);
  qsort(sorted, n, sizeof *sorted, cmp_double);
  for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
    double p = cases[i].q / 100.0;
    memcpy(a, x, sizeof x);
    double qs = sp_quantile_select(a, n, p), qo = sp_quantile_sorted(sorted, n, p);
    /* same arithmetic as numpy's _lerp: agreement to the last bit */
    ck_assert_msg(qs == cases[i].want, "select q=%g: %.17g want %.17g", cases[i].q, qs,
                  cases[i].want);
    ck_assert_msg(qo == cases[i].want, "sorted q=%g: %.17g want %.17g", cases[i].q, qo,
                  cases[i].want);
  }
  /* describe's quartiles are the same quantiles */
  sp_describe d = describe_ok(x, n);
  ck_assert(d.q1 == 0.675 && d.median == 2.7 && d.q3 == 4.95);

  /* Computed with numpy 1.24.2: np.percentile([1, 2, 3, 4], [25, 50, 75])
   * = [1.75, 2.5, 3.25] (also the closed form 1 + 3p). */
  const double y[] = {4, 1, 3, 2};
  d = describe_ok(y, 4);
  ck_assert(d.q1 == 1.75 && d.median == 2.5 && d.q3 == 3.25);

  /* domain */
  ck_assert(isnan(sp_quantile_sorted(sorted, n, -0.01)));
  ck_assert(isnan(sp_quantile_sorted(sorted, n, 1.01)));
  ck_assert(isnan(sp_quantile_sorted(sorted, n, NAN)));
  ck_assert(isnan(sp_quantile_sorted(sorted, 0, 0.5)));
  ck_assert(isnan(sp_quantile_select(a, 0, 0.5)));
}
END_TEST

START_TEST(test_quantile_select_matches_sorted)
{
  /* On random data with ties, selection and sorting give identical
   * quantiles for many p. */
  uint64_t seed = 0x5eed0004u;
  const size_t n = 997;
  double *x = malloc(n * sizeof *x), *s = malloc(n * sizeof *s), *a = malloc(n * sizeof *a);
  for (size_t i = 0; i < n; i++) x[i] = floor(unif(&seed) * 200.0) / 8.0;
  memcpy(s, x, n * sizeof *x);
  qsort(s, n, sizeof *s, cmp_double);
  for (int i = 0; i <= 1000; i++) {
    double p = i / 1000.0;
    memcpy(a, x, n * sizeof *x);
    ck_assert_msg(sp_quantile_select(a, n, p) == sp_quantile_sorted(s, n, p), "p = %g", p);
  }
  free(x);
  free(s);
  free(a);
}
END_TEST

int main(void)
{
  Suite *s = suite_create("stats");
  TCase *tc = tcase_create("stats");
  tcase_set_timeout(tc, 60);
  tcase_add_loop_test(tc, test_strd, 0, (int)(sizeof strd_cases / sizeof *strd_cases));
  tcase_add_test(tc, test_describe_closed_form);
  tcase_add_test(tc, test_describe_edges);
  tcase_add_test(tc, test_describe_extremes);
  tcase_add_test(tc, test_select_small_every_k);
  tcase_add_test(tc, test_select_large_sampled_k);
  tcase_add_test(tc, test_select_ties_fast);
  tcase_add_test(tc, test_quantile_numpy);
  tcase_add_test(tc, test_quantile_select_matches_sorted);
  suite_add_tcase(s, tc);
  return sp_run_suite(s);
}
