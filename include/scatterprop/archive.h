/* scatterprop archive: one self-contained folder per fit or run, with
 * every input, the records and the charts, that replays wherever it is
 * moved or copied.
 *
 * Layout (paths inside the archived records are relative to the record's
 * folder, so the folder can be moved as a whole):
 *   DIR/run.json            the run record (a run archive)
 *   DIR/model.spm           the model, its fit("...") paths rewritten to fits/...
 *   DIR/fits/NAME.json      each fit record, its data.path rewritten to ../data/...
 *   DIR/data/NAME.csv       each data file, byte for byte
 *   DIR/charts/...          charts and other files passed as extras
 *   DIR/MANIFEST.sha256     SHA-256 and path of every other file
 *                           (the format of `sha256sum -c`)
 * Every rewrite is recorded in the record's "archive" object (field, old
 * value, new value; the model's old path and SHA-256), so nothing about
 * the original run is lost.  Each copied input is checked against the
 * SHA-256 its record gives before it is copied: an input that changed
 * since the record was made is refused (SP_EDATA), since the archive would
 * not replay.
 *
 * Nothing is half-written: when DIR does not exist (or is an empty folder)
 * the archive is built in a temporary folder beside it and renamed into
 * place.  An existing non-empty DIR is refused unless overwrite is given;
 * then it must hold an earlier archive and nothing else (MANIFEST.sha256,
 * the files it lists, the folders fits/, data/, charts/), else it is
 * refused all the same, naming the first file that does not belong; the
 * new archive is built beside it, the old one moved aside, the new one
 * moved in and the old one removed, so no file of the old archive is left
 * among the new. */
#ifndef SP_ARCHIVE_H
#define SP_ARCHIVE_H

#include <stddef.h>

#include "scatterprop/core.h"

#ifdef __cplusplus
extern "C" {
#endif

/* A file to copy into the archive: DIR/folder/<its file name>. */
typedef struct {
  const char *path;
  const char *folder;   /* "charts"; a plain name, no '/' */
} sp_archive_extra;

/* Archives a fit: record_text (a fit record, as sp_record_fit_dumps made
 * it, naming its data file by a path valid from the current directory or
 * from the working directory it records) goes to DIR/fits/record_name,
 * its data file to DIR/data/.  Errors: SP_EUSAGE (a bad name or folder),
 * SP_EDATA (not a fit record, or its data file changed since the record
 * was made), SP_EIO (a file cannot be read or written, DIR exists and
 * overwrite is 0), SP_ENOMEM. */
sp_status sp_archive_fit(const char *dir, const char *record_text, const char *record_name,
                         const sp_archive_extra *extra, size_t nextra, int overwrite,
                         sp_error *err);

/* Archives a run: record_text (a run record, as sp_run_record_json made
 * it) goes to DIR/run.json, its model to DIR/model.spm, each fit record
 * it names (by inputs[].fit_record.resolved, relative to the working
 * directory the record names, else to the current one) to DIR/fits/ and
 * each of their data files to DIR/data/.  The model is the text inside
 * the record (checked against model.sha256), not the file.
 * Errors as sp_archive_fit, and SP_EMODEL when the rewritten model does
 * not compile to the same inputs (a fit("...") that could not be
 * rewritten). */
sp_status sp_archive_run(const char *dir, const char *record_text,
                         const sp_archive_extra *extra, size_t nextra, int overwrite,
                         sp_error *err);

/* Checks, without writing anything, that DIR can take an archive: it does
 * not exist (and its parent folder does), or is an empty folder, or
 * overwrite is given and it holds an earlier archive only.  The same
 * refusals as
 * sp_archive_fit and sp_archive_run make (SP_EIO, with a hint), so that a
 * caller can make them before a long run instead of after it. */
sp_status sp_archive_check(const char *dir, int overwrite, sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_ARCHIVE_H */
