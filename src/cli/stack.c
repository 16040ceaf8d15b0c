/* stack.c -- `tzero stack --job FILE`: the whole flow to a stacked section and QC report.
 *
 * Thin: resolve the job (overrides, velocity table, plan = header pass), run the
 * stack (data pass), write the section and the report, print the summary. All
 * work is in the stack, qc and job modules.
 */
#include <getopt.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sysexits.h>
#include <cjson/cJSON.h>

#include "cli.h"
#include "jobopts.h"
#include "tzero/deliver.h"
#include "tzero/fileio.h"
#include "tzero/limits.h"
#include "tzero/page.h"
#include "tzero/qc.h"
#include "tzero/flow.h"
#include "tzero/gathers.h"
#include "tzero/stack.h"
#include "tzero/table.h"

static void help(void)
{
  printf("usage: tzero stack --job FILE [OPTIONS]\n"
         "\n"
         "Processes one line from a job file (docs/job-file.md): geometry, CMP binning,\n"
         "exact hyperbolic NMO with each CMP's own velocity function, top and stretch\n"
         "mutes, live-fold stack. Writes the stacked section (SEG-Y rev 1, one trace\n"
         "per CMP) and a QC report (JSON, format tzero-qc/1), then prints a summary.\n"
         "With output.navigation and output.history it also writes the navigation\n"
         "file and the processing history (docs/section.md), unless --out or\n"
         "--cmp-range sends the section elsewhere or makes it a part.\n"
         "Options override the job file's values.\n"
         "\n"
         "options:\n"
         "  --job FILE             the job file (JSON; required)\n"
         "  --velocity FILE        velocity table (cmp,time_ms,velocity_mps[,eta])\n"
         "  --out FILE             stacked section (SEG-Y)\n"
         "  --report FILE          QC report (JSON); its HTML QC page goes beside it\n"
         "                         (FILE.html for FILE.json; job key output.html)\n"
         "  --stretch-limit PCT    stretch mute limit, percent of (t - t0)/t0 (0 = off)\n"
         "  --interpolation NAME   linear or sinc8\n"
         "  --cmp-range FIRST-LAST stack only these CMPs (a part of the line: parts\n"
         "                         are joined by tzero merge)\n"
         "  --threads N            threads (default and most: the CPUs this process may\n"
         "                         use); the output is bitwise identical for any N\n"
         "  --reuse SECTION        a section an earlier run of this line wrote: CMPs\n"
         "                         whose velocity function and every other input are\n"
         "                         unchanged (the reuse keys in its report) are copied,\n"
         "                         only the others are read and restacked; the result\n"
         "                         is the section a full run writes. Missing section or\n"
         "                         report: a full run, with a note (docs/performance.md)\n"
         "  --reuse-report FILE    the report of the reused section (default: the job's\n"
         "                         report, as a rerun of the same job finds it)\n"
         "  --skip-bad-files       list missing or corrupt shot files in the report\n"
         "                         instead of stopping\n"
         "  --check                after the section and report are written, hold\n"
         "                         the report to the job's \"limits\" (docs/qc-report.md\n"
         "                         \"Limits\"): one line per limit, exit 1 when one broke\n"
         CLI_EDITS_HELP
         "  --json                 print the QC report instead of the summary\n"
         "  --brief                print one line instead: line, exit status, CMPs,\n"
         "                         fold, muted %%, skipped traces, velocity warnings\n"
         "                         (also after a failure); with --json, one JSON object\n"
         "  --vary KEY=V1,V2,...   test panels (with --cmp-range and --out): the CMP\n"
         "                         range stacked once per value of the job key KEY, a\n"
         "                         JSON path (moveout.stretch_limit_pct,\n"
         "                         conditioning[0].corners_hz[3]); panels one after\n"
         "                         the other in --out, the panel number and value in\n"
         "                         trace bytes 233-236 and 237-240 (docs/gathers.md);\n"
         "                         no report is written\n"
         "  --depfile FILE         write a make(1) dependency file: the section and\n"
         "                         report depend on the job, its shot files, velocity\n"
         "                         table and every other input (docs/batch.md)\n"
         "  --quiet                print nothing on success\n"
         "  -h, --help             this text\n"
         "\n"
         "A progress line goes to stderr when it is a terminal. Outputs appear only\n"
         "when complete. Exit status: 0 success, 1 a limit broke (--check; the outputs\n"
         "are complete), 64 bad option, 65 bad job, table or shot data (or --check\n"
         "with no limits in the job), 66 missing input, 73 cannot create output, 74\n"
         "I/O error.\n"
         "\n%s", CLI_CAUTION);
}

