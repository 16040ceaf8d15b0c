/* stack.c -- the `tzero stack` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_stack(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero stack: not built yet\n");
  return EX_SOFTWARE;
}
