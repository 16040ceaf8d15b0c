/* deliver_history.c -- the processing history: what a client's processing report
 * needs, in markdown, written by the run itself.
 *
 * Everything comes from what the run already has: the resolved job, the QC
 * report it has just built (inputs, geometry, edits, statics, velocity, mutes,
 * fold, warnings), the processing sequence of the textual header and the
 * command line. Input digests are the report's (SHA-256 per input, when the
 * report records them); files the report gives no digest for are digested here.
 *
 * Not here: the QC report (qc.c), the HTML page (page.c).
 */
#include "tzero/deliver.h"

#include <cjson/cJSON.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "deliver_int.h"
#include "tzero/digest.h"
#include "tzero/fileio.h"
#include "util/strbuf.h"

#define ITEM(o, k) cJSON_GetObjectItemCaseSensitive(o, k)
#define MAX_LIST 40          /* array entries listed one by one; more are counted */

/* A value in one line: strings as they are, numbers with %g, the rest compact JSON
 * cut at 200 characters. */
static void value(tz_buf *b, const cJSON *v)
{
  if (cJSON_IsString(v)) {
    tz_buf_put(b, "%s", v->valuestring);
  } else if (cJSON_IsNumber(v)) {
    tz_buf_put(b, "%.10g", v->valuedouble);
  } else if (cJSON_IsBool(v)) {
    tz_buf_put(b, "%s", cJSON_IsTrue(v) ? "yes" : "no");
  } else if (cJSON_IsNull(v)) {
    tz_buf_put(b, "none");
  } else if (cJSON_IsArray(v) && cJSON_GetArraySize(v) > MAX_LIST) {
    tz_buf_put(b, "%d entries", cJSON_GetArraySize(v));
  } else {
    char *t = cJSON_PrintUnformatted(v);
    if (t && strlen(t) > 200)
      tz_buf_put(b, "%.197s...", t);
    else
      tz_buf_put(b, "%s", t ? t : "?");
    free(t);
  }
}

/* Every key of an object as a bullet; nested objects as nested bullets (two levels). */
static void bullets(tz_buf *b, const cJSON *o, int level)
{
  for (const cJSON *e = o ? o->child : NULL; e; e = e->next) {
    int indent = 2 * level;
    tz_buf_put(b, "%*s- %s: ", indent, "", e->string ? e->string : "");
    if (cJSON_IsObject(e) && level < 2 && e->child) {
      tz_buf_put(b, "\n");
      bullets(b, e, level + 1);
    } else {
      value(b, e);
      tz_buf_put(b, "\n");
    }
  }
}

static void section(tz_buf *b, const char *title, const cJSON *o)
{
  tz_buf_put(b, "\n## %s\n\n", title);
  if (!o || (cJSON_IsObject(o) && !o->child))
    tz_buf_put(b, "none\n");
  else
    bullets(b, o, 0);
}

/* Every array named "warnings" anywhere in the report, with where it was found. */
static void warnings(tz_buf *b, const cJSON *o, const char *where, int *n)
{
  for (const cJSON *e = o ? o->child : NULL; e; e = e->next) {
    char here[160];
    snprintf(here, sizeof here, "%s%s%s", where, where[0] ? "." : "", e->string ? e->string : "");
    if (e->string && !strcmp(e->string, "warnings") && cJSON_IsArray(e)) {
      for (const cJSON *w = e->child; w; w = w->next) {
        tz_buf_put(b, "- %s: ", where[0] ? where : "run");
        if (cJSON_IsObject(w)) {
          char par[DELIVER_STEP_BYTES];
          deliver_json_params(w, NULL, par, sizeof par);
          tz_buf_put(b, "%s", par);
        } else {
          value(b, w);
        }
        tz_buf_put(b, "\n");
        (*n)++;
      }
    } else if (cJSON_IsObject(e) && (!e->string || strcmp(e->string, "parameters"))) {
      warnings(b, e, here, n);
    }
  }
}

/* One input's row: the digest the run recorded, else one read here for the history. */
static void digest_line(tz_buf *b, const char *what, const char *path, const char *known)
{
  char hex[DIGEST_HEX_LEN + 1] = "";
  const char *from = "the run";
  tz_err e;
  tz_err_init(&e);
  if (known && known[0])
    snprintf(hex, sizeof hex, "%s", known);
  else if (digest_file(path, hex, &e))
    snprintf(hex, sizeof hex, "(unreadable)");
  else
    from = "read for this history";
  tz_buf_put(b, "| %s | `%s` | %s | %s |\n", what, path, hex, from);
}

static void markdown_inline(tz_buf *b, const char *s)
{
  for (; *s; s++)
    tz_buf_put(b, "%s%c", *s == '`' ? "\\" : "", *s);
}

