/* geometry.h -- where every trace sits on the ground: layouts, geometry tables, headers.
 *
 * Three ways to know a trace's source and receiver position:
 *   - the trace headers themselves (source/receiver X/Y, elevations);
 *   - a layout: a roll-along (or fixed-spread) 2D line described in JSON;
 *   - a geometry table: CSV rows keyed by field record and channel.
 * Each becomes an opaque geometry_source; geometry_source_trace() then fills one
 * geometry_trace (positions, midpoint, signed/absolute offset, azimuth) from a
 * decoded segy_trace_header. All arithmetic is in double and differences are
 * taken before any sum, so projected coordinates of several million metres keep
 * centimetre precision.
 *
 * Thread rule: a geometry_source and a geometry_layout are read-only after they
 * are made and may be shared by threads.
 */
#ifndef TZERO_GEOMETRY_H
#define TZERO_GEOMETRY_H

#include <stddef.h>
#include <stdint.h>
#include "tzero/error.h"
#include "tzero/segy.h"

#define GEOMETRY_MAX_CHANNELS 100000   /* cap on channels per shot in a layout */
#define GEOMETRY_MAX_SHOTS 10000000    /* cap on shots in a layout */
#define GEOMETRY_MAX_TABLE_ROWS 50000000 /* cap on geometry-table rows */
/* Plausibility caps on layout distances (checked, so that every derived
 * coordinate fits a SEG-Y coordinate slot in centimetres, 2^31 cm = 21475 km):
 * map coordinates of station 0, the line's along-line extent, depths and heights. */
#define GEOMETRY_MAX_COORD_M 2e7       /* beyond any projected coordinate (UTM northing 1e7) */
#define GEOMETRY_MAX_EXTENT_M 1e6      /* shots and spreads within 1000 km of station 0 */
#define GEOMETRY_MAX_HEIGHT_M 2e4      /* elevations, depths, source offset from the line */

/* Where the receivers sit relative to the source, along the shooting direction
 * (the direction in which successive shots move, the line azimuth). */
enum geometry_spread {
  GEOMETRY_SPREAD_AHEAD = 0,  /* off-end: every receiver ahead of the source */
  GEOMETRY_SPREAD_BEHIND,     /* off-end: every receiver behind the source (trailing) */
  GEOMETRY_SPREAD_SPLIT       /* split: channels_behind behind, the rest ahead */
};

/* Channel numbering: FORWARD means channel numbers increase in the shooting
 * direction (the first channel is the rearmost receiver); REVERSE the opposite. */
enum geometry_channel_order { GEOMETRY_CHANNELS_FORWARD = 0, GEOMETRY_CHANNELS_REVERSE };

/* A 2D line layout (docs/layout.md gives the JSON keys). Positions along the
 * line are metres from station 0 in the azimuth direction; perpendicular
 * positions are metres to the right of that direction.
 *
 * Receivers of shot i (source at along = first_source_m + i*source_interval_m):
 *   ahead:  source + near_offset_m + c*receiver_interval_m,   c = 0..channels-1
 *   behind: source - near_offset_m - c*receiver_interval_m
 *   split:  channels_behind receivers behind and channels - channels_behind ahead,
 *           each side starting near_offset_m from the source
 *   fixed spread: receivers at stations 0..channels-1 for every shot.
 * Field records count the recorded shots: first_field_record + j*field_record_step
 * for the j-th shot that is not skipped. Shot points count shot positions:
 * first_shot_point + i, whether skipped or not.
 *
 * The arrays are owned by the layout: release them with geometry_layout_free(). */
typedef struct geometry_layout {
  double receiver_interval_m;   /* > 0 */
  double first_station_x_m;     /* position of station 0 */
  double first_station_y_m;
  double azimuth_deg;           /* line direction, clockwise from north (+y) */
  double source_interval_m;     /* > 0 */
  double first_source_m;        /* along-line position of the first shot */
  int32_t shot_count;           /* shot positions, including skipped ones */
  int spread;                   /* enum geometry_spread */
  int32_t channels;             /* active channels per shot */
  int32_t channels_behind;      /* split only: channels behind the source */
  double near_offset_m;         /* gap from the source to the nearest receiver */
  double source_offset_m;       /* sources this far to the right of the line */
  double source_depth_m;        /* source depth below the surface */
  int fixed_spread;             /* 1: all receivers at stations 0..channels-1 */
  int32_t first_field_record;
  int32_t field_record_step;    /* default 1 */
  int32_t first_channel;        /* default 1 */
  int channel_order;            /* enum geometry_channel_order */
  int32_t first_shot_point;     /* default 1 */
  int32_t *skipped;             /* shot points not recorded (owned), sorted */
  size_t nskipped;
  double *station_elev_m;       /* elevation of stations 0..n-1 (owned); NULL = 0 */
  size_t nstation_elev;
} geometry_layout;

