/* scatterprop plot: charts as gnuplot scripts, rendered by gnuplot.
 *
 * For every chart the library writes, into the caller's output folder,
 *   STEM.dat  the data, plain whitespace-separated columns (numbers with 17
 *             significant digits; blocks separated by two blank lines and
 *             addressed by gnuplot's "index"),
 *   STEM.gp   the filled script, which a user may restyle and rerun with
 *             "gnuplot STEM.gp" in that folder,
 * and then runs gnuplot directly (fork/execve on an argument vector, never
 * through a shell; time-limited, with its messages captured) to render
 *   STEM.png  (pngcairo) and STEM.svg.
 * All four files are made in a private staging folder and moved into place
 * only when everything succeeded: a failure leaves no partial outputs.
 * Without gnuplot the script and data are still written, the output says
 * rendered = 0 and carries a one-line hint telling how to render them.
 *
 * The look lives in the templates (in plots/: one KIND.gp per chart kind,
 * plus style.gp, the house style inlined into every script), found by
 * sp_plot_template_dir().
 *
 * Specs are plain data the caller owns: arrays of values, labels, units,
 * fitted curves as a family and its parameters.  Every text field is data
 * from the user's files: it reaches a script only through
 * sp_plot_gnuplot_string(), never as code.
 *
 * All functions borrow their arguments; none retains anything. */
#ifndef SP_PLOT_H
#define SP_PLOT_H

#include <stddef.h>

#include "scatterprop/core.h"
#include "scatterprop/dist.h"

