/* scatterprop runplot: the charts of a run.
 *
 * Maps an executed run (sp_run, run.h) onto the plot module's chart specs
 * (plot.h) and draws, for every output NAME, into one folder:
 *   PREFIX_NAME_hist     the engine's histogram (the bins of the run record,
 *                        counts unchanged), the coverage interval shaded,
 *                        each limit on the output marked;
 *   PREFIX_NAME_exceed   the exceedance curve P(Y > y) on a logarithmic axis,
 *                        from the kept samples;
 *   PREFIX_NAME_sens     the inputs ranked by their share of the squared
 *                        Spearman rank correlations (the run's rank_share);
 *   PREFIX_NAME_sobol    first-order and total Sobol' indices, when the run
 *                        computed them;
 *   PREFIX_NAME_conv     the running mean with +-2 standard errors and the
 *                        ends of the coverage interval against the number
 *                        of samples N = 1000 * 2^k (and the full run), from
 *                        the kept samples (sp_runplot_convergence);
 *   PREFIX_NAME_scatter  the output against its most influential input (the
 *                        largest rank share) on a fresh subsample: the engine
 *                        keeps output samples only, so the inputs are drawn
 *                        again (sp_runplot_subsample) and the model is
 *                        evaluated on them; the chart title says so.
 * Each chart is the plot module's four files (STEM.dat, .gp, .png, .svg).
 *
 * The exceedance and convergence charts need the run's samples: execute the
 * run with keep_samples on.  A chart that cannot be drawn from the results
 * (an output that is constant or has fewer than two finite values, a model
 * without inputs, no rank sensitivity) is listed with drawn = 0 and the
 * reason in note; it is not an error.
 *
 * All functions borrow their arguments; none retains anything. */
#ifndef SP_RUNPLOT_H
#define SP_RUNPLOT_H

#include <stddef.h>
#include <stdint.h>

#include "scatterprop/core.h"
#include "scatterprop/plot.h"
#include "scatterprop/run.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum {
  SP_RUNPLOT_HIST = 0,
  SP_RUNPLOT_EXCEED,
  SP_RUNPLOT_SENS,
  SP_RUNPLOT_SOBOL,
  SP_RUNPLOT_CONV,
  SP_RUNPLOT_SCATTER,
  SP_RUNPLOT_NKINDS
} sp_runplot_kind;

/* "hist", "exceed", "sens", "sobol", "conv", "scatter" (the stem suffix);
 * NULL for a value outside the enum. */
const char *sp_runplot_kind_name(sp_runplot_kind k);

/* Points of the scatter chart when the options say 0: enough to show the
 * shape of the dependence, few enough that the dots do not merge. */
#define SP_RUNPLOT_SCATTER_DEFAULT 2000
/* The first point of the convergence series; later points double it. */
#define SP_RUNPLOT_CONV_FIRST 1000
/* The block index of the scatter subsample's streams,
 * sp_rng_block_stream(seed, SP_RUNPLOT_SCATTER_BLOCK, input): the last
 * index below the one the engine keeps for run-wide streams (2^48 - 1).  A
 * run's blocks are numbered from 0 and would reach it only past 2^48 - 2
 * blocks, far beyond the engine's memory guard, so the subsample never
 * repeats a draw of the run it illustrates. */
#define SP_RUNPLOT_SCATTER_BLOCK ((UINT64_C(1) << 48) - 2)

typedef struct {
  /* Where and how to draw (plot.h); stem is ignored (set per chart). */
  sp_plot_options plot;
  const char *prefix;    /* stem prefix, [A-Za-z0-9_-]; NULL: "run" */
  size_t scatter_points; /* 0: SP_RUNPLOT_SCATTER_DEFAULT; at most
                          * SP_PLOT_SCATTER_MAX */
} sp_runplot_options;

/* Defaults: sp_plot_options_init, prefix "run", 2000 scatter points. */
void sp_runplot_options_init(sp_runplot_options *o);

/* One chart of the set. */
typedef struct {
  size_t output;          /* index of the model output */
  sp_runplot_kind kind;
  int drawn;              /* 1: the files were written (rendered or not) */
  char caption[2 * SP_PLOT_LABEL_MAX]; /* what the chart shows, one sentence */
  char note[SP_PLOT_HINT_MAX];  /* drawn = 0: why not; drawn and not
                                 * rendered: the plot module's hint */
  sp_plot_output out;     /* the files (when drawn) */
} sp_runplot_chart;

