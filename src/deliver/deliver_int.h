/* deliver_int.h -- helpers the deliver module's files share (not installed). */
#ifndef TZERO_DELIVER_INT_H
#define TZERO_DELIVER_INT_H

#include <stddef.h>
#include <cjson/cJSON.h>

/* What a SEG-Y impulse polarity code means, in a few words (static text). */
const char *deliver_polarity_text(int code);
/* "key value, key value" of a JSON object, without the key `skip` (may be NULL);
 * cut with "..." at cap. */
void deliver_json_params(const cJSON *o, const char *skip, char *out, size_t cap);

#endif
