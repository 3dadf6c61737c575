/* Tests for the model module: the .spm language, its units, the bytecode
 * and the interpreter.
 *
 * tests/expr/cases.txt holds formula cases (model text, inputs, expected
 * outputs with their source) and error cases (the exact diagnostics); the
 * loop test below runs each one.  The C tests cover what a case file
 * cannot: the spring example against a direct C computation, block sizes,
 * the accessors and input resolution, the disassembly, caret formatting,
 * limits and pathological inputs. */
#include "sp_test.h"

#include <stdint.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "scatterprop/dist.h"
#include "scatterprop/model.h"
#include "scatterprop/rng.h"

/* ---- helpers ------------------------------------------------------------------ */

static sp_model *compile_ok(const char *path, const char *text)
{
  sp_model_diags d;
  sp_model_diags_init(&d);
  sp_error err;
  sp_error_clear(&err);
  sp_model *m = NULL;
  sp_status st = sp_model_compile(path, text, strlen(text), &m, &d, &err);
  if (st != SP_OK) {
    char buf[4096] = "";
    if (d.count > 0) sp_model_diag_format(&d.items[0], buf, sizeof buf);
    ck_abort_msg("compile failed (%d): %s\n%s", (int)st, err.msg, buf);
  }
  ck_assert_uint_eq(d.count, 0);
  sp_model_diags_clear(&d);
  return m;
}

/* Compiles text that must fail; returns the status and fills d. */
static sp_status compile_bad(const char *text, size_t len, sp_model_diags *d,
                             sp_error *err)
{
  sp_model_diags_init(d);
  sp_error_clear(err);
  sp_model *m = (sp_model *)1;
  sp_status st = sp_model_compile("case.spm", text, len, &m, d, err);
  ck_assert_msg(st != SP_OK, "compiled, but an error was expected");
  ck_assert_ptr_null(m);
  return st;
}

/* Evaluates m on n samples with a workspace of the given block; in and out
 * are arrays of pointers. */
static void eval_block(const sp_model *m, size_t block, const double *const *in,
                       size_t n, double *const *out)
{
  sp_error err;
  sp_model_ws *w = sp_model_ws_alloc(m, block, &err);
  ck_assert_msg(w != NULL, "ws_alloc: %s", err.msg);
  for (size_t s = 0; s < n; s += block) {
    size_t len = n - s < block ? n - s : block;
    const double *ip[16];
    double *op[16];
    for (size_t i = 0; i < sp_model_input_count(m); i++) ip[i] = in[i] + s;
    for (size_t j = 0; j < sp_model_output_count(m); j++) op[j] = out[j] + s;
    sp_model_eval(m, w, ip, len, op);
  }
  sp_model_ws_free(w);
}

static int same_double(double a, double b)
{
  if (isnan(a) || isnan(b)) return isnan(a) && isnan(b);
  return a == b && signbit(a) == signbit(b);
}

/* ---- the case file ------------------------------------------------------------ */

#define MAX_CASES 256
#define MAX_VALUES 16
#define MAX_VARS 16

typedef struct {
  char name[128];
  char *model;
  size_t model_len;
  int is_error;
  char *errors[64];
  size_t nerrors;
  char source[512];
  char in_name[MAX_VARS][64];
  double in_val[MAX_VARS][MAX_VALUES];
  size_t in_n[MAX_VARS];
  size_t nin;
  char out_name[MAX_VARS][64];
  double out_val[MAX_VARS][MAX_VALUES];
  size_t out_n[MAX_VARS];
  double out_tol[MAX_VARS];
  size_t nout;
  long first_line; /* in cases.txt, for messages */
} expr_case;

static expr_case cases[MAX_CASES];
static size_t ncases;

/* Copies src into dst[cap], cut to fit. */
static void copy_str(char *dst, size_t cap, const char *src)
{
  size_t n = strlen(src);
  if (n >= cap) n = cap - 1;
  memcpy(dst, src, n);
  dst[n] = '\0';
}

static double parse_value(const char *tok)
{
  if (strcmp(tok, "nan") == 0) return NAN;
  if (strcmp(tok, "inf") == 0) return INFINITY;
  if (strcmp(tok, "-inf") == 0) return -INFINITY;
  if (strcmp(tok, "-0") == 0) return -0.0;
  char *end;
  double v = strtod(tok, &end);
  if (*end != '\0') {
    fprintf(stderr, "cases.txt: bad value '%s'\n", tok);
    exit(EXIT_FAILURE);
  }
  return v;
}

/* "name = v1 v2 ..." into name and values; returns the count. */
static size_t parse_values(char *s, char *name, size_t name_cap, double *vals)
{
  char *eq = strchr(s, '=');
  if (!eq) {
    fprintf(stderr, "cases.txt: missing '=' in '%s'\n", s);
    exit(EXIT_FAILURE);
  }
  *eq = '\0';
  char *nm = strtok(s, " \t");
  copy_str(name, name_cap, nm ? nm : "");
  size_t n = 0;
  for (char *t = strtok(eq + 1, " \t\n"); t; t = strtok(NULL, " \t\n")) {
    if (n == MAX_VALUES) {
      fprintf(stderr, "cases.txt: too many values\n");
      exit(EXIT_FAILURE);
    }
    vals[n++] = parse_value(t);
  }
  return n;
}

static void load_cases(const char *path)
{
  FILE *f = fopen(path, "r");
  if (!f) {
    fprintf(stderr, "cannot open %s\n", path);
    exit(EXIT_FAILURE);
  }
  char line[4096];
  expr_case *c = NULL;
  int in_errors = 0;
  double tol = 0;
  long lineno = 0;
  while (fgets(line, sizeof line, f)) {
    lineno++;
    size_t len = strlen(line);
    if (len > 0 && line[len - 1] == '\n') line[--len] = '\0';
    if (!c) {
      if (strncmp(line, "%%CASE ", 7) == 0) {
        if (ncases == MAX_CASES) {
          fprintf(stderr, "cases.txt: too many cases\n");
          exit(EXIT_FAILURE);
        }
        c = &cases[ncases++];
        memset(c, 0, sizeof *c);
        copy_str(c->name, sizeof c->name, line + 7);
        c->model = calloc(1, 1);
        c->first_line = lineno;
        in_errors = 0;
        tol = 0;
      }
      continue;
    }
    if (strcmp(line, "%%END") == 0) {
      if (!c->is_error && c->source[0] == '\0') {
        fprintf(stderr, "cases.txt: case '%s' has no %%%%SOURCE\n", c->name);
        exit(EXIT_FAILURE);
      }
      c = NULL;
      continue;
    }
    if (in_errors) {
      c->errors[c->nerrors++] = strdup(line);
      continue;
    }
    if (strcmp(line, "%%ERROR") == 0) {
      c->is_error = 1;
      in_errors = 1;
    } else if (strncmp(line, "%%SOURCE ", 9) == 0) {
      copy_str(c->source, sizeof c->source, line + 9);
    } else if (strncmp(line, "%%TOL ", 6) == 0) {
      tol = parse_value(line + 6);
    } else if (strncmp(line, "%%INPUT ", 8) == 0) {
      c->in_n[c->nin] = parse_values(line + 8, c->in_name[c->nin], 64,
                                     c->in_val[c->nin]);
      c->nin++;
    } else if (strncmp(line, "%%EXPECT ", 9) == 0) {
      c->out_n[c->nout] = parse_values(line + 9, c->out_name[c->nout], 64,
                                       c->out_val[c->nout]);
      c->out_tol[c->nout] = tol;
      c->nout++;
    } else if (strncmp(line, "%%", 2) == 0) {
      fprintf(stderr, "cases.txt:%ld: unknown directive '%s'\n", lineno, line);
      exit(EXIT_FAILURE);
    } else {
      c->model = realloc(c->model, c->model_len + len + 2);
      memcpy(c->model + c->model_len, line, len);
      c->model_len += len;
      c->model[c->model_len++] = '\n';
      c->model[c->model_len] = '\0';
    }
  }
  fclose(f);
  if (c) {
    fprintf(stderr, "cases.txt: case '%s' has no %%%%END\n", c->name);
    exit(EXIT_FAILURE);
  }
}

