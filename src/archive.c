/* scatterprop archive: a fit or a run with all its inputs in one folder
 * whose records name their files relative to themselves.  The plan (every
 * file's relative path and bytes) is built in memory first, so that a
 * refusal writes nothing; then it is written to a temporary folder and
 * renamed into place. */
#include "scatterprop/archive.h"

#include <dirent.h>
#include <errno.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "scatterprop/model.h"
#include "scatterprop/record.h"
#include "scatterprop/run.h"
#include "json_build.h"
#include "replay_internal.h"

#define TRY(x)                                                                 \
  do {                                                                         \
    sp_status s_ = (x);                                                        \
    if (s_ != SP_OK) return s_;                                                \
  } while (0)

/* What every archived record says about its paths. */
static const char layout_text[] =
    "paths in this record are relative to its folder; archive layout: run.json, model.spm, "
    "fits/*.json, data/*, charts/*, MANIFEST.sha256";

/* ---- the plan --------------------------------------------------------------- */

typedef struct {
  char *rel;          /* path inside the archive: "fits/wire_d.json" */
  char *data;         /* bytes (owned) */
  size_t len;
  char sha256[SP_SHA256_HEX_LEN];
  char *source;       /* the file it was copied from, or NULL for a made one */
} afile;

typedef struct {
  afile *f;
  size_t n, cap;
  sp_error *err;
} plan;

static void plan_free(plan *p)
{
  for (size_t i = 0; i < p->n; i++) {
    free(p->f[i].rel);
    free(p->f[i].data);
    free(p->f[i].source);
  }
  free(p->f);
}

/* Adds a file; takes data (owned) in every case. */
static sp_status plan_add(plan *p, const char *rel, char *data, size_t len, const char *source)
{
  if (p->n == p->cap) {
    size_t cap = p->cap ? 2 * p->cap : 8;
    afile *nf = realloc(p->f, cap * sizeof *nf);
    if (!nf) {
      free(data);
      return sp_fail(p->err, SP_ENOMEM, "out of memory");
    }
    p->f = nf;
    p->cap = cap;
  }
  afile *f = &p->f[p->n];
  f->rel = strdup(rel);
  f->source = source ? strdup(source) : NULL;
  f->data = data;
  f->len = len;
  if (!f->rel || (source && !f->source)) {
    free(f->rel);
    free(f->source);
    free(data);
    return sp_fail(p->err, SP_ENOMEM, "out of memory");
  }
  sp_sha256_buffer(data, len, f->sha256);
  p->n++;
  return SP_OK;
}

static const afile *plan_find(const plan *p, const char *rel)
{
  for (size_t i = 0; i < p->n; i++)
    if (strcmp(p->f[i].rel, rel) == 0) return &p->f[i];
  return NULL;
}

/* A file in folder with these bytes already planned (a data file shared by
 * two fit records, a fit record shared by two inputs). */
static const afile *plan_find_same(const plan *p, const char *folder, const char *sha256,
                                   const char *source)
{
  size_t n = strlen(folder);
  for (size_t i = 0; i < p->n; i++) {
    const afile *f = &p->f[i];
    if (strncmp(f->rel, folder, n) != 0 || f->rel[n] != '/') continue;
    if (strcmp(f->sha256, sha256) != 0) continue;
    if (source && (!f->source || strcmp(f->source, source) != 0)) continue;
    return f;
  }
  return NULL;
}

/* folder/NAME for the file name of path: letters, digits, '.', '-' and
 * '_' kept, anything else (quotes, blanks, non-ASCII) becomes '_', a
 * leading '.' too; "-2", "-3", ... before the extension when the name is
 * taken.  Into out (n bytes). */
static void unique_name(const plan *p, const char *folder, const char *path, char *out,
                        size_t n)
{
  const char *base = strrchr(path, '/');
  base = base ? base + 1 : path;
  char clean[128];
  size_t k = 0;
  for (const char *c = base; *c && k + 1 < sizeof clean; c++) {
    int ok = (*c >= 'a' && *c <= 'z') || (*c >= 'A' && *c <= 'Z') || (*c >= '0' && *c <= '9') ||
             *c == '-' || *c == '_' || (*c == '.' && k > 0);
    clean[k++] = ok ? *c : '_';
  }
  clean[k] = '\0';
  if (k == 0) snprintf(clean, sizeof clean, "file");
  char *dot = strrchr(clean, '.');
  size_t stem = dot ? (size_t)(dot - clean) : strlen(clean);
  snprintf(out, n, "%s/%s", folder, clean);
  for (int i = 2; plan_find(p, out); i++)
    snprintf(out, n, "%s/%.*s-%d%s", folder, (int)stem, clean, i, dot ? dot : "");
}

/* ---- helpers ---------------------------------------------------------------- */

