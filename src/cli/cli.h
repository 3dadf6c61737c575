/* Shared pieces of the command-line tool (private to src/cli). */
#ifndef SP_CLI_H
#define SP_CLI_H

#include <stdio.h>

#include "scatterprop/core.h"
#include "scatterprop/fitplot.h"
#include "scatterprop/runplot.h"

/* Exit codes (STYLE.md); every command uses them. */
enum { CLI_OK = 0, CLI_DIFFERS = 1, CLI_USAGE = 2, CLI_DATA = 3, CLI_MODEL = 4,
       CLI_NUMERIC = 5, CLI_IO = 6 };

/* A command: name, one-line summary, entry point (argv[0] is the command
 * name), and its --help text printer. */
typedef struct {
  const char *name;
  const char *summary;
  int (*run)(int argc, char **argv);
  void (*help)(FILE *out);
} cli_command;

/* Prints "scatterprop: error: file:line:col: msg" and the hint (if any) to
 * stderr and returns the exit code for err->code. */
int cli_report(const sp_error *err);
/* Prints a usage error with a pointer to --help and returns CLI_USAGE. */
int cli_usage(const char *command, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Option matching for a hand-written argument loop.
 *   if (cli_opt_value(argc, argv, &i, "--column", &val, &rc)) { ... }
 * matches "--column VALUE" and "--column=VALUE"; advances *i past a
 * separate value.  A missing value sets *rc to CLI_USAGE (with a message)
 * and returns -1.  Returns 1 on a match, 0 otherwise. */
int cli_opt_value(const char *command, int argc, char **argv, int *i,
                  const char *name, const char **value, int *rc);
/* Matches a flag without a value ("--json"). */
int cli_opt_flag(char **argv, int i, const char *name);
/* Strict numeric option values; on failure print a usage error, set *rc. */
int cli_parse_double(const char *command, const char *opt, const char *text,
                     double *out, int *rc);
int cli_parse_u64(const char *command, const char *opt, const char *text,
                  unsigned long long *out, int *rc);

/* ---- Ctrl-C --------------------------------------------------------------
 * cli_sigint_install() makes SIGINT (and SIGTERM, SIGHUP) end the program
 * at once with exit code 128 + the signal (CLI_INTERRUPTED, 130, for
 * Ctrl-C; 143 for SIGTERM) and the message "interrupted; nothing was written": for
 * the parts of a command that write nothing.  While held
 * (cli_sigint_hold(1)) an interrupt is only noted, for cli_interrupted()
 * to report: around a run that polls it between blocks, and around the
 * writing of outputs, which is never cut short (a file is written whole
 * or, through cli_created_undo, removed again). */
enum { CLI_INTERRUPTED = 130 };
void cli_sigint_install(void);
void cli_sigint_hold(int hold);
int cli_interrupted(void);
/* The exit code of the interrupt noted: 128 + its signal. */
int cli_interrupt_code(void);

/* ---- all-or-nothing outputs ------------------------------------------------
 * The files and folders a command has made, so that a failure (or an
 * interrupt) while writing its outputs can take them away again and leave
 * things as they were: cli_created_note(path) before a file or folder is
 * written records it only when nothing is there yet (what was there before
 * is never removed); cli_created_snapshot(dir) remembers a folder's
 * entries before a library call writes files into it, and
 * cli_created_note_new(dir-file) then records a file not among them. */
typedef struct {
  char **paths; /* made by this command, in order */
  size_t n, cap;
  char **before; /* the snapshot's entries (full paths), sorted */
  size_t nbefore;
  int oom; /* a note was lost: undo removes what it knows */
} cli_created;
void cli_created_note(cli_created *c, const char *path);
void cli_created_snapshot(cli_created *c, const char *dir);
void cli_created_note_new(cli_created *c, const char *path);
/* Removes every recorded path (files, then folders if empty), newest
 * first; returns how many were removed. */
size_t cli_created_undo(cli_created *c);
void cli_created_free(cli_created *c);

/* Prints the caution paragraph, wrapped, to out. */
void cli_print_caution(FILE *out);

/* Commands (one file each under src/cli/). */
int cli_summary_run(int argc, char **argv);
void cli_summary_help(FILE *out);
int cli_propagate_run(int argc, char **argv);
void cli_propagate_help(FILE *out);
int cli_fit_run(int argc, char **argv);
void cli_fit_help(FILE *out);
int cli_report_run(int argc, char **argv);
void cli_report_help(FILE *out);
int cli_replay_run(int argc, char **argv);
void cli_replay_help(FILE *out);
int cli_plot_run(int argc, char **argv);
void cli_plot_help(FILE *out);

/* Chart helpers shared by `fit --plots`, `propagate --plots` and `plot`
 * (cmd_plot.c): options for charts in dir (tdir[0..n) receives the
 * build-tree template folder, <program folder>/../plots), and the lists
 * of a fit's and of a run's charts drawn. */
void cli_plot_options(sp_plot_options *o, const char *dir, int force, char *tdir, size_t n);
void cli_plot_print(FILE *out, const sp_fitplot_charts *c, const char *dir);
void cli_runplot_print(FILE *out, const sp_runplot_set *set, const char *dir);

#endif
