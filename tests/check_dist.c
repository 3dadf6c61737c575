/* Tests for the dist module: the registry, every family's check(), tails,
 * quantiles, moments, samplers and fitting hooks.
 *
 * Sources of reference values (stated beside each):
 *  - scipy 1.10.1 (Debian 12's python3-scipy) with the exact call;
 *  - mpmath 1.3.0 at 50 significant digits, where scipy 1.10.1 itself rounds
 *    (its isf of weibull_min, lognorm, fisk, truncnorm and triang is
 *    ppf(1 - q), and norm.sf(37) is 1e-13 off), with the expression used;
 *  - closed forms.
 * Values pinned from this implementation (sampler streams) say so. */
#include "sp_test.h"

#include <string.h>
#include <time.h>

#include "scatterprop/dist.h"

static const sp_family *fam(const char *name)
{
  const sp_family *f = sp_family_find(name);
  ck_assert_msg(f != NULL, "family %s not registered", name);
  return f;
}

static int cmp_double(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* ---- registry ----------------------------------------------------------- */

START_TEST(test_registry_names_and_order)
{
  /* The brief's list, in registry order, with each family's parameters in
   * their documented order. */
  static const struct {
    const char *name;
    size_t nparam;
    const char *params[4];
  } want[] = {
    {"normal", 2, {"mean", "sd"}},
    {"lognormal", 2, {"meanlog", "sdlog"}},
    {"weibull", 2, {"shape", "scale"}},
    {"weibull3", 3, {"shape", "scale", "location"}},
    {"gamma", 2, {"shape", "scale"}},
    {"exponential", 1, {"rate"}},
    {"exponential2", 2, {"rate", "location"}},
    {"gumbel_max", 2, {"location", "scale"}},
    {"gumbel_min", 2, {"location", "scale"}},
    {"logistic", 2, {"location", "scale"}},
    {"loglogistic", 2, {"shape", "scale"}},
    {"uniform", 2, {"min", "max"}},
    {"truncnormal", 4, {"mean", "sd", "lower", "upper"}},
    {"triangular", 3, {"min", "mode", "max"}},
    {"beta", 4, {"alpha", "beta", "min", "max"}},
  };
  size_t n = sizeof want / sizeof want[0];
  ck_assert_uint_eq(sp_family_count(), n);
  for (size_t i = 0; i < n; i++) {
    const sp_family *f = sp_family_at(i);
    ck_assert_ptr_nonnull(f);
    ck_assert_str_eq(f->name, want[i].name);
    ck_assert_ptr_eq(sp_family_find(want[i].name), f);
    ck_assert_uint_eq(f->nparam, want[i].nparam);
    ck_assert_ptr_nonnull(f->title);
    for (size_t k = 0; k < f->nparam; k++) {
      ck_assert_str_eq(f->param_names[k], want[i].params[k]);
      ck_assert_int_eq(sp_family_param_index(f, want[i].params[k]), (int)k);
    }
    ck_assert_int_eq(sp_family_param_index(f, "nonesuch"), -1);
    /* Every function a family must have. */
    ck_assert(f->check && f->support && f->logpdf && f->cdf_P && f->cdf_Q &&
              f->quantile_P && f->quantile_Q && f->sample && f->mean &&
              f->variance);
    if (f->flags & SP_FAMILY_FIT) ck_assert(f->fit_start != NULL);
  }
  ck_assert_ptr_null(sp_family_at(n));
  ck_assert_ptr_null(sp_family_find("Weibull")); /* exact names only */
  ck_assert_ptr_null(sp_family_find("weibull "));
  ck_assert_ptr_null(sp_family_find(""));
  ck_assert_ptr_null(sp_family_find(NULL));
  ck_assert_int_eq(sp_family_param_index(NULL, "shape"), -1);
  ck_assert_int_eq(sp_family_param_index(fam("weibull"), NULL), -1);
}
END_TEST

START_TEST(test_registry_flags_kinds_defaults)
{
  /* Model inputs only: triangular and beta. */
  ck_assert_uint_eq(fam("triangular")->flags, SP_FAMILY_PROPAGATE);
  ck_assert_uint_eq(fam("beta")->flags, SP_FAMILY_PROPAGATE);
  ck_assert_uint_eq(fam("uniform")->flags, SP_FAMILY_FIT | SP_FAMILY_PROPAGATE);
  ck_assert_uint_eq(fam("weibull")->flags,
                    SP_FAMILY_FIT | SP_FAMILY_PROPAGATE | SP_FAMILY_CANDIDATE);
  /* Fitted on request only (see SP_FAMILY_CANDIDATE in dist.h). */
  const char *on_request[] = {"exponential", "exponential2", "uniform", "truncnormal"};
  for (size_t i = 0; i < sizeof on_request / sizeof *on_request; i++)
    ck_assert(!(fam(on_request[i])->flags & SP_FAMILY_CANDIDATE));
  /* Closed-form or specialised MLE where the brief asks for one; the
   * fitter's general minimiser elsewhere. */
  const char *with_mle[] = {"normal", "lognormal", "weibull", "gamma",
                            "exponential", "exponential2", "gumbel_max",
                            "gumbel_min", "uniform"};
  const char *without[] = {"weibull3", "logistic", "loglogistic",
                           "truncnormal", "triangular", "beta"};
  for (size_t i = 0; i < sizeof with_mle / sizeof with_mle[0]; i++)
    ck_assert_msg(fam(with_mle[i])->fit_mle != NULL, "%s", with_mle[i]);
  for (size_t i = 0; i < sizeof without / sizeof without[0]; i++)
    ck_assert_msg(fam(without[i])->fit_mle == NULL, "%s", without[i]);
  ck_assert_int_eq(fam("weibull3")->param_kinds[2], SP_PARAM_BELOW_DATA);
  ck_assert_int_eq(fam("exponential2")->param_kinds[1], SP_PARAM_BELOW_DATA);
  ck_assert_int_eq(fam("uniform")->param_kinds[0], SP_PARAM_BELOW_DATA);
  ck_assert_int_eq(fam("uniform")->param_kinds[1], SP_PARAM_ABOVE_DATA);
  ck_assert_int_eq(fam("truncnormal")->param_kinds[2], SP_PARAM_LIMIT);
  ck_assert_int_eq(fam("truncnormal")->param_kinds[3], SP_PARAM_LIMIT);
  ck_assert_int_eq(fam("weibull")->param_kinds[0], SP_PARAM_POSITIVE);
  ck_assert_int_eq(fam("normal")->param_kinds[0], SP_PARAM_REAL);
  const sp_family *b = fam("beta"), *tn = fam("truncnormal");
  ck_assert(isnan(b->param_defaults[0]) && isnan(b->param_defaults[1]));
  ck_assert(b->param_defaults[2] == 0.0 && b->param_defaults[3] == 1.0);
  ck_assert(tn->param_defaults[2] == -INFINITY && tn->param_defaults[3] == INFINITY);
  ck_assert(isnan(fam("normal")->param_defaults[0]));
}
END_TEST

/* ---- check() ------------------------------------------------------------ */

START_TEST(test_check_messages)
{
  /* Every message names the family, the parameter and the value. */
  static const struct {
    const char *name;
    double t[4];
    const char *msg;
  } bad[] = {
    {"weibull", {-1, 2}, "weibull: shape must be > 0, got -1"},
    {"weibull", {2, 0}, "weibull: scale must be > 0, got 0"},
    {"weibull", {NAN, 2}, "weibull: shape must be > 0, got nan"},
    {"weibull", {INFINITY, 2}, "weibull: shape must be > 0, got inf"},
    {"normal", {INFINITY, 1}, "normal: mean must be finite, got inf"},
    {"normal", {0, -2.5}, "normal: sd must be > 0, got -2.5"},
    {"lognormal", {NAN, 1}, "lognormal: meanlog must be finite, got nan"},
    {"lognormal", {0, 0}, "lognormal: sdlog must be > 0, got 0"},
    {"weibull3", {2, 1, NAN}, "weibull3: location must be finite, got nan"},
    {"weibull3", {2, -1, 0}, "weibull3: scale must be > 0, got -1"},
    {"gamma", {0, 1}, "gamma: shape must be > 0, got 0"},
    {"gamma", {1, -3}, "gamma: scale must be > 0, got -3"},
    {"exponential", {-0.5}, "exponential: rate must be > 0, got -0.5"},
    {"exponential2", {1, INFINITY}, "exponential2: location must be finite, got inf"},
    {"exponential2", {0, 1}, "exponential2: rate must be > 0, got 0"},
    {"gumbel_max", {0, -1}, "gumbel_max: scale must be > 0, got -1"},
    {"gumbel_min", {NAN, 1}, "gumbel_min: location must be finite, got nan"},
    {"logistic", {0, 0}, "logistic: scale must be > 0, got 0"},
    {"loglogistic", {-2, 1}, "loglogistic: shape must be > 0, got -2"},
    {"uniform", {3, 1}, "uniform: max must be > min, got min 3, max 1"},
    {"uniform", {1, 1}, "uniform: max must be > min, got min 1, max 1"},
    {"uniform", {-INFINITY, 1}, "uniform: min must be finite, got -inf"},
    {"uniform", {-1e308, 1e308}, "uniform: max - min must be finite, got min -1e+308, max 1e+308"},
    {"truncnormal", {0, 1, 2, 1}, "truncnormal: upper must be > lower, got lower 2, upper 1"},
    {"truncnormal", {0, 0, 0, 1}, "truncnormal: sd must be > 0, got 0"},
    {"truncnormal", {0, 1, INFINITY, INFINITY}, "truncnormal: lower must be a number or -inf, got inf"},
    {"truncnormal", {0, 1, NAN, 1}, "truncnormal: lower must be a number or -inf, got nan"},
    {"truncnormal", {0, 1, 0, -INFINITY}, "truncnormal: upper must be a number or +inf, got -inf"},
    {"truncnormal", {0, 1, 1e200, INFINITY}, "truncnormal: the interval [1e+200, inf] holds no probability of normal(0, 1) in double precision"},
    {"triangular", {0, 5, 4}, "triangular: mode must lie in [min, max] = [0, 4], got 5"},
    {"triangular", {1, 1, 1}, "triangular: max must be > min, got min 1, max 1"},
    {"triangular", {0, NAN, 1}, "triangular: mode must be finite, got nan"},
    {"beta", {0, 1, 0, 1}, "beta: alpha must be > 0, got 0"},
    {"beta", {1, -1, 0, 1}, "beta: beta must be > 0, got -1"},
    {"beta", {1, 1, 1, 0}, "beta: max must be > min, got min 1, max 0"},
  };
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    sp_error err;
    sp_error_clear(&err);
    sp_status s = fam(bad[i].name)->check(bad[i].t, &err);
    ck_assert_msg(s == SP_EUSAGE, "%s case %zu: status %d", bad[i].name, i, s);
    ck_assert_int_eq(err.code, SP_EUSAGE);
    ck_assert_str_eq(err.msg, bad[i].msg);
    /* err may be NULL: the status is still returned. */
    ck_assert_int_eq(fam(bad[i].name)->check(bad[i].t, NULL), SP_EUSAGE);
  }
  /* Valid edge cases. */
  static const struct {
    const char *name;
    double t[4];
  } good[] = {
    {"truncnormal", {0, 1, -INFINITY, INFINITY}},
    {"truncnormal", {0, 1, 40, INFINITY}},
    {"truncnormal", {0, 1, -INFINITY, -40}},
    {"triangular", {0, 0, 1}},
    {"triangular", {0, 1, 1}},
    {"beta", {0.01, 100, -5, 5}},
  };
  for (size_t i = 0; i < sizeof good / sizeof good[0]; i++)
    ck_assert_msg(fam(good[i].name)->check(good[i].t, NULL) == SP_OK, "%s", good[i].name);
}
END_TEST

/* ---- parameter sets for the property tests -------------------------------
 * Each is used for the round trip, P + Q = 1 and the samplers; "logq" marks
 * families whose quantile is exp of a computed logarithm, "cdfulps" the
 * relative error of the family's tails in units of DBL_EPSILON (see
 * test_roundtrip). */
typedef struct {
  const char *name;
  double t[4];
  int logq;
  double cdfulps;
} pset;

static const pset sets[] = {
  {"normal", {0, 1}, 0, 16},
  {"normal", {1e3, 1e-2}, 0, 16},
  {"lognormal", {0, 1}, 1, 16},
  {"lognormal", {5, 3}, 1, 16},
  {"weibull", {1.5, 2}, 1, 16},
  {"weibull", {0.3, 1e3}, 1, 16},
  {"weibull", {25, 1}, 1, 16},
  {"weibull3", {2.2, 3, 10}, 1, 16},
  /* GSL's incomplete gamma: ~1e-13 relative for shapes up to a few hundred
   * (measured against mpmath), up to 7e-12 near the median for shapes of
   * 1e3 to 1e4 (its series and continued fraction). */
  {"gamma", {0.5, 2}, 1, 1024},
  {"gamma", {3.7, 0.8}, 1, 1024},
  {"gamma", {50, 1.5}, 1, 1024},
  {"gamma", {0.01, 1}, 1, 1024},
  {"gamma", {1e4, 1}, 1, 65536},
  {"exponential", {0.5}, 0, 16},
  {"exponential2", {2, 5}, 0, 16},
  {"gumbel_max", {1, 2}, 0, 16},
  {"gumbel_min", {-2, 0.5}, 0, 16},
  {"logistic", {0.5, 1.5}, 0, 16},
  {"loglogistic", {3, 2}, 1, 16},
  {"loglogistic", {0.7, 10}, 1, 16},
  {"uniform", {-1, 3}, 0, 16},
  {"truncnormal", {0, 1, -1, 2}, 0, 16},
  {"truncnormal", {0, 1, 3, INFINITY}, 0, 16},
  {"truncnormal", {0, 1, 40, 45}, 0, 16},
  {"truncnormal", {1, 2, -INFINITY, -4}, 0, 16},
  {"truncnormal", {5, 1, -INFINITY, INFINITY}, 0, 16},
  {"truncnormal", {0, 1, -1e-3, 1e-3}, 0, 16},
  {"triangular", {0, 1, 4}, 0, 16},
  {"triangular", {0, 0, 1}, 0, 16},
  {"triangular", {-2, 3, 3}, 0, 16},
  /* GSL's incomplete beta (continued fraction), likewise ~1e-13. */
  {"beta", {2, 3, 0, 1}, 1, 1024},
  {"beta", {0.5, 0.5, -1, 2}, 1, 1024},
  {"beta", {0.2, 7, 0, 10}, 1, 1024},
  {"beta", {30, 40, 0, 1}, 1, 1024},
  {"beta", {0.05, 0.05, 0, 1}, 1, 1024},
  {"beta", {500, 800, 0, 1}, 1, 1024},
};
#define NSETS (sizeof sets / sizeof sets[0])

static const double tails[] = {1e-300, 1e-200, 1e-100, 1e-50, 1e-20, 1e-10,
                               1e-5,   1e-3,   0.01,   0.1,   0.25,  0.4,
                               0.5};
#define NTAILS (sizeof tails / sizeof tails[0])

/* A scale for a parameter set: the standard deviation, or 1 where it does
 * not exist. */
static double set_scale(const sp_family *f, const double *t)
{
  double v = f->variance(t);
  return isfinite(v) && v > 0.0 ? sqrt(v) : 1.0;
}

START_TEST(test_roundtrip)
{
  /* quantile(cdf(x)) == x across the support, both tails, from x at tail
   * probabilities 1e-300 ... 0.5 on either side.  The tail that is <= 1/2
   * is inverted.  Bound:
   *   |x' - x| <= eps (16 |x| (1 + L |log(|x|/s)|) + C T/f(x))
   * with T the tail probability and f the density:
   *  - 16 |x|: the quantile formulas take a handful of roundings, each at
   *    most an ulp of x after the conditioning below (measured: at most 6);
   *  - L = 1 where the quantile is exp of a logarithm (lognormal, Weibull
   *    with 1/shape, log-logistic, and the gamma and beta solvers on log x):
   *    that logarithm, of magnitude |log(x/s)| (700 at 1e-300), carries an
   *    absolute rounding of that many eps into x (measured: 2 |log| ulps);
   *  - C T/f: a relative error C eps in the tail T moves the quantile by
   *    C eps T/f(x); C = 16 for closed-form tails, and the measured error
   *    of GSL's incomplete gamma and beta functions otherwise (the
   *    parameter table above). */
  for (size_t i = 0; i < NSETS; i++) {
    const sp_family *f = fam(sets[i].name);
    const double *t = sets[i].t;
    ck_assert_msg(f->check(t, NULL) == SP_OK, "set %zu", i);
    double lo, hi;
    f->support(t, &lo, &hi);
    double s = set_scale(f, t);
    int tested = 0;
    for (int side = 0; side < 2; side++) {
      for (size_t k = 0; k < NTAILS; k++) {
        double x = side ? f->quantile_Q(t, tails[k]) : f->quantile_P(t, tails[k]);
        ck_assert_msg(!isnan(x), "%s set %zu: quantile(%g) is NaN", f->name, i, tails[k]);
        ck_assert_msg(x >= lo && x <= hi, "%s: quantile outside the support", f->name);
        if (!isfinite(x) || x <= lo || x >= hi) continue; /* under/overflowed */
        double P = f->cdf_P(t, x), Q = f->cdf_Q(t, x);
        double T = P <= Q ? P : Q;
        double x2 = P <= Q ? f->quantile_P(t, P) : f->quantile_Q(t, Q);
        double dens = exp(f->logpdf(t, x));
        double lg = sets[i].logq ? fabs(log(fabs(x) / s)) : 0.0;
        double tol = EPS * (16.0 * fabs(x) * (1.0 + lg) + sets[i].cdfulps * T / dens);
        ck_assert_msg(fabs(x2 - x) <= tol,
                      "%s set %zu side %d tail %g: x = %.17g, quantile(cdf(x)) "
                      "= %.17g, |diff| %.3g > %.3g", f->name, i, side,
                      tails[k], x, x2, fabs(x2 - x), tol);
        tested++;
      }
    }
    ck_assert_msg(tested >= 8, "%s set %zu: only %d points", f->name, i, tested);
  }
}
END_TEST

