/* flow_poststack.c -- the job's post-stack conditioning ("poststack",
 * docs/poststack.md) in the flow: checked against the section's axis before the
 * data pass, applied to the stacked section before it is written (and so before it
 * is migrated), and, for steps with "after_migration", to the migrated section
 * (flow_migrate.c). The steps themselves are in src/signal/poststack.c.
 */
#include "tzero/flow.h"

#include <ctype.h>
#include <stdlib.h>
#include <string.h>

#include "tzero/deliver.h"
#include "tzero/poststack.h"
#include "tzero/segy.h"

int flow_poststack_check(const job_spec *job, const stack_plan *plan, tz_err *err)
{
  if (!job->poststack.n)
    return TZ_OK;
  nmo_axis ax = stack_plan_axis(plan);
  size_t ntr = stack_plan_ncmps(plan);
  for (int stage = POSTSTACK_STAGE_BEFORE; stage <= POSTSTACK_STAGE_AFTER; stage++) {
    if (!poststack_chain_count(&job->poststack, stage))
      continue;
    poststack_plan *p = NULL;
    int rc = poststack_plan_new(&p, &job->poststack, stage, ax.t_first_s, ax.dt_s, ax.ns, ntr,
                                err);
    poststack_plan_free(p);
    if (rc)
      return rc;
  }
  return TZ_OK;
}

int flow_poststack_apply(const job_spec *job, int stage, double t_first_s, double dt_s,
                         size_t ns, size_t ntr, float *samples, const unsigned char *live,
                         tz_err *err)
{
  if (!poststack_chain_count(&job->poststack, stage))
    return TZ_OK;
  poststack_plan *p = NULL;
  int rc = poststack_plan_new(&p, &job->poststack, stage, t_first_s, dt_s, ns, ntr, err);
  if (!rc)
    rc = poststack_apply(p, samples, live, err);
  poststack_plan_free(p);
  return rc;
}

int flow_poststack_stack(const job_spec *job, stack_section *sec, tz_err *err)
{
  if (!poststack_chain_count(&job->poststack, POSTSTACK_STAGE_BEFORE))
    return TZ_OK;
  unsigned char *live = malloc(sec->ncmps ? sec->ncmps : 1);
  if (!live)
    return tz_fail(err, TZ_E_NOMEM, "post-stack conditioning of %zu CMPs", sec->ncmps);
  for (size_t i = 0; i < sec->ncmps; i++)
    live[i] = sec->cmps[i].fold > 0;
  int rc = flow_poststack_apply(job, POSTSTACK_STAGE_BEFORE, sec->axis.t_first_s, sec->axis.dt_s,
                                sec->axis.ns, sec->ncmps, sec->samples, live, err);
  free(live);
  return rc;
}

/* The processing-sequence entries of one step: "post-stack " and its text; a
 * band-pass of more than two windows takes one entry per two windows, so each fits
 * a textual header card. Returns the count; entries go to out[k]. */
#define STEP_ENTRIES (POSTSTACK_MAX_WINDOWS / 2)
static size_t step_entries(const poststack_step *s, char out[][DELIVER_STEP_BYTES])
{
  if (s->kind != POSTSTACK_BANDPASS || s->nwindows <= 2) {
    char t[DELIVER_STEP_BYTES];
    poststack_step_text(s, t, sizeof t);
    snprintf(out[0], DELIVER_STEP_BYTES, "post-stack %.200s", t);
    return 1;
  }
  size_t n = 0;
  for (size_t i = 0; i < s->nwindows && n < STEP_ENTRIES; i += 2, n++) {
    int at = snprintf(out[n], DELIVER_STEP_BYTES, "post-stack bandpass%s",
                      i ? ", continued:" : "");
    for (size_t k = i; k < i + 2 && k < s->nwindows && at > 0 && at < DELIVER_STEP_BYTES; k++) {
      const poststack_window *w = &s->window[k];
      at += snprintf(out[n] + at, DELIVER_STEP_BYTES - (size_t)at, "%s %g-%g ms %g/%g/%g/%g Hz",
                     k > i ? "," : "", w->from_s * 1e3, w->to_s * 1e3, w->corners_hz[0],
                     w->corners_hz[1], w->corners_hz[2], w->corners_hz[3]);
    }
  }
  return n;
}

