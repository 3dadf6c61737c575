/* libFuzzer harness: CSV ingest must never crash, hang, leak or read out of
 * bounds, whatever the bytes; every failure is a status with a message. */
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "scatterprop/ingest.h"
#include "scatterprop/summary.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  sp_ingest_options opt;
  sp_ingest_options_init(&opt);
  /* The first byte picks the options, so both modes get explored. */
  if (size > 0) {
    opt.decimal_comma = data[0] & 1;
    opt.skip_bad_rows = (data[0] >> 1) & 1;
  }
  sp_error err;
  sp_error_clear(&err);
  sp_table *t = NULL;
  sp_status s = sp_table_read_buffer("fuzz.csv", (const char *)data, size, &opt, &t, &err);
  if (s == SP_OK) {
    sp_summary_set *set = NULL;
    if (sp_summary_build(t, NULL, 0, NULL, &set, &err) == SP_OK) {
      char *json = sp_summary_json(set, &err);
      free(json);
      sp_summary_set_free(set);
    }
    /* Grouped by the first text column, as summary --by does (the groups'
     * hash table and labels). */
    for (size_t i = 0; i < t->ncols; i++) {
      if (t->cols[i].kind != SP_COLUMN_TEXT) continue;
      sp_error_clear(&err);
      set = NULL;
      sp_status gs = sp_summary_build(t, NULL, 0, t->cols[i].name, &set, &err);
      if (gs == SP_OK) {
        char *json = sp_summary_json(set, &err);
        free(json);
        sp_summary_set_free(set);
      } else if (err.msg[0] == '\0') {
        __builtin_trap(); /* a failure without a message */
      }
      break;
    }
    sp_table_free(t);
  } else if (err.msg[0] == '\0') {
    __builtin_trap(); /* a failure without a message */
  }
  return 0;
}
