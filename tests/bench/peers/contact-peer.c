/*
 * Reference peer of Kickdrift's step kernel in plain C, for tests/bench/contact-kernel.ts and
 * tests/unit/physics/c-peer.test.ts. Same contact law (linear spring-dashpot along the line of
 * centres, total force clamped at >= 0), same integrator order of operations (symplectic Euler:
 * kick, remember the position, drift, then the force pass), same force summation order (fx = 0,
 * fy = -m*g; pairs in ascending (i, j) order; then each body's walls in order) as lib/physics, so
 * with -ffp-contract=off the two agree to the last bit. It keeps no metrics: it is the work the
 * engine cannot avoid, timed in the same run.
 *
 * Build: cc -O2 -ffp-contract=off -o contact-peer contact-peer.c -lm
 * Run:   contact-peer INPUT OUTPUT REPEATS
 * INPUT and OUTPUT are little-endian float64 arrays (layouts below). The final state of the last
 * repeat is written to OUTPUT; each repeat's compute time (ns, I/O excluded) is printed on stdout
 * as "ns <value>" (elapsed) and "cpu <value>" (the process's CPU time, which a loaded machine
 * does not stretch as it does the elapsed time).
 *
 * Mode 1, pair grid (two discs, no walls, no gravity, every step integrated):
 *   1, cells, then per cell: h, steps, k, c, and per body (2): x, y, vx, vy, m, 1/m, r
 *   output per cell per body: x, y, vx, vy
 * Mode 2, box (discs in walls under gravity, cell-list broad phase rebuilt every step):
 *   2, N, walls, g, k, zeta, h, steps, then per wall: nx, ny, offset; per body: x, y, vx, vy, m, 1/m, r
 *   damping c = 2*zeta*sqrt(m_eff*k), m_eff = 1/(1/m_i + 1/m_j) for a pair, m_i at a wall
 *   output per body: x, y, vx, vy
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

static double *read_all(const char *path, long *count) {
  FILE *file = fopen(path, "rb");
  if (!file) { perror(path); exit(2); }
  fseek(file, 0, SEEK_END);
  long bytes = ftell(file);
  fseek(file, 0, SEEK_SET);
  double *data = malloc((size_t)bytes);
  if (fread(data, 1, (size_t)bytes, file) != (size_t)bytes) { perror(path); exit(2); }
  fclose(file);
  *count = bytes / 8;
  return data;
}

static long long now_ns(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return (long long)t.tv_sec * 1000000000LL + t.tv_nsec;
}

static long long cpu_ns(void) {
  struct timespec t;
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
  return (long long)t.tv_sec * 1000000000LL + t.tv_nsec;
}

/* One pair's force (i < j), added to fx/fy; the engine's ContactField.pair for the linear law. */
static inline void pair_force(const double *x, const double *y, const double *vx, const double *vy,
                              const double *im, const double *r, const double *px, const double *py,
                              double *fx, double *fy, int i, int j, double k, double c) {
  double dx = x[j] - x[i];
  double dy = y[j] - y[i];
  double d2 = dx * dx + dy * dy;
  double reach = r[i] + r[j];
  if (d2 >= reach * reach) return;
  double d = sqrt(d2);
  double nx, ny;
  if (d > 0) {
    nx = dx / d;
    ny = dy / d;
  } else {
    double pdx = px[j] - px[i];
    double pdy = py[j] - py[i];
    double pd = sqrt(pdx * pdx + pdy * pdy);
    nx = pd > 0 ? pdx / pd : 1;
    ny = pd > 0 ? pdy / pd : 0;
  }
  double overlap = reach - d;
  double rate = (vx[i] - vx[j]) * nx + (vy[i] - vy[j]) * ny;
  if (c < 0) c = -c * sqrt((1 / (im[i] + im[j])) * k); /* mode 2 passes -2*zeta */
  double force = k * overlap + c * rate;
  double pushX = force > 0 ? force * nx : 0;
  double pushY = force > 0 ? force * ny : 0;
  fx[i] -= pushX;
  fy[i] -= pushY;
  fx[j] += pushX;
  fy[j] += pushY;
}

