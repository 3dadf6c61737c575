/* Tests of the HTML report: escaping of every text field, the caution and
 * provenance, embedding of gnuplot's SVG (ids prefixed, size attributes
 * dropped), refusal of SVGs with active content, validation, and the
 * atomic write.  Expected strings follow the rules stated in report.h
 * and the HTML 5 character-reference names (&lt; &gt; &amp; &quot;). */
#include <dirent.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <unistd.h>

#include <gsl/gsl_cdf.h>

#include "scatterprop/plot.h"
#include "scatterprop/report.h"
#include "sp_test.h"

#define HOSTILE1 "<script>alert(1)</script>"
#define HOSTILE1_ESC "&lt;script&gt;alert(1)&lt;/script&gt;"
#define HOSTILE2 "\"><img src=x onerror=alert(1)>"
#define HOSTILE2_ESC "&quot;&gt;&lt;img src=x onerror=alert(1)&gt;"
#define SHA_A "3f79bb7b435b05321651daefd374cdc681dc06faa65e374e38337b88ca046dea"

static void rm_tree(const char *dir)
{
  DIR *d = opendir(dir);
  if (!d) return;
  struct dirent *e;
  while ((e = readdir(d)) != NULL) {
    if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..")) continue;
    char p[4096];
    snprintf(p, sizeof p, "%s/%s", dir, e->d_name);
    unlink(p);
  }
  closedir(d);
  rmdir(dir);
}

static int count_of(const char *s, const char *what)
{
  int n = 0;
  for (const char *p = s; (p = strstr(p, what)) != NULL; p += strlen(what)) n++;
  return n;
}

/* Case-insensitive search. */
static int has_ci(const char *s, const char *what)
{
  size_t n = strlen(what);
  for (const char *p = s; *p; p++)
    if (strncasecmp(p, what, n) == 0) return 1;
  return 0;
}

/* A report with hostile text in every field that takes text. */
static char *hostile_report(void)
{
  sp_report_input in[1] = {{HOSTILE1, "data/" HOSTILE2 ".csv", SHA_A, 2417}};
  sp_report_fact facts[1] = {{HOSTILE1, HOSTILE2}};
  const char *head[2] = {HOSTILE1, "value"};
  const char *cells[4] = {HOSTILE2, "1.5", NULL, "2"};
  sp_report_table t = {HOSTILE1, 2, 2, head, cells, "lr"};
  sp_report_figure fig = {NULL, HOSTILE1, HOSTILE2};
  sp_report_block blocks[6] = {{.kind = SP_REPORT_PARAGRAPH, .text = HOSTILE1},
                               {.kind = SP_REPORT_NOTE, .text = HOSTILE2},
                               {.kind = SP_REPORT_PRE, .text = HOSTILE1 "\n" HOSTILE2},
                               {.kind = SP_REPORT_TABLE, .table = &t},
                               {.kind = SP_REPORT_FIGURE, .figure = &fig},
                               {.kind = SP_REPORT_FACTS, .facts = facts, .nfacts = 1}};
  sp_report_section sec[2] = {{HOSTILE1, 1, blocks, 6}, {HOSTILE2, 2, NULL, 0}};
  sp_report r = {.title = HOSTILE1, .created = HOSTILE2, .command = HOSTILE1,
                 .inputs = in, .ninputs = 1, .settings = facts, .nsettings = 1,
                 .sections = sec, .nsections = 2};
  sp_error err;
  size_t len;
  char *html = sp_report_html(&r, &len, &err);
  ck_assert_msg(html != NULL, "%s", err.msg);
  ck_assert_uint_eq(len, strlen(html));
  return html;
}

