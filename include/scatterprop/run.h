/* scatterprop run: a model file, its fit records and the engine, joined.
 *
 * sp_run_open() loads and compiles a model (.spm), reads the fit record of
 * every `fit("...")` input (checking that the record's unit converts to the
 * input's declared unit), and hands each input its distribution.
 * sp_run_execute() propagates the inputs through the model with the engine
 * (correlations, limits and rank sensitivity from the model), and
 * optionally computes Sobol' indices.  The results are written as a run
 * record (JSON, format "scatterprop-run", docs/run-record.md) and as
 * percentile and histogram tables. */
#ifndef SP_RUN_H
#define SP_RUN_H

#include "scatterprop/engine.h"
#include "scatterprop/model.h"
#include "scatterprop/record.h"

#ifdef __cplusplus
extern "C" {
#endif

#define SP_RECORD_RUN_FORMAT "scatterprop-run"
#define SP_RECORD_RUN_VERSION 1

/* Where a fit() input came from. */
typedef struct {
  size_t input;                 /* index of the model input */
  char *path;                   /* the record file, resolved (owned) */
  char sha256[SP_SHA256_HEX_LEN];
  uint64_t size;
  sp_record_fit fit;            /* the record's chosen fit (owned contents) */
} sp_run_fit_source;

typedef struct {
  sp_engine_options engine;     /* method, seed, samples, threads, ... */
  uint64_t sobol_samples;       /* > 0: also Sobol' indices from this many base samples */
} sp_run_options;

/* Defaults: the engine's, with rank sensitivity on. */
void sp_run_options_init(sp_run_options *o);

typedef struct sp_run sp_run;

/* Loads the model at path and resolves its fit() inputs.  Returns owned
 * (*out, free with sp_run_free).  Errors: SP_EMODEL with every compile
 * error in diags (caller-initialised), SP_EMODEL for a fit record whose
 * unit does not convert to the input's (err names the input and both
 * units, at the input's line), SP_EIO / SP_EDATA for a record that cannot
 * be read (err names the record and the field). */
sp_status sp_run_open(const char *path, sp_run **out, sp_model_diags *diags, sp_error *err);
void sp_run_free(sp_run *r);

/* The compiled model, the model text (NUL-terminated) and the fit sources
 * (borrowed from r). */
const sp_model *sp_run_model(const sp_run *r);
const char *sp_run_model_text(const sp_run *r);
size_t sp_run_fit_count(const sp_run *r);
const sp_run_fit_source *sp_run_fit_at(const sp_run *r, size_t k);

/* The engine's evaluator for the compiled model m (borrowed: m must outlive
 * the runs), as sp_run_execute uses it: a workspace per thread, sized to
 * the engine's block.  (Evaluating a 4096-sample block in stretches of
 * 128 to 2048 samples, registers in the first-level cache, was measured no
 * faster on the spring model: 5.2 to 5.7 ns a sample either way.) */
void sp_run_model_evaluator(const sp_model *m, sp_evaluator *ev);

/* Bytes the run would need with these options (for the refusal message). */
sp_status sp_run_memory_needed(const sp_run *r, const sp_run_options *opt, uint64_t *bytes,
                               sp_error *err);

/* Runs the propagation (and the Sobol' indices when asked).  Errors are
 * the engine's (SP_EUSAGE for a correlation matrix that is not positive
 * definite, naming the pair; SP_ENOMEM for a run larger than memory, with
 * the figure). */
sp_status sp_run_execute(sp_run *r, const sp_run_options *opt, sp_error *err);

/* Results of the last sp_run_execute (borrowed; NULL before it, and the
 * Sobol' result is NULL when it was not asked for). */
const sp_engine_result *sp_run_result(const sp_run *r);
const sp_engine_sobol_result *sp_run_sobol(const sp_run *r);

/* Decimals that show values of output j to the Monte Carlo resolution: two
 * significant digits of the standard error of the mean, at least 0; -1
 * (print with %.6g) when the standard error is 0, unknown, below 1e-14
 * (more than 15 decimals) or at least 1e15. */
int sp_run_decimals(const sp_run *r, size_t j);

/* The run record as JSON text (returns owned, free()).  argv (argc words)
 * is recorded as the command line; created is seconds since the epoch. */
char *sp_run_record_json(const sp_run *r, const sp_run_options *opt, int argc,
                         char *const *argv, int64_t created, sp_error *err);

/* The path of output j's table of the given kind ("percentiles",
 * "histogram" or "samples") in dir, as sp_run_write_tables names it:
 * "dir/NAME.kind.csv", into buf (n bytes).  Known before the run (the
 * names come from the model), so a caller can refuse files in the way
 * before a long run.  Errors: SP_EUSAGE (j out of range, an unknown kind),
 * SP_ELIMIT (the path does not fit). */
sp_status sp_run_table_path(const sp_run *r, const char *dir, size_t j, const char *kind, char *buf,
                            size_t n, sp_error *err);

/* Writes, for every output NAME, NAME.percentiles.csv and NAME.histogram.csv
 * (and NAME.samples.csv when with_samples is non-zero and samples were
 * kept) into dir, each atomically; existing files are refused unless
 * overwrite. */
sp_status sp_run_write_tables(const sp_run *r, const char *dir, int with_samples, int overwrite,
                              sp_error *err);

#ifdef __cplusplus
}
#endif
#endif /* SP_RUN_H */
