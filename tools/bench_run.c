/*
  bench_run LABEL RUNS COMMAND [ARG...]: run a command RUNS times, its
  standard output and error thrown away, and print each run's wall time
  (CLOCK_MONOTONIC from fork to the end of waitpid), the best, and the
  largest resident set any run reached (getrusage of the children).
  Exits 1 if any run fails to start or exits with a non-zero status.
*/
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

static double now_s(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

/* One run; returns its wall time in seconds, or -1 on failure. */
static double run_once(char **command) {
  double start_s = now_s();
  pid_t pid = fork();
  if (pid < 0) return -1.0;
  if (pid == 0) {
    int null = open("/dev/null", O_WRONLY);
    if (null >= 0) {
      dup2(null, STDOUT_FILENO);
      dup2(null, STDERR_FILENO);
    }
    execvp(command[0], command);
    _exit(127);
  }
  int status = 0;
  if (waitpid(pid, &status, 0) != pid) return -1.0;
  double wall_s = now_s() - start_s;
  if (!WIFEXITED(status) || WEXITSTATUS(status) != 0) {
    fprintf(stderr, "bench_run: %s exited with status %d\n", command[0],
            WIFEXITED(status) ? WEXITSTATUS(status) : -1);
    return -1.0;
  }
  return wall_s;
}

int main(int argc, char **argv) {
  if (argc < 4) {
    fprintf(stderr, "usage: bench_run LABEL RUNS COMMAND [ARG...]\n");
    return 2;
  }
  const char *label = argv[1];
  int runs = atoi(argv[2]);
  if (runs < 1) runs = 1;
  printf("%s: %d runs:", label, runs);
  double best_s = 0.0;
  for (int r = 0; r < runs; ++r) {
    double wall_s = run_once(argv + 3);
    if (wall_s < 0.0) {
      printf(" failed\n");
      return 1;
    }
    printf(" %.3f s", wall_s);
    fflush(stdout);
    if (r == 0 || wall_s < best_s) best_s = wall_s;
  }
  struct rusage usage;
  getrusage(RUSAGE_CHILDREN, &usage);
  double max_rss_mib = (double)usage.ru_maxrss / 1024.0; /* kilobytes on Linux */
  printf("\n%s: best %.3f s, max resident %.1f MiB\n", label, best_s, max_rss_mib);
  printf("values: best_s=%.6f max_rss_mib=%.1f\n", best_s, max_rss_mib);
  return 0;
}
