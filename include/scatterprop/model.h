/* scatterprop model: the .spm model language, compiled to a register
 * bytecode that evaluates whole blocks of samples.
 *
 * A model file names its inputs (each with a unit and a distribution),
 * constants, intermediate values, outputs (each with a unit), limits on
 * outputs and rank correlations between inputs; docs/model-language.md is
 * the full description.  sp_model_compile checks the whole file once:
 * names, distribution parameters and units (every expression node gets a
 * unit; conversions become constant factors in the code).  Every error in
 * the file is collected in an sp_model_diags list with its line, column and
 * source line.  The compiled model is immutable except for
 * sp_model_set_input_dist, which resolves fit("record.json") inputs; after
 * that any number of threads may call sp_model_eval at once, each with its
 * own workspace. */
#ifndef SP_MODEL_H
#define SP_MODEL_H

#include <stddef.h>

#include "scatterprop/core.h"
#include "scatterprop/dist.h"
#include "scatterprop/units.h"

#ifdef __cplusplus
extern "C" {
#endif

/* ---- limits ------------------------------------------------------------ */

/* Bytes in a model text; more is SP_ELIMIT before anything is parsed. */
#define SP_MODEL_MAX_BYTES ((size_t)8 << 20)
/* Lines in a model text (a last line without a newline counts); more is
 * SP_ELIMIT, positioned at the first line past the limit. */
#define SP_MODEL_MAX_LINES 100000
/* Nesting depth of one expression: parentheses, function calls, unary
 * signs and the right operands of '^' each add a level.  Deeper is the
 * error "expression nested too deeply" (the parser never recurses further,
 * so no input can exhaust the stack). */
#define SP_MODEL_MAX_DEPTH 128
/* Bytes in a name (letters, digits and '_', not starting with a digit). */
#define SP_MODEL_MAX_NAME 64
/* Diagnostics stored in an sp_model_diags list; further errors are still
 * counted in its total. */
#define SP_MODEL_MAX_DIAGS 100
/* Bytes of the source line kept in a diagnostic; a longer line is cut to a
 * window around the column, with "..." where it was cut. */
#define SP_MODEL_DIAG_SOURCE_MAX 160

/* ---- diagnostics --------------------------------------------------------- */

/* One error found in a model text.  line and col are 1-based; col counts
 * characters (UTF-8 code points; a tab is one character) from the start of
 * the line.  All strings are owned by the list that holds the diagnostic. */
typedef struct {
  char *file;      /* path_for_messages */
  long line;
  long col;
  char *message;   /* "unknown name 'Dn'" (no position prefix) */
  char *source;    /* the source line, or a window of a long one */
  long source_col; /* 1-based column of the caret within source */
} sp_model_diag;

/* A list of diagnostics, in the order of the file (line, then column). */
typedef struct {
  sp_model_diag *items;
  size_t count; /* stored (at most SP_MODEL_MAX_DIAGS) */
  size_t total; /* found, including those not stored */
  size_t cap;
} sp_model_diags;

/* Makes d an empty list (no allocation). */
void sp_model_diags_init(sp_model_diags *d);
/* Frees everything d holds and leaves it empty; d may be NULL. */
void sp_model_diags_clear(sp_model_diags *d);
/* Writes one diagnostic as three lines:
 *   spring.spm:7:31: unknown name 'Dn'
 *   <the source line>
 *   <blanks, copying the source's tabs>^
 * each ending in '\n'.  Returns the length it would have written (as
 * snprintf). */
int sp_model_diag_format(const sp_model_diag *d, char *buf, size_t n);

/* ---- compiling ----------------------------------------------------------- */

typedef struct sp_model sp_model;

/* Compiles the model text[0..len) (it need not be NUL-terminated).
 * path_for_messages names the text in diagnostics, and its folder (the
 * part before the last '/', or the current folder) is the one that
 * relative fit() paths are resolved against.  On success *out is owned
 * (free with sp_model_free).  Errors:
 *  - SP_EMODEL: the text has errors; each is appended to diags (which may
 *    be NULL), and err holds the first, positioned ("spring.spm", 7, 31,
 *    "unknown name 'Dn'"), with a hint giving the total when there are
 *    more;
 *  - SP_ELIMIT: more than SP_MODEL_MAX_BYTES or SP_MODEL_MAX_LINES (in err
 *    only; nothing is parsed);
 *  - SP_ENOMEM; SP_EIO when the unit database cannot be loaded.
 * *out is NULL on every failure. */
sp_status sp_model_compile(const char *path_for_messages, const char *text,
                           size_t len, sp_model **out, sp_model_diags *diags,
                           sp_error *err);
/* Reads the file at path and compiles it (path is also path_for_messages).
 * SP_EIO when it cannot be read, SP_ELIMIT when it is larger than
 * SP_MODEL_MAX_BYTES; otherwise as sp_model_compile. */
sp_status sp_model_load(const char *path, sp_model **out,
                        sp_model_diags *diags, sp_error *err);
/* Frees m; m may be NULL. */
void sp_model_free(sp_model *m);

/* path_for_messages as given to the compiler (borrowed). */
const char *sp_model_path(const sp_model *m);
/* SHA-256 of the model text, 64 lower-case hex digits (borrowed). */
const char *sp_model_sha256(const sp_model *m);

/* ---- description --------------------------------------------------------- */

/* An input, in declaration order.  All pointers are borrowed from the
 * model.  Samples of the input are draws from family with parameters
 * theta, converted as value * scale + offset into the declared unit.  A
 * family input has scale 1 and offset 0 (its parameters are already in
 * the declared unit); a fit() input has family NULL until
 * sp_model_set_input_dist resolves it. */
typedef struct {
  const char *name;
  const char *unit_text;        /* as written between the brackets; "1" when none */
  const sp_unit *unit;
  const sp_family *family;      /* NULL while a fit() input is unresolved */
  double theta[SP_FAMILY_MAX_PARAMS];
  double scale;
  double offset;
  const char *fit_path;         /* as written in fit("..."); NULL for a family */
  const char *fit_path_resolved; /* fit_path joined to the model's folder */
  long line;                    /* where the input is declared */
} sp_model_input;

/* An output, in declaration order; output j of sp_model_eval. */
typedef struct {
  const char *name;
  const char *unit_text; /* as declared; the inferred unit's text when none */
  const sp_unit *unit;
  long line;
} sp_model_output;

/* limit OUTPUT < x: the requirement is output < x, so a sample violates
 * it when it is not below x; '>' the other way round. */
typedef enum { SP_MODEL_LIMIT_BELOW, SP_MODEL_LIMIT_ABOVE } sp_model_limit_dir;

typedef struct {
  size_t output;          /* index of the output */
  sp_model_limit_dir dir; /* '<' is SP_MODEL_LIMIT_BELOW */
  double value;           /* in the output's declared unit */
  long line;
} sp_model_limit;

/* correlate A B rho: Spearman rank correlation between inputs i and j
 * (i != j, |rho| < 1), in the order written. */
typedef struct {
  size_t i;
  size_t j;
  double rho;
  long line;
} sp_model_correlation;

/* A named constant (const statements only), value in its unit. */
typedef struct {
  const char *name;
  double value;
  const char *unit_text;
  const sp_unit *unit;
  long line;
} sp_model_const;

size_t sp_model_input_count(const sp_model *m);
/* The i-th input (borrowed), or NULL when i is out of range. */
const sp_model_input *sp_model_input_at(const sp_model *m, size_t i);
/* Index of the input named name, or -1. */
long sp_model_input_find(const sp_model *m, const char *name);

size_t sp_model_output_count(const sp_model *m);
const sp_model_output *sp_model_output_at(const sp_model *m, size_t j);
/* Index of the output named name, or -1. */
long sp_model_output_find(const sp_model *m, const char *name);

size_t sp_model_limit_count(const sp_model *m);
const sp_model_limit *sp_model_limit_at(const sp_model *m, size_t k);

size_t sp_model_correlation_count(const sp_model *m);
const sp_model_correlation *sp_model_correlation_at(const sp_model *m,
                                                    size_t k);

size_t sp_model_const_count(const sp_model *m);
const sp_model_const *sp_model_const_at(const sp_model *m, size_t k);

/* Sets the distribution of input `input`: draws from fam with parameters
 * theta[0..fam->nparam) become value * scale + offset in the input's
 * declared unit (the caller works out scale and offset from the unit its
 * record was fitted in, e.g. with sp_unit_conversion).  Used to resolve
 * fit() inputs; a family input may be overridden the same way.  Errors
 * (m unchanged): SP_EUSAGE for an index out of range, a NULL family, a
 * family without SP_FAMILY_PROPAGATE, a scale that is zero or not finite
 * or an offset that is not finite; fam->check()'s status and message for
 * parameters outside the family's domain.  Not thread-safe with respect
 * to sp_model_eval or the accessors on the same model. */
sp_status sp_model_set_input_dist(sp_model *m, size_t input,
                                  const sp_family *fam, const double *theta,
                                  double scale, double offset, sp_error *err);
/* SP_OK when every input has a distribution; SP_EMODEL naming the first
 * unresolved fit() input (positioned at its line) otherwise. */
sp_status sp_model_check_inputs(const sp_model *m, sp_error *err);

/* ---- code ---------------------------------------------------------------- */

/* Instructions and registers of the compiled code (registers: one per
 * input, one per output, then the workspace's temporaries). */
size_t sp_model_code_size(const sp_model *m);
size_t sp_model_register_count(const sp_model *m);
size_t sp_model_temp_count(const sp_model *m);

/* Returns owned (free with free()): a readable listing of the bytecode,
 * one instruction a line, with the registers' names and the source line
 * each instruction comes from.  NULL with SP_ENOMEM. */
char *sp_model_disassemble(const sp_model *m, sp_error *err);

/* ---- evaluation ---------------------------------------------------------- */

typedef struct sp_model_ws sp_model_ws;

/* Returns owned (free with sp_model_ws_free): a workspace for evaluating m
 * on blocks of at most `block` samples (block >= 1): the model's
 * temporaries, sp_model_temp_count(m) * block doubles.  SP_EUSAGE for
 * block 0, SP_ENOMEM when it cannot be allocated. */
sp_model_ws *sp_model_ws_alloc(const sp_model *m, size_t block, sp_error *err);
/* Frees w; w may be NULL. */
void sp_model_ws_free(sp_model_ws *w);
/* The block size w was allocated for. */
size_t sp_model_ws_block(const sp_model_ws *w);

/* Evaluates the outputs for n samples: in[i][0..n) holds the samples of
 * input i in its declared unit, out[j][0..n) receives output j in its
 * declared unit.  n should not exceed the workspace's block; a larger n
 * is evaluated in chunks of block.  w must have been allocated for m.
 * The out arrays must not overlap each other or any in array.  Never
 * fails; NaN and infinities propagate (min and max included: a NaN
 * operand gives NaN). */
void sp_model_eval(const sp_model *m, sp_model_ws *w, const double *const *in,
                   size_t n, double *const *out);

#ifdef __cplusplus
}
#endif
#endif /* SP_MODEL_H */