START_TEST(test_P_plus_Q)
{
  /* P + Q = 1 to rounding: each is computed from its own tail, so their sum
   * carries the relative error of the larger (within 1/2 of 1): 8 eps for
   * closed forms, the incomplete gamma/beta error for those families. */
  for (size_t i = 0; i < NSETS; i++) {
    const sp_family *f = fam(sets[i].name);
    const double *t = sets[i].t;
    for (int side = 0; side < 2; side++) {
      for (size_t k = 0; k < NTAILS; k++) {
        double x = side ? f->quantile_Q(t, tails[k]) : f->quantile_P(t, tails[k]);
        if (!isfinite(x)) continue;
        double P = f->cdf_P(t, x), Q = f->cdf_Q(t, x);
        ck_assert_msg(P >= 0.0 && P <= 1.0 && Q >= 0.0 && Q <= 1.0, "%s", f->name);
        double tol = EPS * (sets[i].cdfulps > 16 ? sets[i].cdfulps : 8.0);
        ck_assert_msg(fabs(P + Q - 1.0) <= tol, "%s set %zu x %.17g: P %.17g + Q %.17g - 1 = %g",
                      f->name, i, x, P, Q, P + Q - 1.0);
      }
    }
    /* The ends of the support. */
    double lo, hi;
    f->support(t, &lo, &hi);
    ck_assert_msg(f->cdf_P(t, lo) == 0.0 && f->cdf_Q(t, lo) == 1.0, "%s at lo", f->name);
    ck_assert_msg(f->cdf_P(t, hi) == 1.0 && f->cdf_Q(t, hi) == 0.0, "%s at hi", f->name);
    ck_assert_msg(f->quantile_P(t, 0.0) == lo && f->quantile_Q(t, 1.0) == lo, "%s q lo", f->name);
    ck_assert_msg(f->quantile_P(t, 1.0) == hi && f->quantile_Q(t, 0.0) == hi, "%s q hi", f->name);
    ck_assert_msg(f->logpdf(t, -INFINITY) == -INFINITY, "%s logpdf(-inf)", f->name);
    ck_assert_msg(f->logpdf(t, INFINITY) == -INFINITY, "%s logpdf(inf)", f->name);
    /* Outside [0, 1] and NaN. */
    ck_assert(isnan(f->quantile_P(t, -0.25)) && isnan(f->quantile_P(t, 1.5)));
    ck_assert(isnan(f->quantile_Q(t, NAN)) && isnan(f->quantile_Q(t, 2.0)));
    ck_assert(isnan(f->cdf_P(t, NAN)) && isnan(f->cdf_Q(t, NAN)));
    if (lo > -INFINITY) {
      double below = lo - (fabs(lo) + 1.0);
      ck_assert_msg(f->logpdf(t, below) == -INFINITY, "%s below support", f->name);
      ck_assert(f->cdf_P(t, below) == 0.0 && f->cdf_Q(t, below) == 1.0);
    }
    if (hi < INFINITY) {
      double above = hi + (fabs(hi) + 1.0);
      ck_assert_msg(f->logpdf(t, above) == -INFINITY, "%s above support", f->name);
      ck_assert(f->cdf_P(t, above) == 1.0 && f->cdf_Q(t, above) == 0.0);
    }
  }
}
END_TEST

/* ---- reference values ----------------------------------------------------- */

enum { K_LOGPDF, K_P, K_Q, K_QP, K_QQ, K_MEAN, K_VAR };

typedef struct {
  const char *name;
  double t[4];
  int kind;
  double arg;
  double want;
} refval;