START_TEST(test_hostile_text_escaped)
{
  char *html = hostile_report();
  /* Every field: title (x2), header, section, paragraph, pre, table
   * caption/head, facts (x2), figure caption, input role, command. */
  ck_assert_int_ge(count_of(html, HOSTILE1_ESC), 12);
  ck_assert_int_ge(count_of(html, HOSTILE2_ESC), 6);
  ck_assert_msg(!has_ci(html, "<script"), "a raw <script> tag");
  ck_assert_msg(!has_ci(html, "<img"), "a raw <img> tag");
  ASSERT_LACKS(html, "onerror=alert(1)>");
  ASSERT_HAS(html, "Table 1. Input files");
  ASSERT_HAS(html, "Table 2. " HOSTILE1_ESC);
  ASSERT_HAS(html, "<td></td>"); /* the NULL cell */
  free(html);
}
END_TEST

START_TEST(test_text_characters)
{
  sp_report_block b[2] = {
      {.kind = SP_REPORT_PARAGRAPH,
       .text = "a&b 'q' \xC2\xB5m line\nbreak\x01 bad\xFF rtl\xE2\x80\xAE" "end"},
      {.kind = SP_REPORT_PRE, .text = "x = 1\n\ty = 2\r\n"}};
  sp_report_section s = {"chars", 1, b, 2};
  sp_report r = {.sections = &s, .nsections = 1};
  sp_error err;
  char *html = sp_report_html(&r, NULL, &err);
  ck_assert_msg(html != NULL, "%s", err.msg);
  ASSERT_HAS(html, "<p>a&amp;b &#39;q&#39; \xC2\xB5m line break\xEF\xBF\xBD bad\xEF\xBF\xBD rtl"
                   "\xEF\xBF\xBD" "end</p>");
  ASSERT_HAS(html, "<pre>x = 1\n\ty = 2\n</pre>");
  ASSERT_HAS(html, "<title>scatterprop report</title>"); /* the default title */
  free(html);
}
END_TEST

START_TEST(test_caution_and_provenance)
{
  sp_report_input in[1] = {{"data", "data/wire_d.csv", SHA_A, 2417}};
  sp_report_fact set[2] = {{"seed", "20261201"}, {"samples", "64000"}};
  sp_report_block b[1] = {{.kind = SP_REPORT_PARAGRAPH, .text = "results"}};
  sp_report_section s[2] = {{"Results", 1, b, 1}, {"Detail", 2, b, 1}};
  sp_report r = {.title = "t", .created = "2026-12-01", .command = "scatterprop run x",
                 .inputs = in, .ninputs = 1, .settings = set, .nsettings = 2,
                 .sections = s, .nsections = 2};
  sp_error err;
  char *html = sp_report_html(&r, NULL, &err);
  ck_assert_msg(html != NULL, "%s", err.msg);
  const char *caution = strstr(html, sp_caution_text());
  ck_assert_ptr_nonnull(caution);
  const char *prov = strstr(html, "<h2>Provenance</h2>");
  ck_assert_ptr_nonnull(prov);
  const char *first = strstr(html, "<h2>1 Results</h2>");
  ck_assert_ptr_nonnull(first);
  ck_assert(caution < prov && prov < first);
  ck_assert(caution < strstr(html, "<main>"));
  ASSERT_HAS(html, "<h3 id=\"section-1-1\">1.1 Detail</h3>");
  ASSERT_HAS(html, "href=\"#section-1\"");
  ASSERT_HAS(html, SHA_A);
  ASSERT_HAS(html, "<td class=\"r\">2417</td>");
  ASSERT_HAS(html, "<dt>seed</dt><dd>20261201</dd>");
  ASSERT_HAS(html, "<pre>scatterprop run x</pre>");
  char tool[128];
  snprintf(tool, sizeof tool, "scatterprop %s (revision %s", sp_version(), sp_git_revision());
  ASSERT_HAS(html, tool);
  /* Self-contained and printable. */
  ASSERT_HAS(html, "Content-Security-Policy");
  ASSERT_HAS(html, "default-src 'none'");
  ASSERT_HAS(html, "@page{");
  ASSERT_HAS(html, "@media print{");
  ck_assert_msg(!has_ci(html, "src="), "a src attribute");
  ck_assert_msg(!has_ci(html, "http:") && !has_ci(html, "https:"), "an external URL");
  /* The library reads no clock: the same spec gives the same bytes. */
  char *again = sp_report_html(&r, NULL, &err);
  ck_assert_str_eq(html, again);
  free(again);
  free(html);
}
END_TEST

