/* deliver_text.c -- the processing sequence and the textual header of a section.
 *
 * A step is one line of plain text naming what was done with its main
 * parameters. deliver_steps_job() reads them from the resolved job (the JSON of
 * job_to_json, so every conditioning step is described with every parameter it
 * has, whatever steps are added later); later stages append their own. The
 * textual header follows SEG-Y rev 1 (2002) section 3: 40 cards of 80
 * characters, card 39 "C39 SEG Y REV1" and card 40 "C40 END TEXTUAL HEADER"
 * (added by segy_writer); this file fills cards 1-38.
 *
 * Not here: writing the file (segy_writer.c), the history (deliver_history.c).
 */
#include "tzero/deliver.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "deliver_int.h"

void deliver_steps_init(deliver_steps *s)
{
  s->n = 0;
  s->dropped = 0;
}

void deliver_steps_add(deliver_steps *s, const char *fmt, ...)
{
  if (s->n >= DELIVER_MAX_STEPS) {
    s->dropped++;
    return;
  }
  char *d = s->step[s->n++];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(d, DELIVER_STEP_BYTES, fmt, ap);
  va_end(ap);
  for (char *c = d; *c; c++)
    if (*c == '\n' || *c == '\r' || *c == '\t')
      *c = ' ';
}

void deliver_date(int64_t time_s, char out[11])
{
  time_t t = (time_t)time_s;
  struct tm tm;
  if (!gmtime_r(&t, &tm) || !strftime(out, 11, "%Y-%m-%d", &tm))
    snprintf(out, 11, "unknown");
}

int16_t deliver_polarity_code(const job_spec *j)
{
  return (int16_t)(j->polarity == 1 || j->polarity == 2 ? j->polarity : 0);
}

const char *deliver_polarity_text(int code)
{
  switch (code) {
  case 1: return "pressure increase or upward motion is negative (SEG-Y code 1)";
  case 2: return "pressure increase or upward motion is positive (SEG-Y code 2)";
  default: return "not stated (SEG-Y code 0)";
  }
}

/* "key value, key value" of a JSON object, the `skip` key left out. Arrays are
 * written compactly ([8,12,60,80]). */
void deliver_json_params(const cJSON *o, const char *skip, char *out, size_t cap)
{
  size_t n = 0;
  out[0] = '\0';
  for (const cJSON *e = o ? o->child : NULL; e && n + 1 < cap; e = e->next) {
    if (skip && e->string && !strcmp(e->string, skip))
      continue;
    char val[160];
    if (cJSON_IsString(e)) {
      snprintf(val, sizeof val, "%s", e->valuestring);
    } else if (cJSON_IsNumber(e)) {
      snprintf(val, sizeof val, "%g", e->valuedouble);
    } else {
      char *t = cJSON_PrintUnformatted(e);
      snprintf(val, sizeof val, "%s", t ? t : "?");
      free(t);
    }
    n += (size_t)snprintf(out + n, cap - n, "%s%s %s", n ? ", " : "", e->string ? e->string : "",
                          val);
  }
  if (n >= cap && cap > 4)
    memcpy(out + cap - 4, "...", 4);
}

static const char *base(const char *path)
{
  if (!path)
    return "(none)";
  const char *s = strrchr(path, '/');
  return s ? s + 1 : path;
}

