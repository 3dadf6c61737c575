/* scatterprop replay: the entry points, reading records, finding the files
 * they name, checking those files by SHA-256, and the build check.  The
 * reruns live in replay_fit.c and replay_run.c, the comparison in
 * replay_compare.c. */
#include "scatterprop/replay.h"

#include <errno.h>
#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "scatterprop/provenance.h"
#include "scatterprop/record.h"
#include "scatterprop/run.h"
#include "json_locate.h"
#include "replay_internal.h"

void sp_replay_options_init(sp_replay_options *o)
{
  o->threads = 0;
  o->tolerance = -1.0;
}

void sp_replay_report_clear(sp_replay_report *rep)
{
  if (!rep) return;
  for (size_t i = 0; i < rep->ninputs; i++) {
    free(rep->inputs[i].role);
    free(rep->inputs[i].path);
    free(rep->inputs[i].note);
  }
  free(rep->inputs);
  for (size_t i = 0; i < rep->ndiffs; i++) {
    free(rep->diffs[i].path);
    free(rep->diffs[i].recorded);
    free(rep->diffs[i].replayed);
  }
  free(rep->diffs);
  memset(rep, 0, sizeof *rep);
}

/* ---- files --------------------------------------------------------------- */

char *sp_replay_read_file(const char *path, size_t *len, sp_error *err)
{
  FILE *fp = sp_file_open_input(path, "file", SP_REPLAY_MAX_FILE, err);
  if (!fp) return NULL;
  size_t cap = 1 << 16, n = 0;
  char *buf = malloc(cap);
  for (;;) {
    if (!buf) {
      fclose(fp);
      sp_fail(err, SP_ENOMEM, "%s: out of memory", path);
      return NULL;
    }
    if (n + 1 >= cap) {
      if (cap >= SP_REPLAY_MAX_FILE) {
        free(buf);
        fclose(fp);
        sp_fail(err, SP_ELIMIT, "%s: larger than %zu MiB", path, SP_REPLAY_MAX_FILE >> 20);
        return NULL;
      }
      char *nb = realloc(buf, cap * 2);
      if (!nb) free(buf);
      buf = nb;
      cap *= 2;
      continue;
    }
    size_t got = fread(buf + n, 1, cap - n - 1, fp);
    n += got;
    if (got == 0) break;
  }
  int bad = ferror(fp);
  fclose(fp);
  if (bad) {
    free(buf);
    sp_fail(err, SP_EIO, "%s: read failed", path);
    return NULL;
  }
  buf[n] = '\0';
  *len = n;
  return buf;
}

json_t *sp_replay_load_json(const char *path, sp_error *err)
{
  size_t len = 0;
  char *text = sp_replay_read_file(path, &len, err);
  if (!text) return NULL;
  json_error_t je;
  json_t *root = json_loadb(text, len, JSON_REJECT_DUPLICATES, &je);
  free(text);
  if (!root) {
    sp_fail_at(err, SP_EDATA, path, je.line, je.column, "record is not valid JSON: %s",
               je.text);
    return NULL;
  }
  if (!json_is_object(root)) {
    json_decref(root);
    long line = 1, col = 1;
    sp_json_locate_file(path, "", &line, &col);
    sp_fail_at(err, SP_EDATA, path, line, col, "record: the top level must be a JSON object");
    return NULL;
  }
  return root;
}

/* ---- fields -------------------------------------------------------------- */

sp_status sp_replay_bad(const sp_replay_ctx *c, const char *path, const char *fmt, ...)
{
  char what[512];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(what, sizeof what, fmt, ap);
  va_end(ap);
  /* The tree keeps no positions: the file is read again for the field's
   * line and column (a record given as a buffer has none). */
  long line = 0, col = 0;
  if (sp_json_locate_file(c->name, path, &line, &col))
    sp_fail_at(c->err, SP_EDATA, c->name, line, col, "%s%srecord: field '%s' %s",
               c->kind ? c->kind : "", c->kind ? " " : "", path, what);
  else
    sp_fail(c->err, SP_EDATA, "%s%srecord %s: field '%s' %s", c->kind ? c->kind : "",
            c->kind ? " " : "", c->name, path, what);
  return sp_error_hint(c->err, "the record was edited or damaged after it was made, or is not "
                               "a scatterprop record: take the original (an archive's "
                               "MANIFEST.sha256 gives its hash)");
}