static const refval refs[] = {
    /* scipy 1.10.1 stats.norm.logpdf(-3.0, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_LOGPDF, -3.0, -3.455229265078828},
    /* scipy 1.10.1 stats.norm.cdf(-3.0, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_P, -3.0, 0.03593031911292579},
    /* scipy 1.10.1 stats.norm.sf(-3.0, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_Q, -3.0, 0.9640696808870742},
    /* scipy 1.10.1 stats.norm.logpdf(1.5, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_LOGPDF, 1.5, -1.8352292650788278},
    /* scipy 1.10.1 stats.norm.cdf(1.5, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_P, 1.5, 0.5},
    /* scipy 1.10.1 stats.norm.sf(1.5, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_Q, 1.5, 0.5},
    /* scipy 1.10.1 stats.norm.logpdf(9.0, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_LOGPDF, 9.0, -6.335229265078827},
    /* scipy 1.10.1 stats.norm.cdf(9.0, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_P, 9.0, 0.9986501019683699},
    /* scipy 1.10.1 stats.norm.sf(9.0, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_Q, 9.0, 0.0013498980316300933},
    /* scipy 1.10.1 stats.norm.ppf(1e-10, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_QP, 1e-10, -14.40335225601014},
    /* scipy 1.10.1 stats.norm.isf(1e-10, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_QQ, 1e-10, 17.403352256010137},
    /* scipy 1.10.1 stats.norm.ppf(0.3, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_QP, 0.3, 0.18899871822989778},
    /* scipy 1.10.1 stats.norm.isf(0.3, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_QQ, 0.3, 2.8110012817701024},
    /* scipy 1.10.1 stats.norm.ppf(0.975, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_QP, 0.975, 6.399909961350135},
    /* scipy 1.10.1 stats.norm.isf(0.975, loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_QQ, 0.975, -3.3999099613501347},
    /* scipy 1.10.1 stats.norm.mean(loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_MEAN, 0.0, 1.5},
    /* scipy 1.10.1 stats.norm.var(loc=1.5, scale=2.5) */
    {"normal", {1.5, 2.5}, K_VAR, 0.0, 6.25},
    /* scipy 1.10.1 stats.lognorm.logpdf(0.2, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_LOGPDF, 0.2, -2.977132598464866},
    /* scipy 1.10.1 stats.lognorm.cdf(0.2, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_P, 0.2, 0.0024572601642346885},
    /* scipy 1.10.1 stats.lognorm.sf(0.2, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_Q, 0.2, 0.9975427398357654},
    /* scipy 1.10.1 stats.lognorm.logpdf(1.6, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_LOGPDF, 1.6, -1.1020598964505626},
    /* scipy 1.10.1 stats.lognorm.cdf(1.6, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_P, 1.6, 0.4840484920830165},
    /* scipy 1.10.1 stats.lognorm.sf(1.6, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_Q, 1.6, 0.5159515079169835},
    /* scipy 1.10.1 stats.lognorm.logpdf(12.0, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_LOGPDF, 12.0, -6.618255917983224},
    /* scipy 1.10.1 stats.lognorm.cdf(12.0, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_P, 12.0, 0.9959340320866077},
    /* scipy 1.10.1 stats.lognorm.sf(12.0, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_Q, 12.0, 0.0040659679133923385},
    /* scipy 1.10.1 stats.lognorm.ppf(1e-10, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_QP, 1e-10, 0.01396772906647491},
    /* mpmath 1.3.0, 50 digits: x with ncdf(-(log x - 0.5)/0.75) = 1e-10; scipy 1.10.1 stats.lognorm.isf(1e-10, s=0.75, scale=math.exp(0.5)) = 194.61157856206242 is off by 1e-08 */
    {"lognormal", {0.5, 0.75}, K_QQ, 1e-10, 194.61158041670615},
    /* scipy 1.10.1 stats.lognorm.ppf(0.3, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_QP, 0.3, 1.11259999645071},
    /* scipy 1.10.1 stats.lognorm.isf(0.3, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_QQ, 0.3, 2.4431797924955947},
    /* scipy 1.10.1 stats.lognorm.ppf(0.975, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_QP, 0.975, 7.170482799553659},
    /* scipy 1.10.1 stats.lognorm.isf(0.975, s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_QQ, 0.975, 0.3790932778791758},
    /* scipy 1.10.1 stats.lognorm.mean(s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_MEAN, 0.0, 2.184200810815618},
    /* scipy 1.10.1 stats.lognorm.var(s=0.75, scale=math.exp(0.5)) */
    {"lognormal", {0.5, 0.75}, K_VAR, 0.0, 3.6021643061596613},
    /* scipy 1.10.1 stats.weibull_min.logpdf(0.01, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_LOGPDF, 0.01, -4.670402367655134},
    /* scipy 1.10.1 stats.weibull_min.cdf(0.01, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_P, 0.01, 5.5110337352394e-05},
    /* scipy 1.10.1 stats.weibull_min.sf(0.01, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_Q, 0.01, 0.9999448896626477},
    /* scipy 1.10.1 stats.weibull_min.logpdf(2.5, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_LOGPDF, 2.5, -1.4625934653944448},
    /* scipy 1.10.1 stats.weibull_min.cdf(2.5, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_P, 2.5, 0.4817351386741269},
    /* scipy 1.10.1 stats.weibull_min.sf(2.5, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_Q, 2.5, 0.5182648613258731},
    /* scipy 1.10.1 stats.weibull_min.logpdf(14.0, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_LOGPDF, 14.0, -11.89252431259994},
    /* scipy 1.10.1 stats.weibull_min.cdf(14.0, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_P, 14.0, 0.9999954169063467},
    /* scipy 1.10.1 stats.weibull_min.sf(14.0, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_Q, 14.0, 4.583093653251842e-06},
    /* scipy 1.10.1 stats.weibull_min.ppf(1e-10, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_QP, 1e-10, 4.195628599872404e-06},
    /* mpmath 1.3.0, 50 digits: 3.2*(-log(1e-10))**(1/1.7); scipy 1.10.1 stats.weibull_min.isf(1e-10, c=1.7, scale=3.2) = 20.251319417187617 is off by 2e-09 */
    {"weibull", {1.7, 3.2}, K_QQ, 1e-10, 20.251319459993766},
    /* scipy 1.10.1 stats.weibull_min.ppf(0.3, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_QP, 0.3, 1.74494169631394},
    /* scipy 1.10.1 stats.weibull_min.isf(0.3, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_QQ, 0.3, 3.5692054960630166},
    /* scipy 1.10.1 stats.weibull_min.ppf(0.975, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_QP, 0.975, 6.896318484586075},
    /* scipy 1.10.1 stats.weibull_min.isf(0.975, c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_QQ, 0.975, 0.36811953240885925},
    /* scipy 1.10.1 stats.weibull_min.mean(c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_MEAN, 0.0, 2.8551824079978374},
    /* scipy 1.10.1 stats.weibull_min.var(c=1.7, scale=3.2) */
    {"weibull", {1.7, 3.2}, K_VAR, 0.0, 2.988593430997543},
    /* scipy 1.10.1 stats.weibull_min.logpdf(10.5, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_LOGPDF, 10.5, -2.479678155787827},
    /* scipy 1.10.1 stats.weibull_min.cdf(10.5, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_P, 10.5, 0.019224667408215528},
    /* scipy 1.10.1 stats.weibull_min.sf(10.5, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_Q, 10.5, 0.9807753325917845},
    /* scipy 1.10.1 stats.weibull_min.logpdf(12.0, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_LOGPDF, 12.0, -1.20653879646996},
    /* scipy 1.10.1 stats.weibull_min.cdf(12.0, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_P, 12.0, 0.33623409105620783},
    /* scipy 1.10.1 stats.weibull_min.sf(12.0, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_Q, 12.0, 0.6637659089437922},
    /* scipy 1.10.1 stats.weibull_min.logpdf(25.0, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_LOGPDF, 25.0, -32.872070969913295},
    /* scipy 1.10.1 stats.weibull_min.cdf(25.0, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_P, 25.0, 0.999999999999999},
    /* scipy 1.10.1 stats.weibull_min.sf(25.0, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_Q, 25.0, 1.0465874863227227e-15},
    /* scipy 1.10.1 stats.weibull_min.ppf(1e-10, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_QP, 1e-10, 10.000085441076054},
    /* mpmath 1.3.0, 50 digits: 10 + 3*(-log(1e-10))**(1/2.2); scipy 1.10.1 stats.weibull_min.isf(1e-10, c=2.2, scale=3.0, loc=10.0) = 22.48274800848839 is off by 9e-10 */
    {"weibull3", {2.2, 3.0, 10.0}, K_QQ, 1e-10, 22.482748028877076},
    /* scipy 1.10.1 stats.weibull_min.ppf(0.3, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_QP, 0.3, 11.877624748374148},
    /* scipy 1.10.1 stats.weibull_min.isf(0.3, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_QQ, 0.3, 13.26411310298396},
    /* scipy 1.10.1 stats.weibull_min.ppf(0.975, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_QP, 0.975, 15.43000908625422},
    /* scipy 1.10.1 stats.weibull_min.isf(0.975, c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_QQ, 0.975, 10.564164619108517},
    /* scipy 1.10.1 stats.weibull_min.mean(c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_MEAN, 0.0, 12.65687428135062},
    /* scipy 1.10.1 stats.weibull_min.var(c=2.2, scale=3.0, loc=10.0) */
    {"weibull3", {2.2, 3.0, 10.0}, K_VAR, 0.0, 1.6252314541970905},
    /* scipy 1.10.1 stats.gamma.logpdf(0.05, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_LOGPDF, 0.05, -5.8252773844076495},
    /* scipy 1.10.1 stats.gamma.cdf(0.05, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_P, 0.05, 5.960617740991469e-05},
    /* scipy 1.10.1 stats.gamma.sf(0.05, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_Q, 0.05, 0.99994039382259},
    /* scipy 1.10.1 stats.gamma.logpdf(3.0, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_LOGPDF, 3.0, -1.6504272077411657},
    /* scipy 1.10.1 stats.gamma.cdf(3.0, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_P, 3.0, 0.4505840486472198},
    /* scipy 1.10.1 stats.gamma.sf(3.0, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_Q, 3.0, 0.5494159513527802},
    /* scipy 1.10.1 stats.gamma.logpdf(30.0, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_LOGPDF, 30.0, -16.1965495682501},
    /* scipy 1.10.1 stats.gamma.cdf(30.0, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_P, 30.0, 0.99999985066321},
    /* scipy 1.10.1 stats.gamma.sf(30.0, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_Q, 30.0, 1.493367900050393e-07},
    /* scipy 1.10.1 stats.gamma.ppf(1e-10, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_QP, 1e-10, 0.00024251678596872724},
    /* scipy 1.10.1 stats.gamma.isf(1e-10, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_QQ, 1e-10, 41.67179888867888},
    /* scipy 1.10.1 stats.gamma.ppf(0.3, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_QP, 0.3, 2.24993109956993},
    /* scipy 1.10.1 stats.gamma.isf(0.3, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_QQ, 0.3, 4.548322488116178},
    /* scipy 1.10.1 stats.gamma.ppf(0.975, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_QP, 0.975, 9.62437649552252},
    /* scipy 1.10.1 stats.gamma.isf(0.975, a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_QQ, 0.975, 0.6234087101149972},
    /* scipy 1.10.1 stats.gamma.mean(a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_MEAN, 0.0, 3.75},
    /* scipy 1.10.1 stats.gamma.var(a=2.5, scale=1.5) */
    {"gamma", {2.5, 1.5}, K_VAR, 0.0, 5.625},
    /* scipy 1.10.1 stats.gamma.logpdf(1e-06, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_LOGPDF, 1e-06, 8.367114741588932},
    /* scipy 1.10.1 stats.gamma.cdf(1e-06, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_P, 1e-06, 0.014344013128284525},
    /* scipy 1.10.1 stats.gamma.sf(1e-06, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_Q, 1e-06, 0.9856559868717155},
    /* scipy 1.10.1 stats.gamma.logpdf(0.5, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_LOGPDF, 0.5, -1.0685391225940974},
    /* scipy 1.10.1 stats.gamma.cdf(0.5, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_P, 0.5, 0.6955452146566597},
    /* scipy 1.10.1 stats.gamma.sf(0.5, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_Q, 0.5, 0.30445478534334025},
    /* scipy 1.10.1 stats.gamma.logpdf(20.0, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_LOGPDF, 20.0, -13.400754740473854},
    /* scipy 1.10.1 stats.gamma.cdf(20.0, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_P, 20.0, 0.9999971551553328},
    /* scipy 1.10.1 stats.gamma.sf(20.0, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_Q, 20.0, 2.844844667210484e-06},
    /* scipy 1.10.1 stats.gamma.ppf(1e-10, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_QP, 1e-10, 6.472880453207121e-34},
    /* scipy 1.10.1 stats.gamma.isf(1e-10, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_QQ, 1e-10, 39.61327369445959},
    /* scipy 1.10.1 stats.gamma.ppf(0.3, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_QP, 0.3, 0.025453315539897395},
    /* scipy 1.10.1 stats.gamma.isf(0.3, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_QQ, 0.3, 0.5131298266421034},
    /* scipy 1.10.1 stats.gamma.ppf(0.975, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_QP, 0.975, 3.8005272856776515},
    /* scipy 1.10.1 stats.gamma.isf(0.975, a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_QQ, 0.975, 6.371358063478354e-06},
    /* scipy 1.10.1 stats.gamma.mean(a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_MEAN, 0.0, 0.6},
    /* scipy 1.10.1 stats.gamma.var(a=0.3, scale=2.0) */
    {"gamma", {0.3, 2.0}, K_VAR, 0.0, 1.2},
    /* scipy 1.10.1 stats.expon.logpdf(0.1, scale=1/0.4) */
    {"exponential", {0.4}, K_LOGPDF, 0.1, -0.956290731874155},
    /* scipy 1.10.1 stats.expon.cdf(0.1, scale=1/0.4) */
    {"exponential", {0.4}, K_P, 0.1, 0.03921056084767678},
    /* scipy 1.10.1 stats.expon.sf(0.1, scale=1/0.4) */
    {"exponential", {0.4}, K_Q, 0.1, 0.9607894391523233},
    /* scipy 1.10.1 stats.expon.logpdf(2.5, scale=1/0.4) */
    {"exponential", {0.4}, K_LOGPDF, 2.5, -1.916290731874155},
    /* scipy 1.10.1 stats.expon.cdf(2.5, scale=1/0.4) */
    {"exponential", {0.4}, K_P, 2.5, 0.6321205588285577},
    /* scipy 1.10.1 stats.expon.sf(2.5, scale=1/0.4) */
    {"exponential", {0.4}, K_Q, 2.5, 0.3678794411714424},
    /* scipy 1.10.1 stats.expon.logpdf(60.0, scale=1/0.4) */
    {"exponential", {0.4}, K_LOGPDF, 60.0, -24.916290731874156},
    /* scipy 1.10.1 stats.expon.cdf(60.0, scale=1/0.4) */
    {"exponential", {0.4}, K_P, 60.0, 0.9999999999622486},
    /* scipy 1.10.1 stats.expon.sf(60.0, scale=1/0.4) */
    {"exponential", {0.4}, K_Q, 60.0, 3.775134544279098e-11},
    /* scipy 1.10.1 stats.expon.ppf(1e-10, scale=1/0.4) */
    {"exponential", {0.4}, K_QP, 1e-10, 2.500000000125e-10},
    /* scipy 1.10.1 stats.expon.isf(1e-10, scale=1/0.4) */
    {"exponential", {0.4}, K_QQ, 1e-10, 57.564627324851145},
    /* scipy 1.10.1 stats.expon.ppf(0.3, scale=1/0.4) */
    {"exponential", {0.4}, K_QP, 0.3, 0.8916873598468311},
    /* scipy 1.10.1 stats.expon.isf(0.3, scale=1/0.4) */
    {"exponential", {0.4}, K_QQ, 0.3, 3.0099320108148397},
    /* scipy 1.10.1 stats.expon.ppf(0.975, scale=1/0.4) */
    {"exponential", {0.4}, K_QP, 0.975, 9.222198635284839},
    /* scipy 1.10.1 stats.expon.isf(0.975, scale=1/0.4) */
    {"exponential", {0.4}, K_QQ, 0.975, 0.06329451996072474},
    /* scipy 1.10.1 stats.expon.mean(scale=1/0.4) */
    {"exponential", {0.4}, K_MEAN, 0.0, 2.5},
    /* scipy 1.10.1 stats.expon.var(scale=1/0.4) */
    {"exponential", {0.4}, K_VAR, 0.0, 6.25},
    /* scipy 1.10.1 stats.expon.logpdf(5.01, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_LOGPDF, 5.01, 0.6731471805599457},
    /* scipy 1.10.1 stats.expon.cdf(5.01, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_P, 5.01, 0.01980132669324428},
    /* scipy 1.10.1 stats.expon.sf(5.01, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_Q, 5.01, 0.9801986733067558},
    /* scipy 1.10.1 stats.expon.logpdf(5.5, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_LOGPDF, 5.5, -0.3068528194400547},
    /* scipy 1.10.1 stats.expon.cdf(5.5, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_P, 5.5, 0.6321205588285577},
    /* scipy 1.10.1 stats.expon.sf(5.5, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_Q, 5.5, 0.3678794411714424},
    /* scipy 1.10.1 stats.expon.logpdf(30.0, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_LOGPDF, 30.0, -49.30685281944005},
    /* scipy 1.10.1 stats.expon.cdf(30.0, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_P, 30.0, 1.0},
    /* scipy 1.10.1 stats.expon.sf(30.0, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_Q, 30.0, 1.9287498479639178e-22},
    /* scipy 1.10.1 stats.expon.ppf(1e-10, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_QP, 1e-10, 5.00000000005},
    /* scipy 1.10.1 stats.expon.isf(1e-10, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_QQ, 1e-10, 16.51292546497023},
    /* scipy 1.10.1 stats.expon.ppf(0.3, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_QP, 0.3, 5.178337471969366},
    /* scipy 1.10.1 stats.expon.isf(0.3, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_QQ, 0.3, 5.601986402162968},
    /* scipy 1.10.1 stats.expon.ppf(0.975, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_QP, 0.975, 6.844439727056968},
    /* scipy 1.10.1 stats.expon.isf(0.975, loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_QQ, 0.975, 5.012658903992145},
    /* scipy 1.10.1 stats.expon.mean(loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_MEAN, 0.0, 5.5},
    /* scipy 1.10.1 stats.expon.var(loc=5.0, scale=1/2.0) */
    {"exponential2", {2.0, 5.0}, K_VAR, 0.0, 0.25},
    /* scipy 1.10.1 stats.gumbel_r.logpdf(-4.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_LOGPDF, -4.0, -10.375641141263419},
    /* scipy 1.10.1 stats.gumbel_r.cdf(-4.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_P, -4.0, 5.119294298670733e-06},
    /* scipy 1.10.1 stats.gumbel_r.sf(-4.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_Q, -4.0, 0.9999948807057013},
    /* scipy 1.10.1 stats.gumbel_r.logpdf(1.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_LOGPDF, 1.0, -1.6931471805599454},
    /* scipy 1.10.1 stats.gumbel_r.cdf(1.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_P, 1.0, 0.3678794411714424},
    /* scipy 1.10.1 stats.gumbel_r.sf(1.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_Q, 1.0, 0.6321205588285577},
    /* scipy 1.10.1 stats.gumbel_r.logpdf(40.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_LOGPDF, 40.0, -20.19314718395821},
    /* scipy 1.10.1 stats.gumbel_r.cdf(40.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_P, 40.0, 0.9999999966017322},
    /* scipy 1.10.1 stats.gumbel_r.sf(40.0, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_Q, 40.0, 3.3982678137209587e-09},
    /* scipy 1.10.1 stats.gumbel_r.ppf(1e-10, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_QP, 1e-10, -5.273235076484003},
    /* scipy 1.10.1 stats.gumbel_r.isf(1e-10, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_QQ, 1e-10, 47.05170185978091},
    /* scipy 1.10.1 stats.gumbel_r.ppf(0.3, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_QP, 0.3, 0.6287464822752689},
    /* scipy 1.10.1 stats.gumbel_r.isf(0.3, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_QQ, 0.3, 3.061860866317446},
    /* scipy 1.10.1 stats.gumbel_r.ppf(0.975, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_QP, 0.975, 8.35249451590835},
    /* scipy 1.10.1 stats.gumbel_r.isf(0.975, loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_QQ, 0.975, -1.6106454819264728},
    /* scipy 1.10.1 stats.gumbel_r.mean(loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_MEAN, 0.0, 2.1544313298030655},
    /* scipy 1.10.1 stats.gumbel_r.var(loc=1.0, scale=2.0) */
    {"gumbel_max", {1.0, 2.0}, K_VAR, 0.0, 6.579736267392906},
    /* scipy 1.10.1 stats.gumbel_l.logpdf(-20.0, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_LOGPDF, -20.0, -35.30685281944005},
    /* scipy 1.10.1 stats.gumbel_l.cdf(-20.0, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_P, -20.0, 2.3195228302435686e-16},
    /* scipy 1.10.1 stats.gumbel_l.sf(-20.0, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_Q, -20.0, 0.9999999999999998},
    /* scipy 1.10.1 stats.gumbel_l.logpdf(-2.0, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_LOGPDF, -2.0, -0.3068528194400547},
    /* scipy 1.10.1 stats.gumbel_l.cdf(-2.0, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_P, -2.0, 0.6321205588285577},
    /* scipy 1.10.1 stats.gumbel_l.sf(-2.0, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_Q, -2.0, 0.3678794411714424},
    /* scipy 1.10.1 stats.gumbel_l.logpdf(0.5, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_LOGPDF, 0.5, -142.72001192201665},
    /* scipy 1.10.1 stats.gumbel_l.cdf(0.5, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_P, 0.5, 1.0},
    /* scipy 1.10.1 stats.gumbel_l.sf(0.5, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_Q, 0.5, 3.5073891964646352e-65},
    /* scipy 1.10.1 stats.gumbel_l.ppf(1e-10, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_QP, 1e-10, -13.512925464945228},
    /* scipy 1.10.1 stats.gumbel_l.isf(1e-10, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_QQ, 1e-10, -0.4316912308789993},
    /* scipy 1.10.1 stats.gumbel_l.ppf(0.3, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_QP, 0.3, -2.5154652165793614},
    /* scipy 1.10.1 stats.gumbel_l.isf(0.3, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_QQ, 0.3, -1.9071866205688173},
    /* scipy 1.10.1 stats.gumbel_l.ppf(0.975, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_QP, 0.975, -1.3473386295183818},
    /* scipy 1.10.1 stats.gumbel_l.isf(0.975, loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_QQ, 0.975, -3.8381236289770877},
    /* scipy 1.10.1 stats.gumbel_l.mean(loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_MEAN, 0.0, -2.2886078324507664},
    /* scipy 1.10.1 stats.gumbel_l.var(loc=-2.0, scale=0.5) */
    {"gumbel_min", {-2.0, 0.5}, K_VAR, 0.0, 0.4112335167120566},
    /* scipy 1.10.1 stats.logistic.logpdf(-40.0, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_LOGPDF, -40.0, -27.405465108111922},
    /* scipy 1.10.1 stats.logistic.cdf(-40.0, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_P, -40.0, 1.8795288165355508e-12},
    /* scipy 1.10.1 stats.logistic.sf(-40.0, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_Q, -40.0, 0.9999999999981204},
    /* scipy 1.10.1 stats.logistic.logpdf(0.5, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_LOGPDF, 0.5, -1.791759469228055},
    /* scipy 1.10.1 stats.logistic.cdf(0.5, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_P, 0.5, 0.5},
    /* scipy 1.10.1 stats.logistic.sf(0.5, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_Q, 0.5, 0.5},
    /* scipy 1.10.1 stats.logistic.logpdf(12.0, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_LOGPDF, 12.0, -8.073067907277935},
    /* scipy 1.10.1 stats.logistic.cdf(12.0, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_P, 12.0, 0.9995320432743672},
    /* scipy 1.10.1 stats.logistic.sf(12.0, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_Q, 12.0, 0.00046795672563293525},
    /* scipy 1.10.1 stats.logistic.ppf(1e-10, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_QP, 1e-10, -34.03877639476068},
    /* scipy 1.10.1 stats.logistic.isf(1e-10, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_QQ, 1e-10, 35.03877639476068},
    /* scipy 1.10.1 stats.logistic.ppf(0.3, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_QP, 0.3, -0.7709467905808054},
    /* scipy 1.10.1 stats.logistic.isf(0.3, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_QQ, 0.3, 1.7709467905808054},
    /* scipy 1.10.1 stats.logistic.ppf(0.975, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_QP, 0.975, 5.995342469194468},
    /* scipy 1.10.1 stats.logistic.isf(0.975, loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_QQ, 0.975, -4.995342469194468},
    /* scipy 1.10.1 stats.logistic.mean(loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_MEAN, 0.0, 0.5},
    /* scipy 1.10.1 stats.logistic.var(loc=0.5, scale=1.5) */
    {"logistic", {0.5, 1.5}, K_VAR, 0.0, 7.4022033008170185},
    /* scipy 1.10.1 stats.fisk.logpdf(0.01, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_LOGPDF, 0.01, -10.191169874987894},
    /* scipy 1.10.1 stats.fisk.cdf(0.01, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_P, 0.01, 1.2499998437500196e-07},
    /* scipy 1.10.1 stats.fisk.sf(0.01, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_Q, 0.01, 0.9999998750000156},
    /* scipy 1.10.1 stats.fisk.logpdf(2.0, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_LOGPDF, 2.0, -0.9808292530117263},
    /* scipy 1.10.1 stats.fisk.cdf(2.0, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_P, 2.0, 0.5},
    /* scipy 1.10.1 stats.fisk.sf(2.0, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_Q, 2.0, 0.5},
    /* scipy 1.10.1 stats.fisk.logpdf(50.0, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_LOGPDF, 50.0, -12.470166187268813},
    /* scipy 1.10.1 stats.fisk.cdf(50.0, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_P, 50.0, 0.9999360040957378},
    /* mpmath 1.3.0, 50 digits: 1/(1 + (50/2)**3); scipy 1.10.1 stats.fisk.sf(50.0, c=3.0, scale=2.0) = 6.39959042622041e-05 is off by 1e-12 */
    {"loglogistic", {3.0, 2.0}, K_Q, 50.0, 6.399590426212723e-05},
    /* scipy 1.10.1 stats.fisk.ppf(1e-10, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_QP, 1e-10, 0.0009283177667535001},
    /* mpmath 1.3.0, 50 digits: 2*((1 - 1e-10)/1e-10)**(1/3); scipy 1.10.1 stats.fisk.isf(1e-10, c=3.0, scale=2.0) = 4308.869261224621 is off by 3e-08 */
    {"loglogistic", {3.0, 2.0}, K_QQ, 1e-10, 4308.869379920138},
    /* scipy 1.10.1 stats.fisk.ppf(0.3, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_QP, 0.3, 1.5078948822583076},
    /* scipy 1.10.1 stats.fisk.isf(0.3, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_QQ, 0.3, 2.652704805264261},
    /* scipy 1.10.1 stats.fisk.ppf(0.975, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_QP, 0.975, 6.782422886028321},
    /* scipy 1.10.1 stats.fisk.isf(0.975, c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_QQ, 0.975, 0.5897597462169349},
    /* scipy 1.10.1 stats.fisk.mean(c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_MEAN, 0.0, 2.41839915231229},
    /* scipy 1.10.1 stats.fisk.var(c=3.0, scale=2.0) */
    {"loglogistic", {3.0, 2.0}, K_VAR, 0.0, 3.824942149344359},
    /* scipy 1.10.1 stats.uniform.logpdf(-0.5, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_LOGPDF, -0.5, -1.3862943611198906},
    /* scipy 1.10.1 stats.uniform.cdf(-0.5, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_P, -0.5, 0.125},
    /* scipy 1.10.1 stats.uniform.sf(-0.5, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_Q, -0.5, 0.875},
    /* scipy 1.10.1 stats.uniform.logpdf(2.9, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_LOGPDF, 2.9, -1.3862943611198906},
    /* scipy 1.10.1 stats.uniform.cdf(2.9, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_P, 2.9, 0.975},
    /* scipy 1.10.1 stats.uniform.sf(2.9, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_Q, 2.9, 0.025000000000000022},
    /* scipy 1.10.1 stats.uniform.ppf(1e-10, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_QP, 1e-10, -0.9999999996},
    /* scipy 1.10.1 stats.uniform.isf(1e-10, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_QQ, 1e-10, 2.9999999996},
    /* scipy 1.10.1 stats.uniform.ppf(0.3, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_QP, 0.3, 0.19999999999999996},
    /* scipy 1.10.1 stats.uniform.isf(0.3, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_QQ, 0.3, 1.7999999999999998},
    /* scipy 1.10.1 stats.uniform.ppf(0.975, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_QP, 0.975, 2.9},
    /* scipy 1.10.1 stats.uniform.isf(0.975, loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_QQ, 0.975, -0.8999999999999999},
    /* scipy 1.10.1 stats.uniform.mean(loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_MEAN, 0.0, 1.0},
    /* scipy 1.10.1 stats.uniform.var(loc=-1.0, scale=4.0) */
    {"uniform", {-1.0, 3.0}, K_VAR, 0.0, 1.3333333333333333},
    /* scipy 1.10.1 stats.truncnorm.logpdf(-0.9, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_LOGPDF, -0.9, -1.807846569642245},
    /* scipy 1.10.1 stats.truncnorm.cdf(-0.9, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_P, -0.9, 0.016010679482596244},
    /* scipy 1.10.1 stats.truncnorm.sf(-0.9, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_Q, -0.9, 0.9839893205174038},
    /* scipy 1.10.1 stats.truncnorm.logpdf(1.0, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_LOGPDF, 1.0, -1.3565965696422448},
    /* scipy 1.10.1 stats.truncnorm.cdf(1.0, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_P, 1.0, 0.4407078112098794},
    /* scipy 1.10.1 stats.truncnorm.sf(1.0, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_Q, 1.0, 0.5592921887901208},
    /* scipy 1.10.1 stats.truncnorm.logpdf(3.9, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_LOGPDF, 3.9, -2.407846569642245},
    /* scipy 1.10.1 stats.truncnorm.cdf(3.9, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_P, 3.9, 0.9913211975508188},
    /* scipy 1.10.1 stats.truncnorm.sf(3.9, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_Q, 3.9, 0.008678802449181207},
    /* scipy 1.10.1 stats.truncnorm.ppf(1e-10, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_QP, 1e-10, -0.9999999993598092},
    /* scipy 1.10.1 stats.truncnorm.isf(1e-10, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_QQ, 1e-10, 3.9999999988039634},
    /* scipy 1.10.1 stats.truncnorm.ppf(0.3, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_QP, 0.3, 0.4466587635420953},
    /* scipy 1.10.1 stats.truncnorm.isf(0.3, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_QQ, 0.3, 2.053587195278017},
    /* scipy 1.10.1 stats.truncnorm.ppf(0.975, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_QP, 0.975, 3.729438672906496},
    /* scipy 1.10.1 stats.truncnorm.isf(0.975, a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_QQ, 0.975, -0.8458841783433608},
    /* scipy 1.10.1 stats.truncnorm.mean(a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_MEAN, 0.0, 1.2903748943050524},
    /* scipy 1.10.1 stats.truncnorm.var(a=-1.0, b=1.5, loc=1.0, scale=2.0) */
    {"truncnormal", {1.0, 2.0, -1.0, 4.0}, K_VAR, 0.0, 1.6627400246295574},
    /* scipy 1.10.1 stats.truncnorm.logpdf(3.1, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_LOGPDF, 3.1, 0.8837876883056763},
    /* scipy 1.10.1 stats.truncnorm.cdf(3.1, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_P, 3.1, 0.2832027378764973},
    /* scipy 1.10.1 stats.truncnorm.sf(3.1, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_Q, 3.1, 0.7167972621235029},
    /* scipy 1.10.1 stats.truncnorm.logpdf(5.0, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_LOGPDF, 5.0, -6.811212311694322},
    /* scipy 1.10.1 stats.truncnorm.cdf(5.0, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_P, 5.0, 0.9997876494630242},
    /* scipy 1.10.1 stats.truncnorm.sf(5.0, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_Q, 5.0, 0.00021235053697577622},
    /* scipy 1.10.1 stats.truncnorm.logpdf(10.0, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_LOGPDF, 10.0, -44.31121231169433},
    /* scipy 1.10.1 stats.truncnorm.cdf(10.0, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_P, 10.0, 1.0},
    /* scipy 1.10.1 stats.truncnorm.sf(10.0, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_Q, 10.0, 5.644761934321044e-21},
    /* scipy 1.10.1 stats.truncnorm.ppf(1e-10, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_QP, 1e-10, 3.000000000030459},
    /* mpmath 1.3.0, 50 digits: z with ncdf(-z) = 1e-10*ncdf(-3); scipy 1.10.1 stats.truncnorm.isf(1e-10, a=3.0, b=math.inf, loc=0.0, scale=1.0) = 7.308580279664025 is off by 2e-09 */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_QQ, 1e-10, 7.308580290784088},
    /* scipy 1.10.1 stats.truncnorm.ppf(0.3, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_QP, 0.3, 3.107016696637142},
    /* scipy 1.10.1 stats.truncnorm.isf(0.3, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_QQ, 0.3, 3.3493757211574158},
    /* scipy 1.10.1 stats.truncnorm.ppf(0.975, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_QP, 0.975, 3.984948010404362},
    /* scipy 1.10.1 stats.truncnorm.isf(0.975, a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_QQ, 0.975, 3.0077031586208176},
    /* scipy 1.10.1 stats.truncnorm.mean(a=3.0, b=math.inf, loc=0.0, scale=1.0) */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_MEAN, 0.0, 3.28309865493044},
    /* mpmath 1.3.0, 50 digits: 1 + 3 phi(3)/Q(3) - (phi(3)/Q(3))**2; scipy 1.10.1 stats.truncnorm.var(a=3.0, b=math.inf, loc=0.0, scale=1.0) = 0.07055918678525586 is off by 2e-13 */
    {"truncnormal", {0.0, 1.0, 3.0, INFINITY}, K_VAR, 0.0, 0.07055918678526811},
    /* scipy 1.10.1 stats.triang.logpdf(0.5, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_LOGPDF, 0.5, -1.3862943611198906},
    /* scipy 1.10.1 stats.triang.cdf(0.5, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_P, 0.5, 0.0625},
    /* scipy 1.10.1 stats.triang.sf(0.5, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_Q, 0.5, 0.9375},
    /* scipy 1.10.1 stats.triang.logpdf(1.0, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_LOGPDF, 1.0, -0.6931471805599453},
    /* scipy 1.10.1 stats.triang.cdf(1.0, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_P, 1.0, 0.25},
    /* scipy 1.10.1 stats.triang.sf(1.0, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_Q, 1.0, 0.75},
    /* scipy 1.10.1 stats.triang.logpdf(3.5, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_LOGPDF, 3.5, -2.4849066497880004},
    /* scipy 1.10.1 stats.triang.cdf(3.5, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_P, 3.5, 0.9791666666666666},
    /* scipy 1.10.1 stats.triang.sf(3.5, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_Q, 3.5, 0.02083333333333337},
    /* scipy 1.10.1 stats.triang.ppf(1e-10, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_QP, 1e-10, 2e-05},
    /* mpmath 1.3.0, 50 digits: 4 - sqrt(1e-10*4*3); scipy 1.10.1 stats.triang.isf(1e-10, c=0.25, loc=0.0, scale=4.0) = 3.9999653589824153 is off by 4e-13 */
    {"triangular", {0.0, 1.0, 4.0}, K_QQ, 1e-10, 3.9999653589838484},
    /* scipy 1.10.1 stats.triang.ppf(0.3, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_QP, 0.3, 1.1017246507621126},
    /* scipy 1.10.1 stats.triang.isf(0.3, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_QQ, 0.3, 2.102633403898972},
    /* scipy 1.10.1 stats.triang.ppf(0.975, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_QP, 0.975, 3.4522774424948337},
    /* scipy 1.10.1 stats.triang.isf(0.975, c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_QQ, 0.975, 0.31622776601683805},
    /* scipy 1.10.1 stats.triang.mean(c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_MEAN, 0.0, 1.6666666666666667},
    /* scipy 1.10.1 stats.triang.var(c=0.25, loc=0.0, scale=4.0) */
    {"triangular", {0.0, 1.0, 4.0}, K_VAR, 0.0, 0.7222222222222222},
    /* scipy 1.10.1 stats.beta.logpdf(0.01, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_LOGPDF, 0.01, -2.1403642079070937},
    /* scipy 1.10.1 stats.beta.cdf(0.01, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_P, 0.01, 0.0005920299999999999},
    /* scipy 1.10.1 stats.beta.sf(0.01, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_Q, 0.01, 0.99940797},
    /* scipy 1.10.1 stats.beta.logpdf(0.4, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_LOGPDF, 0.4, 0.5469646703818638},
    /* scipy 1.10.1 stats.beta.cdf(0.4, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_P, 0.4, 0.5247999999999999},
    /* scipy 1.10.1 stats.beta.sf(0.4, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_Q, 0.4, 0.47520000000000007},
    /* scipy 1.10.1 stats.beta.logpdf(0.99, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_LOGPDF, 0.99, -6.735484058041683},
    /* scipy 1.10.1 stats.beta.cdf(0.99, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_P, 0.99, 0.99999603},
    /* scipy 1.10.1 stats.beta.sf(0.99, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_Q, 0.99, 3.97000000000001e-06},
    /* scipy 1.10.1 stats.beta.ppf(1e-10, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_QP, 1e-10, 4.082494015808333e-06},
    /* scipy 1.10.1 stats.beta.isf(1e-10, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_QQ, 1e-10, 0.9997075768467906},
    /* scipy 1.10.1 stats.beta.ppf(0.3, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_QP, 0.3, 0.27238394207510536},
    /* scipy 1.10.1 stats.beta.isf(0.3, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_QQ, 0.3, 0.5084047548725844},
    /* scipy 1.10.1 stats.beta.ppf(0.975, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_QP, 0.975, 0.8058795503167565},
    /* scipy 1.10.1 stats.beta.isf(0.975, a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_QQ, 0.975, 0.067585986488543},
    /* scipy 1.10.1 stats.beta.mean(a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_MEAN, 0.0, 0.4},
    /* scipy 1.10.1 stats.beta.var(a=2.0, b=3.0, loc=0.0, scale=1.0) */
    {"beta", {2.0, 3.0, 0.0, 1.0}, K_VAR, 0.0, 0.04},
    /* scipy 1.10.1 stats.beta.logpdf(-0.99, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_LOGPDF, -0.99, 0.610218513443348},
    /* scipy 1.10.1 stats.beta.cdf(-0.99, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_P, -0.99, 0.03677570997379935},
    /* scipy 1.10.1 stats.beta.sf(-0.99, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_Q, -0.99, 0.9632242900262007},
    /* scipy 1.10.1 stats.beta.logpdf(0.5, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_LOGPDF, 0.5, -1.550194993957564},
    /* scipy 1.10.1 stats.beta.cdf(0.5, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_P, 0.5, 0.5000000000000001},
    /* scipy 1.10.1 stats.beta.sf(0.5, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_Q, 0.5, 0.5000000000000001},
    /* scipy 1.10.1 stats.beta.logpdf(1.9, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_LOGPDF, 1.9, -0.5257927078485911},
    /* scipy 1.10.1 stats.beta.cdf(1.9, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_P, 1.9, 0.8831140567704597},
    /* scipy 1.10.1 stats.beta.sf(1.9, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_Q, 1.9, 0.11688594322954021},
    /* scipy 1.10.1 stats.beta.ppf(1e-10, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_QP, 1e-10, -1.0},
    /* scipy 1.10.1 stats.beta.isf(1e-10, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_QQ, 1e-10, 2.0},
    /* scipy 1.10.1 stats.beta.ppf(0.3, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_QP, 0.3, -0.3816778784387098},
    /* scipy 1.10.1 stats.beta.isf(0.3, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_QQ, 0.3, 1.3816778784387092},
    /* scipy 1.10.1 stats.beta.ppf(0.975, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_QP, 0.975, 1.9953760005996917},
    /* scipy 1.10.1 stats.beta.isf(0.975, a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_QQ, 0.975, -0.995376000599692},
    /* scipy 1.10.1 stats.beta.mean(a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_MEAN, 0.0, 0.5},
    /* scipy 1.10.1 stats.beta.var(a=0.5, b=0.5, loc=-1.0, scale=3.0) */
    {"beta", {0.5, 0.5, -1.0, 2.0}, K_VAR, 0.0, 1.125},
};