int deliver_steps_job(deliver_steps *s, const job_spec *j, tz_err *err)
{
  char *text = NULL;
  int rc = job_to_json(j, &text, err);
  if (rc)
    return rc;
  cJSON *root = cJSON_Parse(text);
  free(text);
  if (!root)
    return tz_fail(err, TZ_E_NOMEM, "resolved job");
  deliver_steps_add(s, "input: %zu shot file%s (SEG-Y)%s", j->nshots, j->nshots == 1 ? "" : "s",
                    j->interval_us ? ", sample interval set by the job" : "");
  static const char *const geo[] = { "trace headers", "layout", "geometry table" };
  int g = j->geometry >= 0 && j->geometry <= 2 ? j->geometry : 0;
  char bins[160] = "";
  size_t m = 0;
  if (j->bins.has_size)
    m += (size_t)snprintf(bins + m, sizeof bins - m, ", bin %g m", j->bins.size_m);
  else
    m += (size_t)snprintf(bins + m, sizeof bins - m, ", bin half the receiver interval");
  if (j->bins.has_azimuth)
    m += (size_t)snprintf(bins + m, sizeof bins - m, ", azimuth %g deg", j->bins.azimuth_deg);
  else
    m += (size_t)snprintf(bins + m, sizeof bins - m, ", line fitted through the midpoints");
  if (j->bins.max_distance_m > 0)
    snprintf(bins + m, sizeof bins - m, ", off-line limit %g m", j->bins.max_distance_m);
  deliver_steps_add(s, "geometry: %s%s%s%s", geo[g], j->geometry_file ? " " : "",
                    j->geometry_file ? base(j->geometry_file) : "", bins);
  if (edits_spec_active(&j->edits)) {
    char a[120] = "", r[64] = "";
    if (j->edits.rms_ratio_max > 0)
      snprintf(r, sizeof r, "%s RMS over %g x the record median", j->edits.auto_dead ? "," : "",
               j->edits.rms_ratio_max);
    if (j->edits.auto_dead || j->edits.rms_ratio_max > 0)
      snprintf(a, sizeof a, ", automatic:%s%s", j->edits.auto_dead ? " dead traces" : "", r);
    deliver_steps_add(s, "edits: %zu kill and %zu reverse selections%s", j->edits.nkill,
                      j->edits.nreverse, a);
  }
  if (j->statics.present) {
    char tables[40] = "";
    if (j->statics.ntables)
      snprintf(tables, sizeof tables, "%zu table%s, ", j->statics.ntables,
               j->statics.ntables == 1 ? "" : "s");
    deliver_steps_add(s, "statics: %s%s%sdatum %g m, %g m/s%s",
                      j->statics.elevation ? "elevation, " : "",
                      j->statics.uphole ? "uphole, " : "", tables, j->statics.datum_m,
                      j->statics.replacement_velocity_mps,
                      j->statics.floating_datum_smooth_m > 0 ? ", floating datum for NMO" : "");
  }
  const cJSON *cond = cJSON_GetObjectItemCaseSensitive(root, "conditioning");
  for (const cJSON *c = cond ? cond->child : NULL; c; c = c->next) {
    const cJSON *st = cJSON_GetObjectItemCaseSensitive(c, "step");
    char par[DELIVER_STEP_BYTES];
    deliver_json_params(c, "step", par, sizeof par);
    deliver_steps_add(s, "%s: %s", cJSON_IsString(st) ? st->valuestring : "step", par);
  }
  deliver_steps_add(s, "NMO: %s, stretch limit %g %%, %s%s", base(j->velocity),
                    j->stretch_limit_pct, job_interp_name(j->interpolation),
                    j->fourth_order ? ", eta if given" : "");
  if (j->nmute)
    deliver_steps_add(s, "top mute: %zu points, %g to %g m, taper %g ms", j->nmute,
                      j->mute_top[0].offset_m, j->mute_top[j->nmute - 1].offset_m,
                      j->mute_taper_ms);
  char off[96] = "";
  if (j->offset_min_m > 0 || isfinite(j->offset_max_m))
    snprintf(off, sizeof off, ", offsets %g to %g m", j->offset_min_m,
             isfinite(j->offset_max_m) ? j->offset_max_m : INFINITY);
  deliver_steps_add(s, "stack: CMP stack, live-fold normalised%s", off);
  cJSON_Delete(root);
  return TZ_OK;
}

void deliver_migration_step(char *out, size_t cap, int kirchhoff, const char *velocity,
                            double velocity_pct, double aperture_m, double max_dip_deg,
                            double max_hz)
{
  char more[120] = "";
  if (kirchhoff)
    snprintf(more, sizeof more, ", aperture %s%.0f m, max dip %g deg",
             aperture_m > 0 ? "" : "whole line ", aperture_m > 0 ? aperture_m : 0.0,
             max_dip_deg);
  char hz[40] = "";
  if (max_hz > 0)
    snprintf(hz, sizeof hz, ", up to %g Hz", max_hz);
  snprintf(out, cap, "time migration: %s, velocity %s at %g %%%s%s",
           kirchhoff ? "Kirchhoff" : "phase shift", base(velocity), velocity_pct, more, hz);
}

void deliver_steps_migration(deliver_steps *s, const job_spec *j)
{
  if (!j->migration.given)
    return;
  char step[DELIVER_STEP_BYTES];
  deliver_migration_step(step, sizeof step, j->migration.method != 0,
                         j->migration.velocity ? j->migration.velocity : j->velocity,
                         j->migration.velocity_pct, j->migration.aperture_m,
                         j->migration.max_dip_deg, j->migration.max_hz);
  deliver_steps_add(s, "%s", step);
}

/* Appends one card (cut to 76 characters) to the text. */
static void card(char *out, size_t cap, size_t *n, int *cards, const char *fmt, ...)
    __attribute__((format(printf, 5, 6)));
static void card(char *out, size_t cap, size_t *n, int *cards, const char *fmt, ...)
{
  if (*cards >= 38 || *n + 1 >= cap)
    return;
  char line[DELIVER_STEP_BYTES + 80];
  va_list ap;
  va_start(ap, fmt);
  vsnprintf(line, sizeof line, fmt, ap);
  va_end(ap);
  line[76] = '\0';
  int w = snprintf(out + *n, cap - *n, "%s%s", *cards ? "\n" : "", line);
  if (w > 0)
    *n += (size_t)w < cap - *n ? (size_t)w : cap - *n - 1;
  (*cards)++;
}

