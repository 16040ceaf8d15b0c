/* synth.c -- the `tzero synth` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_synth(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero synth: not built yet\n");
  return EX_SOFTWARE;
}