static void run_error_case(const expr_case *c)
{
  sp_model_diags d;
  sp_error err;
  sp_status st = compile_bad(c->model, c->model_len, &d, &err);
  ck_assert_msg(st == SP_EMODEL, "%s: status %d, want SP_EMODEL", c->name, (int)st);
  char all[8192] = "";
  for (size_t k = 0; k < d.count; k++) {
    size_t l = strlen(all);
    snprintf(all + l, sizeof all - l, "  %s:%ld:%ld: %s\n", d.items[k].file,
             d.items[k].line, d.items[k].col, d.items[k].message);
  }
  ck_assert_msg(d.count == c->nerrors && d.total == c->nerrors,
                "%s: %zu diagnostics, want %zu:\n%s", c->name, d.count,
                c->nerrors, all);
  for (size_t k = 0; k < d.count; k++) {
    char got[2048];
    snprintf(got, sizeof got, "%s:%ld:%ld: %s", d.items[k].file, d.items[k].line,
             d.items[k].col, d.items[k].message);
    const char *want = c->errors[k];
    size_t wl = strlen(want);
    int ok;
    if (wl >= 3 && strcmp(want + wl - 3, "...") == 0)
      ok = strncmp(got, want, wl - 3) == 0;
    else
      ok = strcmp(got, want) == 0;
    ck_assert_msg(ok, "%s: diagnostic %zu is\n  %s\nwant\n  %s\nall:\n%s", c->name,
                  k + 1, got, want, all);
  }
  /* err carries the first diagnostic, positioned. */
  ck_assert_int_eq(err.code, SP_EMODEL);
  ck_assert_str_eq(err.file, "case.spm");
  ck_assert_int_eq(err.line, d.items[0].line);
  ck_assert_int_eq(err.col, d.items[0].col);
  ck_assert_str_eq(err.msg, d.items[0].message);
  sp_model_diags_clear(&d);
}

static void run_value_case(const expr_case *c)
{
  sp_model *m = compile_ok("case.spm", c->model);
  size_t nin = sp_model_input_count(m), nout = sp_model_output_count(m);
  ck_assert_msg(nin <= MAX_VARS && nout <= MAX_VARS, "%s: too many variables", c->name);
  size_t n = 1;
  for (size_t k = 0; k < c->nin; k++) n = c->in_n[k] > n ? c->in_n[k] : n;
  for (size_t k = 0; k < c->nout; k++) n = c->out_n[k] > n ? c->out_n[k] : n;
  static double in[MAX_VARS][MAX_VALUES], out[MAX_VARS][MAX_VALUES];
  const double *ip[MAX_VARS];
  double *op[MAX_VARS];
  for (size_t i = 0; i < nin; i++) {
    const char *name = sp_model_input_at(m, i)->name;
    size_t k = 0;
    while (k < c->nin && strcmp(c->in_name[k], name) != 0) k++;
    ck_assert_msg(k < c->nin, "%s: no %%%%INPUT for '%s'", c->name, name);
    for (size_t s = 0; s < n; s++) in[i][s] = c->in_val[k][s < c->in_n[k] ? s : c->in_n[k] - 1];
    ip[i] = in[i];
  }
  for (size_t j = 0; j < nout; j++) op[j] = out[j];
  /* Every case runs with a block of 1 (one sample at a time) and with one
   * block for all samples; both must give the same bits. */
  static const size_t blocks[] = {1, 3, MAX_VALUES};
  double first[MAX_VARS][MAX_VALUES];
  for (size_t b = 0; b < sizeof blocks / sizeof *blocks; b++) {
    for (size_t j = 0; j < nout; j++)
      for (size_t s = 0; s < n; s++) out[j][s] = -12345.0;
    eval_block(m, blocks[b], ip, n, op);
    for (size_t k = 0; k < c->nout; k++) {
      long j = sp_model_output_find(m, c->out_name[k]);
      ck_assert_msg(j >= 0, "%s: no output '%s'", c->name, c->out_name[k]);
      for (size_t s = 0; s < c->out_n[k]; s++) {
        double got = out[j][s], want = c->out_val[k][s];
        double tol = c->out_tol[k] * DBL_EPSILON * fabs(want);
        int ok = isnan(want) ? isnan(got)
                 : isinf(want) ? got == want
                 : want == 0.0 ? got == 0.0 && signbit(got) == signbit(want)
                 : fabs(got - want) <= tol;
        ck_assert_msg(ok, "%s: %s[%zu] = %.17g, want %.17g (%g eps; block %zu; %s)",
                      c->name, c->out_name[k], s, got, want, c->out_tol[k],
                      blocks[b], c->source);
      }
    }
    for (size_t j = 0; j < nout; j++)
      for (size_t s = 0; s < n; s++) {
        if (b == 0) first[j][s] = out[j][s];
        else
          ck_assert_msg(same_double(first[j][s], out[j][s]),
                        "%s: output %zu sample %zu differs between blocks", c->name,
                        j, s);
      }
  }
  sp_model_free(m);
}

START_TEST(test_expr_cases)
{
  const expr_case *c = &cases[_i];
  if (c->is_error) run_error_case(c);
  else run_value_case(c);
}
END_TEST

START_TEST(test_cases_loaded)
{
  /* The case file holds both kinds; a parse slip that drops cases shows
   * here. */
  size_t nerr = 0, nval = 0;
  for (size_t k = 0; k < ncases; k++) {
    if (cases[k].is_error) nerr++;
    else nval++;
  }
  ck_assert_uint_ge(nval, 25);
  ck_assert_uint_ge(nerr, 30);
}
END_TEST