static char *dump_record(json_t *root, sp_error *err, size_t *len)
{
  char *t = json_dumps(root, REC_DUMP_FLAGS);
  if (!t) {
    sp_fail(err, SP_ENOMEM, "archive: cannot write the record (out of memory)");
    return NULL;
  }
  *len = strlen(t);
  return t;
}

/* {"field", "from", "to"} appended to the rewrite list. */
static int note_rewrite(json_t *list, const char *field, json_t *from, const char *to)
{
  json_t *o = json_pack("{s:s, s:O, s:s}", "field", field, "from", from ? from : json_null(),
                        "to", to);
  return !o || json_array_append_new(list, o) != 0;
}

/* The "archive" object every archived record gets; keeps a previous one
 * (a record archived twice) under "previous". */
static json_t *archive_obj(json_t *root, json_t *rewrites)
{
  char when[SP_RECORD_TIME_LEN];
  sp_record_time_utc((int64_t)time(NULL), when);
  json_t *a = json_pack("{s:s, s:s, s:o}", "created_utc", when, "layout", layout_text,
                        "rewritten", rewrites);
  json_t *prev = json_object_get(root, "archive");
  if (a && prev) json_object_set(a, "previous", prev);
  return a;
}

/* Reads a file the record names and checks it against the recorded hash. */
static char *read_checked(const char *path, const char *want_sha, const char *what,
                          const char *record, size_t *len, sp_error *err)
{
  char *data = sp_replay_read_file(path, len, err);
  if (!data) return NULL;
  char sha[SP_SHA256_HEX_LEN];
  sp_sha256_buffer(data, *len, sha);
  if (strcmp(sha, want_sha) != 0) {
    free(data);
    sp_fail(err, SP_EDATA, "archive: %s %s changed since %s was made (recorded sha256 %s, "
            "now %s)", what, path, record, want_sha, sha);
    sp_error_hint(err, "rerun the step that made %s, then archive again", record);
    return NULL;
  }
  return data;
}

/* Plans a fit record (tree root; src_path the file it was read from, or ""
 * for a record made now) and its data file.  *rel receives the record's
 * path in the archive (owned). */
static sp_status plan_fit(plan *p, json_t *root, const char *src_path, const char *name,
                          char **rel)
{
  sp_replay_ctx c = {"fit", src_path[0] ? src_path : "(new)", p->err};
  json_t *data = NULL;
  const char *dpath = NULL, *dsha = NULL;
  TRY(sp_replay_need_obj(&c, root, "data", "data", &data));
  TRY(sp_replay_need_str(&c, data, "path", "data.path", 0, &dpath));
  TRY(sp_replay_need_sha(&c, data, "sha256", "data.sha256", &dsha));
  int exists = 0;
  char *where = sp_replay_locate(src_path, root, dpath, &exists);
  if (!where) return sp_fail(p->err, SP_ENOMEM, "out of memory");
  size_t len = 0;
  char *bytes = read_checked(where, dsha, "data file", c.name, &len, p->err);
  if (!bytes) {
    free(where);
    return p->err ? p->err->code : SP_EIO;
  }
  char drel[512];
  const afile *same = plan_find_same(p, "data", dsha, NULL);
  if (same) {
    snprintf(drel, sizeof drel, "%s", same->rel);
    free(bytes);
  } else {
    unique_name(p, "data", dpath, drel, sizeof drel);
    sp_status s = plan_add(p, drel, bytes, len, where);
    if (s != SP_OK) {
      free(where);
      return s;
    }
  }
  free(where);
  char newpath[600];
  snprintf(newpath, sizeof newpath, "../%s", drel);
  json_t *rw = json_array();
  int bad = !rw || note_rewrite(rw, "data.path", json_object_get(data, "path"), newpath);
  bad = bad || json_object_set_new(data, "path", json_string(newpath)) != 0;
  json_t *a = bad ? NULL : archive_obj(root, rw);
  if (!a) {
    if (bad) json_decref(rw);
    return sp_fail(p->err, SP_ENOMEM, "out of memory");
  }
  if (json_object_set_new(root, "archive", a) != 0)
    return sp_fail(p->err, SP_ENOMEM, "out of memory");
  size_t tlen = 0;
  char *text = dump_record(root, p->err, &tlen);
  if (!text) return SP_ENOMEM;
  char frel[512];
  unique_name(p, "fits", name, frel, sizeof frel);
  TRY(plan_add(p, frel, text, tlen, src_path[0] ? src_path : NULL));
  *rel = strdup(frel);
  if (!*rel) return sp_fail(p->err, SP_ENOMEM, "out of memory");
  return SP_OK;
}

