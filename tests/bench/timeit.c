/* timeit: run a command, print its wall time and peak resident memory, for tests/bench/bench.sh.
 *
 *   timeit OUTFILE CMD [ARG...]
 *
 * Runs CMD with its standard output and error sent to /dev/null, waits for it, and appends one line
 * to OUTFILE: "<wall seconds> <peak RSS in KiB> <exit status> <CPU seconds>". The wall time comes
 * from CLOCK_MONOTONIC around fork and wait (nanosecond resolution, where /usr/bin/time gives
 * centiseconds); the peak RSS is the child's ru_maxrss and the CPU time its user plus system time,
 * both from wait4. */
#define _GNU_SOURCE
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <sys/resource.h>
#include <sys/time.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

int main(int argc, char **argv)
{
    if (argc < 3) {
        fprintf(stderr, "usage: timeit OUTFILE CMD [ARG...]\n");
        return 2;
    }
    FILE *out = fopen(argv[1], "a");
    if (!out) {
        perror(argv[1]);
        return 2;
    }
    struct timespec t0, t1;
    clock_gettime(CLOCK_MONOTONIC, &t0);
    pid_t pid = fork();
    if (pid < 0) {
        perror("fork");
        return 2;
    }
    if (pid == 0) {
        int fd = open("/dev/null", O_WRONLY);
        if (fd >= 0) {
            dup2(fd, 1);
            dup2(fd, 2);
            close(fd);
        }
        execvp(argv[2], argv + 2);
        _exit(127);
    }
    int status;
    struct rusage ru;
    if (wait4(pid, &status, 0, &ru) < 0) {
        perror("wait4");
        return 2;
    }
    clock_gettime(CLOCK_MONOTONIC, &t1);
    double wall = (double)(t1.tv_sec - t0.tv_sec) + (double)(t1.tv_nsec - t0.tv_nsec) * 1e-9;
    int rc = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    double cpu = (double)ru.ru_utime.tv_sec + (double)ru.ru_utime.tv_usec * 1e-6 + (double)ru.ru_stime.tv_sec +
                 (double)ru.ru_stime.tv_usec * 1e-6;
    fprintf(out, "%.6f %ld %d %.6f\n", wall, ru.ru_maxrss, rc, cpu);
    return fclose(out) == 0 ? 0 : 2;
}
