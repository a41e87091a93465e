/*
 * The straightforward comparator for the benchmark: n grains at the centre of a square grid,
 * swept row by row; every unstable site topples floor(h/4) times at once, until a full sweep
 * finds nothing to do. The grid half-width comes from the outer-radius bound
 * r_out <= (1+o(1)) sqrt(n/(2 pi)) ~ 0.399 sqrt(n) (arXiv:0704.0688), with generous slack;
 * reaching the border is reported as an error rather than silently losing grains.
 *
 * Usage: naive N   → prints one JSON line: n, side, sweeps, totalTopplings, toppledSites, originOdometer, seconds.
 */
#include <inttypes.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

int main(int argc, char **argv) {
  if (argc != 2) { fprintf(stderr, "usage: naive N\n"); return 2; }
  int64_t n = strtoll(argv[1], NULL, 10);
  int64_t half = (int64_t)ceil(0.5 * sqrt((double)n)) + 4;
  int64_t side = 2 * half + 1;
  int64_t *h = calloc((size_t)(side * side), sizeof *h);
  int64_t *odo = calloc((size_t)(side * side), sizeof *odo);
  if (!h || !odo) { fprintf(stderr, "naive: out of memory\n"); return 1; }
  struct timespec t0, t1;
  clock_gettime(CLOCK_MONOTONIC, &t0);
  h[half * side + half] = n;
  int64_t sweeps = 0, total = 0;
  int changed = 1;
  while (changed) {
    changed = 0;
    sweeps++;
    for (int64_t y = 1; y < side - 1; y++) {
      for (int64_t x = 1; x < side - 1; x++) {
        int64_t i = y * side + x;
        if (h[i] >= 4) {
          int64_t t = h[i] / 4;
          h[i] -= 4 * t;
          h[i - 1] += t; h[i + 1] += t; h[i - side] += t; h[i + side] += t;
          odo[i] += t;
          total += t;
          changed = 1;
        }
      }
    }
  }
  clock_gettime(CLOCK_MONOTONIC, &t1);
  int64_t toppled = 0;
  for (int64_t i = 0; i < side * side; i++) toppled += odo[i] > 0;
  for (int64_t k = 0; k < side; k++) {
    if (h[k] || h[(side - 1) * side + k] || h[k * side] || h[k * side + side - 1]) {
      fprintf(stderr, "naive: grains reached the border of the %" PRId64 "-wide grid\n", side);
      return 1;
    }
  }
  double seconds = (double)(t1.tv_sec - t0.tv_sec) + 1e-9 * (double)(t1.tv_nsec - t0.tv_nsec);
  printf("{\"n\":%" PRId64 ",\"side\":%" PRId64 ",\"sweeps\":%" PRId64 ",\"totalTopplings\":\"%" PRId64
         "\",\"toppledSites\":%" PRId64 ",\"originOdometer\":\"%" PRId64 "\",\"seconds\":%.6f}\n",
         n, side, sweeps, total, toppled, odo[half * side + half], seconds);
  free(h);
  free(odo);
  return 0;
}
