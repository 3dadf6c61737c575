/* scatterprop replay: rerun a fit or run record and compare.
 *
 * sp_replay() reads a record ("scatterprop-fit" or "scatterprop-run", by
 * its "format"), checks that every file it was made from is unchanged (the
 * data CSV of a fit; for a run the model file, each fit record and,
 * through them, each data file), reruns it with the recorded options, and
 * compares every result field of the new record with the recorded one.
 *
 * Comparison rules (docs/reproducibility.md has the reasons):
 *  - fields that legitimately differ are not compared: created_utc,
 *    command, caution, tool, provenance, archive, options.threads, and
 *    the paths that only say where a file was (data.path of a fit;
 *    model.path, inputs[].fit_record.resolved and .data_path of a run);
 *    the files themselves are compared by their SHA-256 instead;
 *  - strings, booleans, nulls and integers must be equal;
 *  - a number pair a, b is equal when |a - b| <= tol * max(|a|, |b|), and
 *    tol is 0 (bit for bit) when the record's build facts (tool version,
 *    git revision, compiler, flags, GSL, jansson, libcsv, udunits2,
 *    OpenMP, libc, machine, processor features) match this build, and
 *    SP_REPLAY_DEFAULT_TOLERANCE when they differ or the record does not
 *    say; sp_replay_options.tolerance overrides both;
 *  - an object key or array element present on one side only differs. */
#ifndef SP_REPLAY_H
#define SP_REPLAY_H

#include <stddef.h>
#include <stdint.h>

#include "scatterprop/core.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Relative tolerance of a replay on another build: 1e-9 is 10^6 times
 * DBL_EPSILON (2.2e-16), room for last-bit differences of libm functions
 * carried through sums of up to ~10^6 terms (relative error growth at most
 * about n * DBL_EPSILON for a sum of n terms: Higham, N.J. (2002). Accuracy
 * and Stability of Numerical Algorithms, 2nd ed., SIAM, chapter 4),
 * while any real change of a result (a seed, an option, a datum) moves
 * it by far more. */
#define SP_REPLAY_DEFAULT_TOLERANCE 1e-9

/* Differences kept in a report (more are counted in ndiffs_total). */
#define SP_REPLAY_MAX_DIFFS 1000

typedef enum { SP_REPLAY_FIT = 1, SP_REPLAY_RUN = 2 } sp_replay_kind;

typedef struct {
  int threads;       /* threads of the rerun; 0: all (results do not depend on it) */
  double tolerance;  /* relative tolerance; negative: automatic (above) */
} sp_replay_options;

/* threads 0, tolerance -1 (automatic). */
void sp_replay_options_init(sp_replay_options *o);

typedef enum {
  SP_REPLAY_INPUT_OK = 0,
  SP_REPLAY_INPUT_CHANGED,   /* its SHA-256 differs from the recorded one */
  SP_REPLAY_INPUT_MISSING    /* no file at the path (or it cannot be read) */
} sp_replay_input_status;

/* One file a record was made from (all strings owned by the report). */
typedef struct {
  char *role;                 /* "model", "fit record of input d", "data of fits/d.json" */
  char *path;                 /* where it was looked for */
  char recorded_sha256[SP_SHA256_HEX_LEN];
  char actual_sha256[SP_SHA256_HEX_LEN]; /* "" when missing */
  uint64_t recorded_size, actual_size;
  sp_replay_input_status status;
  char *note;                 /* why it is missing, or NULL */
} sp_replay_input;

/* What kind of difference a field shows. */
typedef enum {
  SP_REPLAY_DIFF_VALUE = 0,    /* same JSON type, other value */
  SP_REPLAY_DIFF_TYPE,         /* another JSON type (a string for a number, ...) */
  SP_REPLAY_DIFF_NOT_RECORDED, /* the rerun has the field, the record lacks it */
  SP_REPLAY_DIFF_NOT_REPLAYED  /* the record has a field the rerun does not make */
} sp_replay_diff_kind;

/* One differing field. */
typedef struct {
  char *path;       /* JSON path: "results.outputs[0].mean" */
  char *recorded;   /* the recorded value as JSON text, or "(absent)" */
  char *replayed;   /* the new value as JSON text, or "(absent)" */
  double rel;       /* |a - b| / max(|a|, |b|) for two numbers, else NAN */
  sp_replay_diff_kind kind;
} sp_replay_diff;

typedef struct {
  sp_replay_kind kind;
  sp_replay_input *inputs;    /* in the order checked */
  size_t ninputs;
  size_t nbad;                /* inputs changed or missing */
  int build_differs;          /* the record names another build (or none) */
  char build_note[1024];      /* what differs: "GSL 2.7.1 -> 2.8"; "" if nothing */
  double tolerance;           /* the relative tolerance applied */
  size_t compared;            /* values compared */
  sp_replay_diff *diffs;      /* at most SP_REPLAY_MAX_DIFFS, in document order */
  size_t ndiffs;
  size_t ndiffs_total;
} sp_replay_report;

/* Replays the record at path.  rep is provided by the caller and filled
 * (free its contents with sp_replay_report_clear, also after a failure).
 * Returns:
 *  SP_OK        every compared field is equal (within rep->tolerance);
 *  SP_EDIFFERS  some differ: rep->diffs lists them;
 *  SP_EDATA     an input file changed or is missing (rep->inputs says
 *               which, with both SHA-256), or the record is malformed
 *               (err names the field: "run record r.json: field
 *               'options.seed' is missing"; rep->nbad is 0 then).  Made
 *               by this very build, a record whose result field has
 *               another JSON type than the rerun's, lacks one the rerun
 *               makes or has one it does not make is malformed too (this
 *               build writes every field, each in one type); rep->diffs
 *               still lists every difference;
 *  SP_EIO       the record cannot be read; SP_EMODEL, SP_ENUMERIC,
 *  SP_ENOMEM    from the rerun itself (err says which). */
sp_status sp_replay(const char *path, const sp_replay_options *opt, sp_replay_report *rep,
                    sp_error *err);

/* Compares two record texts of the same kind under the rules above with
 * relative tolerance tol (>= 0), without rerunning anything: the records
 * of two runs that should agree (other thread counts, other machines).
 * Returns SP_OK or SP_EDIFFERS with rep filled; SP_EDATA when a text is
 * not a record (not JSON, no known "format", or two formats). */
sp_status sp_replay_compare(const char *recorded, size_t recorded_len, const char *replayed,
                            size_t replayed_len, double tol, sp_replay_report *rep,
                            sp_error *err);

void sp_replay_report_clear(sp_replay_report *rep);

#ifdef __cplusplus
}
#endif
#endif /* SP_REPLAY_H */
