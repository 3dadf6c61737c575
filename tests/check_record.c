/* Tests for the record module (fit records): write, read back bit for bit,
 * refuse to overwrite, and name every bad field.
 *
 * The fit is made with the registered normal and weibull families on
 * generated data; parameter names are taken from the families, so the
 * tests follow the registry's spelling. */
#include "sp_test.h"

#include <string.h>
#include <unistd.h>

#include "scatterprop/fit.h"
#include "scatterprop/record.h"
#include "scatterprop/rng.h"

static char *record_text;      /* a good record, made once */
static sp_fit_result fit;
static const sp_family *normal;

static void make_record(void)
{
  normal = sp_family_find("normal");
  ck_assert_msg(normal != NULL, "the registry has no 'normal' family");
  double x[40];
  sp_pcg64 g;
  sp_rng_block_stream(&g, 3, 0, 0);
  for (int i = 0; i < 40; i++) x[i] = 20.0 + 0.5 * sp_rng_normal(&g);
  const char *fams[2] = {"normal", "weibull"};
  sp_fit_options o;
  sp_fit_options_init(&o);
  o.families = fams;
  o.nfamilies = 2;
  o.pvalue = SP_FIT_PVALUE_BOOTSTRAP;
  o.bootstrap_B = 50;
  o.seed = 99;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_msg(sp_fit_run(x, 40, &o, &fit, &e) == SP_OK, "%s", e.msg);
  ck_assert_int_ge(fit.chosen, 0);
  static const sp_meta meta[2] = {{"gauge", "MC-07", 1}, {"", "free comment", 2}};
  sp_record_fit_source src = {"wire.csv", 1234, "0123456789abcdef0123456789abcdef"
                              "0123456789abcdef0123456789abcdef",
                              meta, 2, "wire_d", "mm", NULL, 3, 1700000000};
  ck_assert_int_eq(sp_record_fit_dumps(&fit, &src, &record_text, &e), SP_OK);
}

static void setup(void)
{
  if (!record_text) make_record();
}

/* Round trip: every double written with 17 digits reads back exactly. */
START_TEST(test_round_trip)
{
  sp_record_fit r;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_msg(sp_record_fit_parse("t.json", record_text, strlen(record_text), &r, &e) ==
                    SP_OK, "%s", e.msg);
  const sp_fit_candidate *c = &fit.cand[fit.chosen];
  ck_assert_ptr_eq(r.family, c->family);
  for (size_t p = 0; p < c->nparam; p++) {
    ck_assert(r.params[p] == c->theta[p]);
    ck_assert_int_eq(r.fixed[p], c->fixed[p]);
    for (size_t q = 0; q < c->nparam; q++) ck_assert(r.cov[p][q] == c->cov[p][q]);
  }
  ck_assert_int_eq(r.cov_available, c->cov_available);
  ck_assert_str_eq(r.unit, "mm");
  ck_assert_str_eq(r.column, "wire_d");
  ck_assert_str_eq(r.data_path, "wire.csv");
  ck_assert_int_eq(r.n, 40);
  ck_assert_int_eq(r.ncandidates, 2);
  ck_assert_str_eq(r.reason, fit.reason);
  sp_record_fit_clear(&r);
  /* Fixed key order: format first, then version, ... by last. */
  const char *order[] = {"\"format\"", "\"version\"", "\"tool\"", "\"created_utc\"",
                         "\"data\"", "\"options\"", "\"chosen\"", "\"choice_reason\"",
                         "\"candidates\"", "\"by\""};
  const char *at = record_text;
  for (size_t i = 0; i < sizeof order / sizeof order[0]; i++) {
    const char *f = strstr(at, order[i]);
    ck_assert_msg(f != NULL, "%s missing or out of order", order[i]);
    at = f;
  }
  ck_assert(strstr(record_text, "\"created_utc\": \"2023-11-14T22:13:20Z\"") != NULL);
}
END_TEST

START_TEST(test_write_read_file)
{
  char dir[] = "/tmp/sp_record_XXXXXX";
  ck_assert(mkdtemp(dir) != NULL);
  char path[256];
  snprintf(path, sizeof path, "%s/fit.json", dir);
  sp_error e;
  sp_error_clear(&e);
  ck_assert_int_eq(sp_record_write_text(path, record_text, 0, &e), SP_OK);
  ck_assert_int_eq(sp_record_write_text(path, record_text, 0, &e), SP_EIO);
  ck_assert_int_eq(sp_record_write_text(path, record_text, 1, &e), SP_OK);
  sp_record_fit r;
  ck_assert_int_eq(sp_record_fit_read(path, &r, &e), SP_OK);
  ck_assert(r.params[0] == fit.cand[fit.chosen].theta[0]);
  sp_record_fit_clear(&r);
  unlink(path);
  rmdir(dir);
  ck_assert_int_eq(sp_record_fit_read(path, &r, &e), SP_EIO);
}
END_TEST

