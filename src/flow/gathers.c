/* gathers.c -- traces after the chain up to a step, sorted into gathers, and
 * test panels (gathers.h, docs/gathers.md).
 *
 * gathers_writer_add() asks stack_visit() (the stack's chain: edits, statics,
 * conditioning, stack_nmo_trace) for the selected traces of one panel. Each
 * trace leaving the chain is appended to an unlinked temporary file (its
 * header, samples and live weights: a fixed-size record) and gets an index
 * entry of three sort keys and its record number; the index is sorted (stable:
 * ties keep input order) and the records are copied to the SEG-Y output in
 * that order. Memory is the index (40 bytes a trace, GATHERS_MAX_TRACES at
 * most) and one record, whatever the sort.
 *
 * Not here: the chain itself (src/stack/stack_chain.c, stack_visit.c), the job
 * document edit of a test panel (src/job/job_edit.c).
 */
#include "tzero/gathers.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/table.h"
#include "util/endian.h"

/* ---------------------------------------------------------------- panel fields */

void gathers_panel_set(segy_trace_header *h, int32_t panel, double value)
{
  be32_store(h->raw + GATHERS_PANEL_BYTE - 1, (uint32_t)panel);
  be32_store(h->raw + GATHERS_VALUE_BYTE - 1, f32_bits((float)value));
}

int32_t gathers_panel_get(const segy_trace_header *h, double *value)
{
  uint32_t b = be32_load(h->raw + GATHERS_VALUE_BYTE - 1);
  float f;
  memcpy(&f, &b, sizeof f);
  if (value)
    *value = f;
  return u32_to_i32(be32_load(h->raw + GATHERS_PANEL_BYTE - 1));
}

/* The text after `prefix` on its line of a textual header: lines end at a
 * newline or, in a file's 3200-byte header decoded card by card, at the end of
 * the 80-character card; trailing blanks removed. */
static int text_after(const char *text, const char *prefix, char *buf, size_t cap)
{
  const char *at = text ? strstr(text, prefix) : NULL;
  if (!at || !cap)
    return 0;
  at += strlen(prefix);
  size_t n = strcspn(at, "\n"), card = 80 - (size_t)(at - text) % 80;
  if (n > card)
    n = card;
  while (n && at[n - 1] == ' ')
    n--;
  if (n >= cap)
    n = cap - 1;
  memcpy(buf, at, n);
  buf[n] = '\0';
  return 1;
}

int gathers_panel_label(const char *text, int32_t k, char *buf, size_t cap)
{
  char want[32];
  snprintf(want, sizeof want, "panel %d: ", (int)k);
  return text_after(text, want, buf, cap);
}

int gathers_panel_key(const char *text, char *buf, size_t cap)
{
  return text_after(text, "varied: ", buf, cap);
}

/* ---------------------------------------------------------------- names */

static const char *const sort_names[] = { "shot", "receiver", "offset", "cmp", NULL };

const char *gathers_sort_name(int sort)
{
  return sort >= 0 && sort <= GATHERS_SORT_CMP ? sort_names[sort] : "unknown";
}

int gathers_sort_parse(const char *s)
{
  for (int i = 0; sort_names[i]; i++)
    if (!strcmp(s, sort_names[i]))
      return i;
  return -1;
}

