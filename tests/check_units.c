/* Tests for the units module (udunits2 wrapper).
 *
 * Conversion factors are checked against their exact definitions:
 *  - SI prefixes (BIPM, The International System of Units, 9th ed. 2019,
 *    section 3);
 *  - the inch, pound and pound-force: NIST Special Publication 811 (2008
 *    ed.), "Guide for the Use of the International System of Units",
 *    Appendix B.8 (1 in = 0.0254 m exactly; 1 lb = 0.45359237 kg exactly;
 *    1 lbf = 1 lb x standard gravity 9.80665 m/s^2 = 4.4482216152605 N
 *    exactly; psi = lbf/in^2);
 *  - temperatures: NIST SP 811 Appendix B.9 (T/K = t/degC + 273.15,
 *    T/K = (t/degF + 459.67)/1.8).
 * Exact rationals were reduced to doubles with Python's fractions module
 * (closed forms, not outputs of the code under test). */
#include "sp_test.h"

#include <errno.h>
#include <pthread.h>
#include <string.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <unistd.h>

#include "scatterprop/units.h"

static const char *self_path; /* argv[0], for the database-failure probe */

static sp_unit *parse_ok(const char *text)
{
  sp_error err;
  sp_error_clear(&err);
  sp_unit *u = sp_unit_parse(text, &err);
  ck_assert_msg(u != NULL, "parse '%s' failed: %s", text, err.msg);
  return u;
}

/* Scale and offset from a to b (both parsed from text). */
static void conv(const char *a, const char *b, double *scale, double *offset)
{
  sp_unit *ua = parse_ok(a), *ub = parse_ok(b);
  sp_error err;
  sp_error_clear(&err);
  sp_status st = sp_unit_conversion(ua, ub, scale, offset, &err);
  ck_assert_msg(st == SP_OK, "%s -> %s: %s", a, b, err.msg);
  sp_unit_free(ua);
  sp_unit_free(ub);
}

static void check_scale(const char *a, const char *b, double want, double rtol)
{
  double s = 0, o = 1;
  conv(a, b, &s, &o);
  ck_assert_msg(fabs(s - want) <= rtol * fabs(want),
                "%s -> %s scale %.17g, want %.17g", a, b, s, want);
  ck_assert_msg(o == 0.0, "%s -> %s offset %.17g, want 0", a, b, o);
}

START_TEST(test_prefixes_and_si)
{
  /* SI prefixes: milli = 1e-3, mega = 1e6, giga = 1e9 (BIPM SI Brochure
   * 9th ed., table 7).  The doubles nearest to these, with one rounding
   * in udunits2's product of prefix and unit. */
  check_scale("mm", "m", 1e-3, EPS);
  check_scale("m", "mm", 1e3, EPS);
  check_scale("GPa", "MPa", 1e3, 2 * EPS);
  check_scale("MPa", "GPa", 1e-3, 2 * EPS);
  /* N/mm^2 = 1 N / 1e-6 m^2 = 1e6 Pa = 1 MPa (closed form). */
  check_scale("N/mm2", "MPa", 1.0, 2 * EPS);
  check_scale("N/mm^2", "MPa", 1.0, 2 * EPS);
  check_scale("N.mm-2", "Pa", 1e6, 2 * EPS);
  check_scale("kN", "N", 1e3, EPS);
  check_scale("um", "mm", 1e-3, 2 * EPS);
  check_scale("µm", "m", 1e-6, EPS);
}
END_TEST

