/* stack.c -- `tzero stack --job FILE`: the whole flow to a stacked section and QC report.
 *
 * Thin: load the job, apply the command-line overrides, load the velocity
 * table, build the plan (header pass), run the stack (data pass), write the
 * section and the report, print the summary. All work is in the stack, qc and
 * job modules.
 */
#include <getopt.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>
#include <time.h>
#include <unistd.h>

#include "cli.h"
#include "tzero/job.h"
#include "tzero/qc.h"
#include "tzero/stack.h"
#include "tzero/velocity.h"

static void help(void)
{
  printf("usage: tzero stack --job FILE [OPTIONS]\n"
         "\n"
         "Processes one line from a job file (docs/job-file.md): geometry, CMP binning,\n"
         "exact hyperbolic NMO with each CMP's own velocity function, top and stretch\n"
         "mutes, live-fold stack. Writes the stacked section (SEG-Y rev 1, one trace\n"
         "per CMP) and a QC report (JSON, format tzero-qc/1), then prints a summary.\n"
         "Options override the job file's values.\n"
         "\n"
         "options:\n"
         "  --job FILE             the job file (JSON; required)\n"
         "  --velocity FILE        velocity table (cmp,time_ms,velocity_mps[,eta])\n"
         "  --out FILE             stacked section (SEG-Y)\n"
         "  --report FILE          QC report (JSON)\n"
         "  --stretch-limit PCT    stretch mute limit, percent of (t - t0)/t0 (0 = off)\n"
         "  --interpolation NAME   linear or sinc8\n"
         "  --cmp-range FIRST-LAST stack only these CMPs\n"
         "  --threads N            threads (default: the machine's online cores);\n"
         "                         the output is bitwise identical for any N\n"
         "  --skip-bad-files       list missing or corrupt shot files in the report\n"
         "                         instead of stopping\n"
         "  --json                 print the QC report instead of the summary\n"
         "  --quiet                print nothing on success\n"
         "  -h, --help             this text\n"
         "\n"
         "A progress line goes to stderr when it is a terminal. Outputs appear only\n"
         "when complete. Exit status: 0 success, 64 bad option, 65 bad job, table or\n"
         "shot data, 66 missing input, 73 cannot create output, 74 I/O error.\n"
         "\n%s", CLI_CAUTION);
}

typedef struct progress {
  int on;
  const char *what;
  double start, last;
} progress;

static double now_s(void)
{
  struct timespec ts;
  clock_gettime(CLOCK_MONOTONIC, &ts);
  return (double)ts.tv_sec + ts.tv_nsec * 1e-9;
}