int gathers_step_parse(const char *s, const job_spec *job, gathers_step *out, tz_err *err)
{
  static const char *const fixed[] = { "edits", "statics", "conditioning", "nmo", "mute", "all" };
  static const int steps[] = { STACK_STEP_EDITS, STACK_STEP_STATICS, STACK_STEP_CONDITIONING,
                               STACK_STEP_NMO, STACK_STEP_MUTE, STACK_STEP_ALL };
  const condition_chain *cc = &job->conditioning;
  memset(out, 0, sizeof *out);
  for (size_t i = 0; i < sizeof fixed / sizeof fixed[0]; i++)
    if (!strcmp(s, fixed[i])) {
      out->through = steps[i];
      out->conditioning_steps = cc->n;
      snprintf(out->label, sizeof out->label, "%s", fixed[i]);
      if (steps[i] == STACK_STEP_CONDITIONING && !cc->n)
        return tz_fail(err, TZ_E_ARG, "--through conditioning: the job has no conditioning "
                       "steps");
      return TZ_OK;
    }
  long k = -1;
  if (!strncmp(s, "conditioning[", 13)) {
    char *end;
    k = strtol(s + 13, &end, 10);
    if (end == s + 13 || strcmp(end, "]") || k < 0)
      return tz_fail(err, TZ_E_ARG, "--through %s: expected conditioning[K], K from 0", s);
    if ((size_t)k >= cc->n)
      return cc->n ? tz_fail(err, TZ_E_ARG, "--through %s: the job's conditioning has %zu "
                             "steps (conditioning[0] to conditioning[%zu])", s, cc->n, cc->n - 1)
                   : tz_fail(err, TZ_E_ARG, "--through %s: the job has no conditioning steps", s);
  } else {
    size_t found = 0;
    for (size_t i = 0; i < cc->n; i++)
      if (!strcmp(s, condition_kind_name(cc->step[i].kind))) {
        if (found++)
          return tz_fail(err, TZ_E_ARG, "--through %s: the job has more than one %s step; "
                         "give it by position (conditioning[%ld] or conditioning[%zu])", s, s,
                         k, i);
        k = (long)i;
      }
    if (k < 0) {
      const char *names[6 + CONDITION_MAX_STEPS];
      size_t n = 0;
      for (size_t i = 0; i < sizeof fixed / sizeof fixed[0]; i++)
        names[n++] = fixed[i];
      for (size_t i = 0; i < cc->n; i++)
        names[n++] = condition_kind_name(cc->step[i].kind);
      const char *near = tz_nearest(s, names, n, 3);
      if (near)
        return tz_fail(err, TZ_E_ARG, "--through %s: unknown step; did you mean '%s'?", s,
                       near);
      return tz_fail(err, TZ_E_ARG, "--through %s: unknown step (edits, statics, "
                     "conditioning, conditioning[K], a conditioning step's name, nmo, mute "
                     "or all)", s);
    }
  }
  out->through = STACK_STEP_CONDITIONING;
  out->conditioning_steps = (size_t)k + 1;
  snprintf(out->label, sizeof out->label, "conditioning[%ld] (%s)", k,
           condition_kind_name(cc->step[k].kind));
  return TZ_OK;
}

/* ---------------------------------------------------------------- selection */

void gathers_select_free(gathers_select *s)
{
  if (!s)
    return;
  free(s->values);
  free(s->ranges);
  memset(s, 0, sizeof *s);
}

#define MAX_RANGES 4096

