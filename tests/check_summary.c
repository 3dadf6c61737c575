/* Tests of the summary module: per-column statistics of a table, grouped
 * by a text column and pooled, the printed decimals, and the JSON form.
 *
 * Definitions checked (closed forms on small data, worked by hand):
 *   sd with n - 1;
 *   skewness g1 = m3 / m2^1.5 and excess kurtosis g2 = m4 / m2^2 - 3, with
 *   m_k the k-th central moment with divisor n (NIST/SEMATECH e-Handbook
 *   of Statistical Methods, 1.3.5.11);
 *   quartiles by linear interpolation between order statistics at
 *   h = (n - 1) p (Hyndman, R.J. & Fan, Y. (1996). Sample quantiles in
 *   statistical packages. The American Statistician 50(4), 361-365,
 *   definition 7).
 * The statistics themselves are checked against scipy and the NIST StRD
 * datasets in check_stats.c and stats_scipy.py; here they are checked
 * through the summary, per group. */
#include <math.h>
#include <string.h>

#include <jansson.h>

#include "scatterprop/summary.h"
#include "sp_test.h"

static sp_table *table(const char *csv, const sp_ingest_options *opt)
{
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  sp_status s = sp_table_read_buffer("s.csv", csv, strlen(csv), opt, &t, &err);
  ck_assert_msg(s == SP_OK, "read failed: %s", err.msg);
  return t;
}

/* Lot A: 1, 2, 3, 6 and a missing reading; lot B: 10, 20; one row with no
 * lot holds 4. */
static const char lots_csv[] = "# gauge: G1\n"
                               "lot,d [mm]\n"
                               "A,1\nB,10\nA,2\nA,\nA,3\nB,20\n,4\nA,6\n";

START_TEST(test_grouped_and_pooled)
{
  sp_table *t = table(lots_csv, NULL);
  sp_error err;
  sp_error_clear(&err);
  sp_summary_set *s = NULL;
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, "lot", &s, &err), SP_OK);
  ck_assert_uint_eq(s->nblocks, 1);
  const sp_summary_block *b = &s->blocks[0];
  ck_assert_uint_eq(b->nrows, 4); /* A, B, "" in order of appearance, then pooled */
  ck_assert_str_eq(b->rows[0].group, "A");
  ck_assert_str_eq(b->rows[1].group, "B");
  ck_assert_str_eq(b->rows[2].group, "");
  ck_assert_ptr_null(b->rows[3].group);

  /* Lot A: 1, 2, 3, 6.  Deviations -2, -1, 0, 3: m2 = 14/4 = 3.5,
   * m3 = 18/4 = 4.5, m4 = 98/4 = 24.5; s^2 = 14/3; g1 = 4.5 / 3.5^1.5;
   * g2 = 24.5 / 12.25 - 3 = -1.  Quartiles (h = 0.75, 1.5, 2.25): 1.75,
   * 2.5, 3.75. */
  const sp_summary_row *a = &b->rows[0];
  ck_assert_uint_eq(a->rows, 5);
  ck_assert_uint_eq(a->missing, 1);
  ck_assert(a->has_stats);
  ck_assert_uint_eq(a->d.n, 4);
  ASSERT_REL(a->d.mean, 3.0, 2 * EPS);
  ASSERT_REL(a->d.sd, sqrt(14.0 / 3.0), 4 * EPS);
  ASSERT_REL(a->d.skewness, 4.5 / pow(3.5, 1.5), 8 * EPS);
  ASSERT_REL(a->d.kurtosis, -1.0, 8 * EPS);
  ck_assert(a->d.min == 1.0 && a->d.max == 6.0);
  ASSERT_REL(a->d.q1, 1.75, EPS);
  ASSERT_REL(a->d.median, 2.5, EPS);
  ASSERT_REL(a->d.q3, 3.75, EPS);

  /* Lot B: 10, 20: sd = sqrt(50); skewness needs 3 values, kurtosis 4. */
  const sp_summary_row *bb = &b->rows[1];
  ck_assert_uint_eq(bb->d.n, 2);
  ASSERT_REL(bb->d.sd, sqrt(50.0), 2 * EPS);
  ck_assert(isnan(bb->d.skewness) && isnan(bb->d.kurtosis));

  /* The row without a lot is its own group, and every row is pooled: 1, 2,
   * 3, 4, 6, 10, 20 with one missing. */
  ck_assert_uint_eq(b->rows[2].d.n, 1);
  const sp_summary_row *p = &b->rows[3];
  ck_assert_uint_eq(p->rows, 8);
  ck_assert_uint_eq(p->missing, 1);
  ck_assert_uint_eq(p->d.n, 7);
  ASSERT_REL(p->d.mean, 46.0 / 7.0, 2 * EPS);
  ck_assert(p->d.median == 4.0);
  /* Decimals from the pooled sd (6.60 -> 2 - 0 = 2). */
  ck_assert_int_eq(b->decimals, 2);
  sp_summary_set_free(s);
  sp_table_free(t);
}
END_TEST

