/* Tests of the ingest module: CSV reading, units in headers, metadata,
 * missing cells, and every error with its message and position.
 *
 * The CSV rules tested are those of RFC 4180 (Shafranovich 2005, "Common
 * Format and MIME Type for Comma-Separated Values (CSV) Files"): fields
 * containing commas, quotes or line breaks are enclosed in double quotes, a
 * quote inside is doubled, records end in CRLF (LF is accepted too). */
#include <locale.h>
#include <string.h>
#include <unistd.h>

#include "scatterprop/ingest.h"
#include "sp_test.h"

static sp_table *read_ok(const char *csv, const sp_ingest_options *opt)
{
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  sp_status s = sp_table_read_buffer("t.csv", csv, strlen(csv), opt, &t, &err);
  char buf[2048];
  sp_error_format(&err, buf, sizeof buf);
  ck_assert_msg(s == SP_OK, "unexpected error: %s", buf);
  return t;
}

/* Reads csv, expects failure with status code at line:col, and a message
 * containing want. */
static void read_fails(const char *csv, const sp_ingest_options *opt, sp_status code, long line,
                       long col, const char *want)
{
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  sp_status s = sp_table_read_buffer("t.csv", csv, strlen(csv), opt, &t, &err);
  char buf[2048];
  sp_error_format(&err, buf, sizeof buf);
  ck_assert_msg(s == code, "status %d, want %d (%s)", (int)s, (int)code, buf);
  ck_assert_ptr_null(t);
  ck_assert_msg(err.line == line && err.col == col, "position %ld:%ld, want %ld:%ld (%s)",
                err.line, err.col, line, col, buf);
  ck_assert_msg(strstr(err.msg, want) != NULL, "message '%s' lacks '%s'", err.msg, want);
}

/* As read_fails, and the hint must contain hint_want. */
static void read_fails_hint(const char *csv, const sp_ingest_options *opt, sp_status code,
                            long line, long col, const char *want, const char *hint_want)
{
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  sp_status s = sp_table_read_buffer("t.csv", csv, strlen(csv), opt, &t, &err);
  char buf[2048];
  sp_error_format(&err, buf, sizeof buf);
  ck_assert_msg(s == code, "status %d, want %d (%s)", (int)s, (int)code, buf);
  ck_assert_ptr_null(t);
  ck_assert_msg(err.line == line && err.col == col, "position %ld:%ld, want %ld:%ld (%s)", err.line,
                err.col, line, col, buf);
  ck_assert_msg(strstr(err.msg, want) != NULL, "message '%s' lacks '%s'", err.msg, want);
  ck_assert_msg(strstr(err.hint, hint_want) != NULL, "hint '%s' lacks '%s'", err.hint, hint_want);
}

START_TEST(test_basic_units_and_metadata)
{
  sp_table *t = read_ok("# gauge: MC-07\n# lot: 24-117\n# invented demo data\n"
                        "part,wire_d [mm],load [N]\nS1,0.512,120.5\nS2,0.515,118\n",
                        NULL);
  ck_assert_uint_eq(t->nrows, 2);
  ck_assert_uint_eq(t->ncols, 3);
  ck_assert_int_eq(t->header_line, 4);
  ck_assert_uint_eq(t->nmeta, 3);
  ck_assert_str_eq(sp_table_meta(t, "gauge"), "MC-07");
  ck_assert_str_eq(sp_table_meta(t, "lot"), "24-117");
  ck_assert_str_eq(t->meta[2].key, "");
  ck_assert_str_eq(t->meta[2].value, "invented demo data");
  const sp_column *d = sp_table_column(t, "wire_d");
  ck_assert_ptr_nonnull(d);
  ck_assert_ptr_eq(d, sp_table_column(t, "wire_d [mm]"));
  ck_assert_int_eq(d->kind, SP_COLUMN_NUMERIC);
  ck_assert_str_eq(d->unit_text, "mm");
  ck_assert_ptr_nonnull(d->unit);
  ck_assert(d->values[0] == 0.512 && d->values[1] == 0.515);
  const sp_column *p = sp_table_column(t, "part");
  ck_assert_int_eq(p->kind, SP_COLUMN_TEXT);
  ck_assert_str_eq(p->text[1], "S2");
  ck_assert_ptr_null(p->unit);
  sp_table_free(t);
}
END_TEST

START_TEST(test_quoted_fields)
{
  /* RFC 4180 section 2, rules 5-7: quoted fields, embedded comma, doubled
   * quote, embedded line break. */
  sp_table *t = read_ok("note,x [mm]\n\"a, b\",1\n\"say \"\"hi\"\"\",2\n\"two\nlines\",3\n"
                        "plain,4\n",
                        NULL);
  ck_assert_uint_eq(t->nrows, 4);
  const sp_column *n = sp_table_column(t, "note");
  ck_assert_str_eq(n->text[0], "a, b");
  ck_assert_str_eq(n->text[1], "say \"hi\"");
  ck_assert_str_eq(n->text[2], "two\nlines");
  ck_assert(sp_table_column(t, "x")->values[3] == 4.0);
  sp_table_free(t);
}
END_TEST

