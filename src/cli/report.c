/* report.c -- the `tzero report` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_report(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero report: not built yet\n");
  return EX_SOFTWARE;
}
