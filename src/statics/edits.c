/* edits.c -- selectors of trace edits and the measures automatic kills use.
 *
 * Selectors are sets of inclusive integer ranges; an entry matches a trace when
 * every selector it gives contains the trace's value (and its file name, when
 * given, names the trace's shot file). The record-wide part of automatic kills
 * (the median RMS of a record) is in the processing chain (src/stack/
 * stack_chain.c), which has the whole record in memory.
 *
 * Not here: JSON (job.c), which traces belong to a record (the stack plan).
 */
#include "tzero/edits.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/table.h"

static const char *const reason_names[EDITS_KILL__COUNT] = { "listed", "dead", "noisy" };

const char *edits_reason_name(int reason)
{
  return reason >= 0 && reason < EDITS_KILL__COUNT ? reason_names[reason] : "unknown";
}

void edits_spec_init(edits_spec *e)
{
  memset(e, 0, sizeof *e);
}

void edits_spec_free(edits_spec *e)
{
  if (!e)
    return;
  free(e->kill);
  free(e->reverse);
  e->kill = e->reverse = NULL;
  e->nkill = e->nreverse = 0;
}

int edits_spec_copy(edits_spec *dst, const edits_spec *src, tz_err *err)
{
  *dst = *src;
  dst->kill = dst->reverse = NULL;
  if (src->nkill && !(dst->kill = malloc(src->nkill * sizeof *dst->kill)))
    goto nomem;
  if (src->nreverse && !(dst->reverse = malloc(src->nreverse * sizeof *dst->reverse)))
    goto nomem;
  if (src->nkill)
    memcpy(dst->kill, src->kill, src->nkill * sizeof *dst->kill);
  if (src->nreverse)
    memcpy(dst->reverse, src->reverse, src->nreverse * sizeof *dst->reverse);
  return TZ_OK;
nomem:
  edits_spec_free(dst);
  return tz_fail(err, TZ_E_NOMEM, "edit lists");
}

int edits_spec_active(const edits_spec *e)
{
  return e->nkill || e->nreverse || e->auto_dead || e->rms_ratio_max > 0;
}

int edits_use_stations(const edits_spec *e)
{
  for (size_t i = 0; i < e->nkill; i++)
    if (e->kill[i].source_station.n || e->kill[i].receiver_station.n)
      return 1;
  for (size_t i = 0; i < e->nreverse; i++)
    if (e->reverse[i].source_station.n || e->reverse[i].receiver_station.n)
      return 1;
  return 0;
}

int edits_set_add(edits_set *s, int64_t lo, int64_t hi, const char *where, tz_err *err)
{
  if (hi < lo)
    return tz_fail(err, TZ_E_JOB, "%s: range %lld-%lld ends before it starts", where,
                   (long long)lo, (long long)hi);
  if (s->n >= EDITS_MAX_RANGES)
    return tz_fail(err, TZ_E_JOB, "%s: more than %d ranges", where, EDITS_MAX_RANGES);
  s->r[s->n].lo = lo;
  s->r[s->n].hi = hi;
  s->n++;
  return TZ_OK;
}

static int parse_num(const char *a, size_t n, int64_t *v)
{
  char buf[32];
  if (!n || n >= sizeof buf)
    return -1;
  memcpy(buf, a, n);
  buf[n] = '\0';
  return table_parse_i64(buf, v);
}

int edits_set_parse_text(edits_set *s, const char *text, const char *where, tz_err *err)
{
  const char *p = text;
  if (!*p)
    return tz_fail(err, TZ_E_JOB, "%s: empty selector (expected e.g. 40, \"30-32\" or "
                   "\"1,3,7-9\")", where);
  for (;;) {
    const char *e = strchr(p, ',');
    size_t len = e ? (size_t)(e - p) : strlen(p);
    while (len && (*p == ' ' || *p == '\t')) {
      p++;
      len--;
    }
    while (len && (p[len - 1] == ' ' || p[len - 1] == '\t'))
      len--;
    const char *dash = NULL;
    for (size_t i = 1; i < len; i++)    /* a leading '-' is a sign */
      if (p[i] == '-') {
        dash = p + i;
        break;
      }
    int64_t lo = 0, hi = 0;
    int bad = dash ? parse_num(p, (size_t)(dash - p), &lo) ||
                         parse_num(dash + 1, (size_t)(p + len - dash - 1), &hi)
                   : parse_num(p, len, &lo);
    if (!dash)
      hi = lo;
    if (bad)
      return tz_fail(err, TZ_E_JOB, "%s: '%.*s' is not a number or a range FIRST-LAST", where,
                     (int)len, p);
    int rc = edits_set_add(s, lo, hi, where, err);
    if (rc)
      return rc;
    if (!e)
      break;
    p = e + 1;
  }
  return TZ_OK;
}

int edits_set_has(const edits_set *s, int64_t v)
{
  for (size_t i = 0; i < s->n; i++)
    if (v >= s->r[i].lo && v <= s->r[i].hi)
      return 1;
  return 0;
}

static int file_matches(const char *want, const char *path)
{
  if (!strcmp(want, path))
    return 1;
  const char *b = strrchr(path, '/');
  return b && !strcmp(want, b + 1);
}

int edits_entry_matches(const edits_entry *e, const edits_trace *t)
{
  if (e->record.n && !edits_set_has(&e->record, t->record))
    return 0;
  if (e->channel.n && !edits_set_has(&e->channel, t->channel))
    return 0;
  if (e->source_station.n && !edits_set_has(&e->source_station, t->source_station))
    return 0;
  if (e->receiver_station.n && !edits_set_has(&e->receiver_station, t->receiver_station))
    return 0;
  if (e->file[0] && !(t->file && file_matches(e->file, t->file)))
    return 0;
  return 1;
}

double edits_rms(const float *x, size_t lo, size_t hi)
{
  if (hi <= lo)
    return 0;
  double s = 0;
  for (size_t i = lo; i < hi; i++)
    s += (double)x[i] * x[i];
  return sqrt(s / (double)(hi - lo));
}

int edits_is_constant(const float *x, size_t n)
{
  float d = 0;
  for (size_t i = 1; i < n; i++)
    d = fmaxf(d, fabsf(x[i] - x[0]));
  return d == 0;
}

static int cmp_dbl(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

double edits_median(double *v, size_t n)
{
  if (!n)
    return NAN;
  qsort(v, n, sizeof *v, cmp_dbl);
  return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}
