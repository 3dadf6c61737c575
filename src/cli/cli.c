/* Shared pieces of the command-line tool. */
#include "cli.h"

#include <stdarg.h>
#include <string.h>

int cli_report(const sp_error *err)
{
  char buf[SP_ERROR_MSG_MAX + SP_ERROR_FILE_MAX + 64];
  sp_error_format(err, buf, sizeof buf);
  fprintf(stderr, "scatterprop: error: %s\n", buf);
  if (err->hint[0]) fprintf(stderr, "  hint: %s\n", err->hint);
  return sp_status_exit_code(err->code);
}

int cli_usage(const char *command, const char *fmt, ...)
{
  va_list ap;
  fprintf(stderr, "scatterprop: error: ");
  va_start(ap, fmt);
  vfprintf(stderr, fmt, ap);
  va_end(ap);
  fprintf(stderr, "\n  hint: see 'scatterprop %s --help'\n", command ? command : "");
  return CLI_USAGE;
}

int cli_opt_value(const char *command, int argc, char **argv, int *i,
                  const char *name, const char **value, int *rc)
{
  const char *a = argv[*i];
  size_t n = strlen(name);
  if (strncmp(a, name, n) != 0) return 0;
  if (a[n] == '=') { *value = a + n + 1; return 1; }
  if (a[n] != '\0') return 0;
  if (*i + 1 >= argc) {
    *rc = cli_usage(command, "option %s needs a value", name);
    return -1;
  }
  *i += 1;
  *value = argv[*i];
  return 1;
}

int cli_opt_flag(char **argv, int i, const char *name)
{
  return strcmp(argv[i], name) == 0;
}

int cli_parse_double(const char *command, const char *opt, const char *text,
                     double *out, int *rc)
{
  sp_error e;
  sp_error_clear(&e);
  if (sp_parse_double(text, '.', out, &e) != SP_OK) {
    *rc = cli_usage(command, "%s: %s", opt, e.msg);
    return 0;
  }
  return 1;
}

int cli_parse_u64(const char *command, const char *opt, const char *text,
                  unsigned long long *out, int *rc)
{
  sp_error e;
  sp_error_clear(&e);
  uint64_t v;
  if (sp_parse_u64(text, &v, &e) != SP_OK) {
    *rc = cli_usage(command, "%s: %s", opt, e.msg);
    return 0;
  }
  *out = (unsigned long long)v;
  return 1;
}

void cli_print_caution(FILE *out)
{
  /* Wrap the library's paragraph at 76 columns. */
  const char *s = sp_caution_text();
  size_t col = 0;
  while (*s) {
    const char *w = s;
    while (*w && *w != ' ') w++;
    size_t len = (size_t)(w - s);
    if (col > 0 && col + 1 + len > 76) { fputc('\n', out); col = 0; }
    else if (col > 0) { fputc(' ', out); col++; }
    fwrite(s, 1, len, out);
    col += len;
    s = *w ? w + 1 : w;
  }
  fputc('\n', out);
}