sp_status sp_replay_need_obj(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, json_t **out)
{
  json_t *v = json_object_get(o, key);
  if (!v) return sp_replay_bad(c, path, "is missing");
  if (!json_is_object(v)) return sp_replay_bad(c, path, "must be an object");
  *out = v;
  return SP_OK;
}

sp_status sp_replay_need_arr(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, json_t **out)
{
  json_t *v = json_object_get(o, key);
  if (!v) return sp_replay_bad(c, path, "is missing");
  if (!json_is_array(v)) return sp_replay_bad(c, path, "must be an array");
  *out = v;
  return SP_OK;
}

sp_status sp_replay_need_str(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, int nullable, const char **out)
{
  json_t *v = json_object_get(o, key);
  if (!v) return sp_replay_bad(c, path, "is missing");
  if (nullable && json_is_null(v)) {
    *out = NULL;
    return SP_OK;
  }
  if (!json_is_string(v))
    return sp_replay_bad(c, path, nullable ? "must be a string or null" : "must be a string");
  *out = json_string_value(v);
  return SP_OK;
}

sp_status sp_replay_need_num(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, int nullable, double *out)
{
  json_t *v = json_object_get(o, key);
  if (!v) return sp_replay_bad(c, path, "is missing");
  if (nullable && json_is_null(v)) {
    *out = NAN;
    return SP_OK;
  }
  if (!json_is_number(v))
    return sp_replay_bad(c, path, nullable ? "must be a number or null" : "must be a number");
  *out = json_number_value(v);
  return SP_OK;
}

sp_status sp_replay_need_u64(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, uint64_t *out)
{
  json_t *v = json_object_get(o, key);
  if (!v) return sp_replay_bad(c, path, "is missing");
  if (json_is_integer(v) && json_integer_value(v) >= 0) {
    *out = (uint64_t)json_integer_value(v);
    return SP_OK;
  }
  if (json_is_string(v)) {
    sp_error e;
    sp_error_clear(&e);
    uint64_t x;
    /* Only what the writers put there: the digits of a value that a JSON
     * integer cannot hold.  "7" for 7 is a mistyped field, not a seed. */
    if (sp_parse_u64(json_string_value(v), &x, &e) == SP_OK && x > (uint64_t)INT64_MAX) {
      *out = x;
      return SP_OK;
    }
    return sp_replay_bad(c, path,
                         "must be a non-negative integer (a string only for values "
                         "of 2^63 and more, as the record's writer makes them), got "
                         "\"%.40s\"",
                         json_string_value(v));
  }
  return sp_replay_bad(c, path, "must be a non-negative integer");
}

