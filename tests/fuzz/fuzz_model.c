/* libFuzzer harness: the model compiler must never crash, hang, leak or
 * overflow its stack, whatever the text; bad text gives diagnostics. */
#include <stddef.h>
#include <stdint.h>
#include <stdlib.h>

#include "scatterprop/model.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  sp_model_diags diags;
  sp_model_diags_init(&diags);
  sp_error err;
  sp_error_clear(&err);
  sp_model *m = NULL;
  sp_status s = sp_model_compile("fuzz.spm", (const char *)data, size, &m, &diags, &err);
  if (s == SP_OK) {
    char *dis = sp_model_disassemble(m, &err);
    free(dis);
    /* Evaluate a small block when every input has a distribution. */
    if (sp_model_check_inputs(m, &err) == SP_OK) {
      size_t ni = sp_model_input_count(m), no = sp_model_output_count(m);
      sp_model_ws *w = sp_model_ws_alloc(m, 4, &err);
      double *buf = calloc((ni + no) * 4 + 1, sizeof *buf);
      const double **in = calloc(ni + 1, sizeof *in);
      double **out = calloc(no + 1, sizeof *out);
      if (w && buf && in && out) {
        for (size_t i = 0; i < ni; i++) {
          for (size_t k = 0; k < 4; k++) buf[i * 4 + k] = 1.0 + (double)k;
          in[i] = buf + i * 4;
        }
        for (size_t j = 0; j < no; j++) out[j] = buf + (ni + j) * 4;
        sp_model_eval(m, w, in, 4, out);
      }
      free(out);
      free(in);
      free(buf);
      sp_model_ws_free(w);
    }
    sp_model_free(m);
  } else if (diags.count == 0 && err.msg[0] == '\0') {
    __builtin_trap(); /* a failure that says nothing */
  }
  sp_model_diags_clear(&diags);
  return 0;
}
