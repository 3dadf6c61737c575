/* scatterprop summary: check an inspection CSV and describe its columns. */
#include <stdlib.h>
#include <math.h>
#include <string.h>

#include "cli.h"
#include "scatterprop/summary.h"

void cli_summary_help(FILE *out)
{
  fprintf(out, "Usage: scatterprop summary FILE.csv [--column NAME]... [--by COLUMN] [--json]\n"
               "                           [--decimal-comma] [--skip-bad-rows]\n"
               "\n"
               "Reads an inspection CSV (header 'name [unit]', '#' metadata lines before it),\n"
               "checks every cell, and describes each numeric column: n, missing, mean,\n"
               "standard deviation (n-1), min, quartiles, max, skewness and excess kurtosis.\n"
               "\n"
               "Options:\n"
               "  --column NAME     describe only this column (repeatable; default: all numeric)\n"
               "  --by COLUMN       one line per value of this column (a lot id, read as text\n"
               "                    unless it has a unit), then the pooled line\n"
               "  --json            print the summary as JSON (full precision) instead of a table\n"
               "  --decimal-comma   ',' is the decimal separator and ';' separates cells\n"
               "  --skip-bad-rows   skip rows with a bad cell or the wrong number of cells,\n"
               "                    and list every one skipped (default: stop at the first)\n"
               "  --help            show this help\n"
               "\n"
               "Missing readings are empty cells or NA; they are counted, never read as zero.\n"
               "Exit codes: 0 ok, 2 usage, 3 bad input data, 6 I/O error.\n"
               "\n");
  cli_print_caution(out);
}

/* v with the given decimals, without the sign of a value that rounds to
 * zero ("-0.00" reads as a negative value that is not there). */
static void put_fixed(FILE *out, int width, int decimals, double v)
{
  char buf[400];
  snprintf(buf, sizeof buf, "%.*f", decimals, v);
  if (buf[0] == '-' && strspn(buf + 1, "0.") == strlen(buf + 1)) memmove(buf, buf + 1, strlen(buf));
  fprintf(out, " %*s", width, buf);
}

/* Prints v with the block's decimals (or 6 significant digits). */
static void put_value(FILE *out, int width, int decimals, double v)
{
  if (!isfinite(v)) fprintf(out, " %*s", width, "-");
  else if (decimals >= 0) put_fixed(out, width, decimals, v);
  else fprintf(out, " %*.6g", width, v);
}

static void put_shape(FILE *out, double v)
{
  if (!isfinite(v)) fprintf(out, " %6s", "-");
  else put_fixed(out, 6, 2, v);
}

/* Columns a UTF-8 text takes on a terminal: its characters (the bytes that
 * are not continuation bytes; the reader has checked it is UTF-8). */
static int text_width(const char *s)
{
  int w = 0;
  for (; *s; s++)
    w += ((unsigned char)*s & 0xC0) != 0x80;
  return w;
}

static void print_block(FILE *out, const sp_summary_set *s, const sp_summary_block *b)
{
  const sp_column *c = b->column;
  fprintf(out, "\n%s", c->name);
  if (c->unit_text) fprintf(out, "  [%s]", c->unit_text);
  else fprintf(out, "  (no unit given)");
  if (s->by) fprintf(out, "  by %s", s->by);
  fputc('\n', out);
  /* Value columns as wide as the widest value needs, at least 7. */
  int width = 7;
  const sp_summary_row *pooled = &b->rows[b->nrows - 1];
  if (pooled->has_stats) {
    double big = fmax(fabs(pooled->d.min), fabs(pooled->d.max));
    int neg = pooled->d.min < 0;
    int need = b->decimals >= 0
                   ? (big >= 1 ? (int)floor(log10(big)) + 1 : 1) + 1 + b->decimals + neg
                   : 12;
    if (need > width) width = need;
  }
  /* Group labels are never cut: two lots that differ only at the end of a
   * long id must stay apart. */
  int gw = 8;
  for (size_t g = 0; g < b->nrows; g++)
    if (b->rows[g].group && text_width(b->rows[g].group) > gw) gw = text_width(b->rows[g].group);
  fprintf(out, "  %-*s %5s %4s %*s %*s %*s %*s %*s %*s %*s %6s %6s\n", gw, "group", "n",
          "miss", width, "mean", width, "sd", width, "min", width, "q1", width, "median",
          width, "q3", width, "max", "skew", "exkurt");
  for (size_t g = 0; g < b->nrows; g++) {
    const sp_summary_row *r = &b->rows[g];
    const char *label = r->group ? (r->group[0] ? r->group : "(blank)")
                                 : (s->by ? "(pooled)" : "(all)");
    fprintf(out, "  %s%*s %5zu %4zu", label, gw - text_width(label), "", r->has_stats ? r->d.n : 0,
            r->missing);
    if (!r->has_stats) {
      fprintf(out, "  every value is missing\n");
      continue;
    }
    put_value(out, width, b->decimals, r->d.mean);
    put_value(out, width, b->decimals, r->d.sd);
    put_value(out, width, b->decimals, r->d.min);
    put_value(out, width, b->decimals, r->d.q1);
    put_value(out, width, b->decimals, r->d.median);
    put_value(out, width, b->decimals, r->d.q3);
    put_value(out, width, b->decimals, r->d.max);
    put_shape(out, r->d.skewness);
    put_shape(out, r->d.kurtosis);
    fputc('\n', out);
  }
}

