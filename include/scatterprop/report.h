/* scatterprop report: one self-contained HTML file for an analysis.
 *
 * The report is plain data the caller builds (usually from fit and run
 * records): a title, the provenance (inputs with their SHA-256, settings
 * such as seeds and options), and sections made of blocks: paragraphs,
 * preformatted text (a model), tables of strings, key/value lists, and
 * figures (SVG files written by the plot module).  The writer adds what
 * every report carries: the caution of sp_caution_text() at the top, the
 * tool's version and build facts, a table of contents.
 *
 * The file has no external assets: CSS is inline, each figure's SVG is
 * read and embedded inline (its ids prefixed so several charts can share
 * the page), and a Content-Security-Policy forbids scripts and any
 * fetching.  It prints on A4 and on Letter (@page margins that fit both,
 * figures and table rows kept whole, table heads repeated).
 *
 * Every string from the caller is text, never markup: it is HTML-escaped
 * (& < > " ' become entities; control characters, invalid UTF-8 and
 * bidirectional overrides are replaced by U+FFFD).  An SVG is embedded
 * only if it holds no active content (scripts, event attributes, foreign
 * objects, external links, style sheets); otherwise writing fails.
 *
 * All functions borrow their arguments; none retains anything.  Output is
 * a pure function of the spec (the library reads no clock): give the date
 * in created. */
#ifndef SP_REPORT_H
#define SP_REPORT_H

#include <stddef.h>
#include <stdint.h>

#include "scatterprop/core.h"

#ifdef __cplusplus
extern "C" {
#endif

/* A table of strings: nrows x ncols cells, row-major. */
typedef struct {
  const char *caption;         /* shown as "Table N. caption"; may be NULL */
  size_t ncols, nrows;
  const char *const *head;     /* ncols headings, or NULL for none */
  const char *const *cells;    /* nrows * ncols; a NULL cell is empty */
  const char *align;           /* NULL, or ncols letters: 'l' left, 'r' right
                                * (numbers: right, with tabular digits) */
} sp_report_table;

/* A figure: an SVG file to embed, or, when svg_path is NULL, a note in its
 * place (e.g. the plot module's hint when gnuplot was not found). */
typedef struct {
  const char *svg_path;
  const char *caption;         /* "Figure N. caption" */
  const char *missing_note;
} sp_report_figure;

/* A key and its value ("seed", "20261201"). */
typedef struct {
  const char *key;
  const char *value;
} sp_report_fact;

typedef enum {
  SP_REPORT_PARAGRAPH, /* text */
  SP_REPORT_NOTE,      /* text, set off as a remark */
  SP_REPORT_PRE,       /* text, preformatted (model text, a command) */
  SP_REPORT_TABLE,     /* table */
  SP_REPORT_FIGURE,    /* figure */
  SP_REPORT_FACTS      /* facts[0..nfacts) as a key/value list */
} sp_report_block_kind;

typedef struct {
  sp_report_block_kind kind;
  const char *text;
  const sp_report_table *table;
  const sp_report_figure *figure;
  const sp_report_fact *facts;
  size_t nfacts;
} sp_report_block;

/* A section (level 1) or subsection (level 2) of the report. */
typedef struct {
  const char *title;
  int level;                   /* 1 or 2 */
  const sp_report_block *blocks;
  size_t nblocks;
} sp_report_section;

/* An input file of the analysis. */
typedef struct {
  const char *role;            /* "data", "model", "fit record", ... */
  const char *path;            /* as the user gave it */
  const char *sha256;          /* 64 lower-case hex digits */
  uint64_t size;               /* bytes */
} sp_report_input;

typedef struct {
  const char *title;           /* document title */
  const char *created;         /* date and time text, or NULL */
  const char *command;         /* the command line that made it, or NULL */
  const sp_report_input *inputs;
  size_t ninputs;
  const sp_report_fact *settings; /* seeds, sample counts, options */
  size_t nsettings;
  const sp_report_section *sections;
  size_t nsections;
} sp_report;

/* Returns owned (free with free()): the report as an HTML document
 * (UTF-8), or NULL with err set: SP_EUSAGE for a spec outside its domain
 * (a table without cells, a section level other than 1 or 2, a SHA-256
 * that is not 64 hex digits), SP_EIO when an SVG cannot be read, SP_EDATA
 * when an SVG is not one or carries active content (the message names the
 * file and what was found), SP_ELIMIT for an SVG over
 * SP_REPORT_SVG_MAX bytes, SP_ENOMEM.  *len (may be NULL) receives the
 * length in bytes. */
char *sp_report_html(const sp_report *r, size_t *len, sp_error *err);

/* Writes the report to path through sp_outfile (atomic; an existing file is
 * refused unless overwrite).  Errors as sp_report_html, and SP_EIO. */
sp_status sp_report_write_html(const sp_report *r, const char *path, int overwrite,
                               sp_error *err);

/* Largest SVG embedded: a chart of SP_PLOT_SCATTER_MAX points is about
 * 2 MB; 16 MiB leaves room and still refuses a runaway file. */
#define SP_REPORT_SVG_MAX ((size_t)16 * 1024 * 1024)

#ifdef __cplusplus
}
#endif
#endif /* SP_REPORT_H */