void flow_poststack_steps(const job_spec *job, int stage, deliver_steps *steps)
{
  char e[STEP_ENTRIES][DELIVER_STEP_BYTES];
  for (size_t i = 0; i < job->poststack.n; i++) {
    const poststack_step *s = &job->poststack.step[i];
    if (stage != POSTSTACK_STAGE_ALL && (stage == POSTSTACK_STAGE_AFTER) != !!s->after_migration)
      continue;
    size_t n = step_entries(s, e);
    for (size_t k = 0; k < n; k++)
      deliver_steps_add(steps, "%s", e[k]);
  }
}

/* ---- any section: tzero condition ---- */

/* The input's textual header as card lines (the "C nn" prefixes, blanks at the
 * ends, the revision and end cards and empty trailing cards dropped; cut so that
 * the steps fit in the 38 free cards), then a line naming the steps file and one
 * line per step. */
static void condition_text(const char *in, const poststack_chain *c, const char *steps_path,
                           char *out, size_t cap)
{
  char lines[40][81];
  size_t n = 0, len = strlen(in);
  for (size_t k = 0; k < 40 && k * 80 < len; k++) {
    char card[81];
    size_t m = len - k * 80 < 80 ? len - k * 80 : 80;
    memcpy(card, in + k * 80, m);
    card[m] = '\0';
    const char *p = card;
    if (p[0] == 'C' && m >= 4 && (p[1] == ' ' || isdigit((unsigned char)p[1])) &&
        isdigit((unsigned char)p[2]))
      p += 3 + (p[3] == ' ');
    while (*p == ' ')
      p++;
    size_t e = strlen(p);
    while (e && (p[e - 1] == ' ' || (unsigned char)p[e - 1] < 32))
      e--;
    snprintf(lines[n], sizeof lines[n], "%.*s", (int)e, p);
    if (!strncmp(lines[n], "SEG Y REV", 9) || !strncmp(lines[n], "SEG-Y_REV", 9) ||
        !strncmp(lines[n], "END TEXTUAL HEADER", 18) || !strncmp(lines[n], "END EBCDIC", 10))
      lines[n][0] = '\0';
    n++;
  }
  while (n && !lines[n - 1][0])
    n--;
  size_t steps = c->n, keep = 38 > steps + 1 ? 38 - steps - 1 : 0;
  if (n > keep)
    n = keep;
  size_t at = 0;
  out[0] = '\0';
  for (size_t i = 0; i < n && at + 1 < cap; i++)
    at += (size_t)snprintf(out + at, cap - at, "%.76s\n", lines[i]);
  if (at + 1 < cap)
    at += (size_t)snprintf(out + at, cap - at, "post-stack conditioning (tzero condition): %.30s\n",
                           steps_path);
  if (at + 1 < cap)
    poststack_describe(c, POSTSTACK_STAGE_ALL, out + at, cap - at);
}

/* A tzero section's textual header (deliver.h) carried on: its processing sequence
 * gets one card per step. 0 (out untouched) for another program's header. */
static int continue_text(const char *in, const poststack_chain *c, const deliver_run *run,
                         char *out, size_t cap)
{
  char cards[SEGY_TEXT_BYTES + 1];
  char entry[STEP_ENTRIES][DELIVER_STEP_BYTES];
  if (!c->n)
    return 0;
  snprintf(cards, sizeof cards, "%s", in);
  for (size_t i = 0; i < c->n; i++) {
    size_t ne = step_entries(&c->step[i], entry);
    for (size_t k = 0; k < ne; k++) {
      if (!deliver_section_text_continue(cards, "conditioned section", entry[k], run, out, cap))
        return 0;
      /* back to 40 cards of 80 characters for the next entry */
      memset(cards, ' ', SEGY_TEXT_BYTES);
      cards[SEGY_TEXT_BYTES] = '\0';
      const char *p = out;
      for (int card = 0; card < 38 && *p; card++) {
        const char *nl = strchr(p, '\n');
        size_t n = nl ? (size_t)(nl - p) : strlen(p);
        char head[16];
        snprintf(head, sizeof head, "C%2d ", card + 1);
        memcpy(cards + card * 80, head, 4);
        memcpy(cards + card * 80 + 4, p, n > 76 ? 76 : n);
        p = nl ? nl + 1 : p + n;
      }
    }
  }
  return 1;
}

