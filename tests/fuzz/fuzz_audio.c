/* fuzz_audio.c -- audio shot records: the bytes as a memory file, read by
 * tzero's audio module (libsndfile's sf_open_fd underneath, so libsndfile
 * reads from memory), header checks, window plan and the conversion to SEG-Y
 * (written under /dev/shm, a memory file system, and removed). This runs
 * tzero's own checks on what libsndfile returns, not only libsndfile. */
#include "fuzz_util.h"
#include "tzero/audio.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
  char path[64];
  int fd = fuzz_memfile(data, size, path, sizeof path);
  if (fd < 0)
    return 0;
  audio_info in;
  tz_err e;
  tz_err_init(&e);
  if (audio_probe(path, &in, &e) == TZ_OK) {
    audio_params p;
    audio_params_init(&p);
    p.length_ms = 250;   /* keep a run short whatever the file claims */
    p.threads = 1;
    audio_window w;
    tz_err_init(&e);
    if (audio_plan(&in, &p, &w, &e) == TZ_OK) {
      char out[96];
      snprintf(out, sizeof out, "/dev/shm/tzero-fuzz-audio-%d.sgy", (int)getpid());
      audio_result res;
      tz_err_init(&e);
      if (audio_convert(path, out, &p, 1, 1, &res, &e) == TZ_OK)
        unlink(out);
    }
  }
  close(fd);
  return 0;
}