sp_status sp_replay_need_sha(const sp_replay_ctx *c, const json_t *o, const char *key,
                             const char *path, const char **out)
{
  sp_status s = sp_replay_need_str(c, o, key, path, 0, out);
  if (s != SP_OK) return s;
  /* set when the reader above returned SP_OK (not followed by the analyzer):
   * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
  if (strlen(*out) != 64 || strspn(*out, "0123456789abcdef") != 64)
    return sp_replay_bad(c, path, "must be 64 lower-case hexadecimal digits");
  return SP_OK;
}

/* ---- paths --------------------------------------------------------------- */

static char *dup_n(const char *s, size_t n)
{
  char *d = malloc(n + 1);
  if (!d) return NULL;
  memcpy(d, s, n);
  d[n] = '\0';
  return d;
}

char *sp_replay_dir_of(const char *path)
{
  const char *slash = strrchr(path, '/');
  return slash ? dup_n(path, (size_t)(slash - path) + 1) : dup_n("", 0);
}

char *sp_replay_join(const char *dir, const char *rel)
{
  if (rel[0] == '/' || !dir[0]) return dup_n(rel, strlen(rel));
  size_t a = strlen(dir), b = strlen(rel);
  int slash = dir[a - 1] != '/';
  char *d = malloc(a + (size_t)slash + b + 1);
  if (!d) return NULL;
  /* a byte buffer with its own length, not a string:
   * NOLINTNEXTLINE(bugprone-not-null-terminated-result) */
  memcpy(d, dir, a);
  if (slash) d[a] = '/';
  memcpy(d + a + (size_t)slash, rel, b + 1);
  return d;
}

static int file_exists(const char *p) { return access(p, F_OK) == 0; }

/* The places a relative path recorded in a non-archived record may be, in
 * the order they are tried: the record's working folder, the current
 * folder, the record's own folder.  Fills up to 3 owned paths, and what
 * each place is into why when why is not NULL. */
static size_t candidates(const char *record_path, const json_t *root, const char *recorded,
                         char *out[3], const char *why[3])
{
  size_t n = 0;
  json_t *wd = json_object_get(json_object_get(root, "provenance"), "working_directory");
  if (json_is_string(wd) && json_string_length(wd) > 0) {
    if (why) why[n] = "the folder it was made in";
    out[n++] = sp_replay_join(json_string_value(wd), recorded);
  }
  if (why) why[n] = "the current folder";
  out[n++] = dup_n(recorded, strlen(recorded));
  char *dir = sp_replay_dir_of(record_path);
  if (dir && dir[0]) {
    if (why) why[n] = "the record's folder";
    out[n++] = sp_replay_join(dir, recorded);
  }
  free(dir);
  return n;
}

char *sp_replay_locate(const char *record_path, const json_t *root, const char *recorded,
                       int *exists)
{
  char *out = NULL;
  /* allocated and checked above under the same status (not followed):
   * NOLINTNEXTLINE(clang-analyzer-core.NullDereference) */
  if (recorded[0] == '/') {
    out = dup_n(recorded, strlen(recorded));
  } else if (json_is_object(json_object_get(root, "archive"))) {
    char *dir = sp_replay_dir_of(record_path);
    out = dir ? sp_replay_join(dir, recorded) : NULL;
    free(dir);
  } else {
    char *c[3] = {NULL, NULL, NULL};
    size_t n = candidates(record_path, root, recorded, c, NULL);
    /* The first that is there; none: the current folder's, as recorded. */
    size_t pick = n;
    for (size_t i = 0; i < n && pick == n; i++)
      if (c[i] && file_exists(c[i])) pick = i;
    if (pick == n) {
      for (size_t i = 0; i < n; i++)
        if (c[i] && strcmp(c[i], recorded) == 0) pick = i;
    }
    if (pick < n) {
      out = c[pick];
      c[pick] = NULL;
    }
    for (size_t i = 0; i < n; i++)
      free(c[i]);
  }
  if (out) *exists = file_exists(out);
  return out;
}

char *sp_replay_locate_tried(const char *record_path, const json_t *root, const char *recorded)
{
  char buf[3 * 4096 + 256];
  buf[0] = '\0';
  if (recorded[0] == '/' || json_is_object(json_object_get(root, "archive"))) {
    int ex = 0;
    char *p = sp_replay_locate(record_path, root, recorded, &ex);
    snprintf(buf, sizeof buf, "looked for it at %s%s", p ? p : recorded,
             recorded[0] == '/' ? ""
                                : " (the record is archived: its paths are relative to "
                                  "its own folder)");
    free(p);
    return dup_n(buf, strlen(buf));
  }
  char *c[3] = {NULL, NULL, NULL};
  const char *why[3] = {"", "", ""};
  size_t n = candidates(record_path, root, recorded, c, why);
  size_t len = (size_t)snprintf(buf, sizeof buf, "looked for %s at", recorded);
  for (size_t i = 0; i < n && len < sizeof buf; i++)
    len += (size_t)snprintf(buf + len, sizeof buf - len, "%s %s (%s)", i ? "," : "",
                            c[i] ? c[i] : "?", why[i]);
  for (size_t i = 0; i < n; i++)
    free(c[i]);
  return dup_n(buf, strlen(buf));
}

/* ---- inputs -------------------------------------------------------------- */

static char *dup_str(const char *s) { return s ? dup_n(s, strlen(s)) : NULL; }

sp_status sp_replay_add_input(sp_replay_report *rep, const char *role, const char *path,
                              const char *recorded_sha256, uint64_t recorded_size,
                              sp_error *err)
{
  sp_replay_input *nv = realloc(rep->inputs, (rep->ninputs + 1) * sizeof *nv);
  if (!nv) return sp_fail(err, SP_ENOMEM, "out of memory");
  rep->inputs = nv;
  sp_replay_input *in = &rep->inputs[rep->ninputs];
  memset(in, 0, sizeof *in);
  in->role = dup_str(role);
  in->path = dup_str(path);
  if (!in->role || !in->path) {
    free(in->role);
    free(in->path);
    return sp_fail(err, SP_ENOMEM, "out of memory");
  }
  rep->ninputs++;
  snprintf(in->recorded_sha256, sizeof in->recorded_sha256, "%s", recorded_sha256);
  in->recorded_size = recorded_size;
  sp_error e;
  sp_error_clear(&e);
  if (sp_sha256_file(path, in->actual_sha256, &in->actual_size, &e) != SP_OK) {
    in->actual_sha256[0] = '\0';
    in->status = SP_REPLAY_INPUT_MISSING;
    in->note = dup_str(e.msg);
    rep->nbad++;
  } else if (strcmp(in->actual_sha256, in->recorded_sha256) != 0) {
    in->status = SP_REPLAY_INPUT_CHANGED;
    rep->nbad++;
  }
  return SP_OK;
}

sp_status sp_replay_check_fit_data(const char *fit_path, const json_t *root, const char *role,
                                   sp_replay_report *rep, sp_error *err)
{
  sp_replay_ctx c = {"fit", fit_path, err};
  json_t *data = NULL;
  const char *path = NULL, *sha = NULL;
  uint64_t size = 0;
  sp_status s = sp_replay_need_obj(&c, root, "data", "data", &data);
  if (s == SP_OK) s = sp_replay_need_str(&c, data, "path", "data.path", 0, &path);
  if (s == SP_OK) s = sp_replay_need_u64(&c, data, "size", "data.size", &size);
  if (s == SP_OK) s = sp_replay_need_sha(&c, data, "sha256", "data.sha256", &sha);
  if (s != SP_OK) return s;
  int exists = 0;
  char *where = sp_replay_locate(fit_path, root, path, &exists);
  if (!where) return sp_fail(err, SP_ENOMEM, "out of memory");
  s = sp_replay_add_input(rep, role, where, sha, size, err);
  free(where);
  if (s == SP_OK) sp_replay_note_tried(rep, fit_path, root, path);
  return s;
}

void sp_replay_note_tried(sp_replay_report *rep, const char *record_path, const json_t *root,
                          const char *recorded)
{
  sp_replay_input *in = &rep->inputs[rep->ninputs - 1];
  if (in->status != SP_REPLAY_INPUT_MISSING) return;
  char *tried = sp_replay_locate_tried(record_path, root, recorded);
  if (!tried) return;
  free(in->note);
  in->note = tried;
}

sp_status sp_replay_inputs_failed(const char *path, const sp_replay_report *rep, sp_error *err)
{
  const sp_replay_input *first = NULL;
  size_t changed = 0, missing = 0;
  for (size_t i = 0; i < rep->ninputs; i++) {
    const sp_replay_input *in = &rep->inputs[i];
    if (in->status == SP_REPLAY_INPUT_OK) continue;
    if (!first) first = in;
    if (in->status == SP_REPLAY_INPUT_MISSING)
      missing++;
    else
      changed++;
  }
  if (!first) return sp_fail(err, SP_EDATA, "replay of %s: inputs changed or missing", path);
  const char *what = first->status == SP_REPLAY_INPUT_MISSING ? "missing" : "changed";
  if (rep->nbad == 1)
    sp_fail(err, SP_EDATA, "replay of %s: an input file is %s, so nothing was rerun: %s: %s", path,
            what, first->role, first->path);
  else
    sp_fail(err, SP_EDATA,
            "replay of %s: %zu of its %zu input files are %s, so nothing was "
            "rerun; the first: %s: %s (%s)",
            path, rep->nbad, rep->ninputs, missing && changed ? "missing or changed" : what,
            first->role, first->path, what);
  if (changed && !missing)
    return sp_error_hint(err, "a changed file gives other results; restore the bytes the "
                              "record names (its archive or backup; the SHA-256 above "
                              "identifies them), or make a new record from the file as it "
                              "is now");
  if (missing && !changed)
    return sp_error_hint(err, "copy the file to one of the places above, or replay from "
                              "the folder the record was made in (a record's relative paths "
                              "are relative to it; an archive's to the archive)");
  return sp_error_hint(err, "restore each file listed above, with the bytes the recorded "
                            "SHA-256 identifies");
}

/* ---- the build ----------------------------------------------------------- */

static const char *tree_str(const json_t *root, const char *a, const char *b, const char *c,
                            const char *d)
{
  const json_t *v = json_object_get(root, a);
  if (b) v = json_object_get(v, b);
  if (c) v = json_object_get(v, c);
  if (d) v = json_object_get(v, d);
  return json_is_string(v) ? json_string_value(v) : NULL;
}

void sp_replay_check_build(const json_t *root, sp_replay_report *rep)
{
  sp_provenance p;
  sp_provenance_get(&p);
  const struct {
    const char *label;
    const char *k[4];
    const char *now;
  } facts[] = {
      {"tool version", {"tool", "version", NULL, NULL}, p.version},
      {"git revision", {"tool", "git", NULL, NULL}, p.git},
      {"compiler", {"tool", "compiler", NULL, NULL}, p.compiler},
      {"GSL", {"tool", "gsl", NULL, NULL}, p.gsl_build},
      {"compiler version", {"provenance", "build", "compiler_version", NULL}, p.compiler_version},
      {"build type", {"provenance", "build", "build_type", NULL}, p.build_type},
      {"code generation", {"provenance", "build", "flags", NULL}, p.flags},
      {"compile flags", {"provenance", "build", "cflags", NULL}, p.cflags},
      {"GSL loaded", {"provenance", "libraries", "gsl", "loaded"}, p.gsl_runtime},
      {"jansson", {"provenance", "libraries", "jansson", "built_with"}, p.jansson_build},
      {"jansson loaded", {"provenance", "libraries", "jansson", "loaded"}, p.jansson_runtime},
      {"libcsv", {"provenance", "libraries", "libcsv", NULL}, p.libcsv},
      {"udunits2", {"provenance", "libraries", "udunits2", NULL}, p.udunits2},
      {"OpenMP", {"provenance", "libraries", "openmp", NULL}, p.openmp},
      {"libc", {"provenance", "libraries", "libc", NULL}, p.libc},
      {"machine", {"provenance", "os", "machine", NULL}, p.machine},
      {"processor features", {"provenance", "os", "cpu_features", NULL}, p.cpu_features},
  };
  rep->build_differs = 0;
  rep->build_note[0] = '\0';
  size_t n = 0;
  const int has_prov = json_is_object(json_object_get(root, "provenance"));
  for (size_t i = 0; i < sizeof facts / sizeof facts[0]; i++) {
    const char *was = tree_str(root, facts[i].k[0], facts[i].k[1], facts[i].k[2], facts[i].k[3]);
    if (was && strcmp(was, facts[i].now) == 0) continue;
    /* A record without provenance at all is described once, below; one
     * that lacks a single fact (edited, or older than the fact) cannot show
     * it is this build's. */
    if (!was && (!has_prov || strcmp(facts[i].k[0], "tool") == 0)) continue;
    rep->build_differs = 1;
    n = strlen(rep->build_note);
    if (was)
      snprintf(rep->build_note + n, sizeof rep->build_note - n, "%s%s %s -> %s", n ? "; " : "",
               facts[i].label, was, facts[i].now);
    else
      snprintf(rep->build_note + n, sizeof rep->build_note - n,
               "%s%s not recorded (this "
               "build: %s)",
               n ? "; " : "", facts[i].label, facts[i].now);
  }
  if (!has_prov) {
    rep->build_differs = 1;
    n = strlen(rep->build_note);
    snprintf(rep->build_note + n, sizeof rep->build_note - n,
             "%sthe record does not name the compiler and libraries that made it",
             n ? "; " : "");
  }
}

/* ---- entry points ---------------------------------------------------------- */

static sp_status kind_of(const char *name, const json_t *root, sp_replay_kind *kind,
                         sp_error *err)
{
  sp_replay_ctx c = {NULL, name, err};
  const char *format = NULL;
  sp_status s = sp_replay_need_str(&c, root, "format", "format", 0, &format);
  if (s != SP_OK) return s;
  /* set when the reader above returned SP_OK (not followed by the analyzer):
   * NOLINTNEXTLINE(clang-analyzer-core.NonNullParamChecker) */
  if (strcmp(format, SP_RECORD_FIT_FORMAT) == 0) *kind = SP_REPLAY_FIT;
  else if (strcmp(format, SP_RECORD_RUN_FORMAT) == 0) *kind = SP_REPLAY_RUN;
  else
    return sp_replay_bad(&c, "format", "must be \"%s\" or \"%s\", got \"%s\"",
                         SP_RECORD_FIT_FORMAT, SP_RECORD_RUN_FORMAT, format);
  json_t *v = json_object_get(root, "version");
  int want = *kind == SP_REPLAY_FIT ? SP_RECORD_FIT_VERSION : SP_RECORD_RUN_VERSION;
  c.kind = *kind == SP_REPLAY_FIT ? "fit" : "run";
  if (!v) return sp_replay_bad(&c, "version", "is missing");
  if (!json_is_integer(v)) return sp_replay_bad(&c, "version", "must be an integer");
  if (json_integer_value(v) != want)
    return sp_replay_bad(&c, "version", "is %lld; this build replays version %d",
                         (long long)json_integer_value(v), want);
  return SP_OK;
}

sp_status sp_replay(const char *path, const sp_replay_options *opt, sp_replay_report *rep,
                    sp_error *err)
{
  memset(rep, 0, sizeof *rep);
  sp_replay_options dflt;
  if (!opt) {
    sp_replay_options_init(&dflt);
    opt = &dflt;
  }
  json_t *root = sp_replay_load_json(path, err);
  if (!root) return err ? err->code : SP_EIO;
  sp_status s = kind_of(path, root, &rep->kind, err);
  if (s == SP_OK) {
    sp_replay_check_build(root, rep);
    if (opt->tolerance >= 0) rep->tolerance = opt->tolerance;
    else rep->tolerance = rep->build_differs ? SP_REPLAY_DEFAULT_TOLERANCE : 0.0;
    s = rep->kind == SP_REPLAY_FIT ? sp_replay_fit_record(path, root, opt, rep, err)
                                   : sp_replay_run_record(path, root, opt, rep, err);
  }
  json_decref(root);
  return s;
}

sp_status sp_replay_compare(const char *recorded, size_t recorded_len, const char *replayed,
                            size_t replayed_len, double tol, sp_replay_report *rep,
                            sp_error *err)
{
  memset(rep, 0, sizeof *rep);
  if (!(tol >= 0)) return sp_fail(err, SP_EUSAGE, "replay: the tolerance must be >= 0");
  json_error_t je;
  json_t *a = json_loadb(recorded, recorded_len, JSON_REJECT_DUPLICATES, &je);
  if (!a) return sp_fail(err, SP_EDATA, "recorded text is not valid JSON: %s", je.text);
  json_t *b = json_loadb(replayed, replayed_len, JSON_REJECT_DUPLICATES, &je);
  if (!b) {
    json_decref(a);
    return sp_fail(err, SP_EDATA, "replayed text is not valid JSON: %s", je.text);
  }
  sp_replay_kind ka, kb;
  sp_status s = kind_of("(recorded text)", a, &ka, err);
  if (s == SP_OK) s = kind_of("(replayed text)", b, &kb, err);
  /* set when the reader above returned SP_OK (not followed):
   * NOLINTNEXTLINE(clang-analyzer-core.UndefinedBinaryOperatorResult) */
  if (s == SP_OK && ka != kb)
    s = sp_fail(err, SP_EDATA, "the two texts are records of different kinds");
  if (s == SP_OK) {
    rep->kind = ka;
    rep->tolerance = tol;
    s = sp_replay_compare_trees(a, b, ka, tol, rep, err);
    if (s == SP_OK && rep->ndiffs_total > 0) s = SP_EDIFFERS;
  }
  json_decref(a);
  json_decref(b);
  return s;
}
