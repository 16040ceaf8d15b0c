/* nmo.c -- the `tzero nmo` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_nmo(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero nmo: not built yet\n");
  return EX_SOFTWARE;
}