START_TEST(test_print_layout)
{
  /* A table of short words (kept on one line) and long texts (free to
   * break), as a fit's candidates table mixes them. */
  const char *head[3] = {"lot", "note", "n"};
  const char *cells[6] = {"W24-117", "lowest AICc (-483.8) of the 7 candidates",
                          "61",      "a-file-name-that-is-far-too-long-to-keep-whole",
                          "",        "1234567"};
  sp_report_table t = {
      .caption = "lots", .ncols = 3, .nrows = 2, .head = head, .align = "llr", .cells = cells};
  sp_report_block b[1] = {{.kind = SP_REPORT_TABLE, .table = &t}};
  sp_report_section s[1] = {{"Fits", 1, b, 1}};
  sp_report r = {.title = "t", .sections = s, .nsections = 1};
  sp_error err;
  char *html = sp_report_html(&r, NULL, &err);
  ck_assert_msg(html != NULL, "%s", err.msg);
  ASSERT_HAS(html, "<td class=\"w\">W24-117</td>");
  ASSERT_HAS(html, "<td>lowest AICc (-483.8) of the 7 candidates</td>");
  ASSERT_HAS(html, "<td class=\"r w\">61</td>");
  ASSERT_HAS(html, "<td>a-file-name-that-is-far-too-long-to-keep-whole</td>");
  ASSERT_HAS(html, "<td></td>");
  ASSERT_HAS(html, "td.w{white-space:nowrap}");
  /* A SHA-256 breaks into two halves of 32 digits. */
  ASSERT_HAS(html, "width:32ch");
  /* Print: A4 and Letter through the margins alone (no page size forced),
   * the body at 10 pt, and every font size relative to it (em, never
   * rem), so tables and code shrink with the text on paper. */
  ASSERT_HAS(html, "@page{margin:16mm 15mm 18mm}");
  ASSERT_LACKS(html, "size:A4");
  ASSERT_LACKS(html, "size:letter");
  ASSERT_HAS(html, "@media print{body{max-width:none;margin:0;padding:0;font-size:10pt}");
  const char *style = strstr(html, "<style>");
  ck_assert_ptr_nonnull(style);
  const char *end = strstr(style, "</style>");
  ck_assert_ptr_nonnull(end);
  for (const char *p = strstr(style, "font-size:"); p && p < end; p = strstr(p + 1, "font-size:")) {
    const char *semi = p + strcspn(p, ";}");
    ck_assert_msg(!(semi - p > 3 && strncmp(semi - 3, "rem", 3) == 0), "a font size in rem: %.30s",
                  p);
  }
  ASSERT_HAS(html, "figure,tr,pre,.caution,.note,dl.facts{break-inside:avoid");
  ASSERT_HAS(html, "thead{display:table-header-group}");
  free(html);
}
END_TEST

/* ---- SVG ------------------------------------------------------------------ */