START_TEST(test_columns_named_once)
{
  /* A column named twice (by name, then by its header cell) is described
   * once, in the order first asked for. */
  sp_table *t = table("x [mm],y [N]\n1,2\n3,4\n", NULL);
  const char *names[] = {"y", "x [mm]", "x", "y [N]"};
  sp_error err;
  sp_error_clear(&err);
  sp_summary_set *s = NULL;
  ck_assert_int_eq(sp_summary_build(t, names, 4, NULL, &s, &err), SP_OK);
  ck_assert_uint_eq(s->nblocks, 2);
  ck_assert_str_eq(s->blocks[0].column->name, "y");
  ck_assert_str_eq(s->blocks[1].column->name, "x");
  sp_summary_set_free(s);
  sp_table_free(t);
}
END_TEST

START_TEST(test_errors)
{
  sp_table *t = table(lots_csv, NULL);
  sp_error err;
  sp_error_clear(&err);
  sp_summary_set *s = NULL;
  const char *lot[] = {"lot"};
  ck_assert_int_eq(sp_summary_build(t, lot, 1, NULL, &s, &err), SP_EDATA);
  ck_assert_ptr_null(s);
  /* at the header cell: line 2 (after one '#' line), cell 1 */
  ck_assert_str_eq(err.msg, "column 'lot' holds text, not numbers");
  ck_assert_str_eq(err.file, "s.csv");
  ck_assert_int_eq(err.line, 2);
  ck_assert_int_eq(err.col, 1);
  ck_assert_ptr_nonnull(strstr(err.hint, "a unit in the header"));
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, "d", &s, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "column 'd [mm]' holds numbers; --by needs a text column");
  ck_assert_int_eq(err.line, 2);
  ck_assert_int_eq(err.col, 2);
  ck_assert_ptr_nonnull(strstr(err.hint, "a column with a unit holds measurements"));
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, "batch", &s, &err), SP_EDATA);
  /* at the header line (no cell holds it) */
  ck_assert_str_eq(err.msg, "no column named 'batch' in the header to group by");
  ck_assert_int_eq(err.line, 2);
  ck_assert_int_eq(err.col, 0);
  sp_table_free(t);

  /* No numeric column: the hint names the text columns and the first
   * reading that made each one text. */
  t = table("a,b\nO.5,x\n1,y\n", NULL);
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, NULL, &s, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "no numeric column to describe in the header");
  ck_assert_str_eq(err.file, "s.csv");
  ck_assert_int_eq(err.line, 1);
  ASSERT_HAS(err.hint, "the text columns are 'a' (first reading 'O.5'), 'b' (first reading 'x')");
  sp_table_free(t);

  /* A unitless column of numbers grouped by: numeric unless read as text. */
  static const char numbered[] = "lot,d [mm]\n117,1\n131,2\n117,3\n";
  t = table(numbered, NULL);
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, "lot", &s, &err), SP_EDATA);
  ck_assert_ptr_nonnull(strstr(err.hint, "text_columns"));
  sp_table_free(t);
  const char *by = "lot";
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.text_columns = &by;
  o.ntext_columns = 1;
  t = table(numbered, &o);
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, "lot", &s, &err), SP_OK);
  ck_assert_uint_eq(s->blocks[0].nrows, 3);
  ck_assert_str_eq(s->blocks[0].rows[1].group, "131");
  ck_assert(s->blocks[0].rows[0].d.mean == 2.0);
  sp_summary_set_free(s);
  sp_table_free(t);
}
END_TEST