START_TEST(test_embedded_newline_keeps_line_numbers)
{
  /* The record after a two-line quoted cell starts on line 4: an error
   * there must say line 4, not 3. */
  read_fails("note,x [mm]\n\"two\nlines\",3\nfine,oops\n", NULL, SP_EDATA, 4, 2,
             "'oops' is not a number");
}
END_TEST

START_TEST(test_crlf)
{
  sp_table *t = read_ok("a [mm],b [mm]\r\n1,2\r\n3,4\r\n", NULL);
  ck_assert_uint_eq(t->nrows, 2);
  ck_assert(t->cols[1].values[1] == 4.0);
  sp_table_free(t);
  read_fails("a [mm],b [mm]\r\n1,2\r\n3,x\r\n", NULL, SP_EDATA, 3, 2, "'x' is not a number");
}
END_TEST

START_TEST(test_bom)
{
  sp_table *t = read_ok("\xEF\xBB\xBFwire_d [mm]\n0.5\n", NULL);
  ck_assert_ptr_nonnull(sp_table_column(t, "wire_d"));
  ck_assert_str_eq(t->cols[0].name, "wire_d");
  sp_table_free(t);
}
END_TEST

START_TEST(test_empty_file)
{
  read_fails("", NULL, SP_EDATA, 0, 0, "no header line");
  read_fails("# only: comments\n\n", NULL, SP_EDATA, 0, 0, "no header line");
}
END_TEST

START_TEST(test_header_only)
{
  sp_table *t = read_ok("a [mm],b\n", NULL);
  ck_assert_uint_eq(t->nrows, 0);
  ck_assert_uint_eq(t->ncols, 2);
  sp_table_free(t);
}
END_TEST

START_TEST(test_ragged_rows)
{
  read_fails("a [mm],b [mm]\n1,2\n3\n", NULL, SP_EDATA, 3, 1, "this row has 1 field, the header has 2");
  read_fails("a [mm],b [mm]\n1,2\n3,4,5\n", NULL, SP_EDATA, 3, 3, "this row has 3 fields");
}
END_TEST

START_TEST(test_text_in_numeric_column)
{
  /* The example of the issue: a letter O typed for a zero. */
  read_fails("part,lot,wire_d [mm]\nS1,L1,0.51\nS2,L1,O.52\n", NULL, SP_EDATA, 3, 3,
             "'O.52' is not a number (column \"wire_d [mm]\")");
}
END_TEST

START_TEST(test_unitless_column_kind_from_first_value)
{
  sp_table *t = read_ok("a,b\n1.5,x\n2.5,y\n", NULL);
  ck_assert_int_eq(t->cols[0].kind, SP_COLUMN_NUMERIC);
  ck_assert_int_eq(t->cols[1].kind, SP_COLUMN_TEXT);
  sp_table_free(t);
  read_fails("a,b\n1.5,x\nbad,y\n", NULL, SP_EDATA, 3, 1, "'bad' is not a number (column \"a\")");
}
END_TEST

START_TEST(test_nan_inf_text)
{
  read_fails("x [mm]\n1\nnan\n", NULL, SP_EDATA, 3, 1, "'nan' is not a number");
  read_fails("x [mm]\n1\ninf\n", NULL, SP_EDATA, 3, 1, "'inf' is not a number");
  read_fails("x [mm]\n1\n-Infinity\n", NULL, SP_EDATA, 3, 1, "'-Infinity' is not a number");
  read_fails("x [mm]\n0x1p3\n", NULL, SP_EDATA, 2, 1, "'0x1p3' is not a number");
}
END_TEST

START_TEST(test_out_of_range)
{
  read_fails("x [mm]\n1e400\n", NULL, SP_EDATA, 2, 1, "'1e400' is out of the range of a double");
  read_fails("x [mm]\n-1e400\n", NULL, SP_EDATA, 2, 1, "out of the range");
  /* Underflow is a value, not an error: 1e-400 reads as 0 (below the
   * smallest subnormal, 4.9e-324). */
  sp_table *t = read_ok("x [mm]\n1e-400\n1.5e-3\n-0.25\n+2\n.5\n5.\n1E3\n", NULL);
  const double *v = t->cols[0].values;
  ck_assert(v[0] == 0.0 && v[1] == 1.5e-3 && v[2] == -0.25 && v[3] == 2.0);
  ck_assert(v[4] == 0.5 && v[5] == 5.0 && v[6] == 1000.0);
  sp_table_free(t);
}
END_TEST

START_TEST(test_missing_cells)
{
  sp_table *t = read_ok("x [mm],y [N]\n1,\nNA,2\n  ,3\n4,NA\n", NULL);
  const sp_column *x = &t->cols[0], *y = &t->cols[1];
  ck_assert_uint_eq(x->nmissing, 2);
  ck_assert_uint_eq(y->nmissing, 2);
  ck_assert(x->flags[1] == SP_OBS_MISSING && isnan(x->values[1]));
  ck_assert(x->flags[2] == SP_OBS_MISSING);
  ck_assert(x->flags[0] == SP_OBS_OK && x->values[0] == 1.0);
  ck_assert(y->flags[0] == SP_OBS_MISSING && y->values[1] == 2.0);
  sp_table_free(t);
}
END_TEST

