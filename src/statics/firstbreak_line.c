/* firstbreak_line.c -- first breaks of a whole line: every field record of a
 * stack plan read whole, through the job's edits and statics, picked on
 * threads (firstbreak.h states the rules).
 *
 * Work is dealt in batches of records: within a batch record j goes to thread
 * j mod T, each thread with its own file handle, buffers and chain workspace,
 * and writes only the output slots of its record's traces, so the result never
 * depends on the thread count. Progress is reported between batches from the
 * calling thread.
 *
 * Not here: the picker (firstbreak.c), station tables (the statics modules).
 */
#include "tzero/firstbreak.h"

#include <math.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "stack/stack_int.h"
#include "tzero/fileio.h"
#include "tzero/table.h"

#define BATCH_PER_THREAD 8
#define GUIDE_RECORDS 400      /* unguided records for an estimated guide, at most */
#define GUIDE_BINS 24

void firstbreak_line_opts_init(firstbreak_line_opts *o)
{
  memset(o, 0, sizeof *o);
  firstbreak_params_init(&o->params);
}

void firstbreak_line_free(firstbreak_line *l)
{
  if (!l)
    return;
  free(l->t);
  free(l);
}

static double now_s(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

double firstbreak_station_interval(const stack_plan *p, double interval_m)
{
  if (interval_m > 0.0)
    return interval_m;
  if (p->has_stations)
    return p->st_interval;            /* the job's statics.station_interval_m */
  return p->survey.receiver_interval_m;
}

typedef struct unit { size_t file, rec; size_t out; } unit;   /* out: first output slot */

typedef struct worker {
  const stack_plan *p;
  const firstbreak_line_opts *o;
  const firstbreak_guide *guide;
  const stack_chain *ch;
  const unit *units;
  size_t u0, u1;                  /* batch */
  int tid, nthreads;
  firstbreak_trace *out;
  size_t *nout;                   /* traces written per unit (unit index - u0) */
  double interval;
  /* own */
  stack_chain_ws *ws;
  segy_file *f;
  size_t fi;
  float *samples;
  segy_trace_header *h;
  stack_tinfo *ti;
  double *off;
  unsigned char *live;
  firstbreak_pick *pk;
  size_t *slot;
  int rc;
  tz_err err;
} worker;

static int do_record(worker *w, size_t u)
{
  const stack_plan *p = w->p;
  const unit *un = &w->units[u];
  tz_err *err = &w->err;
  int rc;
  if (!w->f || w->fi != un->file) {
    segy_close(w->f);
    w->f = NULL;
    if ((rc = stack_open_input(p, un->file, &w->f, err)))
      return rc;
    w->fi = un->file;
  }
  int64_t a, m;
  stack_record_span(p, un->file, un->rec, &a, &m);
  size_t ns = p->axis.ns;
  for (int64_t t = a; t < a + m; t++) {
    size_t j = (size_t)(t - a);
    int reason;
    w->ti[j].read = w->ti[j].counted = 0;
    if ((rc = segy_header_read(w->f, t, &w->h[j], err)))
      return tz_err_path(err, p->inputs[un->file].path);
    w->ti[j].stackable = stack_locate(p, &w->h[j], t, &w->ti[j].cmp, &w->ti[j].off_abs,
                                      &w->ti[j].off_signed, &w->ti[j].g, &reason);
    if (!w->ti[j].stackable) {
      memset(w->samples + j * ns, 0, ns * sizeof *w->samples);
      continue;
    }
    if ((rc = segy_trace_read(w->f, t, &w->h[j], w->samples + j * ns, ns, err)))
      return tz_err_path(err, p->inputs[un->file].path);
    w->ti[j].read = 1;
  }
  if ((rc = stack_chain_record(w->ch, w->ws, un->file, a, (size_t)m, w->samples, w->ti, err)))
    return rc;
  size_t k = 0;
  for (size_t j = 0; j < (size_t)m; j++) {
    w->off[j] = w->ti[j].off_signed;
    w->live[j] = w->ti[j].read && w->ti[j].stackable && !w->ti[j].killed;
  }
  double dt_ms = p->axis.dt_s * 1000.0, t0_ms = p->axis.t_first_s * 1000.0;
  if ((rc = firstbreak_pick_record(&w->o->params, w->guide, w->samples, (size_t)m, ns, dt_ms,
                                   t0_ms, w->off, w->live, w->pk, err)))
    return tz_err_path(err, p->inputs[un->file].path);
  firstbreak_trace *out = w->out + un->out;
  for (size_t j = 0; j < (size_t)m; j++) {
    if (!w->live[j])
      continue;
    const geometry_trace *g = &w->ti[j].g;
    firstbreak_trace *o = &out[k++];
    o->record = w->h[j].field_record;
    o->channel = w->h[j].channel;
    o->source_along_m = stack_station_along(p, g->source_x, g->source_y);
    o->receiver_along_m = stack_station_along(p, g->receiver_x, g->receiver_y);
    o->source_station = stack_station_at(p, w->interval, g->source_x, g->source_y);
    o->receiver_station = stack_station_at(p, w->interval, g->receiver_x, g->receiver_y);
    o->offset_m = w->ti[j].off_signed;
    o->static_ms = w->ti[j].static_ms;
    o->pick = w->pk[j];
  }
  w->nout[u - w->u0] = k;
  return TZ_OK;
}

static void *work(void *arg)
{
  worker *w = arg;
  for (size_t u = w->u0 + (size_t)w->tid; u < w->u1 && !w->rc; u += (size_t)w->nthreads)
    w->rc = do_record(w, u);
  return NULL;
}

/* Runs units [u0, u1) on the workers. */
static int run_batch(worker *ws, int nt, size_t u0, size_t u1, tz_err *err)
{
  pthread_t th[JOB_MAX_THREADS];
  int started = 0;
  for (int t = 0; t < nt; t++) {
    ws[t].u0 = u0, ws[t].u1 = u1;
    if (t == 0)
      continue;
    if (pthread_create(&th[t], NULL, work, &ws[t]) != 0)
      break;
    started = t;
  }
  work(&ws[0]);
  for (int t = 1; t <= started; t++)
    pthread_join(th[t], NULL);
  /* threads that could not start: their records run here */
  for (int t = started + 1; t < nt; t++)
    work(&ws[t]);
  for (int t = 0; t < nt; t++)
    if (ws[t].rc) {
      *err = ws[t].err;
      return ws[t].rc;
    }
  return TZ_OK;
}

int firstbreak_run(const stack_plan *p, const firstbreak_line_opts *o, firstbreak_line **out,
                   tz_err *err)
{
  *out = NULL;
  int rc = firstbreak_params_check(&o->params, err);
  if (rc)
    return rc;
  double interval = firstbreak_station_interval(p, o->station_interval_m);
  if (!(interval > 0.0))
    return tz_fail(err, TZ_E_FORMAT, "first breaks: no receiver interval to number stations "
                   "by (give a station interval)");
  int nt = o->threads > 0 ? o->threads : (int)sysconf(_SC_NPROCESSORS_ONLN);
  if (nt < 1)
    nt = 1;
  if (nt > JOB_MAX_THREADS)
    nt = JOB_MAX_THREADS;
  /* Units: every record of every readable input, with its first output slot. */
  size_t nu = 0, ntr = 0;
  for (size_t i = 0; i < p->ninputs; i++)
    nu += p->inputs[i].bad ? 0 : p->records[i].n;
  unit *units = malloc((nu ? nu : 1) * sizeof *units);
  firstbreak_line *L = calloc(1, sizeof *L);
  size_t *nout = malloc((nu ? nu : 1) * sizeof *nout);
  worker *ws = calloc((size_t)nt, sizeof *ws);
  stack_chain *ch = NULL;
  if (!units || !L || !nout || !ws) {
    rc = tz_fail(err, TZ_E_NOMEM, "first breaks: %zu records", nu);
    goto done;
  }
  nu = 0;
  for (size_t i = 0; i < p->ninputs; i++) {
    if (p->inputs[i].bad)
      continue;
    for (size_t k = 0; k < p->records[i].n; k++) {
      int64_t a, m;
      stack_record_span(p, i, k, &a, &m);
      units[nu++] = (unit){ i, k, ntr };
      ntr += (size_t)m;
    }
  }
  L->records = nu;
  L->station_interval_m = interval;
  L->threads = nt;
  if (!(L->t = malloc((ntr ? ntr : 1) * sizeof *L->t))) {
    rc = tz_fail(err, TZ_E_NOMEM, "first breaks: %zu traces", ntr);
    goto done;
  }
  if ((rc = stack_chain_new(&ch, p, NULL, NULL, err)))
    goto done;
  size_t rmax = p->max_record > 0 ? (size_t)p->max_record : 1, ns = p->axis.ns;
  for (int t = 0; t < nt; t++) {
    worker *w = &ws[t];
    w->p = p, w->o = o, w->ch = ch, w->units = units, w->tid = t, w->nthreads = nt;
    w->out = L->t, w->nout = nout, w->interval = interval;
    tz_err_init(&w->err);
    w->samples = malloc(rmax * ns * sizeof *w->samples);
    w->h = malloc(rmax * sizeof *w->h);
    w->ti = calloc(rmax, sizeof *w->ti);
    w->off = malloc(rmax * sizeof *w->off);
    w->live = malloc(rmax);
    w->pk = malloc(rmax * sizeof *w->pk);
    if (!w->samples || !w->h || !w->ti || !w->off || !w->live || !w->pk) {
      rc = tz_fail(err, TZ_E_NOMEM, "first breaks: record buffers of %zu x %zu samples", rmax,
                   ns);
      goto done;
    }
    if ((rc = stack_chain_ws_new(&w->ws, ch, rmax, err)))
      goto done;
  }
  double t_start = now_s();
  firstbreak_guide guide;
  if (o->guide) {
    guide = *o->guide;
  } else {
    /* Pass 1: unguided picks of every k-th record, their median moveout. */
    size_t step = nu / GUIDE_RECORDS + 1, ng = 0, cap = 0;
    double *gx = NULL, *gt = NULL;
    for (size_t u = 0; u < nu && !rc; u += step) {
      unit sub = units[u];
      sub.out = 0;
      worker *w = &ws[0];
      w->units = &sub, w->guide = NULL, w->u0 = 0, w->u1 = 1;
      if ((rc = do_record(w, 0))) {
        *err = w->err;
        break;
      }
      size_t k = nout[0];
      if (ng + k > cap) {
        cap = 2 * (ng + k) + 64;
        double *nx = realloc(gx, cap * sizeof *gx), *ntt = nx ? realloc(gt, cap * sizeof *gt)
                                                             : NULL;
        if (nx) gx = nx;
        if (ntt) gt = ntt;
        if (!nx || !ntt) {
          rc = tz_fail(err, TZ_E_NOMEM, "first breaks: %zu guide picks", cap);
          break;
        }
      }
      for (size_t j = 0; j < k; j++)
        if (L->t[j].pick.status == FIRSTBREAK_OK) {
          gx[ng] = L->t[j].offset_m;
          gt[ng++] = L->t[j].pick.time_ms;
        }
    }
    if (!rc)
      rc = firstbreak_guide_estimate(gx, gt, ng, GUIDE_BINS, &guide, err);
    free(gx), free(gt);
    if (rc)
      goto done;
    L->guide_estimated = 1;
    ws[0].units = units;
  }
  L->guide = guide;
  for (int t = 0; t < nt; t++)
    ws[t].guide = &L->guide;
  /* Pass 2: every record, guided, in batches. */
  size_t batch = (size_t)nt * BATCH_PER_THREAD;
  for (size_t u0 = 0; u0 < nu; u0 += batch) {
    size_t u1 = u0 + batch < nu ? u0 + batch : nu;
    if ((rc = run_batch(ws, nt, u0, u1, err)))
      goto done;
    /* compact this batch's traces behind the ones already kept */
    for (size_t u = u0; u < u1; u++) {
      size_t k = nout[u - u0];
      if (L->n != units[u].out)
        memmove(L->t + L->n, L->t + units[u].out, k * sizeof *L->t);
      L->n += k;
    }
    if (o->progress)
      o->progress(o->progress_ctx, (int64_t)(u1 < nu ? units[u1].out : ntr), (int64_t)ntr);
  }
  for (size_t i = 0; i < L->n; i++) {
    int s = L->t[i].pick.status;
    L->picked += s == FIRSTBREAK_OK;
    L->rejected += s == FIRSTBREAK_REJECTED;
    L->unpicked += s == FIRSTBREAK_NONE;
  }
  L->elapsed_s = now_s() - t_start;
  *out = L;
  L = NULL;
done:
  for (int t = 0; ws && t < nt; t++) {
    worker *w = &ws[t];
    segy_close(w->f);
    stack_chain_ws_free(w->ws);
    free(w->samples), free(w->h), free(w->ti), free(w->off), free(w->live), free(w->pk);
  }
  free(ws);
  stack_chain_free(ch);
  free(units);
  free(nout);
  firstbreak_line_free(L);
  return rc;
}

int firstbreak_write_picks(const firstbreak_line *l, const char *path, int datum_times,
                           tz_err *err)
{
  fileio_out *o;
  int rc = fileio_create(&o, path, err);
  if (rc)
    return rc;
  FILE *fp = fileio_stream(o);
  fprintf(fp, "# first-break picks: times in ms %s; stations every %.10g m along the line\n",
          datum_times ? "at the processing datum (the job's statics applied)"
                      : "from the shot (field times)", l->station_interval_m);
  fprintf(fp, "record,channel,source_station,receiver_station,offset_m,time_ms,quality\n");
  for (size_t i = 0; i < l->n; i++) {
    const firstbreak_trace *t = &l->t[i];
    if (t->pick.status != FIRSTBREAK_OK)
      continue;
    fprintf(fp, "%d,%d,%d,%d,%.2f,%.3f,%.3f\n", (int)t->record, (int)t->channel,
            (int)t->source_station, (int)t->receiver_station, t->offset_m, t->pick.time_ms,
            t->pick.quality);
  }
  return fileio_commit(o, err);
}

/* ---- stations of a line ---- */

void firstbreak_stations_free(firstbreak_stations *s)
{
  if (!s)
    return;
  free(s->s);
  free(s);
}

const firstbreak_station *firstbreak_stations_find(const firstbreak_stations *s, int kind,
                                                   int32_t station)
{
  size_t lo = 0, hi = s->n;
  while (lo < hi) {
    size_t mid = lo + (hi - lo) / 2;
    const firstbreak_station *m = &s->s[mid];
    if (m->kind < kind || (m->kind == kind && m->station < station))
      lo = mid + 1;
    else
      hi = mid;
  }
  return lo < s->n && s->s[lo].kind == kind && s->s[lo].station == station ? &s->s[lo] : NULL;
}

/* Sums per station number of one kind, over a range that grows as needed. */
typedef struct acc { double along, x, y, z; int64_t n; } acc;
typedef struct accs { acc *a; int64_t base; size_t cap; } accs;

static int accs_add(accs *A, int32_t st, double along, double x, double y, double z, tz_err *err)
{
  if (!A->a) {
    A->cap = 1024;
    A->base = (int64_t)st - 512;
    if (!(A->a = calloc(A->cap, sizeof *A->a)))
      return tz_fail(err, TZ_E_NOMEM, "station list");
  }
  int64_t k = (int64_t)st - A->base;
  if (k < 0 || k >= (int64_t)A->cap) {
    int64_t lo = k < 0 ? (int64_t)st : A->base;
    int64_t hi = k >= (int64_t)A->cap ? (int64_t)st : A->base + (int64_t)A->cap - 1;
    if (hi - lo > FIRSTBREAK_MAX_STATION_SPAN)
      return tz_fail(err, TZ_E_FORMAT, "stations %lld to %lld: more than %d station numbers "
                     "apart (station interval too small?)", (long long)lo, (long long)hi,
                     FIRSTBREAK_MAX_STATION_SPAN);
    size_t cap = (size_t)(hi - lo) * 2 + 1024;
    int64_t base = lo - (int64_t)(cap - (size_t)(hi - lo)) / 2;
    acc *n = calloc(cap, sizeof *n);
    if (!n)
      return tz_fail(err, TZ_E_NOMEM, "station list of %zu", cap);
    memcpy(n + (A->base - base), A->a, A->cap * sizeof *n);
    free(A->a);
    A->a = n, A->cap = cap, A->base = base;
    k = (int64_t)st - A->base;
  }
  acc *a = &A->a[k];
  a->along += along, a->x += x, a->y += y, a->z += z, a->n++;
  return TZ_OK;
}

int firstbreak_stations_scan(const stack_plan *p, double interval_m, firstbreak_stations **out,
                             tz_err *err)
{
  *out = NULL;
  double interval = firstbreak_station_interval(p, interval_m);
  if (!(interval > 0.0))
    return tz_fail(err, TZ_E_FORMAT, "stations: no receiver interval to number stations by "
                   "(give a station interval)");
  accs A[2] = { { NULL, 0, 0 }, { NULL, 0, 0 } };
  int rc = TZ_OK;
  for (size_t fi = 0; fi < p->ninputs && !rc; fi++) {
    if (p->inputs[fi].bad || !p->records[fi].n)
      continue;
    segy_file *f = NULL;
    if ((rc = stack_open_input(p, fi, &f, err)))
      break;
    int64_t nt = segy_trace_count(f);
    for (int64_t t = 0; t < nt && !rc; t++) {
      segy_trace_header h;
      int32_t cmp;
      double oa, os;
      geometry_trace g;
      int reason;
      if ((rc = segy_header_read(f, t, &h, err))) {
        tz_err_path(err, p->inputs[fi].path);
        break;
      }
      if (!stack_locate(p, &h, t, &cmp, &oa, &os, &g, &reason))
        continue;
      if ((rc = accs_add(&A[0], stack_station_at(p, interval, g.source_x, g.source_y),
                         stack_station_along(p, g.source_x, g.source_y), g.source_x, g.source_y,
                         g.source_z, err)) ||
          (rc = accs_add(&A[1], stack_station_at(p, interval, g.receiver_x, g.receiver_y),
                         stack_station_along(p, g.receiver_x, g.receiver_y), g.receiver_x,
                         g.receiver_y, g.receiver_z, err)))
        tz_err_path(err, p->inputs[fi].path);
    }
    segy_close(f);
  }
  firstbreak_stations *S = NULL;
  if (!rc) {
    size_t n = 0;
    for (int k = 0; k < 2; k++)
      for (size_t i = 0; i < A[k].cap; i++)
        n += A[k].a[i].n > 0;
    S = calloc(1, sizeof *S);
    if (!S || !(S->s = malloc((n ? n : 1) * sizeof *S->s))) {
      rc = tz_fail(err, TZ_E_NOMEM, "station list of %zu", n);
    } else {
      S->interval_m = interval;
      for (int k = 0; k < 2; k++)
        for (size_t i = 0; i < A[k].cap; i++) {
          const acc *a = &A[k].a[i];
          if (!a->n)
            continue;
          double w = 1.0 / (double)a->n;
          S->s[S->n++] = (firstbreak_station){ k, (int32_t)(A[k].base + (int64_t)i),
                                               a->along * w, a->x * w, a->y * w, a->z * w,
                                               a->n };
        }
    }
  }
  free(A[0].a), free(A[1].a);
  if (rc) {
    firstbreak_stations_free(S);
    return rc;
  }
  *out = S;
  return TZ_OK;
}

/* ---- picks files ---- */

static const char *const pick_columns[7] = { "record", "channel", "source_station",
                                             "receiver_station", "offset_m", "time_ms",
                                             "quality" };

int firstbreak_picks_load(const char *path, const firstbreak_stations *st,
                          firstbreak_file_pick **out, size_t *n, tz_err *err)
{
  *out = NULL;
  *n = 0;
  table_reader *t;
  int rc = table_open(&t, path, err);
  if (rc)
    return rc;
  long col[7] = { -1, -1, -1, -1, -1, -1, -1 };
  size_t nf, cap = 0, np = 0;
  firstbreak_file_pick *pk = NULL;
  int header = 1;
  while (!(rc = table_next(t, &nf, err)) && nf > 0) {
    if (header) {
      for (size_t i = 0; i < nf; i++)
        for (int c = 0; c < 7; c++)
          if (!strcmp(table_field(t, i), pick_columns[c]))
            col[c] = (long)i;
      for (int c = 0; c < 7 && !rc; c++)
        if (col[c] < 0)
          rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "no column %s in the header row "
                            "(record,channel,source_station,receiver_station,offset_m,time_ms,"
                            "quality)", pick_columns[c]);
      if (rc)
        break;
      header = 0;
      continue;
    }
    if (np >= FIRSTBREAK_MAX_FILE_PICKS) {
      rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "more than %u picks",
                        FIRSTBREAK_MAX_FILE_PICKS);
      break;
    }
    if (np == cap) {
      cap = cap ? 2 * cap : 4096;
      firstbreak_file_pick *q = realloc(pk, cap * sizeof *q);
      if (!q) {
        rc = tz_fail(err, TZ_E_NOMEM, "%zu picks", cap);
        break;
      }
      pk = q;
    }
    firstbreak_file_pick *q = &pk[np];
    int64_t v[4];
    for (int c = 0; c < 4 && !rc; c++) {
      rc = table_field_i64(t, (size_t)col[c], pick_columns[c], &v[c], err);
      if (!rc && (v[c] < INT32_MIN || v[c] > INT32_MAX))
        rc = tz_fail_line(err, TZ_E_FORMAT, table_line(t), "column %s: %lld out of range",
                          pick_columns[c], (long long)v[c]);
    }
    if (rc || (rc = table_field_f64(t, (size_t)col[4], "offset_m", &q->offset_m, err)) ||
        (rc = table_field_f64(t, (size_t)col[5], "time_ms", &q->time_ms, err)) ||
        (rc = table_field_f64(t, (size_t)col[6], "quality", &q->quality, err)))
      break;
    q->record = (int32_t)v[0], q->channel = (int32_t)v[1];
    q->source_station = (int32_t)v[2], q->receiver_station = (int32_t)v[3];
    q->line = table_line(t);
    if (q->quality < 0.0 || q->quality > 1.0) {
      rc = tz_fail_line(err, TZ_E_FORMAT, q->line, "column quality: %g is not between 0 and 1",
                        q->quality);
      break;
    }
    if (st && !firstbreak_stations_find(st, 0, q->source_station)) {
      rc = tz_fail_line(err, TZ_E_FORMAT, q->line, "source station %d is not a source station "
                        "of the line", (int)q->source_station);
      break;
    }
    if (st && !firstbreak_stations_find(st, 1, q->receiver_station)) {
      rc = tz_fail_line(err, TZ_E_FORMAT, q->line, "receiver station %d is not a receiver "
                        "station of the line", (int)q->receiver_station);
      break;
    }
    np++;
  }
  if (!rc && header)
    rc = tz_fail(err, TZ_E_FORMAT, "no header row");
  if (rc) {
    tz_err_path(err, table_name(t));
    free(pk);
  } else {
    *out = pk;
    *n = np;
  }
  table_close(t);
  return rc;
}
