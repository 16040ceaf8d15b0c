/* main.c -- the tzero front end: find the subcommand, run it, return its status.
 *
 * Each subcommand lives in its own file (src/cli/<name>.c), parses its own
 * options, calls the library and prints. No processing happens here.
 *
 * Signals. SIGINT, SIGTERM and SIGHUP are blocked before any thread exists (so
 * every worker inherits the mask) and taken by one thread with sigwait(3): it
 * removes the temporaries of the run (fileio_remove_temporaries) and exits with
 * 128 + the signal number (130, 143, 129), the shell's convention for a run
 * ended by a signal. SIGXFSZ is ignored, so a file-size limit (ulimit -f) makes
 * the write fail with EFBIG and the run ends with its usual I/O error (74)
 * instead of being killed with its temporaries left.
 */
#include <pthread.h>
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <sysexits.h>
#include <unistd.h>

#include "cli.h"
#include "tzero/fileio.h"

struct subcmd {
  const char *name;
  int (*run)(int argc, char **argv);
  const char *summary;
};

static const struct subcmd subcmds[] = {
  { "inspect",   cmd_inspect,   "summarise SEG-Y files: headers, ranges, anomalies" },
  { "synth",     cmd_synth,     "write a synthetic survey from a layered-earth model and a layout" },
  { "geometry",  cmd_geometry,  "assign geometry, bin CMPs, report offsets and fold" },
  { "velocity",  cmd_velocity,  "check velocity tables, interval velocities, functions at a CMP" },
  { "firstbreaks", cmd_firstbreaks, "pick first arrivals on every live trace (refraction statics)" },
  { "statics",   cmd_statics,   "station statics tables: refraction, residual" },
  { "nmo",       cmd_nmo,       "write NMO-corrected CMP gathers for checking velocities" },
  { "gathers",   cmd_gathers,   "gathers after the chain up to a step; test panels over a job key" },
  { "semblance", cmd_semblance, "semblance velocity scans and automatic picks" },
  { "cvs",       cmd_cvs,       "constant-velocity stack panels over a CMP range" },
  { "spectrum",  cmd_spectrum,  "average amplitude spectra of chosen traces of shot files or a section" },
  { "fit",       cmd_fit,       "x^2-t^2 least-squares fit of reflection picks" },
  { "statics",   cmd_statics,   "station statics tables: elevation (to a flat datum)" },
  { "stack",     cmd_stack,     "the whole flow from a job file: stacked section and QC report" },
  { "merge",     cmd_merge,     "join the parts of a line stacked by separate runs (--cmp-range)" },
  { "migrate",   cmd_migrate,   "post-stack time migration of a section (phase shift, Kirchhoff)" },
  { "condition", cmd_condition, "post-stack conditioning of a section (band-pass, f-x, balance, AGC)" },
  { "report",    cmd_report,    "print a saved QC report, one CMP, or its fold table" },
  { "compare",   cmd_compare,   "compare two stacks of the same line CMP by CMP" },
  { "picture",   cmd_picture,   "draw a section, gather or fold chart as a PNG picture" },
  { "audio",     cmd_audio,     "convert multichannel audio shot records to SEG-Y shot files" },
};
#define NSUB (sizeof subcmds / sizeof subcmds[0])

static void usage(FILE *fp)
{
  fprintf(fp,
          "usage: tzero SUBCOMMAND [OPTIONS]   (tzero help SUBCOMMAND for its options)\n"
          "\n"
          "tzero turns field shot records of a 2D reflection line into a stacked\n"
          "section with exact hyperbolic NMO, stretch mutes, live-fold stacking and a\n"
          "fold and mute QC report.\n\nsubcommands:\n");
  for (size_t i = 0; i < NSUB; i++)
    fprintf(fp, "  %-10s %s\n", subcmds[i].name, subcmds[i].summary);
  fprintf(fp, "\noptions: --help, --version\n\n%s", CLI_CAUTION_FULL);
}