static sp_status plan_extras(plan *p, const sp_archive_extra *extra, size_t nextra)
{
  for (size_t i = 0; i < nextra; i++) {
    const char *folder = extra[i].folder;
    if (!folder || !folder[0] || strchr(folder, '/') || strcmp(folder, ".") == 0 ||
        strcmp(folder, "..") == 0 || strcmp(folder, "fits") == 0 || strcmp(folder, "data") == 0)
      return sp_fail(p->err, SP_EUSAGE, "archive: '%s' cannot be the folder of an extra file",
                     folder ? folder : "(null)");
    size_t len = 0;
    char *bytes = sp_replay_read_file(extra[i].path, &len, p->err);
    if (!bytes) return p->err ? p->err->code : SP_EIO;
    char rel[512];
    unique_name(p, folder, extra[i].path, rel, sizeof rel);
    TRY(plan_add(p, rel, bytes, len, extra[i].path));
  }
  return SP_OK;
}

static int cmp_afile(const void *a, const void *b)
{
  return strcmp(((const afile *)a)->rel, ((const afile *)b)->rel);
}

static sp_status plan_manifest(plan *p)
{
  qsort(p->f, p->n, sizeof *p->f, cmp_afile);
  size_t cap = 1;
  for (size_t i = 0; i < p->n; i++) cap += SP_SHA256_HEX_LEN + 2 + strlen(p->f[i].rel) + 1;
  char *m = malloc(cap);
  if (!m) return sp_fail(p->err, SP_ENOMEM, "out of memory");
  size_t k = 0;
  for (size_t i = 0; i < p->n; i++)
    k += (size_t)snprintf(m + k, cap - k, "%s  %s\n", p->f[i].sha256, p->f[i].rel);
  return plan_add(p, "MANIFEST.sha256", m, k, NULL);
}

/* ---- writing ---------------------------------------------------------------- */

static int make_dir(const char *path)
{
  return mkdir(path, 0755) == 0 || errno == EEXIST;
}

/* Writes every planned file under root (creating the subfolders). */
static sp_status write_files(const plan *p, const char *root, int overwrite, sp_error *err)
{
  for (size_t i = 0; i < p->n; i++) {
    char *path = sp_replay_join(root, p->f[i].rel);
    if (!path) return sp_fail(err, SP_ENOMEM, "out of memory");
    char *slash = strrchr(path, '/');
    if (slash && slash > path + strlen(root)) {
      *slash = '\0';
      int ok = make_dir(path);
      *slash = '/';
      if (!ok) {
        sp_status s = sp_fail(err, SP_EIO, "%s: cannot create its folder: %s", path,
                              strerror(errno));
        free(path);
        return s;
      }
    }
    sp_status s = sp_file_write_atomic(path, p->f[i].data, p->f[i].len, overwrite, err);
    free(path);
    if (s != SP_OK) return s;
  }
  return SP_OK;
}

/* Removes what write_files made under root (after a failure). */
static void remove_files(const plan *p, const char *root)
{
  for (size_t i = p->n; i-- > 0;) {
    char *path = sp_replay_join(root, p->f[i].rel);
    if (!path) continue;
    unlink(path);
    char *slash = strrchr(path, '/');
    if (slash && slash > path + strlen(root)) {
      *slash = '\0';
      rmdir(path); /* fails harmlessly while other files remain */
    }
    free(path);
  }
  rmdir(root);
}

/* ---- replacing an archive ------------------------------------------------------ */

/* The relative paths the manifest of the archive at dir lists (returns
 * owned, one NUL-terminated path after another in *buf, *n of them), or
 * NULL when it has none that can be read. */
static char *manifest_paths(const char *dir, size_t *n)
{
  char *mp = sp_replay_join(dir, "MANIFEST.sha256");
  if (!mp) return NULL;
  sp_error e;
  sp_error_clear(&e);
  size_t len = 0;
  char *m = sp_replay_read_file(mp, &len, &e);
  free(mp);
  if (!m) return NULL;
  /* "<64 hex>  <path>\n" lines: keep the paths, in place. */
  size_t k = 0, out = 0;
  *n = 0;
  while (k < len) {
    char *eol = memchr(m + k, '\n', len - k);
    size_t end = eol ? (size_t)(eol - m) : len;
    if (end - k > 66 && m[k + 64] == ' ' && m[k + 65] == ' ') {
      size_t plen = end - k - 66;
      memmove(m + out, m + k + 66, plen);
      m[out + plen] = '\0';
      out += plen + 1;
      (*n)++;
    }
    k = end + 1;
  }
  return m;
}

static int listed_in(const char *paths, size_t n, const char *rel)
{
  for (size_t i = 0; i < n; i++, paths += strlen(paths) + 1)
    if (strcmp(paths, rel) == 0) return 1;
  return 0;
}

/* Whether dir holds an archive and nothing else: MANIFEST.sha256, the
 * files it lists, and the folders fits/, data/ and charts/ for them.  On
 * failure err names the first file that does not belong (SP_EIO). */