/* ---- the spring example --------------------------------------------------------- */

static const char spring_text[] =
    "# valve-actuator return spring (invented demo)\n"
    "input d  [mm]  ~ fit(\"fits/wire_d.json\")\n"
    "input Dm [mm]  ~ normal(mean=16.0, sd=0.08)\n"
    "input G  [GPa] ~ fit(\"fits/shear_modulus.json\")\n"
    "input F  [N]   ~ weibull(shape=8, scale=120)\n"
    "const n = 8\n"
    "let C = Dm / d\n"
    "output rate   [N/mm] = G * d^4 / (8 * Dm^3 * n)\n"
    "output stress [MPa]  = ((4*C - 1)/(4*C - 4) + 0.615/C) * 8 * F * Dm / (pi * d^3)\n"
    "limit stress < 880 [MPa]\n"
    "correlate d Dm 0.3\n";

START_TEST(test_spring_description)
{
  sp_model *m = compile_ok("models/spring.spm", spring_text);
  ck_assert_uint_eq(sp_model_input_count(m), 4);
  ck_assert_uint_eq(sp_model_output_count(m), 2);
  const sp_model_input *d = sp_model_input_at(m, 0), *Dm = sp_model_input_at(m, 1);
  const sp_model_input *G = sp_model_input_at(m, 2), *F = sp_model_input_at(m, 3);
  ck_assert_str_eq(d->name, "d");
  ck_assert_str_eq(d->unit_text, "mm");
  ck_assert_ptr_null(d->family);
  ck_assert_str_eq(d->fit_path, "fits/wire_d.json");
  /* Relative to the model file's folder. */
  ck_assert_str_eq(d->fit_path_resolved, "models/fits/wire_d.json");
  ck_assert_int_eq(d->line, 2);
  ck_assert_str_eq(Dm->family->name, "normal");
  ck_assert(Dm->theta[0] == 16.0 && Dm->theta[1] == 0.08);
  ck_assert(Dm->scale == 1.0 && Dm->offset == 0.0);
  ck_assert_ptr_null(Dm->fit_path);
  ck_assert_str_eq(G->unit_text, "GPa");
  ck_assert_str_eq(G->fit_path_resolved, "models/fits/shear_modulus.json");
  ck_assert_str_eq(F->family->name, "weibull");
  ck_assert(F->theta[0] == 8.0 && F->theta[1] == 120.0);
  ck_assert_int_eq(sp_model_input_find(m, "G"), 2);
  ck_assert_int_eq(sp_model_input_find(m, "C"), -1);

  ck_assert_str_eq(sp_model_output_at(m, 0)->name, "rate");
  ck_assert_str_eq(sp_model_output_at(m, 0)->unit_text, "N/mm");
  ck_assert_str_eq(sp_model_output_at(m, 1)->unit_text, "MPa");
  ck_assert_int_eq(sp_model_output_find(m, "stress"), 1);

  ck_assert_uint_eq(sp_model_limit_count(m), 1);
  const sp_model_limit *l = sp_model_limit_at(m, 0);
  ck_assert_uint_eq(l->output, 1);
  ck_assert_int_eq(l->dir, SP_MODEL_LIMIT_BELOW);
  ck_assert(l->value == 880.0);
  ck_assert_int_eq(l->line, 10);

  ck_assert_uint_eq(sp_model_correlation_count(m), 1);
  const sp_model_correlation *r = sp_model_correlation_at(m, 0);
  ck_assert(r->i == 0 && r->j == 1 && r->rho == 0.3);

  ck_assert_uint_eq(sp_model_const_count(m), 1);
  ck_assert_str_eq(sp_model_const_at(m, 0)->name, "n");
  ck_assert(sp_model_const_at(m, 0)->value == 8.0);
  ck_assert_str_eq(sp_model_const_at(m, 0)->unit_text, "1");

  /* The hash is the model text's. */
  char hex[SP_SHA256_HEX_LEN];
  sp_sha256_buffer(spring_text, strlen(spring_text), hex);
  ck_assert_str_eq(sp_model_sha256(m), hex);
  ck_assert_str_eq(sp_model_path(m), "models/spring.spm");

  /* Two fit() inputs are unresolved until set. */
  sp_error err;
  ck_assert_int_eq(sp_model_check_inputs(m, &err), SP_EMODEL);
  ck_assert_str_eq(err.msg,
                   "input 'd': its distribution fit(\"fits/wire_d.json\") has not "
                   "been resolved");
  ck_assert_int_eq(err.line, 2);
  sp_model_free(m);
}
END_TEST

