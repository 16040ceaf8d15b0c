/* segy_scan.c -- one pass over a SEG-Y file for the facts `tzero inspect`
 * prints: header value ranges, record and channel counts, dead traces,
 * amplitude statistics and anomalies (pitfalls known from common practice).
 *
 * The pass reads traces in file order, so it streams through the read
 * window without seeking; without samples it reads only the headers.
 * Not here: printing (src/cli/inspect.c).
 */
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "segy_priv.h"

static void anomaly(segy_stats *st, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void anomaly(segy_stats *st, const char *fmt, ...)
{
  if (st->nanomalies >= SEGY_MAX_ANOMALIES)
    return;
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(st->anomalies[st->nanomalies++], sizeof st->anomalies[0], fmt, ap);
  va_end(ap);
}

static int cmp_i32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return (x > y) - (x < y);
}

static int regular_scalar(int16_t s)
{
  int a = s < 0 ? -s : s;
  return a == 0 || a == 1 || a == 10 || a == 100 || a == 1000 || a == 10000;
}

/* Distinct values of v[0..n) (sorted in place) and the shortest and longest run. */
static int64_t distinct(int32_t *v, int64_t n, int64_t *run_min, int64_t *run_max)
{
  qsort(v, (size_t)n, sizeof *v, cmp_i32);
  int64_t d = 0, run = 0;
  if (run_min)
    *run_min = *run_max = 0;
  for (int64_t i = 0; i < n; i++) {
    run++;
    if (i + 1 == n || v[i + 1] != v[i]) {
      d++;
      if (run_min) {
        if (!*run_min || run < *run_min)
          *run_min = run;
        if (run > *run_max)
          *run_max = run;
      }
      run = 0;
    }
  }
  return d;
}