START_TEST(test_imperial)
{
  /* NIST SP 811 B.8: 1 in = 2.54 E-02 m exactly. */
  check_scale("in", "m", 0.0254, EPS);
  check_scale("inch", "mm", 25.4, 2 * EPS);
  /* NIST SP 811 B.8: 1 lbf = 0.45359237 kg x 9.80665 m s^-2
   * = 4.4482216152605 N exactly (closed form). */
  check_scale("lbf", "N", 4.4482216152605, 2 * EPS);
  /* psi = lbf / in^2 = 4.4482216152605 / 0.0254^2 Pa
   * = 8896443230521/1290320000 Pa = 6894.757293168361... Pa (exact
   * rational, closed form; NIST SP 811 B.8 prints the rounded
   * 6.894 757 E+03).  udunits2 multiplies three rounded factors, so allow
   * 4 eps. */
  check_scale("psi", "Pa", 6894.757293168362, 4 * EPS);
  check_scale("ksi", "MPa", 6.894757293168362, 4 * EPS);
  /* 1 ft = 0.3048 m exactly (NIST SP 811 B.8). */
  check_scale("ft", "m", 0.3048, EPS);
  /* udunits2 knows plurals, and its "furlong" is 660 US survey feet with
   * 1 survey ft = 1200/3937 m (the U.S. survey foot, Federal Register
   * notice of 1 July 1959; from memory):
   * 660 x 1200/3937 m = 201.16840233680466 m (closed form). */
  check_scale("furlongs", "m", 201.16840233680466, 4 * EPS);
}
END_TEST

START_TEST(test_temperature_offsets)
{
  double s, o;
  /* NIST SP 811 B.9: T/K = t/degC + 273.15. */
  conv("degC", "K", &s, &o);
  ASSERT_REL(s, 1.0, EPS);
  ASSERT_REL(o, 273.15, EPS);
  conv("K", "degC", &s, &o);
  ASSERT_REL(s, 1.0, EPS);
  ASSERT_REL(o, -273.15, EPS);
  conv("°C", "K", &s, &o);
  ASSERT_REL(o, 273.15, EPS);
  /* NIST SP 811 B.9: T/K = (t/degF + 459.67)/1.8: scale 5/9 and offset
   * 459.67 x 5/9 = 255.37222... (closed forms).  The scale keeps full
   * precision although the offset is 460 times larger. */
  conv("degF", "K", &s, &o);
  ASSERT_REL(s, 5.0 / 9.0, 4 * EPS);
  ASSERT_REL(o, 255.37222222222223, 4 * EPS);
  /* t/degC = (t/degF - 32)/1.8: scale 5/9, offset -160/9 (closed form).
   * udunits2 goes through kelvin, so the offset is 255.37... - 273.15 and
   * carries the rounding of those terms: an absolute error of a few
   * DBL_EPSILON x 273.15. */
  conv("degF", "degC", &s, &o);
  ASSERT_REL(s, 5.0 / 9.0, 4 * EPS);
  ASSERT_ABS(o, -160.0 / 9.0, 4 * EPS * 273.15);
  /* Timestamps are affine too: 1 h = 3600 s (closed form). */
  conv("h since 1970-01-01", "s since 1970-01-01", &s, &o);
  ASSERT_REL(s, 3600.0, EPS);
  ASSERT_ABS(o, 0.0, 0.0);
}
END_TEST