static int parse_range(const char *s, job_overrides *o)
{
  int32_t *v = NULL;
  size_t n = 0;
  tz_err e;
  tz_err_init(&e);
  if (!strchr(s + 1, '-') || strchr(s, ',') || strchr(s, ':'))
    return cli_usage_error("stack", "--cmp-range: expected FIRST-LAST, got '%s'", s);
  if (table_parse_ranges(s, "CMP", STACK_MAX_CMPS, &v, &n, &e))
    return cli_usage_error("stack", "--cmp-range: expected FIRST-LAST, got '%s' (%s)", s, e.msg);
  o->has_cmp_range = 1;
  o->cmp_first = v[0];
  o->cmp_last = v[n - 1];
  free(v);
  return 0;
}

/* `--check`: the finished report against the job's limits. Returns 0 when all
 * held, 1 when one broke, or the error's status. */
static int gate(const char *report, const job_spec *job, int print, int quiet, tz_err *e)
{
  qc_report *qr = NULL;
  limits_result *res = NULL;
  char *text = NULL, *brief = NULL;
  int rc = qc_report_parse(&qr, report, strlen(report), job->report ? job->report : "report", e);
  if (!rc)
    rc = limits_check(&job->limits, qr, &res, e);
  if (!rc && print)
    rc = limits_result_text(res, &text, e);
  if (!rc && res->broken)
    rc = limits_result_brief(res, &brief, e);
  if (!rc) {
    if (text)
      fputs(text, stdout);
    if (res->broken)   /* even with --quiet: a script's log should say why it stopped */
      fprintf(stderr, "tzero stack: %s: %zu limit%s broken: %s\n",
              job->name && job->name[0] ? job->name : job->path, res->broken,
              res->broken == 1 ? "" : "s", brief);
  }
  int out = rc ? rc : res->broken ? -1 : 0;
  free(text);
  free(brief);
  limits_result_free(res);
  qc_report_free(qr);
  return out;
}

/* The QC page beside the report (or at $.output.html), from the report just written. */
static int write_page(const job_spec *job, tz_err *e)
{
  char *path = NULL;
  int rc = job->html ? TZ_OK : page_path_for_report(job->report, &path, e);
  if (rc)
    return rc;
  page_line_opts o = { .report_path = job->report, .section_path = job->section,
                       .page_path = job->html ? job->html : path };
  rc = page_line_write(&o, e);
  if (rc)
    fprintf(stderr, "tzero stack: the section %s and the report %s were written; the QC page "
            "was not\n", job->section, job->report);
  free(path);
  return rc;
}

/* --brief: the run's one-line result (qc_report_brief) on stdout. */
static int print_brief(const char *report, int broken, int json, tz_err *e)
{
  qc_report *qr = NULL;
  char *text = NULL;
  int rc = qc_report_parse(&qr, report, strlen(report), "report", e);
  if (!rc)
    rc = qc_report_brief(qr, broken ? 1 : 0, json, &text, e);
  if (!rc)
    printf(json ? "%s\n" : "%s", text);
  free(text);
  qc_report_free(qr);
  return rc;
}

/* --brief after a failure: the line (or the job), the exit status and the reason,
 * on stdout, so a batch log has one line per run whatever happened (the full
 * message is on stderr as usual). */
static void print_brief_failure(const char *jobpath, const char *line, int status,
                                const tz_err *e, int json)
{
  const char *name = line && line[0] ? line : jobpath;
  if (!json) {
    printf("%s  exit %d  failed: %s\n", name, status, e->msg);
    return;
  }
  cJSON *o = cJSON_CreateObject();
  if (!o)
    return;
  cJSON_AddStringToObject(o, "line", name);
  cJSON_AddStringToObject(o, "job", jobpath);
  cJSON_AddNumberToObject(o, "exit_status", status);
  cJSON_AddStringToObject(o, "error", e->msg);
  char *s = cJSON_PrintUnformatted(o);
  cJSON_Delete(o);
  if (s)
    printf("%s\n", s);
  free(s);
}

/* Prints the summary of the report text (the same code path as tzero report). */
static int print_summary(const char *report, const char *report_path, tz_err *e)
{
  qc_report *qr = NULL;
  char *text = NULL;
  int rc = qc_report_parse(&qr, report, strlen(report), "report", e);
  if (!rc)
    rc = qc_report_summary(qr, &text, e);
  if (!rc) {
    fputs(text, stdout);
    if (report_path)
      printf("report      %s\n", report_path);
  }
  free(text);
  qc_report_free(qr);
  return rc;
}

