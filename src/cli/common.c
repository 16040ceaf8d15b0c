/* common.c -- error printing and option parsing shared by the subcommands. */
#include "cli.h"

#include <getopt.h>
#include <stdarg.h>
#include <string.h>
#include <sysexits.h>

#include <cjson/cJSON.h>
#include <stdlib.h>

#include "tzero/table.h"

int cli_report(const char *cmd, const tz_err *e)
{
  char buf[1200];
  tz_err_format(e, buf, sizeof buf);
  fprintf(stderr, "tzero %s: %s", cmd, buf);
  if (e->oserr)
    fprintf(stderr, ": %s", strerror(e->oserr));
  fputc('\n', stderr);
  return tz_exit_status(e->status);
}

int cli_usage_error(const char *cmd, const char *fmt, ...)
{
  va_list ap;
  fprintf(stderr, "tzero %s: ", cmd);
  va_start(ap, fmt);
  vfprintf(stderr, fmt, ap);
  va_end(ap);
  fprintf(stderr, "\nTry 'tzero %s --help'.\n", cmd);
  return EX_USAGE;
}

void cli_opt_begin(void)
{
  optind = 1;
  opterr = 0;
}

int cli_opt_error(const char *cmd, char **argv, const struct option *opts)
{
  const char *arg = optind > 0 ? argv[optind - 1] : "";
  char safe[256];
  tz_escape(arg, safe, sizeof safe);
  if (strncmp(arg, "--", 2) || !opts)   /* a short option */
    return cli_usage_error(cmd, "unknown or incomplete option '%s'", safe);
  /* the long option's name as typed, without "--" and any "=VALUE" */
  char word[128];
  snprintf(word, sizeof word, "%.*s", (int)strcspn(arg + 2, "="), arg + 2);
  size_t len = strlen(word), nmatch = 0, nopts = 0;
  int exact = 0;
  const char *names[256];
  char list[512] = "";
  for (const struct option *o = opts; o->name && nopts < 256; o++) {
    names[nopts++] = o->name;
    if (!strncmp(o->name, word, len)) {
      if (!strcmp(o->name, word)) {   /* whole name: it needed a value */
        nmatch = 1;
        exact = 1;
        snprintf(list, sizeof list, "--%s", o->name);
        break;
      }
      size_t k = strlen(list);
      snprintf(list + k, sizeof list - k, "%s--%s", nmatch ? ", " : "", o->name);
      nmatch++;
    }
  }
  tz_escape(word, safe, sizeof safe);
  if (nmatch > 1)
    return cli_usage_error(cmd, "option '--%s' is ambiguous: it could be %s; give more of "
                           "the name", safe, list);
  if (nmatch == 1 && !exact)   /* cli_getopt() refused the abbreviation */
    return cli_usage_error(cmd, "option '--%s' is shortened; write it in full: '%s'", safe,
                           list);
  if (nmatch == 1)
    return cli_usage_error(cmd, "option '%s' needs a value", list);
  const char *near = tz_nearest(word, names, nopts, len / 3 > 2 ? len / 3 : 2);
  if (near)
    return cli_usage_error(cmd, "unknown option '--%s'; did you mean '--%s'?", safe, near);
  return cli_usage_error(cmd, "unknown option '--%s'", safe);
}

int cli_getopt(int argc, char **argv, const char *shortopts, const struct option *opts)
{
  int li = -1;
  int c = getopt_long(argc, argv, shortopts, opts, &li);
  if (c == -1 || c == '?' || c == ':' || li < 0)
    return c;
  /* where the option was typed: its own element, or the one before a value
   * given as the next element (getopt_long permutes only between calls) */
  int at = optarg && optind >= 2 && optarg == argv[optind - 1] ? optind - 2 : optind - 1;
  const char *typed = at >= 0 && at < argc ? argv[at] : "";
  if (strncmp(typed, "--", 2))
    return c;
  size_t len = strcspn(typed + 2, "=");
  if (strlen(opts[li].name) == len && !strncmp(opts[li].name, typed + 2, len))
    return c;
  optind = at + 1;   /* cli_opt_error() names argv[optind - 1] */
  return '?';
}

int cli_unexpected_arg(const char *cmd, const char *arg, const char *job)
{
  char safe[256];
  tz_escape(arg, safe, sizeof safe);
  size_t n = strlen(arg);
  if (!job && n > 5 && !strcmp(arg + n - 5, ".json"))
    return cli_usage_error(cmd, "unexpected argument '%s'; a job file is given with --job "
                           "(tzero %s --job %s)", safe, cmd, safe);
  return cli_usage_error(cmd, "unexpected argument '%s'", safe);
}

int cli_parse_i64(const char *cmd, const char *opt, const char *s, long long *out)
{
  int64_t v;
  if (table_parse_i64(s, &v))
    return cli_usage_error(cmd, "%s: expected an integer, got '%s'", opt, s);
  *out = (long long)v;
  return 0;
}

int cli_parse_f64(const char *cmd, const char *opt, const char *s, double *out)
{
  if (table_parse_f64(s, out))
    return cli_usage_error(cmd, "%s: expected a number, got '%s'", opt, s);
  return 0;
}

int cli_print_json(void *tree)
{
  cJSON *o = tree;
  char *s = o ? cJSON_Print(o) : NULL;
  cJSON_Delete(o);
  if (!s)
    return EX_OSERR;
  printf("%s\n", s);
  free(s);
  return EX_OK;
}