START_TEST(test_spring_values)
{
  sp_model *m = compile_ok("spring.spm", spring_text);
  /* Resolve the two fit() inputs as the record module would: the wire
   * diameter fitted in mm, the shear modulus fitted in MPa (1 MPa =
   * 0.001 GPa). */
  const sp_family *normal = sp_family_find("normal");
  ck_assert_ptr_nonnull(normal);
  sp_error err;
  const double th_d[2] = {2.0, 0.01}, th_G[2] = {79300.0, 500.0};
  ck_assert_int_eq(sp_model_set_input_dist(m, 0, normal, th_d, 1.0, 0.0, &err), SP_OK);
  ck_assert_int_eq(sp_model_set_input_dist(m, 2, normal, th_G, 1e-3, 0.0, &err), SP_OK);
  ck_assert_int_eq(sp_model_check_inputs(m, &err), SP_OK);
  const sp_model_input *G = sp_model_input_at(m, 2);
  ck_assert_ptr_eq(G->family, normal);
  ck_assert(G->theta[0] == 79300.0 && G->scale == 1e-3);

  /* High-entropy inputs spread over the plausible ranges (PCG64 with a
   * fixed seed). */
  enum { N = 4096 };
  static double d[N], Dm[N], Gv[N], F[N], rate[N], stress[N];
  sp_pcg64 g;
  sp_pcg64_seed(&g, 0, 20240601, 0, 54);
  for (size_t i = 0; i < N; i++) {
    d[i] = 1.9 + 0.2 * sp_rng_uniform(&g);
    Dm[i] = 15.5 + 1.0 * sp_rng_uniform(&g);
    Gv[i] = 78.0 + 3.0 * sp_rng_uniform(&g);
    F[i] = 60.0 + 80.0 * sp_rng_uniform(&g);
  }
  const double *in[4] = {d, Dm, Gv, F};
  double *out[2] = {rate, stress};
  eval_block(m, N, in, N, out);
  /* The same formulas in C, written as a person would: G in GPa times
   * 1000 is N/mm^2; N/mm^2 is MPa.  The bytecode computes d^4 as (d^2)^2
   * and applies the factor 1000 after the division, where this uses pow()
   * and a different order: each value carries up to about ten roundings
   * either way, and they differ by a few ulps, so 1e-15 relative (4.5
   * DBL_EPSILON) is the bound. */
  const double pi = 3.14159265358979323846;
  double worst_rate = 0, worst_stress = 0;
  for (size_t i = 0; i < N; i++) {
    double want_rate = Gv[i] * 1000.0 * pow(d[i], 4) / (8.0 * pow(Dm[i], 3) * 8.0);
    double C = Dm[i] / d[i];
    double wahl = (4.0 * C - 1.0) / (4.0 * C - 4.0) + 0.615 / C;
    double want_stress = wahl * 8.0 * F[i] * Dm[i] / (pi * pow(d[i], 3));
    ASSERT_REL(rate[i], want_rate, 1e-15);
    ASSERT_REL(stress[i], want_stress, 1e-15);
    worst_rate = fmax(worst_rate, fabs(rate[i] - want_rate) / want_rate);
    worst_stress = fmax(worst_stress, fabs(stress[i] - want_stress) / want_stress);
  }
  /* Sanity of magnitude (hand computation at the nominal point: G = 79.3
   * GPa, d = 2 mm, Dm = 16 mm, n = 8: rate = 79300 * 16 / (8 * 4096 * 8)
   * = 4.84 N/mm). */
  ck_assert(rate[0] > 3.5 && rate[0] < 6.5);
  fprintf(stderr, "spring: worst relative difference rate %.3g, stress %.3g\n",
          worst_rate, worst_stress);

  /* Block sizes 1, 7 and 4096 give the same bits (7 does not divide
   * 4096, so the last block is short). */
  static const size_t blocks[] = {1, 7, 4096};
  static double r2[N], s2[N];
  double *out2[2] = {r2, s2};
  for (size_t b = 0; b < 3; b++) {
    memset(r2, 0, sizeof r2);
    memset(s2, 0, sizeof s2);
    eval_block(m, blocks[b], in, N, out2);
    for (size_t i = 0; i < N; i++)
      ck_assert_msg(same_double(r2[i], rate[i]) && same_double(s2[i], stress[i]),
                    "block %zu differs at %zu", blocks[b], i);
  }
  /* One call with n larger than the block is evaluated in chunks. */
  sp_model_ws *w = sp_model_ws_alloc(m, 7, &err);
  ck_assert_uint_eq(sp_model_ws_block(w), 7);
  memset(r2, 0, sizeof r2);
  memset(s2, 0, sizeof s2);
  sp_model_eval(m, w, in, N, out2);
  for (size_t i = 0; i < N; i++)
    ck_assert(same_double(r2[i], rate[i]) && same_double(s2[i], stress[i]));
  sp_model_ws_free(w);
  sp_model_free(m);
}
END_TEST

START_TEST(test_spring_bytecode)
{
  sp_model *m = compile_ok("spring.spm", spring_text);
  sp_error err;
  char *dis = sp_model_disassemble(m, &err);
  ck_assert_ptr_nonnull(dis);
  /* The GPa mm -> N/mm factor 1000 (SI: 1e9 Pa * 1e-3 m = 1e6 N/m) is
   * applied once, after the division; the constant n was folded into a
   * multiplication by 8; stress needs no factor (N/mm^2 is MPa). */
  ck_assert_msg(strstr(dis, "scale      r4    <- r4, 1000 ") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "r5    <- r5") == NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "3.1415926535897931") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "pow") == NULL, "d^4 and d^3 are expanded:\n%s", dis);
  ck_assert_msg(strstr(dis, "; r0 = input d [mm]") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "; r5 = output stress [MPa]") != NULL, "%s", dis);
  /* Register reuse: four temporaries serve 24 instructions. */
  ck_assert_uint_le(sp_model_temp_count(m), 5);
  ck_assert_uint_eq(sp_model_register_count(m), 6 + sp_model_temp_count(m));
  free(dis);
  sp_model_free(m);
}
END_TEST

/* ---- folding, dead code, registers ---------------------------------------------- */

START_TEST(test_constant_folding_in_disassembly)
{
  sp_model *m = compile_ok("fold.spm",
                           "input x ~ normal(0, 1)\n"
                           "const k = 2 * pi\n"
                           "let unused = sqrt(x) * 3\n"
                           "let three = (1 + 2) * 1 [mm] / 1 [mm]\n"
                           "output y = k * x\n"
                           "output z = x * (three + 4) - 2 * 3\n");
  sp_error err;
  char *dis = sp_model_disassemble(m, &err);
  /* 2 pi = 6.2831853071795862 (the double; closed form), (1 + 2) + 4 = 7,
   * 2 * 3 = 6 (x - 6 is x + (-6)); the unused let leaves no code. */
  ck_assert_msg(strstr(dis, "mul_rc     r1    <- r0, 6.2831853071795862") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "mul_rc     r3    <- r0, 7 ") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "add_rc     r2    <- r3, -6 ") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "sqrt") == NULL, "dead code kept:\n%s", dis);
  ck_assert_uint_eq(sp_model_code_size(m), 3);
  free(dis);
  sp_model_free(m);
}
END_TEST

START_TEST(test_register_reuse)
{
  /* A chain of 2000 lets, each used once by the next: liveness keeps the
   * workspace at two registers however long the chain is. */
  size_t cap = 200000, len = 0;
  char *t = malloc(cap);
  len += (size_t)snprintf(t + len, cap - len, "input x ~ normal(0, 1)\nlet a0 = x\n");
  for (int k = 1; k < 2000; k++)
    len += (size_t)snprintf(t + len, cap - len, "let a%d = a%d * 0.5 + x\n", k, k - 1);
  len += (size_t)snprintf(t + len, cap - len, "output y = a1999 + 0\n");
  sp_model *m = compile_ok("chain.spm", t);
  ck_assert_uint_le(sp_model_temp_count(m), 2);
  /* y = x * (1 + 1/2 + ... + 2^-1999) = x * (2 - 2^-1999): 2 for x = 1,
   * exactly once rounded (closed form of the geometric series). */
  double x = 1, y = 0;
  const double *in[1] = {&x};
  double *out[1] = {&y};
  eval_block(m, 1, in, 1, out);
  ck_assert(y == 2.0);
  free(t);
  sp_model_free(m);
}
END_TEST