/* --vary: one stacked panel of the --cmp-range per value of a job key, all in
 * --out, each with the job's post-stack steps before migration as the section
 * gets them (no report, no migration: panels are for choosing a parameter, not
 * for delivery). */
static int stack_vary(const char *jobpath, const job_overrides *ov, const cli_vary *vary,
                      int quiet)
{
  flow_setup su[CLI_VARY_MAX];
  stack_section *sec[CLI_VARY_MAX] = { NULL };
  const stack_plan *plans[CLI_VARY_MAX];
  memset(su, 0, sizeof su);
  tz_err e;
  tz_err_init(&e);
  int rc = TZ_OK;
  size_t i;
  for (i = 0; i < vary->n; i++) {
    job_edit ed = { vary->key, vary->values[i] };
    cli_progress pg;
    cli_progress_init(&pg, "header pass", quiet);
    rc = flow_setup_load_edited(&su[i], jobpath, &ed, ov, 1, cli_progress_show, &pg, &e);
    cli_progress_end(&pg);
    if (!rc && i == 0 && !(rc = job_check_output(su[0].job, ov->section, "--out", 1, &e)))
      rc = fileio_probe(ov->section, &e);
    stack_run_opts ro;
    if (!rc && !(rc = flow_poststack_check(su[i].job, su[i].plan, &e)) &&
        !(rc = stack_run_opts_init(&ro, su[i].plan, su[i].velocity, &e))) {
      cli_progress_init(&pg, "stacking", quiet);
      ro.progress = cli_progress_show;
      ro.progress_ctx = &pg;
      rc = stack_run(su[i].plan, &ro, &sec[i], &e);
      cli_progress_end(&pg);
      /* the job's post-stack steps before migration, as the section gets them */
      if (!rc)
        rc = flow_poststack_stack(su[i].job, sec[i], &e);
    }
    if (rc)
      break;
    plans[i] = su[i].plan;
  }
  gathers_panels panels = { .key = vary->key, .n = vary->n, .values = vary->values };
  if (!rc)
    rc = gathers_write_stack_panels((const stack_section *const *)sec, plans, &panels,
                                    ov->section, su[0].job->sample_format, &e);
  if (rc) {
    tz_err_path(&e, jobpath);
    rc = cli_report("stack", &e);
    if (i < vary->n)
      fprintf(stderr, "tzero stack: (panel %zu: %s = %s)\n", i + 1, vary->key, vary->values[i]);
  } else if (!quiet) {
    printf("%s: %zu test panels of CMPs %d-%d, %s = ", ov->section, vary->n,
           (int)sec[0]->first_cmp, (int)(sec[0]->first_cmp + (int32_t)sec[0]->ncmps - 1),
           vary->key);
    for (size_t k = 0; k < vary->n; k++)
      printf("%s%s", k ? ", " : "", vary->values[k]);
    printf("\n");
  }
  for (size_t k = 0; k < vary->n; k++) {
    stack_section_free(sec[k]);
    flow_setup_free(&su[k]);
  }
  return rc;
}