START_TEST(test_gnuplot_svg_embedded)
{
  char dir[64] = "/tmp/sp_report_XXXXXX";
  ck_assert_ptr_nonnull(mkdtemp(dir));
  /* A real chart from the plot module (gnuplot must be installed). */
  double x[3] = {1, 2, 3}, y[3] = {2, 4, 3};
  sp_plot_scatter sc = {.title = HOSTILE1, .x = x, .y = y, .npoints = 3};
  sp_plot_options o;
  sp_plot_options_init(&o);
  o.outdir = dir;
  o.stem = "chart";
  o.template_dir = SP_SOURCE_DIR "/plots";
  sp_plot_output out;
  sp_error err;
  ck_assert_msg(sp_plot_run_scatter(&sc, &o, &out, &err) == SP_OK, "%s", err.msg);
  ck_assert_msg(out.rendered, "gnuplot is needed for this test: %s", out.hint);
  sp_report_figure f = {out.svg, "one", NULL};
  sp_report_block b[2] = {{.kind = SP_REPORT_FIGURE, .figure = &f},
                          {.kind = SP_REPORT_FIGURE, .figure = &f}};
  sp_report_section s = {"Charts", 1, b, 2};
  sp_report r = {.sections = &s, .nsections = 1};
  char *html = sp_report_html(&r, NULL, &err);
  ck_assert_msg(html != NULL, "%s", err.msg);
  ck_assert_int_eq(count_of(html, "<svg class=\"chart\" role=\"img\""), 2);
  ASSERT_LACKS(html, "<?xml");
  ASSERT_LACKS(html, "<!--");
  ASSERT_HAS(html, "id=\"f1-gnuplot_canvas\"");
  ASSERT_HAS(html, "id=\"f2-gnuplot_canvas\"");
  ASSERT_HAS(html, "href=\"#f1-gpPt");
  ASSERT_HAS(html, "<figcaption>Figure 2. one</figcaption>");
  /* gnuplot wrote the hostile title as escaped text; it stays so. */
  ck_assert_msg(!has_ci(html, "<script"), "a raw <script> tag");
  ASSERT_HAS(html, "&lt;script>alert(1)&lt;/script>");
  /* The root's fixed size went (the page sizes it); the viewBox stayed. */
  const char *root = strstr(html, "<svg class=\"chart\"");
  const char *end = strchr(root, '>');
  char tagbuf[512];
  snprintf(tagbuf, sizeof tagbuf, "%.*s", (int)(end - root), root);
  const char *tag = tagbuf;
  ASSERT_LACKS(tag, " width=");
  ASSERT_HAS(tag, "viewBox=\"0 0 900 600\"");
  /* Ids are unique in the document. */
  const char *p = html;
  int nids = 0;
  while ((p = strstr(p, " id=\"")) != NULL) {
    p += 5;
    const char *q = strchr(p, '"');
    char id[128], pat[140];
    snprintf(id, sizeof id, "%.*s", (int)(q - p), p);
    snprintf(pat, sizeof pat, " id=\"%s\"", id);
    ck_assert_msg(count_of(html, pat) == 1, "id %s is not unique", id);
    nids++;
  }
  ck_assert_int_gt(nids, 20);
  free(html);
  rm_tree(dir);
}
END_TEST

static sp_status embed(const char *svg_text, sp_error *err)
{
  char path[] = "/tmp/sp_report_svg_XXXXXX";
  int fd = mkstemp(path);
  ck_assert_int_ge(fd, 0);
  close(fd);
  write_file(path, svg_text);
  sp_report_figure f = {path, "x", NULL};
  sp_report_block b = {.kind = SP_REPORT_FIGURE, .figure = &f};
  sp_report_section s = {"s", 1, &b, 1};
  sp_report r = {.sections = &s, .nsections = 1};
  char *html = sp_report_html(&r, NULL, err);
  unlink(path);
  if (!html) return err->code;
  free(html);
  return SP_OK;
}