/* "A-B" or "A-B:STEP" items of |offset| ranges in metres. */
static int parse_offsets(const char *s, gathers_select *out, tz_err *err)
{
  size_t cap = 16;
  if (!(out->ranges = malloc(cap * sizeof *out->ranges)))
    return tz_fail(err, TZ_E_NOMEM, "--select");
  while (*s) {
    size_t n = strcspn(s, ",");
    char item[96];
    if (n == 0 || n >= sizeof item)
      return tz_fail(err, TZ_E_ARG, "--select: offset range item '%.*s' (expected A-B or "
                     "A-B:STEP in metres)", (int)(n < 60 ? n : 60), s);
    memcpy(item, s, n);
    item[n] = '\0';
    s += n + (s[n] == ',');
    char *colon = strchr(item, ':'), *dash = strchr(item + 1, '-');
    double a, b, step = 0;
    if (colon)
      *colon = '\0';
    if (dash)
      *dash = '\0';
    if (!dash || table_parse_f64(item, &a) || table_parse_f64(dash + 1, &b) ||
        (colon && (table_parse_f64(colon + 1, &step) || !(step > 0))) || a < 0 || b < a) {
      if (dash)
        *dash = '-';
      if (colon)
        *colon = ':';
      return tz_fail(err, TZ_E_ARG, "--select: offset range item '%s' (expected A-B or A-B:STEP "
                     "in metres, 0 <= A <= B, STEP > 0)", item);
    }
    double lo = a;
    do {
      double hi = colon ? fmin(lo + step, b) : b;
      if (out->nranges == MAX_RANGES)
        return tz_fail(err, TZ_E_ARG, "--select: more than %d offset ranges", MAX_RANGES);
      if (out->nranges == cap) {
        cap *= 2;
        double (*r)[2] = realloc(out->ranges, cap * sizeof *r);
        if (!r)
          return tz_fail(err, TZ_E_NOMEM, "--select");
        out->ranges = r;
      }
      out->ranges[out->nranges][0] = lo;
      out->ranges[out->nranges][1] = hi;
      out->nranges++;
      lo = hi;
    } while (colon && lo < b);
  }
  return TZ_OK;
}

int gathers_select_parse(int sort, const char *s, gathers_select *out, tz_err *err)
{
  memset(out, 0, sizeof *out);
  if (!s || !*s) {
    out->all = 1;
    return TZ_OK;
  }
  int rc;
  if (sort == GATHERS_SORT_OFFSET)
    rc = parse_offsets(s, out, err);
  else
    rc = table_parse_ranges(s, sort == GATHERS_SORT_SHOT ? "field record"
                               : sort == GATHERS_SORT_RECEIVER ? "receiver station" : "CMP",
                            GATHERS_MAX_TRACES, &out->values, &out->nvalues, err);
  if (rc)
    gathers_select_free(out);
  return rc;
}

/* ---------------------------------------------------------------- the writer */

typedef struct gkey {
  double k1, k2, k3;
  int64_t seq;
} gkey;

struct gathers_writer {
  gathers_request rq;
  segy_writer *out, *wts;
  size_t ns;
  uint32_t interval_us;
  const gathers_panels *panels;
  int64_t written;
  /* per panel */
  FILE *spill;
  gkey *idx;
  size_t n, cap;
  size_t rec_bytes;
  unsigned char *rec;
  int statics;
};

static int cmp_i32(const void *a, const void *b)
{
  int32_t x = *(const int32_t *)a, y = *(const int32_t *)b;
  return (x > y) - (x < y);
}

static int cmp_gkey(const void *a, const void *b)
{
  const gkey *x = a, *y = b;
  if (x->k1 != y->k1)
    return x->k1 < y->k1 ? -1 : 1;
  if (x->k2 != y->k2)
    return x->k2 < y->k2 ? -1 : 1;
  if (x->k3 != y->k3)
    return x->k3 < y->k3 ? -1 : 1;
  return (x->seq > y->seq) - (x->seq < y->seq);
}

static int offset_range(const gathers_select *s, double off)
{
  for (size_t i = 0; i < s->nranges; i++)
    if (off >= s->ranges[i][0] && off <= s->ranges[i][1])
      return (int)i;
  return -1;
}

static int want_trace(void *ctx, const stack_visit_trace *t)
{
  const gathers_writer *w = ctx;
  const gathers_select *s = &w->rq.select;
  if (s->all)
    return 1;
  int32_t v;
  switch (w->rq.sort) {
  case GATHERS_SORT_SHOT: v = t->field_record; break;
  case GATHERS_SORT_RECEIVER: v = t->receiver_station; break;
  case GATHERS_SORT_CMP: v = t->cmp; break;
  default: return offset_range(s, t->offset_m) >= 0;
  }
  return bsearch(&v, s->values, s->nvalues, sizeof v, cmp_i32) != NULL;
}

static int spill_fail(tz_err *err, const char *what)
{
  return tz_fail_os(err, TZ_E_IO, errno, "temporary file of the gathers: cannot %s", what);
}

