/* velocity.c -- the `tzero velocity` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_velocity(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero velocity: not built yet\n");
  return EX_SOFTWARE;
}