int deliver_history_write(const job_spec *j, const char *report, const deliver_steps *steps,
                          const deliver_run *run, const char *const *outputs,
                          const char *path, tz_err *err)
{
  cJSON *r = report ? cJSON_Parse(report) : NULL;
  if (report && !r)
    return tz_fail(err, TZ_E_INTERNAL, "the run's QC report does not parse");
  tz_buf b = { 0 };
  char date[11];
  deliver_date(run ? run->time_s : 0, date);
  const char *line = j->name && j->name[0] ? j->name : "(unnamed line)";
  tz_buf_put(&b, "# Processing history: %s\n\n", line);
  tz_buf_put(&b, "Written by tzero %s on %s (UTC) during the run that made the section.\n"
                 "An interpretation aid: have it reviewed by a qualified geophysicist.\n\n",
             run && run->version ? run->version : "", date);
  tz_buf_put(&b, "- line: %s\n- client: %s\n- contractor: %s\n", line,
             j->client ? j->client : "(not given)", j->contractor ? j->contractor : "(not given)");
  tz_buf_put(&b, "- coordinate reference system: %s (as given; tzero does not transform "
                 "coordinates)\n", j->crs ? j->crs : "(not given)");
  tz_buf_put(&b, "- polarity: %s\n", deliver_polarity_text(deliver_polarity_code(j)));
  if (j->statics.present)
    tz_buf_put(&b, "- time reference: flat datum %g m, replacement velocity %g m/s%s\n",
               j->statics.datum_m, j->statics.replacement_velocity_mps,
               j->statics.floating_datum_smooth_m > 0 ? " (NMO at a smoothed floating datum)"
                                                      : "");
  else
    tz_buf_put(&b, "- time reference: the recording surface (no statics)\n");

  tz_buf_put(&b, "\n## Command line\n\n```\ntzero");
  for (int i = 0; run && i < run->argc; i++)
    tz_buf_put(&b, " %s", run->argv[i]);
  tz_buf_put(&b, "\n```\n");

  tz_buf_put(&b, "\n## Outputs\n\n");
  for (size_t i = 0; outputs && outputs[i]; i++) {
    tz_buf_put(&b, "- `");
    markdown_inline(&b, outputs[i]);
    tz_buf_put(&b, "`\n");
  }
  tz_buf_put(&b, "- `");
  markdown_inline(&b, path);
  tz_buf_put(&b, "` (this history)\n");

  tz_buf_put(&b, "\n## Inputs\n\n| input | file | SHA-256 | digested by |\n|---|---|---|---|\n");
  if (j->path && j->path[0])
    digest_line(&b, "job", j->path, NULL);
  const cJSON *vel = r ? ITEM(r, "velocity") : NULL;
  if (j->velocity) {
    const cJSON *h = vel ? ITEM(vel, "sha256") : NULL;
    digest_line(&b, "velocity table", j->velocity, cJSON_IsString(h) ? h->valuestring : NULL);
  }
  if (j->geometry_file)
    digest_line(&b, "geometry", j->geometry_file, NULL);
  if (j->header_map)
    digest_line(&b, "header map", j->header_map, NULL);
  for (size_t i = 0; i < j->statics.ntables; i++)
    digest_line(&b, "statics table", j->statics.tables[i], NULL);
  const cJSON *in = r ? ITEM(r, "inputs") : NULL;
  size_t nin = 0;
  for (const cJSON *e = in ? in->child : NULL; e; e = e->next, nin++) {
    const cJSON *p = ITEM(e, "path"), *h = ITEM(e, "sha256");
    if (cJSON_IsString(p))
      digest_line(&b, cJSON_IsTrue(ITEM(e, "bad")) ? "shot (skipped: bad)" : "shot",
                  p->valuestring, cJSON_IsString(h) ? h->valuestring : NULL);
  }
  tz_buf_put(&b, "\n%zu shot files.\n", nin);

  section(&b, "Geometry", r ? ITEM(r, "geometry") : NULL);
  section(&b, "Edits", r ? ITEM(r, "edits") : NULL);
  section(&b, "Statics", r ? ITEM(r, "statics") : NULL);

  tz_buf_put(&b, "\n## Processing sequence\n\n");
  for (size_t i = 0; steps && i < steps->n; i++)
    tz_buf_put(&b, "%zu. %s\n", i + 1, steps->step[i]);
  if (steps && steps->dropped)
    tz_buf_put(&b, "\n(%zu more steps were not recorded)\n", steps->dropped);

  tz_buf_put(&b, "\n## Parameters of every step\n\nThe resolved job, every default filled "
                 "(the QC report's `parameters`):\n");
  const cJSON *par = r ? ITEM(r, "parameters") : NULL;
  for (const cJSON *e = par ? par->child : NULL; e; e = e->next) {
    if (!e->string || !strcmp(e->string, "shots"))
      continue;
    char *t = cJSON_Print(e);
    tz_buf_put(&b, "\n### %s\n\n```json\n%s\n```\n", e->string, t ? t : "?");
    free(t);
  }

  section(&b, "Velocity controls", vel);
  section(&b, "Mutes", r ? ITEM(r, "mute") : NULL);
  tz_buf_put(&b, "\n## QC figures\n\n");
  static const char *const qc[] = { "traces", "fold", "section", "migration", NULL };
  for (size_t i = 0; qc[i]; i++) {
    const cJSON *o = r ? ITEM(r, qc[i]) : NULL;
    if (!o)
      continue;
    tz_buf_put(&b, "- %s:\n", qc[i]);
    bullets(&b, o, 1);
  }
  tz_buf_put(&b, "\n## Warnings\n\n");
  int nw = 0;
  warnings(&b, r, "", &nw);
  const cJSON *bad = r ? ITEM(r, "bad_files") : NULL;
  for (const cJSON *e = bad ? bad->child : NULL; e; e = e->next, nw++) {
    const cJSON *p = ITEM(e, "path"), *m = ITEM(e, "error");
    tz_buf_put(&b, "- skipped input %s: %s\n", cJSON_IsString(p) ? p->valuestring : "?",
               cJSON_IsString(m) ? m->valuestring : "");
  }
  if (!nw)
    tz_buf_put(&b, "none\n");
  cJSON_Delete(r);

  char *text = NULL;
  int rc = tz_buf_finish(&b, &text, "history", err);
  if (rc)
    return rc;
  fileio_out *out = NULL;
  if (!(rc = fileio_create(&out, path, err))) {
    if (fputs(text, fileio_stream(out)) == EOF) {
      rc = fileio_fail(out, -1, err);
      fileio_abort(out);
    } else {
      rc = fileio_commit(out, err);
    }
  }
  free(text);
  return rc;
}