START_TEST(test_reference_values)
{
  /* Relative tolerance 1e-14 (45 eps): the reference is correctly rounded
   * or within 1e-14 (each scipy value was checked against mpmath at 50
   * digits; those off by more were replaced by the mpmath value), and ours
   * are within a few eps for closed forms.  GSL's incomplete gamma and beta
   * functions are good to ~1e-13 at these points: 2e-13 for gamma and beta
   * tails and quantiles. */
  for (size_t i = 0; i < sizeof refs / sizeof refs[0]; i++) {
    const refval *r = &refs[i];
    const sp_family *f = fam(r->name);
    ck_assert(f->check(r->t, NULL) == SP_OK);
    double got = NAN;
    switch (r->kind) {
    case K_LOGPDF: got = f->logpdf(r->t, r->arg); break;
    case K_P: got = f->cdf_P(r->t, r->arg); break;
    case K_Q: got = f->cdf_Q(r->t, r->arg); break;
    case K_QP: got = f->quantile_P(r->t, r->arg); break;
    case K_QQ: got = f->quantile_Q(r->t, r->arg); break;
    case K_MEAN: got = f->mean(r->t); break;
    case K_VAR: got = f->variance(r->t); break;
    default: ck_abort();
    }
    int gslsf = strcmp(r->name, "gamma") == 0 || strcmp(r->name, "beta") == 0;
    double rtol = gslsf && r->kind != K_LOGPDF && r->kind != K_MEAN &&
                          r->kind != K_VAR ? 2e-13 : 1e-14;
    /* A logpdf near zero is compared on the scale of 1 (absolute). */
    double den = r->kind == K_LOGPDF ? fmax(fabs(r->want), 1.0) : fabs(r->want);
    ck_assert_msg(fabs(got - r->want) <= rtol * den,
                  "ref %zu: %s kind %d at %.17g: got %.17g, want %.17g (rel %.2e)",
                  i, r->name, r->kind, r->arg, got, r->want,
                  fabs(got - r->want) / den);
  }
}
END_TEST

