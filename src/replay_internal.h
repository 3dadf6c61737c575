/* Private: what the replay and archive modules share: reading a record
 * file into a JSON tree, fetching its fields with messages that name them
 * by their path, and finding the files a record names. */
#ifndef SP_REPLAY_INTERNAL_H
#define SP_REPLAY_INTERNAL_H

#include <stdint.h>

#include <jansson.h>

#include "scatterprop/core.h"
#include "scatterprop/replay.h"

/* Records and models larger than this are refused (SP_ELIMIT): a record is
 * a few kilobytes, a model at most SP_MODEL_MAX_BYTES, and a CSV copied
 * into an archive is read in pieces. */
#define SP_REPLAY_MAX_FILE ((size_t)256 << 20)

/* The whole file at path, NUL-terminated, length in *len.  Returns owned
 * (free()), or NULL with err set (SP_EIO, SP_ELIMIT, SP_ENOMEM). */
char *sp_replay_read_file(const char *path, size_t *len, sp_error *err);

/* The record at path as a JSON tree (returns owned, json_decref), or NULL
 * with err set: SP_EIO when it cannot be read, SP_EDATA when it is not a
 * JSON object (positioned at the parse error). */
json_t *sp_replay_load_json(const char *path, sp_error *err);

/* Field access with messages "<kind> record <name>: field '<path>' ...".
 * kind is "fit" or "run" (or NULL: "record <name>: ..."). */
typedef struct {
  const char *kind;
  const char *name;
  sp_error *err;
} sp_replay_ctx;

sp_status sp_replay_bad(const sp_replay_ctx *c, const char *path, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
sp_status sp_replay_need_obj(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, json_t **out);
sp_status sp_replay_need_arr(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, json_t **out);
sp_status sp_replay_need_str(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, int nullable, const char **out);
/* A number (nullable: null reads as NAN). */
sp_status sp_replay_need_num(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, int nullable, double *out);
/* A non-negative integer, or (for seeds of 2^63 and more) its decimal
 * digits as a string. */
sp_status sp_replay_need_u64(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, uint64_t *out);
/* 64 lower-case hexadecimal digits. */
sp_status sp_replay_need_sha(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, const char **out);

/* The folder part of path with its trailing '/', or "" (returns owned). */
char *sp_replay_dir_of(const char *path);
/* dir joined with rel (rel absolute: rel itself).  Returns owned. */
char *sp_replay_join(const char *dir, const char *rel);

/* Where a path recorded in a record (the record read from record_path,
 * its tree root) is now: an absolute path as it is; in an archived
 * record (one with an "archive" object) relative to the record's folder;
 * otherwise relative to the working directory the record was made in
 * (provenance.working_directory) when a file is there, else relative to
 * the current directory when one is there, else relative to the record's
 * own folder when one is there; with none there, the path as recorded
 * (relative to the current directory).  Returns owned; *exists says
 * whether the file is there.  NULL only when out of memory. */
char *sp_replay_locate(const char *record_path, const json_t *root, const char *recorded,
                       int *exists);

/* Where sp_replay_locate looked for recorded: "looked for data/x.csv at
 * /wd/data/x.csv (the folder it was made in), data/x.csv (the current
 * folder), ..." (returns owned; NULL when out of memory). */
char *sp_replay_locate_tried(const char *record_path, const json_t *root, const char *recorded);

/* The input added last, when missing: its note becomes the places that
 * were tried (sp_replay_locate_tried). */
void sp_replay_note_tried(sp_replay_report *rep, const char *record_path, const json_t *root,
                          const char *recorded);

/* SP_EDATA for a report with changed or missing inputs: the count, the
 * first, and a hint on what to do. */
sp_status sp_replay_inputs_failed(const char *path, const sp_replay_report *rep, sp_error *err);

/* Appends an input to the report (copies the strings); SP_ENOMEM only. */
sp_status sp_replay_add_input(sp_replay_report *rep, const char *role, const char *path,
                              const char *recorded_sha256, uint64_t recorded_size,
                              sp_error *err);

/* Whether the record's build facts match this build: fills rep's
 * build_differs and build_note. */
void sp_replay_check_build(const json_t *root, sp_replay_report *rep);

/* Compares the recorded tree with the replayed one under the ignore list of
 * the record's kind, adding every difference to rep.  SP_ENOMEM only. */
sp_status sp_replay_compare_trees(const json_t *recorded, const json_t *replayed,
                                  sp_replay_kind kind, double tolerance,
                                  sp_replay_report *rep, sp_error *err);

/* After a comparison of a record with its rerun by this very build (not
 * rep->build_differs): SP_EDATA naming the first field of another JSON type
 * than the rerun's, one the record lacks or one the rerun does not make,
 * as a malformed record (kind
 * "fit" or "run", record its path); SP_OK when there is none. */
sp_status sp_replay_refuse_malformed(const char *kind, const char *record,
                                     const sp_replay_report *rep, sp_error *err);

/* The two reruns (replay_fit.c, replay_run.c): each checks the record's
 * inputs into rep and, when they are all intact, reruns and compares. */
sp_status sp_replay_fit_record(const char *path, json_t *root, const sp_replay_options *opt,
                               sp_replay_report *rep, sp_error *err);
sp_status sp_replay_run_record(const char *path, json_t *root, const sp_replay_options *opt,
                               sp_replay_report *rep, sp_error *err);

/* Checks one fit record's data file (recorded in data.path, data.size,
 * data.sha256 of the tree root read from fit_path) into rep under role. */
sp_status sp_replay_check_fit_data(const char *fit_path, const json_t *root, const char *role,
                                   sp_replay_report *rep, sp_error *err);

#endif
