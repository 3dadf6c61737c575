/* scatterprop fitplot: every chart of a fit, from a fit result or from a
 * fit record alone.
 *
 * A fit's charts are drawn from a plan: the column (name, unit), the lot
 * column, and for the whole column (or, with lots, for each lot and for
 * all lots pooled) the curves to draw, chosen by sp_fitplot_pick():
 * the chosen family first, then the best-ranked candidates that the
 * goodness-of-fit test did not reject, SP_FITPLOT_CURVES in all at most.
 * A plan is made from a fit (sp_fitplot_plan_from_fit) or read back from
 * a fit record (sp_fitplot_plan_read); the values themselves always come
 * from the data file's table, so both ways draw the same charts.
 *
 * Charts per fitted set of values (the plot module, plot.h):
 *   histogram with the density of each curve          fit_<C>[_<S>]_hist
 *   probability plot of the chosen family with its    fit_<C>[_<S>]_prob
 *     reference line and 95 % pointwise band
 *   empirical CDF with the CDF of each curve          fit_<C>[_<S>]_ecdf
 * and, with lots, the lots' empirical CDFs side by side with the pooled
 * fit's CDF (SP_PLOT_LOTS_MAX lots per chart)         fit_<C>_lots[<k>]
 * where <C> is the column and <S> is "pooled" or "lot_<L>" for lot <L>,
 * each made safe by sp_plot_stem() (see sp_fitplot_stem).
 *
 * All functions borrow their arguments and retain nothing. */
#ifndef SP_FITPLOT_H
#define SP_FITPLOT_H

#include <stddef.h>

#include "scatterprop/core.h"
#include "scatterprop/dist.h"
#include "scatterprop/fit.h"
#include "scatterprop/ingest.h"
#include "scatterprop/plot.h"
#include "scatterprop/record.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Curves over a histogram or an empirical CDF: the chosen family and the
 * two runners-up; a fourth line would make a 900 x 600 chart's curves hard
 * to tell apart where they overlap. */
#define SP_FITPLOT_CURVES 3
/* Level of the probability plot's pointwise band (the plot module's
 * documented default). */
#define SP_FITPLOT_BAND_LEVEL 0.95
/* Longest piece of a stem taken from a column name, and from a lot label:
 * "fit_" + 48 + "_lot_" + 40 + "_hist" + a "_NNN" disambiguation suffix
 * stays within SP_PLOT_STEM_MAX (120) bytes. */
#define SP_FITPLOT_STEM_COLUMN 48
#define SP_FITPLOT_STEM_LOT 40

/* One fitted curve of a plan. */
typedef struct {
  const sp_family *family;             /* registry entry (borrowed) */
  double theta[SP_FAMILY_MAX_PARAMS];  /* in the family's order */
  size_t rank;                         /* by the fit's criterion; 0: not ranked */
  int chosen;                          /* 1 for the chosen family */
} sp_fitplot_curve;

/* The curves of one fitted set of values. */
typedef struct {
  size_t n;                                 /* observations fitted */
  size_t ncurves;                           /* 0..SP_FITPLOT_CURVES */
  sp_fitplot_curve curves[SP_FITPLOT_CURVES]; /* chosen first, then by rank */
  char note[SP_FIT_TEXT_MAX];               /* why there is no chosen curve, or "" */
} sp_fitplot_fit;

typedef struct {
  char *label;          /* owned: the lot's id */
  sp_fitplot_fit fit;
} sp_fitplot_lot;

typedef struct {
  char *column;         /* owned: the fitted column's name */
  char *unit;           /* owned: its unit text, or NULL */
  char *group_column;   /* owned: the lot column, or NULL without lots */
  sp_fitplot_fit pooled; /* the whole column (all lots pooled) */
  size_t nlots;
  sp_fitplot_lot *lots; /* owned, in order of first appearance */
} sp_fitplot_plan;

/* Fills *out with the curves of r: the chosen candidate first (when r
 * has one), then the SP_FIT_OK candidates not rejected, in rank order,
 * up to SP_FITPLOT_CURVES.  Without a chosen candidate out->ncurves is 0
 * and out->note quotes r->reason. */
void sp_fitplot_pick(const sp_fit_result *r, sp_fitplot_fit *out);

/* A plan from a fit of sp_fit_table: g's pooled fit, and with by (the lot
 * column given to the fit; NULL without) each of its lots.  column and unit
 * as in the table's column (unit may be NULL).  The caller provides *plan;
 * free its contents with sp_fitplot_plan_clear.  Errors: SP_EUSAGE (no
 * column name), SP_ENOMEM. */
sp_status sp_fitplot_plan_from_fit(const sp_fit_grouped *g, const char *column,
                                   const char *unit, const char *by,
                                   sp_fitplot_plan *plan, sp_error *err);

/* A plan from the fit record at path: the record is first validated by
 * sp_record_fit_read (whose result is returned in *rec when rec is not
 * NULL; free it with sp_record_fit_clear), then its candidates and lots
 * are read (docs/fit-record.md: "candidates", "chosen", "by").  Errors:
 * those of sp_record_fit_read (SP_EIO: cannot read; SP_EDATA: a bad field,
 * named by its path), SP_ENOMEM. */