START_TEST(test_far_tails)
{
  const double n01[2] = {0.0, 1.0};
  const sp_family *nf = fam("normal");
  /* computed with scipy 1.10.1 norm.sf(37) = 5.7255712225239266e-300, which
   * is itself 1.1e-13 low: mpmath 1.3.0 (50 digits) ncdf(-37) =
   * 5.7255712225245768227e-300; GSL's ugaussian_Q is within an ulp. */
  ASSERT_REL(nf->cdf_Q(n01, 37.0), 5.7255712225239266e-300, 2e-13);
  ASSERT_REL(nf->cdf_Q(n01, 37.0), 5.7255712225245768227e-300, 4 * EPS);
  ASSERT_REL(nf->cdf_P(n01, -37.0), 5.7255712225245768227e-300, 4 * EPS);
  /* computed with scipy 1.10.1 norm.isf(1e-300) */
  ASSERT_REL(nf->quantile_Q(n01, 1e-300), 37.0470962993612, 1e-14);
  ASSERT_REL(nf->quantile_P(n01, 1e-300), -37.0470962993612, 1e-14);

  /* weibull: closed forms, mpmath 1.3.0 (50 digits):
   * quantile_Q(1e-300) = 2 (log 1e300)^(1/1.5) = 2 * 690.77552789821...^(2/3),
   * Q(60) = exp(-(60/2)^1.5) = exp(-164.316767...). */
  const sp_family *wf = fam("weibull");
  const double w[2] = {1.5, 2.0};
  ASSERT_REL(wf->quantile_Q(w, 1e-300), 156.28643735409605024, 64 * EPS);
  ASSERT_REL(wf->cdf_Q(w, 60.0), 4.3464501045721511575e-72, 16 * EPS);
  /* P from the lower end: -expm1(-(1e-10/2)^1.5) = (5e-11)^1.5 (1 - ...):
   * mpmath 1.3.0 -expm1(-(mpf(1e-10)/2)**1.5). */
  ASSERT_REL(wf->cdf_P(w, 1e-10), 3.5355339059327371902e-16, 8 * EPS);
  /* scale (p)^(1/k) at p = 1e-300: the exponent 1/k is rounded, which moves
   * the result by |log p|/k * eps/2 relative (460 ulps/2 here), as any
   * double evaluation of exp(log(p)/k) would: bound 2 |log x| eps. */
  ASSERT_REL(wf->quantile_P(w, 1e-300), 2.0000000000000000334e-200, 2 * 460.0 * EPS);

  /* exponential: -log1p(-p)/rate keeps p = 1e-300 exact (closed form). */
  const double e[1] = {0.5};
  ASSERT_REL(fam("exponential")->quantile_P(e, 1e-300), 2e-300, 2 * EPS);
  ASSERT_REL(fam("exponential")->cdf_Q(e, 1300.0), exp(-650.0), 4 * EPS);

  /* gamma far tails: mpmath 1.3.0 (50 digits) root of log P(2.5, x) =
   * log 1e-300 (scipy 1.10.1 gamma.ppf(1e-300, 2.5) = 1.6167038902915902e-120,
   * 1.6e-14 off), and computed with scipy 1.10.1 gamma.isf(1e-300, 2.5)
   * (agrees with mpmath to 1e-16). */
  const sp_family *gf = fam("gamma");
  const double g[2] = {2.5, 1.0};
  ASSERT_REL(gf->quantile_P(g, 1e-300), 1.6167038902915641898e-120, 1e-13);
  ASSERT_REL(gf->quantile_Q(g, 1e-300), 700.32029282651343494, 1e-13);
  /* shape 0.01: the lower quantile of 1e-5 is (1e-5 Gamma(1.01))^100 ~ 1e-500,
   * below the double range: 0 exactly, not NaN. */
  const double gs[2] = {0.01, 1.0};
  ck_assert(gf->quantile_P(gs, 1e-5) == 0.0);
  /* Shape 0.00096: the median is 1e-314 (subnormal), where exp(u) is too
   * coarse for Newton's method; the solver works from u and the series
   * term: closed form x = (Gamma(1 + a) / 2)^(1/a), mpmath 1.3.0
   * exp((log(0.5) + loggamma(1 + a))/a) = 1.0563333070977747026e-314.  A
   * subnormal has fewer digits: compared to 1e-9. */
  const double gt[2] = {0.00095953198005087358, 1.0};
  ASSERT_REL(gf->quantile_Q(gt, 0.5), 1.0563333070977747026e-314, 1e-9);
  ASSERT_REL(gf->quantile_P(gt, 0.5), 1.0563333070977747026e-314, 1e-9);
  /* mpmath 1.3.0 root of P(0.01, x) = 0.1 (scipy 1.10.1 gamma.ppf(0.1, 0.01)
   * = 5.660738147062073e-101, 2.4e-14 off). */
  ASSERT_REL(gf->quantile_P(gs, 0.1), 5.6607381470619397893e-101, 1e-13);

  /* beta: computed with scipy 1.10.1 beta.ppf(1e-300, 2, 3) (agrees with
   * mpmath to 2e-15); near max the quantile is formed as max - w * ym, so with max = 0 the
   * upper quantile keeps its digits: mpmath 1.3.0 root of
   * betainc(3, 2, 0, ym) = 1e-300 (scipy 1.10.1 beta.ppf(1e-300, 3, 2) =
   * 6.299605249474366e-101 agrees). */
  const sp_family *bf = fam("beta");
  const double b[4] = {2, 3, 0, 1};
  ASSERT_REL(bf->quantile_P(b, 1e-300), 4.082482904638631e-151, 1e-13);
  ASSERT_REL(1.0 - bf->quantile_Q(b, 0.5 - 1e-12), 1.0 - bf->quantile_P(b, 0.5 + 1e-12), 1e-10);
  const double b2[4] = {2, 3, -1, 0};
  ASSERT_REL(-bf->quantile_Q(b2, 1e-300), 6.2996052494743658765e-101, 1e-13);

  /* truncnormal with the limits 40 and 45 sd above the mean: Z ~ 1e-350
   * underflows, yet the conditional law is well defined.  mpmath 1.3.0
   * (50 digits): P(40.01) = (Q(40) - Q(40.01))/(Q(40) - Q(45)),
   * median = z with Q(z) = (Q(40) + Q(45))/2. */
  const sp_family *tf = fam("truncnormal");
  const double tt[4] = {0, 1, 40, 45};
  ASSERT_REL(tf->cdf_P(tt, 40.01), 0.32988079019628447521, 1e-13);
  ASSERT_REL(tf->cdf_Q(tt, 40.01), 0.67011920980371552479, 1e-13);
  ASSERT_REL(tf->quantile_P(tt, 0.5), 40.017314126764651106, 1e-15);
  ASSERT_REL(tf->quantile_Q(tt, 1e-3), 40.172215882479076353, 1e-15);
  ASSERT_REL(tf->mean(tt), 40.024968847207263723, 1e-14);
  /* The mirror image below the mean. */
  const double tm[4] = {0, 1, -45, -40};
  ASSERT_REL(tf->cdf_Q(tm, -40.01), 0.32988079019628447521, 1e-13);
  ASSERT_REL(tf->quantile_Q(tm, 0.5), -40.017314126764651106, 1e-15);
  /* Just above a finite lower limit: P ~ f(lower) (x - lower), here
   * mpmath 1.3.0 (ncdf(x) - ncdf(-1))/(ncdf(2) - ncdf(-1)) at the double
   * x = -1 + 2^-40; a difference of two nearly equal tails would lose
   * ~5 digits. */
  const double t12[4] = {0, 1, -1, 2};
  ASSERT_REL(tf->cdf_P(t12, -1.0 + 0x1p-40), 2.6884014155272603211e-13, 1e-14);
  ASSERT_REL(tf->quantile_P(t12, 2.6884014155272603211e-13), -1.0 + 0x1p-40, 4 * EPS);
  /* A limit near the mean: the quantile close to it is formed as lower + sd
   * d with d from the series, so it keeps its digits relative to d (a tail
   * target formed on the scale of Q(lower) ~ 1/2 would leave ~1e-16
   * absolute, 100 ulps of lower).  mpmath 1.3.0 root of (Q(a) - Q(x))/Q(a)
   * = 1e-10 for a = 0.0075673: x - a = 1.245782578292204793593e-10. */
  const double tl[4] = {0, 1, 0.0075673, INFINITY};
  ASSERT_REL(tf->quantile_P(tl, 1e-10) - 0.0075673, 1.245782578292204793593e-10, 1e-6);
  ck_assert(tf->quantile_P(tl, 1e-300) == 0.0075673);
  /* One-sided above a = 3: P(3 + 2^-40), mpmath (Q(3) - Q(x))/Q(3). */
  const double t3[4] = {0, 1, 3, INFINITY};
  ASSERT_REL(tf->cdf_P(t3, 3.0 + 0x1p-40), 2.9859608320529856116e-12, 1e-14);

  /* gumbel_max: Q = -expm1(-exp(-z)) ~ exp(-z) far up; closed form
   * exp(-700) (1 - exp(-700)/2) = exp(-700) to double precision. */
  const double gm[2] = {0, 1};
  ASSERT_REL(fam("gumbel_max")->cdf_Q(gm, 700.0), exp(-700.0), 4 * EPS);
  ASSERT_REL(fam("gumbel_min")->cdf_P(gm, -700.0), exp(-700.0), 4 * EPS);
  ASSERT_REL(fam("gumbel_max")->quantile_Q(gm, 1e-300), 690.77552789821368, 4 * EPS);
  /* logistic: Q(700) = 1/(1 + e^700) = e^-700 to double precision. */
  ASSERT_REL(fam("logistic")->cdf_Q(gm, 700.0), exp(-700.0), 4 * EPS);
  ASSERT_REL(fam("logistic")->quantile_Q(gm, 1e-300), 690.77552789821368, 4 * EPS);
  /* loglogistic shape 2 scale 1: Q(1e100) = 1/(1 + 1e200) = 1e-200 (closed
   * form, correctly rounded 1e-200). */
  const double ll[2] = {2, 1};
  ASSERT_REL(fam("loglogistic")->cdf_Q(ll, 1e100), 1e-200, 4 * EPS);
  ASSERT_REL(fam("loglogistic")->quantile_Q(ll, 1e-200), 1e100, 64 * EPS);
  /* lognormal: mpmath 1.3.0 exp(norm.isf(1e-300)) with the 50-digit z. */
  const double ln01[2] = {0, 1};
  ASSERT_REL(fam("lognormal")->quantile_Q(ln01, 1e-300), 12284273959249777.601, 128 * EPS);
}
END_TEST

START_TEST(test_density_edges)
{
  /* At x = 0 the Weibull, gamma and log-logistic densities are infinite
   * for shape < 1, 1/scale for shape 1, and 0 for shape > 1 (closed forms). */
  const char *names[] = {"weibull", "gamma", "loglogistic"};
  for (int i = 0; i < 3; i++) {
    const sp_family *f = fam(names[i]);
    const double a[2] = {0.5, 2.0}, b[2] = {1.0, 2.0}, c[2] = {3.0, 2.0};
    ck_assert_msg(f->logpdf(a, 0.0) == INFINITY, "%s", names[i]);
    ASSERT_REL(f->logpdf(b, 0.0), -log(2.0), EPS);
    ck_assert_msg(f->logpdf(c, 0.0) == -INFINITY, "%s", names[i]);
    ck_assert(f->logpdf(c, -1.0) == -INFINITY);
  }
  /* Gamma with a huge shape near its mean, where the direct form cancels
   * terms of size a log a ~ 2.5e12: mpmath 1.3.0 (60 digits)
   * (a - 1) log(x/s) - x/s - loggamma(a) - log(s) for a = 1e11, s = 2e-11,
   * x = 2.000002: 11.002131331037784645.  The rounding of x/s (relative
   * eps, amplified by a r = 1e5 in a log1pmx(r)) allows ~1e-11 absolute;
   * the direct form would be off by ~1e-3. */
  const double gh[2] = {1e11, 2e-11};
  ASSERT_ABS(fam("gamma")->logpdf(gh, 2.000002), 11.002131331037784645, 1e-10);
  /* Beta with alpha = 1 at min: density beta/w (closed form 3/2). */
  const double bt[4] = {1, 3, 0, 2};
  /* via GSL's lnbeta(1, 3), good to ~1e-15 absolute */
  ASSERT_REL(fam("beta")->logpdf(bt, 0.0), log(1.5), 16 * EPS);
  /* Triangular at its mode: 2/(max - min). */
  const double tr[3] = {0, 1, 4};
  ASSERT_REL(fam("triangular")->logpdf(tr, 1.0), log(0.5), EPS);
  ck_assert(fam("triangular")->logpdf(tr, 0.0) == -INFINITY);
  /* Uniform at both ends: inside the closed support. */
  const double u[2] = {-1, 3};
  ASSERT_REL(fam("uniform")->logpdf(u, -1.0), -log(4.0), EPS);
  ASSERT_REL(fam("uniform")->logpdf(u, 3.0), -log(4.0), EPS);
  /* exponential2 at its location: log(rate). */
  const double e2[2] = {2, 5};
  ASSERT_REL(fam("exponential2")->logpdf(e2, 5.0), log(2.0), EPS);
}
END_TEST

/* ---- moments -------------------------------------------------------------- */

START_TEST(test_moments)
{
  /* Where the moments do not exist: log-logistic mean for shape <= 1 and
   * variance for shape <= 2 diverge (the integrals of x f(x) and x^2 f(x)
   * behave as x^-shape at infinity). */
  const sp_family *ll = fam("loglogistic");
  const double s1[2] = {1.0, 2.0}, s2[2] = {2.0, 2.0}, s15[2] = {1.5, 2.0};
  ck_assert(ll->mean(s1) == INFINITY && ll->variance(s1) == INFINITY);
  ck_assert(isfinite(ll->mean(s2)) && ll->variance(s2) == INFINITY);
  ck_assert(isfinite(ll->mean(s15)) && ll->variance(s15) == INFINITY);
  /* computed with scipy 1.10.1 fisk.mean(1.5, scale=2.0) */
  ASSERT_REL(ll->mean(s15), 4.836798304624581, 1e-14);

  /* Weibull variance for large shapes, where Gamma(1 + 2/k) - Gamma(1 +
   * 1/k)^2 cancels: mpmath 1.3.0 (50 digits)
   * gamma(1 + 2/k) - gamma(1 + 1/k)**2 for k = 50 and 1000 (scale 1);
   * the direct double formula is off by ~1e-13 and ~1e-10. */
  const sp_family *wf = fam("weibull");
  const double k50[2] = {50, 1}, k1000[2] = {1000, 1}, k8[2] = {8, 3};
  ASSERT_REL(wf->variance(k50), 0.00062534258560130378593, 1e-14);
  ASSERT_REL(wf->variance(k1000), 1.6406426814849910737e-6, 1e-14);
  ASSERT_REL(wf->variance(k8), 0.1757084790174491771, 1e-14);
  /* Tiny shape: the variance overflows to +inf (Gamma(1 + 2/0.005)
   * ~ 1e868), the mean is finite only for scale small enough. */
  const double k0[2] = {0.005, 1};
  ck_assert(wf->variance(k0) == INFINITY);
  const double kt[2] = {0.005, 1e-300};
  ck_assert(wf->mean(kt) == INFINITY || isfinite(wf->mean(kt)));
  ck_assert(!isnan(wf->variance(kt)));
  /* weibull3 and exponential2: the location shifts the mean only. */
  const double w3[3] = {2.2, 3, 10}, w2[2] = {2.2, 3};
  ASSERT_REL(fam("weibull3")->mean(w3), 10.0 + wf->mean(w2), 2 * EPS);
  ASSERT_REL(fam("weibull3")->variance(w3), wf->variance(w2), 2 * EPS);
  /* lognormal variance for a small sdlog, where exp(s^2) - 1 would cancel:
   * mpmath 1.3.0 (exp(s^2) - 1) exp(2m + s^2) with m = 0, s = 1e-6:
   * 1.0000000000014999095e-12 (= s^2 (1 + 3 s^2 / 2 + ...)). */
  const double lns[2] = {0.0, 1e-6};
  ASSERT_REL(fam("lognormal")->variance(lns), 1.0000000000014999095e-12, 4 * EPS);
  /* truncnormal far in a tail, mirrored, and narrow: mpmath 1.3.0 at 100
   * digits, the closed forms mean = (phi(a) - phi(b))/Z and var = 1 +
   * (a phi(a) - b phi(b))/Z - mean^2 with Z from erfc (at 100 digits their
   * cancellation is harmless; in doubles it would lose 4 to 10 digits, the
   * variance's terms being near a^2 and its value near 1/a^2).  mpmath's
   * quadrature was not used: over [40, inf) it is off by 1e-9. */
  const sp_family *tf = fam("truncnormal");
  const double t89[4] = {0, 1, 8, 9}, t40[4] = {0, 1, 40, INFINITY},
               tlo[4] = {2, 0.5, -INFINITY, -8}, tnar[4] = {0, 1, -1e-3, 1e-3},
               toff[4] = {0, 1, 0.25, 0.2501};
  ASSERT_REL(tf->mean(t89), 8.1211889929797971226, 1e-14);
  ASSERT_REL(tf->variance(t89), 0.014148542782748111039, 1e-14);
  ASSERT_REL(tf->mean(t40), 40.024968847207263723, 1e-15);
  ASSERT_REL(tf->variance(t40), 0.0006226683785913887735, 1e-14);
  /* (below the mean, Z = ncdf(b) directly; at 300 digits) */
  ASSERT_REL(tf->mean(tlo), -8.0248765342639252711, 1e-15);
  ASSERT_REL(tf->variance(tlo), 0.00061581540376304089992, 1e-14);
  /* Symmetric about the mean: mean 0 to an ulp of the width. */
  ASSERT_ABS(tf->mean(tnar), 0.0, 4 * EPS * 2e-3);
  ASSERT_REL(tf->variance(tnar), 3.3333328888889101917e-7, 1e-14);
  ASSERT_REL(tf->mean(toff), 0.25004999979162499456, 1e-15);
  ASSERT_REL(tf->variance(toff), 8.3333333302931991437e-10, 1e-13);
  /* truncnormal without truncation is the normal. */
  const double tn[4] = {5, 2, -INFINITY, INFINITY};
  ASSERT_REL(fam("truncnormal")->mean(tn), 5.0, EPS);
  ASSERT_REL(fam("truncnormal")->variance(tn), 4.0, 4 * EPS);
}
END_TEST

/* ---- samplers --------------------------------------------------------------- */

/* Kolmogorov-Smirnov distance of the sorted sample y[0..n) from the exact
 * cdf_P of the family. */
static double ks_distance(const sp_family *f, const double *t, double *y, size_t n)
{
  qsort(y, n, sizeof *y, cmp_double);
  double d = 0.0;
  for (size_t i = 0; i < n; i++) {
    double F = f->cdf_P(t, y[i]);
    double a = F - (double)i / (double)n, b = (double)(i + 1) / (double)n - F;
    if (a > d) d = a;
    if (b > d) d = b;
  }
  return d;
}

START_TEST(test_samplers)
{
  /* Every family, fixed block stream, n = 20000 draws against the exact
   * CDF.  KS: the limiting law P(sqrt(n) D > t) ~ 2 exp(-2 t^2) (Kolmogorov
   * 1933) gives 5.7e-7, the two-sided 5-sigma normal tail, at t = 2.745;
   * bound sqrt(n) D <= 2.75.  Mean: within 5 standard errors sqrt(var/n).
   * Each set has a finite variance. */
  static const struct {
    const char *name;
    double t[4];
  } ss[] = {
    {"normal", {1.5, 2.5}},          {"lognormal", {0.5, 0.75}},
    {"weibull", {1.7, 3.2}},         {"weibull", {0.5, 2.0}},
    {"weibull3", {2.2, 3, 10}},      {"gamma", {2.5, 1.5}},
    {"gamma", {0.3, 2.0}},           {"gamma", {1.0, 1.0}},
    {"gamma", {80.0, 0.1}},          {"exponential", {0.4}},
    {"exponential2", {2, 5}},        {"gumbel_max", {1, 2}},
    {"gumbel_min", {-2, 0.5}},       {"logistic", {0.5, 1.5}},
    {"loglogistic", {5, 2}},         {"uniform", {-1, 3}},
    {"truncnormal", {1, 2, -1, 4}},  {"truncnormal", {0, 1, 3, INFINITY}},
    {"truncnormal", {0, 1, -INFINITY, -30}},
    {"triangular", {0, 1, 4}},       {"triangular", {0, 0, 1}},
    {"beta", {2, 3, 0, 1}},          {"beta", {0.5, 0.5, -1, 2}},
    {"beta", {0.3, 4, 0, 10}},
  };
  enum { N = 20000 };
  static double y[N];
  for (size_t i = 0; i < sizeof ss / sizeof ss[0]; i++) {
    const sp_family *f = fam(ss[i].name);
    const double *t = ss[i].t;
    sp_pcg64 g;
    sp_rng_block_stream(&g, 1234567u, (uint64_t)i, 0u);
    f->sample(t, &g, y, N);
    double lo, hi, sum = 0.0;
    f->support(t, &lo, &hi);
    for (size_t k = 0; k < N; k++) {
      ck_assert_msg(y[k] >= lo && y[k] <= hi, "%s: draw %.17g outside support", f->name, y[k]);
      sum += y[k];
    }
    double m = sum / N, mu = f->mean(t), se = sqrt(f->variance(t) / N);
    ck_assert_msg(fabs(m - mu) <= 5.0 * se, "%s set %zu: sample mean %.10g, mean %.10g, se %.3g",
                  f->name, i, m, mu, se);
    double d = ks_distance(f, t, y, N);
    ck_assert_msg(sqrt((double)N) * d <= 2.75, "%s set %zu: sqrt(n) D = %.4f", f->name, i,
                  sqrt((double)N) * d);
  }
}
END_TEST

