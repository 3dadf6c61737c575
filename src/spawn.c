/* scatterprop spawn: fork/execve with a bounded, timed capture of the
 * child's output.  See spawn.h. */
#include "spawn.h"

#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <poll.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

/* POSIX leaves the declaration of environ to the application. */
extern char **environ;

/* How often the parent looks at a child that has closed its output but
 * not yet exited: 10 ms is short against any gnuplot run and long enough
 * not to spin. */
#define SPAWN_POLL_NS 10000000L

static int is_executable_file(const char *path)
{
  struct stat st;
  return stat(path, &st) == 0 && S_ISREG(st.st_mode) && access(path, X_OK) == 0;
}

int sp_spawn_find_program(const char *name, char *out, size_t n)
{
  if (!name || !*name || n == 0) return 0;
  if (strchr(name, '/')) {
    if (strlen(name) + 1 > n || !is_executable_file(name)) return 0;
    memcpy(out, name, strlen(name) + 1);
    return 1;
  }
  const char *path = getenv("PATH");
  char fallback[PATH_MAX];
  if (!path) {
    size_t got = confstr(_CS_PATH, fallback, sizeof fallback);
    if (got == 0 || got > sizeof fallback) return 0;
    path = fallback;
  }
  const char *p = path;
  for (;;) {
    const char *end = strchr(p, ':');
    size_t len = end ? (size_t)(end - p) : strlen(p);
    /* An empty entry means the current folder (POSIX); we do not run
     * programs from it implicitly, as a planted "gnuplot" there would run. */
    if (len > 0) {
      char cand[PATH_MAX];
      int w = snprintf(cand, sizeof cand, "%.*s/%s", (int)len, p, name);
      if (w > 0 && (size_t)w < sizeof cand && cand[0] == '/' && is_executable_file(cand)) {
        if ((size_t)w + 1 > n) return 0;
        memcpy(out, cand, (size_t)w + 1);
        return 1;
      }
    }
    if (!end) break;
    p = end + 1;
  }
  return 0;
}