sp_status sp_fitplot_plan_read(const char *path, sp_fitplot_plan *plan, sp_record_fit *rec,
                               sp_error *err);
/* The same on a record text in text[0..len), named name in messages. */
sp_status sp_fitplot_plan_parse(const char *name, const char *text, size_t len,
                                sp_fitplot_plan *plan, sp_record_fit *rec, sp_error *err);

/* Frees what a plan holds (not plan itself) and zeroes it; NULL is fine. */
void sp_fitplot_plan_clear(sp_fitplot_plan *plan);

/* What a chart is. */
typedef enum {
  SP_FITPLOT_HIST = 0,
  SP_FITPLOT_PROB,
  SP_FITPLOT_ECDF,
  SP_FITPLOT_LOTS
} sp_fitplot_kind;
/* "histogram", "probability plot", "empirical CDF", "lots". */
const char *sp_fitplot_kind_name(sp_fitplot_kind k);

/* One chart of a fit: drawn (out filled) or left out (note says why, e.g.
 * a lot with fewer than 2 values, no chosen family). */
typedef struct {
  sp_fitplot_kind kind;
  char stem[SP_PLOT_STEM_MAX + 1];
  /* "wire_d", "lot W24-117" (the grouping column's name and the group),
   * "pooled", "every lot" */
  char subject[2 * SP_PLOT_LABEL_MAX + 16];
  int one_lot; /* 1: the chart of a single lot (with --by); 0: the column's,
                * pooled or the lots side by side */
  int drawn;
  char note[SP_FIT_TEXT_MAX];
  sp_plot_output out;
} sp_fitplot_chart;

typedef struct {
  size_t ncharts;
  sp_fitplot_chart *charts; /* owned, in drawing order */
  size_t ndrawn;            /* charts with drawn = 1 */
  size_t nrendered;         /* of those, rendered to PNG and SVG */
} sp_fitplot_charts;

/* Frees what c holds (not c itself) and zeroes it; NULL is fine. */
void sp_fitplot_charts_free(sp_fitplot_charts *c);

/* The file stem of a chart: "fit_" + the column's stem (at most
 * SP_FITPLOT_STEM_COLUMN bytes), then "_pooled" (pooled = 1) or "_lot_" +
 * the lot's stem (at most SP_FITPLOT_STEM_LOT bytes) when lot is not NULL,
 * then "_" + suffix ("hist", "prob", "ecdf", "lots"; NULL: none).  Every
 * piece goes through sp_plot_stem, so the result is [A-Za-z0-9_-] only.
 * buf holds at least SP_PLOT_STEM_MAX + 1 bytes; returns buf. */
char *sp_fitplot_stem(const char *column, const char *lot, int pooled, const char *suffix,
                      char *buf, size_t n);

/* Draws every chart of plan from the values in t (the column plan->column;
 * with lots, grouped by the text column plan->group_column exactly as the
 * fit grouped them: missing cells dropped, rows with an empty lot id in
 * the pooled set only) into opt->outdir, which is created (one level) when
 * missing.  opt->stem is ignored: each chart gets its sp_fitplot_stem (two
 * charts whose stems would coincide, e.g. lots "A 1" and "A_1", get "_2",
 * "_3", ... on the later one).  Unless opt->overwrite, every chart's four
 * files are checked first and nothing is drawn when one exists.  Fills
 * *out (free with sp_fitplot_charts_free), also on failure with the
 * charts drawn so far.  Errors: SP_EUSAGE (the table lacks the column or
 * the lot column, or they have the wrong kind), SP_EIO (folder, existing
 * files, templates, gnuplot failing), SP_ELIMIT, SP_ENOMEM; and those of
 * the chart functions. */
sp_status sp_fitplot_draw(const sp_fitplot_plan *plan, const sp_table *t,
                          const sp_plot_options *opt, sp_fitplot_charts *out, sp_error *err);

/* The checks of sp_fitplot_draw with the same arguments, drawing nothing
 * and making no folder: the plan against the table, the chart folder and
 * the templates (sp_plot_check), and unless opt->overwrite that no file of
 * any chart exists.  For a caller that writes something else first (the
 * fit record) and must not leave it behind when the charts would be
 * refused.  Errors: those of sp_fitplot_draw's checks and of
 * sp_plot_check; SP_EIO naming a file in the way. */
sp_status sp_fitplot_check(const sp_fitplot_plan *plan, const sp_table *t,
                           const sp_plot_options *opt, sp_error *err);

/* Redraws the charts of the fit record at record_path: reads the plan
 * (sp_fitplot_plan_read), reads the data file named in the record (or
 * data_path when not NULL; a relative path in the record that does not
 * exist from the current folder is also looked for beside the record),
 * checks that its SHA-256 equals the record's, and calls sp_fitplot_draw.
 * Errors: SP_EIO (record or data file unreadable; the message names the
 * paths tried), SP_EDATA (a bad record; a data file whose SHA-256 differs
 * from the record's, naming the file and both hashes; a data file whose
 * column no longer gives the record's number of observations), and those
 * of sp_table_read and sp_fitplot_draw. */
sp_status sp_fitplot_redraw(const char *record_path, const char *data_path,
                            const sp_plot_options *opt, sp_fitplot_charts *out,
                            sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_FITPLOT_H */