START_TEST(test_sampler_pinned)
{
  /* First three draws at block stream (seed 20240601, block 7, sub 3).
   * These values are pinned from this implementation (no outside source):
   * they catch any change in the stream or in the samplers' use of it.
   * The normal's are the ziggurat draws pinned (and derived by hand from
   * the stream's outputs) in check_rng.c.  The streams of normal, weibull
   * and gamma (among others) changed when the samplers moved from
   * inversion to ziggurat draws. */
  sp_pcg64 g;
  double out[3];
  const double n01[2] = {0, 1}, w[2] = {1.5, 2.0}, ga[2] = {2.5, 1.5};
  sp_rng_block_stream(&g, 20240601u, 7u, 3u);
  fam("normal")->sample(n01, &g, out, 3);
  ck_assert_double_eq(out[0], 0.38773558333298319);
  ck_assert_double_eq(out[1], 1.2450300397411405);
  ck_assert_double_eq(out[2], -0.27477812498919446);
  sp_rng_block_stream(&g, 20240601u, 7u, 3u);
  fam("weibull")->sample(w, &g, out, 3);
  ck_assert_double_eq(out[0], 1.2326819030763769);
  ck_assert_double_eq(out[1], 2.2640581819452454);
  ck_assert_double_eq(out[2], 1.0304199676105503);
  sp_rng_block_stream(&g, 20240601u, 7u, 3u);
  fam("gamma")->sample(ga, &g, out, 3);
  ck_assert_double_eq(out[0], 4.1834665088676735);
  ck_assert_double_eq(out[1], 2.6802748070697415);
  ck_assert_double_eq(out[2], 2.1261155234962796);

  /* Inversion samplers use one output per draw: a block of n draws equals
   * the quantiles of the stream's first n open uniforms (uniform's own
   * sampler and triangular's generic one), and drawing in two calls gives
   * the same values as one. */
  const char *inv[2] = {"uniform", "triangular"};
  const double tu[3] = {-1.0, 3.0, 0.0}, tt[3] = {0.0, 1.0, 4.0};
  for (int k = 0; k < 2; k++) {
    const sp_family *f = fam(inv[k]);
    const double *t = k ? tt : tu;
    double u[5], a[5], b[5];
    sp_rng_block_stream(&g, 99u, 0u, 0u);
    sp_rng_fill_open(&g, u, 5);
    sp_rng_block_stream(&g, 99u, 0u, 0u);
    f->sample(t, &g, a, 5);
    sp_family_from_uniform(f, t, u, b, 5);
    for (int i = 0; i < 5; i++) ck_assert_double_eq(a[i], b[i]);
    sp_rng_block_stream(&g, 99u, 0u, 0u);
    f->sample(t, &g, b, 2);
    f->sample(t, &g, b + 2, 3);
    for (int i = 0; i < 5; i++) ck_assert_double_eq(a[i], b[i]);
  }
}
END_TEST

START_TEST(test_sampler_methods)
{
  /* Each sampler is the method its comment names, checked draw by draw on
   * one block stream: mean + sd z and exp(meanlog + sdlog z) for ziggurat
   * normals z; scale E^(1/shape) (the power by sp_family_pow_block, whose
   * accuracy test_pow_block checks), loc + that, E / rate, loc + E / rate,
   * loc -+ scale log E for ziggurat exponentials E (bit for bit: the same
   * operations).  The inversion samplers against the quantile functions
   * (sp_family_from_uniform) of the same open uniforms: logistic to 8 ulps
   * of |loc| + scale |z| (both forms of logit are within 2 ulps), and
   * loglogistic, whose pow of u/(1 - u) and exp of logit / shape differ by
   * a few ulps times 1 + |log(x / scale)| / shape, to 16 ulps of that. */
  enum { N = 3000 };
  static double ref[N], got[N], u[N];
  sp_pcg64 g;
  const double tn[2] = {1.5, 2.5}, tl[2] = {0.5, 0.75}, tw[2] = {1.7, 3.2},
               tw3[3] = {2.2, 3.0, 10.0}, te[1] = {0.4}, te2[2] = {2.0, 5.0},
               tg[2] = {1.0, 2.0}, tlg[2] = {0.5, 1.5}, tll[2] = {5.0, 2.0};
  struct {
    const char *name;
    const double *t;
  } zig[] = {{"normal", tn},      {"lognormal", tl},     {"weibull", tw},
             {"weibull3", tw3},   {"exponential", te},   {"exponential2", te2},
             {"gumbel_max", tg},  {"gumbel_min", tg}};
  for (size_t k = 0; k < sizeof zig / sizeof zig[0]; k++) {
    const double *t = zig[k].t;
    const int normal = k < 2;
    sp_rng_block_stream(&g, 4242u, k, 0u);
    (normal ? sp_rng_fill_normal : sp_rng_fill_exponential)(&g, ref, N);
    if (k == 2 || k == 3) sp_family_pow_block(ref, N, 1.0 / t[0]); /* E^(1/shape) */
    for (int i = 0; i < N; i++) {
      const double z = ref[i];
      switch (k) {
      case 0: ref[i] = t[0] + t[1] * z; break;
      case 1: ref[i] = exp(t[0] + t[1] * z); break;
      case 2: ref[i] = t[1] * z; break;
      case 3: ref[i] = t[2] + t[1] * z; break;
      case 4: ref[i] = z / t[0]; break;
      case 5: ref[i] = t[1] + z / t[0]; break;
      case 6: ref[i] = t[0] - t[1] * log(z); break;
      default: ref[i] = t[0] + t[1] * log(z); break;
      }
    }
    sp_rng_block_stream(&g, 4242u, k, 0u);
    fam(zig[k].name)->sample(t, &g, got, N);
    for (int i = 0; i < N; i++)
      ck_assert_msg(got[i] == ref[i], "%s draw %d: %.17g, want %.17g", zig[k].name, i, got[i],
                    ref[i]);
  }
  for (int k = 0; k < 2; k++) {
    const sp_family *f = fam(k ? "loglogistic" : "logistic");
    const double *t = k ? tll : tlg;
    sp_rng_block_stream(&g, 4243u, (uint64_t)k, 0u);
    sp_rng_fill_open(&g, u, N);
    sp_family_from_uniform(f, t, u, ref, N);
    sp_rng_block_stream(&g, 4243u, (uint64_t)k, 0u);
    f->sample(t, &g, got, N);
    for (int i = 0; i < N; i++) {
      double tol = k ? 16 * EPS * fabs(ref[i]) * (1.0 + fabs(log(ref[i] / t[1])) / t[0])
                     : 8 * EPS * (fabs(t[0]) + fabs(ref[i] - t[0]));
      ck_assert_msg(fabs(got[i] - ref[i]) <= tol, "%s draw %d (u = %.17g): %.17g, want %.17g",
                    f->name, i, u[i], got[i], ref[i]);
    }
  }
}
END_TEST

/* Parameter sets for the sampler tests below: every sampler's methods
 * (truncnormal by rejection, Z >= 1/16, and by inversion; gamma and beta
 * both sides of shape 1), each with finite moments up to order 8, so that
 * the sample fourth moment estimates the variance's standard error. */
static const struct {
  const char *name;
  double t[4];
} sampler_sets[] = {
  {"normal", {1.5, 2.5}},          {"normal", {79300.0, 900.0}},
  {"lognormal", {0.5, 0.75}},      {"weibull", {1.7, 3.2}},
  {"weibull", {0.5, 2.0}},         {"weibull", {8.0, 120.0}},
  {"weibull3", {2.2, 3, 10}},      {"exponential", {0.4}},
  {"exponential2", {2, 5}},        {"gumbel_max", {1, 2}},
  {"gumbel_min", {-2, 0.5}},       {"logistic", {0.5, 1.5}},
  {"loglogistic", {10, 2}},        {"uniform", {-1, 3}},
  {"truncnormal", {1, 2, -1, 4}},  {"truncnormal", {0, 1, -0.2, 0.3}},
  {"truncnormal", {0, 1, 1.5, INFINITY}}, {"truncnormal", {0, 1, 1.6, INFINITY}},
  {"truncnormal", {0, 1, -INFINITY, -3}}, {"gamma", {2.5, 1.5}},
  {"gamma", {0.3, 2.0}},           {"beta", {2, 3, 0, 1}},
  {"beta", {0.5, 0.5, -1, 2}},
};

START_TEST(test_sampler_split)
{
  /* One call of 1000 draws equals calls of 377 and 623 on the same stream,
   * and leaves the generator in the same state: the rejection samplers
   * (ziggurat, truncnormal, gamma, beta) consume the stream exactly as far
   * as their draws need, whatever the block boundaries. */
  enum { N = 1000, A = 377 };
  static double a[N], b[N];
  for (size_t k = 0; k < sizeof sampler_sets / sizeof sampler_sets[0]; k++) {
    const sp_family *f = fam(sampler_sets[k].name);
    const double *t = sampler_sets[k].t;
    sp_pcg64 g, h;
    sp_rng_block_stream(&g, 777u, k, 1u);
    h = g;
    f->sample(t, &g, a, N);
    f->sample(t, &h, b, A);
    f->sample(t, &h, b + A, N - A);
    for (int i = 0; i < N; i++)
      ck_assert_msg(a[i] == b[i], "%s set %zu draw %d: %.17g vs %.17g", f->name, k, i, a[i], b[i]);
    ck_assert_msg(g.state == h.state, "%s set %zu: different final states", f->name, k);
  }
}
END_TEST

START_TEST(test_samplers_large)
{
  /* 10^5 draws per set against the exact law, every bound at 5 sigma:
   * Kolmogorov-Smirnov sqrt(n) D <= 2.75 (as test_samplers); the mean
   * within 5 sqrt(var / n); the sample variance (n denominator, about the
   * true mean) within 5 sqrt((m4 - var^2) / n), m4 the sample fourth
   * central moment (the variance of a mean of (x - mu)^2).  Each set has
   * finite moments to order 8, so m4 itself is a consistent estimate. */
  enum { N = 100000 };
  static double y[N];
  for (size_t k = 0; k < sizeof sampler_sets / sizeof sampler_sets[0]; k++) {
    const sp_family *f = fam(sampler_sets[k].name);
    const double *t = sampler_sets[k].t;
    sp_pcg64 g;
    sp_rng_block_stream(&g, 987654u, k, 2u);
    f->sample(t, &g, y, N);
    const double mu = f->mean(t), var = f->variance(t);
    double lo, hi, s1 = 0.0, s2 = 0.0, s4 = 0.0;
    f->support(t, &lo, &hi);
    long outside = 0;
    for (int i = 0; i < N; i++) {
      outside += !(y[i] >= lo && y[i] <= hi);
      const double d = y[i] - mu, d2 = d * d;
      s1 += d;
      s2 += d2;
      s4 += d2 * d2;
    }
    ck_assert_msg(outside == 0, "%s set %zu: %ld draws outside the support", f->name, k, outside);
    const double m2 = s2 / N, m4 = s4 / N;
    ck_assert_msg(fabs(s1 / N) <= 5.0 * sqrt(var / N), "%s set %zu: mean off by %.3g (se %.3g)",
                  f->name, k, s1 / N, sqrt(var / N));
    ck_assert_msg(fabs(m2 - var) <= 5.0 * sqrt((m4 - var * var) / N),
                  "%s set %zu: variance %.10g, want %.10g (se %.3g)", f->name, k, m2, var,
                  sqrt((m4 - var * var) / N));
    double d = ks_distance(f, t, y, N);
    ck_assert_msg(sqrt((double)N) * d <= 2.75, "%s set %zu: sqrt(n) D = %.4f", f->name, k,
                  sqrt((double)N) * d);
  }
}
END_TEST

START_TEST(test_from_uniform_and_loglik)
{
  /* from_uniform: quantile_P below 1/2, quantile_Q(1 - u) above, bit for
   * bit; and the upper tail keeps its digits (closed form for the
   * exponential: u = 1 - 2^-53 gives 53 log 2 / rate). */
  const sp_family *f = fam("gumbel_min");
  const double t[2] = {1, 2};
  const double u[4] = {1e-300, 0.5, 0.75, 1.0 - 0x1p-53};
  double out[4];
  sp_family_from_uniform(f, t, u, out, 4);
  ck_assert_double_eq(out[0], f->quantile_P(t, u[0]));
  ck_assert_double_eq(out[1], f->quantile_P(t, u[1]));
  ck_assert_double_eq(out[2], f->quantile_Q(t, 0.25));
  ck_assert_double_eq(out[3], f->quantile_Q(t, 0x1p-53));
  const double e[1] = {2.0};
  sp_family_from_uniform(fam("exponential"), e, u + 3, out, 1);
  ASSERT_REL(out[0], 53.0 * 0.69314718055994530942 / 2.0, 2 * EPS);

  /* loglik: the sum of logpdf; -inf with a value outside the support. */
  const sp_family *nf = fam("normal");
  const double n01[2] = {0.5, 2};
  const double x[5] = {-1, 0, 0.5, 2, 7};
  double want = 0.0;
  for (int i = 0; i < 5; i++) want += nf->logpdf(n01, x[i]);
  ASSERT_REL(sp_family_loglik(nf, n01, x, 5), want, 4 * EPS);
  ck_assert(sp_family_loglik(nf, n01, x, 0) == 0.0);
  const double w[2] = {2, 1};
  ck_assert(sp_family_loglik(fam("weibull"), w, x, 5) == -INFINITY);
  /* A million equal terms: the compensated sum is exact to rounding
   * (closed form n logpdf). */
  enum { M = 1000000 };
  static double big[M];
  for (size_t i = 0; i < M; i++) big[i] = 0.1;
  ASSERT_REL(sp_family_loglik(nf, n01, big, M), (double)M * nf->logpdf(n01, 0.1), 4 * EPS);
}
END_TEST

/* ---- fitting ------------------------------------------------------------------ */

/* An invented dataset of 25 positive values (typed in for this test, no
 * outside source). */
static const double X25[25] = {12.7, 18.3, 9.41, 25.6, 14.2, 31.9, 7.85, 21.4, 16.6,
                               11.3, 27.8, 19.9, 13.5, 22.7, 8.92, 35.1, 17.4, 15.8,
                               24.3, 10.6, 29.2, 20.5, 14.9, 18.8, 12.1};

static void fit(const char *name, const int *fixed, double *t)
{
  sp_error err;
  sp_error_clear(&err);
  const sp_family *f = fam(name);
  sp_status s = f->fit_mle(X25, 25, fixed, t, &err);
  ck_assert_msg(s == SP_OK, "%s fit_mle: %s", name, err.msg);
  ck_assert_msg(f->check(t, NULL) == SP_OK, "%s fit_mle gave invalid parameters", name);
}

START_TEST(test_fit_mle_closed_forms)
{
  double t[4];
  /* computed with scipy 1.10.1 norm.fit(X) = (18.431200000000004,
   * 7.25922492832396); mpmath 1.3.0 mean and sqrt(sum (x - mean)^2 / n):
   * 18.4312, 7.2592249283239599294. */
  fit("normal", NULL, t);
  ASSERT_REL(t[0], 18.431200000000004, 4 * EPS);
  ASSERT_REL(t[1], 7.2592249283239599294, 8 * EPS);
  ASSERT_REL(t[1], 7.25922492832396, 1e-14);
  /* computed with scipy 1.10.1 norm.fit(X, floc=20.0) = (20.0, 7.426808197334842) */
  int fix_mean[2] = {1, 0};
  t[0] = 20.0;
  fit("normal", fix_mean, t);
  ck_assert_double_eq(t[0], 20.0);
  ASSERT_REL(t[1], 7.426808197334842, 1e-14);
  /* computed with scipy 1.10.1 norm.fit(X, fscale=5.0) = (18.431200000000004, 5.0) */
  int fix_sd[2] = {0, 1};
  t[1] = 5.0;
  fit("normal", fix_sd, t);
  ASSERT_REL(t[0], 18.431200000000004, 4 * EPS);
  ck_assert_double_eq(t[1], 5.0);

  /* computed with scipy 1.10.1 lognorm.fit(X, floc=0) = (0.40130346751112, 0.0,
   * 17.037187432945636): meanlog = log(17.037187432945636) =
   * 2.835398451025788467 (mpmath mean of log x), sdlog = 0.40130346751112. */
  fit("lognormal", NULL, t);
  ASSERT_REL(t[0], 2.835398451025788467, 4 * EPS);
  ASSERT_REL(t[1], 0.40130346751111998261, 16 * EPS);
  ASSERT_REL(exp(t[0]), 17.037187432945636, 1e-14);

  /* computed with scipy 1.10.1 expon.fit(X, floc=0) = (0.0, 18.431200000000004) */
  fit("exponential", NULL, t);
  ASSERT_REL(t[0], 1.0 / 18.431200000000004, 4 * EPS);
  /* computed with scipy 1.10.1 expon.fit(X) = (7.85, 10.581200000000004):
   * exponential2 location = min, rate = 1/(mean - min). */
  fit("exponential2", NULL, t);
  ASSERT_REL(t[0], 1.0 / 10.581200000000004, 8 * EPS);
  ck_assert_double_eq(t[1], 7.85);
  /* computed with scipy 1.10.1 expon.fit(X, floc=5.0) = (5.0, 13.431200000000004) */
  int fix_loc2[2] = {0, 1};
  t[1] = 5.0;
  fit("exponential2", fix_loc2, t);
  ASSERT_REL(t[0], 1.0 / 13.431200000000004, 8 * EPS);
  /* Rate fixed: the location is still min(x). */
  int fix_rate2[2] = {1, 0};
  t[0] = 0.1;
  fit("exponential2", fix_rate2, t);
  ck_assert(t[0] == 0.1 && t[1] == 7.85);

  /* computed with scipy 1.10.1 uniform.fit(X) = (7.85, 27.25): min, max. */
  fit("uniform", NULL, t);
  ck_assert(t[0] == 7.85 && t[1] == 35.1);
  int fix_min[2] = {1, 0};
  t[0] = 0.0;
  fit("uniform", fix_min, t);
  ck_assert(t[0] == 0.0 && t[1] == 35.1);
}
END_TEST

