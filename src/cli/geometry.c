/* geometry.c -- the `tzero geometry` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_geometry(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero geometry: not built yet\n");
  return EX_SOFTWARE;
}