/* Sets the defaults (every field zero except the documented defaults). */
void geometry_layout_init(geometry_layout *l);
/* Parses layout JSON (NUL-terminated text; len is its length for messages);
 * `name` appears in messages. Unknown keys are TZ_E_FORMAT
 * naming the key (and the nearest known key). On success *l owns its arrays;
 * on failure *l holds nothing that needs freeing. */
int geometry_layout_parse(geometry_layout *l, const char *json, size_t len, const char *name,
                          tz_err *err);
int geometry_layout_load(geometry_layout *l, const char *path, tz_err *err);
/* Checks the values (intervals > 0, counts within caps, split sizes). */
int geometry_layout_check(const geometry_layout *l, tz_err *err);
void geometry_layout_free(geometry_layout *l);     /* releases the arrays; NULL ok */
/* Deep copy: on success *dst owns new arrays. */
int geometry_layout_copy(geometry_layout *dst, const geometry_layout *src, tz_err *err);

/* One recorded shot of a layout. */
typedef struct geometry_shot {
  int32_t field_record;
  int32_t shot_point;
  double along_m;               /* along-line position of the source */
  double x, y, z;               /* source position; z = surface elevation */
  double depth_m;               /* source depth below the surface */
} geometry_shot;

/* Per-trace geometry. Offsets and azimuth are computed from the positions. */
typedef struct geometry_trace {
  int32_t field_record;
  int32_t channel;
  double source_x, source_y, source_z;       /* z: surface elevation, metres */
  double source_depth;
  double receiver_x, receiver_y, receiver_z;
  double midpoint_x, midpoint_y;
  double offset;        /* signed: negative when the receiver lies opposite to the
                         * shooting direction (SEG-Y rule, bytes 37-40) */
  double offset_abs;    /* horizontal source-receiver distance */
  double azimuth_deg;   /* source to receiver, clockwise from north, [0, 360) */
  int live;             /* 0 for dead/dummy traces (trace kinds 2 and 3), else 1 */
} geometry_trace;

/* What a trace kind (SEG-Y rev 1 (2002), trace header bytes 29-30) is for the
 * geometry: 0 unknown and 1 seismic are data (common practice: unknown is live),
 * and so are 11-17 (sensor data: pressure, multicomponent, rotated); 2 dead and 3
 * dummy are dead channels; everything else (time break, uphole, sweep, timing,
 * water break, gun signatures, vibrator signals, -1 other, optional codes) is
 * auxiliary, not a receiver channel. */
enum geometry_trace_class { GEOMETRY_TRACE_DATA = 0, GEOMETRY_TRACE_DEAD, GEOMETRY_TRACE_AUXILIARY };
int geometry_trace_class(int kind);

/* Recorded shots (shot_count minus skipped ones) and channels per shot. */
size_t geometry_layout_shots(const geometry_layout *l);
size_t geometry_layout_channels(const geometry_layout *l);
/* The k-th recorded shot, k < geometry_layout_shots(). */
int geometry_layout_shot(const geometry_layout *l, size_t k, geometry_shot *s, tz_err *err);
/* Geometry of channel index c (0-based, c < channels) of the k-th recorded shot;
 * channel number = first_channel + c. */
int geometry_layout_trace(const geometry_layout *l, size_t k, size_t c, geometry_trace *g,
                          tz_err *err);
/* Nominal roll-along fold N * dg / (2 * ds) (Sheriff & Geldart 1995; common practice). */
double geometry_layout_nominal_fold(const geometry_layout *l);
/* Default bin size: half the receiver interval (common practice). */
double geometry_layout_default_bin(const geometry_layout *l);
/* Surface elevation at an along-line position (linear between stations, held
 * constant beyond the ends; 0 without station elevations). */
double geometry_layout_elevation(const geometry_layout *l, double along_m);

/* Fills the derived fields (midpoint, offsets, azimuth) of g from its positions.
 * dir_az_deg is the shooting direction for the offset sign; NaN means unknown,
 * in which case the sign of `hint_offset` is used (positive when it is 0). */
void geometry_derive(geometry_trace *g, double dir_az_deg, double hint_offset);

/* sin and cos of an angle in degrees, exact at multiples of 90 degrees. */
void geometry_sincos_deg(double deg, double *s, double *c);

/* ---- geometry table (CSV; docs/geometry-table.md) ----
 * Header row of column names, any order: field_record, channel, source_x_m,
 * source_y_m, receiver_x_m, receiver_y_m (required), source_z_m, receiver_z_m,
 * source_depth_m (optional, default 0). Unknown columns and duplicate
 * (field_record, channel) keys are TZ_E_FORMAT naming the line. */