static int emit_trace(void *ctx, const stack_visit_trace *t, tz_err *err)
{
  gathers_writer *w = ctx;
  if (w->n == GATHERS_MAX_TRACES)
    return tz_fail(err, TZ_E_ARG, "the selection holds more than %d traces; choose fewer with "
                   "--select", GATHERS_MAX_TRACES);
  if (w->n == w->cap) {
    size_t nc = w->cap ? w->cap * 2 : 4096;
    gkey *k = realloc(w->idx, nc * sizeof *k);
    if (!k)
      return tz_fail(err, TZ_E_NOMEM, "index of %zu traces", nc);
    w->idx = k;
    w->cap = nc;
  }
  gkey *k = &w->idx[w->n];
  k->seq = (int64_t)w->n;
  switch (w->rq.sort) {
  case GATHERS_SORT_SHOT:
    *k = (gkey){ t->field_record, t->channel, 0, k->seq };
    break;
  case GATHERS_SORT_RECEIVER:
    *k = (gkey){ t->receiver_station, t->source_station, t->offset_signed_m, k->seq };
    break;
  case GATHERS_SORT_OFFSET:
    *k = (gkey){ w->rq.select.all ? 0 : offset_range(&w->rq.select, t->offset_m), t->cmp,
                 t->offset_m, k->seq };
    break;
  default:
    *k = (gkey){ t->cmp, t->offset_m, 0, k->seq };
    break;
  }
  segy_trace_header h = *t->header;
  h.cmp = t->cmp;
  h.offset = t->offset_signed_m;
  h.cmp_x = t->x_m;
  h.cmp_y = t->y_m;
  memcpy(w->rec, &h, sizeof h);
  memcpy(w->rec + sizeof h, t->samples, w->ns * sizeof(float));
  memcpy(w->rec + sizeof h + w->ns * sizeof(float), t->weight, w->ns * sizeof(float));
  if (fwrite(w->rec, 1, w->rec_bytes, w->spill) != w->rec_bytes)
    return spill_fail(err, "write");
  w->n++;
  return TZ_OK;
}

static void datum_text(const job_spec *j, char *buf, size_t cap)
{
  if (!j->statics.present)
    snprintf(buf, cap, "times at the recording surface (the job applies no statics)");
  else
    snprintf(buf, cap, "times at the %s datum %g m, replacement velocity %g m/s",
             j->statics.floating_datum_smooth_m > 0 ? "floating (smoothed)" : "flat",
             j->statics.datum_m, j->statics.replacement_velocity_mps);
}