void deliver_section_text(const job_spec *j, const stack_plan *p, int32_t first_cmp,
                          int32_t last_cmp, const char *product, const deliver_steps *steps,
                          const deliver_run *run, char *out, size_t cap)
{
  size_t n = 0;
  int cards = 0;
  char date[11];
  deliver_date(run ? run->time_s : 0, date);
  out[0] = '\0';
  card(out, cap, &n, &cards, "tzero %s %s, written %s (UTC)", run && run->version ?
       run->version : "", product, date);
  card(out, cap, &n, &cards, "line: %s", j->name && j->name[0] ? j->name : "(unnamed)");
  card(out, cap, &n, &cards, "client: %s", j->client ? j->client : "(not given)");
  card(out, cap, &n, &cards, "contractor: %s", j->contractor ? j->contractor : "(not given)");
  card(out, cap, &n, &cards, "CRS: %s (as given; tzero does not transform)",
       j->crs ? j->crs : "(not given)");
  if (p) {
    stack_line_info li = stack_plan_line(p);
    card(out, cap, &n, &cards, "CMPs %d to %d, bin %.3f m, origin %.2f %.2f, azimuth %.3f deg",
         (int)first_cmp, (int)last_cmp, li.size_m, li.origin_x_m, li.origin_y_m, li.azimuth_deg);
  }
  if (j->statics.present) {
    card(out, cap, &n, &cards, "datum elevation %g m, replacement velocity %g m/s",
         j->statics.datum_m, j->statics.replacement_velocity_mps);
    card(out, cap, &n, &cards, "times at the flat datum%s",
         j->statics.floating_datum_smooth_m > 0 ? "; NMO at a smoothed floating datum" : "");
  } else {
    card(out, cap, &n, &cards, "datum: none (no statics), replacement velocity: none");
    card(out, cap, &n, &cards, "times at the recording surface");
  }
  card(out, cap, &n, &cards, "polarity: %s", deliver_polarity_text(deliver_polarity_code(j)));
  card(out, cap, &n, &cards, "metres; CMP X/Y 181-188, scalar 71-72; shot point 197-202");
  card(out, cap, &n, &cards, "elevations 41-48 surface, 53-60 datum, scalar 69-70; fold 33-34");
  card(out, cap, &n, &cards, "processing sequence:");
  size_t ns = steps ? steps->n : 0, room = (size_t)(38 - cards);
  size_t shown = ns + (steps ? steps->dropped : 0) <= room ? ns : room - 1;
  for (size_t i = 0; i < shown; i++)
    card(out, cap, &n, &cards, "%2zu %s", i + 1, steps->step[i]);
  if (shown < ns + (steps ? steps->dropped : 0))
    card(out, cap, &n, &cards, "%2zu ... and %zu more steps (see the processing history)",
         shown + 1, ns + steps->dropped - shown);
}

int deliver_section_text_continue(const char *in_text, const char *product, const char *step,
                                  const deliver_run *run, char *out, size_t cap)
{
  /* the input's cards 1-38, columns 5-80, trailing blanks removed */
  char cards[38][DELIVER_STEP_BYTES];
  size_t len = in_text ? strlen(in_text) : 0;
  int seq = -1, last = -1, nsteps = 0;
  for (int c = 0; c < 38; c++) {
    size_t at = (size_t)c * 80 + 4, n = 0;
    while (n < 76 && at + n < len && in_text[at + n])
      n++;
    memcpy(cards[c], at < len ? in_text + at : "", at < len ? n : 0);
    cards[c][at < len ? n : 0] = '\0';
    for (size_t k = strlen(cards[c]); k > 0 && cards[c][k - 1] == ' '; k--)
      cards[c][k - 1] = '\0';
    int num;
    if (!strcmp(cards[c], "processing sequence:"))
      seq = c;
    else if (seq >= 0 && last == c - 1 && sscanf(cards[c], "%d", &num) == 1 && num == nsteps + 1) {
      last = c;
      nsteps = num;
    }
    if (seq == c)
      last = c;
  }
  if (seq < 0 || strncmp(cards[0], "tzero ", 6))
    return 0;
  char date[11];
  deliver_date(run ? run->time_s : 0, date);
  snprintf(cards[0], sizeof cards[0], "tzero %s %s, written %s (UTC)",
           run && run->version ? run->version : "", product, date);
  if (last < 37)
    snprintf(cards[last + 1], sizeof cards[0], "%2d %s", nsteps + 1, step);
  else
    snprintf(cards[37], sizeof cards[0], "%2d ... and more steps, the last: %s", nsteps, step);
  size_t n = 0;
  int used = last < 37 ? last + 2 : 38;
  out[0] = '\0';
  for (int c = 0; c < used && n + 1 < cap; c++) {
    cards[c][76] = '\0';
    int w = snprintf(out + n, cap - n, "%s%s", c ? "\n" : "", cards[c]);
    if (w > 0)
      n += (size_t)w < cap - n ? (size_t)w : cap - n - 1;
  }
  return 1;
}
