/* scatterprop fit: maximum likelihood per family, standard errors,
 * goodness of fit with p-values, ranking and the choice of a family.
 *
 * Estimation (per candidate family, in this order):
 *  1. a special fitter for the family, if fit.c's short table has one
 *     (weibull3: profile likelihood over the location, with a maximum
 *     product of spacings fallback; see src/fit_weibull3.c);
 *  2. the family's own fit_mle hook (closed forms, Newton), when non-NULL;
 *  3. otherwise the general minimiser: Nelder-Mead (GSL nmsimplex2) on
 *     unconstrained transforms of the free parameters, restarted once, then
 *     polished by Newton steps on a finite-difference Hessian.
 * Non-convergence is reported in sp_fit_candidate.converged, never as an
 * error.
 *
 * Standard errors come from the observed information (the Hessian of the
 * negative log-likelihood in the natural parameters: closed form where it
 * is simple, central finite differences otherwise) inverted by Cholesky;
 * a Hessian that is not positive definite leaves the covariance
 * unavailable, with the reason.
 *
 * Goodness of fit: Anderson-Darling A^2, Kolmogorov-Smirnov D and
 * Cramer-von Mises W^2 of the fitted CDF for every candidate, with
 * p-values from published approximations for estimated parameters where
 * they exist, or from a parametric bootstrap that refits every replicate.
 * Every p-value carries the name of the method that produced it.
 *
 * Ranking: by AICc (or AIC, BIC, log-likelihood); the default choice is
 * the best converged candidate not rejected by A^2 at level alpha. */
#ifndef SP_FIT_H
#define SP_FIT_H

#include <stddef.h>
#include <stdint.h>

#include "scatterprop/core.h"
#include "scatterprop/dist.h"
#include "scatterprop/ingest.h"