#ifdef __cplusplus
extern "C" {
#endif

#define SP_PLOT_PATH_MAX 4096
#define SP_PLOT_HINT_MAX 1024
/* Longest label kept, in bytes (longer ones are cut at a character
 * boundary and end in "..."): about two lines of a 900-pixel chart. */
#define SP_PLOT_LABEL_MAX 200
/* Longest file stem accepted (so STEM plus a suffix fits any file system's
 * 255-byte name limit with room to spare). */
#define SP_PLOT_STEM_MAX 120

/* Where and how to write and render a chart. */
typedef struct {
  const char *outdir;       /* existing folder for the outputs */
  const char *stem;         /* file stem: [A-Za-z0-9_.-], not starting with
                             * '.' or '-', at most SP_PLOT_STEM_MAX bytes; build
                             * one from any text with sp_plot_stem() */
  int overwrite;            /* replace existing outputs (else SP_EIO) */
  const char *gnuplot;      /* NULL: "gnuplot" looked up on PATH; a name or a
                             * path: that program; "": do not render */
  const char *template_dir; /* last folder searched for templates (the source
                             * tree's plots/), or NULL */
  double timeout;           /* seconds allowed per rendering; <= 0: 60 */
  unsigned width, height;   /* pixels; 0: 900 x 600 */
} sp_plot_options;

/* Sets the defaults above (everything NULL/0). */
void sp_plot_options_init(sp_plot_options *opt);

/* What a chart call wrote.  Paths are outdir/STEM.ext; png and svg are
 * empty unless rendered. */
typedef struct {
  char data[SP_PLOT_PATH_MAX];
  char script[SP_PLOT_PATH_MAX];
  char png[SP_PLOT_PATH_MAX];
  char svg[SP_PLOT_PATH_MAX];
  int rendered;                /* 1 when PNG and SVG were made */
  char hint[SP_PLOT_HINT_MAX]; /* when not rendered: one line, e.g.
                                * "gnuplot not found: to render, run
                                * 'gnuplot fit_wire_d_hist.gp' in out/" */
} sp_plot_output;

/* An axis: the quantity and its unit, shown as "quantity [unit]" (no
 * brackets when unit is NULL or ""). */
typedef struct {
  const char *quantity;
  const char *unit;
} sp_plot_axis;

/* A fitted distribution drawn over the data. */
typedef struct {
  const sp_family *family;              /* borrowed */
  double theta[SP_FAMILY_MAX_PARAMS];   /* in the family's parameter order */
  const char *label;                    /* legend text; NULL: family->title */
} sp_plot_curve;

/* A fitted column: its values and the candidate fits, best first. */
typedef struct {
  const char *title;     /* chart title, e.g. "wire_d: fitted candidates" */
  sp_plot_axis axis;     /* the measured quantity */
  const double *x;       /* values (finite), n >= 2 */
  size_t n;
  const sp_plot_curve *curves; /* candidates, best first (may be empty for
                                * the histogram and ECDF; the probability
                                * plot uses curves[0], the chosen family) */
  size_t ncurves;
  double resolution;     /* the instrument's resolution (> 0), or 0: bin
                          * widths are then made whole multiples of it */
  size_t nbins;          /* histogram bins, 0: Freedman-Diaconis */
  double band_level;     /* probability plot: level of the pointwise band,
                          * in (0, 1), or 0 for none (default in the
                          * template docs: 0.95) */
} sp_plot_fit;

/* Histogram (probability density) with the pdf of each candidate.
 * Files: STEM.*; template fit_hist.gp.
 * Errors: SP_EUSAGE (a spec outside its domain: n < 2, a non-finite value,
 * an unknown stem, a curve with no family), SP_EIO (files, templates,
 * gnuplot failing: the message quotes gnuplot), SP_ENOMEM. */
sp_status sp_plot_fit_histogram(const sp_plot_fit *spec, const sp_plot_options *opt,
                                sp_plot_output *out, sp_error *err);

/* Probability plot of the ordered data x_(i) against the chosen family's
 * quantiles at the plotting positions p_i = (i - 0.5)/n (Hazen), with the
 * line y = x and, when band_level > 0, a pointwise band from the beta
 * distribution of the uniform order statistics mapped through the fitted
 * quantile function.  Needs ncurves >= 1 and a family with quantile_P.
 * Template fit_prob.gp.  Errors as sp_plot_fit_histogram, and
 * SP_ENUMERIC when a quantile is not finite (a fit that cannot reach the
 * data, named in the message). */
sp_status sp_plot_fit_probability(const sp_plot_fit *spec, const sp_plot_options *opt,
                                  sp_plot_output *out, sp_error *err);

/* Empirical CDF (right-continuous steps) with each candidate's CDF.
 * Template fit_ecdf.gp.  Errors as sp_plot_fit_histogram. */
sp_status sp_plot_fit_ecdf(const sp_plot_fit *spec, const sp_plot_options *opt,
                           sp_plot_output *out, sp_error *err);

/* One lot (batch) of a column. */
typedef struct {
  const char *label;  /* the lot's id */
  const double *x;    /* its values (finite), n >= 1 */
  size_t n;
} sp_plot_lot;

/* Lots side by side: overlaid ECDFs, one per lot, with a legend, and
 * optionally the pooled fit's CDF. */
typedef struct {
  const char *title;
  sp_plot_axis axis;
  const sp_plot_lot *lots;
  size_t nlots;              /* 1 .. SP_PLOT_LOTS_MAX */
  const sp_plot_curve *pooled; /* NULL or the fit to all lots together */
} sp_plot_lots;

/* Lots drawn in one chart: beyond eight the palette's colours repeat and
 * a legend stops being readable. */
#define SP_PLOT_LOTS_MAX 8

/* Template fit_lots.gp.  Errors as sp_plot_fit_histogram. */
sp_status sp_plot_fit_lots(const sp_plot_lots *spec, const sp_plot_options *opt,
                           sp_plot_output *out, sp_error *err);

/* A limit on an output: a value and its label ("stress limit 950 MPa"). */
typedef struct {
  double value;
  const char *label;
} sp_plot_limit;

/* A coverage interval [lo, hi] holding the fraction level (e.g. 0.95) of
 * the output's distribution; level 0 means none. */
typedef struct {
  double lo, hi;
  double level;
} sp_plot_interval;

/* An output of a run, as samples or as a ready histogram. */
typedef struct {
  const char *title;
  sp_plot_axis axis;        /* the output quantity */
  const double *samples;    /* finite values, or NULL when binned is used */
  size_t n;
  /* A histogram the engine built while streaming (used when samples is
   * NULL): nbins bins with edges[0..nbins] ascending and counts[0..nbins). */
  const double *edges;
  const double *counts;
  size_t nbins;             /* with samples: 0 means Freedman-Diaconis */
  sp_plot_interval coverage;
  const sp_plot_limit *limits;
  size_t nlimits;
} sp_plot_run_hist;

/* Histogram (density) with the coverage interval shaded and each limit
 * marked.  Template run_hist.gp.  Errors as sp_plot_fit_histogram. */
sp_status sp_plot_run_histogram(const sp_plot_run_hist *spec, const sp_plot_options *opt,
                                sp_plot_output *out, sp_error *err);

/* The exceedance curve P(Y > y) on a logarithmic axis. */
typedef struct {
  const char *title;
  sp_plot_axis axis;
  /* Either the samples (any order; the chart shows the empirical survival
   * function (n - i)/n at the i-th smallest value, i = 1..n-1, thinned to
   * at most a few hundred points away from the tail) ... */
  const double *samples;
  size_t n;
  /* ... or, when samples is NULL, a table of values and their exceedance
   * probabilities q = P(Y > value) in (0, 1), values ascending. */
  const double *values;
  const double *exceedance;
  size_t npoints;
  const sp_plot_limit *limits;
  size_t nlimits;
} sp_plot_exceedance;

/* Template run_exceed.gp.  Errors as sp_plot_fit_histogram. */
sp_status sp_plot_run_exceedance(const sp_plot_exceedance *spec, const sp_plot_options *opt,
                                 sp_plot_output *out, sp_error *err);

/* Inputs ranked by their share of the output's variance. */
typedef struct {
  const char *title;
  const char *measure;       /* what share is, e.g. "first-order index" */
  const char *const *inputs; /* input names */
  const double *share;       /* share of variance per input, in [0, 1] */
  const double *share_total; /* NULL, or a second measure per input (e.g.
                              * total-effect index), drawn as an outline */
  const char *measure_total; /* its legend text */
  size_t ninputs;            /* 1 .. SP_PLOT_INPUTS_MAX */
} sp_plot_sensitivity;

/* Inputs shown in a sensitivity chart (the rest belong in a table): more
 * bars than this would not leave a readable label height at 600 pixels. */
#define SP_PLOT_INPUTS_MAX 40

/* Horizontal bars, largest share at the top.  Template run_sens.gp.
 * Errors as sp_plot_fit_histogram. */
sp_status sp_plot_run_sensitivity(const sp_plot_sensitivity *spec, const sp_plot_options *opt,
                                  sp_plot_output *out, sp_error *err);

/* Convergence of the mean and of the interval ends with the number of
 * samples; series given by the caller, n ascending. */
typedef struct {
  const char *title;
  sp_plot_axis axis;        /* the output quantity */
  const double *nsamples;   /* number of samples at each point (> 0) */
  const double *mean;
  const double *mean_se;    /* NULL, or the Monte Carlo standard error of the
                             * mean, drawn as a band of +- 2 se */
  const double *lo, *hi;    /* NULL, or the interval ends */
  double level;             /* the interval's coverage, for the legend */
  size_t npoints;
} sp_plot_convergence;

/* Logarithmic sample axis.  Template run_conv.gp.  Errors as
 * sp_plot_fit_histogram. */
sp_status sp_plot_run_convergence(const sp_plot_convergence *spec, const sp_plot_options *opt,
                                  sp_plot_output *out, sp_error *err);

/* The output against one input (the caller picks the points, e.g. a
 * subsample of the run). */
typedef struct {
  const char *title;
  sp_plot_axis xaxis;       /* the input */
  sp_plot_axis yaxis;       /* the output */
  const double *x, *y;
  size_t npoints;           /* 1 .. SP_PLOT_SCATTER_MAX */
  size_t of_total;          /* samples in the run (for the caption), or 0 */
  const sp_plot_limit *limits; /* on the output, drawn as horizontal lines */
  size_t nlimits;
} sp_plot_scatter;

/* Points in a scatter chart: beyond this an SVG grows past a few
 * megabytes and the points only blacken the area; subsample first. */
#define SP_PLOT_SCATTER_MAX 20000

/* Template run_scatter.gp.  Errors as sp_plot_fit_histogram. */
sp_status sp_plot_run_scatter(const sp_plot_scatter *spec, const sp_plot_options *opt,
                              sp_plot_output *out, sp_error *err);

/* ---- text that reaches a script ----------------------------------------
 *
 * sp_plot_gnuplot_string: writes text as a gnuplot single-quoted string
 * literal (with the quotes) into buf[0..n).  Single-quoted strings are
 * not subject to backslash escapes in gnuplot, and every character that
 * could still mean something is replaced, so the result is inert wherever
 * it is used:
 *   kept:     letters, digits, space, and _ - . , : ; / ( ) [ ] + * = % # ! ? ~ | < > &
 *             and valid UTF-8 beyond ASCII (units such as µm or °C),
 *   replaced: ' by U+2019 (’), " by U+201D (”); the back-quote, backslash,
 *             $, @, { } ^, control characters, invalid UTF-8 and the
 *             bidirectional-override characters by '?'; the "(" of a word
 *             "system" (any case, spaces allowed before it) by '?';
 *   cut:      when the kept text would pass SP_PLOT_LABEL_MAX bytes, it
 *             ends there with "...".
 * NULL text gives ''.  Returns the length written (without the NUL), or 0
 * (writing nothing) when n < SP_PLOT_QUOTED_MAX. */
#define SP_PLOT_QUOTED_MAX (SP_PLOT_LABEL_MAX + 8)
size_t sp_plot_gnuplot_string(const char *text, char *buf, size_t n);

/* A count as charts and captions show it: digits in groups of three
 * separated by a thin space (U+2009) from 10 000 up, as ISO 80000-1 writes
 * numbers ("1 000 000"; 4-digit counts stay "2000"), into buf[0..n),
 * n >= SP_PLOT_COUNT_MAX; returns buf. */
#define SP_PLOT_COUNT_MAX 40
char *sp_plot_count_text(unsigned long long v, char *buf, size_t n);

/* A file stem made from any text: [A-Za-z0-9_-] kept, runs of anything
 * else become one '_', no leading '_' or '-', cut at SP_PLOT_STEM_MAX
 * bytes; "chart" when nothing is left.  Writes into buf[0..n), n >= 8;
 * returns buf. */
char *sp_plot_stem(const char *text, char *buf, size_t n);

/* The folder holding the templates: the first of
 *   $SCATTERPROP_PLOTS (a ':'-separated list of folders),
 *   <folder of the running program>/../share/scatterprop/plots,
 *   fallback (the caller's source tree, may be NULL)
 * that contains style.gp.  Writes it into buf[0..n).  SP_EIO when none
 * does, listing the folders tried. */
sp_status sp_plot_template_dir(const char *fallback, char *buf, size_t n, sp_error *err);

/* Whether a gnuplot can be run as opt->gnuplot says: 1 and its path in
 * buf[0..n), or 0. */
int sp_plot_gnuplot_found(const sp_plot_options *opt, char *buf, size_t n);

/* Checks, before any long work, that charts can be drawn with opt: the
 * templates are found (sp_plot_template_dir with opt->template_dir), and
 * opt->outdir is a folder in which an entry can be made, or does not exist
 * and its parent folder is one (outdir itself is not made here).  The
 * check makes and removes an empty hidden folder in that folder.  Whether
 * gnuplot is installed is not checked (without it the scripts are still
 * written).  Errors: SP_EUSAGE (no outdir), SP_EIO (templates not found;
 * outdir is not a folder, its parent does not exist, or nothing can be
 * written there: the message names the folder and the reason), SP_ELIMIT
 * (a path too long). */
sp_status sp_plot_check(const sp_plot_options *opt, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_PLOT_H */