START_TEST(test_output_factor_folded_into_last_multiply)
{
  sp_model *m = compile_ok("f.spm",
                           "input L [m] ~ normal(1, 0.1)\n"
                           "output a [mm] = L * 2\n"
                           "output b [mm] = L / 4\n"
                           "output c [mm] = L\n"
                           "output t [degC] = L / 1 [m] * 1 [K]\n");
  sp_error err;
  char *dis = sp_model_disassemble(m, &err);
  /* m -> mm is 1000 (SI prefix): folded into the constant of the last
   * multiply (2 * 1000) or divide (4 / 1000); a bare input gets one
   * multiply; K -> degC needs the offset -273.15 (affine). */
  ck_assert_msg(strstr(dis, "mul_rc     r1    <- r0, 2000 ") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "div_rc     r2    <- r0, 0.0040000000000000001") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "mul_rc     r3    <- r0, 1000 ") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "affine") != NULL || strstr(dis, "muladd_rc") != NULL, "%s", dis);
  ck_assert_msg(strstr(dis, "scale") == NULL, "%s", dis);
  double L = 1.5, o[4];
  const double *in[1] = {&L};
  double *out[4] = {&o[0], &o[1], &o[2], &o[3]};
  eval_block(m, 1, in, 1, out);
  /* hand computation: 1.5 m = 1500 mm; 3000 mm, 375 mm; 1.5 K = -271.65 degC */
  ck_assert(o[0] == 3000.0 && o[1] == 375.0 && o[2] == 1500.0);
  ASSERT_REL(o[3], -271.65, 4 * EPS);
  free(dis);
  sp_model_free(m);
}
END_TEST

/* ---- distributions and inputs --------------------------------------------------- */

START_TEST(test_distribution_parameters)
{
  sp_model *m = compile_ok("p.spm",
                           "const mu = 0.002 [m]\n"
                           "input a [mm] ~ normal(mean=mu, sd=5 [um])\n"
                           "input b [mm] ~ normal(16, 2 * 0.04)\n"
                           "input c [mm] ~ exponential(rate=2 [1/m])\n"
                           "input t [degC] ~ normal(mean=300 [K], sd=2 [K])\n"
                           "input f [mm] ~ beta(2, 3)\n"
                           "input g [mm] ~ beta(alpha=2, beta=3, max=4)\n"
                           "output y = a + b + c + f + g\n");
  const sp_model_input *a = sp_model_input_at(m, 0), *b = sp_model_input_at(m, 1);
  const sp_model_input *c = sp_model_input_at(m, 2), *t = sp_model_input_at(m, 3);
  const sp_model_input *f = sp_model_input_at(m, 4), *g = sp_model_input_at(m, 5);
  /* SI: 0.002 m = 2 mm; 5 um = 0.005 mm; 2 per m = 0.002 per mm; a
   * location converts affinely (300 K = 26.85 degC) but a spread only by
   * the factor (2 K is 2 degC wide). */
  ASSERT_REL(a->theta[0], 2.0, EPS);
  ASSERT_REL(a->theta[1], 0.005, EPS);
  ck_assert(b->theta[0] == 16.0 && b->theta[1] == 0.08);
  ASSERT_REL(c->theta[0], 0.002, EPS);
  ASSERT_REL(t->theta[0], 26.85, 8 * EPS);
  ck_assert(t->theta[1] == 2.0);
  /* Defaults from the family: beta's min 0 and max 1 (dist.h). */
  ck_assert(f->theta[0] == 2 && f->theta[1] == 3 && f->theta[2] == 0 && f->theta[3] == 1);
  ck_assert(g->theta[2] == 0 && g->theta[3] == 4);
  sp_model_free(m);
}
END_TEST

START_TEST(test_every_family_as_input)
{
  /* Each family of the registry that may be a model input, spelled with
   * positional parameters in its documented order (dist.h); values chosen
   * inside every family's domain. */
  static const struct {
    const char *line;
    size_t np;
    double theta[4];
  } want[] = {
      {"normal(1, 2)", 2, {1, 2}},
      {"lognormal(0.5, 0.25)", 2, {0.5, 0.25}},
      {"weibull(8, 120)", 2, {8, 120}},
      {"weibull3(2, 3, 1)", 3, {2, 3, 1}},
      {"gamma(2, 3)", 2, {2, 3}},
      {"exponential(0.5)", 1, {0.5}},
      {"exponential2(0.5, 1)", 2, {0.5, 1}},
      {"gumbel_max(1, 2)", 2, {1, 2}},
      {"gumbel_min(1, 2)", 2, {1, 2}},
      {"logistic(1, 2)", 2, {1, 2}},
      {"loglogistic(3, 2)", 2, {3, 2}},
      {"uniform(1, 2)", 2, {1, 2}},
      {"truncnormal(1, 2, 0, 5)", 4, {1, 2, 0, 5}},
      {"triangular(1, 2, 4)", 3, {1, 2, 4}},
      {"beta(2, 3, 1, 4)", 4, {2, 3, 1, 4}},
  };
  size_t nfam = sizeof want / sizeof *want;
  char text[4096];
  size_t len = 0;
  for (size_t k = 0; k < nfam; k++)
    len += (size_t)snprintf(text + len, sizeof text - len, "input x%zu [mm] ~ %s\n",
                            k, want[k].line);
  snprintf(text + len, sizeof text - len, "output y = x0\n");
  sp_model *m = compile_ok("fam.spm", text);
  ck_assert_uint_eq(sp_model_input_count(m), nfam);
  for (size_t k = 0; k < nfam; k++) {
    const sp_model_input *in = sp_model_input_at(m, k);
    ck_assert_ptr_nonnull(in->family);
    ck_assert_uint_eq(in->family->nparam, want[k].np);
    for (size_t j = 0; j < want[k].np; j++)
      ck_assert_msg(in->theta[j] == want[k].theta[j], "%s: theta[%zu] = %g",
                    want[k].line, j, in->theta[j]);
  }
  /* Every family that propagates is listed above. */
  size_t nprop = 0;
  for (size_t i = 0; i < sp_family_count(); i++)
    if (sp_family_at(i)->flags & SP_FAMILY_PROPAGATE) nprop++;
  ck_assert_uint_eq(nprop, nfam);
  sp_model_free(m);
}
END_TEST

START_TEST(test_limit_values_converted)
{
  sp_model *m = compile_ok("l.spm",
                           "input F [N] ~ normal(100, 1)\n"
                           "input A [mm2] ~ normal(4, 0.1)\n"
                           "const smax = 0.9 [GPa]\n"
                           "output s [MPa] = F / A\n"
                           "output f [kN] = F\n"
                           "limit s < 0.88 [GPa]\n"
                           "limit s > 2\n"
                           "limit f > 50 [N]\n"
                           "limit f < smax * 1 [m2]\n");
  ck_assert_uint_eq(sp_model_limit_count(m), 4);
  /* SI: 0.88 GPa = 880 MPa; a pure number is in the output's unit; 50 N
   * = 0.05 kN; 0.9 GPa * 1 m^2 = 9e8 N = 9e5 kN. */
  ASSERT_REL(sp_model_limit_at(m, 0)->value, 880.0, EPS);
  ck_assert_int_eq(sp_model_limit_at(m, 0)->dir, SP_MODEL_LIMIT_BELOW);
  ck_assert(sp_model_limit_at(m, 1)->value == 2.0);
  ck_assert_int_eq(sp_model_limit_at(m, 1)->dir, SP_MODEL_LIMIT_ABOVE);
  ck_assert_uint_eq(sp_model_limit_at(m, 2)->output, 1);
  ASSERT_REL(sp_model_limit_at(m, 2)->value, 0.05, EPS);
  ASSERT_REL(sp_model_limit_at(m, 3)->value, 9e5, EPS);
  ck_assert_int_eq(sp_model_limit_at(m, 3)->line, 9);
  sp_model_free(m);
}
END_TEST