static double now_seconds(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int set_cloexec(int fd)
{
  int fl = fcntl(fd, F_GETFD);
  return fl < 0 ? -1 : fcntl(fd, F_SETFD, fl | FD_CLOEXEC);
}

static void close_pair(int p[2])
{
  if (p[0] >= 0) close(p[0]);
  if (p[1] >= 0) close(p[1]);
  p[0] = p[1] = -1;
}

void sp_spawn_result_free(sp_spawn_result *res)
{
  if (!res) return;
  free(res->output);
  res->output = NULL;
  res->output_len = 0;
}

/* Appends buf to the result's bounded output, dropping the oldest bytes
 * when it is full: a program's last words (gnuplot's error, which ends
 * its run) matter more than its first. */
static void keep_output(sp_spawn_result *res, const char *buf, size_t n)
{
  if (n >= SP_SPAWN_OUTPUT_MAX) {
    buf += n - SP_SPAWN_OUTPUT_MAX;
    n = SP_SPAWN_OUTPUT_MAX;
    res->output_len = 0;
    res->output_truncated = 1;
  } else if (res->output_len + n > SP_SPAWN_OUTPUT_MAX) {
    size_t drop = res->output_len + n - SP_SPAWN_OUTPUT_MAX;
    memmove(res->output, res->output + drop, res->output_len - drop);
    res->output_len -= drop;
    res->output_truncated = 1;
  }
  memcpy(res->output + res->output_len, buf, n);
  res->output_len += n;
  res->output[res->output_len] = '\0';
}

/* Ends the child's process group, then the child itself (in case it left
 * the group), and reaps it. */
static void kill_and_reap(pid_t pid, int *status)
{
  kill(-pid, SIGKILL);
  kill(pid, SIGKILL);
  while (waitpid(pid, status, 0) < 0 && errno == EINTR) {
  }
}

sp_status sp_spawn_run(const char *path, char *const argv[], const char *cwd,
                       double timeout, sp_spawn_result *res, sp_error *err)
{
  memset(res, 0, sizeof *res);
  if (!path || !argv || !argv[0] || !(timeout > 0))
    return sp_fail(err, SP_EUSAGE, "sp_spawn_run: a program, an argument vector and a "
                                   "positive time limit are required");
  res->output = malloc(SP_SPAWN_OUTPUT_MAX + 1);
  if (!res->output) return sp_fail(err, SP_ENOMEM, "out of memory");
  res->output[0] = '\0';

  int outp[2] = {-1, -1}, errp[2] = {-1, -1};
  if (pipe(outp) != 0 || pipe(errp) != 0 || set_cloexec(outp[0]) != 0 ||
      set_cloexec(outp[1]) != 0 || set_cloexec(errp[0]) != 0 || set_cloexec(errp[1]) != 0) {
    int e = errno;
    close_pair(outp);
    close_pair(errp);
    return sp_fail(err, SP_EIO, "%s: cannot create a pipe: %s", path, strerror(e));
  }
  int devnull = open("/dev/null", O_RDONLY);
  if (devnull < 0) {
    int e = errno;
    close_pair(outp);
    close_pair(errp);
    return sp_fail(err, SP_EIO, "/dev/null: %s", strerror(e));
  }
  set_cloexec(devnull);

  pid_t pid = fork();
  if (pid < 0) {
    int e = errno;
    close_pair(outp);
    close_pair(errp);
    close(devnull);
    return sp_fail(err, SP_EIO, "%s: cannot start: fork: %s", path, strerror(e));
  }
  if (pid == 0) {
    /* Child: only async-signal-safe calls from here to execve (the parent
     * may have other threads). */
    int e;
    setpgid(0, 0);
    if (cwd && chdir(cwd) != 0) goto child_fail;
    if (dup2(devnull, STDIN_FILENO) < 0 || dup2(outp[1], STDOUT_FILENO) < 0 ||
        dup2(outp[1], STDERR_FILENO) < 0)
      goto child_fail;
    execve(path, argv, environ);
  child_fail:
    e = errno;
    while (write(errp[1], &e, sizeof e) < 0 && errno == EINTR) {
    }
    _exit(127);
  }

  /* Parent. */
  close(devnull);
  close(outp[1]);
  close(errp[1]);
  outp[1] = errp[1] = -1;
  int child_errno = 0;
  ssize_t got;
  while ((got = read(errp[0], &child_errno, sizeof child_errno)) < 0 && errno == EINTR) {
  }
  close(errp[0]);
  errp[0] = -1;
  int status = 0;
  if (got == (ssize_t)sizeof child_errno) {
    close(outp[0]);
    while (waitpid(pid, &status, 0) < 0 && errno == EINTR) {
    }
    return sp_fail(err, SP_EIO, "%s: cannot run it%s%s: %s", path, cwd ? " in " : "",
                   cwd ? cwd : "", strerror(child_errno));
  }

  double deadline = now_seconds() + timeout;
  char buf[4096];
  int open_out = 1;
  while (open_out) {
    double left = deadline - now_seconds();
    if (left <= 0) break;
    struct pollfd pfd = {outp[0], POLLIN, 0};
    double ms = left * 1000.0 + 1.0;
    int pr = poll(&pfd, 1, ms > INT_MAX ? INT_MAX : (int)ms);
    if (pr < 0) {
      if (errno == EINTR) continue;
      break;
    }
    if (pr == 0) continue;
    ssize_t r = read(outp[0], buf, sizeof buf);
    if (r < 0) {
      if (errno == EINTR || errno == EAGAIN) continue;
      open_out = 0;
    } else if (r == 0) {
      open_out = 0;
    } else {
      keep_output(res, buf, (size_t)r);
    }
  }
  close(outp[0]);

  /* The output is closed (or time is up): wait for the exit. */
  for (;;) {
    pid_t w = waitpid(pid, &status, WNOHANG);
    if (w == pid) break;
    if (w < 0 && errno != EINTR) break;
    if (now_seconds() >= deadline) {
      res->timed_out = 1;
      kill_and_reap(pid, &status);
      break;
    }
    struct timespec ts = {0, SPAWN_POLL_NS};
    nanosleep(&ts, NULL);
  }
  if (WIFEXITED(status)) {
    res->exited = !res->timed_out;
    res->exit_status = WEXITSTATUS(status);
  } else if (WIFSIGNALED(status)) {
    res->signal = WTERMSIG(status);
  }
  return SP_OK;
}
