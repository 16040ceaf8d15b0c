/* semblance.c -- the `tzero semblance` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_semblance(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero semblance: not built yet\n");
  return EX_SOFTWARE;
}