START_TEST(test_set_input_dist_errors)
{
  sp_model *m = compile_ok("s.spm", "input x [mm] ~ fit(\"/abs/x.json\")\noutput y = x\n");
  ck_assert_str_eq(sp_model_input_at(m, 0)->fit_path_resolved, "/abs/x.json");
  const sp_family *normal = sp_family_find("normal");
  const double good[2] = {1, 2}, bad[2] = {1, -2};
  sp_error err;
  ck_assert_int_eq(sp_model_set_input_dist(m, 1, normal, good, 1, 0, &err), SP_EUSAGE);
  ck_assert_str_eq(err.msg, "input 1 does not exist (the model has 1)");
  ck_assert_int_eq(sp_model_set_input_dist(m, 0, NULL, good, 1, 0, &err), SP_EUSAGE);
  ck_assert_int_eq(sp_model_set_input_dist(m, 0, normal, good, 0, 0, &err), SP_EUSAGE);
  ck_assert_str_eq(err.msg, "input 'x': the conversion scale must be finite and "
                            "non-zero, got 0");
  ck_assert_int_eq(sp_model_set_input_dist(m, 0, normal, good, 1, NAN, &err), SP_EUSAGE);
  /* The family's own check refuses sd = -2; its wording is dist's. */
  ck_assert_int_ne(sp_model_set_input_dist(m, 0, normal, bad, 1, 0, &err), SP_OK);
  ck_assert_msg(strstr(err.msg, "sd") != NULL, "%s", err.msg);
  ck_assert_ptr_null(sp_model_input_at(m, 0)->family);
  ck_assert_int_eq(sp_model_set_input_dist(m, 0, normal, good, 25.4, 0, &err), SP_OK);
  ck_assert(sp_model_input_at(m, 0)->scale == 25.4);
  ck_assert_ptr_null(sp_model_input_at(m, 1));
  sp_model_free(m);
}
END_TEST

/* ---- diagnostics ------------------------------------------------------------------- */

START_TEST(test_diag_format_with_caret)
{
  const char *text = "input d [mm] ~ normal(2, 0.1)\n"
                     "output y = d + Dn\n"
                     "\toutput z = d * q\n"
                     "output u = \xc2\xb5 + 1\n";
  sp_model_diags d;
  sp_error err;
  compile_bad(text, strlen(text), &d, &err);
  ck_assert_uint_eq(d.count, 3);
  char buf[1024];
  int n = sp_model_diag_format(&d.items[0], buf, sizeof buf);
  ck_assert_str_eq(buf, "case.spm:2:16: unknown name 'Dn'\n"
                        "output y = d + Dn\n"
                        "               ^\n");
  ck_assert_int_eq(n, (int)strlen(buf));
  /* A tab in the source is copied into the caret line. */
  sp_model_diag_format(&d.items[1], buf, sizeof buf);
  ck_assert_str_eq(buf, "case.spm:3:17: unknown name 'q'\n"
                        "\toutput z = d * q\n"
                        "\t               ^\n");
  /* Columns count characters, not bytes (µ is two bytes in UTF-8). */
  sp_model_diag_format(&d.items[2], buf, sizeof buf);
  ck_assert_str_eq(buf, "case.spm:4:12: unexpected character '\xc2\xb5'\n"
                        "output u = \xc2\xb5 + 1\n"
                        "           ^\n");
  /* snprintf semantics: a short buffer is cut, the length still told. */
  char small[8];
  ck_assert_int_eq(sp_model_diag_format(&d.items[0], small, sizeof small), n);
  ck_assert_str_eq(small, "case.sp");
  ck_assert_str_eq(err.hint, "3 errors in the model");
  sp_model_diags_clear(&d);
  ck_assert_uint_eq(d.count, 0);
  sp_model_diags_clear(NULL);
}
END_TEST

START_TEST(test_diag_cap_and_total)
{
  /* 150 bad lines: all counted, the first SP_MODEL_MAX_DIAGS stored. */
  size_t cap = 10000, len = 0;
  char *t = malloc(cap);
  for (int k = 0; k < 150; k++)
    len += (size_t)snprintf(t + len, cap - len, "output y%d = nosuch%d\n", k, k);
  sp_model_diags d;
  sp_error err;
  compile_bad(t, len, &d, &err);
  ck_assert_uint_eq(d.count, SP_MODEL_MAX_DIAGS);
  ck_assert_uint_eq(d.total, 150);
  ck_assert_str_eq(d.items[99].message, "unknown name 'nosuch99'");
  ck_assert_int_eq(d.items[99].line, 100);
  sp_model_diags_clear(&d);
  /* Without a diagnostics list the first error is still in err. */
  sp_model *m = NULL;
  ck_assert_int_eq(sp_model_compile("x.spm", t, len, &m, NULL, &err), SP_EMODEL);
  ck_assert_str_eq(err.msg, "unknown name 'nosuch0'");
  ck_assert_str_eq(err.hint, "150 errors in the model");
  free(t);
}
END_TEST

START_TEST(test_crlf_and_missing_final_newline)
{
  const char *text = "input x ~ normal(0, 1)\r\noutput y = x * 2\r\noutput z = x + q";
  sp_model_diags d;
  sp_error err;
  compile_bad(text, strlen(text), &d, &err);
  ck_assert_uint_eq(d.count, 1);
  ck_assert_str_eq(d.items[0].message, "unknown name 'q'");
  ck_assert_int_eq(d.items[0].line, 3);
  ck_assert_int_eq(d.items[0].col, 16);
  ck_assert_str_eq(d.items[0].source, "output z = x + q");
  sp_model_diags_clear(&d);
  sp_model *m = compile_ok("c.spm", "input x ~ normal(0, 1)\r\noutput y = x * 2\r\n");
  double x = 3, y = 0;
  const double *in[1] = {&x};
  double *out[1] = {&y};
  eval_block(m, 1, in, 1, out);
  ck_assert(y == 6.0);
  sp_model_free(m);
}
END_TEST

START_TEST(test_nul_and_control_bytes)
{
  const char text[] = "input x ~ normal(0, 1)\noutput y = x \0 2\n";
  sp_model_diags d;
  sp_error err;
  compile_bad(text, sizeof text - 1, &d, &err);
  ck_assert_uint_eq(d.count, 1);
  ck_assert_str_eq(d.items[0].message, "unexpected character (byte 0x00)");
  /* The source line shows the NUL as '?', so it can be printed. */
  ck_assert_str_eq(d.items[0].source, "output y = x ? 2");
  sp_model_diags_clear(&d);
}
END_TEST

/* ---- pathological inputs ------------------------------------------------------------ */

