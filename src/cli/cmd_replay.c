/* scatterprop replay: rerun a fit or run record and say whether it
 * reproduces.  The checks and the comparison are the library's
 * (scatterprop/replay.h); this file prints them. */
#include <math.h>
#include <string.h>

#include "cli.h"
#include "scatterprop/replay.h"

/* Differences printed unless --all is given. */
#define CLI_REPLAY_SHOWN 50

void cli_replay_help(FILE *out)
{
  fprintf(out,
          "Usage: scatterprop replay RECORD.json [--threads K] [--tolerance REL] [--all]\n"
          "\n"
          "Reruns a fit record (scatterprop-fit) or a run record (scatterprop-run) and\n"
          "compares every result with the recorded one.  First every input is checked\n"
          "by its SHA-256: the data CSV of a fit; the model file, each fit record and,\n"
          "through them, each data file of a run.\n"
          "\n"
          "Timestamps, the command line, the thread count, the build facts and the\n"
          "paths of files (whose contents are compared by hash) are not compared.\n"
          "Numbers are compared bit for bit when the record was made by this build;\n"
          "when the tool version, git revision, compiler or its flags, a library\n"
          "(GSL, jansson, libcsv, udunits2, libc), the machine or its processor's\n"
          "features differ (or the record does not say), within a relative\n"
          "tolerance of %g, saying which differ.  A record with a field missing or\n"
          "of the wrong type is refused, naming the field.\n"
          "\n"
          "Options:\n"
          "  --threads K       threads of the rerun (default: all); results do not depend on K\n"
          "  --tolerance REL   compare numbers within this relative tolerance instead\n"
          "                    (0: bit for bit)\n"
          "  --all             list every differing field (default: the first %d)\n"
          "  --help            show this help\n"
          "\n"
          "Exit codes: 0 identical, 1 results differ, 2 usage, 3 an input file changed or\n"
          "is missing (or the record is malformed), 4 bad model, 5 numerical failure,\n"
          "6 I/O error, 130 interrupted.\n"
          "\n",
          SP_REPLAY_DEFAULT_TOLERANCE, CLI_REPLAY_SHOWN);
  cli_print_caution(out);
}

static void print_inputs(const sp_replay_report *rep)
{
  for (size_t i = 0; i < rep->ninputs; i++) {
    const sp_replay_input *in = &rep->inputs[i];
    if (in->status == SP_REPLAY_INPUT_OK) continue;
    if (in->status == SP_REPLAY_INPUT_MISSING) {
      fprintf(stderr, "  missing: %s: %s\n", in->role, in->path);
      if (in->note) fprintf(stderr, "    %s\n", in->note);
      fprintf(stderr, "    recorded sha256 %s (%llu bytes)\n", in->recorded_sha256,
              (unsigned long long)in->recorded_size);
      continue;
    }
    fprintf(stderr, "  changed: %s: %s\n", in->role, in->path);
    fprintf(stderr, "    recorded sha256 %s (%llu bytes)\n", in->recorded_sha256,
            (unsigned long long)in->recorded_size);
    fprintf(stderr, "    actual   sha256 %s (%llu bytes)\n", in->actual_sha256,
            (unsigned long long)in->actual_size);
  }
}

static void print_rule(FILE *out, double tol)
{
  if (tol == 0) fprintf(out, "bit for bit");
  else fprintf(out, "within relative %g", tol);
}

int cli_replay_run(int argc, char **argv)
{
  const char *record = NULL;
  int rc = CLI_OK, all = 0;
  sp_replay_options o;
  sp_replay_options_init(&o);
  for (int i = 1; i < argc && rc == CLI_OK; i++) {
    const char *v;
    int m;
    unsigned long long u;
    if ((m = cli_opt_value("replay", argc, argv, &i, "--threads", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_u64("replay", "--threads", v, &u, &rc)) {
        if (u < 1 || u > 1024) rc = cli_usage("replay", "--threads takes 1 to 1024");
        else o.threads = (int)u;
      }
    } else if ((m = cli_opt_value("replay", argc, argv, &i, "--tolerance", &v, &rc)) != 0) {
      if (m > 0 && cli_parse_double("replay", "--tolerance", v, &o.tolerance, &rc) &&
          !(o.tolerance >= 0 && o.tolerance < 1))
        rc = cli_usage("replay", "--tolerance must lie in [0, 1), got %s", v);
    } else if (cli_opt_flag(argv, i, "--all")) {
      all = 1;
    } else if (argv[i][0] == '-' && argv[i][1] != '\0') {
      rc = cli_usage("replay", "unknown option '%s'", argv[i]);
    } else if (!record) {
      record = argv[i];
    } else {
      rc = cli_usage("replay", "one record at a time (got '%s' and '%s')", record, argv[i]);
    }
  }
  if (rc == CLI_OK && !record) rc = cli_usage("replay", "no record given");
  if (rc != CLI_OK) return rc;

  sp_error err;
  sp_error_clear(&err);
  sp_replay_report rep;
  /* A replay writes nothing: Ctrl-C ends it at once (exit 130). */
  cli_sigint_install();
  sp_status st = sp_replay(record, &o, &rep, &err);
  if (rep.build_differs && (st == SP_OK || st == SP_EDIFFERS))
    fprintf(stderr, "scatterprop: note: %s was made by another build (%s); numbers are "
                    "compared within relative %g\n",
            record, rep.build_note, rep.tolerance);
  const char *kind = rep.kind == SP_REPLAY_FIT ? "fit record" : "run record";
  if (st == SP_OK) {
    printf("replay of %s (%s): identical, %zu values compared ", record, kind, rep.compared);
    print_rule(stdout, rep.tolerance);
    printf(", %zu input file%s unchanged\n", rep.ninputs, rep.ninputs == 1 ? "" : "s");
    rc = CLI_OK;
  } else if (st == SP_EDIFFERS) {
    printf("replay of %s (%s): %zu of %zu values differ (compared ", record, kind,
           rep.ndiffs_total, rep.compared);
    print_rule(stdout, rep.tolerance);
    printf("):\n");
    size_t shown = all ? rep.ndiffs : (rep.ndiffs < CLI_REPLAY_SHOWN ? rep.ndiffs : CLI_REPLAY_SHOWN);
    for (size_t i = 0; i < shown; i++) {
      const sp_replay_diff *d = &rep.diffs[i];
      printf("  %s: recorded %s, replayed %s", d->path, d->recorded, d->replayed);
      if (isfinite(d->rel)) printf(" (relative difference %.3g)", d->rel);
      printf("\n");
    }
    if (rep.ndiffs_total > shown)
      printf("  ... and %zu more%s\n", rep.ndiffs_total - shown,
             all ? "" : " (--all lists them)");
    rc = CLI_DIFFERS;
  } else if (rep.nbad > 0) {
    /* The files first, the hint on what to do after them. */
    char hint[sizeof err.hint];
    snprintf(hint, sizeof hint, "%s", err.hint);
    err.hint[0] = '\0';
    rc = cli_report(&err);
    print_inputs(&rep);
    if (hint[0]) fprintf(stderr, "  hint: %s\n", hint);
  } else {
    rc = cli_report(&err);
  }
  sp_replay_report_clear(&rep);
  return rc;
}
