/* jobopts.c -- job overrides from the command line and the progress line. */
#include "jobopts.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "cli.h"
#include "tzero/deliver.h"

int cli_job_option(const char *cmd, int c, const char *arg, job_overrides *ov)
{
  long long n;
  switch (c) {
  case JOBOPT_VELOCITY:
    ov->velocity = arg;
    return 1;
  case JOBOPT_STRETCH:
    return cli_parse_f64(cmd, "--stretch-limit", arg, &ov->stretch_limit_pct) ? -1 : 1;
  case JOBOPT_INTERP:
    if (!strcmp(arg, "linear"))
      ov->interpolation = JOB_INTERP_LINEAR;
    else if (!strcmp(arg, "sinc8"))
      ov->interpolation = JOB_INTERP_SINC8;
    else {
      cli_usage_error(cmd, "--interpolation: expected linear or sinc8, got '%s'", arg);
      return -1;
    }
    return 1;
  case JOBOPT_THREADS:
    if (cli_parse_i64(cmd, "--threads", arg, &n))
      return -1;
    if (n < 0 || n > JOB_MAX_THREADS) {
      cli_usage_error(cmd, "--threads: expected 0 to %d, got %lld", JOB_MAX_THREADS, n);
      return -1;
    }
    ov->threads = (int)n;
    return 1;
  case JOBOPT_SKIP_BAD:
    ov->skip_bad_files = 1;
    return 1;
  case JOBOPT_EDITS:
    ov->edits = arg;
    return 1;
  default:
    return 0;
  }
}

void cli_run_init(deliver_run *r, int argc, char **argv)
{
  r->version = TZERO_VERSION;
  r->time_s = (int64_t)time(NULL);
  const char *e = getenv("SOURCE_DATE_EPOCH");
  long long v;
  char *end;
  if (e && *e && (v = strtoll(e, &end, 10), !*end) && v >= 0)
    r->time_s = v;
  r->argc = argc;
  r->argv = argv;
}

int cli_vary_parse(const char *cmd, const char *arg, cli_vary *v)
{
  memset(v, 0, sizeof *v);
  if (strlen(arg) >= sizeof v->buf)
    return cli_usage_error(cmd, "--vary: longer than %zu characters", sizeof v->buf - 1);
  snprintf(v->buf, sizeof v->buf, "%s", arg);
  char *eq = strchr(v->buf, '=');
  if (!eq || eq == v->buf || !eq[1])
    return cli_usage_error(cmd, "--vary: expected KEY=V1,V2,... (a JSON path of the job, "
                           "e.g. moveout.stretch_limit_pct=30,50,70), got '%s'", arg);
  *eq = '\0';
  v->key = v->buf;
  for (char *s = eq + 1; s;) {
    char *comma = strchr(s, ',');
    if (comma)
      *comma = '\0';
    if (!*s)
      return cli_usage_error(cmd, "--vary: an empty value in '%s'", arg);
    if (v->n == CLI_VARY_MAX)
      return cli_usage_error(cmd, "--vary: more than %d values", CLI_VARY_MAX);
    v->values[v->n++] = s;
    s = comma ? comma + 1 : NULL;
  }
  return 0;
}

int cli_vary_check(const char *cmd, const cli_vary *v, const job_overrides *ov)
{
  /* keys an option of the command line sets after the job is read: varying
   * them would give the same panel every time */
  static const struct { const char *key, *opt; } pairs[] = {
    { "velocity", "--velocity" }, { "moveout.stretch_limit_pct", "--stretch-limit" },
    { "moveout.interpolation", "--interpolation" }, { "edits", "--edits" },
    { "selection.cmp_first", "--cmp-range" }, { "selection.cmp_last", "--cmp-range" },
  };
  if (!v->n)
    return 0;
  const char *k = strncmp(v->key, "$.", 2) ? v->key : v->key + 2;
  int given[] = { ov->velocity != NULL, ov->stretch_limit_pct == ov->stretch_limit_pct,
                  ov->interpolation >= 0, ov->edits != NULL, ov->has_cmp_range,
                  ov->has_cmp_range };
  for (size_t i = 0; i < sizeof pairs / sizeof pairs[0]; i++) {
    size_t n = strlen(pairs[i].key);
    if (given[i] && !strncmp(k, pairs[i].key, n) && (!k[n] || k[n] == '.' || k[n] == '['))
      return cli_usage_error(cmd, "--vary %s: %s sets that key for every panel; leave one out",
                             v->key, pairs[i].opt);
  }
  return 0;
}

double cli_now_s(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + ts.tv_nsec * 1e-9;
}

void cli_progress_init(cli_progress *p, const char *what, int quiet)
{
  p->on = !quiet && isatty(2);
  p->what = what;
  p->start = cli_now_s();
  p->last = 0;
}

void cli_progress_show(void *ctx, int64_t done, int64_t total)
{
  cli_progress *p = ctx;
  if (!p->on)
    return;
  double t = cli_now_s();
  if (t - p->last < 0.2 && (total < 0 || done < total))
    return;
  p->last = t;
  double el = t - p->start, rate = el > 0 ? (double)done / el : 0;
  if (total > 0 && rate > 0)
    fprintf(stderr, "\r%s: %lld/%lld traces, %.0f traces/s, %.0f s left   ", p->what,
            (long long)done, (long long)total, rate, (double)(total - done) / rate);
  else
    fprintf(stderr, "\r%s: %lld traces, %.0f traces/s   ", p->what, (long long)done, rate);
  fflush(stderr);
}

void cli_progress_end(cli_progress *p)
{
  if (p->on && p->last > 0)
    fprintf(stderr, "\r\033[K");
  p->last = 0;
}