typedef struct geometry_table geometry_table;

int geometry_table_load(geometry_table **out, const char *path, tz_err *err);
int geometry_table_parse(geometry_table **out, const char *name, const char *text, size_t len,
                         tz_err *err);
void geometry_table_free(geometry_table *t);                 /* NULL is a no-op */
/* A table built row by row (SPS files, sps.h): new, add the positions of each
 * (field record, channel) with the source line it came from, then seal (sorts;
 * no rows or a key given twice is TZ_E_FORMAT naming the lines). */
int geometry_table_new(geometry_table **out, const char *name, tz_err *err);
int geometry_table_add(geometry_table *t, const geometry_trace *g, int64_t line, tz_err *err);
int geometry_table_seal(geometry_table *t, tz_err *err);
size_t geometry_table_rows(const geometry_table *t);
/* Finds a row; returns TZ_E_FORMAT ("field record F channel C: not in geometry
 * table NAME") when nothing matches. Fills positions in g (not the derived part). */
int geometry_table_find(const geometry_table *t, int32_t field_record, int32_t channel,
                        geometry_trace *g, tz_err *err);

/* ---- geometry source: one interface for headers, layout and table ---- */
enum geometry_kind { GEOMETRY_FROM_HEADERS = 0, GEOMETRY_FROM_LAYOUT, GEOMETRY_FROM_TABLE };

typedef struct geometry_source geometry_source;

/* From the trace headers (coordinates, elevations and source depth as decoded). */
int geometry_source_headers(geometry_source **out, tz_err *err);
/* From a layout: the layout is copied (the caller keeps its own). Traces are
 * matched by field record and channel; a trace whose field record or channel the
 * layout does not have is TZ_E_FORMAT naming both numbers. */
int geometry_source_layout(geometry_source **out, const geometry_layout *l, tz_err *err);
/* From a table: takes the table (freed with the source, also on failure). */
int geometry_source_table(geometry_source **out, geometry_table *t, tz_err *err);
void geometry_source_free(geometry_source *s);              /* NULL is a no-op */
int geometry_source_kind(const geometry_source *s);
/* Borrowed layout of a layout source, else NULL. */
const geometry_layout *geometry_source_get_layout(const geometry_source *s);
/* Sets the shooting direction used for the offset sign (degrees clockwise from
 * north). A layout source already knows it (the layout azimuth); for headers and
 * tables it is unknown (NaN) until set, and the header offset's sign is used. */
void geometry_source_set_direction(geometry_source *s, double azimuth_deg);
double geometry_source_direction(const geometry_source *s);

/* Fills g for one trace. `trace` is the 0-based trace index used in messages
 * (-1 if not known). Header coordinates in arc-seconds or degrees (coordinate
 * units 2, 3, 4) are refused with TZ_E_FORMAT. */
int geometry_source_trace(const geometry_source *s, const segy_trace_header *h, int64_t trace,
                          geometry_trace *g, tz_err *err);

/* Writes g's positions and offset into h in the standard positions (source and
 * receiver X/Y with coordinate scalar -100, elevations and source depth with
 * elevation scalar -100, offset rounded to metres, coordinate units 1). */
void geometry_to_header(const geometry_trace *g, segy_trace_header *h);

/* ---- units of length (SEG-Y rev 1 (2002), binary header bytes 3255-3256) ----
 * A line is processed in one unit: metres, or feet for coordinates, offsets,
 * bins, elevations and velocities (ft/s) alike; numbers are never converted,
 * only checked and labelled. The unit is the job's "units" when given, else what
 * the shot files' binary headers say (1 metres, 2 feet; other codes say
 * nothing), else metres. A file that disagrees with the job or with an earlier
 * file is TZ_E_FORMAT naming both (byte 3254 of the file). */
enum geometry_unit { GEOMETRY_UNIT_UNKNOWN = 0, GEOMETRY_UNIT_METRES = 1, GEOMETRY_UNIT_FEET = 2 };
#define GEOMETRY_FOOT_M 0.3048        /* the international foot, exactly */
typedef struct geometry_units {
  int job;                      /* the job's unit, 0 = not given */
  int files;                    /* the files' unit, 0 = none said yet */
  char first_path[256];         /* the first file that said it */
} geometry_units;
void geometry_units_init(geometry_units *u, int job_unit);
int geometry_units_file(geometry_units *u, int code, const char *path, tz_err *err);
int geometry_units_resolved(const geometry_units *u);     /* GEOMETRY_UNIT_METRES or _FEET */
const char *geometry_units_source(const geometry_units *u); /* "job", "binary header", "default" */
const char *geometry_unit_name(int unit);                 /* "metres" / "feet" */
const char *geometry_unit_symbol(int unit);               /* "m" / "ft" */

#endif
