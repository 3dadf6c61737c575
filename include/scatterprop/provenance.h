/* scatterprop provenance: what built this program, what it runs on, and
 * the rule its random streams follow, for the records.
 *
 * Every fit and run record carries a "provenance" object made from these
 * facts (docs/fit-record.md, docs/run-record.md), so that an auditor can
 * tell whether a replay on another machine or build is expected to give
 * the same bits (docs/reproducibility.md says when it is). */
#ifndef SP_PROVENANCE_H
#define SP_PROVENANCE_H

#include "scatterprop/core.h"

#ifdef __cplusplus
extern "C" {
#endif

#define SP_PROVENANCE_TEXT_MAX 256

/* The facts, as text (never NULL; "unknown" when a fact cannot be had). */
typedef struct {
  char version[SP_PROVENANCE_TEXT_MAX];          /* "0.1.0" */
  char git[SP_PROVENANCE_TEXT_MAX];              /* short revision at configure time */
  char compiler[SP_PROVENANCE_TEXT_MAX];         /* CMake's id and version: "GNU 12.2.0" */
  char compiler_version[SP_PROVENANCE_TEXT_MAX]; /* the compiler's own __VERSION__ */
  char build_type[SP_PROVENANCE_TEXT_MAX];       /* "RelWithDebInfo" */
  /* Code-generation facts the compiler reveals through predefined macros
   * (optimisation, fast-math, sanitizers, instruction-set extensions):
   * "optimised, no fast-math, x86_64 sse2". */
  char flags[SP_PROVENANCE_TEXT_MAX];
  /* The library's compile flags themselves (CMake's for the build type,
   * then the folder's and the target's options), cut at 1023 bytes. */
  char cflags[1024];
  char build_system[SP_PROVENANCE_TEXT_MAX];     /* system built for: "Linux x86_64" */
  char gsl_build[SP_PROVENANCE_TEXT_MAX];        /* GSL headers compiled against */
  char gsl_runtime[SP_PROVENANCE_TEXT_MAX];      /* GSL library loaded (gsl_version) */
  char jansson_build[SP_PROVENANCE_TEXT_MAX];
  char jansson_runtime[SP_PROVENANCE_TEXT_MAX];
  char libcsv[SP_PROVENANCE_TEXT_MAX];           /* from CSV_MAJOR.CSV_MINOR.CSV_RELEASE */
  char udunits2[SP_PROVENANCE_TEXT_MAX];         /* udunits2.h has no version macro */
  char libc[SP_PROVENANCE_TEXT_MAX];             /* "glibc 2.36" (libm comes with it) */
  char openmp[SP_PROVENANCE_TEXT_MAX];           /* the _OPENMP date: "201511" */
  char os_name[SP_PROVENANCE_TEXT_MAX];          /* uname: sysname */
  char os_release[SP_PROVENANCE_TEXT_MAX];       /* uname: release */
  char os_version[SP_PROVENANCE_TEXT_MAX];       /* uname: version */
  char machine[SP_PROVENANCE_TEXT_MAX];          /* uname: machine */
  /* The processor's features at run time that change which code libm runs
   * (glibc picks FMA and AVX2 variants of exp, log, pow, sin, ... when the
   * processor has them, and they may differ in the last bit):
   * "sse2 avx avx2 fma avx512f" as present; "not detected" elsewhere. */
  char cpu_features[SP_PROVENANCE_TEXT_MAX];
} sp_provenance;

/* Fills p with the facts of this build and of the machine it runs on now.
 * Never fails: a fact that cannot be had reads "unknown". */
void sp_provenance_get(sp_provenance *p);

/* The threads a parallel section runs with when `requested` are asked
 * for: requested itself when positive, otherwise the OpenMP runtime's
 * default (omp_get_max_threads). */
int sp_provenance_threads(int requested);

/* The current working directory into buf (n bytes); "" when it cannot be
 * had or does not fit. */
void sp_provenance_cwd(char *buf, size_t n);

/* The generator and the stream rule, as the records state them. */
const char *sp_provenance_generator(void);
const char *sp_provenance_stream_rule(void);

#ifdef __cplusplus
}
#endif
#endif /* SP_PROVENANCE_H */
