/* fit.c -- the `tzero fit` subcommand (placeholder until its issue lands). */
#include <stdio.h>
#include <sysexits.h>

#include "cli.h"

int cmd_fit(int argc, char **argv)
{
  (void)argc;
  (void)argv;
  fprintf(stderr, "tzero fit: not built yet\n");
  return EX_SOFTWARE;
}
