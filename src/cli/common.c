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

int cli_opt_error(const char *cmd, char **argv)
{
  return cli_usage_error(cmd, "unknown or incomplete option '%s'",
                         optind > 0 ? argv[optind - 1] : "");
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