static void run_pairs(const double *in, double *out) {
  long cells = (long)in[1];
  const double *cell = in + 2;
  for (long n = 0; n < cells; n++, cell += 4 + 14) {
    double h = cell[0];
    long steps = (long)cell[1];
    double k = cell[2], c = cell[3];
    double x[2], y[2], vx[2], vy[2], m[2], im[2], r[2], px[2], py[2], fx[2], fy[2];
    for (int b = 0; b < 2; b++) {
      const double *s = cell + 4 + 7 * b;
      x[b] = s[0]; y[b] = s[1]; vx[b] = s[2]; vy[b] = s[3]; m[b] = s[4]; im[b] = s[5]; r[b] = s[6];
      px[b] = x[b]; py[b] = y[b];
    }
    /* Forces at the initial state, then kick, drift, force pass per step. */
    for (int b = 0; b < 2; b++) { fx[b] = 0; fy[b] = -m[b] * 0.0; }
    pair_force(x, y, vx, vy, im, r, px, py, fx, fy, 0, 1, k, c);
    for (long s = 0; s < steps; s++) {
      for (int b = 0; b < 2; b++) {
        double kick = h * im[b];
        vx[b] += kick * fx[b];
        vy[b] += kick * fy[b];
        px[b] = x[b];
        py[b] = y[b];
        x[b] += h * vx[b];
        y[b] += h * vy[b];
      }
      for (int b = 0; b < 2; b++) { fx[b] = 0; fy[b] = -m[b] * 0.0; }
      pair_force(x, y, vx, vy, im, r, px, py, fx, fy, 0, 1, k, c);
    }
    for (int b = 0; b < 2; b++) {
      double *o = out + n * 8 + 4 * b;
      o[0] = x[b]; o[1] = y[b]; o[2] = vx[b]; o[3] = vy[b];
    }
  }
}

typedef struct {
  int n, walls;
  double g, k, zeta;
  const double *wnx, *wny, *woff;
  double *x, *y, *vx, *vy, *m, *im, *r, *px, *py, *fx, *fy;
  int *cell_of, *cell_start, *by_cell, *candidates;
  int cell_capacity;
} Box;

static void box_forces(Box *box) {
  int n = box->n;
  double *x = box->x, *y = box->y, *fx = box->fx, *fy = box->fy;
  for (int i = 0; i < n; i++) { fx[i] = 0; fy[i] = -box->m[i] * box->g; }
  /* Cell list: cells at least one contact distance wide over the bodies' bounding box. */
  double min_x = INFINITY, min_y = INFINITY, max_x = -INFINITY, max_y = -INFINITY, max_r = 0;
  for (int i = 0; i < n; i++) {
    if (x[i] < min_x) min_x = x[i];
    if (x[i] > max_x) max_x = x[i];
    if (y[i] < min_y) min_y = y[i];
    if (y[i] > max_y) max_y = y[i];
    if (box->r[i] > max_r) max_r = box->r[i];
  }
  double size = 2 * max_r;
  int cells_x = (int)floor((max_x - min_x) / size) + 1;
  int cells_y = (int)floor((max_y - min_y) / size) + 1;
  while ((long)cells_x * cells_y > 4L * n + 16) {
    size *= 1.5;
    cells_x = (int)floor((max_x - min_x) / size) + 1;
    cells_y = (int)floor((max_y - min_y) / size) + 1;
  }
  int cell_count = cells_x * cells_y;
  if (cell_count + 1 > box->cell_capacity) {
    box->cell_capacity = cell_count + 1;
    box->cell_start = realloc(box->cell_start, sizeof(int) * (size_t)box->cell_capacity);
  }
  int *cell_of = box->cell_of, *start = box->cell_start, *by_cell = box->by_cell, *cand = box->candidates;
  memset(start, 0, sizeof(int) * (size_t)(cell_count + 1));
  for (int i = 0; i < n; i++) {
    int cx = (int)floor((x[i] - min_x) / size);
    int cy = (int)floor((y[i] - min_y) / size);
    if (cx > cells_x - 1) cx = cells_x - 1;
    if (cy > cells_y - 1) cy = cells_y - 1;
    cell_of[i] = cy * cells_x + cx;
    start[cell_of[i] + 1]++;
  }
  for (int c = 0; c < cell_count; c++) start[c + 1] += start[c];
  for (int i = 0; i < n; i++) by_cell[start[cell_of[i]]++] = i;
  for (int c = cell_count; c > 0; c--) start[c] = start[c - 1];
  start[0] = 0;
  double c_pair = -2 * box->zeta;
  for (int i = 0; i < n; i++) {
    int cell = cell_of[i];
    int cx = cell % cells_x, cy = cell / cells_x;
    int count = 0;
    for (int ny = cy > 0 ? cy - 1 : 0; ny <= (cy < cells_y - 1 ? cy + 1 : cy); ny++) {
      for (int nx = cx > 0 ? cx - 1 : 0; nx <= (cx < cells_x - 1 ? cx + 1 : cx); nx++) {
        int neighbour = ny * cells_x + nx;
        for (int slot = start[neighbour]; slot < start[neighbour + 1]; slot++) {
          int j = by_cell[slot];
          if (j <= i) continue;
          int p = count++;
          while (p > 0 && cand[p - 1] > j) { cand[p] = cand[p - 1]; p--; }
          cand[p] = j;
        }
      }
    }
    for (int q = 0; q < count; q++)
      pair_force(x, y, box->vx, box->vy, box->im, box->r, box->px, box->py, fx, fy, i, cand[q], box->k, box->zeta > 0 ? c_pair : 0);
  }
  for (int i = 0; i < n; i++) {
    for (int w = 0; w < box->walls; w++) {
      double nx = box->wnx[w], ny = box->wny[w];
      double centre = nx * x[i] + ny * y[i] - box->woff[w];
      double overlap = box->r[i] - centre;
      if (overlap <= 0) continue;
      double rate = -(nx * box->vx[i] + ny * box->vy[i]);
      double c = box->zeta > 0 ? 2 * box->zeta * sqrt(box->m[i] * box->k) : 0;
      double force = box->k * overlap + c * rate;
      if (force > 0) {
        fx[i] += force * nx;
        fy[i] += force * ny;
      }
    }
  }
}

