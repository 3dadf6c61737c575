/* Private to the model module: the compiler's data structures, shared by
 * the lexer (model_lex.c), the parser (model_parse.c), the type checker
 * (model_type.c), the code generator (model_compile.c), the interpreter
 * (model_eval.c), the disassembler (model_disasm.c) and the accessors
 * (model_api.c).  Never installed. */
#ifndef SP_MODEL_INTERNAL_H
#define SP_MODEL_INTERNAL_H

#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>

#include "scatterprop/model.h"

/* ---- bytecode -------------------------------------------------------------- */

typedef enum {
#define SP_MODEL_OP(NAME, SHAPE, NCONST, MNEMONIC, EXPR) SP_MODEL_OP_##NAME,
#include "model_ops.def"
  SP_MODEL_OP_COUNT
} sp_model_opcode;

/* Which registers an instruction reads (see model_ops.def). */
enum { SP_MODEL_SHAPE_RR, SP_MODEL_SHAPE_R1, SP_MODEL_SHAPE_C0, SP_MODEL_SHAPE_IP };

typedef struct {
  const char *mnemonic;
  int shape;
  int nconst;
} sp_model_opinfo;

/* Indexed by opcode (model_eval.c). */
extern const sp_model_opinfo sp_model_ops[SP_MODEL_OP_COUNT];

/* One element of an operation on scalars: the same expression the
 * interpreter's kernel applies to each element (model_eval.c).  Operands
 * an operation does not read are ignored. */
double sp_model_op_fold(int op, double x, double y, double c, double c2);

/* One instruction: r[d][i] = op(r[a][i], r[b][i], c, c2) for each sample
 * i.  Registers are numbered inputs first, then outputs, then
 * temporaries. */
typedef struct {
  uint16_t op;
  uint32_t line; /* 1-based source line, for the disassembly */
  uint32_t d, a, b;
  double c, c2;
} sp_model_ins;

/* ---- the compiled model ---------------------------------------------------- */

typedef struct {
  sp_model_input pub;
  char *name, *unit_text, *fit_path, *fit_resolved;
  sp_unit *unit;
} sp_model_input_rec;

typedef struct {
  sp_model_output pub;
  char *name, *unit_text;
  sp_unit *unit;
} sp_model_output_rec;

typedef struct {
  sp_model_const pub;
  char *name, *unit_text;
  sp_unit *unit;
} sp_model_const_rec;

struct sp_model {
  char *path;
  char sha256[SP_SHA256_HEX_LEN];
  sp_model_input_rec *inputs;
  size_t ninputs, cap_inputs;
  sp_model_output_rec *outputs;
  size_t noutputs, cap_outputs;
  sp_model_const_rec *consts;
  size_t nconsts, cap_consts;
  sp_model_limit *limits;
  size_t nlimits, cap_limits;
  sp_model_correlation *corrs;
  size_t ncorrs, cap_corrs;
  sp_model_ins *code;
  size_t ncode;
  size_t nregs, ntemps;
};

/* ---- the compiler's working state ------------------------------------------ */

/* Tokens of one line.  off and len are byte offsets into the line; a
 * string token spans its quotes, a unit token its brackets. */
typedef enum {
  SP_MODEL_TK_EOL,
  SP_MODEL_TK_NAME,
  SP_MODEL_TK_NUMBER,
  SP_MODEL_TK_STRING,
  SP_MODEL_TK_UNIT,
  SP_MODEL_TK_LPAREN,
  SP_MODEL_TK_RPAREN,
  SP_MODEL_TK_COMMA,
  SP_MODEL_TK_EQ,
  SP_MODEL_TK_TILDE,
  SP_MODEL_TK_PLUS,
  SP_MODEL_TK_MINUS,
  SP_MODEL_TK_STAR,
  SP_MODEL_TK_SLASH,
  SP_MODEL_TK_CARET,
  SP_MODEL_TK_LT,
  SP_MODEL_TK_GT
} sp_model_tkind;

typedef struct {
  int kind;
  size_t off, len;
  double num; /* a number token's value */
} sp_model_token;

/* Expression nodes.  Sums and products are n-ary (a - b + c is one SUM with
 * three operands), so a long flat formula makes a wide tree, not a deep
 * one; every level of real nesting is bounded by SP_MODEL_MAX_DEPTH. */
