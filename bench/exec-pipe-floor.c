/* The machine's own floor under the pipe's cost of an engine program (exec-pipe.bench.ts): a
 * C parent and a C child on a socket pair (what Node's child_process gives a child for a
 * 'pipe' stdio), the parent writes REQUEST bytes, the child reads them, spins WORK_US (its
 * "clustering"), writes RESPONSE bytes carrying its own spin time; the parent reads them whole.
 * Per round: round trip minus the child's own time, both CLOCK_MONOTONIC. No codecs, no event
 * loop: what is left is the two wake-ups and the copies, on this machine at this load.
 *
 *   cc -O2 -o exec-pipe-floor exec-pipe-floor.c
 *   exec-pipe-floor ROUNDS WORK_US REQUEST RESPONSE
 * prints: p10 p50 p90 p99 (µs), one line.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

static long long nowNs(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return t.tv_sec * 1000000000LL + t.tv_nsec;
}

static int readWhole(int fd, char *bytes, int count) {
  while (count > 0) {
    ssize_t got = read(fd, bytes, (size_t)count);
    if (got <= 0) return 0;
    bytes += got;
    count -= (int)got;
  }
  return 1;
}

static int byValue(const void *a, const void *b) {
  long long x = *(const long long *)a, y = *(const long long *)b;
  return x < y ? -1 : x > y;
}

int main(int argc, char **argv) {
  if (argc != 5) {
    fprintf(stderr, "usage: exec-pipe-floor ROUNDS WORK_US REQUEST RESPONSE\n");
    return 2;
  }
  const int rounds = atoi(argv[1]);
  const long long workNs = atoll(argv[2]) * 1000;
  const int request = atoi(argv[3]), response = atoi(argv[4]);
  static char bytes[1 << 20];
  if (rounds < 1 || request < 8 || response < 8 || request > (int)sizeof bytes || response > (int)sizeof bytes) return 2;
  int toChild[2], toParent[2];
  if (socketpair(AF_UNIX, SOCK_STREAM, 0, toChild) || socketpair(AF_UNIX, SOCK_STREAM, 0, toParent)) return 1;
  pid_t child = fork();
  if (child == 0) {
    for (int k = 0; k < rounds; k++) {
      if (!readWhole(toChild[1], bytes, request)) return 1;
      const long long started = nowNs();
      while (nowNs() - started < workNs) {}
      const long long ownNs = nowNs() - started;
      memcpy(bytes, &ownNs, sizeof ownNs);
      if (write(toParent[1], bytes, (size_t)response) != response) return 1;
    }
    return 0;
  }
  long long *pipeNs = malloc(sizeof(long long) * (size_t)rounds);
  for (int k = 0; k < rounds; k++) {
    const long long written = nowNs();
    if (write(toChild[0], bytes, (size_t)request) != request) return 1;
    if (!readWhole(toParent[0], bytes, response)) return 1;
    const long long answered = nowNs();
    long long ownNs;
    memcpy(&ownNs, bytes, sizeof ownNs);
    pipeNs[k] = answered - written - ownNs;
  }
  waitpid(child, NULL, 0);
  qsort(pipeNs, (size_t)rounds, sizeof(long long), byValue);
  printf("%.1f %.1f %.1f %.1f\n", pipeNs[rounds / 10] / 1e3, pipeNs[rounds / 2] / 1e3, pipeNs[rounds * 9 / 10] / 1e3, pipeNs[rounds * 99 / 100] / 1e3);
  return 0;
}