static void run_box(const double *in, double *out) {
  Box box;
  memset(&box, 0, sizeof box);
  box.n = (int)in[1];
  box.walls = (int)in[2];
  box.g = in[3];
  box.k = in[4];
  box.zeta = in[5];
  double h = in[6];
  long steps = (long)in[7];
  const double *walls = in + 8;
  double *wall_data = malloc(sizeof(double) * 3 * (size_t)(box.walls + 1));
  for (int w = 0; w < box.walls; w++) {
    wall_data[w] = walls[3 * w];
    wall_data[box.walls + w] = walls[3 * w + 1];
    wall_data[2 * box.walls + w] = walls[3 * w + 2];
  }
  box.wnx = wall_data;
  box.wny = wall_data + box.walls;
  box.woff = wall_data + 2 * box.walls;
  int n = box.n;
  double **arrays[] = {&box.x, &box.y, &box.vx, &box.vy, &box.m, &box.im, &box.r, &box.px, &box.py, &box.fx, &box.fy};
  for (size_t a = 0; a < sizeof arrays / sizeof arrays[0]; a++) *arrays[a] = malloc(sizeof(double) * (size_t)n);
  box.cell_of = malloc(sizeof(int) * (size_t)n);
  box.by_cell = malloc(sizeof(int) * (size_t)n);
  box.candidates = malloc(sizeof(int) * (size_t)n);
  const double *bodies = walls + 3 * box.walls;
  for (int i = 0; i < n; i++) {
    const double *s = bodies + 7 * i;
    box.x[i] = s[0]; box.y[i] = s[1]; box.vx[i] = s[2]; box.vy[i] = s[3];
    box.m[i] = s[4]; box.im[i] = s[5]; box.r[i] = s[6];
    box.px[i] = box.x[i]; box.py[i] = box.y[i];
  }
  box_forces(&box);
  for (long s = 0; s < steps; s++) {
    for (int i = 0; i < n; i++) {
      double kick = h * box.im[i];
      box.vx[i] += kick * box.fx[i];
      box.vy[i] += kick * box.fy[i];
      box.px[i] = box.x[i];
      box.py[i] = box.y[i];
      box.x[i] += h * box.vx[i];
      box.y[i] += h * box.vy[i];
    }
    box_forces(&box);
  }
  for (int i = 0; i < n; i++) {
    out[4 * i] = box.x[i]; out[4 * i + 1] = box.y[i]; out[4 * i + 2] = box.vx[i]; out[4 * i + 3] = box.vy[i];
  }
  for (size_t a = 0; a < sizeof arrays / sizeof arrays[0]; a++) free(*arrays[a]);
  free(box.cell_of); free(box.by_cell); free(box.candidates); free(box.cell_start); free(wall_data);
}

int main(int argc, char **argv) {
  if (argc < 3) { fprintf(stderr, "usage: contact-peer INPUT OUTPUT [REPEATS]\n"); return 2; }
  long count;
  double *in = read_all(argv[1], &count);
  int repeats = argc > 3 ? atoi(argv[3]) : 1;
  int mode = (int)in[0];
  long outputs = mode == 1 ? (long)in[1] * 8 : (long)in[1] * 4;
  double *out = calloc((size_t)outputs, sizeof(double));
  for (int rep = 0; rep < repeats; rep++) {
    long long started = now_ns();
    long long cpu_started = cpu_ns();
    if (mode == 1) run_pairs(in, out);
    else if (mode == 2) run_box(in, out);
    else { fprintf(stderr, "unknown mode %d\n", mode); return 2; }
    long long cpu_used = cpu_ns() - cpu_started;
    printf("ns %lld\n", now_ns() - started);
    printf("cpu %lld\n", cpu_used);
  }
  FILE *file = fopen(argv[2], "wb");
  if (!file || fwrite(out, sizeof(double), (size_t)outputs, file) != (size_t)outputs) { perror(argv[2]); return 2; }
  fclose(file);
  free(in);
  free(out);
  return 0;
}
