/* stack_mutes.c -- the mute times of the job of the traces of a SEG-Y file, for pictures.
 *
 * Each trace is located as the data pass locates it (stack_locate: CMP and offsets
 * from the plan's geometry), its static computed as the chain computes it
 * (stack_trace_static_ms), and the mute times of mute_eval() are moved onto the
 * file's time axis, so a mute line drawn over a record sits where the stack cuts.
 *
 * Not here: drawing (qc/picture.c), applying the mutes (stack_chain.c, nmo.c).
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "stack_int.h"
#include "tzero/mute.h"
#include "tzero/segy.h"

int stack_mute_lines(const stack_plan *p, const mute_set *m, const char *path,
                     const int64_t *traces, size_t n, double *out, tz_err *err)
{
  for (size_t i = 0; i < n * STACK_MUTE_LINES; i++)
    out[i] = NAN;
  if (!mute_set_active(m) || n == 0)
    return TZ_OK;
  segy_open_opts o;
  memset(&o, 0, sizeof o);
  o.map = p->has_map ? &p->map : NULL;
  o.interval_us = p->job ? p->job->interval_us : 0;
  segy_file *f = NULL;
  int rc = segy_open(&f, path, &o, err);
  if (rc) {
    tz_err_path(err, path);
    return rc;
  }
  int statics = p->job && p->job->statics.present && p->has_stations;
  for (size_t k = 0; k < n && !rc; k++) {
    segy_trace_header h;
    if ((rc = segy_header_read(f, traces[k], &h, err)))
      break;
    int32_t cmp;
    double oa, os;
    geometry_trace g;
    int reason = 0;
    if (stack_locate(p, &h, traces[k], &cmp, &oa, &os, &g, &reason) != 1)
      continue;
    double st = 0, s1, s2;
    if (statics)
      st = stack_trace_static_ms(p, &g, cmp, &s1, &s2);
    mute_trace t = { cmp, h.field_record, h.channel, os, st };
    mute_times mt;
    mute_eval(m, &t, &mt);
    /* datum time = field time + static: a file without the static applied is drawn
     * in field time */
    double shift = statics && h.total_static_ms == 0 ? -st : 0;
    double v[STACK_MUTE_LINES] = { mt.top_ms, mt.inner_from_ms, mt.inner_to_ms, mt.bottom_ms };
    for (int j = 0; j < STACK_MUTE_LINES; j++)
      out[k * STACK_MUTE_LINES + j] = isfinite(v[j]) ? v[j] + shift : NAN;
  }
  if (rc)
    tz_err_path(err, path);
  segy_close(f);
  return rc;
}