START_TEST(test_all_missing_then_text)
{
  /* A unitless column whose first readings are missing takes its kind from
   * the first reading there is. */
  sp_table *t = read_ok("lot,x [mm]\n,1\n,2\nL7,3\n", NULL);
  ck_assert_int_eq(t->cols[0].kind, SP_COLUMN_TEXT);
  ck_assert_str_eq(t->cols[0].text[0], "");
  ck_assert_str_eq(t->cols[0].text[2], "L7");
  ck_assert_uint_eq(t->cols[0].nmissing, 2);
  sp_table_free(t);
}
END_TEST

START_TEST(test_decimal_comma)
{
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.decimal_comma = 1;
  sp_table *t = read_ok("lot;d [mm]\nA;1,5\nB;\"2,25\"\nC;-3e-2\n", &o);
  ck_assert(t->cols[1].values[0] == 1.5 && t->cols[1].values[1] == 2.25);
  ck_assert(t->cols[1].values[2] == -0.03);
  sp_table_free(t);
  /* '.' is refused in this mode: it may be a thousands separator. */
  read_fails("d [mm]\n1.234\n", &o, SP_EDATA, 2, 1, "'1.234' is not a number");
  /* Without the option, a quoted "1,5" is not a number, and the hint says why. */
  sp_error err;
  sp_error_clear(&err);
  sp_table *t2 = NULL;
  const char *csv = "d [mm]\n\"1,5\"\n";
  ck_assert_int_eq(sp_table_read_buffer("t.csv", csv, strlen(csv), NULL, &t2, &err), SP_EDATA);
  ck_assert_ptr_nonnull(strstr(err.hint, "--decimal-comma"));
}
END_TEST

START_TEST(test_locale_independent)
{
  /* Parsing does not depend on LC_NUMERIC.  de_DE may not be installed: if
   * setlocale fails, the test still checks the "C" result. */
  const char *loc = setlocale(LC_NUMERIC, "de_DE.UTF-8");
  sp_table *t = read_ok("x [mm]\n1.5\n", NULL);
  ck_assert(t->cols[0].values[0] == 1.5);
  sp_table_free(t);
  if (loc) setlocale(LC_NUMERIC, "C");
}
END_TEST

START_TEST(test_long_line)
{
  /* A cell of 100 000 characters reads fine (below the 1 MiB cell limit). */
  size_t n = 100000;
  char *csv = malloc(n + 64);
  strcpy(csv, "note,x [mm]\n");
  size_t off = strlen(csv);
  memset(csv + off, 'a', n);
  strcpy(csv + off + n, ",1\n");
  sp_table *t = read_ok(csv, NULL);
  ck_assert_uint_eq(strlen(t->cols[0].text[0]), n);
  sp_table_free(t);
  free(csv);
}
END_TEST

START_TEST(test_over_long_cell)
{
  size_t n = SP_INGEST_MAX_FIELD_BYTES + 10;
  char *csv = malloc(n + 64);
  strcpy(csv, "note,x [mm]\n");
  size_t off = strlen(csv);
  memset(csv + off, 'a', n);
  strcpy(csv + off + n, ",1\n");
  read_fails(csv, NULL, SP_ELIMIT, 2, 1, "longer than the limit");
  free(csv);
}
END_TEST

START_TEST(test_unclosed_quote)
{
  read_fails("note,x [mm]\nok,1\n\"never closed,2\nmore,3\n", NULL, SP_EDATA, 3, 1,
             "never closed");
}
END_TEST

START_TEST(test_malformed_quote)
{
  read_fails("note,x [mm]\n\"closed\"junk,1\n", NULL, SP_EDATA, 2, 1, "malformed quoting");
}
END_TEST

START_TEST(test_duplicate_and_empty_names)
{
  read_fails("d [mm],load [N],d [in]\n1,2,3\n", NULL, SP_EDATA, 1, 3,
             "column name 'd' is used twice (also header cell 1)");
  read_fails("a [mm],,c\n1,2,3\n", NULL, SP_EDATA, 1, 2, "header cell 2 has no column name");
  read_fails("a [mm], [N]\n1,2\n", NULL, SP_EDATA, 1, 2, "has no column name (only a unit)");
}
END_TEST

START_TEST(test_bad_unit_syntax)
{
  read_fails("d [mm\n1\n", NULL, SP_EDATA, 1, 1, "a unit goes in brackets at the end");
  read_fails("x,d mm]\n1,2\n", NULL, SP_EDATA, 1, 2, "a unit goes in brackets");
  read_fails("d [mm] extra\n1\n", NULL, SP_EDATA, 1, 1, "a unit goes in brackets at the end");
}
END_TEST

START_TEST(test_unknown_unit)
{
  read_fails("part,d [furlongs_per_blorp]\nS1,2\n", NULL, SP_EDATA, 1, 2,
             "header cell 'd [furlongs_per_blorp]'");
}
END_TEST

START_TEST(test_derived_units)
{
  sp_table *t = read_ok("k [N/mm],G [GPa],s [N.mm-2],T [degC]\n4.8,79.3,700,20\n", NULL);
  for (size_t i = 0; i < 4; i++) ck_assert_ptr_nonnull(t->cols[i].unit);
  sp_table_free(t);
}
END_TEST