static char *repeat_line(const char *head, const char *unit, size_t times,
                         const char *tail, size_t *len)
{
  size_t hl = strlen(head), ul = strlen(unit), tl = strlen(tail);
  char *t = malloc(hl + ul * times + tl + 1);
  memcpy(t, head, hl);
  for (size_t k = 0; k < times; k++) memcpy(t + hl + k * ul, unit, ul);
  memcpy(t + hl + ul * times, tail, tl + 1);
  *len = hl + ul * times + tl;
  return t;
}

START_TEST(test_deep_nesting_refused)
{
  /* 100000 '(' on one line: one error at the first level past the limit,
   * no stack overflow; the next line is still checked. */
  size_t len;
  char *t = repeat_line("input x ~ normal(0, 1)\noutput y = ", "(", 100000,
                        "x\noutput z = nosuch\n", &len);
  sp_model_diags d;
  sp_error err;
  compile_bad(t, len, &d, &err);
  ck_assert_uint_eq(d.count, 2);
  ck_assert_str_eq(d.items[0].message, "expression nested too deeply (more than 128 levels)");
  ck_assert_int_eq(d.items[0].line, 2);
  ck_assert_int_eq(d.items[0].col, 12 + SP_MODEL_MAX_DEPTH);
  /* The long line is shown as a window around the caret. */
  ck_assert_uint_le(strlen(d.items[0].source), SP_MODEL_DIAG_SOURCE_MAX);
  ck_assert(d.items[0].source[d.items[0].source_col - 1] == '(');
  ck_assert_str_eq(d.items[1].message, "unknown name 'nosuch'");
  sp_model_diags_clear(&d);
  free(t);

  /* Unary signs, powers and calls nest too. */
  const char *units[] = {"-", "2^", "sqrt("};
  for (size_t k = 0; k < 3; k++) {
    t = repeat_line("input x ~ normal(0, 1)\noutput y = ", units[k], 100000, "x\n", &len);
    compile_bad(t, len, &d, &err);
    ck_assert_uint_eq(d.count, 1);
    ck_assert_str_eq(d.items[0].message,
                     "expression nested too deeply (more than 128 levels)");
    sp_model_diags_clear(&d);
    free(t);
  }
}
END_TEST

START_TEST(test_nesting_at_the_limit_compiles)
{
  /* SP_MODEL_MAX_DEPTH levels are allowed, one more is not. */
  size_t len;
  char *open = repeat_line("", "(", SP_MODEL_MAX_DEPTH, "", &len);
  char *close = repeat_line("", ")", SP_MODEL_MAX_DEPTH, "", &len);
  char text[1024];
  snprintf(text, sizeof text, "input x ~ normal(0, 1)\noutput y = %sx + 1%s\n", open, close);
  sp_model *m = compile_ok("n.spm", text);
  double x = 2, y = 0;
  const double *in[1] = {&x};
  double *out[1] = {&y};
  eval_block(m, 1, in, 1, out);
  ck_assert(y == 3.0);
  sp_model_free(m);
  snprintf(text, sizeof text, "input x ~ normal(0, 1)\noutput y = (%sx + 1%s)\n", open, close);
  sp_model_diags d;
  sp_error err;
  compile_bad(text, strlen(text), &d, &err);
  ck_assert_uint_eq(d.count, 1);
  ck_assert_int_eq(d.items[0].col, 12 + SP_MODEL_MAX_DEPTH);
  sp_model_diags_clear(&d);
  free(open);
  free(close);
}
END_TEST

START_TEST(test_long_line)
{
  /* A 100000-character formula: x + x + ... (25000 terms of " + x")
   * compiles to one register chain; y = 25001 x exactly for x = 1.5
   * (hand computation; every partial sum is a multiple of 1.5 below
   * 2^53). */
  size_t len;
  char *t = repeat_line("input x ~ normal(0, 1)\noutput y = x", " + x", 25000, "\n", &len);
  ck_assert_uint_ge(len, 100000);
  sp_model *m = compile_ok("long.spm", t);
  /* Two temporaries alternate: a destination is never one of its own
   * operands. */
  ck_assert_uint_le(sp_model_temp_count(m), 2);
  double x = 1.5, y = 0;
  const double *in[1] = {&x};
  double *out[1] = {&y};
  eval_block(m, 1, in, 1, out);
  ck_assert(y == 25001 * 1.5);
  sp_model_free(m);
  free(t);
  /* A 100000-character comment, and an error at the end of a long line. */
  t = repeat_line("input x ~ normal(0, 1) #", "#", 100000, "\noutput y = x\n", &len);
  m = compile_ok("comment.spm", t);
  sp_model_free(m);
  free(t);
  t = repeat_line("input x ~ normal(0, 1)\noutput y = x", " * x", 25000, " + Q\n", &len);
  sp_model_diags d;
  sp_error err;
  compile_bad(t, len, &d, &err);
  ck_assert_uint_eq(d.count, 1);
  ck_assert_str_eq(d.items[0].message, "unknown name 'Q'");
  ck_assert_int_eq(d.items[0].col, 12 + 1 + 4 * 25000 + 3);
  const char *src = d.items[0].source;
  ck_assert(strncmp(src, "...", 3) == 0);
  ck_assert(src[d.items[0].source_col - 1] == 'Q');
  char buf[1024];
  sp_model_diag_format(&d.items[0], buf, sizeof buf);
  ck_assert(strstr(buf, "Q\n") != NULL);
  sp_model_diags_clear(&d);
  free(t);
}
END_TEST

START_TEST(test_size_limits)
{
  /* More than SP_MODEL_MAX_BYTES: refused before parsing (SP_ELIMIT). */
  size_t big = SP_MODEL_MAX_BYTES + 1;
  char *t = malloc(big);
  memset(t, '#', big);
  sp_model *m = NULL;
  sp_error err;
  ck_assert_int_eq(sp_model_compile("big.spm", t, big, &m, NULL, &err), SP_ELIMIT);
  ck_assert_str_eq(err.msg, "the model is larger than 8388608 bytes");
  free(t);
  /* SP_MODEL_MAX_LINES lines are read (and found to define no output);
   * one more line is refused.  k newlines make k lines, and text after
   * the last newline is one more. */
  size_t n = SP_MODEL_MAX_LINES;
  t = malloc(n + 1);
  memset(t, '\n', n);
  ck_assert_int_eq(sp_model_compile("lines.spm", t, n, &m, NULL, &err), SP_EMODEL);
  ck_assert_str_eq(err.msg, "the model defines no output");
  t[n] = 'x';
  ck_assert_int_eq(sp_model_compile("lines.spm", t, n + 1, &m, NULL, &err), SP_ELIMIT);
  ck_assert_str_eq(err.msg, "the model has more than 100000 lines");
  ck_assert_int_eq(err.line, SP_MODEL_MAX_LINES + 1);
  ck_assert_ptr_null(m);
  free(t);
}
END_TEST

