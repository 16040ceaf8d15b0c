/* inspect.c -- the `tzero inspect` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_inspect(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero inspect: not built yet\n");
  return EX_SOFTWARE;
}