START_TEST(test_skip_bad_rows)
{
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.skip_bad_rows = 1;
  sp_table *t = read_ok("x [mm],y [mm]\n1,2\nO.5,3\n4\n5,6\n7,8,9\n", &o);
  ck_assert_uint_eq(t->nrows, 2);
  ck_assert(t->cols[0].values[1] == 5.0);
  ck_assert_uint_eq(t->nskipped, 3);
  ck_assert_int_eq(t->skipped[0].line, 3);
  ck_assert_int_eq(t->skipped[0].col, 1);
  ck_assert_ptr_nonnull(strstr(t->skipped[0].reason, "'O.5' is not a number"));
  ck_assert_int_eq(t->skipped[1].line, 4);
  ck_assert_int_eq(t->skipped[2].line, 6);
  sp_table_free(t);
}
END_TEST

START_TEST(test_column_selection)
{
  const char *cols[] = {"b"};
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.columns = cols;
  o.ncolumns = 1;
  /* Column a holds junk, but it is not read, so it is not an error. */
  sp_table *t = read_ok("a [mm],b [mm]\njunk,2\n", &o);
  ck_assert_uint_eq(t->ncols, 1);
  ck_assert_str_eq(t->cols[0].name, "b");
  sp_table_free(t);
  const char *bad[] = {"nope"};
  o.columns = bad;
  sp_error err;
  sp_error_clear(&err);
  sp_table *t2 = NULL;
  const char *csv = "a [mm],b [mm]\n1,2\n";
  ck_assert_int_eq(sp_table_read_buffer("t.csv", csv, strlen(csv), &o, &t2, &err), SP_EDATA);
  ck_assert_ptr_nonnull(strstr(err.msg, "no column named 'nope'"));
  ck_assert_int_eq(err.line, 1); /* the header line: no cell holds it */
  ck_assert_ptr_nonnull(strstr(err.hint, "'a', 'b'"));
}
END_TEST

START_TEST(test_blank_lines_and_spaces)
{
  sp_table *t = read_ok("\n# k: v\n\n x [mm] , y\n 1.5 , a b \n\n2,c\n", NULL);
  ck_assert_uint_eq(t->nrows, 2);
  ck_assert_str_eq(t->cols[0].name, "x");
  ck_assert(t->cols[0].values[0] == 1.5);
  ck_assert_str_eq(t->cols[1].text[0], "a b");
  ck_assert_int_eq(t->header_line, 4);
  sp_table_free(t);
}
END_TEST

START_TEST(test_nul_byte)
{
  const char csv[] = "x [mm]\n1\0002\n";
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read_buffer("t.csv", csv, sizeof csv - 1, NULL, &t, &err), SP_EDATA);
  ck_assert_ptr_nonnull(strstr(err.msg, "NUL byte"));
  ck_assert_ptr_nonnull(strstr(err.hint, "UTF-16"));
  ck_assert_int_eq(err.line, 2);
  ck_assert_int_eq(err.col, 1);
}
END_TEST

START_TEST(test_metadata_across_chunks)
{
  /* A file whose '#' block is longer than the 1 MiB read chunk: the line cut
   * by the chunk's end must still be read as one metadata line. */
  char path[] = "/tmp/sp_ingest_meta_XXXXXX";
  int fd = mkstemp(path);
  FILE *fp = fdopen(fd, "w");
  for (int i = 0; i < 30000; i++) fprintf(fp, "# key%05d: a value long enough to fill the chunk\n", i);
  fprintf(fp, "x [mm]\n1\n");
  fclose(fp);
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read(path, NULL, &t, &err), SP_OK);
  ck_assert_uint_eq(t->nmeta, 30000);
  ck_assert_str_eq(sp_table_meta(t, "key29999"), "a value long enough to fill the chunk");
  ck_assert_int_eq(t->header_line, 30001);
  ck_assert_uint_eq(t->nrows, 1);
  sp_table_free(t);
  unlink(path);
}
END_TEST

START_TEST(test_no_trailing_newline)
{
  sp_table *t = read_ok("x [mm]\n1\n2", NULL);
  ck_assert_uint_eq(t->nrows, 2);
  ck_assert(t->cols[0].values[1] == 2.0);
  sp_table_free(t);
}
END_TEST

START_TEST(test_file_and_sha256)
{
  /* SHA-256 of the three bytes "abc": FIPS 180-2, Appendix B.1. */
  char path[] = "/tmp/sp_ingest_XXXXXX";
  int fd = mkstemp(path);
  ck_assert_int_ge(fd, 0);
  const char *csv = "x [mm]\n1\n2\n";
  ck_assert_int_eq(write(fd, csv, strlen(csv)), (int)strlen(csv));
  close(fd);
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read(path, NULL, &t, &err), SP_OK);
  ck_assert_uint_eq(t->size, strlen(csv));
  char hex[SP_SHA256_HEX_LEN];
  sp_sha256_buffer(csv, strlen(csv), hex);
  ck_assert_str_eq(t->sha256, hex);
  sp_table_free(t);
  unlink(path);
  sp_sha256_buffer("abc", 3, hex);
  ck_assert_str_eq(hex, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  ck_assert_int_eq(sp_table_read("/nonexistent/x.csv", NULL, &t, &err), SP_EIO);
  ck_assert_ptr_nonnull(strstr(err.msg, "cannot open"));
}
END_TEST