START_TEST(test_active_svg_refused)
{
  static const struct {
    const char *svg, *msg;
  } bad[] = {
      {"<svg viewBox='0 0 1 1'><script>alert(1)</script></svg>", "<script>"},
      {"<svg viewBox='0 0 1 1'><SCRIPT>alert(1)</SCRIPT></svg>", "<SCRIPT>"},
      {"<svg onload='alert(1)'></svg>", "event attribute onload"},
      {"<svg><g OnClick=\"x()\"/></svg>", "event attribute OnClick"},
      {"<svg><foreignObject><div/></foreignObject></svg>", "<foreignObject>"},
      {"<svg><a href='#x'>t</a></svg>", "<a>"},
      {"<svg><use href='http://example.org/x.svg#a'/></svg>", "links outside itself"},
      {"<svg><use xlink:href='data:image/svg+xml,x'/></svg>", "links outside itself"},
      {"<svg><rect fill='url(http://example.org/p)'/></svg>", "url()"},
      {"<svg><rect style='fill: url( \"//x/y\" )'/></svg>", "url()"},
      {"<svg><style>@import 'x.css';</style></svg>", "<style>"},
      {"<svg><![CDATA[ x ]]></svg>", "CDATA"},
      {"<svg><rect x=1/></svg>", "unquoted attribute"},
      {"<svg><set attributeName='href' to='javascript:alert(1)'/></svg>", "<set>"},
      {"<svg><rect title='javascript:alert(1)'/></svg>", "javascript:"},
      {"<html><body>no svg</body></html>", "not an SVG"},
      {"<g/><svg></svg>", "not an SVG"},
  };
  for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
    sp_error err;
    ck_assert_msg(embed(bad[i].svg, &err) == SP_EDATA, "accepted: %s", bad[i].svg);
    ck_assert_msg(strstr(err.msg, bad[i].msg), "for %s: message '%s' lacks '%s'", bad[i].svg,
                  err.msg, bad[i].msg);
  }
  /* Text that merely looks like markup or attributes is fine. */
  sp_error err;
  ck_assert_int_eq(embed("<?xml version='1.0'?>\n<!DOCTYPE svg>\n<svg viewBox='0 0 1 1'>"
                         "<text> onion=3 &lt;script> href=x</text><!-- a comment -->"
                         "<rect fill='url(#g)' id=\"r\"/></svg>\ntrailing",
                         &err),
                   SP_OK);
  sp_report_figure f = {"/nonexistent/chart.svg", "x", NULL};
  sp_report_block b = {.kind = SP_REPORT_FIGURE, .figure = &f};
  sp_report_section s = {"s", 1, &b, 1};
  sp_report r = {.sections = &s, .nsections = 1};
  ck_assert_ptr_null(sp_report_html(&r, NULL, &err));
  ck_assert_int_eq(err.code, SP_EIO);
  ASSERT_HAS(err.msg, "/nonexistent/chart.svg");
}
END_TEST

START_TEST(test_svg_rewritten)
{
  char path[] = "/tmp/sp_report_svg_XXXXXX";
  int fd = mkstemp(path);
  close(fd);
  write_file(path, "<svg width=\"900\" height='600' viewBox=\"0 0 9 6\">"
                   "<defs><path id='p1' d=\"M0 0\"/></defs>"
                   "<use xlink:href='#p1' fill='url(#p1)' title='say \"hi\"'/></svg>");
  sp_report_figure f = {path, NULL, NULL};
  sp_report_block b = {.kind = SP_REPORT_FIGURE, .figure = &f};
  sp_report_section s = {"s", 1, &b, 1};
  sp_report r = {.sections = &s, .nsections = 1};
  sp_error err;
  char *html = sp_report_html(&r, NULL, &err);
  unlink(path);
  ck_assert_msg(html != NULL, "%s", err.msg);
  ASSERT_HAS(html, "<svg class=\"chart\" role=\"img\" viewBox=\"0 0 9 6\"><defs>"
                   "<path id=\"f1-p1\" d=\"M0 0\"/></defs><use xlink:href=\"#f1-p1\" "
                   "fill=\"url(#f1-p1)\" title=\"say &quot;hi&quot;\"/></svg>");
  free(html);
}
END_TEST

/* ---- validation and writing --------------------------------------------------- */