/* Where the last mutate() put its replacement (a byte offset). */
static size_t mutated_at;

/* Replaces the value of the first "key": after anchor (up to the next ','
 * or newline) with repl.  Returns an owned copy; mutated_at is the offset
 * of the new value. */
static char *mutate(const char *text, const char *anchor, const char *key,
                    const char *repl)
{
  const char *a = anchor ? strstr(text, anchor) : text;
  ck_assert_msg(a != NULL, "anchor %s not found", anchor);
  char k[128];
  snprintf(k, sizeof k, "\"%s\": ", key);
  const char *v = strstr(a, k);
  ck_assert_msg(v != NULL, "key %s not found", key);
  v += strlen(k);
  const char *end = v;
  if (*end == '{' || *end == '[') {
    int depth = 0;
    do {
      if (*end == '{' || *end == '[') depth++;
      if (*end == '}' || *end == ']') depth--;
      end++;
    } while (depth > 0);
  } else {
    while (*end && *end != ',' && *end != '\n') end++;
  }
  size_t n = strlen(text) + strlen(repl) + 1;
  char *out = malloc(n);
  size_t pre = (size_t)(v - text);
  mutated_at = pre;
  memcpy(out, text, pre);
  strcpy(out + pre, repl);
  strcat(out, end);
  return out;
}

/* The 1-based line and column (in UTF-8 characters, as jansson counts)
 * of byte offset off of text: counted here, independently of the reader's
 * scanner. */
static void line_col(const char *text, size_t off, long *line, long *col)
{
  *line = 1;
  *col = 1;
  for (size_t i = 0; i < off; i++) {
    if (text[i] == '\n') {
      (*line)++;
      *col = 1;
    } else if (((unsigned char)text[i] & 0xC0) != 0x80) {
      (*col)++;
    }
  }
}

#define NO_POS ((size_t)-1)

/* The record fails with SP_EDATA and want in its message; when at is not
 * NO_POS, the error is placed at byte offset at of the text (the value
 * the message is about), in wire.json. */
static void expect_bad_at(const char *text, const char *want, size_t at)
{
  sp_record_fit r;
  sp_error e;
  sp_error_clear(&e);
  sp_status st = sp_record_fit_parse("wire.json", text, strlen(text), &r, &e);
  ck_assert_int_eq(st, SP_EDATA);
  ck_assert_msg(strstr(e.msg, want) != NULL, "message '%s' lacks '%s'", e.msg, want);
  if (at != NO_POS) {
    long line, col;
    line_col(text, at, &line, &col);
    ck_assert_msg(strcmp(e.file, "wire.json") == 0 && e.line == line && e.col == col,
                  "'%s' is at %s:%ld:%ld, want wire.json:%ld:%ld", e.msg, e.file, e.line, e.col,
                  line, col);
  }
}

static void expect_bad(const char *text, const char *want)
{
  expect_bad_at(text, want, NO_POS);
}

/* The value of key (after anchor) replaced by repl: the message names the
 * field and points at the new value. */
static void case_bad(const char *anchor, const char *key, const char *repl,
                     const char *want)
{
  char *t = mutate(record_text, anchor, key, repl);
  expect_bad_at(t, want, mutated_at);
  free(t);
}