START_TEST(test_many_rows_chunked)
{
  /* Larger than the 1 MiB read chunk, so lines straddle chunk edges. */
  size_t rows = 200000;
  char path[] = "/tmp/sp_ingest_big_XXXXXX";
  int fd = mkstemp(path);
  FILE *fp = fdopen(fd, "w");
  fprintf(fp, "# k: v\nlot,x [mm],y [N]\n");
  for (size_t i = 0; i < rows; i++) fprintf(fp, "L%zu,%zu.25,\"%zu\"\n", i % 3, i, i * 2);
  fclose(fp);
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read(path, NULL, &t, &err), SP_OK);
  ck_assert_uint_eq(t->nrows, rows);
  for (size_t i = 0; i < rows; i += 997) {
    ck_assert(t->cols[1].values[i] == (double)i + 0.25);
    ck_assert(t->cols[2].values[i] == (double)(2 * i));
  }
  ck_assert_str_eq(t->cols[0].text[rows - 1], "L1"); /* 199999 mod 3 = 1 */
  sp_table_free(t);
  unlink(path);
}
END_TEST

START_TEST(test_utf8)
{
  /* Well-formed UTF-8 (RFC 3629) is kept as it is: a micro sign in a unit,
   * an umlaut in a lot id and in metadata. */
  sp_table *t = read_ok("# Pr\xC3\xBC"
                        "fer: J. M\xC3\xBC"
                        "ller\nlot,d [\xC2\xB5m]\n"
                        "Charge-\xC3\x84,12.5\n",
                        NULL);
  ck_assert_str_eq(t->cols[1].unit_text, "\xC2\xB5m");
  ck_assert_str_eq(t->cols[0].text[0], "Charge-\xC3\x84");
  ck_assert_str_eq(sp_table_meta(t, "Pr\xC3\xBC"
                                    "fer"),
                   "J. M\xC3\xBC"
                   "ller");
  sp_table_free(t);
  /* Latin-1 bytes (a micro sign 0xB5, a degree sign 0xB0) are refused where
   * they stand, and the message does not quote them back. */
  read_fails_hint("d [\xB5m]\n1\n", NULL, SP_EDATA, 1, 1,
                  "header cell 1 is not valid UTF-8 (byte 0xB5 at byte 4 of the cell)",
                  "save the file as UTF-8");
  read_fails_hint("# temp: 20 \xB0"
                  "C\nd [mm]\n1\n",
                  NULL, SP_EDATA, 1, 1,
                  "'#' metadata line is not valid UTF-8 (byte 0xB0 at byte 12", "UTF-8");
  read_fails_hint("lot,d [mm]\nA,1\nB\xE9,2\n", NULL, SP_EDATA, 3, 1,
                  "the cell is not valid UTF-8 (byte 0xE9 at byte 2 of the cell; column \"lot\")",
                  "UTF-8");
  read_fails("lot,d [mm]\nA,1\nB,2\xFF\n", NULL, SP_EDATA, 3, 2,
             "the cell is not valid UTF-8 (byte 0xFF at byte 2 of the cell; column \"d [mm]\")");
  /* Ill-formed sequences of RFC 3629 section 4: an overlong '/' (C0 AF), a
   * surrogate (ED A0 80), a code point above U+10FFFF (F4 90 80 80), a lone
   * continuation byte, a sequence cut short. */
  read_fails("lot\n\xC0\xAF\n", NULL, SP_EDATA, 2, 1, "byte 0xC0 at byte 1");
  read_fails("lot\nx\xED\xA0\x80\n", NULL, SP_EDATA, 2, 1, "byte 0xED at byte 2");
  read_fails("lot\n\xF4\x90\x80\x80\n", NULL, SP_EDATA, 2, 1, "byte 0xF4 at byte 1");
  read_fails("lot\nab\x80\n", NULL, SP_EDATA, 2, 1, "byte 0x80 at byte 3");
  read_fails("lot\nab\xE2\x82\n", NULL, SP_EDATA, 2, 1, "byte 0xE2 at byte 3");
  /* The largest code point, U+10FFFF (F4 8F BF BF), is well formed. */
  t = read_ok("lot\n\xF4\x8F\xBF\xBF\n", NULL);
  sp_table_free(t);
  /* With skip_bad_rows such a row is skipped and listed like any bad row;
   * a column that is not kept is not looked at. */
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.skip_bad_rows = 1;
  t = read_ok("lot,d [mm]\nA,1\nB\xE9,2\nC,3\n", &o);
  ck_assert_uint_eq(t->nrows, 2);
  ck_assert_uint_eq(t->nskipped, 1);
  ck_assert_int_eq(t->skipped[0].line, 3);
  ck_assert_int_eq(t->skipped[0].col, 1);
  ck_assert_ptr_nonnull(strstr(t->skipped[0].reason, "not valid UTF-8"));
  sp_table_free(t);
  const char *only_d[] = {"d"};
  sp_ingest_options_init(&o);
  o.columns = only_d;
  o.ncolumns = 1;
  t = read_ok("lot,d [mm]\nA,1\nB\xE9,2\n", &o);
  ck_assert_uint_eq(t->nrows, 2);
  sp_table_free(t);
}
END_TEST