typedef enum {
  SP_MODEL_N_NUM,  /* number, maybe with a unit literal: 2.5 [mm] */
  SP_MODEL_N_REF,  /* a name */
  SP_MODEL_N_NEG,  /* -kid[0] */
  SP_MODEL_N_SUM,  /* kid[0] op[1] kid[1] ...; op '+' or '-' */
  SP_MODEL_N_PROD, /* kid[0] op[1] kid[1] ...; op '*' or '/' */
  SP_MODEL_N_POW,  /* kid[0] ^ kid[1] */
  SP_MODEL_N_CALL  /* func(kid...) */
} sp_model_nkind;

/* How a built-in function treats units. */
enum {
  FUNC_SQRT,    /* root 2 of the unit */
  FUNC_DIMLESS, /* dimensionless argument, dimensionless result */
  FUNC_POW,     /* as '^' */
  FUNC_SAME,    /* result in the argument's unit */
  FUNC_MINMAX,  /* convertible arguments, result in the first's unit */
  FUNC_TRIG,    /* angle (converted to radians) or dimensionless, result 1 */
  FUNC_INVTRIG, /* dimensionless argument, result in radians */
  FUNC_ATAN2,   /* convertible arguments, result in radians */
  FUNC_HYPOT    /* convertible arguments, result in the first's unit */
};

typedef struct {
  const char *name;
  size_t arity;
  int rule;
  int op;
} sp_model_func;

/* The built-in functions (model_type.c), and the index of one by name or
 * -1. */
extern const sp_model_func sp_model_funcs[];
extern const size_t sp_model_nfuncs;
int sp_model_func_find(const char *name, size_t len);

struct sp_model_sym;

typedef struct sp_model_node {
  int kind;
  size_t line; /* 0-based line index */
  size_t off;  /* where the node starts (a call: its name) */
  size_t len;  /* a name's length; a number's text length */
  double num;
  int has_unit;
  size_t unit_off, unit_len; /* a unit literal's text, inside its brackets */
  int func;                  /* CALL: index into sp_model_funcs */
  size_t nkids;
  struct sp_model_node **kids;
  char *ops;      /* SUM and PROD: the operator before each operand */
  size_t *op_off; /* and where it is (op 0 is implicit: the node's start) */

  /* Filled by the type checker. */
  const sp_unit *unit;
  int bad;       /* an error was reported in this subtree */
  int is_const;  /* folded: val holds the value */
  double val;
  double *conv;  /* per operand: factor into the unit the operation needs */
  int builtin;   /* REF: 1 for pi, 2 for e */
  struct sp_model_sym *sym; /* REF: the symbol */
  /* POW with a constant exponent on a runtime base: the exponent. */
  double pow_exp;
} sp_model_node;

typedef enum {
  SP_MODEL_SYM_INPUT,
  SP_MODEL_SYM_CONST,
  SP_MODEL_SYM_LET,
  SP_MODEL_SYM_OUTPUT
} sp_model_symkind;

typedef struct sp_model_sym {
  int kind;
  const char *name; /* into the model text; not NUL-terminated */
  size_t len;
  size_t stmt;      /* the defining statement */
  size_t line;
  int bad;          /* its definition had an error: uses stay silent */
  int typed;        /* its statement has been type-checked */
  const sp_unit *unit;
  int is_const;
  double val;
  size_t index;     /* input, output or const index */
  int has_vreg;     /* code generation: the value lives in vreg */
  uint32_t vreg;
  struct sp_model_sym *next; /* hash chain */
} sp_model_sym;

typedef enum {
  SP_MODEL_ST_INPUT,
  SP_MODEL_ST_CONST,
  SP_MODEL_ST_LET,
  SP_MODEL_ST_OUTPUT,
  SP_MODEL_ST_LIMIT,
  SP_MODEL_ST_CORRELATE
} sp_model_stkind;

typedef struct {
  int named;
  size_t name_off, name_len;
  size_t off; /* where the argument starts (its name if named) */
  sp_model_node *expr;
} sp_model_arg;

