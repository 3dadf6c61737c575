/* scatterprop replay of a fit record: check the data file, fit it again
 * with the recorded options, compare the new record with the old. */
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "scatterprop/fit.h"
#include "scatterprop/ingest.h"
#include "scatterprop/record.h"
#include "replay_internal.h"

#define TRY(x)                                                                 \
  do {                                                                         \
    sp_status s_ = (x);                                                        \
    if (s_ != SP_OK) return s_;                                                \
  } while (0)

/* The recorded options into o (strings borrowed from root). */
static sp_status fit_options(const sp_replay_ctx *c, const json_t *root, sp_fit_options *o,
                             const char **families, const char **by)
{
  json_t *opt = NULL, *fams = NULL, *fixed = NULL, *boot = NULL;
  TRY(sp_replay_need_obj(c, root, "options", "options", &opt));
  TRY(sp_replay_need_arr(c, opt, "families", "options.families", &fams));
  size_t nf = json_array_size(fams);
  if (nf == 0) return sp_replay_bad(c, "options.families", "must not be empty");
  if (nf > SP_FIT_MAX_FAMILIES)
    return sp_replay_bad(c, "options.families", "lists more than %d families",
                         SP_FIT_MAX_FAMILIES);
  for (size_t i = 0; i < nf; i++) {
    json_t *v = json_array_get(fams, i);
    if (!json_is_string(v)) {
      char p[64];
      snprintf(p, sizeof p, "options.families[%zu]", i);
      return sp_replay_bad(c, p, "must be a string");
    }
    families[i] = json_string_value(v);
  }
  o->families = families;
  o->nfamilies = nf;
  TRY(sp_replay_need_obj(c, opt, "fixed", "options.fixed", &fixed));
  const char *key;
  json_t *v;
  json_object_foreach(fixed, key, v) {
    char p[256];
    snprintf(p, sizeof p, "options.fixed.%.200s", key);
    if (!json_is_number(v)) return sp_replay_bad(c, p, "must be a number");
    sp_error e;
    sp_error_clear(&e);
    if (sp_fit_options_fix(o, key, json_number_value(v), &e) != SP_OK)
      return sp_replay_bad(c, p, "is refused: %s", e.msg);
  }
  const char *s = NULL;
  sp_error e;
  sp_error_clear(&e);
  TRY(sp_replay_need_str(c, opt, "select", "options.select", 0, &s));
  if (sp_fit_select_parse(s, &o->select, &e) != SP_OK)
    return sp_replay_bad(c, "options.select", "is refused: %s", e.msg);
  TRY(sp_replay_need_str(c, opt, "force_family", "options.force_family", 1, &o->force_family));
  TRY(sp_replay_need_num(c, opt, "alpha", "options.alpha", 0, &o->alpha));
  if (!(o->alpha > 0 && o->alpha < 1)) return sp_replay_bad(c, "options.alpha", "must be in (0, 1)");
  TRY(sp_replay_need_str(c, opt, "pvalue_method", "options.pvalue_method", 0, &s));
  if (sp_fit_pvalue_mode_parse(s, &o->pvalue, &e) != SP_OK)
    return sp_replay_bad(c, "options.pvalue_method", "is refused: %s", e.msg);
  TRY(sp_replay_need_obj(c, opt, "bootstrap", "options.bootstrap", &boot));
  uint64_t B = 0;
  TRY(sp_replay_need_u64(c, boot, "B", "options.bootstrap.B", &B));
  o->bootstrap_B = (size_t)B;
  TRY(sp_replay_need_u64(c, boot, "seed", "options.bootstrap.seed", &o->seed));
  json_t *b = json_object_get(root, "by");
  *by = NULL;
  if (!b) return sp_replay_bad(c, "by", "is missing");
  if (!json_is_null(b)) {
    if (!json_is_object(b)) return sp_replay_bad(c, "by", "must be an object or null");
    TRY(sp_replay_need_str(c, b, "column", "by.column", 0, by));
  }
  return SP_OK;
}

sp_status sp_replay_fit_record(const char *path, json_t *root, const sp_replay_options *opt,
                               sp_replay_report *rep, sp_error *err)
{
  sp_replay_ctx c = {"fit", path, err};
  /* The whole record is validated as the model language would read it
   * (it names the first bad field); a record whose fit chose no family is
   * replayed too, so the reader's refusal of it is skipped. */
  json_t *chosen = json_object_get(root, "chosen");
  if (!chosen || !json_is_null(chosen)) {
    sp_record_fit rf;
    sp_status s = sp_record_fit_read(path, &rf, err);
    sp_record_fit_clear(&rf);
    if (s == SP_EDATA && err && !err->hint[0])
      sp_error_hint(err, "the record was edited or damaged after it was made: take the "
                         "original (an archive's MANIFEST.sha256 gives its hash)");
    if (s != SP_OK) return s;
  }
  json_t *data = NULL;
  const char *column = NULL, *recorded_path = NULL;
  TRY(sp_replay_need_obj(&c, root, "data", "data", &data));
  TRY(sp_replay_need_str(&c, data, "column", "data.column", 0, &column));
  TRY(sp_replay_need_str(&c, data, "path", "data.path", 0, &recorded_path));
  sp_fit_options o;
  sp_fit_options_init(&o);
  const char *families[SP_FIT_MAX_FAMILIES];
  const char *by = NULL;
  TRY(fit_options(&c, root, &o, families, &by));
  o.threads = opt->threads;

  TRY(sp_replay_check_fit_data(path, root, "data", rep, err));
  if (rep->nbad > 0) return sp_replay_inputs_failed(path, rep, err);

  sp_ingest_options io;
  sp_ingest_options_init(&io);
  /* The lot column is read as text when it has no unit, as fit read it. */
  if (by) {
    io.text_columns = &by;
    io.ntext_columns = 1;
  }
  sp_table *t = NULL;
  sp_fit_grouped g;
  memset(&g, 0, sizeof g);
  char *text = NULL;
  json_t *fresh = NULL;
  sp_status s = sp_table_read(rep->inputs[0].path, &io, &t, err);
  if (s == SP_OK) {
    s = sp_fit_table(t, column, by, &o, &g, err);
    /* Options the fitter refuses come from the record. */
    if (s == SP_EUSAGE) {
      char msg[SP_ERROR_MSG_MAX];
      snprintf(msg, sizeof msg, "%s", err ? err->msg : "");
      s = sp_fail(err, SP_EDATA, "fit record %s: its options are refused: %s", path, msg);
    }
  }
  if (s == SP_OK) {
    const sp_column *col = sp_table_column(t, column);
    sp_record_fit_source src = {t->path, t->size, t->sha256, t->meta, t->nmeta, col->name,
                                col->unit_text, by, g.pooled_missing, (int64_t)time(NULL)};
    s = by ? sp_record_fit_grouped_dumps(&g, &src, &text, err)
           : sp_record_fit_dumps(&g.pooled, &src, &text, err);
  }
  if (s == SP_OK) {
    json_error_t je;
    fresh = json_loads(text, 0, &je);
    if (!fresh) s = sp_fail(err, SP_ENOMEM, "replay: cannot read back the new fit record");
  }
  if (s == SP_OK) s = sp_replay_compare_trees(root, fresh, SP_REPLAY_FIT, rep->tolerance, rep, err);
  if (s == SP_OK) s = sp_replay_refuse_malformed("fit", path, rep, err);
  if (s == SP_OK && rep->ndiffs_total > 0) s = SP_EDIFFERS;
  json_decref(fresh);
  free(text);
  sp_fit_grouped_clear(&g);
  sp_table_free(t);
  return s;
}
