/* scatterprop summary: per-column descriptive statistics of a table, per
 * group of a text column and pooled, and their JSON form.
 *
 * Statistics follow the definitions of stats.h.  Missing observations
 * (SP_OBS_MISSING) are counted and left out; nothing else is dropped. */
#ifndef SP_SUMMARY_H
#define SP_SUMMARY_H

#include "scatterprop/ingest.h"
#include "scatterprop/stats.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Rows of a table grouped by the values of a text column, in the order in
 * which each value first appears. */
typedef struct {
  char *label;   /* the group's value ("" for rows where it is missing) */
  size_t n;
  size_t *rows;  /* row indices, ascending */
} sp_group;

/* Returns owned (*groups, *ngroups; free with sp_groups_free): the groups
 * of the column named by.  SP_EDATA when by is not a column, or not a text
 * column (naming it). */
sp_status sp_table_groups(const sp_table *t, const char *by, sp_group **groups,
                          size_t *ngroups, sp_error *err);
void sp_groups_free(sp_group *groups, size_t ngroups);
/* Returns owned (as sp_table_groups): rows 0..n) grouped by labels[r],
 * in time linear in n.  A NULL label counts as "", and with skip_empty
 * rows whose label is "" belong to no group. */
sp_status sp_group_labels(const char *const *labels, size_t n, int skip_empty,
                          sp_group **groups, size_t *ngroups, sp_error *err);

/* One summary line: a column, over a group of rows or all of them. */
typedef struct {
  const sp_column *column; /* borrowed from the table */
  const char *group;       /* borrowed group label, or NULL for all rows */
  size_t rows;             /* rows considered */
  size_t missing;          /* of which missing */
  int has_stats;           /* 0 when every value is missing */
  sp_describe d;
} sp_summary_row;

typedef struct {
  const sp_column *column;
  sp_summary_row *rows;    /* one per group, then the pooled row (group NULL) */
  size_t nrows;
  int decimals;            /* suggested decimals for values in the column's unit */
} sp_summary_block;

typedef struct {
  const sp_table *table;   /* borrowed: must outlive the set */
  const char *by;          /* borrowed, or NULL */
  sp_summary_block *blocks;
  size_t nblocks;
  sp_group *groups_;       /* private */
  size_t ngroups_;
} sp_summary_set;

/* Summarises the named numeric columns of t (all numeric columns when
 * ncolumns is 0), grouped by the text column by when it is not NULL.
 * Returns owned (*out; free with sp_summary_set_free).  SP_EDATA when a
 * named column is missing or is a text column. */
sp_status sp_summary_build(const sp_table *t, const char *const *columns, size_t ncolumns,
                           const char *by, sp_summary_set **out, sp_error *err);
void sp_summary_set_free(sp_summary_set *s);

/* Decimals that show a value of this spread to about a hundredth of a
 * standard deviation: 2 - floor(log10(sd)), at least 0; -1 when sd is 0,
 * unknown, below 1e-10 (more than 12 decimals) or at least 1e15 (then
 * print with %.6g). */
int sp_summary_decimals_for(double sd);

/* Returns owned (free with free()): the set as a JSON document (format
 * "scatterprop-summary", version 1), values with 17 significant digits. */
char *sp_summary_json(const sp_summary_set *s, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_SUMMARY_H */