START_TEST(test_utf16_refused)
{
  /* UTF-16 little- and big-endian byte-order marks (FF FE, FE FF). */
  static const char le[] = "\xFF\xFEx\0\n\0";
  static const char be[] = "\xFE\xFF\0x\0\n";
  const char *data[2] = {le, be};
  for (int k = 0; k < 2; k++) {
    sp_error err;
    sp_error_clear(&err);
    sp_table *t = NULL;
    ck_assert_int_eq(sp_table_read_buffer("u.csv", data[k], 6, NULL, &t, &err), SP_EDATA);
    ck_assert_ptr_null(t);
    ck_assert_int_eq(err.line, 1);
    ck_assert_ptr_nonnull(strstr(err.msg, "UTF-16"));
    ck_assert_ptr_nonnull(strstr(err.hint, "UTF-8"));
  }
}
END_TEST

START_TEST(test_cr_line_ends)
{
  /* Bare CR line ends (old spreadsheet exports): metadata, header and rows
   * as with LF, and errors on the right line. */
  sp_table *t = read_ok("# gauge: MC-07\r\rpart,d [mm]\r\"a\rb\",1.5\rS2,2\r", NULL);
  ck_assert_str_eq(sp_table_meta(t, "gauge"), "MC-07");
  ck_assert_int_eq(t->header_line, 3);
  ck_assert_uint_eq(t->nrows, 2);
  ck_assert_str_eq(t->cols[0].text[0], "a\nb"); /* a bare CR in a quoted cell reads as LF */
  ck_assert(t->cols[1].values[1] == 2.0);
  sp_table_free(t);
  read_fails("d [mm]\r1\r\r2\rx\r", NULL, SP_EDATA, 5, 1, "'x' is not a number");
  /* CRLF files keep their line numbers (a CR before each LF is no line). */
  read_fails("d [mm]\r\n1\r\n\r\nx\r\n", NULL, SP_EDATA, 4, 1, "'x' is not a number");
  /* Over the 1 MiB chunk, in a file. */
  char path[] = "/tmp/sp_ingest_cr_XXXXXX";
  int fd = mkstemp(path);
  FILE *fp = fdopen(fd, "w");
  fprintf(fp, "# k: v\rd [mm]\r");
  for (int i = 0; i < 200000; i++)
    fprintf(fp, "%d.5\r", i);
  fprintf(fp, "oops\r");
  fclose(fp);
  sp_error err;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_table_read(path, NULL, &t, &err), SP_EDATA);
  ck_assert_int_eq(err.line, 200003);
  unlink(path);
}
END_TEST

START_TEST(test_text_columns)
{
  /* Lot ids written as numbers are read as text when the caller names the
   * column; a column with a unit stays numeric; unknown names are ignored. */
  const char *csv = "lot,batch,d [mm]\n117,007,1.5\n131,007,2.5\n117,,3.5\n";
  const char *names[] = {"lot", "d", "nosuch", "batch"};
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.text_columns = names;
  o.ntext_columns = 4;
  sp_table *t = read_ok(csv, &o);
  ck_assert_int_eq(t->cols[0].kind, SP_COLUMN_TEXT);
  ck_assert_str_eq(t->cols[0].text[1], "131");
  ck_assert_int_eq(t->cols[1].kind, SP_COLUMN_TEXT);
  ck_assert_str_eq(t->cols[1].text[0], "007"); /* as written, leading zeros kept */
  ck_assert_str_eq(t->cols[1].text[2], "");
  ck_assert_uint_eq(t->cols[1].nmissing, 1);
  ck_assert_int_eq(t->cols[2].kind, SP_COLUMN_NUMERIC);
  sp_table_free(t);
  t = read_ok(csv, NULL);
  ck_assert_int_eq(t->cols[0].kind, SP_COLUMN_NUMERIC);
  sp_table_free(t);
}
END_TEST

START_TEST(test_separator_mismatch)
{
  /* A ';'-separated export read without --decimal-comma, and a
   * ','-separated file read with it: refused at the header, not read as one
   * text column or, worse, as one column of wrong numbers (1,2 -> 1.2). */
  read_fails_hint("part;d [mm]\nA1;2,001\n", NULL, SP_EDATA, 1, 1,
                  "the header is one cell, 'part;d [mm]', that holds ';'", "--decimal-comma");
  read_fails_hint("a [mm];b [N]\n1;2\n", NULL, SP_EDATA, 1, 1, "a unit goes in brackets at the end",
                  "give --decimal-comma");
  sp_ingest_options o;
  sp_ingest_options_init(&o);
  o.decimal_comma = 1;
  read_fails_hint("x,y\n1,2\n", &o, SP_EDATA, 1, 1,
                  "with --decimal-comma, ';' separates the cells, but the header is one cell, "
                  "'x,y', that holds ','",
                  "leave out --decimal-comma");
  read_fails_hint("a [mm],b [N]\n1,2\n", &o, SP_EDATA, 1, 1, "a unit goes in brackets at the end",
                  "leave it out");
  /* A decimal-comma number in a ','-separated file is a ragged row, whose
   * hint names the option. */
  read_fails_hint("d [mm]\n1,5\n", NULL, SP_EDATA, 2, 2, "this row has 2 fields",
                  "give --decimal-comma");
}
END_TEST