int cmd_stack(int argc, char **argv)
{
  static const struct option opts[] = {
    { "job", required_argument, NULL, 'J' },
    { "out", required_argument, NULL, 'o' },
    { "report", required_argument, NULL, 'r' },
    { "cmp-range", required_argument, NULL, 'c' },
    { "json", no_argument, NULL, 'j' },
    { "check", no_argument, NULL, 'C' },
    { "brief", no_argument, NULL, 'B' },
    { "depfile", required_argument, NULL, 'D' },
    { "vary", required_argument, NULL, 'V' },
    { "reuse", required_argument, NULL, 'U' },
    { "reuse-report", required_argument, NULL, 'R' },
    { "quiet", no_argument, NULL, 'q' },
    { "help", no_argument, NULL, 'h' },
    JOBOPTS_LONG,
    { NULL, 0, NULL, 0 },
  };
  const char *jobpath = NULL, *depfile = NULL, *reuse = NULL, *reuse_report = NULL;
  int json = 0, quiet = 0, check = 0, brief = 0, c;
  cli_vary vary;
  memset(&vary, 0, sizeof vary);
  job_overrides ov;
  job_overrides_init(&ov);
  cli_opt_begin();
  while ((c = cli_getopt(argc, argv, "h", opts)) != -1) {
    int k = cli_job_option("stack", c, optarg, &ov);
    if (k < 0)
      return EX_USAGE;
    if (k > 0)
      continue;
    switch (c) {
    case 'J': jobpath = optarg; break;
    case 'o': ov.section = optarg; break;
    case 'r': ov.report = optarg; break;
    case 'c':
      if (parse_range(optarg, &ov))
        return EX_USAGE;
      break;
    case 'j': json = 1; break;
    case 'C': check = 1; break;
    case 'B': brief = 1; break;
    case 'D': depfile = optarg; break;
    case 'V':
      if (cli_vary_parse("stack", optarg, &vary))
        return EX_USAGE;
      break;
    case 'U': reuse = optarg; break;
    case 'R': reuse_report = optarg; break;
    case 'q': quiet = 1; break;
    case 'h': help(); return EX_OK;
    default:
      return cli_opt_error("stack", argv, opts);
    }
  }
  if (optind < argc)
    return cli_unexpected_arg("stack", argv[optind], jobpath);
  if (!jobpath)
    return cli_usage_error("stack", "--job FILE is required");
  if (vary.n) {
    if (cli_vary_check("stack", &vary, &ov))
      return EX_USAGE;
    if (!ov.has_cmp_range || !ov.section)
      return cli_usage_error("stack", "--vary needs --cmp-range and --out (test panels of "
                             "a part of the line)");
    if (check || brief || json || depfile || ov.report)
      return cli_usage_error("stack", "--vary writes test panels only: no --report, --check, "
                             "--brief, --json or --depfile");
    return stack_vary(jobpath, &ov, &vary, quiet);
  }

  double t_start = cli_now_s();
  tz_err e;
  tz_err_init(&e);
  flow_setup su;
  stack_section *sec = NULL;
  deliver_steps *steps = NULL;
  char *report = NULL, *page = NULL;
  fileio_out *rep_out = NULL;
  int answer = 0;
  char *keys = NULL;
  stack_reuse *ru = NULL;
  char reuse_why[1200] = "";
  cli_progress pg;
  cli_progress_init(&pg, "header pass", quiet || json);
  int rc = flow_setup_load(&su, jobpath, &ov, 1, cli_progress_show, &pg, &e);
  cli_progress_end(&pg);
  if (rc) {
    rc = cli_report("stack", &e);
    if (brief)
      print_brief_failure(jobpath, NULL, rc, &e, json);
    return rc;
  }
  const job_spec *job = su.job;
  if (!job->section) {
    rc = tz_fail(&e, TZ_E_JOB, "$.output.section: no output section (give it in the job or "
                 "with --out)");
    tz_err_path(&e, jobpath);
    goto done;
  }
  if (check && !job->limits.given) {
    rc = tz_fail(&e, TZ_E_JOB, "$.limits: --check needs limits in the job (a limits file "
                 "name or an object of limits)");
    tz_err_path(&e, jobpath);
    goto done;
  }
  if ((rc = job_check_outputs(job, &e)) || (rc = fileio_probe(job->section, &e)))
    goto done;
  /* the report's temporary file first: a report that cannot be created stops
   * the run before the section appears */
  if (job->report && (rc = fileio_create(&rep_out, job->report, &e)))
    goto done;
  if ((rc = flow_poststack_check(job, su.plan, &e)))
    goto done;
  double t_plan = cli_now_s();
  stack_run_opts ro;
  if ((rc = stack_run_opts_init(&ro, su.plan, su.velocity, &e)))
    goto done;
  if ((rc = stack_reuse_keys(su.plan, &ro, &keys, &e)))
    goto done;
  if (reuse) {
    if ((rc = stack_reuse_open(&ru, su.plan, &ro, keys, reuse,
                               reuse_report ? reuse_report : job->report, reuse_why,
                               sizeof reuse_why, &e)))
      goto done;
    if (reuse_why[0] && !quiet && !json && !brief)
      fprintf(stderr, "tzero stack: note: %s\n", reuse_why);
    ro.restack = stack_reuse_restack(ru);
  }
  cli_progress_init(&pg, "stacking", quiet || json);
  ro.progress = cli_progress_show;
  ro.progress_ctx = &pg;
  rc = stack_run(su.plan, &ro, &sec, &e);
  cli_progress_end(&pg);
  if (!rc)
    rc = stack_reuse_apply(ru, sec, &e);
  if (rc)
    goto done;
  double t_run = cli_now_s();
  if ((rc = flow_poststack_stack(job, sec, &e)))
    goto done;
  deliver_run run;
  cli_run_init(&run, argc, argv);
  if (!(steps = malloc(sizeof *steps))) {
    rc = tz_fail(&e, TZ_E_NOMEM, "processing steps");
    goto done;
  }
  deliver_steps_init(steps);
  if ((rc = deliver_steps_job(steps, job, &e)))
    goto done;
  flow_poststack_steps(job, POSTSTACK_STAGE_BEFORE, steps);
  char text[DELIVER_TEXT_BYTES];
  deliver_section_text(job, su.plan, sec->first_cmp, sec->first_cmp + (int32_t)sec->ncmps - 1,
                       "stacked section", steps, &run, text, sizeof text);
  if ((rc = stack_section_write(sec, su.plan, job->section, job->sample_format, text,
                                deliver_polarity_code(job), &e)))
    goto done;
  /* the navigation file and the history belong to the job's section of the whole line:
   * a part (--cmp-range) or a section elsewhere (--out) leaves them alone (tzero merge
   * writes them for the joined line) */
  int deliverables = !ov.section && !ov.has_cmp_range;
  if (deliverables && job->navigation &&
      (rc = deliver_navigation_write(sec, su.plan, job->navigation, &e)))
    goto done;
  double t_write = cli_now_s();
  qc_migration mig;
  if (job->migrated &&
      (rc = flow_migrate(job, su.plan, su.velocity, job->threads, steps, &run, &mig, &e)))
    goto done;
  if (job->migrated) {   /* the history's sequence goes on as the migrated section's does */
    deliver_steps_migration(steps, job);
    flow_poststack_steps(job, POSTSTACK_STAGE_AFTER, steps);
  }
  qc_build_args qa = {
    .job = job, .plan = su.plan, .section = sec, .velocity = su.velocity,
    .section_path = job->section, .tool_version = TZERO_VERSION,
    .header_pass_s = t_plan - t_start, .data_pass_s = t_run - t_plan,
    .write_s = t_write - t_run, .total_s = cli_now_s() - t_start,
    .migration = job->migrated ? &mig : NULL,
    .cmp_keys = keys, .reused_section = reuse, .cmps_carried = stack_reuse_carried(ru),
    .reuse_note = reuse_why[0] ? reuse_why : NULL,
  };
  if ((rc = qc_report_build(&qa, &report, &e)))
    goto done;
  if (rep_out) {
    FILE *fp = fileio_stream(rep_out);
    if (fputs(report, fp) == EOF || fputc('\n', fp) == EOF) {
      rc = fileio_fail(rep_out, -1, &e);   /* with the OS reason */
      fileio_abort(rep_out);
    } else {
      rc = fileio_commit(rep_out, &e);
    }
    rep_out = NULL;
    if (rc) {
      fprintf(stderr, "tzero stack: the section %s was written; the report was not\n",
              job->section);
      goto done;
    }
  }
  if (job->report && !job->no_html && (rc = write_page(job, &e)))
    goto done;
  if (deliverables && job->history) {
    const char *outs[6] = { job->section, NULL, NULL, NULL, NULL, NULL };
    size_t no = 1;
    if (job->report)
      outs[no++] = job->report;
    if (job->report && !job->no_html && !job->html &&
        (rc = page_path_for_report(job->report, &page, &e)))
      goto done;
    if (job->report && !job->no_html)
      outs[no++] = job->html ? job->html : page;
    if (job->migrated)
      outs[no++] = job->migrated;
    if (job->navigation)
      outs[no++] = job->navigation;
    if ((rc = deliver_history_write(job, report, steps, &run, outs, job->history, &e)))
      goto done;
  }
  if (depfile) {
    const char *targets[4] = { job->section, NULL, NULL, NULL };
    size_t nt = 1;
    if (job->report)
      targets[nt++] = job->report;
    if (deliverables && job->navigation)
      targets[nt++] = job->navigation;
    if (deliverables && job->history)
      targets[nt++] = job->history;
    if ((rc = job_write_depfile(job, targets, nt, depfile, &e)))
      goto done;
  }
  if (json && !brief)
    printf("%s\n", report);
  else if (!quiet && !brief)
    rc = print_summary(report, job->report, &e);
  int broken = 0;
  if (!rc && check) {
    int g = gate(report, job, !quiet && !json && !brief, quiet, &e);
    broken = g < 0;
    rc = g > 0 ? g : 0;
  }
  if (!rc && brief)
    rc = print_brief(report, broken, json, &e);
  /* a broken limit is an answer (exit 1): the outputs are complete */
  answer = !rc && broken;
done:
  fileio_abort(rep_out);
  if (rc) {
    tz_err_path(&e, jobpath);   /* an error of no particular file belongs to the job */
    rc = cli_report("stack", &e);
    if (brief)
      print_brief_failure(jobpath, job->name, rc, &e, json);
  }
  free(steps);
  free(page);
  free(report);
  free(keys);
  stack_reuse_free(ru);
  stack_section_free(sec);
  flow_setup_free(&su);
  return rc ? rc : answer;
}