START_TEST(test_bad_specs)
{
  sp_error err;
  ck_assert_ptr_null(sp_report_html(NULL, NULL, &err));
  ck_assert_int_eq(err.code, SP_EUSAGE);
  sp_report_input in[1] = {{"data", "x.csv", "ABC", 1}};
  sp_report r = {.inputs = in, .ninputs = 1};
  ck_assert_ptr_null(sp_report_html(&r, NULL, &err));
  ASSERT_HAS(err.msg, "SHA-256");
  in[0].sha256 = "3F79BB7B435B05321651DAEFD374CDC681DC06FAA65E374E38337B88CA046DEA";
  ck_assert_ptr_null(sp_report_html(&r, NULL, &err)); /* upper case is not the form */
  sp_report_section s = {"s", 3, NULL, 0};
  sp_report r2 = {.sections = &s, .nsections = 1};
  ck_assert_ptr_null(sp_report_html(&r2, NULL, &err));
  ASSERT_HAS(err.msg, "level 3");
  s.level = 2;
  ck_assert_ptr_null(sp_report_html(&r2, NULL, &err));
  ASSERT_HAS(err.msg, "first section");
  const char *cells[2] = {"a", "b"};
  sp_report_table t = {NULL, 2, 1, NULL, cells, "lrl"};
  sp_report_block b = {.kind = SP_REPORT_TABLE, .table = &t};
  sp_report_section s3 = {"s", 1, &b, 1};
  sp_report r3 = {.sections = &s3, .nsections = 1};
  ck_assert_ptr_null(sp_report_html(&r3, NULL, &err));
  ASSERT_HAS(err.msg, "align");
  t.align = "lx";
  ck_assert_ptr_null(sp_report_html(&r3, NULL, &err));
  t.align = NULL;
  t.ncols = 0;
  ck_assert_ptr_null(sp_report_html(&r3, NULL, &err));
  b.kind = (sp_report_block_kind)99;
  ck_assert_ptr_null(sp_report_html(&r3, NULL, &err));
  ASSERT_HAS(err.msg, "unknown block kind 99");
}
END_TEST

START_TEST(test_write_atomic)
{
  char dir[64] = "/tmp/sp_report_XXXXXX";
  ck_assert_ptr_nonnull(mkdtemp(dir));
  char path[128];
  snprintf(path, sizeof path, "%s/report.html", dir);
  sp_report_block b = {.kind = SP_REPORT_PARAGRAPH, .text = "first"};
  sp_report_section s = {"s", 1, &b, 1};
  sp_report r = {.title = "atomic", .sections = &s, .nsections = 1};
  sp_error err;
  ck_assert_msg(sp_report_write_html(&r, path, 0, &err) == SP_OK, "%s", err.msg);
  char *html = sp_report_html(&r, NULL, &err);
  char *file = slurp(path);
  ck_assert_str_eq(file, html);
  free(file);
  free(html);
  b.text = "second";
  ck_assert_int_eq(sp_report_write_html(&r, path, 0, &err), SP_EIO);
  ASSERT_HAS(err.msg, "exists");
  file = slurp(path);
  ASSERT_HAS(file, "<p>first</p>");
  free(file);
  ck_assert_msg(sp_report_write_html(&r, path, 1, &err) == SP_OK, "%s", err.msg);
  file = slurp(path);
  ASSERT_HAS(file, "<p>second</p>");
  free(file);
  /* A failing report leaves nothing behind. */
  sp_report_figure f = {"/nonexistent.svg", NULL, NULL};
  sp_report_block fb = {.kind = SP_REPORT_FIGURE, .figure = &f};
  s.blocks = &fb;
  char path2[128];
  snprintf(path2, sizeof path2, "%s/broken.html", dir);
  ck_assert_int_eq(sp_report_write_html(&r, path2, 0, &err), SP_EIO);
  struct stat st;
  ck_assert_int_ne(stat(path2, &st), 0);
  rm_tree(dir);
}
END_TEST

static Suite *report_suite(void)
{
  Suite *s = suite_create("report");
  TCase *t = tcase_create("text");
  tcase_add_test(t, test_hostile_text_escaped);
  tcase_add_test(t, test_text_characters);
  tcase_add_test(t, test_caution_and_provenance);
  tcase_add_test(t, test_print_layout);
  suite_add_tcase(s, t);
  t = tcase_create("svg");
  tcase_set_timeout(t, 60);
  tcase_add_test(t, test_gnuplot_svg_embedded);
  tcase_add_test(t, test_active_svg_refused);
  tcase_add_test(t, test_svg_rewritten);
  suite_add_tcase(s, t);
  t = tcase_create("write");
  tcase_add_test(t, test_bad_specs);
  tcase_add_test(t, test_write_atomic);
  suite_add_tcase(s, t);
  return s;
}

int main(void) { return sp_run_suite(report_suite()); }