START_TEST(test_fit_mle_iterative)
{
  double t[4];
  /* Weibull.  mpmath 1.3.0 (50 digits): root of the profile equation
   * sum x^k log x / sum x^k - 1/k - mean(log x) = 0: k = 2.7385706386478220366,
   * scale = (mean x^k)^(1/k) = 20.774178560138501536.  scipy 1.10.1
   * weibull_min.fit(X, floc=0) = (2.738581373470862, 0.0, 20.774179229495928),
   * within 4e-6 (its Nelder-Mead stops there). */
  fit("weibull", NULL, t);
  ASSERT_REL(t[0], 2.7385706386478220366, 1e-13);
  ASSERT_REL(t[1], 20.774178560138501536, 1e-13);
  ASSERT_REL(t[0], 2.738581373470862, 1e-5);
  ASSERT_REL(t[1], 20.774179229495928, 1e-6);
  /* Shape fixed at 2.5: mpmath (mean x^2.5)^(1/2.5) = 20.468918374154946074
   * (scipy 1.10.1 weibull_min.fit(X, floc=0, f0=2.5) gives 20.468927661917427). */
  int fix_shape[2] = {1, 0};
  t[0] = 2.5;
  fit("weibull", fix_shape, t);
  ck_assert_double_eq(t[0], 2.5);
  ASSERT_REL(t[1], 20.468918374154946074, 4 * EPS);
  /* Scale fixed at 20: mpmath root of n/k + sum log(x/20) - sum (x/20)^k
   * log(x/20) = 0: 2.6607886693973104016 (scipy 1.10.1
   * weibull_min.fit(X, floc=0, fscale=20.0) gives 2.660809629268536). */
  int fix_scale[2] = {0, 1};
  t[1] = 20.0;
  fit("weibull", fix_scale, t);
  ASSERT_REL(t[0], 2.6607886693973104016, 1e-13);
  ck_assert_double_eq(t[1], 20.0);

  /* Gamma.  mpmath: root of log a - psi(a) = log(mean) - mean(log x):
   * 6.5197112262933772471, scale = mean/a = 2.8269963745738795641; computed
   * with scipy 1.10.1 gamma.fit(X, floc=0) = (6.519711226293321, 0.0,
   * 2.8269963745739046). */
  fit("gamma", NULL, t);
  ASSERT_REL(t[0], 6.5197112262933772471, 1e-13);
  ASSERT_REL(t[1], 2.8269963745738795641, 1e-13);
  ASSERT_REL(t[0], 6.519711226293321, 1e-13);
  /* Scale fixed at 2: mpmath root of psi(a) = mean(log x) - log 2:
   * 9.0137099806150593318 (scipy 1.10.1 gamma.fit(X, floc=0, fscale=2.0)
   * = 9.013709980615058). */
  int fix_gscale[2] = {0, 1};
  t[1] = 2.0;
  fit("gamma", fix_gscale, t);
  ASSERT_REL(t[0], 9.0137099806150593318, 1e-13);
  /* Shape fixed at 4: scale = mean/4 (scipy 1.10.1 gamma.fit(X, floc=0,
   * fa=4.0) = 4.607800000000001). */
  int fix_gshape[2] = {1, 0};
  t[0] = 4.0;
  fit("gamma", fix_gshape, t);
  ASSERT_REL(t[1], 4.607800000000001, 4 * EPS);

  /* Gumbel.  computed with scipy 1.10.1 gumbel_r.fit(X) = (15.024106073277427,
   * 5.83729153632893) and gumbel_l.fit(X) = (22.24102741848689,
   * 7.685971478455743); mpmath roots of the likelihood equations:
   * (15.02410607327742516, 5.8372915363289259302) and
   * (22.241027418486889005, 7.6859714784557427544). */
  fit("gumbel_max", NULL, t);
  ASSERT_REL(t[0], 15.02410607327742516, 1e-13);
  ASSERT_REL(t[1], 5.8372915363289259302, 1e-13);
  ASSERT_REL(t[0], 15.024106073277427, 1e-13);
  fit("gumbel_min", NULL, t);
  ASSERT_REL(t[0], 22.241027418486889005, 1e-13);
  ASSERT_REL(t[1], 7.6859714784557427544, 1e-13);
  ASSERT_REL(t[1], 7.685971478455743, 1e-13);
  /* computed with scipy 1.10.1 gumbel_r.fit(X, floc=15.0) = (15.0,
   * 5.831573684871229) and gumbel_r.fit(X, fscale=4.0) =
   * (14.053047783225153, 4.0); mpmath 5.8315736848712302706 and
   * 14.053047783225154531. */
  int fix_gloc[2] = {1, 0};
  t[0] = 15.0;
  fit("gumbel_max", fix_gloc, t);
  ASSERT_REL(t[1], 5.8315736848712302706, 1e-13);
  int fix_gsc[2] = {0, 1};
  t[1] = 4.0;
  fit("gumbel_max", fix_gsc, t);
  ASSERT_REL(t[0], 14.053047783225154531, 1e-13);

  /* Invariance: the Weibull fit of X * 1e-200 is the fit of X with the
   * scale times 1e-200 (x^k for the raw data would underflow; the data are
   * divided by their maximum), and the Gumbel fit of X + 1e6 is shifted by
   * 1e6 (weights relative to the smallest value).  The shifted data carry
   * a rounding of 1e-10 each, so the Gumbel scale is compared at 1e-9. */
  double xs[25];
  for (int i = 0; i < 25; i++) xs[i] = X25[i] * 1e-200;
  ck_assert_int_eq(fam("weibull")->fit_mle(xs, 25, NULL, t, NULL), SP_OK);
  ASSERT_REL(t[0], 2.7385706386478220366, 1e-13);
  ASSERT_REL(t[1], 20.774178560138501536e-200, 1e-13);
  for (int i = 0; i < 25; i++) xs[i] = X25[i] + 1e6;
  ck_assert_int_eq(fam("gumbel_max")->fit_mle(xs, 25, NULL, t, NULL), SP_OK);
  ASSERT_REL(t[0], 1e6 + 15.02410607327742516, 1e-15);
  ASSERT_REL(t[1], 5.8372915363289259302, 1e-9);

  /* Gamma on nearly constant data (coefficient of variation 6e-4, shape
   * 2.4e6), where log(mean) - mean(log x) = 2e-7 is formed without
   * cancellation and log a - psi(a) from its asymptotic series: mpmath
   * 1.3.0 (60 digits) root of log a - psi(a) = log(mean) - mean(log x):
   * 2351028.9237222779745, scale 0.00042536340432738948851.  The data's
   * own rounding (relative 1e-16 on deviations of 5e-4) bounds the
   * agreement at about 1e-12. */
  const double xc[6] = {1000.0, 1001.0, 999.0, 1000.5, 999.5, 1000.25};
  ck_assert_int_eq(fam("gamma")->fit_mle(xc, 6, NULL, t, NULL), SP_OK);
  ASSERT_REL(t[0], 2351028.9237222779745, 1e-11);
  ASSERT_REL(t[1], 0.00042536340432738948851, 1e-11);

  /* Gamma with one value far below the others: (x - mean)/mean rounds to
   * -1 there, so d - log1p(d) is taken as d - log(x/mean).  mpmath 1.3.0
   * (60 digits) root of log a - psi(a) = log(mean) - mean(log x) for
   * {1e-39, 1e-4, 2e-4, 3e-4}: 0.0440113880702276513, scale
   * 0.003408208797246964764. */
  const double xt[4] = {1e-39, 1e-4, 2e-4, 3e-4};
  ck_assert_int_eq(fam("gamma")->fit_mle(xt, 4, NULL, t, NULL), SP_OK);
  ASSERT_REL(t[0], 0.0440113880702276513, 1e-13);
  ASSERT_REL(t[1], 0.003408208797246964764, 1e-13);

  /* All fixed: SP_OK, parameters untouched. */
  for (size_t i = 0; i < sp_family_count(); i++) {
    const sp_family *f = sp_family_at(i);
    if (!f->fit_mle) continue;
    int all[4] = {1, 1, 1, 1};
    double tt[4] = {0.25, 0.75, 0.5, 0.5};
    ck_assert_int_eq(f->fit_mle(X25, 25, all, tt, NULL), SP_OK);
    ck_assert(tt[0] == 0.25 && tt[1] == 0.75);
  }
}
END_TEST

START_TEST(test_weibull_mle_large_and_wide)
{
  /* n = 1e6 draws of weibull(1.8, 5e4): the fit must be fast (one pass over
   * the data per step of the shape; usually one in all at this size) and
   * land within 5 standard errors of the truth: the
   * asymptotic standard errors are 0.780 k / sqrt(n) for the shape and
   * 1.053 scale / (k sqrt(n)) for the scale (inverse Fisher information of
   * the Weibull, closed form: var(k) = 6 k^2 / (pi^2 n), var(scale) =
   * scale^2 (1 + 6 (1 - gamma)^2 / pi^2) / (k^2 n)). */
  enum { N = 1000000 };
  static double x[N];
  const sp_family *f = fam("weibull");
  const double truth[2] = {1.8, 5e4};
  sp_pcg64 g;
  sp_rng_block_stream(&g, 777u, 0u, 0u);
  f->sample(truth, &g, x, N);
  double t[2];
  struct timespec a, b;
  clock_gettime(CLOCK_MONOTONIC, &a);
  ck_assert_int_eq(f->fit_mle(x, N, NULL, t, NULL), SP_OK);
  clock_gettime(CLOCK_MONOTONIC, &b);
  double secs = (double)(b.tv_sec - a.tv_sec) + 1e-9 * (double)(b.tv_nsec - a.tv_nsec);
  fprintf(stderr, "check_dist: weibull MLE n = 1e6 took %.1f ms\n", 1e3 * secs);
  ck_assert_msg(secs < 1.0, "weibull MLE took %.3f s", secs);
  double se_k = sqrt(6.0) / 3.14159265358979 * 1.8 / 1000.0;
  double em1 = 1.0 - 0.57721566490153286;
  double se_s = 5e4 / 1.8 * sqrt(1.0 + 6.0 * em1 * em1 / (3.14159265358979 * 3.14159265358979)) / 1000.0;
  ck_assert_msg(fabs(t[0] - 1.8) <= 5 * se_k, "shape %.6f", t[0]);
  ck_assert_msg(fabs(t[1] - 5e4) <= 5 * se_s, "scale %.3f", t[1]);

  /* Data spanning ~40 orders of magnitude (shape 0.05): x^k for the raw
   * data would overflow in a naive profile equation at the Newton steps of
   * large k; scaled by the maximum it cannot.  The score equations at the
   * solution: d logL/dk = 0 and d logL/dscale = 0 (closed forms), so the
   * profile function vanishes to rounding. */
  const double wide[2] = {0.05, 1.0};
  sp_rng_block_stream(&g, 778u, 0u, 0u);
  f->sample(wide, &g, x, 20000);
  ck_assert_int_eq(f->fit_mle(x, 20000, NULL, t, NULL), SP_OK);
  double se_w = sqrt(6.0) / 3.14159265358979 * 0.05 / sqrt(20000.0);
  ck_assert_msg(fabs(t[0] - 0.05) <= 5 * se_w, "wide shape %.6g", t[0]);
  double s0 = 0, s1 = 0, sl = 0;
  for (size_t i = 0; i < 20000; i++) {
    double z = pow(x[i] / t[1], t[0]), l = log(x[i] / t[1]);
    s0 += z;
    s1 += z * l;
    sl += l;
  }
  /* d logL/dk = n/k + sum l - sum z l; d logL/dscale ~ (k/scale)(sum z - n). */
  ASSERT_ABS((20000.0 / t[0] + sl - s1) * t[0] / 20000.0, 0.0, 1e-9);
  ASSERT_REL(s0, 20000.0, 1e-10);
}
END_TEST

START_TEST(test_fit_start)
{
  double t[4];
  int none[4] = {0, 0, 0, 0};
  /* Starting values exist, are valid parameters and keep fixed entries. */
  for (size_t i = 0; i < sp_family_count(); i++) {
    const sp_family *f = sp_family_at(i);
    if (!f->fit_start) continue;
    double tt[4] = {NAN, NAN, NAN, NAN};
    sp_error err;
    sp_error_clear(&err);
    ck_assert_msg(f->fit_start(X25, 25, none, tt, &err) == SP_OK, "%s: %s", f->name, err.msg);
    ck_assert_msg(f->check(tt, NULL) == SP_OK, "%s start invalid", f->name);
    ck_assert_msg(sp_family_loglik(f, tt, X25, 25) > -INFINITY, "%s start excludes data", f->name);
    /* BELOW/ABOVE_DATA parameters start strictly outside the data. */
    for (size_t k = 0; k < f->nparam; k++) {
      if (f->param_kinds[k] == SP_PARAM_BELOW_DATA) ck_assert_msg(tt[k] < 7.85, "%s", f->name);
      if (f->param_kinds[k] == SP_PARAM_ABOVE_DATA) ck_assert_msg(tt[k] > 35.1, "%s", f->name);
    }
  }
  /* Fixed entries are kept. */
  int fix0[4] = {1, 0, 0, 0};
  t[0] = 3.0;
  ck_assert_int_eq(fam("weibull")->fit_start(X25, 25, fix0, t, NULL), SP_OK);
  ck_assert_double_eq(t[0], 3.0);
  double w3[3] = {0, 0, 5.0};
  int fix2[3] = {0, 0, 1};
  ck_assert_int_eq(fam("weibull3")->fit_start(X25, 25, fix2, w3, NULL), SP_OK);
  ck_assert_double_eq(w3[2], 5.0);
  double tn[4] = {0, 0, 5.0, 40.0};
  int fixlim[4] = {0, 0, 1, 1};
  ck_assert_int_eq(fam("truncnormal")->fit_start(X25, 25, fixlim, tn, NULL), SP_OK);
  ck_assert(tn[2] == 5.0 && tn[3] == 40.0);
  /* Unflagged limits take their defaults -inf and +inf. */
  ck_assert_int_eq(fam("truncnormal")->fit_start(X25, 25, NULL, tn, NULL), SP_OK);
  ck_assert(tn[2] == -INFINITY && tn[3] == INFINITY);
  /* Beta with min and max fixed at 0 and 50: method of moments on y = x/50
   * (closed form m k, (1 - m) k with k = m(1 - m)/v - 1). */
  double bt[4] = {0, 0, 0.0, 50.0};
  int fixmm[4] = {0, 0, 1, 1};
  ck_assert_int_eq(fam("beta")->fit_start(X25, 25, fixmm, bt, NULL), SP_OK);
  double m = 18.4312 / 50.0, v = 7.2592249283239599294 * 7.2592249283239599294 / 2500.0;
  double kk = m * (1 - m) / v - 1;
  ASSERT_REL(bt[0], m * kk, 1e-13);
  ASSERT_REL(bt[1], (1 - m) * kk, 1e-13);
}
END_TEST