static void *signal_thread(void *arg)
{
  const sigset_t *set = arg;
  int sig = 0;
  if (sigwait(set, &sig) != 0)
    return NULL;
  fileio_remove_temporaries();
  const char *name = sig == SIGINT ? "SIGINT" : sig == SIGTERM ? "SIGTERM" : "SIGHUP";
  char msg[96];
  int n = snprintf(msg, sizeof msg, "tzero: stopped by %s; temporary files removed\n", name);
  if (n > 0 && write(STDERR_FILENO, msg, (size_t)n) < 0) {
    /* nothing more to say */
  }
  _exit(128 + sig);
}

static void signals_start(void)
{
  static sigset_t set;   /* read by the signal thread for the life of the process */
  signal(SIGXFSZ, SIG_IGN);
  sigemptyset(&set);
  static const int sigs[] = { SIGINT, SIGTERM, SIGHUP };
  int any = 0;
  for (size_t i = 0; i < sizeof sigs / sizeof sigs[0]; i++) {
    struct sigaction old;
    /* a signal ignored by the caller (nohup, a background job) stays ignored */
    if (sigaction(sigs[i], NULL, &old) == 0 && old.sa_handler == SIG_IGN)
      continue;
    sigaddset(&set, sigs[i]);
    any = 1;
  }
  if (!any || pthread_sigmask(SIG_BLOCK, &set, NULL) != 0)
    return;
  pthread_attr_t at;
  pthread_t th;
  int ok = pthread_attr_init(&at) == 0;
  if (ok) {
    pthread_attr_setdetachstate(&at, PTHREAD_CREATE_DETACHED);
    ok = pthread_create(&th, &at, signal_thread, &set) == 0;
    pthread_attr_destroy(&at);
  }
  if (!ok)   /* no thread to take them: keep the default actions */
    pthread_sigmask(SIG_UNBLOCK, &set, NULL);
}

static const struct subcmd *find(const char *name)
{
  for (size_t i = 0; i < NSUB; i++)
    if (!strcmp(subcmds[i].name, name))
      return &subcmds[i];
  return NULL;
}

/* "unknown subcommand 'stak'; did you mean 'stack'?" (within a third of the
 * word's length in edits, at least 2). */
static int unknown_subcommand(const char *name)
{
  const char *names[NSUB];
  for (size_t i = 0; i < NSUB; i++)
    names[i] = subcmds[i].name;
  size_t len = strlen(name);
  const char *near = tz_nearest(name, names, NSUB, len / 3 > 2 ? len / 3 : 2);
  char safe[256];
  tz_escape(name, safe, sizeof safe);
  if (near)
    fprintf(stderr, "tzero: unknown subcommand '%s'; did you mean '%s'?\n", safe, near);
  else
    fprintf(stderr, "tzero: unknown subcommand '%s'\n", safe);
  fprintf(stderr, "Try 'tzero --help'.\n");
  return EX_USAGE;
}

int main(int argc, char **argv)
{
  if (argc < 2) {
    usage(stderr);
    return EX_USAGE;
  }
  const char *name = argv[1];
  if (!strcmp(name, "--help") || !strcmp(name, "-h")) {
    usage(stdout);
    return EX_OK;
  }
  if (!strcmp(name, "--version") || !strcmp(name, "-V")) {
    printf("tzero %s\n", TZERO_VERSION);
    return EX_OK;
  }
  if (!strcmp(name, "help")) {
    if (argc < 3) {
      usage(stdout);
      return EX_OK;
    }
    const struct subcmd *s = find(argv[2]);
    if (!s)
      return unknown_subcommand(argv[2]);
    char *hargv[] = { argv[2], "--help", NULL };
    return s->run(2, hargv);
  }
  const struct subcmd *s = find(name);
  if (s)
    signals_start();
  if (!s)
    return unknown_subcommand(name);
  return s->run(argc - 1, argv + 1);
}