START_TEST(test_decimals)
{
  /* 2 - floor(log10(sd)), at least 0: a hundredth of the spread. */
  ck_assert_int_eq(sp_summary_decimals_for(0.0049), 5);
  ck_assert_int_eq(sp_summary_decimals_for(0.01), 4);
  ck_assert_int_eq(sp_summary_decimals_for(1.0), 2);
  ck_assert_int_eq(sp_summary_decimals_for(99.9), 1);
  ck_assert_int_eq(sp_summary_decimals_for(446.0), 0);
  ck_assert_int_eq(sp_summary_decimals_for(3e9), 0);
  /* Outside 1e-10 <= sd < 1e15, or undefined: significant digits (-1). */
  ck_assert_int_eq(sp_summary_decimals_for(2e-10), 12);
  ck_assert_int_eq(sp_summary_decimals_for(9e-11), -1);
  ck_assert_int_eq(sp_summary_decimals_for(1e15), -1);
  ck_assert_int_eq(sp_summary_decimals_for(0.0), -1);
  ck_assert_int_eq(sp_summary_decimals_for(NAN), -1);
  ck_assert_int_eq(sp_summary_decimals_for(INFINITY), -1);
}
END_TEST

START_TEST(test_json)
{
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.skip_bad_rows = 1;
  sp_table *t = table("# gauge: G1\nlot,d [mm],note\nA,1,x\nA,2,y\nB,O.5,z\nB,4,\n", &o);
  sp_error err;
  sp_error_clear(&err);
  sp_summary_set *s = NULL;
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, "lot", &s, &err), SP_OK);
  char *txt = sp_summary_json(s, &err);
  ck_assert_ptr_nonnull(txt);
  json_error_t je;
  json_t *root = json_loads(txt, 0, &je);
  ck_assert_msg(root != NULL, "not JSON: %s", je.text);
  ck_assert_str_eq(json_string_value(json_object_get(root, "format")), "scatterprop-summary");
  ck_assert_int_eq(json_integer_value(json_object_get(root, "version")), 1);
  ck_assert_str_eq(json_string_value(json_object_get(root, "sha256")), t->sha256);
  json_t *meta = json_array_get(json_object_get(root, "metadata"), 0);
  ck_assert_str_eq(json_string_value(json_object_get(meta, "key")), "gauge");
  ck_assert_str_eq(json_string_value(json_object_get(meta, "value")), "G1");
  ck_assert_int_eq(json_integer_value(json_object_get(meta, "line")), 1);
  json_t *sk = json_array_get(json_object_get(root, "skipped_rows"), 0);
  ck_assert_int_eq(json_integer_value(json_object_get(sk, "line")), 5);
  ck_assert_int_eq(json_integer_value(json_object_get(sk, "column")), 2);
  ASSERT_HAS(json_string_value(json_object_get(sk, "reason")), "'O.5' is not a number");
  json_t *tc = json_object_get(root, "text_columns");
  ck_assert_uint_eq(json_array_size(tc), 2);
  ck_assert_str_eq(json_string_value(json_array_get(tc, 0)), "lot");
  ck_assert_str_eq(json_string_value(json_array_get(tc, 1)), "note");
  json_t *col = json_array_get(json_object_get(root, "columns"), 0);
  ck_assert_str_eq(json_string_value(json_object_get(col, "unit")), "mm");
  json_t *groups = json_object_get(col, "groups");
  ck_assert_uint_eq(json_array_size(groups), 3);
  json_t *gb = json_array_get(groups, 1);
  ck_assert_str_eq(json_string_value(json_object_get(gb, "group")), "B");
  ck_assert_int_eq(json_integer_value(json_object_get(gb, "n")), 1);
  ck_assert(json_is_null(json_object_get(gb, "sd"))); /* one value has no sd */
  json_t *pooled = json_array_get(groups, 2);
  ck_assert(json_is_null(json_object_get(pooled, "group")));
  /* 1, 2, 4: mean 7/3 at full precision. */
  ck_assert(json_real_value(json_object_get(pooled, "mean")) == 7.0 / 3.0);
  json_decref(root);
  free(txt);
  sp_summary_set_free(s);
  sp_table_free(t);
}
END_TEST