static sp_status only_an_archive(const char *dir, sp_error *err)
{
  size_t n = 0;
  char *paths = manifest_paths(dir, &n);
  if (!paths) {
    sp_fail(err, SP_EIO,
            "%s: the folder holds files and no archive manifest "
            "(MANIFEST.sha256); refusing to replace it even with --force",
            dir);
    return sp_error_hint(err, "an archive replaces only an earlier archive: empty the "
                              "folder, or choose another one");
  }
  static const char *const sub[] = {"", "fits", "data", "charts"};
  sp_status s = SP_OK;
  for (size_t f = 0; f < sizeof sub / sizeof sub[0] && s == SP_OK; f++) {
    char *d = sub[f][0] ? sp_replay_join(dir, sub[f]) : strdup(dir);
    DIR *h = d ? opendir(d) : NULL;
    if (!h) {
      free(d);
      continue; /* a sub-folder this archive did not need */
    }
    for (struct dirent *e; s == SP_OK && (e = readdir(h)) != NULL;) {
      if (!strcmp(e->d_name, ".") || !strcmp(e->d_name, "..")) continue;
      char rel[600];
      snprintf(rel, sizeof rel, "%s%s%s", sub[f], sub[f][0] ? "/" : "", e->d_name);
      char *full = sp_replay_join(dir, rel);
      struct stat st;
      int ok = full && lstat(full, &st) == 0;
      int is_sub = 0;
      for (size_t g = 1; !sub[f][0] && g < sizeof sub / sizeof sub[0]; g++)
        is_sub |= strcmp(e->d_name, sub[g]) == 0;
      if (ok && S_ISDIR(st.st_mode))
        ok = is_sub;
      else if (ok)
        ok = S_ISREG(st.st_mode) &&
             (listed_in(paths, n, rel) || strcmp(rel, "MANIFEST.sha256") == 0);
      free(full);
      if (!ok) {
        s = sp_fail(err, SP_EIO,
                    "%s: holds %s, which is not part of the archive there "
                    "(its MANIFEST.sha256 does not list it); refusing to replace the folder "
                    "even with --force",
                    dir, rel);
        sp_error_hint(err, "move that file out of the folder, or choose another one");
      }
    }
    closedir(h);
    free(d);
  }
  free(paths);
  return s;
}

/* Removes an archive that only_an_archive accepted: its listed files, the
 * manifest, the sub-folders and the folder itself. */
static void remove_archive(const char *dir)
{
  size_t n = 0;
  char *paths = manifest_paths(dir, &n);
  const char *q = paths;
  for (size_t i = 0; paths && i < n; i++, q += strlen(q) + 1) {
    if (strstr(q, "..")) continue; /* never outside the folder */
    char *full = sp_replay_join(dir, q);
    if (full) unlink(full);
    free(full);
  }
  free(paths);
  static const char *const rest[] = {"MANIFEST.sha256", "fits", "data", "charts"};
  for (size_t i = 0; i < sizeof rest / sizeof rest[0]; i++) {
    char *full = sp_replay_join(dir, rest[i]);
    /* A folder that is not empty (it never is here) would be kept. */
    if (full && unlink(full) != 0) rmdir(full);
    free(full);
  }
  rmdir(dir);
}

/* Replaces the archive at dir by the plan: written whole beside it first,
 * then the old one moved aside, the new one moved in, the old one removed.
 * A failure before the swap leaves the old archive as it was. */
static sp_status replace_archive(const plan *p, const char *dir, sp_error *err);

static sp_status write_plan(const plan *p, const char *dir_in, int overwrite, sp_error *err)
{
  char dir[4096];
  size_t n = strlen(dir_in);
  while (n > 1 && dir_in[n - 1] == '/') n--;
  if (n == 0 || n >= sizeof dir - 16) return sp_fail(err, SP_EUSAGE, "archive: bad folder name");
  memcpy(dir, dir_in, n);
  dir[n] = '\0';
  struct stat st;
  int exists = stat(dir, &st) == 0;
  if (exists && !S_ISDIR(st.st_mode))
    return sp_fail(err, SP_EIO, "%s: exists and is not a folder", dir);
  /* An existing folder: rmdir succeeds only when it is empty, and then the
   * temporary folder can take its place. */
  if (exists && rmdir(dir) != 0) {
    if (!overwrite) {
      sp_fail(err, SP_EIO, "%s: the archive folder exists and is not empty; refusing to "
              "overwrite it", dir);
      return sp_error_hint(err, "give --force to replace its files, or choose another folder");
    }
    return replace_archive(p, dir, err);
  }
  char tmp[4096 + 16];
  snprintf(tmp, sizeof tmp, "%s.tmp-%s", dir, "XX" "XX" "XX");
  if (!mkdtemp(tmp))
    return sp_fail(err, SP_EIO, "%s: cannot create a temporary folder beside it: %s", dir,
                   strerror(errno));
  sp_status s = write_files(p, tmp, 0, err);
  if (s == SP_OK && rename(tmp, dir) != 0)
    s = sp_fail(err, SP_EIO, "%s: cannot move the archive into place: %s", dir,
                strerror(errno));
  if (s != SP_OK) {
    remove_files(p, tmp);
    if (exists) make_dir(dir); /* put back the empty folder that was there */
  }
  return s;
}