START_TEST(test_hints)
{
  /* Every error says what to do about it. */
  read_fails_hint("d [mpa]\n1\n", NULL, SP_EDATA, 1, 1, "unknown unit 'mpa'", "case matters");
  read_fails_hint("d [N.]\n1\n", NULL, SP_EDATA, 1, 1, "bad unit syntax", "quotients");
  read_fails_hint("d [mm] x\n1\n", NULL, SP_EDATA, 1, 1, "a unit goes in brackets at the end",
                  "'load [N]'");
  read_fails_hint("d [mm],\n1,\n", NULL, SP_EDATA, 1, 2, "header cell 2 has no column name",
                  "a separator at the end of the header line");
  read_fails_hint("d [mm],d [N]\n1,2\n", NULL, SP_EDATA, 1, 2, "column name 'd' is used twice",
                  "its own name");
  read_fails_hint("d [mm],e [N]\n1,2\n# later note\n", NULL, SP_EDATA, 3, 1, "this row has 1 field",
                  "'#' lines are metadata only before the header");
  read_fails_hint("d [mm]\n1\n# later note\n", NULL, SP_EDATA, 3, 1,
                  "'# later note' is not a number", "move it above the header");
  read_fails_hint("d [mm]\n1\n2.01 mm\n", NULL, SP_EDATA, 3, 1, "'2.01 mm' is not a number",
                  "a unit goes in the header cell ('d [unit]'), not after each reading");
  read_fails_hint("F\n120\n118N\n", NULL, SP_EDATA, 3, 1, "'118N' is not a number",
                  "a unit goes in the header cell");
  read_fails_hint("F [N]\n\"1,234.5\"\n", NULL, SP_EDATA, 2, 1, "'1,234.5' is not a number",
                  "thousands separators are not read");
  read_fails_hint("F [N]\nO.52\n", NULL, SP_EDATA, 2, 1, "'O.52' is not a number",
                  "write a missing reading as an empty cell or NA");
  read_fails_hint("d [mm],note\n1,\"open\n", NULL, SP_EDATA, 2, 2, "never closed", "doubled");
  read_fails_hint("d [mm],note\n1,a\"b\n", NULL, SP_EDATA, 2, 2, "malformed quoting", "doubled");
}
END_TEST

START_TEST(test_folder_refused)
{
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  ck_assert_int_eq(sp_table_read("/tmp", NULL, &t, &err), SP_EIO);
  ck_assert_ptr_null(t);
  ck_assert_str_eq(err.msg, "/tmp: is a folder, not a CSV file");
  ck_assert_ptr_nonnull(strstr(err.hint, "CSV file"));
  ck_assert_int_eq(sp_table_read("/nonexistent/x.csv", NULL, &t, &err), SP_EIO);
  ck_assert_ptr_nonnull(strstr(err.hint, "check the path"));
}
END_TEST

START_TEST(test_buffer_over_chunks)
{
  /* The buffer reader goes through the same 1 MiB chunks as the file
   * reader: the same table and hash from both, rows straddling the edges. */
  size_t rows = 150000, cap = rows * 24 + 64, len = 0;
  char *csv = malloc(cap);
  len += (size_t)snprintf(csv + len, cap - len, "# k: v\nlot,x [mm]\n");
  for (size_t i = 0; i < rows; i++)
    len += (size_t)snprintf(csv + len, cap - len, "L%zu,%zu.5\n", i % 7, i);
  ck_assert_uint_gt(len, 1u << 20);
  char path[] = "/tmp/sp_ingest_buf_XXXXXX";
  int fd = mkstemp(path);
  ck_assert_int_eq(write(fd, csv, len), (ssize_t)len);
  close(fd);
  sp_error err;
  sp_error_clear(&err);
  sp_table *a = NULL, *b = NULL;
  ck_assert_int_eq(sp_table_read_buffer("b.csv", csv, len, NULL, &a, &err), SP_OK);
  ck_assert_int_eq(sp_table_read(path, NULL, &b, &err), SP_OK);
  ck_assert_uint_eq(a->nrows, rows);
  ck_assert_uint_eq(b->nrows, rows);
  ck_assert_str_eq(a->sha256, b->sha256);
  ck_assert_uint_eq(a->size, len);
  for (size_t i = 0; i < rows; i++)
    ck_assert(a->cols[1].values[i] == b->cols[1].values[i]);
  ck_assert(a->cols[1].values[rows - 1] == (double)(rows - 1) + 0.5);
  sp_table_free(a);
  sp_table_free(b);
  unlink(path);
  free(csv);
}
END_TEST

