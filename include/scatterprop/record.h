/* scatterprop record: the JSON records that pass results between stages.
 *
 * A record is a JSON object whose first two keys are "format" (which kind
 * of record) and "version" (an integer, bumped on any incompatible
 * change); keys are written in a fixed order, numbers with 17 significant
 * digits (so doubles read back bit for bit), and a non-finite number is
 * written as null.  Files are written atomically (sp_outfile) and never
 * overwrite an existing file unless asked.  Readers validate every field
 * they use and name the first bad one:
 *   fit record wire.json: field 'chosen.params.scale' must be a number
 *
 * Kinds of record (one section each below; more kinds are added as new
 * sections, sharing the conventions above):
 *   "scatterprop-fit"  a fit of distribution families to one data column
 *                      (docs/fit-record.md). */
#ifndef SP_RECORD_H
#define SP_RECORD_H

#include <stddef.h>
#include <stdint.h>

#include "scatterprop/core.h"
#include "scatterprop/dist.h"
#include "scatterprop/fit.h"
#include "scatterprop/ingest.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Time stamps in records: "YYYY-MM-DDTHH:MM:SSZ" (UTC) of t seconds since
 * the epoch, into buf (at least SP_RECORD_TIME_LEN bytes). */
#define SP_RECORD_TIME_LEN 21
void sp_record_time_utc(int64_t t, char buf[SP_RECORD_TIME_LEN]);

/* ---- fit records ("scatterprop-fit", version 1) ----------------------- */

#define SP_RECORD_FIT_FORMAT "scatterprop-fit"
#define SP_RECORD_FIT_VERSION 1

/* Where the fitted data came from (all borrowed). */
typedef struct {
  const char *path;            /* data file as given */
  uint64_t size;               /* bytes */
  const char *sha256;          /* 64 hex digits */
  const sp_meta *meta;         /* the file's metadata lines (may be NULL) */
  size_t nmeta;
  const char *column;          /* fitted column name */
  const char *unit;            /* its unit text, or NULL */
  const char *group_column;    /* lot column of a per-lot fit, or NULL */
  size_t nmissing;             /* missing cells dropped */
  int64_t created;             /* creation time, seconds since the epoch (UTC) */
} sp_record_fit_source;

/* The record of r as JSON text.  Returns owned (*out, free with free()).
 * Errors: SP_EUSAGE (r has no candidates), SP_ENOMEM. */
sp_status sp_record_fit_dumps(const sp_fit_result *r, const sp_record_fit_source *src,
                              char **out, sp_error *err);
/* The same for a per-lot fit: the pooled fit at the top level and one
 * entry per lot under "by". */
sp_status sp_record_fit_grouped_dumps(const sp_fit_grouped *g,
                                      const sp_record_fit_source *src, char **out,
                                      sp_error *err);
/* The same two, also recording the command line that made the fit
 * (argc words, the "command" array; argv may be NULL for an empty one).
 * The plain forms above record an empty command. */
sp_status sp_record_fit_dumps_cmd(const sp_fit_result *r, const sp_record_fit_source *src,
                                  int argc, char *const *argv, char **out, sp_error *err);
sp_status sp_record_fit_grouped_dumps_cmd(const sp_fit_grouped *g,
                                          const sp_record_fit_source *src, int argc,
                                          char *const *argv, char **out, sp_error *err);
/* Writes a record text to path atomically (SP_EIO if path exists and
 * overwrite is 0, or on a write failure). */
sp_status sp_record_write_text(const char *path, const char *text, int overwrite,
                               sp_error *err);

/* What a model needs from a fit record: the chosen family and its
 * parameters (in the family's order), their covariance, the unit. */
typedef struct {
  const sp_family *family;
  double params[SP_FAMILY_MAX_PARAMS];
  int fixed[SP_FAMILY_MAX_PARAMS];
  /* Covariance in the family's parameter order; rows and columns of
   * fixed parameters are zero.  cov_available is 0 when the record says
   * the covariance is unavailable. */
  int cov_available;
  double cov[SP_FAMILY_MAX_PARAMS][SP_FAMILY_MAX_PARAMS];
  char *unit;          /* owned; NULL when the column had no unit */
  char *column;        /* owned */
  char *data_path;     /* owned */
  char sha256[SP_SHA256_HEX_LEN];
  size_t n;            /* observations fitted */
  size_t ncandidates;
  char *reason;        /* owned: why this family was chosen */
} sp_record_fit;

/* Reads and validates the fit record at path (or in text[0..len), named
 * name in messages).  Fills *out (the caller provides it; free its
 * contents with sp_record_fit_clear).  Errors: SP_EIO (cannot read),
 * SP_EDATA (not JSON, wrong format or version, a bad field: the message
 * names the field by its path, e.g. 'candidates[2].loglik'; or a record
 * without a chosen family), SP_ENOMEM. */
sp_status sp_record_fit_read(const char *path, sp_record_fit *out, sp_error *err);
sp_status sp_record_fit_parse(const char *name, const char *text, size_t len,
                              sp_record_fit *out, sp_error *err);
void sp_record_fit_clear(sp_record_fit *r);

#ifdef __cplusplus
}
#endif
#endif /* SP_RECORD_H */