START_TEST(test_derived)
{
  sp_error err;
  sp_error_clear(&err);
  sp_unit *n = parse_ok("N"), *mm = parse_ok("mm"), *m = parse_ok("m");
  double s, o;

  sp_unit *n_per_mm = sp_unit_divide(n, mm, &err);
  ck_assert_msg(n_per_mm != NULL, "%s", err.msg);
  ck_assert_str_eq(sp_unit_text(n_per_mm), "N/mm");
  sp_unit *ref = parse_ok("N/mm");
  ck_assert_int_eq(sp_unit_conversion(n_per_mm, ref, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1.0, 2 * EPS);
  sp_unit_free(ref);
  /* 1 N/mm = 1000 N/m (closed form). */
  ref = parse_ok("N/m");
  ck_assert_int_eq(sp_unit_conversion(n_per_mm, ref, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1e3, 2 * EPS);
  sp_unit_free(ref);

  /* N x mm = 1e-3 J (closed form). */
  sp_unit *n_mm = sp_unit_multiply(n, mm, &err);
  ck_assert_msg(n_mm != NULL, "%s", err.msg);
  ck_assert_str_eq(sp_unit_text(n_mm), "N.mm");
  ref = parse_ok("J");
  ck_assert_int_eq(sp_unit_conversion(n_mm, ref, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1e-3, 2 * EPS);
  sp_unit_free(ref);

  /* (N/mm)^2 -> N2/m2: (1e3)^2 = 1e6; the composed text is re-parsable. */
  sp_unit *sq = sp_unit_raise(n_per_mm, 2, &err);
  ck_assert_msg(sq != NULL, "%s", err.msg);
  ck_assert_str_eq(sp_unit_text(sq), "(N/mm)^2");
  sp_unit *back = parse_ok(sp_unit_text(sq));
  ck_assert_int_eq(sp_unit_conversion(sq, back, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1.0, 2 * EPS);
  sp_unit_free(back);
  ref = parse_ok("N2/m2");
  ck_assert_int_eq(sp_unit_conversion(sq, ref, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1e6, 4 * EPS);
  sp_unit_free(ref);

  /* mm^-1 = 1000 m^-1. */
  sp_unit *inv = sp_unit_raise(mm, -1, &err);
  ck_assert_msg(inv != NULL, "%s", err.msg);
  ck_assert_str_eq(sp_unit_text(inv), "mm^-1");
  ref = parse_ok("1/m");
  ck_assert_int_eq(sp_unit_conversion(inv, ref, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1e3, 2 * EPS);
  sp_unit_free(ref);

  /* Dimensionless one is the identity of multiplication, and x^0 = 1. */
  sp_unit *one = sp_unit_one(&err);
  ck_assert_ptr_nonnull(one);
  ck_assert_str_eq(sp_unit_text(one), "1");
  sp_unit *same = sp_unit_multiply(one, mm, &err);
  ck_assert_str_eq(sp_unit_text(same), "mm");
  sp_unit *zero_pow = sp_unit_raise(mm, 0, &err);
  ck_assert_str_eq(sp_unit_text(zero_pow), "1");
  ck_assert(sp_unit_is_dimensionless(zero_pow));

  /* mm/m is dimensionless with value 1e-3. */
  sp_unit *ratio = sp_unit_divide(mm, m, &err);
  ck_assert(sp_unit_is_dimensionless(ratio));
  ck_assert_int_eq(sp_unit_conversion(ratio, one, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1e-3, 2 * EPS);

  /* A product with a complex operand is parenthesised and re-parsable. */
  sp_unit *s_unit = parse_ok("s");
  sp_unit *cx = sp_unit_multiply(n_per_mm, s_unit, &err);
  ck_assert_str_eq(sp_unit_text(cx), "(N/mm).s");
  ref = parse_ok("N.s/m");
  ck_assert_int_eq(sp_unit_conversion(cx, ref, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1e3, 2 * EPS);
  sp_unit_free(ref);

  sp_unit *cp = sp_unit_copy(n_per_mm, &err);
  ck_assert_str_eq(sp_unit_text(cp), "N/mm");
  ck_assert(sp_unit_convertible(cp, n_per_mm));

  sp_unit *units[] = {n, mm, m, n_per_mm, n_mm, sq, inv, one, same, zero_pow,
                      ratio, s_unit, cx, cp};
  for (size_t i = 0; i < sizeof units / sizeof *units; i++) sp_unit_free(units[i]);
}
END_TEST

START_TEST(test_roots)
{
  sp_error err;
  sp_error_clear(&err);
  double s, o;
  sp_unit *mm = parse_ok("mm");
  const char *squares[] = {"mm2", "mm^2", "mm.mm"};
  for (size_t i = 0; i < 3; i++) {
    sp_unit *sq = parse_ok(squares[i]);
    sp_unit *r = sp_unit_root(sq, 2, &err);
    ck_assert_msg(r != NULL, "sqrt(%s): %s", squares[i], err.msg);
    ck_assert_int_eq(sp_unit_conversion(r, mm, &s, &o, &err), SP_OK);
    ASSERT_REL(s, 1.0, 4 * EPS); /* sqrt(mm^2) = mm exactly */
    if (i < 2) ck_assert_str_eq(sp_unit_text(r), "mm");
    sp_unit_free(r);
    sp_unit_free(sq);
  }
  /* cube root of mm^6 is mm^2 = 1e-6 m^2 */
  sp_unit *m6 = parse_ok("mm^6");
  sp_unit *r3 = sp_unit_root(m6, 3, &err);
  ck_assert_msg(r3 != NULL, "%s", err.msg);
  ck_assert_str_eq(sp_unit_text(r3), "mm^2");
  sp_unit *m2 = parse_ok("m2");
  ck_assert_int_eq(sp_unit_conversion(r3, m2, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1e-6, 8 * EPS);

  /* mm^3 has no square root in integer powers. */
  sp_unit *m3 = parse_ok("mm3");
  sp_error_clear(&err);
  ck_assert_ptr_null(sp_unit_root(m3, 2, &err));
  ck_assert_int_eq(err.code, SP_EDATA);
  ck_assert_msg(strstr(err.msg, "cannot take root 2 of unit 'mm3'") != NULL, "%s",
                err.msg);
  sp_error_clear(&err);
  ck_assert_ptr_null(sp_unit_root(m3, 0, &err));
  ck_assert_int_eq(err.code, SP_EUSAGE);
  sp_error_clear(&err);
  ck_assert_ptr_null(sp_unit_raise(mm, 300, &err));
  ck_assert_int_eq(err.code, SP_EUSAGE);
  sp_unit_free(mm);
  sp_unit_free(m6);
  sp_unit_free(r3);
  sp_unit_free(m2);
  sp_unit_free(m3);
}
END_TEST

START_TEST(test_not_convertible)
{
  sp_unit *mm = parse_ok("mm"), *n = parse_ok("N");
  ck_assert(!sp_unit_convertible(mm, n));
  ck_assert(sp_unit_convertible(mm, mm));
  sp_error err;
  sp_error_clear(&err);
  double s = 7, o = 7;
  ck_assert_int_eq(sp_unit_conversion(mm, n, &s, &o, &err), SP_EDATA);
  ck_assert_str_eq(err.msg, "cannot convert 'mm' (0.001 m) to 'N' (m.kg.s-2)");
  ck_assert(s == 7 && o == 7); /* outputs untouched on failure */
  sp_unit_free(mm);
  sp_unit_free(n);

  /* A logarithmic unit converts to its reference by 10^x, which is not
   * affine. */
  sp_unit *bel = parse_ok("lg(re 1 mW)"), *mw = parse_ok("mW");
  ck_assert(sp_unit_convertible(bel, mw));
  sp_error_clear(&err);
  ck_assert_int_eq(sp_unit_conversion(bel, mw, &s, &o, &err), SP_EDATA);
  ck_assert_msg(strstr(err.msg, "not affine") != NULL, "%s", err.msg);
  /* Between two log references it is a shift: 1 mW = 1e-3 W, so
   * lg(re 1 W) = lg(re 1 mW) - 3 (closed form). */
  sp_unit *bel_w = parse_ok("lg(re 1 W)");
  sp_error_clear(&err);
  ck_assert_int_eq(sp_unit_conversion(bel, bel_w, &s, &o, &err), SP_OK);
  ASSERT_REL(s, 1.0, 4 * EPS);
  ASSERT_REL(o, -3.0, 4 * EPS);
  sp_unit_free(bel);
  sp_unit_free(mw);
  sp_unit_free(bel_w);
}
END_TEST

START_TEST(test_dimensionless)
{
  const char *dimless[] = {"", "1", "  ", "mm/m", "%", "rad", "count"};
  for (size_t i = 0; i < sizeof dimless / sizeof *dimless; i++) {
    sp_unit *u = parse_ok(dimless[i]);
    ck_assert_msg(sp_unit_is_dimensionless(u), "'%s'", dimless[i]);
    sp_unit_free(u);
  }
  const char *dimensional[] = {"mm", "N", "degC", "s"};
  for (size_t i = 0; i < sizeof dimensional / sizeof *dimensional; i++) {
    sp_unit *u = parse_ok(dimensional[i]);
    ck_assert_msg(!sp_unit_is_dimensionless(u), "'%s'", dimensional[i]);
    sp_unit_free(u);
  }
  check_scale("%", "1", 0.01, EPS);
  check_scale("", "1", 1.0, 0.0);
  sp_unit *e = parse_ok("");
  ck_assert_str_eq(sp_unit_text(e), "");
  sp_unit_free(e);
}
END_TEST

static void expect_parse_error(const char *text, const char *msg)
{
  sp_error err;
  sp_error_clear(&err);
  ck_assert_msg(sp_unit_parse(text, &err) == NULL, "'%s' parsed", text);
  ck_assert_int_eq(err.code, SP_EDATA);
  ck_assert_str_eq(err.msg, msg);
}

START_TEST(test_parse_errors)
{
  expect_parse_error("wibble", "unknown unit 'wibble'");
  expect_parse_error(" wibble\t", "unknown unit 'wibble'");
  expect_parse_error("mm wibble", "unknown unit 'mm wibble'");
  expect_parse_error("mm^^2", "bad unit syntax 'mm^^2'");
  expect_parse_error("N/", "bad unit syntax 'N/'");
  expect_parse_error("0", "bad unit syntax '0'");
  expect_parse_error("mm)", "bad unit syntax 'mm)': unbalanced parentheses");
  expect_parse_error("(mm", "bad unit syntax '(mm': unbalanced parentheses");
  expect_parse_error("MPa.m1/2",
                     "bad unit syntax 'MPa.m1/2': a division by a number "
                     "(udunits2 reads 'm1/2' as m/2; exponents are integers)");
  expect_parse_error("m^0.5", "bad unit syntax 'm^0.5': a non-integer exponent");
  expect_parse_error("m**1.5", "bad unit syntax 'm**1.5': a non-integer exponent");
  /* udunits2 2.2 stops reading at a 0xFF byte, so "m\xff" would parse as m
   * and "\xff" alone as 1; bytes that are not text are refused first. */
  expect_parse_error("m\xff", "bad unit syntax: byte 0xFF at position 2 of the unit is not "
                              "valid UTF-8");
  expect_parse_error("\xff",
                     "bad unit syntax: byte 0xFF at position 1 of the unit is not valid UTF-8");
  expect_parse_error("\xb5m",
                     "bad unit syntax: byte 0xB5 at position 1 of the unit is not valid UTF-8");
  expect_parse_error("m\x01m",
                     "bad unit syntax: byte 0x01 at position 2 of the unit is a control character");
  sp_unit *um = parse_ok("\xC2\xB5m"); /* the micro sign in UTF-8 */
  sp_unit_free(um);

  sp_error err;
  sp_error_clear(&err);
  ck_assert_ptr_null(sp_unit_parse(NULL, &err));
  ck_assert_int_eq(err.code, SP_EUSAGE);

  /* Surrounding blanks are dropped from the text; "1/mm" (a number over a
   * unit) is fine. */
  sp_unit *u = parse_ok("  mm\t");
  ck_assert_str_eq(sp_unit_text(u), "mm");
  sp_unit_free(u);
  check_scale("1/mm", "m-1", 1e3, 2 * EPS);
}
END_TEST

START_TEST(test_format)
{
  char buf[64];
  sp_unit *n = parse_ok("N"), *mm = parse_ok("mm"), *c = parse_ok("degC");
  ck_assert_int_eq(sp_unit_format(n, buf, sizeof buf), 8);
  ck_assert_str_eq(buf, "m.kg.s-2");
  sp_unit_format(mm, buf, sizeof buf);
  ck_assert_str_eq(buf, "0.001 m");
  sp_unit_format(c, buf, sizeof buf);
  ck_assert_str_eq(buf, "K @ 273.15");
  /* truncation follows snprintf */
  ck_assert_int_eq(sp_unit_format(n, buf, 4), 8);
  ck_assert_str_eq(buf, "m.k");
  sp_unit_free(n);
  sp_unit_free(mm);
  sp_unit_free(c);
}
END_TEST

/* udunits2's parser has static state; the wrapper serialises calls.  Four
 * threads parse and convert at once; any garbled parse shows up as a wrong
 * factor. */
static void *parse_worker(void *arg)
{
  const char *texts[] = {"N/mm2", "kN.m", "lbf/in2", "mm^3"};
  const double want[] = {1e6, 1e3, 6894.757293168362, 1e-9};
  const char *si[] = {"Pa", "J", "Pa", "m3"};
  long bad = 0;
  for (int it = 0; it < 300; it++) {
    size_t i = (size_t)(it + (int)(size_t)arg) % 4;
    sp_error err;
    sp_unit *a = sp_unit_parse(texts[i], &err), *b = sp_unit_parse(si[i], &err);
    double s = 0, o = 0;
    if (!a || !b || sp_unit_conversion(a, b, &s, &o, &err) != SP_OK ||
        fabs(s - want[i]) > 8 * EPS * want[i])
      bad++;
    sp_unit_free(a);
    sp_unit_free(b);
  }
  return (void *)(size_t)bad;
}

START_TEST(test_threads)
{
  pthread_t th[4];
  for (size_t i = 0; i < 4; i++)
    ck_assert_int_eq(pthread_create(&th[i], NULL, parse_worker, (void *)i), 0);
  for (size_t i = 0; i < 4; i++) {
    void *ret;
    ck_assert_int_eq(pthread_join(th[i], &ret), 0);
    ck_assert_msg(ret == NULL, "thread %zu: %zu bad parses", i, (size_t)ret);
  }
}
END_TEST

/* The database loads once per process, so a failing load is provoked in a
 * fresh process: this executable re-run with SP_UNITS_PROBE set and
 * UDUNITS2_XML_PATH pointing at a file that does not exist. */
START_TEST(test_database_missing)
{
  int fd[2];
  ck_assert_int_eq(pipe(fd), 0);
  pid_t pid = fork();
  ck_assert_int_ge(pid, 0);
  if (pid == 0) {
    dup2(fd[1], STDOUT_FILENO);
    close(fd[0]);
    close(fd[1]);
    setenv("UDUNITS2_XML_PATH", "/nonexistent/sp-units/udunits2.xml", 1);
    setenv("SP_UNITS_PROBE", "1", 1);
    execl(self_path, self_path, (char *)NULL);
    _exit(127);
  }
  close(fd[1]);
  char out[2048];
  size_t len = 0;
  ssize_t r;
  while (len + 1 < sizeof out && (r = read(fd[0], out + len, sizeof out - 1 - len)) > 0)
    len += (size_t)r;
  out[len] = '\0';
  close(fd[0]);
  int status = 0;
  waitpid(pid, &status, 0);
  ck_assert_msg(WIFEXITED(status) && WEXITSTATUS(status) == 0, "probe failed: %s", out);
  char want[512];
  snprintf(want, sizeof want,
           "%d cannot load the udunits2 unit database "
           "'/nonexistent/sp-units/udunits2.xml': %s\n",
           (int)SP_EIO, strerror(ENOENT));
  ck_assert_str_eq(out, want);
}
END_TEST

static int probe_main(void)
{
  sp_error err;
  sp_error_clear(&err);
  sp_status st = sp_units_init(&err);
  /* a later parse reports the same failure */
  sp_error err2;
  sp_unit *u = sp_unit_parse("mm", &err2);
  if (u || err2.code != st) return 1;
  printf("%d %s\n", (int)st, err.msg);
  return 0;
}

int main(int argc, char **argv)
{
  (void)argc;
  if (getenv("SP_UNITS_PROBE")) return probe_main();
  self_path = argv[0];
  Suite *s = suite_create("units");
  TCase *tc = tcase_create("units");
  tcase_add_test(tc, test_prefixes_and_si);
  tcase_add_test(tc, test_imperial);
  tcase_add_test(tc, test_temperature_offsets);
  tcase_add_test(tc, test_derived);
  tcase_add_test(tc, test_roots);
  tcase_add_test(tc, test_not_convertible);
  tcase_add_test(tc, test_dimensionless);
  tcase_add_test(tc, test_parse_errors);
  tcase_add_test(tc, test_format);
  tcase_add_test(tc, test_threads);
  tcase_add_test(tc, test_database_missing);
  suite_add_tcase(s, tc);
  return sp_run_suite(s);
}