int flow_condition_section(const char *in_path, const poststack_chain *c,
                           const char *steps_path, const char *out_path,
                           const deliver_run *run, flow_condition_info *info, tz_err *err)
{
  memset(info, 0, sizeof *info);
  segy_file *f = NULL;
  segy_trace_header *h = NULL;
  float *x = NULL;
  unsigned char *live = NULL;
  poststack_plan *p = NULL;
  segy_writer *w = NULL;
  int rc = segy_open(&f, in_path, NULL, err);
  if (rc)
    return rc;
  const segy_info *si = segy_get_info(f);
  int64_t n = segy_trace_count(f);
  size_t ns = si->samples;
  if (n < 1 || (uint64_t)n > FLOW_CONDITION_MAX_TRACES || !ns || !si->interval_us) {
    rc = tz_fail(err, TZ_E_FORMAT, "%lld traces of %zu samples at %u us: a section to "
                 "condition has 1 to %d traces and a sample count and interval", (long long)n,
                 ns, (unsigned)si->interval_us, FLOW_CONDITION_MAX_TRACES);
    goto out;
  }
  if ((uint64_t)n * ns > FLOW_CONDITION_MAX_SAMPLES) {
    rc = tz_fail(err, TZ_E_FORMAT, "%lld traces x %zu samples: more than %llu samples in one "
                 "section", (long long)n, ns, (unsigned long long)FLOW_CONDITION_MAX_SAMPLES);
    goto out;
  }
  size_t ntr = (size_t)n;
  h = malloc(ntr * sizeof *h);
  x = malloc(ntr * ns * sizeof *x);
  live = malloc(ntr);
  char *text = malloc(DELIVER_TEXT_BYTES);
  if (!h || !x || !live || !text) {
    free(text);
    rc = tz_fail(err, TZ_E_NOMEM, "section of %zu x %zu samples", ntr, ns);
    goto out;
  }
  double t0 = 0;
  for (size_t i = 0; i < ntr && !rc; i++) {
    if ((rc = segy_trace_read(f, (int64_t)i, &h[i], x + i * ns, ns, err)))
      break;
    if (h[i].samples != ns || h[i].interval_us != si->interval_us)
      rc = tz_fail_at(err, TZ_E_FORMAT, (int64_t)i, 114, "%u samples of %u us where the file "
                      "has %zu of %u us: a section's traces share one time axis",
                      (unsigned)h[i].samples, (unsigned)h[i].interval_us, ns,
                      (unsigned)si->interval_us);
    else if (i == 0)
      t0 = h[i].delay_ms * 1e-3;
    else if (h[i].delay_ms * 1e-3 != t0)
      rc = tz_fail_at(err, TZ_E_FORMAT, (int64_t)i, 108, "delay %d ms where the first trace has "
                      "%g ms: a section's traces share one time axis", (int)h[i].delay_ms,
                      t0 * 1e3);
    live[i] = h[i].kind != SEGY_KIND_DEAD && h[i].kind != SEGY_KIND_DUMMY;
    info->dead += !live[i];
  }
  info->bad_samples = segy_bad_samples(f);
  segy_writer_opts o;
  memset(&o, 0, sizeof o);
  o.revision = 1;
  o.format_code = si->format_code == 1 ? 1 : 5;
  o.samples = (uint32_t)ns;
  o.interval_us = si->interval_us;
  o.sorting_code = si->sorting_code;
  o.ensemble_fold = si->ensemble_fold;
  o.traces_per_ensemble = si->traces_per_ensemble;
  o.measurement_system = si->measurement_system == 2 ? 2 : 1;
  o.line_no = si->line_no;
  if (!rc && !continue_text(si->text, c, run, text, DELIVER_TEXT_BYTES))
    condition_text(si->text, c, steps_path, text, DELIVER_TEXT_BYTES);
  segy_close(f);
  f = NULL;
  if (rc) {
    free(text);
    tz_err_path(err, in_path);
    goto out;
  }
  info->traces = ntr;
  info->samples = ns;
  info->interval_us = o.interval_us;   /* si went with the file */
  info->steps = c->n;
  double dt = o.interval_us * 1e-6;
  rc = poststack_plan_new(&p, c, POSTSTACK_STAGE_ALL, t0, dt, ns, ntr, err);
  if (rc == TZ_E_JOB) {   /* a step the section cannot take: the steps file's fault */
    err->status = rc = TZ_E_FORMAT;
    tz_err_path(err, steps_path);
  }
  if (!rc && (rc = poststack_apply(p, x, live, err)))
    tz_err_path(err, in_path);
  o.text = text;
  if (!rc)
    rc = segy_writer_open(&w, out_path, &o, err);
  for (size_t i = 0; i < ntr && !rc; i++)
    rc = segy_trace_write(w, &h[i], x + i * ns, err);   /* every header as read */
  free(text);
  if (!rc) {
    rc = segy_writer_finish(w, err);
    w = NULL;
  }
out:
  segy_writer_abort(w);
  segy_close(f);
  poststack_plan_free(p);
  free(live);
  free(x);
  free(h);
  return rc;
}