START_TEST(test_many_lines_fast)
{
  /* SP_MODEL_MAX_LINES statements compile well inside the test timeout
   * (names are hashed; nothing is quadratic). */
  size_t cap = 4000000, len = 0;
  char *t = malloc(cap);
  len += (size_t)snprintf(t + len, cap - len, "input x ~ normal(0, 1)\n");
  for (int k = 1; k < SP_MODEL_MAX_LINES - 1; k++)
    len += (size_t)snprintf(t + len, cap - len, "let v%d = x * %d\n", k, k);
  len += (size_t)snprintf(t + len, cap - len, "output y = v99998 - x\n");
  clock_t t0 = clock();
  sp_model *m = compile_ok("many.spm", t);
  double secs = (double)(clock() - t0) / CLOCKS_PER_SEC;
  fprintf(stderr, "compile of %d lines: %.2f s\n", SP_MODEL_MAX_LINES, secs);
  ck_assert_uint_eq(sp_model_code_size(m), 2);
  sp_model_free(m);
  free(t);
}
END_TEST

START_TEST(test_random_garbage_never_crashes)
{
  /* 3000 lines of random bytes from the model's alphabet and beyond,
   * with a fixed seed: every outcome must be a clean error or a model. */
  static const char alphabet[] = "input output let const limit correlate ~ = + - * / ^ ( ) [ ] , < > \" # . e 1 2 9 x y normal fit mm N sqrt min \t\x01\xc3\xa9";
  sp_pcg64 g;
  sp_pcg64_seed(&g, 0, 7, 0, 11);
  char *t = malloc(3000 * 80);
  size_t len = 0;
  for (int k = 0; k < 3000; k++) {
    size_t n = (size_t)(sp_rng_uniform(&g) * 60);
    for (size_t i = 0; i < n; i++)
      t[len++] = alphabet[(size_t)(sp_rng_uniform(&g) * (sizeof alphabet - 1))];
    t[len++] = '\n';
  }
  sp_model_diags d;
  sp_model_diags_init(&d);
  sp_error err;
  sp_model *m = NULL;
  sp_status st = sp_model_compile("junk.spm", t, len, &m, &d, &err);
  ck_assert(st == SP_EMODEL || st == SP_OK);
  for (size_t k = 0; k < d.count; k++) {
    char buf[4096];
    sp_model_diag_format(&d.items[k], buf, sizeof buf);
    ck_assert(d.items[k].line >= 1 && d.items[k].col >= 1);
  }
  sp_model_diags_clear(&d);
  sp_model_free(m);
  free(t);
}
END_TEST

/* ---- loading ------------------------------------------------------------------------ */

START_TEST(test_load_file)
{
  char path[512];
  snprintf(path, sizeof path, "%s/model_load_test_%ld.spm", SP_BINARY_DIR,
           (long)getpid());
  FILE *f = fopen(path, "wb");
  ck_assert_ptr_nonnull(f);
  ck_assert_uint_eq(fwrite(spring_text, 1, strlen(spring_text), f), strlen(spring_text));
  fclose(f);
  char want_fit[600];
  snprintf(want_fit, sizeof want_fit, "%s/fits/wire_d.json", SP_BINARY_DIR);
  sp_model *m = NULL;
  sp_model_diags d;
  sp_model_diags_init(&d);
  sp_error err;
  ck_assert_int_eq(sp_model_load(path, &m, &d, &err), SP_OK);
  ck_assert_str_eq(sp_model_path(m), path);
  /* fit() paths resolve against the file's folder. */
  ck_assert_str_eq(sp_model_input_at(m, 0)->fit_path_resolved, want_fit);
  char hex[SP_SHA256_HEX_LEN];
  sp_sha256_buffer(spring_text, strlen(spring_text), hex);
  ck_assert_str_eq(sp_model_sha256(m), hex);
  sp_model_free(m);
  unlink(path);
  ck_assert_int_eq(sp_model_load(path, &m, &d, &err), SP_EIO);
  ck_assert_ptr_null(m);
  ck_assert(strstr(err.msg, ": cannot open: ") != NULL);
}
END_TEST

START_TEST(test_workspace_errors)
{
  sp_model *m = compile_ok("w.spm", "input x ~ normal(0, 1)\noutput y = x\n");
  sp_error err;
  ck_assert_ptr_null(sp_model_ws_alloc(m, 0, &err));
  ck_assert_int_eq(err.code, SP_EUSAGE);
  ck_assert_ptr_null(sp_model_ws_alloc(m, SIZE_MAX / 2, &err));
  sp_model_ws_free(NULL);
  sp_model_free(NULL);
  /* A pure copy needs no temporaries. */
  ck_assert_uint_eq(sp_model_temp_count(m), 0);
  sp_model_free(m);
}
END_TEST

int main(void)
{
  load_cases(SP_SOURCE_DIR "/tests/expr/cases.txt");
  Suite *s = suite_create("model");
  TCase *tc = tcase_create("cases");
  tcase_add_test(tc, test_cases_loaded);
  tcase_add_loop_test(tc, test_expr_cases, 0, (int)ncases);
  suite_add_tcase(s, tc);
  tc = tcase_create("spring");
  tcase_add_test(tc, test_spring_description);
  tcase_add_test(tc, test_spring_values);
  tcase_add_test(tc, test_spring_bytecode);
  suite_add_tcase(s, tc);
  tc = tcase_create("compiler");
  tcase_add_test(tc, test_constant_folding_in_disassembly);
  tcase_add_test(tc, test_register_reuse);
  tcase_add_test(tc, test_output_factor_folded_into_last_multiply);
  tcase_add_test(tc, test_distribution_parameters);
  tcase_add_test(tc, test_set_input_dist_errors);
  tcase_add_test(tc, test_every_family_as_input);
  tcase_add_test(tc, test_limit_values_converted);
  tcase_add_test(tc, test_workspace_errors);
  tcase_add_test(tc, test_load_file);
  suite_add_tcase(s, tc);
  tc = tcase_create("diagnostics");
  tcase_add_test(tc, test_diag_format_with_caret);
  tcase_add_test(tc, test_diag_cap_and_total);
  tcase_add_test(tc, test_crlf_and_missing_final_newline);
  tcase_add_test(tc, test_nul_and_control_bytes);
  suite_add_tcase(s, tc);
  tc = tcase_create("pathological");
  tcase_set_timeout(tc, 60);
  tcase_add_test(tc, test_deep_nesting_refused);
  tcase_add_test(tc, test_nesting_at_the_limit_compiles);
  tcase_add_test(tc, test_long_line);
  tcase_add_test(tc, test_size_limits);
  tcase_add_test(tc, test_many_lines_fast);
  tcase_add_test(tc, test_random_garbage_never_crashes);
  suite_add_tcase(s, tc);
  return sp_run_suite(s);
}