START_TEST(test_fit_errors)
{
  /* Support excludes the data: the reason names the count and minimum. */
  const double neg[6] = {1.5, -0.2, 0.0, 2.5, -0.1, 3.0};
  static const struct {
    const char *name;
    const char *msg;
  } pos[] = {
    {"lognormal", "lognormal needs values > 0; the data have 3 values <= 0 (min -0.2)"},
    {"weibull", "weibull needs values > 0; the data have 3 values <= 0 (min -0.2)"},
    {"gamma", "gamma needs values > 0; the data have 3 values <= 0 (min -0.2)"},
    {"loglogistic", "loglogistic needs values > 0; the data have 3 values <= 0 (min -0.2)"},
    {"exponential", "exponential needs values >= 0; the data have 2 values < 0 (min -0.2)"},
  };
  for (size_t i = 0; i < sizeof pos / sizeof pos[0]; i++) {
    const sp_family *f = fam(pos[i].name);
    double t[4] = {1, 1, 1, 1};
    sp_error err;
    sp_error_clear(&err);
    ck_assert_int_eq(f->fit_start(neg, 6, NULL, t, &err), SP_EDATA);
    ck_assert_str_eq(err.msg, pos[i].msg);
    if (f->fit_mle) {
      sp_error_clear(&err);
      ck_assert_int_eq(f->fit_mle(neg, 6, NULL, t, &err), SP_EDATA);
      ck_assert_str_eq(err.msg, pos[i].msg);
    }
  }
  /* One value <= 0: singular. */
  const double one0[3] = {1, 0, 2};
  sp_error err;
  double t[4] = {1, 1, 1, 1};
  ck_assert_int_eq(fam("lognormal")->fit_mle(one0, 3, NULL, t, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "lognormal needs values > 0; the data have 1 value <= 0 (min 0)");
  /* No data, non-finite data, constant data. */
  ck_assert_int_eq(fam("normal")->fit_mle(X25, 0, NULL, t, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "normal needs at least 1 values; the data have 0");
  const double nf[3] = {1, NAN, 2};
  ck_assert_int_eq(fam("gamma")->fit_start(nf, 3, NULL, t, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "gamma: the data have 1 non-finite values");
  const double same[4] = {2.5, 2.5, 2.5, 2.5};
  const char *spread[] = {"normal", "lognormal", "weibull", "gamma", "gumbel_max",
                          "gumbel_min", "uniform", "exponential2"};
  for (size_t i = 0; i < sizeof spread / sizeof spread[0]; i++) {
    sp_error_clear(&err);
    ck_assert_msg(fam(spread[i])->fit_mle(same, 4, NULL, t, &err) == SP_EDATA, "%s", spread[i]);
    ck_assert_msg(strstr(err.msg, "cannot be estimated") != NULL, "%s: %s", spread[i], err.msg);
  }
  /* Values that differ, but whose squared deviations underflow: an error,
   * never SP_OK with an sd of 0. */
  const double tiny[3] = {1e-200, 2e-200, 3e-200};
  sp_error_clear(&err);
  ck_assert_int_eq(fam("normal")->fit_mle(tiny, 3, NULL, t, &err), SP_ENUMERIC);
  ck_assert_str_eq(err.msg, "normal: the spread of the data (range 1e-200 to 3e-200) under- or overflows in double precision");
  sp_error_clear(&err);
  ck_assert_int_eq(fam("logistic")->fit_start(tiny, 3, NULL, t, &err), SP_ENUMERIC);
  ck_assert_str_eq(err.msg, "logistic: the data give invalid parameters (logistic: scale must be > 0, got 0)");
  ck_assert_int_eq(fam("logistic")->fit_start(same, 4, NULL, t, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "logistic: all 4 values are equal (2.5), so the spread cannot be estimated");
  /* Fixed limits that exclude data. */
  double w3[3] = {2, 1, 10.0};
  int fixloc[3] = {0, 0, 1};
  ck_assert_int_eq(fam("weibull3")->fit_start(X25, 25, fixloc, w3, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "weibull3: the fixed location 10 is not below the smallest value 7.85");
  double tn[4] = {0, 1, 10.0, 30.0};
  int fixlim[4] = {0, 0, 1, 1};
  ck_assert_int_eq(fam("truncnormal")->fit_start(X25, 25, fixlim, tn, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "truncnormal: 5 values lie outside the limits [10, 30] (data range 7.85 to 35.1)");
  double u[2] = {10.0, 0};
  int fixmin[2] = {1, 0};
  ck_assert_int_eq(fam("uniform")->fit_mle(X25, 25, fixmin, u, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "uniform: the smallest value 7.85 is below the fixed min 10");
  double e2[2] = {1.0, 8.0};
  int fixl[2] = {0, 1};
  ck_assert_int_eq(fam("exponential2")->fit_mle(X25, 25, fixl, e2, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "exponential2: the smallest value 7.85 is below the fixed location 8");
  /* Weibull with the scale fixed and every value equal to it: the shape
   * equation has no root (the likelihood grows without bound in k). */
  const double eq2[3] = {2, 2, 2};
  double ws[2] = {1.0, 2.0};
  int fixs[2] = {0, 1};
  ck_assert_int_eq(fam("weibull")->fit_mle(eq2, 3, fixs, ws, &err), SP_EDATA);
}
END_TEST

/* ---- extreme parameters (regressions) ------------------------------------ */

START_TEST(test_gamma_large_shape)
{
  /* GSL 2.7's gsl_sf_gamma_inc_Q gave Q(1e8, 1e8 + 1e4) = 0.092 (its
   * large-x series without convergence), so quantile_P(0.9) of
   * gamma(1e8, 1) came back at the mean plus one sd.  References: mpmath
   * 1.2.1 at 60 (150 for the 1e-89 tails) digits, P(a, x) =
   * exp(a log x - x - loggamma(a + 1)) hyp1f1(1, a + 1, x), Q = 1 - P.
   * Tolerance 1e-12: the measured error of the uniform expansion is below
   * 1e-13 there (see gamma.c). */
  const sp_family *f = fam("gamma");
  const double t[2] = {1e8, 1.0};
  ASSERT_REL(f->cdf_Q(t, 1e8 + 1e4), 0.15865525352820118643, 1e-12);
  ASSERT_REL(f->cdf_P(t, 1e8 - 1e4), 0.15865525352814383041, 1e-12);
  ASSERT_REL(f->cdf_Q(t, 1e8 + 2e5), 3.5936926217787997916e-89, 1e-12);
  ASSERT_REL(f->cdf_P(t, 1e8 - 2e5), 2.1082443672341443934e-89, 1e-12);
  /* GSL's P series stopped short here (5.8e-8 off) */
  const double t2[2] = {5e4, 1.0};
  ASSERT_REL(f->cdf_P(t2, 49776.39320225002), 0.15865444478879534787, 1e-12);
  /* Quantiles come back to their probabilities at shapes up to the cap,
   * within the solver's tolerance on log x (2 DBL_EPSILON |log x|, a
   * relative error in x that moves P by the density times x times it;
   * doubled), plus 1e-12 relatively for the tails themselves. */
  const double shapes[] = {1e5, 1e8, 1e12, 1e16, 1e20};
  const double ps[] = {1e-10, 0.1, 0.5, 0.9, 1.0 - 1e-10};
  for (size_t i = 0; i < sizeof shapes / sizeof shapes[0]; i++) {
    const double ta[2] = {shapes[i], 2.0};
    for (size_t k = 0; k < sizeof ps / sizeof ps[0]; k++) {
      double p = ps[k], q = 1.0 - p;
      double x = f->quantile_P(ta, p), y = f->quantile_Q(ta, q);
      double tx = 4 * EPS * fabs(log(x)) * x * exp(f->logpdf(ta, x)) + 1e-12 * fmin(p, q);
      double ty = 4 * EPS * fabs(log(y)) * y * exp(f->logpdf(ta, y)) + 1e-12 * fmin(p, q);
      ck_assert_msg(fabs(f->cdf_P(ta, x) - p) <= tx, "shape %g: P(qP(%g)) = %.17g (tol %g)",
                    shapes[i], p, f->cdf_P(ta, x), tx);
      ck_assert_msg(fabs(f->cdf_Q(ta, y) - q) <= ty, "shape %g: Q(qQ(%g)) = %.17g (tol %g)",
                    shapes[i], q, f->cdf_Q(ta, y), ty);
    }
  }
  /* Past the cap: an error naming the parameter. */
  sp_error err;
  sp_error_clear(&err);
  const double big[2] = {1e21, 1.0};
  ck_assert_int_eq(f->check(big, &err), SP_EUSAGE);
  ck_assert_msg(strstr(err.msg, "gamma: shape must be at most 1e+20") != NULL, "%s", err.msg);
}
END_TEST

START_TEST(test_truncnormal_tiny_sd)
{
  /* sd = 1e-300 puts the limits -1 and 1 at -1e300 and 1e300 sd, where
   * GSL's gsl_sf_log_erfc returned NaN, so every quantile (and sample) was
   * NaN.  The truncation is then immaterial: quantiles are sd * z_p, with
   * z_0.1 = -1.281551565544600467 and, for the half-normal on [0, 1],
   * z_0.55 = 0.12566134685507403421 (mpmath 1.2.1: sqrt(2) erfinv(2p - 1)).
   * Tolerance: 64 EPS for the inverse normal and the scaling. */
  const sp_family *f = fam("truncnormal");
  const double t1[4] = {0.0, 1e-300, -1.0, 1.0}, t2[4] = {0.0, 1e-300, 0.0, 1.0};
  ASSERT_REL(f->quantile_P(t1, 0.1), -1.281551565544600467e-300, 64 * EPS);
  ASSERT_REL(f->quantile_Q(t1, 0.1), 1.281551565544600467e-300, 64 * EPS);
  ASSERT_REL(f->quantile_P(t2, 0.1), 0.12566134685507403421e-300, 64 * EPS);
  double out[64];
  sp_pcg64 g;
  sp_pcg64_seed(&g, 0, 1, 0, 2);
  f->sample(t1, &g, out, 64);
  for (size_t i = 0; i < 64; i++)
    ck_assert_msg(isfinite(out[i]) && fabs(out[i]) < 1e-298, "sample %zu = %g", i, out[i]);
}
END_TEST

START_TEST(test_triangular_extreme_widths)
{
  /* Widths past 1e154 overflowed the product of two widths (NaN
   * quantiles), widths below 1e-154 underflowed it (NaN log density).
   * Closed forms: for x <= mode, x = min + sqrt(p (max - min)(mode - min))
   * (mpmath 1.2.1 at 60 digits: -2.9289321881345249098e299 for
   * triangular(-1e300, 0, 1) at p = 1/2), P(-5e299) = (5e299)^2 / (1e300
   * (1e300 + 1)) = 0.25, and the density 2 (x - min) / ((max - min)(mode -
   * min)) = 1e300 at x = 0.5e-300 of triangular(0, 1e-300, 1e-300), log
   * 690.77552789821370518.  Tolerance 16 EPS (a few roundings). */
  const sp_family *f = fam("triangular");
  const double wide[3] = {-1e300, 0.0, 1.0}, narrow[3] = {0.0, 1e-300, 1e-300};
  ASSERT_REL(f->quantile_P(wide, 0.5), -2.9289321881345249098e299, 16 * EPS);
  ASSERT_REL(f->quantile_Q(wide, 0.5), -2.9289321881345249098e299, 16 * EPS);
  ASSERT_REL(f->cdf_P(wide, -5e299), 0.25, 16 * EPS);
  ASSERT_REL(f->cdf_Q(wide, -5e299), 0.75, 16 * EPS);
  ASSERT_REL(f->logpdf(narrow, 0.5e-300), 690.77552789821370518, 16 * EPS);
  ck_assert(f->logpdf(narrow, 0.0) == -INFINITY);
  ASSERT_REL(f->quantile_P(narrow, 0.25), 0.5e-300, 16 * EPS);
}
END_TEST

START_TEST(test_beta_large_shapes_refused)
{
  /* GSL's incomplete beta runs out of iterations once both shapes are
   * large: beta(1e6, 1e6) had NaN tails and a median 0.12 sd off.  Both
   * past 1e5 is an error naming the smaller; one large shape still works
   * (its median against the closed form of beta(a, 1): 2^(-1/a)). */
  const sp_family *f = fam("beta");
  sp_error err;
  sp_error_clear(&err);
  const double both[4] = {1e6, 2e6, 0.0, 1.0};
  ck_assert_int_eq(f->check(both, &err), SP_EUSAGE);
  ck_assert_str_eq(err.msg, "beta: alpha must be at most 100000 when beta is larger too, "
                            "got alpha 1e+06, beta 2e+06");
  const double one[4] = {1e6, 1.0, 0.0, 1.0};
  ck_assert_int_eq(f->check(one, &err), SP_OK);
  ASSERT_REL(f->quantile_P(one, 0.5), pow(2.0, -1e-6), 1e-12);
}
END_TEST

/* sp_family_pow_block (block_pow.c) against the C library's pow (glibc's,
 * correctly rounded in nearly all cases: under 1 ulp): within (2 |y| + 4)
 * ulps, y = c log x (the rounding of y itself, an ulp, is 2 |y| ulps of
 * exp y), on exponential draws (what the Weibull sampler feeds
 * it), on uniforms over many binades, and exactly pow's value where the
 * block hands over to pow (zero, subnormal, infinite, |y| >= 700). */
static double ulps_apart(double a, double b)
{
  if (a == b) return 0.0;
  return fabs(a - b) / (nextafter(fabs(b), INFINITY) - fabs(b));
}

START_TEST(test_pow_block)
{
  enum { N = 20003 }; /* not a multiple of the block's chunk */
  static double x[N], y[N];
  const double cs[] = {2.0, 1.0, 0.5, 1.0 / 3.7, 0.125, 0.02, -1.5, 1.0 / 0.3};
  sp_pcg64 g;
  sp_rng_block_stream(&g, 4242u, 0, 0);
  for (size_t k = 0; k < sizeof cs / sizeof cs[0]; k++) {
    for (int set = 0; set < 2; set++) {
      if (set == 0) sp_rng_fill_exponential(&g, x, N);
      else
        for (int i = 0; i < N; i++) x[i] = ldexp(1.0 + sp_rng_uniform(&g), -200 + i % 400);
      memcpy(y, x, sizeof y);
      sp_family_pow_block(y, N, cs[k]);
      double worst = 0.0;
      for (int i = 0; i < N; i++) {
        const double want = pow(x[i], cs[k]);
        const double lim = 2.0 * fabs(cs[k] * log(x[i])) + 4.0;
        const double u = ulps_apart(y[i], want);
        ck_assert_msg(u <= lim, "c %g x %.17g: %.17g vs pow %.17g (%.1f ulps, limit %.1f)",
                      cs[k], x[i], y[i], want, u, lim);
        if (u > worst) worst = u;
      }
      /* Weibull use: exponential draws, shape 1 and more: a dozen ulps */
      if (set == 0 && fabs(cs[k]) <= 1.0)
        ck_assert_msg(worst <= 12.0, "c %g: worst %.1f ulps", cs[k], worst);
    }
  }
  const double edge[] = {0.0, 4.9e-324, 2.0e-310, DBL_MIN, 1.0, 1e300, DBL_MAX, INFINITY, 3.0};
  const size_t ne = sizeof edge / sizeof edge[0];
  const double cedge[] = {0.5, 3.0, 800.0, -2.0};
  for (size_t k = 0; k < sizeof cedge / sizeof cedge[0]; k++) {
    double e[sizeof edge / sizeof edge[0]];
    memcpy(e, edge, sizeof e);
    sp_family_pow_block(e, ne, cedge[k]);
    for (size_t i = 0; i < ne; i++) {
      const double want = pow(edge[i], cedge[k]);
      const int same = e[i] == want || (isnan(e[i]) && isnan(want));
      const int close = ulps_apart(e[i], want) <= 2.0 * fabs(cedge[k] * log(edge[i])) + 4.0;
      ck_assert_msg(same || (edge[i] >= DBL_MIN && edge[i] <= DBL_MAX && close),
                    "c %g x %g: %.17g vs pow %.17g", cedge[k], edge[i], e[i], want);
    }
  }
}
END_TEST

static Suite *dist_suite(void)
{
  Suite *s = suite_create("dist");
  TCase *tc = tcase_create("core");
  tcase_set_timeout(tc, 120);
  tcase_add_test(tc, test_registry_names_and_order);
  tcase_add_test(tc, test_registry_flags_kinds_defaults);
  tcase_add_test(tc, test_check_messages);
  tcase_add_test(tc, test_roundtrip);
  tcase_add_test(tc, test_P_plus_Q);
  tcase_add_test(tc, test_reference_values);
  tcase_add_test(tc, test_far_tails);
  tcase_add_test(tc, test_density_edges);
  tcase_add_test(tc, test_moments);
  tcase_add_test(tc, test_samplers);
  tcase_add_test(tc, test_sampler_pinned);
  tcase_add_test(tc, test_sampler_methods);
  tcase_add_test(tc, test_sampler_split);
  tcase_add_test(tc, test_from_uniform_and_loglik);
  tcase_add_test(tc, test_fit_mle_closed_forms);
  tcase_add_test(tc, test_fit_mle_iterative);
  tcase_add_test(tc, test_weibull_mle_large_and_wide);
  tcase_add_test(tc, test_fit_start);
  tcase_add_test(tc, test_fit_errors);
  tcase_add_test(tc, test_gamma_large_shape);
  tcase_add_test(tc, test_truncnormal_tiny_sd);
  tcase_add_test(tc, test_triangular_extreme_widths);
  tcase_add_test(tc, test_beta_large_shapes_refused);
  tcase_add_test(tc, test_pow_block);
  suite_add_tcase(s, tc);
  /* 23 sets of 10^5 draws with their CDFs: about 0.5 s in a release build,
   * 1 s of CPU under the sanitizers (Debug). */
  tc = tcase_create("samplers-large");
  tcase_set_timeout(tc, 120);
  tcase_add_test(tc, test_samplers_large);
  suite_add_tcase(s, tc);
  return s;
}

int main(void) { return sp_run_suite(dist_suite()); }