int gathers_writer_open(gathers_writer **out, const stack_plan *p, const gathers_request *rq,
                        const gathers_panels *panels, const char *path,
                        const char *weights_path, int format_code, tz_err *err)
{
  const job_spec *j = stack_plan_job(p);
  if (panels && panels->n > GATHERS_MAX_PANELS)
    return tz_fail(err, TZ_E_ARG, "--vary: more than %d values", GATHERS_MAX_PANELS);
  gathers_writer *w = calloc(1, sizeof *w);
  if (!w)
    return tz_fail(err, TZ_E_NOMEM, "gathers");
  w->rq = *rq;
  w->panels = panels;
  nmo_axis ax = stack_plan_axis(p);
  w->ns = ax.ns;
  w->interval_us = stack_plan_interval_us(p);
  char text[38 * 80], datum[160], sel[80];
  datum_text(j, datum, sizeof datum);
  if (rq->select.all)
    snprintf(sel, sizeof sel, "every trace");
  else if (rq->sort == GATHERS_SORT_OFFSET)
    snprintf(sel, sizeof sel, "%zu offset range%s, %g-%g m", rq->select.nranges,
             rq->select.nranges == 1 ? "" : "s", rq->select.ranges[0][0],
             rq->select.ranges[rq->select.nranges - 1][1]);
  else
    snprintf(sel, sizeof sel, "%zu %s numbers, %d to %d", rq->select.nvalues,
             rq->sort == GATHERS_SORT_SHOT ? "field record"
             : rq->sort == GATHERS_SORT_RECEIVER ? "receiver station" : "CMP",
             (int)rq->select.values[0], (int)rq->select.values[rq->select.nvalues - 1]);
  int len = snprintf(text, sizeof text,
                     "tzero gathers: traces after the processing chain\n"
                     "step reached: %s\n"
                     "line: %.60s\n"
                     "sort: %s gathers%s; selection: %s\n"
                     "%s\n",
                     rq->step.label, j->name && j->name[0] ? j->name : "(unnamed)",
                     gathers_sort_name(rq->sort), rq->one_per_cmp ? ", one trace per CMP" : "",
                     sel, datum);
  if (rq->step.through >= STACK_STEP_NMO && len > 0 && (size_t)len < sizeof text)
    len += snprintf(text + len, sizeof text - (size_t)len,
                    "velocity: %.60s\nNMO stretch limit %.1f %%, interpolation %s%s\n",
                    j->velocity ? j->velocity : "(none)", j->stretch_limit_pct,
                    job_interp_name(j->interpolation),
                    rq->step.through >= STACK_STEP_MUTE ? ", job mutes applied"
                                                        : ", no top mute");
  if (len > 0 && (size_t)len < sizeof text)
    len += snprintf(text + len, sizeof text - (size_t)len,
                    "CMP 21-24, trace in gather 25-28, signed offset 37-40, CMP X/Y 181-188\n"
                    "statics applied 99-104 (scalar 215-216)\n");
  if (panels && panels->n && len > 0 && (size_t)len < sizeof text) {
    len += snprintf(text + len, sizeof text - (size_t)len,
                    "test panels: panel number bytes 233-236, value 237-240 (IEEE float)\n"
                    "varied: %.66s\n", panels->key);
    for (size_t i = 0; i < panels->n && len > 0 && (size_t)len < sizeof text; i++)
      len += snprintf(text + len, sizeof text - (size_t)len, "panel %zu: %.60s\n", i + 1,
                      panels->values[i]);
  }
  segy_writer_opts o;
  memset(&o, 0, sizeof o);
  o.revision = 1;
  o.format_code = format_code == 1 ? 1 : 5;
  o.samples = (uint32_t)w->ns;
  o.interval_us = w->interval_us;
  /* trace sorting code (SEG-Y rev 1 (2002), binary header 3229-3230) */
  static const int16_t codes[] = { 5, 6, 7, 2 };
  o.sorting_code = codes[rq->sort];
  double nom = round(stack_plan_nominal_fold(p));
  o.ensemble_fold = (int16_t)(nom > 32767 ? 32767 : nom < 0 ? 0 : nom);
  o.measurement_system = 1;
  o.text = text;
  w->rec_bytes = sizeof(segy_trace_header) + 2 * w->ns * sizeof(float);
  int rc = TZ_OK;
  if (!(w->rec = malloc(w->rec_bytes)))
    rc = tz_fail(err, TZ_E_NOMEM, "gathers");
  if (!rc)
    rc = segy_writer_open(&w->out, path, &o, err);
  if (!rc && weights_path) {
    char wtext[38 * 80 + 128];
    snprintf(wtext, sizeof wtext, "live weights of the traces of %.50s\n%.3000s", path, text);
    o.text = wtext;
    o.format_code = 5;
    rc = segy_writer_open(&w->wts, weights_path, &o, err);
  }
  if (rc) {
    gathers_writer_abort(w);
    return rc;
  }
  *out = w;
  return TZ_OK;
}