sp_status sp_archive_check(const char *dir_in, int overwrite, sp_error *err)
{
  char dir[4096];
  size_t n = dir_in ? strlen(dir_in) : 0;
  while (n > 1 && dir_in[n - 1] == '/')
    n--;
  if (n == 0 || n >= sizeof dir - 16) return sp_fail(err, SP_EUSAGE, "archive: bad folder name");
  memcpy(dir, dir_in, n);
  dir[n] = '\0';
  struct stat st;
  if (stat(dir, &st) == 0) {
    if (!S_ISDIR(st.st_mode)) return sp_fail(err, SP_EIO, "%s: exists and is not a folder", dir);
    DIR *d = opendir(dir);
    if (!d) return sp_fail(err, SP_EIO, "%s: cannot read the folder: %s", dir, strerror(errno));
    int empty = 1;
    for (struct dirent *e; empty && (e = readdir(d)) != NULL;)
      if (strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0) empty = 0;
    closedir(d);
    if (empty) return SP_OK;
    if (overwrite) return only_an_archive(dir, err);
    sp_fail(err, SP_EIO,
            "%s: the archive folder exists and is not empty; refusing to "
            "overwrite it",
            dir);
    return sp_error_hint(err, "give --force to replace its files, or choose another folder");
  }
  if (errno != ENOENT) return sp_fail(err, SP_EIO, "%s: %s", dir, strerror(errno));
  /* The archive is made beside DIR, so its parent folder must be there. */
  char *parent = sp_replay_dir_of(dir);
  if (!parent) return sp_fail(err, SP_ENOMEM, "out of memory");
  int ok = !parent[0] || stat(parent, &st) == 0;
  if (ok && parent[0]) ok = S_ISDIR(st.st_mode);
  sp_status s = SP_OK;
  if (!ok) {
    s = sp_fail(err, SP_EIO, "%s: cannot make the archive folder: %s is not a folder", dir, parent);
    sp_error_hint(err, "make the parent folder first, or choose another --archive");
  }
  free(parent);
  return s;
}

static sp_status replace_archive(const plan *p, const char *dir, sp_error *err)
{
  TRY(only_an_archive(dir, err));
  char tmp[4096 + 16], old[4096 + 16];
  snprintf(tmp, sizeof tmp, "%s.tmp-%s", dir,
           "XX"
           "XX"
           "XX");
  snprintf(old, sizeof old, "%s.old-%s", dir,
           "XX"
           "XX"
           "XX");
  if (!mkdtemp(tmp))
    return sp_fail(err, SP_EIO, "%s: cannot create a temporary folder beside it: %s", dir,
                   strerror(errno));
  sp_status s = write_files(p, tmp, 0, err);
  if (s != SP_OK) {
    remove_files(p, tmp);
    return s;
  }
  /* mkdtemp makes an empty folder, which rename(2) may replace. */
  if (!mkdtemp(old) || rename(dir, old) != 0) {
    s = sp_fail(err, SP_EIO, "%s: cannot move the old archive aside: %s", dir, strerror(errno));
    rmdir(old);
    remove_files(p, tmp);
    return s;
  }
  if (rename(tmp, dir) != 0) {
    s = sp_fail(err, SP_EIO, "%s: cannot move the new archive into place: %s", dir,
                strerror(errno));
    if (rename(old, dir) != 0)
      sp_error_hint(err, "the old archive is in %s, the new one in %s", old, tmp);
    else
      remove_files(p, tmp);
    return s;
  }
  remove_archive(old);
  return SP_OK;
}

/* ---- fit archives -------------------------------------------------------------- */

sp_status sp_archive_fit(const char *dir, const char *record_text, const char *record_name,
                         const sp_archive_extra *extra, size_t nextra, int overwrite,
                         sp_error *err)
{
  if (!record_name || !record_name[0])
    return sp_fail(err, SP_EUSAGE, "archive: the record needs a file name");
  json_error_t je;
  json_t *root = json_loads(record_text, 0, &je);
  if (!root || !json_is_object(root)) {
    json_decref(root);
    return sp_fail(err, SP_EDATA, "archive: the fit record is not a JSON object");
  }
  const char *fmt = json_string_value(json_object_get(root, "format"));
  if (!fmt || strcmp(fmt, SP_RECORD_FIT_FORMAT) != 0) {
    json_decref(root);
    return sp_fail(err, SP_EDATA, "archive: not a fit record (format '%s')", fmt ? fmt : "");
  }
  plan p = {NULL, 0, 0, err};
  char *rel = NULL;
  sp_status s = plan_fit(&p, root, "", record_name, &rel);
  if (s == SP_OK) s = plan_extras(&p, extra, nextra);
  if (s == SP_OK) s = plan_manifest(&p);
  if (s == SP_OK) s = write_plan(&p, dir, overwrite, err);
  free(rel);
  plan_free(&p);
  json_decref(root);
  return s;
}