#ifdef __cplusplus
extern "C" {
#endif

#define SP_FIT_NAME_MAX 64
#define SP_FIT_TEXT_MAX 320
#define SP_FIT_MAX_FIXED 16
#define SP_FIT_MAX_FAMILIES 64

/* Selection criteria. */
typedef enum {
  SP_FIT_SELECT_AICC = 0,
  SP_FIT_SELECT_AIC,
  SP_FIT_SELECT_BIC,
  SP_FIT_SELECT_LOGLIK
} sp_fit_select;

/* Where p-values come from. */
/* The published p-value approximations for estimated parameters are used
 * from this sample size on; below it only the bootstrap gives p-values
 * (src/fit_gof.c says why). */
#define SP_FIT_APPROX_MIN_N 5

/* In SP_FIT_PVALUE_AUTO the bootstrap runs only while B * n is at most
 * this many sampled values (2e8: about 40 s per candidate with a family
 * solver at the measured ~0.2 us per value and refit, tests/bench; the
 * general minimiser costs several times more); beyond it a
 * statistic without a published approximation gets no p-value, and its
 * method says why.  SP_FIT_PVALUE_BOOTSTRAP has no limit. */
#define SP_FIT_AUTO_BOOTSTRAP_MAX 2e8

typedef enum {
  SP_FIT_PVALUE_AUTO = 0,   /* approximation where published, else bootstrap */
  SP_FIT_PVALUE_BOOTSTRAP,  /* parametric bootstrap for every candidate */
  SP_FIT_PVALUE_APPROX,     /* approximations only (NAN p where none exists) */
  SP_FIT_PVALUE_NONE        /* statistics only, no p-values */
} sp_fit_pvalue_mode;

/* "aicc", "aic", "bic", "loglik"; "auto", "bootstrap", "approximation",
 * "none".  The parsers fail with SP_EUSAGE naming the accepted words. */
const char *sp_fit_select_name(sp_fit_select s);
sp_status sp_fit_select_parse(const char *text, sp_fit_select *out, sp_error *err);
const char *sp_fit_pvalue_mode_name(sp_fit_pvalue_mode m);
sp_status sp_fit_pvalue_mode_parse(const char *text, sp_fit_pvalue_mode *out,
                                   sp_error *err);

/* A parameter held at a value instead of fitted: applies to every
 * candidate family that has a parameter of that name.  LIMIT parameters
 * (a truncated family's lower/upper) are always given this way; when not
 * given in the options they are taken from the data file's metadata line
 * with the parameter's name as key ("# lower: 0"). */
typedef struct {
  char name[SP_FIT_NAME_MAX];
  double value;
  long meta_line; /* 0 if given as an option, else the metadata line */
} sp_fit_fixed;

typedef struct {
  /* Candidate family names (borrowed), or NULL for every registered family
   * flagged SP_FAMILY_FIT and SP_FAMILY_CANDIDATE, in registry order. */
  const char *const *families;
  size_t nfamilies;
  sp_fit_fixed fixed[SP_FIT_MAX_FIXED];
  size_t nfixed;
  /* Metadata of the data file (borrowed, may be NULL): source of LIMIT
   * parameters not given in fixed[]. */
  const sp_meta *meta;
  size_t nmeta;
  sp_fit_select select;         /* default SP_FIT_SELECT_AICC */
  const char *force_family;     /* choose this family whatever its rank (NULL) */
  double alpha;                 /* rejection level of the A^2 test, default 0.05 */
  sp_fit_pvalue_mode pvalue;    /* default SP_FIT_PVALUE_AUTO */
  size_t bootstrap_B;           /* replicates, default 1000 */
  uint64_t seed;                /* bootstrap seed, default 1 */
  int threads;                  /* OpenMP threads for the bootstrap; 0 = runtime default */
} sp_fit_options;

/* Defaults as commented above. */
void sp_fit_options_init(sp_fit_options *o);
/* Adds (or replaces) a fixed parameter.  SP_EUSAGE if the name is empty or
 * too long, the value not finite, or SP_FIT_MAX_FIXED are already set. */
sp_status sp_fit_options_fix(sp_fit_options *o, const char *name, double value,
                             sp_error *err);
/* Parses "name=value" (strict number) and adds it. */
sp_status sp_fit_options_fix_parse(sp_fit_options *o, const char *text,
                                   sp_error *err);

/* One goodness-of-fit statistic with its p-value. */
typedef struct {
  double stat;                   /* the statistic, unmodified */
  double p;                      /* NAN when not computed */
  int bound;                     /* 0: p is a value; -1: the p-value is below p
                                    (p < 0.01); +1: above p (p > 0.25) */
  char method[SP_FIT_TEXT_MAX];  /* how p was obtained; "" when not computed */
} sp_fit_gof;

enum { SP_FIT_GOF_A2 = 0, SP_FIT_GOF_D = 1, SP_FIT_GOF_W2 = 2, SP_FIT_NGOF = 3 };

/* How a candidate's estimate was found. */
typedef enum {
  SP_FIT_METHOD_NONE = 0,   /* not fitted (skipped, failed, or every parameter fixed) */
  SP_FIT_METHOD_FAMILY,     /* the family's fit_mle (closed form / Newton) */
  SP_FIT_METHOD_SIMPLEX,    /* general minimiser: Nelder-Mead + Newton polish */
  SP_FIT_METHOD_PROFILE,    /* profile likelihood over a location (weibull3) */
  SP_FIT_METHOD_MPS         /* maximum product of spacings (weibull3 fallback) */
} sp_fit_method;
/* "fixed", "ML-family", "ML-simplex", "ML-profile", "MPS". */
const char *sp_fit_method_name(sp_fit_method m);

typedef enum {
  SP_FIT_OK = 0,
  SP_FIT_SKIPPED,  /* the family cannot describe these data (reason says why) */
  SP_FIT_FAILED    /* the estimation failed numerically (reason says why) */
} sp_fit_status;
const char *sp_fit_status_name(sp_fit_status s); /* "ok", "skipped", "failed" */

/* Scale of a parameter's 95% interval. */
typedef enum { SP_FIT_CI_NONE = 0, SP_FIT_CI_LINEAR, SP_FIT_CI_LOG } sp_fit_ci_scale;

typedef struct {
  const sp_family *family;
  sp_fit_status status;
  char reason[SP_FIT_TEXT_MAX];   /* skipped/failed reason, or a note ("" if none) */
  sp_fit_method method;
  int converged;                  /* 1 if the estimator met its tolerance */
  size_t nparam;
  double theta[SP_FAMILY_MAX_PARAMS];
  int fixed[SP_FAMILY_MAX_PARAMS];
  size_t k;                       /* free parameters */
  size_t n;                       /* observations */
  double loglik, aic, aicc, bic;  /* aicc is NAN when n - k - 1 <= 0 */
  /* Standard errors and covariance of the free parameters (in parameter
   * order; rows/columns of fixed parameters are zero, their se NAN). */
  int cov_available;
  char cov_note[SP_FIT_TEXT_MAX]; /* why unavailable, or how obtained */
  double se[SP_FAMILY_MAX_PARAMS];
  double cov[SP_FAMILY_MAX_PARAMS][SP_FAMILY_MAX_PARAMS];
  /* Wald 95% intervals: on the log scale for POSITIVE parameters
   * (theta * exp(+-1.96 se/theta)), linear otherwise. */
  double ci_lo[SP_FAMILY_MAX_PARAMS], ci_hi[SP_FAMILY_MAX_PARAMS];
  sp_fit_ci_scale ci_scale[SP_FAMILY_MAX_PARAMS];
  sp_fit_gof gof[SP_FIT_NGOF];
  size_t bootstrap_failed;        /* replicates whose refit failed (excluded) */
  /* Rejection: A^2 p < alpha; when A^2 has no p-value (infinite for an
   * estimate on the data boundary) W^2 is used instead, then D.
   * judged_by is the SP_FIT_GOF_* index of the statistic used, or -1 when
   * none had a p-value (never rejected then). */
  int rejected;
  int judged_by;
  size_t rank;                    /* 1 = best by the criterion; 0 if not ranked */
} sp_fit_candidate;

typedef struct {
  size_t n;                       /* observations used */
  size_t ncand;
  sp_fit_candidate *cand;         /* owned, in the order of the candidates */
  long chosen;                    /* index into cand, or -1 if none could be fitted */
  char reason[SP_FIT_TEXT_MAX];   /* why the chosen family was chosen */
  sp_fit_options opt;             /* copy of the options used (pointers borrowed) */
} sp_fit_result;

/* Frees what a fit put in *r (not r itself) and zeroes it.  r may be NULL. */
void sp_fit_result_clear(sp_fit_result *r);

typedef struct {
  sp_fit_method method;
  int converged;
  size_t iterations;
  char note[SP_FIT_TEXT_MAX];
} sp_fit_mle_info;

/* Maximum-likelihood (or, for weibull3 without an interior maximum, MPS)
 * estimate of fam's parameters from x[0..n) (finite values).  On entry,
 * theta[j] holds the value of each parameter with fixed[j] != 0; on
 * return theta holds the estimate.  fixed may be NULL (all free; a family
 * with a LIMIT parameter then fails with SP_EUSAGE).
 * Errors: SP_EDATA when the family's support excludes the data (the
 * family's reason), SP_EUSAGE for a LIMIT parameter not fixed or n too
 * small (n < number of free parameters), SP_ENOMEM.  Not converging is
 * info->converged == 0 with SP_OK. */
sp_status sp_fit_mle(const sp_family *fam, const double *x, size_t n,
                     const int *fixed, double *theta, sp_fit_mle_info *info,
                     sp_error *err);

/* Observed-information covariance of the free parameters at theta: the
 * closed form for normal, lognormal and exponential fitted by their family
 * solver (fit_hessian.c), otherwise (and for MPS, the spacings objective)
 * central finite differences of -logL in the natural parameters with step
 * h_i = DBL_EPSILON^(1/4) * max(|theta_i|, typical_i), changed where the
 * curvature seen at that step shows it far too wide or narrow (see
 * fit_hessian.c for the derivation), inverted by Cholesky.  Fills c->se, c->cov,
 * c->cov_available, c->cov_note and the 95% intervals from c->theta,
 * c->fixed, c->family.  SP_ENOMEM only; an indefinite Hessian is a
 * field (cov_available = 0). */
sp_status sp_fit_covariance(sp_fit_candidate *c, const double *x, size_t n,
                            sp_error *err);

/* Fits every candidate family to x[0..n) (finite values, n >= 2), computes
 * goodness of fit and p-values, ranks and chooses.  *out is filled (the
 * caller provides the struct; free its contents with sp_fit_result_clear).
 * A family that cannot describe the data is a candidate with status
 * SP_FIT_SKIPPED; a failure of one family's estimation is SP_FIT_FAILED.
 * Errors: SP_EUSAGE (unknown family name, fixed parameter no candidate
 * has, force_family not among the candidates, bad options), SP_EDATA (n <
 * 2, non-finite values), SP_ENOMEM. */
sp_status sp_fit_run(const double *x, size_t n, const sp_fit_options *opt,
                     sp_fit_result *out, sp_error *err);

/* Ranks the SP_FIT_OK candidates of r by r->opt.select, sets their rank,
 * rejected and judged_by fields, and chooses (r->chosen, r->reason): the
 * forced family if r->opt.force_family is set, otherwise the best
 * candidate not rejected by A^2 at level r->opt.alpha (W^2, then D, for a
 * candidate whose A^2 has no p-value; the best overall, said so, when
 * every candidate is rejected; a candidate without any p-value is never
 * rejected) whose estimator converged (one that did not is chosen only
 * when no candidate not rejected converged, and the reason says so).  sp_fit_run calls this; it is
 * public so a caller may change the criterion and choose again. */
void sp_fit_rank(sp_fit_result *r);

/* The criterion value of c under s (loglik is negated so lower is better
 * for every criterion); +INFINITY when undefined. */
double sp_fit_criterion(const sp_fit_candidate *c, sp_fit_select s);

/* Goodness-of-fit statistics of fam at theta for x[0..n) (any order): A^2,
 * D, W^2 into gof[SP_FIT_GOF_*].stat; p-values are not touched.
 * SP_ENOMEM only. */
sp_status sp_fit_gof_stats(const sp_family *fam, const double *theta,
                           const double *x, size_t n, sp_fit_gof *gof,
                           sp_error *err);

/* Parametric bootstrap of the goodness-of-fit statistics for candidate c
 * fitted to n observations: B replicates, replicate b drawn from
 * c->family at c->theta with sp_rng_block_stream(seed, b, index), refitted
 * exactly as the candidate was (same fixed parameters), its statistics
 * compared with c's.  Sets c->gof[*].p = (1 + #{T_b >= T}) / (B_ok + 1)
 * and the method strings, and c->bootstrap_failed; the counts are integer
 * sums, so the result is identical whatever the thread count.  If stats is
 * non-NULL it receives the B replicate statistics (stats[3*b + j], NAN for
 * a failed refit).  Errors: SP_EUSAGE (B == 0 or c not fitted), SP_ENOMEM. */
sp_status sp_fit_bootstrap(sp_fit_candidate *c, size_t n, size_t B, uint64_t seed,
                           uint32_t index, int threads, double *stats,
                           sp_error *err);

/* Per-lot fitting: the rows of x[0..n) grouped by the text label
 * group[i]; one sp_fit_run per distinct non-empty label (in order of first
 * appearance) and one on all rows (pooled).  Rows whose x is NAN (missing)
 * are dropped and counted per group. */
typedef struct {
  char *label;            /* owned */
  size_t nmissing;
  sp_fit_result fit;      /* fit.ncand == 0 if the group had fewer than 2 values */
  sp_status status;       /* SP_OK, or why this group could not be fitted */
  char message[SP_FIT_TEXT_MAX];
} sp_fit_group;

typedef struct {
  size_t ngroups;
  sp_fit_group *groups;   /* owned */
  sp_fit_result pooled;
  size_t pooled_missing;
} sp_fit_grouped;

/* Errors as sp_fit_run for the pooled fit; a group too small or failing
 * is recorded in its status and message instead. */
sp_status sp_fit_run_grouped(const double *x, const char *const *group, size_t n,
                             const sp_fit_options *opt, sp_fit_grouped *out,
                             sp_error *err);
void sp_fit_grouped_clear(sp_fit_grouped *g);

/* Fits the numeric column `column` of t: missing cells are dropped and
 * counted, the table's metadata supplies LIMIT parameters not fixed in
 * opt, and with `by` (a text column's name) the fit is per lot plus
 * pooled; without it out->ngroups is 0 and out->pooled is the fit.
 * Errors: SP_EUSAGE (no such column, the column is not numeric, `by` is
 * not a text column), SP_EDATA (censored observations, which this release
 * cannot fit yet; fewer than 2 values), and those of sp_fit_run. */
sp_status sp_fit_table(const sp_table *t, const char *column, const char *by,
                       const sp_fit_options *opt, sp_fit_grouped *out, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_FIT_H */