static int cmp_double(const void *a, const void *b)
{
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* Noisy traces: RMS above SEGY_NOISY_RATIO x the median RMS of their record's
 * live traces that are not all zero (a record is a run of one field record
 * number). Reorders nothing but a scratch copy; rms[] itself is kept. */
static void note_noisy(segy_stats *st, const int32_t *rec, const int32_t *chan,
                       const double *rms, const int *kinds, int64_t n)
{
  double *v = malloc((size_t)(n ? n : 1) * sizeof *v);
  if (!v)
    return;   /* the listing is advisory; the counts above stand */
  for (int64_t a = 0, b; a < n; a = b) {
    size_t k = 0;
    for (b = a; b < n && rec[b] == rec[a]; b++)
      if (rms[b] > 0 && kinds[b] != SEGY_KIND_DEAD && kinds[b] != SEGY_KIND_DUMMY)
        v[k++] = rms[b];
    if (k < 3)
      continue;
    qsort(v, k, sizeof *v, cmp_double);
    double med = k % 2 ? v[k / 2] : 0.5 * (v[k / 2 - 1] + v[k / 2]);
    for (int64_t i = a; i < b; i++) {
      if (!(med > 0) || !(rms[i] > SEGY_NOISY_RATIO * med))
        continue;
      st->noisy++;
      if (st->nnoisy_noted < SEGY_MAX_NOTED)
        st->noisy_noted[st->nnoisy_noted++] =
            (segy_trace_note){ i, rec[i], chan[i], kinds[i], rms[i], rms[i] / med };
    }
  }
  free(v);
}

int segy_scan(segy_file *f, int with_samples, segy_stats *st, tz_err *err)
{
  const segy_info *in = segy_get_info(f);
  int64_t n = segy_trace_count(f);
  size_t nf = segy_field_count();
  memset(st, 0, sizeof *st);
  st->with_samples = with_samples;
  int32_t *rec = malloc((size_t)(n ? n : 1) * sizeof *rec);
  int32_t *chan = malloc((size_t)(n ? n : 1) * sizeof *chan);
  float *s = with_samples ? malloc((size_t)in->samples * sizeof *s) : NULL;
  double *rms = with_samples ? malloc((size_t)(n ? n : 1) * sizeof *rms) : NULL;
  int *kinds = with_samples ? malloc((size_t)(n ? n : 1) * sizeof *kinds) : NULL;
  int rc = TZ_OK;
  if (!rec || !chan || (with_samples && (!s || !rms || !kinds))) {
    rc = tz_fail(err, TZ_E_NOMEM, "scan buffers for %lld traces", (long long)n);
    goto done;
  }
  int64_t bad0 = segy_bad_samples(f), nsamp = 0;
  double sumsq = 0;
  st->amp_min = INFINITY;
  st->amp_max = -INFINITY;
  int rev0_private = 0;
  int64_t ibm_nonzero = 0, ibm_unnormal = 0;   /* wrong-format tell (common practice) */
  for (int64_t i = 0; i < n; i++) {
    segy_trace_header h;
    rc = with_samples ? segy_trace_read(f, i, &h, s, in->samples, err)
                      : segy_header_read(f, i, &h, err);
    if (rc)
      goto done;
    for (size_t k = 0; k < nf && k < SEGY_MAX_FIELDS; k++) {
      double v = segy_field_value(&h, k);
      if (!i || v < st->field_min[k])
        st->field_min[k] = v;
      if (!i || v > st->field_max[k])
        st->field_max[k] = v;
    }
    rec[i] = h.field_record;
    chan[i] = h.channel;
    if (h.kind == SEGY_KIND_DEAD)
      st->dead++;
    else if (h.kind == SEGY_KIND_DUMMY)
      st->dummy++;
    else if (h.kind >= 4 && h.kind <= 10)
      st->auxiliary++;
    uint32_t stored_ns = segy_ld16(in->byte_order, h.raw + 114);
    uint32_t stored_dt = segy_ld16(in->byte_order, h.raw + 116);
    if (stored_ns && stored_ns != h.samples && !in->trace_header_extensions)
      st->samples_differ++;
    if (stored_dt && stored_dt != in->interval_us)
      st->interval_differ++;
    int has_xy = h.source_x || h.source_y || h.receiver_x || h.receiver_y || h.cmp_x || h.cmp_y;
    int has_z = h.receiver_elev || h.source_elev || h.source_depth || h.receiver_datum ||
                h.source_datum;
    if (!(h.source_x || h.source_y || h.receiver_x || h.receiver_y))
      st->coords_zero++;
    if (has_xy && !h.coord_scalar)
      st->coord_scalar_zero++;
    if (has_z && !h.elev_scalar)
      st->elev_scalar_zero++;
    if (!regular_scalar(h.coord_scalar) || !regular_scalar(h.elev_scalar))
      st->scalar_irregular++;
    if (h.offset == 0 && (h.source_x != h.receiver_x || h.source_y != h.receiver_y))
      st->offset_inconsistent++;
    if (h.coord_units >= 2 && h.coord_units <= 4)
      st->angular_units++;
    if (in->revision_major == 0 && !rev0_private)
      for (int b = 180; b < 240; b++)
        if (h.raw[b]) {
          rev0_private = 1;
          break;
        }
    if (with_samples) {
      int zero = 1;
      double tsq = 0;
      for (uint32_t k = 0; k < h.samples; k++) {
        double v = s[k];
        tsq += v * v;
        if (v < st->amp_min)
          st->amp_min = v;
        if (v > st->amp_max)
          st->amp_max = v;
        zero &= v == 0;
      }
      sumsq += tsq;
      nsamp += h.samples;
      st->all_zero += zero;
      rms[i] = h.samples ? sqrt(tsq / h.samples) : 0;
      kinds[i] = h.kind;
      if (zero && h.samples && st->nzero_noted < SEGY_MAX_NOTED)
        st->zero_noted[st->nzero_noted++] =
            (segy_trace_note){ i, h.field_record, h.channel, h.kind, 0, 0 };
      if (in->format_code == 1 && i < 1000) {
        const unsigned char *p = segy_last_sample_bytes(f);
        for (uint32_t k = 0; k < h.samples; k++, p += 4) {
          uint32_t w = be32_load(p);
          ibm_nonzero += (w & 0x00FFFFFFu) != 0;
          ibm_unnormal += (w & 0x00FFFFFFu) != 0 && !(w & 0x00F00000u);
        }
      }
    }
    st->traces++;
  }
  if (!nsamp)
    st->amp_min = st->amp_max = 0;
  st->amp_rms = nsamp ? sqrt(sumsq / (double)nsamp) : 0;
  st->bad_samples = segy_bad_samples(f) - bad0;
  if (with_samples)    /* before distinct() sorts rec and chan */
    note_noisy(st, rec, chan, rms, kinds, n);
  st->field_records = distinct(rec, n, &st->traces_per_record_min, &st->traces_per_record_max);
  st->channels = distinct(chan, n, NULL, NULL);

  if (n && st->coords_zero == n)
    anomaly(st, "source and receiver coordinates (bytes 73-88) are 0 in every trace");
  else if (st->coords_zero)
    anomaly(st, "%lld traces have source and receiver coordinates all 0",
            (long long)st->coords_zero);
  if (st->coord_scalar_zero)
    anomaly(st, "coordinate scalar (bytes 71-72) is 0 in %lld traces with coordinates "
                "(read as 1)", (long long)st->coord_scalar_zero);
  if (st->elev_scalar_zero)
    anomaly(st, "elevation scalar (bytes 69-70) is 0 in %lld traces with elevations "
                "(read as 1)", (long long)st->elev_scalar_zero);
  if (st->scalar_irregular)
    anomaly(st, "%lld traces have a coordinate or elevation scalar that is not a power of "
                "ten", (long long)st->scalar_irregular);
  if (st->samples_differ)
    anomaly(st, "%lld traces give a sample count (bytes 115-116) other than the file's %u",
            (long long)st->samples_differ, in->samples);
  if (st->interval_differ)
    anomaly(st, "%lld traces give a sample interval (bytes 117-118) other than the file's "
                "%u us", (long long)st->interval_differ, in->interval_us);
  if (st->offset_inconsistent)
    anomaly(st, "%lld traces have offset 0 (bytes 37-40) while source and receiver differ",
            (long long)st->offset_inconsistent);
  if (st->angular_units)
    anomaly(st, "%lld traces have coordinates in arc-seconds or degrees (bytes 89-90): "
                "not usable as metres", (long long)st->angular_units);
  if (st->dead)
    anomaly(st, "%lld dead traces (trace identification code 2)", (long long)st->dead);
  if (st->bad_samples)
    anomaly(st, "%lld NaN, infinite or out-of-range samples (replaced by 0)",
            (long long)st->bad_samples);
  if (with_samples && st->all_zero && st->all_zero > st->dead)
    anomaly(st, "%lld traces hold only zero samples", (long long)st->all_zero);
  if (st->noisy)
    anomaly(st, "%lld traces have an RMS amplitude more than %g times their record's median",
            (long long)st->noisy, SEGY_NOISY_RATIO);
  if (rev0_private)
    anomaly(st, "rev 0 file with data in trace header bytes 181-240: not standard, not "
                "trusted");
  /* IBM writers normalise (first hex digit of the fraction nonzero); IEEE
   * floats read as IBM are unnormalised about one time in sixteen. */
  if (ibm_nonzero >= 100 && ibm_unnormal * 50 > ibm_nonzero)
    anomaly(st, "%.0f%% of the IBM samples are unnormalised: the data may be IEEE floats "
                "(try format 5)", 100.0 * (double)ibm_unnormal / (double)ibm_nonzero);
  if (n && in->bin_samples && st->samples_differ == n)
    anomaly(st, "binary header and trace headers disagree on the sample count");
done:
  free(rec);
  free(chan);
  free(s);
  free(rms);
  free(kinds);
  return rc;
}