/* ---- run archives ------------------------------------------------------------- */

/* A fit() path to rewrite on a model line. */
typedef struct {
  long line;
  const char *from;
  const char *to;
} rewrite;

/* Offset of the string literal "from" that is the argument of fit( on the
 * given line of text, or -1. */
static long find_fit_literal(const char *text, size_t len, long line, const char *from)
{
  size_t ls = 0;
  for (long l = 1; l < line && ls < len; ls++)
    if (text[ls] == '\n') l++;
  size_t le = ls;
  while (le < len && text[le] != '\n') le++;
  size_t fl = strlen(from);
  for (size_t q = ls; q + fl + 2 <= le; q++) {
    if (text[q] != '"' || text[q + fl + 1] != '"' || memcmp(text + q + 1, from, fl) != 0)
      continue;
    size_t b = q;
    while (b > ls && (text[b - 1] == ' ' || text[b - 1] == '\t')) b--;
    if (b == ls || text[b - 1] != '(') continue;
    b--;
    while (b > ls && (text[b - 1] == ' ' || text[b - 1] == '\t')) b--;
    if (b < ls + 3 || memcmp(text + b - 3, "fit", 3) != 0) continue;
    if (b > ls + 3) {
      char pc = text[b - 4];
      if ((pc >= 'a' && pc <= 'z') || (pc >= 'A' && pc <= 'Z') || (pc >= '0' && pc <= '9') ||
          pc == '_')
        continue;
    }
    return (long)q;
  }
  return -1;
}

static int cmp_off(const void *a, const void *b)
{
  long x = *(const long *)a, y = *(const long *)b;
  return (x < y) - (x > y); /* descending */
}

/* The model text with every fit("from") replaced by fit("to").  Returns
 * owned, or NULL with err set. */
static char *rewrite_model(const char *text, size_t len, const rewrite *rw, size_t n,
                           size_t *out_len, sp_error *err)
{
  /* Pairs (offset, index), applied from the end so offsets stay valid. */
  long *off = malloc((n ? n : 1) * 2 * sizeof *off);
  if (!off) {
    sp_fail(err, SP_ENOMEM, "out of memory");
    return NULL;
  }
  size_t extra = 0;
  for (size_t i = 0; i < n; i++) {
    long q = find_fit_literal(text, len, rw[i].line, rw[i].from);
    if (q < 0) {
      free(off);
      sp_fail_at(err, SP_EMODEL, "model.spm", rw[i].line, 0,
                 "archive: cannot find fit(\"%s\") on this line of the model", rw[i].from);
      return NULL;
    }
    off[2 * i] = q;
    off[2 * i + 1] = (long)i;
    extra += strlen(rw[i].to);
  }
  qsort(off, n, 2 * sizeof *off, cmp_off);
  char *out = malloc(len + extra + 1);
  if (!out) {
    free(off);
    sp_fail(err, SP_ENOMEM, "out of memory");
    return NULL;
  }
  memcpy(out, text, len);
  size_t cur = len;
  for (size_t k = 0; k < n; k++) {
    size_t q = (size_t)off[2 * k];
    const rewrite *r = &rw[off[2 * k + 1]];
    size_t fl = strlen(r->from), tl = strlen(r->to);
    /* Skip a second rewrite of the same literal (two entries, one input). */
    if (k > 0 && off[2 * k] == off[2 * (k - 1)]) continue;
    memmove(out + q + 1 + tl, out + q + 1 + fl, cur - (q + 1 + fl));
    memcpy(out + q + 1, r->to, tl);
    cur = cur - fl + tl;
  }
  out[cur] = '\0';
  *out_len = cur;
  free(off);
  return out;
}

/* The rewritten model must compile to the same inputs with the new paths. */
static sp_status check_model(const char *text, size_t len, const rewrite *rw, size_t n,
                             sp_error *err)
{
  sp_model *m = NULL;
  sp_model_diags d;
  sp_model_diags_init(&d);
  sp_status s = sp_model_compile("model.spm", text, len, &m, &d, err);
  sp_model_diags_clear(&d);
  if (s != SP_OK) return s;
  for (size_t i = 0; i < n && s == SP_OK; i++) {
    int found = 0;
    for (size_t k = 0; k < sp_model_input_count(m) && !found; k++) {
      const sp_model_input *in = sp_model_input_at(m, k);
      found = in->line == rw[i].line && in->fit_path && strcmp(in->fit_path, rw[i].to) == 0;
    }
    if (!found)
      s = sp_fail_at(err, SP_EMODEL, "model.spm", rw[i].line, 0,
                     "archive: the rewritten model does not read fit(\"%s\") here", rw[i].to);
  }
  sp_model_free(m);
  return s;
}