START_TEST(test_json_never_drops_text)
{
  /* jansson refuses strings that are not UTF-8; a file name with a stray
   * byte is written with '?' in its place rather than left out. */
  const char *csv = "d [mm]\n1\n";
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read_buffer("caf\xE9.csv", csv, strlen(csv), NULL, &t, &err), SP_OK);
  sp_summary_set *s = NULL;
  ck_assert_int_eq(sp_summary_build(t, NULL, 0, NULL, &s, &err), SP_OK);
  char *txt = sp_summary_json(s, &err);
  json_t *root = json_loads(txt, 0, NULL);
  ck_assert_ptr_nonnull(root);
  ck_assert_str_eq(json_string_value(json_object_get(root, "file")), "caf?.csv");
  json_decref(root);
  free(txt);
  sp_summary_set_free(s);
  sp_table_free(t);
}
END_TEST

START_TEST(test_many_groups)
{
  /* Grouping by a part number makes every row its own group; the groups
   * are found in time linear in the rows (a search of the group list per
   * row took half a minute for 50 000 rows, so some 8 minutes here, past
   * the test's timeout), in order of first appearance. */
  size_t rows = 200000, cap = rows * 20 + 32, len = 0;
  char *csv = malloc(cap);
  len += (size_t)snprintf(csv + len, cap - len, "part,d [mm]\n");
  for (size_t i = 0; i < rows; i++)
    len += (size_t)snprintf(csv + len, cap - len, "P%06zu,%zu\n", (i * 7919) % rows, i);
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read_buffer("m.csv", csv, len, NULL, &t, &err), SP_OK);
  sp_group *g = NULL;
  size_t ng = 0;
  ck_assert_int_eq(sp_table_groups(t, "part", &g, &ng, &err), SP_OK);
  /* 7919 is a prime other than 2 and 5: i -> 7919 i mod (2 10^5) is one to one. */
  ck_assert_uint_eq(ng, rows);
  ck_assert_str_eq(g[0].label, "P000000");
  ck_assert_str_eq(g[1].label, "P007919");
  for (size_t k = 0; k < ng; k++)
    ck_assert(g[k].n == 1 && g[k].rows[0] == k);
  sp_groups_free(g, ng);
  /* A few groups over many rows: the rows of each, ascending. */
  sp_table_free(t);
  len = (size_t)snprintf(csv, cap, "lot,d [mm]\n");
  for (size_t i = 0; i < rows; i++)
    len += (size_t)snprintf(csv + len, cap - len, "L%zu,%zu\n", (i * i) % 3, i);
  ck_assert_int_eq(sp_table_read_buffer("m.csv", csv, len, NULL, &t, &err), SP_OK);
  ck_assert_int_eq(sp_table_groups(t, "lot", &g, &ng, &err), SP_OK);
  ck_assert_uint_eq(ng, 2); /* squares mod 3 are 0 and 1 */
  ck_assert_str_eq(g[0].label, "L0");
  ck_assert_uint_eq(g[0].n + g[1].n, rows);
  for (size_t k = 1; k < g[1].n; k++)
    ck_assert(g[1].rows[k] > g[1].rows[k - 1]);
  ck_assert_uint_eq(g[0].n, (rows + 2) / 3); /* i = 0 mod 3 */
  sp_groups_free(g, ng);
  sp_table_free(t);
  free(csv);
}
END_TEST

static Suite *summary_suite(void)
{
  Suite *s = suite_create("summary");
  TCase *tc = tcase_create("summary");
  tcase_add_test(tc, test_grouped_and_pooled);
  tcase_add_test(tc, test_columns_named_once);
  tcase_add_test(tc, test_errors);
  tcase_add_test(tc, test_decimals);
  tcase_add_test(tc, test_json);
  tcase_add_test(tc, test_json_never_drops_text);
  tcase_add_test(tc, test_many_groups);
  suite_add_tcase(s, tc);
  return s;
}

int main(void)
{
  return sp_run_suite(summary_suite());
}