typedef struct {
  int kind;
  size_t line;
  size_t name_off, name_len;   /* declared name; LIMIT: the output; CORRELATE: A */
  size_t name2_off, name2_len; /* CORRELATE: B */
  sp_model_sym *sym;           /* declared symbol (NULL when a duplicate) */
  int has_unit;
  size_t unit_off, unit_len;   /* inside the brackets */
  sp_model_node *expr;         /* CONST/LET/OUTPUT value, LIMIT value, CORRELATE rho */
  int dir;                     /* LIMIT: '<' or '>' */
  int is_fit;                  /* INPUT */
  size_t fam_off, fam_len;     /* INPUT: family name, or fit */
  size_t path_off, path_len;   /* INPUT fit: inside the quotes */
  size_t nargs;
  sp_model_arg *args;
  size_t close_off;            /* INPUT: the ')' of the distribution */
  /* Filled by the type checker for code generation. */
  int ok;                      /* no error in this statement */
  double out_scale, out_offset; /* OUTPUT: inferred unit -> declared unit */
  size_t out_index;
} sp_model_stmt;

/* A diagnostic before it is sorted and copied out. */
typedef struct {
  size_t line, off, seq;
  char *msg;
} sp_model_pdiag;

typedef struct sp_model_arena_block {
  struct sp_model_arena_block *next;
  size_t used, cap;
  max_align_t data[];
} sp_model_arena_block;

typedef struct {
  const char *file;
  const char *text;
  size_t len;
  size_t nlines;
  size_t *lstart, *llen; /* a line's start and length (no '\n', no final '\r') */

  sp_model_pdiag *pd;
  size_t npd, cap_pd;
  int oom;               /* out of memory: stop and report SP_ENOMEM */
  sp_status fatal;       /* another failure that is not a model error */
  sp_error fatal_err;

  sp_model_arena_block *arena;

  sp_model_sym **hash;
  size_t hash_size;
  sp_model_sym **syms;
  size_t nsyms, cap_syms;

  sp_model_stmt *stmts;
  size_t nstmts, cap_stmts;
  size_t cur_stmt;       /* the statement being type-checked */

  sp_unit **units;       /* every unit made while checking; freed at the end */
  size_t nunits, cap_units;
  const sp_unit *one, *rad;

  sp_model_token *toks;  /* the current line's tokens */
  size_t ntoks, cap_toks;

  sp_model *m;           /* the model being built */
} sp_model_ctx;

/* ---- shared helpers ------------------------------------------------------------ */

/* Records an error at byte offset off of line (0-based). */
void sp_model_error(sp_model_ctx *c, size_t line, size_t off, const char *fmt,
                    ...) __attribute__((format(printf, 4, 5)));
/* Zeroed memory that lives until the compile ends; NULL (and c->oom)
 * when out of memory. */
void *sp_model_alloc(sp_model_ctx *c, size_t size);
/* Grows *arr (of *cap elements of size elem) to hold at least need; 0 on
 * success, -1 (and c->oom when c is non-NULL) when out of memory. */
int sp_model_grow(sp_model_ctx *c, void **arr, size_t *cap, size_t need,
                  size_t elem);
/* A line's text. */
static inline const char *sp_model_line(const sp_model_ctx *c, size_t line)
{
  return c->text + c->lstart[line];
}

/* Lexes line into c->toks (ending with an EOL token); 0, or -1 after
 * reporting an error (or running out of memory). */
int sp_model_lex_line(sp_model_ctx *c, size_t line);
/* A short description of a token for messages: "name 'x'", "')'",
 * "end of line" (written to buf). */
const char *sp_model_token_desc(const sp_model_ctx *c, size_t line,
                                const sp_model_token *t, char *buf, size_t n);

/* Parses every line into c->stmts and declares the names (model_parse.c). */
void sp_model_parse(sp_model_ctx *c);
/* The symbol named name, or NULL. */
sp_model_sym *sp_model_sym_find(const sp_model_ctx *c, const char *name,
                                size_t len);

/* Type-checks every statement, folds constants and fills c->m's inputs,
 * outputs, constants, limits and correlations (model_type.c). */
void sp_model_typecheck(sp_model_ctx *c);
/* Keeps u (owned) until the compile ends; returns it, or NULL (c->oom). */
const sp_unit *sp_model_keep_unit(sp_model_ctx *c, sp_unit *u);

/* Generates c->m's code from the checked statements (model_compile.c). */
void sp_model_codegen(sp_model_ctx *c);

/* Frees a model's records and code (model_api.c). */
void sp_model_destroy(sp_model *m);

#endif /* SP_MODEL_INTERNAL_H */
