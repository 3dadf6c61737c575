/* scatterprop core: status codes, error values with a position, strict
 * number parsing, atomic file writes, SHA-256 and version facts.
 *
 * Every library function that can fail returns an sp_status (SP_OK = 0) and
 * takes an sp_error * as its last argument, which it fills on failure.  The
 * library never prints, exits or aborts on bad input. */
#ifndef SP_CORE_H
#define SP_CORE_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#ifdef __cplusplus
extern "C" {
#endif

/* Status codes.  The CLI maps each class to its own exit code (see
 * sp_status_exit_code). */
typedef enum {
  SP_OK = 0,
  SP_EDIFFERS,  /* a replay found differences (exit 1) */
  SP_EUSAGE,    /* a caller passed arguments outside the documented domain (exit 2) */
  SP_EDATA,     /* bad input data: CSV, record contents (exit 3) */
  SP_EMODEL,    /* bad model file (exit 4) */
  SP_ENUMERIC,  /* a numerical method failed (exit 5) */
  SP_EIO,       /* a file could not be read or written (exit 6) */
  SP_ENOMEM,    /* memory exhausted or a request larger than allowed (exit 5) */
  SP_ELIMIT     /* an input exceeds a documented limit (exit 3) */
} sp_status;

/* An error value.  file/line/col are 0/empty when they do not apply; line
 * and col are 1-based.  msg never contains the position prefix: use
 * sp_error_format() for the "file:line:col: msg" form. */
#define SP_ERROR_MSG_MAX 1024
#define SP_ERROR_FILE_MAX 512
typedef struct {
  sp_status code;
  char file[SP_ERROR_FILE_MAX];
  long line;
  long col;
  char msg[SP_ERROR_MSG_MAX];
  char hint[SP_ERROR_MSG_MAX]; /* optional "what to do about it"; empty if none */
} sp_error;

/* Clears err (code SP_OK, empty strings).  err may be NULL. */
void sp_error_clear(sp_error *err);

/* Records a failure and returns code.  Every failure in the library goes
 * through sp_fail or sp_fail_at, so one breakpoint traps them all.  err may
 * be NULL (the status is still returned). */
sp_status sp_fail(sp_error *err, sp_status code, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
sp_status sp_fail_at(sp_error *err, sp_status code, const char *file,
                     long line, long col, const char *fmt, ...)
    __attribute__((format(printf, 6, 7)));
/* Sets the hint of an already failed err (printf-style); returns err->code. */
sp_status sp_error_hint(sp_error *err, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Writes "file:line:col: msg" (omitting the parts that do not apply) into
 * buf of size n; returns the length it would have written (as snprintf). */
int sp_error_format(const sp_error *err, char *buf, size_t n);

/* Process exit code for a status: 0 ok, 1 differs, 2 usage, 3 data (and
 * limits), 4 model, 5 numeric (and memory), 6 I/O. */
int sp_status_exit_code(sp_status s);
/* A short lower-case name for a status ("bad data"). */
const char *sp_status_name(sp_status s);

/* Strict, locale-independent parse of a whole string as a finite double.
 * Accepts an optional sign, digits with at most one decimal separator
 * (decimal_sep, '.' or ','), an optional exponent; leading and trailing
 * blanks (space, tab) are ignored.  Rejects hex floats, "nan", "inf",
 * thousands separators, and values that overflow (1e400) with a message in
 * err that quotes the text.  Underflow to a subnormal or zero is accepted. */
sp_status sp_parse_double(const char *text, char decimal_sep, double *out,
                          sp_error *err);
/* Strict parse of a whole string as an unsigned 64-bit integer (decimal). */
sp_status sp_parse_u64(const char *text, uint64_t *out, sp_error *err);
/* A count as people type it on a command line: a decimal integer (as
 * sp_parse_u64) or exponent notation that names a whole number exactly
 * ("1e6", "2.5E6", "1e+6"); "1.5e0", "1e-3", signs, blanks and values above
 * UINT64_MAX are refused with a message that quotes the text. */
sp_status sp_parse_count(const char *text, uint64_t *out, sp_error *err);

/* Atomic output file: written under a temporary name in the same folder,
 * flushed, fsync'ed and renamed into place on commit (and the folder
 * fsync'ed, so that the new name survives a crash too); removed on abort.
 * A file that already exists is refused unless overwrite is non-zero: at
 * open, and again at commit, where without overwrite the file is put in
 * place by link(2), which never replaces a file that appeared meanwhile. */
typedef struct sp_outfile sp_outfile;
/* Returns owned: an open output file (free with sp_outfile_commit or
 * sp_outfile_abort), or NULL with err set (SP_EIO). */
sp_outfile *sp_outfile_open(const char *path, int overwrite, sp_error *err);
/* The stream to write to (borrowed from f). */
FILE *sp_outfile_stream(sp_outfile *f);
/* Flushes, syncs, renames into place and frees f.  On failure the temporary
 * file is removed, the target is untouched, and err says why. */
sp_status sp_outfile_commit(sp_outfile *f, sp_error *err);
/* Removes the temporary file and frees f.  f may be NULL. */
void sp_outfile_abort(sp_outfile *f);
/* Convenience: writes n bytes atomically. */
sp_status sp_file_write_atomic(const char *path, const void *data, size_t n,
                               int overwrite, sp_error *err);

/* Opens the input file at path for reading: a regular file of at most
 * max_bytes bytes (0: any size).  The file is opened without blocking and
 * checked before a byte is read, so a FIFO without a writer cannot hang
 * the program and /dev/zero cannot fill its memory.  what names the kind
 * of file in messages ("CSV file", "model file", "record").  Returns an
 * owned FILE (fclose it), or NULL with err set: SP_EIO for "PATH: cannot
 * open: REASON", a folder ("PATH: is a folder, not a WHAT") and anything
 * but a regular file ("PATH: is not a regular file (a pipe, a device or a
 * socket)"), SP_ELIMIT for a file larger than max_bytes ("PATH: the WHAT is
 * larger than MAX bytes (it has N)"); each with a hint. */
FILE *sp_file_open_input(const char *path, const char *what, uint64_t max_bytes,
                         sp_error *err);

/* SHA-256 (libmd) of a file, as 64 lower-case hex digits and a NUL, and
 * its size in bytes.  size may be NULL. */
#define SP_SHA256_HEX_LEN 65
sp_status sp_sha256_file(const char *path, char hex[SP_SHA256_HEX_LEN],
                         uint64_t *size, sp_error *err);
/* Incremental SHA-256 for data read in a stream (opaque state). */
typedef struct { uint64_t opaque[32]; } sp_sha256_ctx;
void sp_sha256_init(sp_sha256_ctx *c);
void sp_sha256_update(sp_sha256_ctx *c, const void *data, size_t n);
void sp_sha256_final(sp_sha256_ctx *c, char hex[SP_SHA256_HEX_LEN]);
/* SHA-256 of a memory buffer. */
void sp_sha256_buffer(const void *data, size_t n, char hex[SP_SHA256_HEX_LEN]);

/* Version and build facts (static strings). */
const char *sp_version(void);        /* "0.1.0" */
const char *sp_git_revision(void);   /* short hash at configure time, or "unknown" */
const char *sp_build_compiler(void); /* "GNU 12.2.0" */
const char *sp_build_gsl_version(void);

/* The caution every report, --help and README carries (one paragraph). */
const char *sp_caution_text(void);

#ifdef __cplusplus
}
#endif
#endif /* SP_CORE_H */
