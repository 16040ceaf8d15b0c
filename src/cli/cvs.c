/* cvs.c -- the `tzero cvs` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_cvs(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero cvs: not built yet\n");
  return EX_SOFTWARE;
}
