/* jobopts.h -- command-line options shared by the job-driven subcommands (stack, nmo):
 * the job overrides and the progress line. Front-end only. */
#ifndef TZERO_CLI_JOBOPTS_H
#define TZERO_CLI_JOBOPTS_H

#include <getopt.h>
#include <stdint.h>
#include "tzero/job.h"

/* getopt_long entries for the overrides; their `val`s are the JOBOPT_* codes. */
enum { JOBOPT_VELOCITY = 1000, JOBOPT_STRETCH, JOBOPT_INTERP, JOBOPT_THREADS, JOBOPT_SKIP_BAD,
       JOBOPT_EDITS };
#define JOBOPTS_LONG                                                  \
  { "velocity", required_argument, NULL, JOBOPT_VELOCITY },           \
  { "stretch-limit", required_argument, NULL, JOBOPT_STRETCH },       \
  { "interpolation", required_argument, NULL, JOBOPT_INTERP },        \
  { "threads", required_argument, NULL, JOBOPT_THREADS },             \
  { "skip-bad-files", no_argument, NULL, JOBOPT_SKIP_BAD },         \
  { "edits", required_argument, NULL, JOBOPT_EDITS }

/* Handles one JOBOPT_* option into ov. Returns 1 when handled, 0 when `c` is
 * not a job option, -1 after printing a usage error. */
int cli_job_option(const char *cmd, int c, const char *arg, job_overrides *ov);

/* The --help line of --edits, shared by stack, nmo, semblance and cvs. */
#define CLI_EDITS_HELP                                                               \
  "  --edits FILE.json         trace edits replacing the job's \"edits\" (kill, reverse,\n" \
  "                            auto; docs/statics.md)\n"

/* --vary KEY=V1,V2,...: a JSON path of the job and the values of its test
 * panels (job_load_edited), split in place in buf. */
#define CLI_VARY_MAX 24
typedef struct cli_vary {
  char buf[2048];
  const char *key;
  const char *values[CLI_VARY_MAX];
  size_t n;
} cli_vary;
/* 0, or EX_USAGE after printing a usage error. */
int cli_vary_parse(const char *cmd, const char *arg, cli_vary *v);
/* EX_USAGE (after the message) when an option given sets the varied key after
 * the job is read (--stretch-limit with moveout.stretch_limit_pct, ...), else 0. */
int cli_vary_check(const char *cmd, const cli_vary *v, const job_overrides *ov);

/* A progress line on stderr, drawn only when stderr is a terminal. */
typedef struct cli_progress {
  int on;
  const char *what;
  double start, last;
} cli_progress;

void cli_progress_init(cli_progress *p, const char *what, int quiet);
void cli_progress_show(void *ctx, int64_t done, int64_t total);  /* stack_progress_fn */
void cli_progress_end(cli_progress *p);                          /* clears the line */
double cli_now_s(void);
/* The run for the deliverables (deliver.h): tzero's version, the date (the
 * SOURCE_DATE_EPOCH environment variable when set, as reproducible builds use
 * it, else now) and the command line. */
struct deliver_run;
void cli_run_init(struct deliver_run *r, int argc, char **argv);

#endif