static void show(void *ctx, int64_t done, int64_t total)
{
  progress *p = ctx;
  if (!p->on)
    return;
  double t = now_s();
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

static void end_progress(progress *p)
{
  if (p->on && p->last > 0)
    fprintf(stderr, "\r\033[K");
  p->last = 0;
}

static int parse_range(const char *s, job_overrides *o)
{
  int32_t *v = NULL;
  size_t n = 0;
  tz_err e;
  tz_err_init(&e);
  if (!strchr(s, '-') || strchr(s + 1, ',') || strchr(s, ':') ||
      stack_parse_cmp_list(s, &v, &n, &e))
    return cli_usage_error("stack", "--cmp-range: expected FIRST-LAST, got '%s'", s);
  o->has_cmp_range = 1;
  o->cmp_first = v[0];
  o->cmp_last = v[n - 1];
  free(v);
  return 0;
}

int cmd_stack(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "velocity", required_argument, NULL, 'v' },
    { "out", required_argument, NULL, 'o' },
    { "report", required_argument, NULL, 'r' },
    { "stretch-limit", required_argument, NULL, 's' },
    { "interpolation", required_argument, NULL, 'i' },
    { "cmp-range", required_argument, NULL, 'c' },
    { "threads", required_argument, NULL, 't' },
    { "skip-bad-files", no_argument, NULL, 'b' },
    { "json", no_argument, NULL, 'j' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    { NULL, 0, NULL, 0 },
  };
  const char *jobpath = NULL;
  int json = 0, quiet = 0, c;
  job_overrides ov;
  job_overrides_init(&ov);
  optind = 1;
  opterr = 0;
  while ((c = getopt_long(argc, argv, "h", opts, NULL)) != -1) {
    long long n;
    switch (c) {
    case 'J': jobpath = optarg; break;
    case 'v': ov.velocity = optarg; break;
    case 'o': ov.section = optarg; break;
    case 'r': ov.report = optarg; break;
    case 's':
      if (cli_parse_f64("stack", "--stretch-limit", optarg, &ov.stretch_limit_pct))
        return EX_USAGE;
      break;
    case 'i':
      if (!strcmp(optarg, "linear"))
        ov.interpolation = JOB_INTERP_LINEAR;
      else if (!strcmp(optarg, "sinc8"))
        ov.interpolation = JOB_INTERP_SINC8;
      else
        return cli_usage_error("stack", "--interpolation: expected linear or sinc8, got '%s'",
                               optarg);
      break;
    case 'c':
      if (parse_range(optarg, &ov))
        return EX_USAGE;
      break;
    case 't':
      if (cli_parse_i64("stack", "--threads", optarg, &n))
        return EX_USAGE;
      if (n < 0 || n > JOB_MAX_THREADS)
        return cli_usage_error("stack", "--threads: expected 0 to %d, got %lld",
                               JOB_MAX_THREADS, n);
      ov.threads = (int)n;
      break;
    case 'b': ov.skip_bad_files = 1; break;
    case 'j': json = 1; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_usage_error("stack", "unknown or incomplete option '%s'", argv[optind - 1]);
    }
  }
  if (optind < argc)
    return cli_usage_error("stack", "unexpected argument '%s'", argv[optind]);
  if (!jobpath)
    return cli_usage_error("stack", "--job FILE is required");

  double t_start = now_s();
  tz_err e;
  tz_err_init(&e);
  job_spec *job = NULL;
  velocity_table *vel = NULL;
  stack_plan *plan = NULL;
  stack_section *sec = NULL;
  char *report = NULL;
  progress pg = { isatty(2) && !quiet, "header pass", now_s(), 0 };
  int rc = job_load(&job, jobpath, &e);
  if (!rc)
    rc = job_apply_overrides(job, &ov, &e);
  if (rc)
    goto done;
  if (!job->velocity) {
    rc = tz_fail(&e, TZ_E_JOB, "$.velocity: no velocity table (give it in the job or with "
                 "--velocity)");
    tz_err_path(&e, jobpath);
    goto done;
  }
  if (!job->section) {
    rc = tz_fail(&e, TZ_E_JOB, "$.output.section: no output section (give it in the job or "
                 "with --out)");
    tz_err_path(&e, jobpath);
    goto done;
  }
  if ((rc = velocity_table_load(&vel, job->velocity, &e)))
    goto done;
  pg.start = now_s();
  if ((rc = stack_plan_build(&plan, job, show, &pg, &e)))
    goto done;
  end_progress(&pg);
  double t_plan = now_s();
  stack_run_opts ro;
  if ((rc = stack_run_opts_init(&ro, plan, vel, &e)))
    goto done;
  pg.what = "stacking";
  pg.start = now_s();
  ro.progress = show;
  ro.progress_ctx = &pg;
  if ((rc = stack_run(plan, &ro, &sec, &e)))
    goto done;
  end_progress(&pg);
  double t_run = now_s();
  if ((rc = stack_section_write(sec, plan, job->section, job->sample_format, &e)))
    goto done;
  double t_write = now_s();
  qc_build_args qa = {
    .job = job, .plan = plan, .section = sec, .velocity = vel, .section_path = job->section,
    .tool_version = TZERO_VERSION, .header_pass_s = t_plan - t_start,
    .data_pass_s = t_run - t_plan, .write_s = t_write - t_run, .total_s = now_s() - t_start,
  };
  if ((rc = qc_report_build(&qa, &report, &e)))
    goto done;
  if (job->report && (rc = qc_write_text(job->report, report, &e))) {
    /* the section exists already; say so, since the run failed */
    fprintf(stderr, "tzero stack: the section %s was written; the report was not\n",
            job->section);
    goto done;
  }
  if (json) {
    printf("%s\n", report);
  } else if (!quiet) {
    qc_report *qr = NULL;
    char *text = NULL;
    if ((rc = qc_report_parse(&qr, report, strlen(report), "report", &e)) ||
        (rc = qc_report_summary(qr, &text, &e))) {
      qc_report_free(qr);
      goto done;
    }
    fputs(text, stdout);
    if (job->report)
      printf("report      %s\n", job->report);
    free(text);
    qc_report_free(qr);
  }
done:
  if (rc) {
    end_progress(&pg);
    rc = cli_report("stack", &e);
  }
  free(report);
  stack_section_free(sec);
  stack_plan_free(plan);
  velocity_table_free(vel);
  job_free(job);
  return rc;
}