int cli_summary_run(int argc, char **argv)
{
  const char *file = NULL, *by = NULL;
  const char **columns = calloc((size_t)argc + 1, sizeof *columns);
  size_t ncolumns = 0;
  int json = 0, rc = CLI_OK;
  sp_ingest_options opt;
  sp_ingest_options_init(&opt);
  if (!columns) return CLI_NUMERIC;
  for (int i = 1; i < argc && rc == CLI_OK; i++) {
    const char *v;
    int m;
    if ((m = cli_opt_value("summary", argc, argv, &i, "--column", &v, &rc)) != 0) {
      if (m > 0 && !v[0])
        rc = cli_usage("summary", "--column needs a column name");
      else if (m > 0)
        columns[ncolumns++] = v;
    } else if ((m = cli_opt_value("summary", argc, argv, &i, "--by", &v, &rc)) != 0) {
      if (m > 0 && !v[0])
        rc = cli_usage("summary", "--by needs a column name");
      else if (m > 0 && by)
        rc = cli_usage("summary", "--by is given twice ('%s', '%s')", by, v);
      else if (m > 0)
        by = v;
    } else if (cli_opt_flag(argv, i, "--json")) {
      json = 1;
    } else if (cli_opt_flag(argv, i, "--decimal-comma")) {
      opt.decimal_comma = 1;
    } else if (cli_opt_flag(argv, i, "--skip-bad-rows")) {
      opt.skip_bad_rows = 1;
    } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
      rc = cli_usage("summary", "unknown option '%s'", argv[i]);
    } else if (!file) {
      file = argv[i];
    } else {
      rc = cli_usage("summary", "one CSV file at a time (got '%s' and '%s')", file, argv[i]);
    }
  }
  if (rc == CLI_OK && !file) rc = cli_usage("summary", "no CSV file given");
  if (rc != CLI_OK) { free(columns); return rc; }

  /* Read only the columns asked for, plus the grouping column, which is
   * read as text when it has no unit (lot ids written as numbers). */
  if (by) {
    opt.text_columns = &by;
    opt.ntext_columns = 1;
  }
  if (ncolumns > 0) {
    if (by) columns[ncolumns] = by;
    opt.columns = columns;
    opt.ncolumns = ncolumns + (by ? 1 : 0);
  }
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  sp_summary_set *set = NULL;
  if (sp_table_read(file, &opt, &t, &err) != SP_OK ||
      sp_summary_build(t, columns, ncolumns, by, &set, &err) != SP_OK) {
    rc = cli_report(&err);
    sp_table_free(t);
    free(columns);
    return rc;
  }
  if (json) {
    char *txt = sp_summary_json(set, &err);
    if (!txt) rc = cli_report(&err);
    else { printf("%s\n", txt); free(txt); }
  } else {
    printf("%s: %zu data row%s, %zu column%s read (header on line %ld)\n", t->path, t->nrows,
           t->nrows == 1 ? "" : "s", t->ncols, t->ncols == 1 ? "" : "s", t->header_line);
    printf("sha256 %s, %llu bytes\n", t->sha256, (unsigned long long)t->size);
    for (size_t i = 0; i < t->nmeta; i++) {
      if (t->meta[i].key[0]) printf("  %s: %s\n", t->meta[i].key, t->meta[i].value);
      else printf("  # %s\n", t->meta[i].value);
    }
    const char *sep = "text columns (not described): ";
    for (size_t i = 0; i < t->ncols; i++)
      if (t->cols[i].kind == SP_COLUMN_TEXT) {
        printf("%s%s", sep, t->cols[i].name);
        sep = ", ";
      }
    if (sep[0] == ',') putchar('\n');
    for (size_t b = 0; b < set->nblocks; b++) print_block(stdout, set, &set->blocks[b]);
    if (t->nskipped) {
      printf("\n%zu row%s skipped (--skip-bad-rows):\n", t->nskipped, t->nskipped == 1 ? "" : "s");
      for (size_t i = 0; i < t->nskipped; i++)
        printf("  %s:%ld:%ld: %s\n", t->path, t->skipped[i].line, t->skipped[i].col,
               t->skipped[i].reason);
    }
    printf("\nn: readings used; miss: missing (empty or NA). sd uses n-1; skew and exkurt\n"
           "(excess kurtosis) as in the NIST/SEMATECH e-Handbook 1.3.5.11; quartiles q1,\n"
           "median, q3 by linear interpolation (Hyndman & Fan 1996, definition 7).\n\n");
    cli_print_caution(stdout);
  }
  sp_summary_set_free(set);
  sp_table_free(t);
  free(columns);
  return rc;
}