START_TEST(test_parse_double_strict)
{
  sp_error err;
  double v;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_parse_double("  -2.5e+3 ", '.', &v, &err), SP_OK);
  ck_assert(v == -2500.0);
  ck_assert_int_eq(sp_parse_double("1.2.3", '.', &v, &err), SP_EDATA);
  ck_assert_int_eq(sp_parse_double("1e", '.', &v, &err), SP_EDATA);
  ck_assert_int_eq(sp_parse_double("e5", '.', &v, &err), SP_EDATA);
  ck_assert_int_eq(sp_parse_double("--1", '.', &v, &err), SP_EDATA);
  ck_assert_int_eq(sp_parse_double("1 000", '.', &v, &err), SP_EDATA);
  ck_assert_int_eq(sp_parse_double("", '.', &v, &err), SP_EDATA);
  /* The shortest round-trip text of 0.1 reads back as the same double. */
  ck_assert_int_eq(sp_parse_double("0.1", '.', &v, &err), SP_OK);
  ck_assert(v == 0.1);
  ck_assert_int_eq(sp_parse_double("1.7976931348623157e308", '.', &v, &err), SP_OK);
  ck_assert(v == DBL_MAX);
}
END_TEST

/* Counts on a command line: "1e6" samples is a million (common practice,
 * no source); a count must be a whole number exactly. */
START_TEST(test_parse_count)
{
  sp_error err;
  uint64_t v = 7;
  sp_error_clear(&err);
  ck_assert_int_eq(sp_parse_count("250000", &v, &err), SP_OK);
  ck_assert_uint_eq(v, 250000);
  ck_assert_int_eq(sp_parse_count("1e6", &v, &err), SP_OK);
  ck_assert_uint_eq(v, 1000000);
  ck_assert_int_eq(sp_parse_count("2.5E6", &v, &err), SP_OK);
  ck_assert_uint_eq(v, 2500000);
  ck_assert_int_eq(sp_parse_count("1e+3", &v, &err), SP_OK);
  ck_assert_uint_eq(v, 1000);
  ck_assert_int_eq(sp_parse_count("2.50e1", &v, &err), SP_OK);
  ck_assert_uint_eq(v, 25);
  ck_assert_int_eq(sp_parse_count("1.8446744073709551615e19", &v, &err), SP_OK);
  ck_assert(v == UINT64_MAX);
  static const char *const bad[] = {"1.5e0", "1e-3", "2.5", "-1e3", "1e", "e5", " 1e3",
                                    "1e3 ", "1..0", "1e20", "0x10", ""};
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    v = 7;
    sp_error_clear(&err);
    ck_assert_msg(sp_parse_count(bad[i], &v, &err) == SP_EUSAGE, "'%s' accepted", bad[i]);
    ck_assert_uint_eq(v, 7);
    ck_assert_msg(strstr(err.msg, "whole number") || strstr(err.msg, "too large"), "%s", err.msg);
  }
}
END_TEST

static Suite *ingest_suite(void)
{
  Suite *s = suite_create("ingest");
  TCase *tc = tcase_create("csv");
  tcase_add_test(tc, test_basic_units_and_metadata);
  tcase_add_test(tc, test_quoted_fields);
  tcase_add_test(tc, test_embedded_newline_keeps_line_numbers);
  tcase_add_test(tc, test_crlf);
  tcase_add_test(tc, test_bom);
  tcase_add_test(tc, test_empty_file);
  tcase_add_test(tc, test_header_only);
  tcase_add_test(tc, test_ragged_rows);
  tcase_add_test(tc, test_text_in_numeric_column);
  tcase_add_test(tc, test_unitless_column_kind_from_first_value);
  tcase_add_test(tc, test_nan_inf_text);
  tcase_add_test(tc, test_out_of_range);
  tcase_add_test(tc, test_missing_cells);
  tcase_add_test(tc, test_all_missing_then_text);
  tcase_add_test(tc, test_decimal_comma);
  tcase_add_test(tc, test_locale_independent);
  tcase_add_test(tc, test_long_line);
  tcase_add_test(tc, test_over_long_cell);
  tcase_add_test(tc, test_unclosed_quote);
  tcase_add_test(tc, test_malformed_quote);
  tcase_add_test(tc, test_duplicate_and_empty_names);
  tcase_add_test(tc, test_bad_unit_syntax);
  tcase_add_test(tc, test_unknown_unit);
  tcase_add_test(tc, test_derived_units);
  tcase_add_test(tc, test_skip_bad_rows);
  tcase_add_test(tc, test_column_selection);
  tcase_add_test(tc, test_blank_lines_and_spaces);
  tcase_add_test(tc, test_nul_byte);
  tcase_add_test(tc, test_no_trailing_newline);
  tcase_add_test(tc, test_metadata_across_chunks);
  tcase_add_test(tc, test_file_and_sha256);
  tcase_add_test(tc, test_many_rows_chunked);
  tcase_add_test(tc, test_parse_double_strict);
  tcase_add_test(tc, test_parse_count);
  tcase_add_test(tc, test_utf8);
  tcase_add_test(tc, test_utf16_refused);
  tcase_add_test(tc, test_cr_line_ends);
  tcase_add_test(tc, test_text_columns);
  tcase_add_test(tc, test_separator_mismatch);
  tcase_add_test(tc, test_hints);
  tcase_add_test(tc, test_folder_refused);
  tcase_add_test(tc, test_buffer_over_chunks);
  suite_add_tcase(s, tc);
  return s;
}

int main(void) { return sp_run_suite(ingest_suite()); }
