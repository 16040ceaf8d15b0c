/* replay.c -- runs a fuzz target over saved inputs without libFuzzer, so that
 * `make check` (and `make sanitize`, under ASan and UBSan) replays every input
 * that once crashed a target (tests/data/fuzz-regress/TARGET/) and the seeds.
 *
 * usage: replay_TARGET FILE_OR_FOLDER...   prints one "ok - " line per input;
 * a crash or sanitizer report ends the run with a non-zero status.
 */
#include <dirent.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "fuzz_util.h"

static int run_file(const char *path)
{
  FILE *fp = fopen(path, "rb");
  if (!fp) {
    printf("not ok - %s: cannot open\n", path);
    return 1;
  }
  size_t cap = 1 << 16, n = 0;
  unsigned char *buf = malloc(cap);
  size_t got;
  while (buf && (got = fread(buf + n, 1, cap - n, fp)) > 0) {
    n += got;
    if (n == cap) {
      unsigned char *nb = realloc(buf, cap * 2);
      if (!nb) {
        free(buf);
        buf = NULL;
        break;
      }
      buf = nb;
      cap *= 2;
    }
  }
  fclose(fp);
  if (!buf) {
    printf("not ok - %s: out of memory\n", path);
    return 1;
  }
  LLVMFuzzerTestOneInput(buf, n);
  free(buf);
  printf("ok - replayed %s\n", path);
  fflush(stdout);
  return 0;
}

static int cmp_str(const void *a, const void *b)
{
  return strcmp(*(char *const *)a, *(char *const *)b);
}

static int run_path(const char *path)
{
  struct stat st;
  if (stat(path, &st) != 0)
    return 0;   /* no saved inputs for this target: nothing to replay */
  if (!S_ISDIR(st.st_mode))
    return run_file(path);
  DIR *d = opendir(path);
  if (!d)
    return 1;
  char **names = NULL;
  size_t n = 0, cap = 0;
  struct dirent *e;
  while ((e = readdir(d))) {
    if (e->d_name[0] == '.' || !strcmp(e->d_name, "README.md"))
      continue;
    if (n == cap) {
      cap = cap ? cap * 2 : 64;
      names = realloc(names, cap * sizeof *names);
      if (!names)
        return 1;
    }
    size_t k = strlen(path) + strlen(e->d_name) + 2;
    names[n] = malloc(k);
    snprintf(names[n++], k, "%s/%s", path, e->d_name);
  }
  closedir(d);
  if (n > 1)
    qsort(names, n, sizeof *names, cmp_str);
  int bad = 0;
  for (size_t i = 0; i < n; i++) {
    bad |= run_path(names[i]);
    free(names[i]);
  }
  free(names);
  return bad;
}

int main(int argc, char **argv)
{
  int bad = 0;
  for (int i = 1; i < argc; i++)
    bad |= run_path(argv[i]);
  return bad;
}
