/* compare.c -- the `tzero compare` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_compare(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero compare: not built yet\n");
  return EX_SOFTWARE;
}