START_TEST(test_bad_fields)
{
  char want[256];
  case_bad(NULL, "format", "\"other\"",
           "fit record: field 'format' must be \"scatterprop-fit\"");
  case_bad(NULL, "version", "2", "field 'version' is 2; this build reads version 1");
  case_bad(NULL, "version", "\"1\"", "field 'version' must be an integer");
  case_bad(NULL, "tool", "[]", "field 'tool' must be an object");
  case_bad("\"tool\"", "git", "7", "field 'tool.git' must be a string");
  case_bad(NULL, "created_utc", "null", "field 'created_utc' must be a string");
  case_bad("\"data\"", "path", "1", "field 'data.path' must be a string");
  case_bad("\"data\"", "size", "-1", "field 'data.size' must be at least 0, got -1");
  case_bad("\"data\"", "sha256", "\"abc\"",
           "field 'data.sha256' must be 64 lower-case hexadecimal digits");
  case_bad("\"metadata\"", "line", "\"one\"", "field 'data.metadata[0].line' must be an integer");
  case_bad("\"metadata\"", "value", "3", "field 'data.metadata[0].value' must be a string");
  case_bad("\"data\"", "column", "null", "field 'data.column' must be a string");
  case_bad("\"data\"", "unit", "5", "field 'data.unit' must be a string or null");
  case_bad("\"data\"", "n", "0", "field 'data.n' must be at least 1, got 0");
  case_bad("\"data\"", "missing", "1.5", "field 'data.missing' must be an integer");
  {
    /* at the element, one character into the array */
    char *t = mutate(record_text, "\"options\"", "families", "[1]");
    expect_bad_at(t, "field 'options.families[0]' must be a string", mutated_at + 1);
    free(t);
    t = mutate(record_text, "\"options\"", "fixed", "{\"shape\": \"2\"}");
    expect_bad_at(t, "field 'options.fixed.shape' must be a number",
                  mutated_at + strlen("{\"shape\": "));
    free(t);
  }
  case_bad("\"options\"", "select", "\"best\"",
           "field 'options.select' must be aicc, aic, bic or loglik");
  case_bad("\"options\"", "alpha", "1.5", "field 'options.alpha' must be in (0, 1)");
  case_bad("\"options\"", "pvalue_method", "\"exact\"", "field 'options.pvalue_method'");
  case_bad("\"bootstrap\"", "B", "-5", "field 'options.bootstrap.B' must be at least 0");
  case_bad("\"bootstrap\"", "seed", "-1", "field 'options.bootstrap.seed' must be a non-negative");
  case_bad(NULL, "candidates", "[]", "field 'candidates' must not be empty");
  case_bad("\"candidates\"", "status", "\"maybe\"",
           "field 'candidates[0].status' must be ok, skipped or failed");
  case_bad("\"candidates\"", "family", "\"nosuch\"",
           "field 'candidates[0].family' names an unknown family 'nosuch'");
  case_bad("\"candidates\"", "converged", "1", "field 'candidates[0].converged' must be true");
  case_bad("\"candidates\"", "method", "\"guess\"", "field 'candidates[0].method' must be one of");
  case_bad("\"candidates\"", "loglik", "\"x\"",
           "field 'candidates[0].loglik' must be a number or null");
  case_bad("\"candidates\"", "k", "-1", "field 'candidates[0].k' must be at least 0");
  case_bad("\"candidates\"", "rejected", "null", "field 'candidates[0].rejected'");
  case_bad("\"candidates\"", "judged_by", "\"KS\"",
           "field 'candidates[0].judged_by' must be A2, W2, D or null");
  /* The second candidate: its A^2 p-value outside [0, 1]. */
  {
    const char *second = strstr(strstr(record_text, "\"candidates\""), "\"family\": \"weibull\"");
    ck_assert(second != NULL);
    char *t = mutate(record_text, "\"family\": \"weibull\",\n      \"status\"", "p", "1.5");
    expect_bad_at(t, "field 'candidates[1].gof.A2.p' must be in [0, 1]", mutated_at);
    free(t);
  }
  {
    const char *anchor = "\"chosen\": {";
    const sp_family *cf = fit.cand[fit.chosen].family;
    char *t;
    snprintf(want, sizeof want, "fit record: field 'chosen.params.%s' must be a number",
             cf->param_names[0]);
    t = mutate(record_text, anchor, cf->param_names[0], "\"12\"");
    expect_bad_at(t, want, mutated_at);
    free(t);
    t = mutate(record_text, anchor, "family", "\"nosuch\"");
    expect_bad_at(t, "field 'chosen.family' names an unknown family 'nosuch'", mutated_at);
    free(t);
    t = mutate(record_text, anchor, "covariance", "5");
    expect_bad(t, "field 'chosen.covariance' must be an object or null");
    free(t);
    t = mutate(record_text, anchor, "fixed", "[\"nosuch\"]");
    expect_bad_at(t, "field 'chosen.fixed[0]' is not a parameter of", mutated_at + 1);
    free(t);
    t = mutate(record_text, anchor, "matrix", "[[1]]");
    expect_bad(t, "field 'chosen.covariance.matrix' must have");
    free(t);
    /* A positive parameter made negative fails the family's check. */
    for (size_t p = 0; p < cf->nparam; p++) {
      if (cf->param_kinds[p] != SP_PARAM_POSITIVE) continue;
      t = mutate(record_text, anchor, cf->param_names[p], "-1");
      /* at the params object: the '{' after "params": in the chosen block */
      const char *po = strstr(strstr(t, anchor), "\"params\": ") + strlen("\"params\": ");
      expect_bad_at(t, "field 'chosen.params' are invalid", (size_t)(po - t));
      free(t);
      break;
    }
  }
  case_bad(NULL, "chosen", "null", "no family was chosen");
  case_bad(NULL, "by", "3", "field 'by' must be an object or null");
  /* A missing field is named as missing. */
  {
    char *t = strdup(record_text);
    char *k = strstr(t, "\"created_utc\"");
    memcpy(k, "\"created_utX\"", 13);
    /* at the object that lacks it: the top level's '{' */
    expect_bad_at(t, "field 'created_utc' is missing", (size_t)(strchr(t, '{') - t));
    free(t);
  }
  expect_bad("{\"format\": ", "not valid JSON");
  expect_bad_at("[]", "the top level must be a JSON object", 0);
  expect_bad_at("\n  [1]", "the top level must be a JSON object", 3);
  /* Keys written with an escape and with multi-byte characters before the
   * bad value on its line: the key is matched decoded, and the column
   * counts characters (line_col above). */
  {
    char *t = mutate(record_text, "\"options\"", "fixed",
                     "{\"sh\\u00e9\u00e9\": 1, \"\u00fc\": \"2\"}");
    const char *v = strstr(t + mutated_at, "\"2\"");
    expect_bad_at(t, "field 'options.fixed.\u00fc' must be a number", (size_t)(v - t));
    free(t);
  }
}
END_TEST