int gathers_writer_add(gathers_writer *w, const stack_plan *p, const velocity_table *v,
                       size_t panel, int64_t *ntraces, tz_err *err)
{
  nmo_axis ax = stack_plan_axis(p);
  if (ax.ns != w->ns || stack_plan_interval_us(p) != w->interval_us)
    return tz_fail(err, TZ_E_ARG, "panel %zu: %zu samples of %u us, the first panel %zu of %u "
                   "us (one file holds one sample axis)", panel + 1, ax.ns,
                   (unsigned)stack_plan_interval_us(p), w->ns, (unsigned)w->interval_us);
  stack_run_opts ro;
  int rc = stack_run_opts_init(&ro, p, v, err);
  if (rc)
    return rc;
  const job_spec *j = stack_plan_job(p);
  w->statics = j->statics.present && w->rq.step.through >= STACK_STEP_STATICS;
  w->n = 0;
  if (!(w->spill = tmpfile()))
    return spill_fail(err, "create");
  stack_visit_opts vo = { .through = w->rq.step.through,
                          .conditioning_steps = w->rq.step.conditioning_steps,
                          .conditioning = ro.conditioning, .nmo = &ro.nmo, .velocity = v,
                          .mute = &ro.mute, .mutes = ro.mutes, .want = want_trace, .emit = emit_trace, .ctx = w };
  rc = stack_visit(p, &vo, err);
  if (!rc && fflush(w->spill))
    rc = spill_fail(err, "write");
  if (!rc && w->n)
    qsort(w->idx, w->n, sizeof *w->idx, cmp_gkey);
  double value = NAN;
  if (w->panels && w->panels->n && panel < w->panels->n &&
      table_parse_f64(w->panels->values[panel], &value))
    value = NAN;
  int64_t done = 0, in_gather = 0;
  double gk = NAN, last_cmp = NAN;
  const float *samples = (const float *)(w->rec + sizeof(segy_trace_header));
  for (size_t i = 0; i < w->n && !rc; i++) {
    const gkey *k = &w->idx[i];
    double cmp = w->rq.sort == GATHERS_SORT_OFFSET ? k->k2 : k->k1;
    if (k->k1 != gk) {
      gk = k->k1;
      in_gather = 0;
      last_cmp = NAN;
    }
    if (w->rq.one_per_cmp && cmp == last_cmp)
      continue;
    last_cmp = cmp;
    if (fseeko(w->spill, (off_t)k->seq * (off_t)w->rec_bytes, SEEK_SET) ||
        fread(w->rec, 1, w->rec_bytes, w->spill) != w->rec_bytes) {
      rc = spill_fail(err, "read");
      break;
    }
    segy_trace_header h;
    memcpy(&h, w->rec, sizeof h);
    h.line_seq = (int32_t)(w->written + 1);
    h.file_seq = (int32_t)(w->written + 1);
    h.cmp_trace = (int32_t)++in_gather;
    if (w->statics)
      h.time_scalar = stack_time_scalar(&h);
    gathers_panel_set(&h, w->panels && w->panels->n ? (int32_t)panel + 1 : 0,
                      w->panels && w->panels->n ? value : 0);
    if ((rc = segy_trace_write(w->out, &h, samples, err)))
      break;
    if (w->wts && (rc = segy_trace_write(w->wts, &h, samples + w->ns, err)))
      break;
    w->written++;
    done++;
  }
  fclose(w->spill);
  w->spill = NULL;
  if (!rc && ntraces)
    *ntraces = done;
  return rc;
}

int gathers_writer_finish(gathers_writer *w, tz_err *err)
{
  int rc = TZ_OK;
  if (!w->written)
    rc = tz_fail(err, TZ_E_ARG, "no trace of the line matches the selection (sort %s)",
                 gathers_sort_name(w->rq.sort));
  if (!rc) {
    rc = segy_writer_finish(w->out, err);
    w->out = NULL;
  }
  if (!rc && w->wts) {
    rc = segy_writer_finish(w->wts, err);
    w->wts = NULL;
  }
  gathers_writer_abort(w);
  return rc;
}

