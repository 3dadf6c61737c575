/* scatterprop spawn (private): runs a program directly, never through a
 * shell, with a working folder, captured output and a time limit.
 *
 * Used by the plot module to run gnuplot.  The program is started with
 * fork() and execve() on an argument vector: no shell parses anything, so
 * no text can turn into a command.  The child gets stdin from /dev/null,
 * its stdout and stderr go to one pipe that the parent reads (bounded),
 * and it runs in a process group of its own so that a timeout ends it and
 * anything it started. */
#ifndef SP_SPAWN_H
#define SP_SPAWN_H

#include <stddef.h>

#include "scatterprop/core.h"

/* What became of a run. */
typedef struct {
  int exited;       /* 1 when the program exited normally */
  int exit_status;  /* its exit status when exited */
  int signal;       /* the signal that ended it, 0 if none */
  int timed_out;    /* 1 when the time limit ended it */
  char *output;     /* returns owned: stdout and stderr as written (NUL
                     * terminated; the last SP_SPAWN_OUTPUT_MAX bytes) */
  size_t output_len;
  int output_truncated; /* 1 when earlier output was dropped */
} sp_spawn_result;

/* Output kept from a child.  gnuplot's error messages are a few lines; 64
 * KiB keeps any realistic message whole while bounding the memory a
 * runaway program can make us hold. */
#define SP_SPAWN_OUTPUT_MAX ((size_t)64 * 1024)

/* Finds an executable: a name containing '/' is checked as given; any
 * other name is looked up in the folders of $PATH (or of the system's
 * default path when PATH is unset).  On success writes the path into
 * out[0..n) and returns 1; returns 0 when nothing executable was found or
 * the path does not fit. */
int sp_spawn_find_program(const char *name, char *out, size_t n);

/* Runs path with argv (NULL-terminated; argv[0] is the name shown by ps)
 * in the folder cwd (NULL: the current one), with the caller's
 * environment.  Waits for it at most timeout seconds (> 0), then ends its
 * process group with SIGKILL and reports timed_out.
 * Returns SP_OK when the program ran (whatever its exit status: see res),
 * SP_EIO when it could not be started (the message names path and the
 * reason), SP_ENOMEM.  res is filled in every case; free it with
 * sp_spawn_result_free. */
sp_status sp_spawn_run(const char *path, char *const argv[], const char *cwd,
                       double timeout, sp_spawn_result *res, sp_error *err);

void sp_spawn_result_free(sp_spawn_result *res);

#endif /* SP_SPAWN_H */