sp_status sp_archive_run(const char *dir, const char *record_text,
                         const sp_archive_extra *extra, size_t nextra, int overwrite,
                         sp_error *err)
{
  json_error_t je;
  json_t *root = json_loads(record_text, 0, &je);
  if (!root || !json_is_object(root)) {
    json_decref(root);
    return sp_fail(err, SP_EDATA, "archive: the run record is not a JSON object");
  }
  sp_replay_ctx c = {"run", "(new)", err};
  plan p = {NULL, 0, 0, err};
  rewrite *rw = NULL;
  char **rels = NULL, **origs = NULL, **froms = NULL;
  size_t nrw = 0, ninputs = 0;
  char *mtext = NULL;
  json_t *model = NULL, *inputs = NULL, *rewrites = json_array();
  const char *mpath = NULL, *msha = NULL, *text = NULL;
  const char *fmt = json_string_value(json_object_get(root, "format"));
  sp_status s = SP_OK;
  if (!fmt || strcmp(fmt, SP_RECORD_RUN_FORMAT) != 0)
    s = sp_fail(err, SP_EDATA, "archive: not a run record (format '%s')", fmt ? fmt : "");
  if (s == SP_OK && !rewrites) s = sp_fail(err, SP_ENOMEM, "out of memory");
  if (s == SP_OK) s = sp_replay_need_obj(&c, root, "model", "model", &model);
  if (s == SP_OK) s = sp_replay_need_str(&c, model, "path", "model.path", 0, &mpath);
  if (s == SP_OK) s = sp_replay_need_sha(&c, model, "sha256", "model.sha256", &msha);
  if (s == SP_OK) s = sp_replay_need_str(&c, model, "text", "model.text", 0, &text);
  if (s == SP_OK) s = sp_replay_need_arr(&c, root, "inputs", "inputs", &inputs);
  if (s == SP_OK) {
    char tsha[SP_SHA256_HEX_LEN];
    sp_sha256_buffer(text, json_string_length(json_object_get(model, "text")), tsha);
    if (strcmp(tsha, msha) != 0)
      s = sp_fail(err, SP_EDATA, "archive: the model text in the run record does not match "
                  "its sha256 (%s, the text hashes to %s)", msha, tsha);
  }
  if (s == SP_OK) {
    ninputs = json_array_size(inputs);
    rw = calloc(ninputs ? ninputs : 1, sizeof *rw);
    rels = calloc(ninputs ? ninputs : 1, sizeof *rels);
    origs = calloc(ninputs ? ninputs : 1, sizeof *origs);
    froms = calloc(ninputs ? ninputs : 1, sizeof *froms);
    if (!rw || !rels || !origs || !froms) s = sp_fail(err, SP_ENOMEM, "out of memory");
  }
  /* Each fit record, read where the run read it, checked and planned. */
  for (size_t i = 0; i < ninputs && s == SP_OK; i++) {
    json_t *in = json_array_get(inputs, i);
    json_t *fr = json_object_get(in, "fit_record");
    if (!json_is_object(fr)) continue;
    const char *fpath = NULL, *resolved = NULL, *fsha = NULL;
    char pp[128];
    snprintf(pp, sizeof pp, "inputs[%zu].fit_record.path", i);
    s = sp_replay_need_str(&c, fr, "path", pp, 0, &fpath);
    snprintf(pp, sizeof pp, "inputs[%zu].fit_record.resolved", i);
    if (s == SP_OK) s = sp_replay_need_str(&c, fr, "resolved", pp, 0, &resolved);
    snprintf(pp, sizeof pp, "inputs[%zu].fit_record.sha256", i);
    if (s == SP_OK) s = sp_replay_need_sha(&c, fr, "sha256", pp, &fsha);
    json_t *line = json_object_get(in, "line");
    snprintf(pp, sizeof pp, "inputs[%zu].line", i);
    if (s == SP_OK && !json_is_integer(line)) s = sp_replay_bad(&c, pp, "must be an integer");
    if (s != SP_OK) break;
    /* One copy of a record that several inputs share. */
    char *rel = NULL;
    for (size_t k = 0; k < i && !rel; k++)
      if (rels[k] && origs[k] && strcmp(origs[k], resolved) == 0) rel = strdup(rels[k]);
    if (!rel) {
      size_t flen = 0;
      int there = 0;
      char *where = sp_replay_locate("", root, resolved, &there);
      if (!where) {
        s = sp_fail(err, SP_ENOMEM, "out of memory");
        break;
      }
      char *ftext = read_checked(where, fsha, "fit record", "the run record", &flen, err);
      free(where);
      if (!ftext) {
        s = err ? err->code : SP_EIO;
        break;
      }
      json_t *froot = json_loadb(ftext, flen, JSON_REJECT_DUPLICATES, &je);
      free(ftext);
      if (!froot || !json_is_object(froot)) {
        json_decref(froot);
        s = sp_fail(err, SP_EDATA, "archive: fit record %s is not a JSON object", resolved);
        break;
      }
      s = plan_fit(&p, froot, resolved, fpath, &rel);
      json_decref(froot);
      if (s != SP_OK) break;
    }
    if (!rel) {
      s = sp_fail(err, SP_ENOMEM, "out of memory");
      break;
    }
    rels[i] = rel;
    origs[i] = strdup(resolved);
    froms[i] = strdup(fpath);
    if (!origs[i] || !froms[i]) {
      s = sp_fail(err, SP_ENOMEM, "out of memory");
      break;
    }
    rw[nrw].line = (long)json_integer_value(line);
    rw[nrw].from = froms[i];
    rw[nrw].to = rel;
    nrw++;
    /* The run record follows its fit records into the archive. */
    const afile *af = plan_find(&p, rel);
    char field[160];
    int bad = 0;
    snprintf(field, sizeof field, "inputs[%zu].fit_record.path", i);
    bad |= note_rewrite(rewrites, field, json_object_get(fr, "path"), rel);
    bad |= json_object_set_new(fr, "path", json_string(rel)) != 0;
    snprintf(field, sizeof field, "inputs[%zu].fit_record.resolved", i);
    bad |= note_rewrite(rewrites, field, json_object_get(fr, "resolved"), rel);
    bad |= json_object_set_new(fr, "resolved", json_string(rel)) != 0;
    snprintf(field, sizeof field, "inputs[%zu].fit_record.sha256", i);
    bad |= note_rewrite(rewrites, field, json_object_get(fr, "sha256"), af->sha256);
    bad |= json_object_set_new(fr, "sha256", json_string(af->sha256)) != 0;
    bad |= json_object_set_new(fr, "size", json_integer((json_int_t)af->len)) != 0;
    /* data_path: the archived fit record's data.path. */
    json_t *aroot = json_loadb(af->data, af->len, 0, &je);
    const char *dp = json_string_value(json_object_get(json_object_get(aroot, "data"), "path"));
    snprintf(field, sizeof field, "inputs[%zu].fit_record.data_path", i);
    if (dp) {
      bad |= note_rewrite(rewrites, field, json_object_get(fr, "data_path"), dp);
      bad |= json_object_set_new(fr, "data_path", json_string(dp)) != 0;
    }
    json_decref(aroot);
    if (bad) s = sp_fail(err, SP_ENOMEM, "out of memory");
  }
  size_t mlen = 0;
  if (s == SP_OK) {
    mtext = rewrite_model(text, json_string_length(json_object_get(model, "text")), rw, nrw,
                          &mlen, err);
    if (!mtext) s = err ? err->code : SP_ENOMEM;
  }
  if (s == SP_OK) s = check_model(mtext, mlen, rw, nrw, err);
  if (s == SP_OK) {
    char nsha[SP_SHA256_HEX_LEN];
    sp_sha256_buffer(mtext, mlen, nsha);
    int bad = note_rewrite(rewrites, "model.path", json_object_get(model, "path"), "model.spm");
    bad |= note_rewrite(rewrites, "model.sha256", json_object_get(model, "sha256"), nsha);
    bad |= json_object_set_new(model, "path", json_string("model.spm")) != 0;
    bad |= json_object_set_new(model, "sha256", json_string(nsha)) != 0;
    bad |= json_object_set_new(model, "text", json_stringn(mtext, mlen)) != 0;
    json_t *models = json_array();
    for (size_t i = 0; models && i < nrw; i++)
      bad |= json_array_append_new(models, json_pack("{s:I, s:s, s:s}", "line",
                                                     (json_int_t)rw[i].line, "from", rw[i].from,
                                                     "to", rw[i].to)) != 0;
    json_t *a = bad || !models ? NULL : archive_obj(root, rewrites);
    if (a) {
      rewrites = NULL; /* now owned by a */
      bad |= json_object_set_new(a, "model_fit_paths", models) != 0;
      bad |= json_object_set_new(root, "archive", a) != 0;
    } else {
      json_decref(models);
      bad = 1;
    }
    if (bad) s = sp_fail(err, SP_ENOMEM, "out of memory");
  }
  if (s == SP_OK) {
    s = plan_add(&p, "model.spm", mtext, mlen, NULL);
    mtext = NULL;
  }
  if (s == SP_OK) {
    size_t rlen = 0;
    char *rtext = dump_record(root, err, &rlen);
    s = rtext ? plan_add(&p, "run.json", rtext, rlen, NULL) : SP_ENOMEM;
  }
  if (s == SP_OK) s = plan_extras(&p, extra, nextra);
  if (s == SP_OK) s = plan_manifest(&p);
  if (s == SP_OK) s = write_plan(&p, dir, overwrite, err);
  for (size_t i = 0; rels && origs && froms && i < ninputs; i++) {
    free(rels[i]);
    free(origs[i]);
    free(froms[i]);
  }
  free(rels);
  free(origs);
  free(froms);
  free(rw);
  free(mtext);
  json_decref(rewrites);
  plan_free(&p);
  json_decref(root);
  return s;
}
