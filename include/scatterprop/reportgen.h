/* scatterprop reportgen: the HTML report of a run, built from its records.
 *
 * From a run record ("scatterprop-run", run.h) and the fit records and
 * data files it names, sp_reportgen_write() builds one self-contained HTML
 * file with the report module (report.h):
 *   - provenance: the run record, the model, every fit record and data
 *     file with its size and SHA-256; the tool that made the run; seeds,
 *     options and the run's command line; how the charts were made;
 *   - a summary of the key figures;
 *   - data: each fitted data file re-read, its SHA-256 CHECKED against the
 *     fit record, the fitted column summarised (summary.h), by lot when
 *     the fit was, with the file's metadata lines;
 *   - fits: each record's ranked candidates, the choice and its reason,
 *     per-lot fits, and charts (histogram with the candidates' densities,
 *     probability plot, empirical CDF, lots);
 *   - the model text, its inputs and correlations;
 *   - results per output with their Monte Carlo uncertainty (mean +- its
 *     standard error, sd, intervals, percentiles) and the run charts;
 *   - exceedance probabilities of the limits with their intervals;
 *   - sensitivity (rank correlations, shares, Sobol' indices).
 * Every text from the inputs reaches the page through the report module,
 * which escapes it.
 *
 * Charts of the run.  The run record holds statistics, not samples, so the
 * run charts come from one of two places:
 *   - by default the run is repeated: the recorded model is opened
 *     (sp_run_open, which re-reads and hashes the fit records), executed
 *     with the recorded options and with keep_samples, and its record is
 *     compared with the recorded one by the rules of the replay module
 *     (replay.h: every result, bit for bit when the record names this
 *     build, within SP_REPLAY_DEFAULT_TOLERANCE when it names another);
 *     on a difference nothing is written and the error names the first
 *     figure that differs.  The charts are then drawn from the repeated
 *     run (runplot.h) in a temporary folder, embedded and removed;
 *   - with plots_dir, the SVGs that "propagate --plots DIR" drew are
 *     embedded instead and the run is not repeated (for runs too large to
 *     keep their samples in memory).  Each histogram's data file there is
 *     compared with the record's counts, so charts of another run are
 *     refused; the other charts are taken as they are, which the report
 *     says.
 * Fit charts are always drawn afresh from the re-read data (fitplot.h).
 * Files named in the records are found as the replay module finds them
 * (an archive's own copies; else the folder the record was made in; else
 * the current folder).
 *
 * All functions borrow their arguments; none retains anything. */
#ifndef SP_REPORTGEN_H
#define SP_REPORTGEN_H

#include <stddef.h>

#include "scatterprop/core.h"
#include "scatterprop/plot.h"
#include "scatterprop/runplot.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef struct {
  const char *out;          /* the report file; NULL: report.html in the
                             * run record's folder */
  int overwrite;            /* replace an existing report (else SP_EIO) */
  const char *plots_dir;    /* NULL: repeat the run for its charts; else
                             * take them from this folder (see above) */
  const char *gnuplot;      /* as sp_plot_options.gnuplot */
  const char *template_dir; /* as sp_plot_options.template_dir */
  int threads;              /* of the repeated run; 0: all cores (results
                             * do not depend on it) */
  const char *command;      /* the command line that makes the report,
                             * shown in the provenance; may be NULL */
  const char *created;      /* the date shown; may be NULL (the library
                             * reads no clock) */
} sp_reportgen_options;

/* Defaults: everything NULL or 0. */
void sp_reportgen_options_init(sp_reportgen_options *o);

/* What was written. */
typedef struct {
  char path[SP_PLOT_PATH_MAX]; /* the report */
  int rerun;                 /* 1: the run was repeated and matched */
  size_t nfigures;           /* figures in the report */
  size_t nembedded;          /* of which with an embedded chart */
  char note[SP_PLOT_HINT_MAX]; /* when charts could not be rendered: why
                                * (e.g. gnuplot not found); else "" */
} sp_reportgen_result;

/* Builds and writes the report of the run record at run_record.
 * Errors:
 *  SP_EIO      the run record, the model, a fit record or a data file
 *              cannot be read (the message names it); the report exists
 *              and overwrite is 0; a chart cannot be written;
 *  SP_EDATA    the run record or a fit record is not valid (the message
 *              names the field: "run record r.json: field
 *              'results.outputs[0].mean' must be a number"); a model, fit
 *              record or data file is not the one recorded (the message
 *              gives both SHA-256); the data no longer give the fitted
 *              number of values; the charts in plots_dir are of another
 *              run;
 *  SP_EDIFFERS the repeated run does not reproduce the record (the message
 *              names the first figure and both values, the hint how to
 *              list them all);
 *  SP_EMODEL   the recorded model no longer compiles;
 *  SP_ENOMEM   out of memory, or the repeated run would not fit in memory
 *              (the hint suggests plots_dir);
 *  and the plot and report modules' errors.
 * res (may be NULL) is filled on success. */
sp_status sp_reportgen_write(const char *run_record, const sp_reportgen_options *opt,
                             sp_reportgen_result *res, sp_error *err);

/* ---- redrawing from a record ---------------------------------------------- */

/* The kind of a record, by its "format" field. */
typedef enum {
  SP_REPORTGEN_UNKNOWN = 0,
  SP_REPORTGEN_FIT, /* "scatterprop-fit" */
  SP_REPORTGEN_RUN  /* "scatterprop-run" */
} sp_reportgen_kind;

/* Reads the file at path and says which kind of record it is, by its
 * format alone (the readers validate the rest, and name what is wrong
 * with a file that is not a record): SP_REPORTGEN_UNKNOWN for a file that
 * is not JSON, not an object, or has no known format.  Errors: SP_EUSAGE
 * (no path), SP_EIO (the file cannot be read). */
sp_status sp_reportgen_record_kind(const char *path, sp_reportgen_kind *kind, sp_error *err);

/* Draws the charts of the run record at run_record (those of "propagate
 * --plots DIR", runplot.h) into opt->plot.outdir, made (one level) when
 * missing.  The run record holds statistics, not samples, so the run is
 * repeated exactly as sp_reportgen_write repeats it (the model and every
 * fit record and data file checked against their recorded SHA-256, the
 * recorded options and seed, threads threads; 0: all cores) and compared
 * with the record; nothing is drawn unless it reproduces every recorded
 * figure.  The charts are then those "propagate --plots" drew (the same
 * data and scripts, byte for byte, on the same build).  The folder and
 * the templates are checked (sp_plot_check) before the run is repeated.
 * Fills *set (free its contents with sp_runplot_set_clear, also after a
 * failure) and *tolerance (may be NULL; the relative tolerance the
 * comparison applied: 0 when the record names this build).
 * Errors: those of sp_reportgen_write for reading and repeating the run
 * (SP_EIO, SP_EDATA, SP_EDIFFERS, SP_EMODEL, SP_ENOMEM); SP_EUSAGE (no
 * outdir); those of sp_plot_check and sp_runplot_draw (SP_EIO: files in
 * the way without opt->plot.overwrite, gnuplot failing). */
sp_status sp_reportgen_plot_run(const char *run_record, const sp_runplot_options *opt, int threads,
                                sp_runplot_set *set, double *tolerance, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_REPORTGEN_H */