void gathers_writer_abort(gathers_writer *w)
{
  if (!w)
    return;
  segy_writer_abort(w->out);
  segy_writer_abort(w->wts);
  if (w->spill)
    fclose(w->spill);
  free(w->idx);
  free(w->rec);
  free(w);
}

/* ---------------------------------------------------------------- stacked panels */

int gathers_write_stack_panels(const stack_section *const *sec, const stack_plan *const *plans,
                               const gathers_panels *panels, const char *path, int format_code,
                               tz_err *err)
{
  if (!panels->n || panels->n > GATHERS_MAX_PANELS)
    return tz_fail(err, TZ_E_ARG, "--vary: 1 to %d values", GATHERS_MAX_PANELS);
  const job_spec *j = stack_plan_job(plans[0]);
  char text[38 * 80], datum[160];
  datum_text(j, datum, sizeof datum);
  int len = snprintf(text, sizeof text,
                     "tzero stacked test panels (CMP stack, NMO corrected, live-fold normalised)\n"
                     "line: %.60s\n"
                     "CMPs %d to %d in every panel\n"
                     "velocity: %.60s\n"
                     "%s\n"
                     "stacked-trace headers as tzero stack writes them (CMP 21-24, fold 33-34)\n"
                     "test panels: panel number bytes 233-236, value 237-240 (IEEE float)\n"
                     "varied: %.66s\n",
                     j->name && j->name[0] ? j->name : "(unnamed)", (int)sec[0]->first_cmp,
                     (int)(sec[0]->first_cmp + (int32_t)sec[0]->ncmps - 1),
                     j->velocity ? j->velocity : "(none)", datum, panels->key);
  for (size_t i = 0; i < panels->n && len > 0 && (size_t)len < sizeof text; i++)
    len += snprintf(text + len, sizeof text - (size_t)len, "panel %zu: %.60s\n", i + 1,
                    panels->values[i]);
  for (size_t i = 1; i < panels->n; i++)
    if (sec[i]->axis.ns != sec[0]->axis.ns || sec[i]->interval_us != sec[0]->interval_us)
      return tz_fail(err, TZ_E_ARG, "panel %zu: %zu samples of %u us, the first panel %zu of "
                     "%u us (one file holds one sample axis)", i + 1, sec[i]->axis.ns,
                     (unsigned)sec[i]->interval_us, sec[0]->axis.ns,
                     (unsigned)sec[0]->interval_us);
  segy_writer_opts o;
  memset(&o, 0, sizeof o);
  o.revision = 1;
  o.format_code = format_code == 1 ? 1 : 5;
  o.samples = (uint32_t)sec[0]->axis.ns;
  o.interval_us = sec[0]->interval_us;
  o.sorting_code = 4;                      /* horizontally stacked (SEG-Y rev 1) */
  double nom = round(stack_plan_nominal_fold(plans[0]));
  o.ensemble_fold = (int16_t)(nom > 32767 ? 32767 : nom < 0 ? 0 : nom);
  o.traces_per_ensemble = 1;
  o.measurement_system = 1;
  o.text = text;
  segy_writer *w = NULL;
  int rc = segy_writer_open(&w, path, &o, err);
  int32_t seq = 0;
  for (size_t i = 0; i < panels->n && !rc; i++) {
    double value;
    if (table_parse_f64(panels->values[i], &value))
      value = NAN;
    for (size_t c = 0; c < sec[i]->ncmps && !rc; c++) {
      segy_trace_header h;
      stack_section_header(sec[i], plans[i], c, &h);
      h.line_seq = h.file_seq = ++seq;
      gathers_panel_set(&h, (int32_t)i + 1, value);
      rc = segy_trace_write(w, &h, sec[i]->samples + c * sec[i]->axis.ns, err);
    }
  }
  if (rc) {
    segy_writer_abort(w);
    return rc;
  }
  return segy_writer_finish(w, err);
}
