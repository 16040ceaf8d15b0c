/* fuzz_job.c -- job files (JSON): parse and resolve against a fixture folder
 * that holds a shot file, a velocity table, a layout, a geometry table and a
 * header map (made once, in /dev/shm), then print the resolved job. Patterns
 * are expanded for real, inside the bounds of fileio_glob. */
#include "fuzz_util.h"
#include "tzero/job.h"

static const char *fixture(void)
{
  static char dir[64];
  if (dir[0])
    return dir;
  snprintf(dir, sizeof dir, "/dev/shm/tzero-fuzz-job-XXXXXX");
  if (!mkdtemp(dir)) {
    snprintf(dir, sizeof dir, "/tmp/tzero-fuzz-job-XXXXXX");
    if (!mkdtemp(dir))
      return NULL;
  }
  static const struct { const char *name, *text; } files[] = {
    { "vel.csv", "cmp,time_ms,velocity_mps\n1,0,1500\n1,400,2000\n" },
    { "layout.json", "{\"receiver_interval_m\": 5, \"source_interval_m\": 10, "
                     "\"shot_count\": 2, \"channels\": 4}" },
    { "table.csv", "field_record,channel,source_x_m,source_y_m,receiver_x_m,receiver_y_m\n"
                   "1,1,0,0,5,0\n" },
    { "map.json", "{\"cmp\": {\"byte\": 21, \"width\": 4}}" },
  };
  char p[160];
  for (size_t i = 0; i < sizeof files / sizeof files[0]; i++) {
    snprintf(p, sizeof p, "%s/%s", dir, files[i].name);
    FILE *fp = fopen(p, "w");
    if (fp) {
      fputs(files[i].text, fp);
      fclose(fp);
    }
  }
  snprintf(p, sizeof p, "%s/sv", dir);
  mkdir(p, 0777);
  size_t n;
  unsigned char *b = fuzz_small_segy(&n);
  for (int k = 1; b && k <= 2; k++) {
    snprintf(p, sizeof p, "%s/sv/shot_%d.sgy", dir, k);
    FILE *fp = fopen(p, "wb");
    if (fp) {
      fwrite(b, 1, n, fp);
      fclose(fp);
    }
  }
  free(b);
  return dir;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  const char *dir = fixture();
  if (!dir)
    return 0;
  job_spec *j = NULL;
  tz_err e;
  tz_err_init(&e);
  if (job_parse(&j, (const char *)data, size, "job.json", dir, &e) == TZ_OK) {
    char *text = NULL;
    tz_err_init(&e);
    if (job_to_json(j, &text, &e) == TZ_OK)
      free(text);
    tz_err_init(&e);
    job_check_outputs(j, &e);
  }
  job_free(j);
  return 0;
}