typedef struct {
  sp_runplot_chart *charts; /* owned: noutputs * SP_RUNPLOT_NKINDS, output
                             * by output in the order of the kinds */
  size_t ncharts;
  size_t ndrawn, nrendered;
} sp_runplot_set;

/* Draws every chart of every output of the executed run r into
 * opt->plot.outdir (which must exist).  Fills *set (the caller provides it;
 * free its contents with sp_runplot_set_clear, also after a failure).
 * Unless opt->plot.overwrite, every chart's four files are checked first
 * and nothing is drawn when one exists.
 * Errors: SP_EUSAGE (r not executed, or executed without keep_samples; a
 * prefix that is not a plain name; more scatter points than
 * SP_PLOT_SCATTER_MAX), SP_EIO (a file in the way, naming it), the plot
 * module's errors (a failing gnuplot), SP_ENOMEM. */
sp_status sp_runplot_draw(const sp_run *r, const sp_runplot_options *opt, sp_runplot_set *set,
                          sp_error *err);
void sp_runplot_set_clear(sp_runplot_set *set);

/* Checks, before the run is executed, that its charts can be drawn with
 * opt: the options (as sp_runplot_draw checks them), sp_plot_check (the
 * templates, and a folder that is or can be made in a place one can
 * write), and unless opt->plot.overwrite that no file of any chart of the
 * model's outputs exists there.  sp_runplot_draw makes the last check
 * itself before drawing anything.  Errors: SP_EUSAGE, SP_EIO (naming the
 * folder or the file in the way), SP_ELIMIT. */
sp_status sp_runplot_check(const sp_model *m, const sp_runplot_options *opt, sp_error *err);

/* ---- building blocks, public for tests and reports ------------------------ */

/* The convergence series of one output from its samples y[0..n) in sample
 * order (non-finite values are skipped, as the engine skips them).  Point k
 * is the prefix of the first N_k samples, N_k = SP_RUNPLOT_CONV_FIRST * 2^k
 * while N_k < n, and N = n last.  At each point, over the m finite values
 * of the prefix:
 *   mean     two-pass mean, the deviations' sum added back (Chan, T.F.,
 *            Golub, G.H. & LeVeque, R.J. (1983). Algorithms for computing
 *            the sample variance: analysis and recommendations. The
 *            American Statistician 37(3), 242-247);
 *   mean_se  s / sqrt(m), s with the m - 1 denominator;
 *   lo, hi   the probabilistically symmetric coverage interval of JCGM
 *            101:2008 7.7.1 at coverage p: the order statistics
 *            sp_engine_symmetric_index(m, p) finds, by selection
 *            (sp_select) on a copy of the prefix, never a full sort.
 * Points where m < 2 or the interval does not exist at this m are left
 * out, so every value of the series is finite.  The prefixes double, so
 * all points together read about 2n values three times (copy, two passes)
 * plus the selections (expected linear time).
 * Fills *s (free with sp_runplot_series_clear); npoints may be 0.
 * Errors: SP_EUSAGE (p outside (0, 1)), SP_ENOMEM. */
typedef struct {
  size_t npoints;
  double *nsamples;      /* N_k */
  double *nfinite;       /* m at each point */
  double *mean, *mean_se, *lo, *hi;
} sp_runplot_series;

sp_status sp_runplot_convergence(const double *y, uint64_t n, double p, sp_runplot_series *s,
                                 sp_error *err);
void sp_runplot_series_clear(sp_runplot_series *s);

/* A fresh sample of n points of the model's inputs, drawn as the engine's
 * "mc" method draws block SP_RUNPLOT_SCATTER_BLOCK of a run with this seed
 * (each family's own sampler on sp_rng_block_stream(seed,
 * SP_RUNPLOT_SCATTER_BLOCK, i); correlated inputs through the same
 * Gaussian copula as the run), and the model evaluated on it.
 * in[i][0..n) receives input i (in its declared unit), out[j][0..n)
 * output j.  Every input must have its distribution (sp_run_open does
 * that).  Errors: SP_EUSAGE (n = 0, correlations that are not positive
 * definite), SP_ENOMEM. */
sp_status sp_runplot_subsample(const sp_model *m, uint64_t seed, size_t n, double *const *in,
                               double *const *out, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_RUNPLOT_H */