/* A per-lot record: the pooled fit at the top level, the lots under "by";
 * it reads back, and a bad field inside a lot is named by its path. */
/* The build facts in every record: the compile flags as CMake passed them
 * (with the reproducibility options CMakeLists.txt sets for every target,
 * docs/reproducibility.md) beside what the predefined macros show. */
START_TEST(test_build_provenance)
{
  ck_assert_ptr_nonnull(strstr(record_text, "\"cflags\""));
  ck_assert_ptr_nonnull(strstr(record_text, "-ffp-contract=off -fno-fast-math"));
  ck_assert(strstr(record_text, "\"flags\": \"optimised") ||
            strstr(record_text, "\"flags\": \"not optimised"));
}
END_TEST

START_TEST(test_grouped_record)
{
  double x[40];
  const char *lot[40];
  sp_pcg64 g;
  sp_rng_block_stream(&g, 5, 0, 0);
  for (int i = 0; i < 40; i++) {
    x[i] = 5.0 + sp_rng_normal(&g);
    lot[i] = i < 20 ? "L1" : "L2";
  }
  const char *fams[1] = {"normal"};
  sp_fit_options o;
  sp_fit_options_init(&o);
  o.families = fams;
  o.nfamilies = 1;
  o.pvalue = SP_FIT_PVALUE_APPROX;
  sp_fit_grouped gr;
  sp_error e;
  sp_error_clear(&e);
  ck_assert_int_eq(sp_fit_run_grouped(x, lot, 40, &o, &gr, &e), SP_OK);
  sp_record_fit_source src = {"lots.csv", 10, "0123456789abcdef0123456789abcdef"
                              "0123456789abcdef0123456789abcdef",
                              NULL, 0, "d", NULL, "lot", 0, 0};
  char *text = NULL;
  ck_assert_int_eq(sp_record_fit_grouped_dumps(&gr, &src, &text, &e), SP_OK);
  sp_record_fit r;
  ck_assert_msg(sp_record_fit_parse("lots.json", text, strlen(text), &r, &e) == SP_OK, "%s",
                e.msg);
  ck_assert(r.params[0] == gr.pooled.cand[0].theta[0]);
  ck_assert_ptr_null(r.unit);
  sp_record_fit_clear(&r);
  ck_assert(strstr(text, "\"value\": \"L2\"") != NULL);
  char *t = mutate(text, "\"value\": \"L2\"", "loglik", "\"x\"");
  expect_bad(t, "field 'by.groups[1].candidates[0].loglik' must be a number or null");
  free(t);
  free(text);
  sp_fit_grouped_clear(&gr);
}
END_TEST

static Suite *record_suite(void)
{
  Suite *s = suite_create("record");
  TCase *tc = tcase_create("fit");
  tcase_add_unchecked_fixture(tc, setup, NULL);
  tcase_add_test(tc, test_round_trip);
  tcase_add_test(tc, test_write_read_file);
  tcase_add_test(tc, test_bad_fields);
  tcase_add_test(tc, test_grouped_record);
  tcase_add_test(tc, test_build_provenance);
  suite_add_tcase(s, tc);
  return s;
}

int main(void)
{
  return sp_run_suite(record_suite());
}
