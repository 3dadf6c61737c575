/* scatterprop ingest: inspection CSV files into typed columns.
 *
 * RFC 4180 CSV (Shafranovich 2005) read through libcsv: quoted fields,
 * embedded separators and newlines, CRLF, LF or bare CR line ends (the kind
 * of the file's first line end holds for the whole file), an optional UTF-8
 * byte-order mark.  Text is UTF-8: a header cell, a '#' line or a kept cell
 * that is not well-formed UTF-8 is an error at its position (a UTF-16 file
 * is refused at its byte-order mark).  Before the header, lines starting with '#' are metadata
 * ("# gauge: MC-07" becomes key "gauge", value "MC-07"; a line without a
 * colon is kept with an empty key) and blank lines are skipped.  Header
 * cells may carry a unit in brackets ("wire_d [mm]").
 *
 * Column kinds: a column whose header has a unit is numeric; a column
 * without a unit is numeric when its first non-missing cell is a number and
 * text otherwise, unless the caller names it in text_columns (lot ids
 * written as numbers, 117 or 24117, for grouping).  A numeric column whose
 * later cell is not a number is an error at that cell (or, with
 * skip_bad_rows, the row is skipped and listed).  Empty cells and the text
 * NA are missing: counted, flagged, never turned into a number.
 *
 * The file is read in one streaming pass; numeric columns cost 8 bytes per
 * row plus one flag byte. */
#ifndef SP_INGEST_H
#define SP_INGEST_H

#include "scatterprop/core.h"
#include "scatterprop/units.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum { SP_COLUMN_NUMERIC, SP_COLUMN_TEXT } sp_column_kind;

/* Per-observation flags.  Censoring flags are reserved for the likelihoods
 * of a later release (run-outs, readings below a gauge's range); this
 * release only ever sets SP_OBS_MISSING. */
enum {
  SP_OBS_OK = 0,
  SP_OBS_MISSING = 1,
  SP_OBS_CENSORED_LEFT = 2,  /* true value <= recorded value */
  SP_OBS_CENSORED_RIGHT = 4  /* true value >= recorded value */
};

typedef struct {
  char *name;        /* header text without the unit, trimmed */
  char *header;      /* the whole header cell as written */
  char *unit_text;   /* text between the brackets, or NULL if none */
  sp_unit *unit;     /* parsed unit, or NULL if none */
  sp_column_kind kind;
  size_t index;      /* 0-based position in the file */
  size_t n;          /* rows (equal to the table's nrows) */
  size_t nmissing;
  double *values;    /* numeric: n values (NAN where missing) */
  unsigned char *flags; /* numeric: n SP_OBS_* flags */
  char **text;       /* text: n strings ("" where missing) */
} sp_column;

typedef struct {
  char *key;   /* "" for a comment without a colon */
  char *value;
  long line;
} sp_meta;

typedef struct {
  long line;         /* physical line where the row starts */
  long col;          /* 1-based field number of the first problem */
  char *reason;      /* the message, e.g. "'O.52' is not a number ..." */
} sp_skipped_row;

typedef struct {
  char *path;            /* as given */
  char sha256[SP_SHA256_HEX_LEN];
  uint64_t size;         /* bytes */
  sp_meta *meta;
  size_t nmeta;
  sp_column *cols;
  size_t ncols;
  size_t nrows;          /* data rows kept */
  sp_skipped_row *skipped;
  size_t nskipped;
  long header_line;
  /* private: storage of the distinct strings of text columns */
  char **strings_;
  size_t nstrings_;
} sp_table;

/* Limits (documented in docs/limits.md). */
#define SP_INGEST_MAX_COLUMNS 4096
#define SP_INGEST_MAX_FIELD_BYTES (1u << 20)   /* one cell */
#define SP_INGEST_MAX_RECORD_BYTES (16u << 20) /* one row */

typedef struct {
  int decimal_comma;      /* ',' is the decimal separator and ';' separates fields */
  int skip_bad_rows;      /* skip and list bad rows instead of failing */
  const char *const *columns; /* keep only these columns (by name), or NULL for all */
  size_t ncolumns;
  /* Read these columns (by name or whole header cell) as text whatever
   * their cells, when their header has no unit; a column with a unit stays
   * numeric.  Names that are not columns are ignored.  NULL for none. */
  const char *const *text_columns;
  size_t ntext_columns;
} sp_ingest_options;

/* Default options: strict, '.' decimal, ',' separator, all columns. */
void sp_ingest_options_init(sp_ingest_options *o);

/* Reads the CSV file at path.  Returns owned (*out, free with
 * sp_table_free) on success.  Errors: SP_EIO (cannot read), SP_EDATA (bad
 * content, with err->file/line/col set), SP_ELIMIT (a limit above), or
 * SP_ENOMEM.  Also computes the file's SHA-256 and size. */
sp_status sp_table_read(const char *path, const sp_ingest_options *opt,
                        sp_table **out, sp_error *err);
/* The same on a memory buffer; name is used in messages and as path. */
sp_status sp_table_read_buffer(const char *name, const char *data, size_t len,
                               const sp_ingest_options *opt, sp_table **out,
                               sp_error *err);
void sp_table_free(sp_table *t);

/* The column with this name (matching the name without unit, or the whole
 * header cell), or NULL. Borrowed. */
const sp_column *sp_table_column(const sp_table *t, const char *name);
/* The metadata value for key, or NULL. Borrowed. */
const char *sp_table_meta(const sp_table *t, const char *key);

#ifdef __cplusplus
}
#endif
#endif /* SP_INGEST_H */
