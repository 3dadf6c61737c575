/* libFuzzer harness: the record readers must never crash, hang, leak or
 * read out of bounds, whatever the bytes; every failure is a status with a
 * message.  One input feeds
 *  - sp_record_fit_parse (the fit-record reader of models and replays),
 *  - sp_fitplot_plan_parse (the fit-record reader of the plot command,
 *    which parses a second time what the first reader accepted),
 *  - sp_replay_compare (the reader and comparer of fit and run records),
 *    on the two halves of the input split at its first NUL byte (the
 *    whole input against itself when it has none). */
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "scatterprop/fitplot.h"
#include "scatterprop/record.h"
#include "scatterprop/replay.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  const char *text = (const char *)data;
  sp_error err;
  sp_error_clear(&err);
  sp_record_fit rec;
  sp_status s = sp_record_fit_parse("fuzz.json", text, size, &rec, &err);
  if (s == SP_OK) {
    if (!rec.family) __builtin_trap(); /* accepted without a family */
    sp_record_fit_clear(&rec);
  } else if (err.msg[0] == '\0') {
    __builtin_trap(); /* a failure without a message */
  }

  sp_error_clear(&err);
  sp_fitplot_plan plan;
  sp_record_fit prec;
  s = sp_fitplot_plan_parse("fuzz.json", text, size, &plan, &prec, &err);
  if (s == SP_OK) {
    sp_fitplot_plan_clear(&plan);
    sp_record_fit_clear(&prec);
  } else if (err.msg[0] == '\0') {
    __builtin_trap();
  }

  const char *nul = memchr(text, '\0', size);
  size_t la = nul ? (size_t)(nul - text) : size;
  const char *b = nul ? nul + 1 : text;
  size_t lb = nul ? size - la - 1 : size;
  sp_error_clear(&err);
  sp_replay_report rep;
  memset(&rep, 0, sizeof rep);
  s = sp_replay_compare(text, la, b, lb, 1e-9, &rep, &err);
  if (s != SP_OK && s != SP_EDIFFERS && err.msg[0] == '\0') __builtin_trap();
  if (!nul && s == SP_EDIFFERS) __builtin_trap(); /* a record differs from itself */
  sp_replay_report_clear(&rep);
  return 0;
}
